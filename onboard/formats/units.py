"""The one place where edge units and sign conventions are converted to the core's SI/ITTC ones.

Edge (files, messages, page, database): degrees, knots, sensor sign practice, ISO 8601 text.
Core (``estimator/``, ``advisor/``): radians, m/s, ITTC body axes (docs/conventions.md).

Conventions converted here:

* relative wave heading (ITTC) β = (180° − (θ − ψ)) mod 360°, θ the true direction the waves
  come FROM, ψ the ship's true heading; 180° = head seas, 0° = following seas, 90° = waves from
  starboard, 270° = from port [1]_;
* sensor attitude (Signal K / motion-sensor practice): roll + starboard down (same as ITTC),
  pitch + bow UP (ITTC: + bow down, so the sign flips), heave + up (same) [1]_ [2]_;
* sensor accelerations: x forward, y starboard, z down (FRD) versus ITTC x forward, y port,
  z up: y and z change sign [1]_ [2]_;
* UTC times: ISO 8601 with a ``Z`` suffix in text, timezone-aware ``datetime`` in code [3]_.

References
----------
.. [1] ITTC (2017). *ITTC Symbols and Terminology List*, seakeeping section (body axes, motion
   signs, heading 180° = head seas).
.. [2] Signal K Specification v1.7, ``navigation.attitude`` (roll, pitch, yaw in rad; pitch
   positive bow up, roll positive starboard down) — https://signalk.org/specification/.
.. [3] ISO 8601-1:2019, Date and time — Representations for information interchange.
"""

from __future__ import annotations

from datetime import UTC, datetime

import numpy as np

from estimator.constants import KNOT

__all__ = [
    "deg_to_rad",
    "rad_to_deg",
    "kn_to_ms",
    "ms_to_kn",
    "wrap_deg",
    "relative_heading_deg",
    "wave_from_deg",
    "relative_heading_rad",
    "roll_sensor_to_ittc",
    "pitch_sensor_to_ittc",
    "pitch_ittc_to_sensor",
    "roll_ittc_to_sensor",
    "acc_frd_to_ittc",
    "acc_ittc_to_frd",
    "format_utc",
    "parse_utc",
    "UnitsError",
]


class UnitsError(ValueError):
    """A value at the edge cannot be converted (e.g. a time without a timezone)."""


def deg_to_rad(value_deg):
    """Degrees → radians. [deg] → [rad]"""
    return np.deg2rad(value_deg)


def rad_to_deg(value_rad):
    """Radians → degrees. [rad] → [deg]"""
    return np.rad2deg(value_rad)


def kn_to_ms(value_kn):
    """Knots → metres per second (1 kn = 1852/3600 m/s exactly). [kn] → [m/s]"""
    return np.multiply(value_kn, KNOT)


def ms_to_kn(value_ms):
    """Metres per second → knots. [m/s] → [kn]"""
    return np.divide(value_ms, KNOT)


def wrap_deg(angle_deg):
    """Wrap an angle to [0, 360) [deg]."""
    out = np.mod(angle_deg, 360.0)
    # np.mod(-1e-20, 360) == 360.0 in floating point: fold it back to 0.
    return np.where(out >= 360.0, 0.0, out) if np.ndim(out) else (0.0 if out >= 360.0 else float(out))


def relative_heading_deg(wave_from_deg, heading_deg):
    """Relative wave heading β (ITTC) from the true wave direction and the ship's true heading.

    β = (180° − (θ − ψ)) mod 360°: 180° = head seas, 0° = following seas, 90° = waves from
    starboard, 270° = from port (docs/conventions.md, [1]).

    Parameters
    ----------
    wave_from_deg : array_like
        True direction the waves come FROM, clockwise from north [deg].
    heading_deg : array_like
        Ship's true heading, clockwise from north [deg].

    Returns
    -------
    array_like
        β in [0, 360) [deg].
    """
    return wrap_deg(180.0 - (np.asarray(wave_from_deg, dtype=float) - np.asarray(heading_deg, dtype=float)))


def wave_from_deg(beta_deg, heading_deg):
    """True direction the waves come from, θ = (ψ + 180° − β) mod 360° (inverse of
    :func:`relative_heading_deg`). [deg]"""
    return wrap_deg(np.asarray(heading_deg, dtype=float) + 180.0 - np.asarray(beta_deg, dtype=float))


