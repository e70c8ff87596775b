"""Text from outside made safe for a terminal, a log line or a one-line error message.

Bytes from a damaged file or a hostile message can hold control characters (escape sequences that move
the cursor, clear the screen or ring the bell on a terminal) and be arbitrarily long. Every message that
quotes such text passes it through :func:`printable`: control and other non-printable characters are
shown as Python escapes (``\\x1b``, ``\\n``), and the length is bounded.

:func:`write_text_atomic` writes a whole output file or nothing (no empty file on a full disk).
"""

from __future__ import annotations

import os
from pathlib import Path

__all__ = ["printable", "write_text_atomic"]


def printable(text: object, limit: int = 300) -> str:
    """``text`` with every non-printable character escaped and at most ``limit`` characters.

    >>> printable("a\\x1b[2Jb\\n")
    'a\\\\x1b[2Jb\\\\n'
    """
    s = text if isinstance(text, str) else str(text)
    out = "".join(ch if ch.isprintable() else ch.encode("unicode_escape").decode("ascii") for ch in s)
    return out if len(out) <= limit else out[: max(limit - 3, 0)] + "..."


def write_text_atomic(path: str | os.PathLike, text: str) -> Path:
    """Write ``text`` (UTF-8) to ``NAME.partial`` beside ``path``, then rename it over ``path``.

    A full disk or a read-only file system raises the ``OSError`` and leaves neither a cut nor an
    empty file: the partial file is removed and an earlier ``path`` is kept as it was.
    """
    p = Path(path)
    tmp = p.with_name(p.name + ".partial")
    try:
        with open(tmp, "w", encoding="utf-8", newline="") as f:
            f.write(text)
            f.flush()
            os.fsync(f.fileno())
        os.replace(tmp, p)
    except OSError as exc:
        _discard(tmp)
        raise OSError(exc.errno, exc.strerror, str(p)) from exc  # name the file asked for
    except BaseException:
        _discard(tmp)
        raise
    return p


def _discard(tmp: Path) -> None:
    try:
        tmp.unlink(missing_ok=True)
    except OSError:  # pragma: no cover - e.g. the file system turned read-only meanwhile
        pass
