"""Physical bounds on an estimated sea: the largest seas on record and the breaking-limited steepness.

Used by :mod:`estimator.seastate` (an estimate with a wave system steeper than breaking allows is not a
candidate when the other estimate is plausible) and :mod:`estimator.pipeline` (a window whose estimate
is outside the bounds is a failed window, with its reason).
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np

from estimator.constants import G

HS_RECORD = 19.0
"""Largest significant wave height measured by a buoy [m]: 19 m, North Atlantic, February 2013, as
recognised by the World Meteorological Organization in 2016 (from memory)."""
HS_RECORD_MARGIN = 1.25
"""An estimate above HS_RECORD·HS_RECORD_MARGIN (about 24 m) is taken as a failed window (project choice:
a quarter above the largest seas on record, for seas not measured by a buoy)."""
STEEPNESS_MARGIN = 1.5
"""An estimate steeper than STEEPNESS_MARGIN times the breaking-limited steepness is a failed window
(project choice: the limit is for the average sea state, single estimates scatter around it)."""


def limiting_steepness(tp: float) -> float:
    """Breaking-limited average steepness S_p = 2π·Hs/(g·Tp²) of a sea state [-].

    1/15 for Tp ≤ 8 s, 1/25 for Tp ≥ 15 s, linear in between.

    References
    ----------
    .. [1] DNV (2010). Recommended practice DNV-RP-C205, Environmental conditions and environmental
       loads, §3.5.5 (limiting steepness of a sea state) - from memory.
    """
    return float(np.interp(tp, [8.0, 15.0], [1 / 15, 1 / 25]))


def physical_hs_limit(tp: float) -> float:
    """Largest plausible Hs [m] for a peak period ``tp`` [s]: the record-seas bound and the breaking-limited
    steepness, each with its margin (:data:`HS_RECORD_MARGIN`, :data:`STEEPNESS_MARGIN`)."""
    steep = STEEPNESS_MARGIN * limiting_steepness(tp) * G * tp**2 / (2 * np.pi)
    return float(min(HS_RECORD * HS_RECORD_MARGIN, steep))


def steepness_reason(systems: Iterable[tuple[str, float, float]]) -> str:
    """Why a set of wave systems is physically implausible ("" when it is not).

    ``systems`` holds (label, Hs [m], Tp [s]) per wave system. Each system is held to the
    breaking-limited steepness at its own peak period (:func:`limiting_steepness` × :data:`STEEPNESS_MARGIN`):
    the limit is a property of one sea (DNV-RP-C205 §3.5.5, from memory), so a swell with a short wind sea
    on top is not held to the steepness of its total Hs at the wind sea's period.
    """
    for label, hs, tp in systems:
        if not (np.isfinite(hs) and np.isfinite(tp) and tp > 0):
            continue
        steep = 2 * np.pi * hs / (G * tp**2)
        s_max = STEEPNESS_MARGIN * limiting_steepness(tp)
        if steep > s_max:
            return (f"implausible estimate: {label} Hs {hs:.1f} m with Tp {tp:.1f} s is steeper than breaking "
                    f"allows (steepness 1/{1 / steep:.0f}, allowed up to 1/{1 / s_max:.0f})")
    return ""