def relative_heading_rad(wave_from_rad, psi_rad):
    """β = (π − (θ − ψ)) mod 2π, all in radians (see :func:`relative_heading_deg`). [rad]"""
    return np.mod(
        np.pi - (np.asarray(wave_from_rad, dtype=float) - np.asarray(psi_rad, dtype=float)), 2 * np.pi
    )


def roll_sensor_to_ittc(roll_deg):
    """Sensor roll (+ starboard down) [deg] → ITTC η4 (+ starboard down) [rad]. Same sign."""
    return np.deg2rad(roll_deg)


def roll_ittc_to_sensor(eta4_rad):
    """ITTC η4 [rad] → sensor roll [deg]. Same sign."""
    return np.rad2deg(eta4_rad)


def pitch_sensor_to_ittc(pitch_deg):
    """Sensor pitch (+ bow UP) [deg] → ITTC η5 (+ bow DOWN) [rad]: the sign flips."""
    return -np.deg2rad(pitch_deg)


def pitch_ittc_to_sensor(eta5_rad):
    """ITTC η5 (+ bow down) [rad] → sensor pitch (+ bow up) [deg]: the sign flips."""
    return -np.rad2deg(eta5_rad)


def acc_frd_to_ittc(acc_x_ms2, acc_y_ms2, acc_z_ms2):
    """Sensor accelerations (x fwd, y starboard, z down) → ITTC axes (x fwd, y port, z up). [m/s²]

    Returns
    -------
    tuple of array_like
        (a_x, a_y, a_z) in ITTC axes [m/s²].
    """
    return (
        np.asarray(acc_x_ms2, dtype=float),
        -np.asarray(acc_y_ms2, dtype=float),
        -np.asarray(acc_z_ms2, dtype=float),
    )


def acc_ittc_to_frd(a_x, a_y, a_z):
    """ITTC accelerations (x fwd, y port, z up) → sensor axes (x fwd, y starboard, z down). [m/s²]"""
    return (np.asarray(a_x, dtype=float), -np.asarray(a_y, dtype=float), -np.asarray(a_z, dtype=float))


def format_utc(when: datetime, *, milliseconds: bool = False) -> str:
    """ISO 8601 text in UTC with a ``Z`` suffix, e.g. ``2026-01-31T12:00:00Z``.

    Fractions of a second are written only when non-zero: microseconds (``…T12:00:00.250000Z``), or
    milliseconds, truncated, with ``milliseconds=True`` (``…T12:00:00.250Z``, the page's form).

    Parameters
    ----------
    when : datetime.datetime
        A timezone-aware time (any offset; converted to UTC).
    milliseconds : bool
        Write the fraction as milliseconds.

    Raises
    ------
    UnitsError
        For a naive datetime (no timezone): the project keeps every time in UTC.
    """
    if not isinstance(when, datetime):
        raise UnitsError(f"format_utc needs a datetime, got {type(when).__name__} {when!r}")
    if when.tzinfo is None or when.utcoffset() is None:
        raise UnitsError(f"time {when.isoformat()} has no timezone; pass a timezone-aware UTC time")
    u = when.astimezone(UTC)
    text = u.strftime("%Y-%m-%dT%H:%M:%S")
    if u.microsecond:
        text += f".{u.microsecond // 1000:03d}" if milliseconds else f".{u.microsecond:06d}"
    return text + "Z"


def parse_utc(text: str) -> datetime:
    """Parse ISO 8601 text with an explicit UTC designator (``Z``) or offset into an aware UTC time.

    Parameters
    ----------
    text : str
        E.g. ``2026-01-31T12:00:00Z``, ``2026-01-31T12:00:00.5Z``, ``2026-01-31T13:00:00+01:00``.

    Returns
    -------
    datetime.datetime
        Timezone-aware, in UTC.

    Raises
    ------
    UnitsError
        Text that is not ISO 8601, or a time without a timezone (ambiguous: not accepted).
    """
    if not isinstance(text, str):
        raise UnitsError(f"expected ISO 8601 text, got {type(text).__name__} {text!r}")
    s = text.strip()
    try:
        when = datetime.fromisoformat(s[:-1] + "+00:00" if s.endswith(("Z", "z")) else s)
    except ValueError as exc:
        raise UnitsError(f"time {text!r} is not ISO 8601; expected e.g. '2026-01-31T12:00:00Z'") from exc
    if when.tzinfo is None:
        raise UnitsError(f"time {text!r} has no timezone; times must be UTC with a 'Z' suffix")
    return when.astimezone(UTC)
