"""Read and write limit-set TOML files (one set per loading / cargo condition).

The file format is the limit-set schema documented in :mod:`advisor.limits` (module docstring):
``schema_version``, ``name``, ``margin``, optional ``[[points]]``, one or more ``[[limits]]``
(criterion, statistic, value, unit, exposure_h, point, label, source), and optional ``[zones]``,
``[uncertainty]`` and ``[advice]`` tables. Values are written in the units the person chose
(deg, g, m/s2, probability, per_hour, m/s^1.5) and converted to SI by :func:`advisor.limits.parse_limit_set`.

Errors name the file, the key path, the value and what is allowed; unknown keys are rejected.
A TOML syntax error names the file and the line and column reported by :mod:`tomllib`.

Limits set here are operational choices for the advice; they do not replace the ship's approved
stability information, loading computer or cargo securing manual. The master decides.

References
----------
.. [1] TOML v1.0.0 specification, https://toml.io/en/v1.0.0 (file syntax).
"""

from __future__ import annotations

import tomllib
from collections.abc import Iterable
from pathlib import Path

import tomli_w

from advisor.limits import LimitSet, LimitSetError, limit_set_to_mapping, parse_limit_set

__all__ = [
    "LimitsFileError",
    "LimitSetError",
    "read_limit_set",
    "loads_limit_set",
    "dumps_limit_set",
    "write_limit_set",
]


class LimitsFileError(ValueError):
    """A limit file cannot be read at all (missing, unreadable, not UTF-8, not valid TOML)."""


def loads_limit_set(
    text: str, label: str = "<text>", *, vessel_points: Iterable[str] | None = None
) -> LimitSet:
    """Parse limit-set TOML text.

    Parameters
    ----------
    text : str
        TOML document.
    label : str
        Name used in error messages (usually the file path).
    vessel_points : iterable of str, optional
        Names of the vessel's points; when given, every limit's point must exist.

    Returns
    -------
    advisor.limits.LimitSet

    Raises
    ------
    LimitsFileError
        Invalid TOML (with line and column).
    advisor.limits.LimitSetError
        Invalid content (file, key path, value, allowed range/unit).
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise LimitsFileError(f"{label}: not valid TOML: {err}") from err
    return parse_limit_set(data, label, vessel_points=None if vessel_points is None else list(vessel_points))


def read_limit_set(path, *, vessel_points: Iterable[str] | None = None) -> LimitSet:
    """Read and validate a limit-set TOML file.

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    vessel_points : iterable of str, optional
        Names of the vessel's points (e.g. ``vessel.points_mapping()``).

    Returns
    -------
    advisor.limits.LimitSet
        With ``label`` set to the file path.

    Raises
    ------
    LimitsFileError, advisor.limits.LimitSetError
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError as err:
        raise LimitsFileError(f"{p}: limit file not found") from err
    except UnicodeDecodeError as err:
        raise LimitsFileError(f"{p}: not UTF-8 text ({err.reason} at byte {err.start})") from err
    except OSError as err:
        raise LimitsFileError(f"{p}: cannot read limit file: {err.strerror}") from err
    return loads_limit_set(text, str(p), vessel_points=vessel_points)


def dumps_limit_set(limit_set: LimitSet) -> str:
    """TOML text of a limit set (values in the units they were given in)."""
    header = (
        "# Limit set for the heavy-weather advice (schema: advisor.limits). Advisory only: the master\n"
        "# decides; these limits do not replace the approved stability information, loading computer\n"
        "# or cargo securing manual.\n"
    )
    return header + tomli_w.dumps(limit_set_to_mapping(limit_set))


def write_limit_set(limit_set: LimitSet, path) -> None:
    """Write a limit set to a TOML file (UTF-8), readable by :func:`read_limit_set`."""
    Path(path).write_text(dumps_limit_set(limit_set), encoding="utf-8")
