"""The ``onboard`` command line.

Each feature module adds its own sub-commands through an ``add_commands(subparsers)`` function, so that
the service, replay and limits administration stay in their own modules:

* :mod:`onboard.service` - ``run`` (the live service) and ``demo`` (the embedded default);
* :mod:`onboard.replay` - ``replay`` (one voyage log) and ``fleet`` (many logs);
* :mod:`onboard.admin` - loading conditions, limits, users and the audit trail.

Every command has ``--help``. Errors in user input end the command with a one-line reason on stderr and
a non-zero exit status.
"""

from __future__ import annotations

import argparse
import importlib
import sys

FEATURE_MODULES = ("onboard.service", "onboard.replay", "onboard.admin")


class CommandError(Exception):
    """A user-facing error: printed as one line, exit status 2."""


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="onboard",
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
        print(f"onboard {args.command}: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
