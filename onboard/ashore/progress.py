"""Progress bars on stderr for the commands ashore (``replay``, ``fleet``), drawn by tqdm.

One helper so that every long command shows progress the same way: a single line on stderr, refreshed
at most twice a second, left in place when done; nothing at all when disabled (``--no-progress``) so
that scripts and tests see clean output.
"""

from __future__ import annotations

import sys

from tqdm import tqdm

__all__ = ["progress_bar"]

_WITH_TOTAL = "{desc}: {percentage:3.0f}%|{bar}| {n:.1f}/{total:.1f} {unit} [{elapsed}<{remaining}{postfix}]"
_WITHOUT_TOTAL = "{desc}: {n:.1f} {unit} [{elapsed}{postfix}]"


def progress_bar(label: str, *, total: float | None = None, unit: str = "it", enabled: bool = True) -> tqdm:
    """A tqdm bar on stderr labelled ``label``; ``total`` in ``unit`` (None: counts without a total).

    Use it as a context manager or call ``close()``; ``update(n)`` advances it, ``set_postfix_str`` adds
    live figures, ``write(text)`` prints a line above it without breaking it.
    """
    return tqdm(
        total=total,
        desc=label,
        unit=unit,
        file=sys.stderr,
        disable=not enabled,
        leave=True,
        mininterval=0.5,
        dynamic_ncols=True,
        bar_format=_WITH_TOTAL if total else _WITHOUT_TOTAL,
    )
