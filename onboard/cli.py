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

from onboard.errors import CommandError

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


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.func(args) or 0)
    except CommandError as exc:
        print(f"{PROG} {args.command}: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
