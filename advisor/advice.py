"""Advice: the smallest change of heading and speed that keeps the ship inside its limits.

From the polar scores (:mod:`advisor.polar`), the present heading and speed and the intended
course, :func:`advise` looks for the cell that

* has a conservative utilisation (upper Hs, worst direction) at or below the margin of the limit
  set, and
* lies outside every MSC.1/Circ.1228 zone (surf-riding/broaching, successive high waves,
  synchronous and parametric roll; conservative masks),

is not slower than the steerage-way speed of the limit set, and, among those, costs least:

    cost = w_h·|ψ − ψ_course| + w_loss·max(0, U_now − U) + w_gain·max(0, U − U_now)

(weights from the limit set, :class:`advisor.limits.AdviceWeights`; headings compared on the
circle). The present state counts as a candidate too (scored by interpolation between cells, its
zones evaluated exactly); it is kept unless a cell is cheaper by more than one heading step's
worth of cost, so the advice does not flicker over a few degrees. Ties go to the cell closest to
the present state. When no cell is acceptable the least bad one is given (outside the zones if
possible, then the lowest conservative utilisation, then the cost) and the advice says so.

The one-sentence explanation names the binding limit and the change, with headings in degrees
true and speeds in knots, because it is read by people; every number in the result is SI. The
advice is advisory: the master decides (:data:`ADVISORY_NOTICE`).

References
----------
.. [1] IMO MSC.1/Circ.1228 (2007), §4 and §5 (the master avoids the dangerous zones by changing
   course and/or speed) (from memory).
.. [2] IMO MSC.1/Circ.1627 (2020), chapter 4 (operational guidance: combinations of heading and
   speed not recommended in a given sea state) (from memory).
.. [3] SOLAS chapter V, regulation 34-1 (the master's discretion is not constrained by others).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from advisor.polar import PolarResult
from advisor.zones import ZONE_LABELS
from estimator.constants import KNOT

__all__ = ["ADVISORY_NOTICE", "Advice", "advise", "STATUSES"]

TWO_PI = 2.0 * math.pi

ADVISORY_NOTICE = (
    "Advisory only: the master decides. This advice does not replace the ship's approved stability "
    "information, loading computer, cargo securing manual or good seamanship; local regulations and "
    "licensed practice come first. This software is not type-approved by any Administration; its output "
    "is a supporting tool only."
)
"""The one advisory notice, shown wherever the advice is shown: bridge page, MQTT advice messages, the
command line and the replay report (SOLAS V/34-1: the master's discretion; IMO MSC.1/Circ.1228 (2007)
§3: software that gives such guidance on board should be approved by the Administration, which this
software is not)."""

STATUSES = ("keep", "change", "none_acceptable")
"""Possible values of :attr:`Advice.status`."""


@dataclass(frozen=True)
class Advice:
    """The advised heading and speed with its explanation.

    Attributes
    ----------
    status : str
        ``"keep"`` (the present heading and speed are acceptable and no cheaper acceptable change
        exists), ``"change"`` (alter to the advised heading/speed) or ``"none_acceptable"`` (no
        cell is acceptable; the advised one is the least bad).
    heading : float
        Advised true heading [rad].
    speed : float
        Advised speed through water [m/s].
    heading_now : float
        Present true heading [rad].
    speed_now : float
        Present speed through water [m/s].
    course : float
        Intended course [rad].
    utilisation_now, utilisation_now_nominal : float
        Largest utilisation at the present heading and speed, conservative and nominal [-].
    utilisation_advised, utilisation_advised_nominal : float
        The same at the advised heading and speed [-].
    binding_now, binding_advised : str
        Key of the limit with the largest conservative utilisation now / at the advice.
    binding_now_label, binding_advised_label : str
        Their display labels.
    zones_now, zones_advised : tuple of str
        Circ.1228 zones (conservative) now / at the advice.
    cost : float
        Cost of the advised change (see the module docstring) [-].
    margin : float
        Margin of the limit set [-].
    sentence : str
        One plain-language sentence (degrees true, knots).
    notice : str
        The advisory notice.
    """

    status: str
    heading: float
    speed: float
    heading_now: float
    speed_now: float
    course: float
    utilisation_now: float
    utilisation_now_nominal: float
    utilisation_advised: float
    utilisation_advised_nominal: float
    binding_now: str
    binding_now_label: str
    binding_advised: str
    binding_advised_label: str
    zones_now: tuple[str, ...]
    zones_advised: tuple[str, ...]
    cost: float
    margin: float
    sentence: str
    notice: str = ADVISORY_NOTICE


def _angdiff(a, b):
    """Smallest absolute difference of two angles [rad]."""
    d = np.mod(np.asarray(a) - np.asarray(b), TWO_PI)
    return np.minimum(d, TWO_PI - d)


def _deg(angle: float) -> str:
    return f"{int(round(math.degrees(angle))) % 360:03d}°"


def _kn(speed: float) -> str:
    v = speed / KNOT
    return f"{v:.0f} kn" if abs(v - round(v)) < 0.05 else f"{v:.1f} kn"


def _zone_text(zones) -> str:
    return " and ".join(ZONE_LABELS[z] for z in zones)


def advise(polar: PolarResult, heading_now: float, speed_now: float, course: float, weights) -> Advice:
    """The smallest acceptable change of heading and speed.

    Parameters
    ----------
    polar : PolarResult
        Scores of every heading × speed cell.
    heading_now : float
        Present true heading [rad].
    speed_now : float
        Present speed through water [m/s].
    course : float
        Intended course (true) [rad].
    weights : advisor.limits.AdviceWeights
        Cost weights.

    Returns
    -------
    Advice

    References
    ----------
    See the module references.
    """
    for name, v in (("heading_now", heading_now), ("speed_now", speed_now), ("course", course)):
        if not math.isfinite(v):
            raise ValueError(f"{name} must be finite, got {v!r}")
    if speed_now < 0:
        raise ValueError(f"speed_now must be >= 0 m/s, got {speed_now!r}")
    heading_now = float(np.mod(heading_now, TWO_PI))
    course = float(np.mod(course, TWO_PI))
    margin = polar.margin
    now = polar.at(heading_now, speed_now)
    now_ok = now.overall <= margin and not now.zones
    cost_now = weights.heading * float(_angdiff(heading_now, course))

    psi = polar.headings[:, None]
    u = polar.speeds[None, :]
    cost = (
        weights.heading * _angdiff(psi, course)
        + weights.speed_loss * np.maximum(0.0, speed_now - u)
        + weights.speed_gain * np.maximum(0.0, u - speed_now)
    )
    closeness = weights.heading * _angdiff(psi, heading_now) + weights.speed_loss * np.abs(u - speed_now)
    allowed = np.broadcast_to(u >= weights.min_speed - 1e-9, cost.shape)
    if not allowed.any():
        allowed = np.broadcast_to(u == u.max(), cost.shape)
    ok = polar.acceptable() & allowed
    step = TWO_PI / polar.headings.size
    hysteresis = weights.heading * step

    def pick(mask, *keys):
        idx = np.flatnonzero(mask.ravel())
        order = np.lexsort(tuple(k.ravel()[idx] for k in reversed(keys)))
        return np.unravel_index(idx[order[0]], mask.shape)

    if ok.any():
        i, j = pick(ok, cost, closeness)
        best_cost = float(cost[i, j])
        if now_ok and cost_now <= best_cost + hysteresis:
            status, h, s, c = "keep", heading_now, float(speed_now), cost_now
        else:
            status, h, s, c = "change", float(polar.headings[i]), float(polar.speeds[j]), best_cost
    else:
        in_zone = polar.in_zone_conservative.astype(float)
        util = np.round(polar.overall_conservative, 6)
        i, j = pick(allowed, in_zone, util, cost, closeness)
        status, h, s, c = (
            "none_acceptable",
            float(polar.headings[i]),
            float(polar.speeds[j]),
            float(cost[i, j]),
        )
        if not now.zones and (
            polar.in_zone_conservative[i, j] or now.overall <= polar.overall_conservative[i, j]
        ):
            h, s, c = heading_now, float(speed_now), cost_now

    adv = now if (h == heading_now and s == speed_now) else polar.at(h, s)
    keys, labels = polar.keys, polar.labels
    bn, ba = now.limiting, adv.limiting
    sentence = _sentence(status, now, adv, heading_now, speed_now, h, s, course, labels, margin)
    return Advice(
        status=status,
        heading=h,
        speed=s,
        heading_now=heading_now,
        speed_now=float(speed_now),
        course=course,
        utilisation_now=now.overall,
        utilisation_now_nominal=now.overall_nominal,
        utilisation_advised=adv.overall,
        utilisation_advised_nominal=adv.overall_nominal,
        binding_now=keys[bn],
        binding_now_label=labels[bn],
        binding_advised=keys[ba],
        binding_advised_label=labels[ba],
        zones_now=now.zones,
        zones_advised=adv.zones,
        cost=float(c),
        margin=margin,
        sentence=sentence,
    )


def _action(heading_now, speed_now, h, s) -> str:
    parts = []
    if float(_angdiff(h, heading_now)) >= math.radians(0.5):
        parts.append(f"alter to {_deg(h)}")
    if s < speed_now - 0.05 * KNOT:
        parts.append(f"reduce to {_kn(s)}")
    elif s > speed_now + 0.05 * KNOT:
        parts.append(f"increase to {_kn(s)}")
    text = " and ".join(parts) if parts else f"keep {_deg(h)} at {_kn(s)}"
    return text[0].upper() + text[1:]


def _lower(label: str) -> str:
    return label[:1].lower() + label[1:] if label[1:2].islower() else label


def _sentence(status, now, adv, heading_now, speed_now, h, s, course, labels, margin) -> str:
    ln, la = _lower(labels[now.limiting]), _lower(labels[adv.limiting])
    if status == "keep":
        if now.overall <= margin:
            return (
                f"Keep {_deg(heading_now)} at {_kn(speed_now)}: every limit is met with margin, "
                f"the closest is {ln} at {now.overall:.2f} of its limit."
            )
    if status == "change":
        action = _action(heading_now, speed_now, h, s)
        if now.overall > margin and now.zones:
            zone = _zone_text(now.zones)
            why = f"{ln} binds and the ship is in the {zone} ({now.overall:.2f} -> {adv.overall:.2f})"
        elif now.overall > margin:
            why = f"{ln} binds ({now.overall:.2f} -> {adv.overall:.2f})"
        elif now.zones:
            why = f"this leaves the {_zone_text(now.zones)} (utilisation {adv.overall:.2f}, {la} highest)"
        else:
            why = (
                f"closer to the intended course {_deg(course)} within the limits "
                f"(utilisation {adv.overall:.2f}, {la} highest)"
            )
        return f"{action}: {why}."
    # none acceptable
    where = f"{_deg(h)} at {_kn(s)}"
    zone = f", still in the {_zone_text(adv.zones)}" if adv.zones else ""
    return (
        f"No heading and speed keeps every limit within the margin {margin:.2f}; least bad is {where}, "
        f"where {la} is at {adv.overall:.2f} of its limit{zone}."
    )
