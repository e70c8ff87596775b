"""The one user-facing error type of the command line.

A :class:`CommandError` ends a command with its message as one line on stderr and exit status 2
(:func:`onboard.cli.main`). It lives in its own module so that every feature package can raise it
without importing the command-line wiring (no import cycle).
"""

from __future__ import annotations

__all__ = ["CommandError"]


class CommandError(Exception):
    """A user-facing error: printed as one line, exit status 2."""
