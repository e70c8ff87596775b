"""The ``hwadvice`` command line.

Each feature module adds its own sub-commands through an ``add_commands(subparsers)`` function, so that
the service, replay and limits administration stay in their own modules:

* :mod:`onboard.live.service` - ``run`` (the live service) and ``demo`` (the embedded default);
* :mod:`onboard.ashore.replay` - ``replay`` (one voyage log);
* :mod:`onboard.ashore.fleet` - ``fleet`` (many logs);
* :mod:`onboard.admin.commands` - loading conditions, limits, users and the audit trail;
* :mod:`onboard.admin.raotables` - ``rao`` (RAO tables for a ship without them, and checking one).

Every command has ``--help``. Errors in user input end the command with a one-line reason on stderr and
a non-zero exit status.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from onboard.errors import CommandError, describe

__all__ = ["PROG", "CommandError", "build_parser", "main"]

PROG = "hwadvice"
"""The installed command (``python -m onboard`` runs the same). No Debian package ships a command of
this name (checked with apt-file); the project's first name, ``onboard``, is an on-screen keyboard's."""

FEATURE_MODULES = (
    "onboard.live.service",
    "onboard.ashore.replay",
    "onboard.ashore.fleet",
    "onboard.admin.commands",
    "onboard.admin.raotables",
)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog=PROG,
        description="Heavy-weather heading and speed advice from the ship's own motions. "
        "Advisory only: the master decides.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name in FEATURE_MODULES:
        module = importlib.import_module(name)
        module.add_commands(sub)
    return parser


def _db_url(args: argparse.Namespace) -> str | None:
    import os

    return getattr(args, "db", None) or os.environ.get("HW_DB_URL")


def _quiet_broken_pipe() -> int:
    """The reader of our output went away (``hwadvice limits list | head -1``): stop quietly.

    Standard output is pointed at /dev/null so that the interpreter's final flush does not fail again
    (the recipe of the Python documentation, "Note on SIGPIPE"); the exit status is the shell's for a
    command ended by SIGPIPE (128 + 13).
    """
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):  # pragma: no cover - stdout without a file descriptor
        pass
    return 141


def main(argv: list[str] | None = None) -> int:
    """Run the command line; every error ends with one line on stderr and a non-zero status.

    Exit status: 0 done, 1 a check that failed (``audit verify``, ``demo --once``), 2 a user error or
    anything that went wrong around the command (disk full, read-only file system, a database that
    cannot be reached: :func:`onboard.errors.describe`), 130 interrupted, 141 output pipe closed.
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        status = int(args.func(args) or 0)
        sys.stdout.flush()  # a closed pipe shows here, not in the interpreter's final flush
        return status
    except CommandError as exc:
        print(f"{PROG} {args.command}: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return _quiet_broken_pipe()
    except Exception as exc:
        line = describe(exc, db_url=_db_url(args))
        if line is None:
            raise
        print(f"{PROG} {args.command}: {line}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
