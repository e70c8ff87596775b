"""Advice: the smallest change of heading and speed that keeps the ship inside its limits, steady.

From the polar scores (:mod:`advisor.polar`), the present heading and speed, the intended course
and the advice of the previous window, :func:`advise` decides in this order:

1. **Keep.** When the conservative utilisation at the present heading and speed is at or below the
   margin of the limit set and no MSC.1/Circ.1228 zone holds them, the advice is "keep", with the
   reason, whatever else the chart offers.
2. **Hysteresis.** Once a change has been advised, the present state counts as acceptable again
   only when its utilisation has fallen below margin − :data:`UTILISATION_HYSTERESIS` and it lies
   outside the zones screened with bands widened by :data:`ZONE_EXIT_BAND_SCALE` (zone exit). A
   zone the previous window did not see holds the present state only when it is clearly inside
   (bands narrowed by :data:`ZONE_ENTRY_BAND_SCALE`) or seen twice running (zone entry).
3. **Minimum benefit.** A new change is sought among the cells that buy a clear margin: conservative
   utilisation at or below margin − :data:`UTILISATION_HYSTERESIS`, outside every zone, not slower
   than steerage way, not faster than the speed the ship can make in this sea at that heading
   (``PolarResult.speed_cap``) and not faster than the present speed by more than
   :data:`MAX_SPEED_GAIN` (a large speed increase in heavy weather is the advice a building sea
   withdraws first); only when none exists, among those at or below the margin. The
   cheapest of them is taken:

       cost = w_h·|ψ − ψ_course| + w_loss·max(0, U_now − U) + w_gain·max(0, U − U_now)

   (weights from the limit set, :class:`advisor.limits.AdviceWeights`; headings on the circle;
   ties go to the cell closest to the present state).
4. **Previous advice first.** The previous advice is repeated while it is still acceptable (at or
   below the margin, attainable, and outside the zones of the nominal estimate screened with the
   bands narrowed by :data:`ADVISED_ZONE_BAND_SCALE`: the hysteresis of zone entry for a cell once
   advised) unless the new cheapest cell costs less by more than :data:`MIN_BENEFIT_HEADING` worth
   of heading, and also when no other cell is acceptable. When it is no longer acceptable, the
   cheapest acceptable cell within
   :data:`NEAR_PREVIOUS_HEADING` and :data:`NEAR_PREVIOUS_SPEED` of it is preferred; failing that, a
   cell within that step which counts as the advice given, corrected (at or below the margin, outside
   the zones of the nominal estimate and not clearly inside, bands narrowed by
   :data:`ZONE_ENTRY_BAND_SCALE`, the conservative ones: when a doubtful estimate's envelope spreads the
   zones over nearly the whole chart its gaps move from window to window and tell nothing); else the
   one with the least cost plus distance from it. The same corrected step is taken before a least-bad
   cell elsewhere when no cell is acceptable.
5. When no cell is acceptable the least bad one is given (outside the zones if possible, else
   outside the zones of the nominal estimate, then the lowest conservative utilisation, then the
   cost), the previous advice being kept while it is
   within :data:`LEAST_BAD_TOLERANCE` of the best; the advice says so.

**The turn** (:class:`TurnPlan`): for a change of heading both arcs from the present heading to the
advised one are scored with the conservative utilisation of the heading cells they pass, at the
present speed. The shorter arc is suggested unless it passes cells over the limit (utilisation > 1,
typically beam seas) and the longer one does not; when both do, reducing speed first (to the
advised speed, or to the fastest speed at which an arc stays within the limit) is suggested; if
nothing avoids it, the advice says the turn passes over the limit. Zones the arc crosses are
reported, not avoided (a resonance needs many encounters to build up; project choice).

All thresholds named above are project choices (no published number exists for them). The
sentence uses advisory wording ("suggest") with headings in degrees true and speeds in knots,
because it is read by people; every number in the result is SI. The master decides
(:data:`ADVISORY_NOTICE`).

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

__all__ = [
    "ADVISORY_NOTICE",
    "Advice",
    "TurnPlan",
    "advise",
    "STATUSES",
    "UTILISATION_HYSTERESIS",
    "ZONE_EXIT_BAND_SCALE",
    "MIN_BENEFIT_HEADING",
    "ADVISED_ZONE_BAND_SCALE",
    "ZONE_ENTRY_BAND_SCALE",
    "LEAST_BAD_TOLERANCE",
    "MAX_SPEED_GAIN",
    "steadiness_figures",
]

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

UTILISATION_HYSTERESIS = 0.05
"""Hysteresis on the utilisation, and the least a new change must gain below the margin [-]
(project choice)."""

ZONE_EXIT_BAND_SCALE = 1.5
"""A zone counts as left only outside the resonance bands widened by this factor [-] (project choice)."""

ZONE_ENTRY_BAND_SCALE = 1.0 / 1.5
"""A zone the previous window did not see holds the present state only inside its bands narrowed by
this factor; otherwise it must be seen in two windows running (project choice)."""

LEAST_BAD_TOLERANCE = 0.10
"""When no cell is acceptable, the previous least-bad advice is kept while its utilisation is within
this fraction of the best (or UTILISATION_HYSTERESIS, whichever is larger) [-] (project choice)."""

ADVISED_ZONE_BAND_SCALE = 1.0 / 3.0
"""An advice already given stays acceptable until the nominal estimate puts it inside the resonance
bands narrowed by this factor [-] (project choice: the estimated periods scatter by some 5–10 % from
one window to the next, which moves the band edges over much of the chart)."""

MIN_BENEFIT_HEADING = math.radians(30.0)
"""The previous advice is replaced only by one cheaper by this much heading's worth of cost [rad]
(project choice)."""

NEAR_PREVIOUS_HEADING = math.radians(30.0)
NEAR_PREVIOUS_SPEED = 5.0 * KNOT
"""When the previous advice is no longer acceptable, a new one within this heading and speed of it is
preferred (a larger move reads as a different advice; project choice, the issue's definition of a flip)."""

MAX_SPEED_GAIN = 2.0 * KNOT
"""A new advice asks for at most this much more speed than the present [m/s] (project choice: in heavy
weather the attainable speed falls as the sea builds and the estimate's Hs is uncertain, the motions in
head and bow seas and the risk of surf-riding in following seas grow with speed, so a large speed
increase given now is the advice most likely to be withdrawn in the next windows; heavy-weather practice
is to reduce speed (MSC.1/Circ.1228 §4.2.1 for following seas, from memory). An advice already given is
not affected.)"""

ARC_LIMIT = 1.0
"""Utilisation above which a cell passed in the turn counts as over the limit [-]."""


@dataclass(frozen=True)
class TurnPlan:
    """How to get from the present heading to the advised one.

    Attributes
    ----------
    direction : str
        ``"starboard"`` (clockwise, heading increasing), ``"port"`` or ``""`` (no turn).
    angle : float
        Heading change along the suggested arc [rad] (>= 0).
    speed : float
        Speed at which the arc is scored, the speed to hold through the turn [m/s].
    reduce_speed_first : bool
        True when reducing speed before the turn is what keeps the arc within the limit.
    arc_utilisation : float
        Largest conservative utilisation of the heading cells along the arc at ``speed`` [-]
        (NaN without a turn).
    over_limit : bool
        True when the arc passes cells over the limit (utilisation > 1) even so.
    other_side_utilisation : float
        The same for the other arc at ``speed`` [-].
    zones : tuple of str
        Circ.1228 zones (conservative) the arc passes through.
    """

    direction: str = ""
    angle: float = 0.0
    speed: float = float("nan")
    reduce_speed_first: bool = False
    arc_utilisation: float = float("nan")
    over_limit: bool = False
    other_side_utilisation: float = float("nan")
    zones: tuple[str, ...] = ()


NO_TURN = TurnPlan()


@dataclass(frozen=True)
class Advice:
    """The advised heading and speed with its explanation.

    Attributes
    ----------
    status : str
        ``"keep"`` (the present heading and speed are acceptable), ``"change"`` (a change to the
        advised heading/speed is suggested) or ``"none_acceptable"`` (no cell is acceptable; the
        advised one is the least bad).
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
        Circ.1228 zones (conservative) now / at the advice (``zones_now`` with the exit hysteresis).
    cost : float
        Cost of the advised change (see the module docstring) [-].
    margin : float
        Margin of the limit set [-].
    sentence : str
        One plain-language sentence (degrees true, knots).
    notice : str
        The advisory notice.
    reason : str
        Why this advice, one short key: ``within_limits``, ``over_margin``, ``in_zone``,
        ``previous_still_acceptable``, ``none_acceptable``.
    turn : TurnPlan
        Which way to turn and what the turn passes.
    speed_cap_now : float
        Speed the ship can make at the present heading in this sea [m/s] (inf when unknown).
    speed_cap_advised : float
        The same at the advised heading [m/s].
    zones_seen : tuple of str
        Circ.1228 zones (conservative) at the present heading and speed before the entry hysteresis
        (what the next window compares with).
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
    reason: str = ""
    turn: TurnPlan = NO_TURN
    speed_cap_now: float = math.inf
    speed_cap_advised: float = math.inf
    zones_seen: tuple[str, ...] = ()


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


def _cost(weights, psi, u, course, speed_now):
    return (
        weights.heading * _angdiff(psi, course)
        + weights.speed_loss * np.maximum(0.0, speed_now - u)
        + weights.speed_gain * np.maximum(0.0, u - speed_now)
    )


def advise(
    polar: PolarResult,
    heading_now: float,
    speed_now: float,
    course: float,
    weights,
    *,
    previous: Advice | None = None,
) -> Advice:
    """The advice for this window (module docstring: keep, hysteresis, minimum benefit, turn).

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
    previous : Advice, optional
        The advice of the previous window of the same chain (None after a gap or a rejected window).

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
    speed_now = float(speed_now)
    course = float(np.mod(course, TWO_PI))
    margin = polar.margin
    hyst = UTILISATION_HYSTERESIS
    alerted = previous is not None and previous.status != "keep"

    now = polar.at(heading_now, speed_now)
    zones_seen = now.zones
    zones_now = zones_seen
    if previous is not None and not alerted:
        # zone entry: a zone the previous window did not see counts only when clearly inside it
        # (bands narrowed by ZONE_ENTRY_BAND_SCALE); one window's scatter of the periods is no reason
        clear = set(polar.at(heading_now, speed_now, band_scale=ZONE_ENTRY_BAND_SCALE).zones) if zones_now else set()
        zones_now = tuple(z for z in zones_now if z in previous.zones_seen or z in clear)
    if not zones_now and alerted and previous.zones_now:
        zones_now = polar.at(heading_now, speed_now, band_scale=ZONE_EXIT_BAND_SCALE).zones
    over = now.overall > (margin - hyst if alerted else margin)
    cost_now = weights.heading * float(_angdiff(heading_now, course))

    status, reason, h, s, c = "keep", "within_limits", heading_now, speed_now, cost_now
    if over or zones_now:
        psi = polar.headings[:, None]
        u = polar.speeds[None, :]
        cost = _cost(weights, psi, u, course, speed_now)
        closeness = weights.heading * _angdiff(psi, heading_now) + weights.speed_loss * np.abs(u - speed_now)
        allowed = (np.broadcast_to(u >= weights.min_speed - 1e-9, cost.shape) & polar.within_cap()
                   & np.broadcast_to(u <= max(speed_now, weights.min_speed) + MAX_SPEED_GAIN + 1e-9, cost.shape))
        if not allowed.any():
            allowed = np.broadcast_to(u == u.min(), cost.shape) | np.broadcast_to(u == u.max(), cost.shape)
        free = ~polar.in_zone_conservative & allowed
        ok = free & (polar.overall_conservative <= margin - hyst)
        if not ok.any():
            ok = free & (polar.overall_conservative <= margin)

        def pick(mask, *keys):
            idx = np.flatnonzero(mask.ravel())
            order = np.lexsort(tuple(k.ravel()[idx] for k in reversed(keys)))
            return np.unravel_index(idx[order[0]], mask.shape)

        prev = None
        if previous is not None and previous.status in ("change", "none_acceptable"):
            # the previous advice stays acceptable until the nominal estimate puts it inside a zone:
            # a new advice keeps out of the conservative zones, an advice given keeps out of the
            # nominal ones (the hysteresis of zone entry for the advised cell)
            pv = polar.at(previous.heading, previous.speed, nominal_zones=True, band_scale=ADVISED_ZONE_BAND_SCALE)
            attainable = previous.speed <= polar.cap_at(previous.heading) + 1e-9
            slow_ok = previous.speed >= weights.min_speed - 1e-9
            pcost = float(_cost(weights, previous.heading, previous.speed, course, speed_now))
            near_prev = weights.heading * _angdiff(psi, previous.heading) + weights.speed_loss * np.abs(u - previous.speed)
            prev = (pv, attainable and slow_ok, pcost, near_prev)

        def step_from_previous():
            """Cells within a small step of the previous advice that count as the same advice corrected:
            within the margin, allowed, outside the zones of the nominal estimate and not clearly inside
            (bands narrowed by ZONE_ENTRY_BAND_SCALE) the conservative ones."""
            return (allowed & _near(polar, previous.heading, previous.speed)
                    & (polar.overall_conservative <= margin)
                    & ~polar.in_zone_grid(nominal=True)
                    & ~polar.in_zone_grid(band_scale=ZONE_ENTRY_BAND_SCALE))

        if ok.any():
            i, j = pick(ok, cost, closeness)
            status, reason = "change", "over_margin" if over else "in_zone"
            if prev is not None:
                pv, usable, pcost, near_prev = prev
                slack = weights.heading * MIN_BENEFIT_HEADING
                if usable and pv.overall <= margin and not pv.zones and cost[i, j] >= pcost - slack:
                    h, s, c, reason = float(previous.heading), float(previous.speed), pcost, "previous_still_acceptable"
                else:
                    # the cheapest cell within a small step of the previous advice, else the cell
                    # with the least cost plus distance from the previous advice (continuity)
                    step_ok = ok & _near(polar, previous.heading, previous.speed)
                    if not step_ok.any():
                        step_ok = step_from_previous()
                    if step_ok.any():
                        i, j = pick(step_ok, cost, near_prev)
                    else:
                        i, j = pick(ok, cost + near_prev, cost)
                    h, s, c = float(polar.headings[i]), float(polar.speeds[j]), float(cost[i, j])
            else:
                h, s, c = float(polar.headings[i]), float(polar.speeds[j]), float(cost[i, j])
        else:
            # outside the zones of the uncertainty envelope if possible, else outside those of the nominal
            # estimate (when the envelope's zones cover every cell they no longer tell cells apart)
            in_zone = polar.in_zone_conservative.astype(float) + polar.in_zone_grid(nominal=True).astype(float)
            util = np.round(polar.overall_conservative, 6)
            i, j = pick(allowed, in_zone, util, cost, closeness)
            status, reason = "none_acceptable", "none_acceptable"
            h, s, c = float(polar.headings[i]), float(polar.speeds[j]), float(cost[i, j])
            best_zone, best_util = bool(in_zone[i, j]), float(util[i, j])
            if prev is not None:
                pv, usable, pcost, _near_prev = prev
                tol = max(hyst, LEAST_BAD_TOLERANCE * best_util)
                if (previous.status == "change" and usable and not pv.zones and pv.overall <= margin
                        and not (over and pv.overall >= now.overall)):
                    # rule 4 holds here too: the advice given is still acceptable (within the margin,
                    # outside the nominal zones with the narrowed bands) though no new cell is
                    status, reason = "change", "previous_still_acceptable"
                    h, s, c = float(previous.heading), float(previous.speed), pcost
                    best_zone, best_util = False, pv.overall
                elif usable and (not pv.zones or best_zone) and pv.overall <= best_util + tol:
                    h, s, c = float(previous.heading), float(previous.speed), pcost
                    best_zone, best_util = bool(pv.zones), pv.overall
                elif previous.status == "change" and (near_ok := step_from_previous()).any():
                    # the advice given, corrected by a small step, is still acceptable though no new cell is
                    k, m = pick(near_ok, cost, _near_prev)
                    status, reason = "change", "over_margin" if over else "in_zone"
                    h, s, c = float(polar.headings[k]), float(polar.speeds[m]), float(cost[k, m])
                    best_zone, best_util = False, float(util[k, m])
                else:
                    # the least bad within a small step of the previous advice, when about as good
                    step = allowed & _near(polar, previous.heading, previous.speed)
                    if best_zone is False:
                        step = step & ~polar.in_zone_conservative
                    if step.any():
                        k, m = pick(step, in_zone, util, cost)
                        if util[k, m] <= best_util + 2 * tol:
                            h, s, c = float(polar.headings[k]), float(polar.speeds[m]), float(cost[k, m])
                            best_zone, best_util = bool(in_zone[k, m]), float(util[k, m])
            if status == "change":
                pass  # the previous advice, still acceptable or corrected by a small step (above)
            elif not now.zones and (best_zone or now.overall <= best_util):
                h, s, c = heading_now, speed_now, cost_now
            elif now.zones and now.overall <= margin and best_util > 1.0:
                # every cell outside the screened zones is over a limit while the present one is within
                # the margin: leaving a screening band (project-chosen widths) for a predicted exceedance
                # is no improvement, so the present heading and speed stay (the sentence says why)
                h, s, c = heading_now, speed_now, cost_now

    adv = now if (h == heading_now and s == speed_now) else polar.at(h, s)
    turn = _turn(polar, heading_now, speed_now, h, s, weights) if status != "keep" else NO_TURN
    keys, labels = polar.keys, polar.labels
    bn, ba = now.limiting, adv.limiting
    sentence = _sentence(status, now, zones_now, adv, heading_now, speed_now, h, s, labels, margin, turn)
    return Advice(
        status=status,
        heading=h,
        speed=s,
        heading_now=heading_now,
        speed_now=speed_now,
        course=course,
        utilisation_now=now.overall,
        utilisation_now_nominal=now.overall_nominal,
        utilisation_advised=adv.overall,
        utilisation_advised_nominal=adv.overall_nominal,
        binding_now=keys[bn],
        binding_now_label=labels[bn],
        binding_advised=keys[ba],
        binding_advised_label=labels[ba],
        zones_now=zones_now,
        zones_advised=adv.zones,
        cost=float(c),
        margin=margin,
        sentence=sentence,
        reason=reason,
        turn=turn,
        speed_cap_now=polar.cap_at(heading_now),
        speed_cap_advised=polar.cap_at(h),
        zones_seen=zones_seen,
    )


def _near(polar: PolarResult, heading: float, speed: float) -> np.ndarray:
    """Cells within NEAR_PREVIOUS_HEADING and NEAR_PREVIOUS_SPEED of (heading, speed), shape (H, S)."""
    return (_angdiff(polar.headings, heading)[:, None] <= NEAR_PREVIOUS_HEADING + 1e-9) & (
        np.abs(polar.speeds - speed)[None, :] <= NEAR_PREVIOUS_SPEED + 1e-9
    )


# ---------------------------------------------------------------------------------------------- the turn


def _arc(polar: PolarResult, i0: int, i1: int, side: int) -> np.ndarray:
    """Heading cells passed from cell i0 to cell i1 turning to ``side`` (+1 starboard, −1 port),
    the start excluded, the end included."""
    n_h = polar.headings.size
    n = (side * (i1 - i0)) % n_h
    return (i0 + side * np.arange(1, n + 1)) % n_h


def _turn(polar: PolarResult, heading_now, speed_now, h, s, weights) -> TurnPlan:
    """Suggested side and speed of the turn (module docstring)."""
    d = float(np.mod(h - heading_now, TWO_PI))
    if min(d, TWO_PI - d) < math.radians(0.5):
        return NO_TURN
    step = TWO_PI / polar.headings.size
    n_h = polar.headings.size
    i0 = int(round(heading_now / step)) % n_h
    i1 = int(round(h / step)) % n_h
    sp = polar.speeds
    util = polar.overall_conservative
    zmask = polar.in_zone_conservative
    short = 1 if d <= math.pi else -1
    arcs = {side: _arc(polar, i0, i1, side) for side in (short, -short)}
    angle = {short: min(d, TWO_PI - d), -short: max(d, TWO_PI - d)}

    def score(side, u):
        j = int(np.argmin(np.abs(sp - u)))
        cells = arcs[side]
        if cells.size == 0:  # a turn within one heading cell: the cell itself
            cells = np.array([i1])
        z = tuple(name for name, m in polar.zones_conservative.items() if m[cells, j].any())
        return float(util[cells, j].max()), z

    options = [(short, speed_now, False), (-short, speed_now, False)]
    slower = [s] if s < speed_now - 1e-9 else []
    slower += [float(u) for u in sp[::-1] if u < speed_now - 1e-9 and u >= weights.min_speed - 1e-9]
    for u in slower:
        options += [(short, u, True), (-short, u, True)]
    best = None
    for side, u, reduce in options:
        val, z = score(side, u)
        if val <= ARC_LIMIT:
            best = (side, u, reduce, val, z, False)
            break
        if best is None or val < best[3] - 1e-12:
            best = (side, u, reduce, val, z, True)
    side, u, reduce, val, z, over = best
    other, _ = score(-side, u)
    _ = zmask
    return TurnPlan(
        direction="starboard" if side > 0 else "port",
        angle=angle[side],
        speed=float(u),
        reduce_speed_first=bool(reduce),
        arc_utilisation=val,
        over_limit=bool(over),
        other_side_utilisation=other,
        zones=z,
    )


# ---------------------------------------------------------------------------------------------- wording


def _lower(label: str) -> str:
    return label[:1].lower() + label[1:] if label[1:2].islower() else label


def _action(heading_now, speed_now, h, s, turn: TurnPlan) -> str:
    alter = ""
    if turn.direction:
        alter = f"altering to {_deg(h)} (turning to {turn.direction} through {math.degrees(turn.angle):.0f}°)"
    speed = ""
    if s < speed_now - 0.05 * KNOT:
        speed = f"reducing to {_kn(s)}"
    elif s > speed_now + 0.05 * KNOT:
        speed = f"increasing to {_kn(s)}"
    if turn.reduce_speed_first and alter:
        first = f"reducing to {_kn(turn.speed)}"
        rest = [alter] + ([speed] if speed and abs(s - turn.speed) > 0.05 * KNOT else [])
        return f"{first} first, then " + " and ".join(rest)
    parts = [p for p in (alter, speed) if p]
    return " and ".join(parts) if parts else f"keeping {_deg(h)} at {_kn(s)}"


def _turn_text(turn: TurnPlan) -> str:
    if not turn.direction:
        return ""
    if turn.over_limit:
        return (
            f"; the turn passes headings over the limit (up to {turn.arc_utilisation:.2f}), "
            f"whichever way and at any speed tried"
        )
    if turn.arc_utilisation > 1.0 or turn.other_side_utilisation > ARC_LIMIT:
        return f"; the turn stays within the limits (up to {turn.arc_utilisation:.2f}; the other way passes {turn.other_side_utilisation:.2f})"
    return f"; the turn stays within the limits (up to {turn.arc_utilisation:.2f})"


def _sentence(status, now, zones_now, adv, heading_now, speed_now, h, s, labels, margin, turn) -> str:
    ln, la = _lower(labels[now.limiting]), _lower(labels[adv.limiting])
    if status == "keep":
        return (
            f"Suggest keeping {_deg(heading_now)} at {_kn(speed_now)}: every limit is met with margin "
            f"(closest: {ln} at {now.overall:.2f} of its limit) and no screened zone holds this heading and speed."
        )
    if status == "change":
        action = _action(heading_now, speed_now, h, s, turn)
        if now.overall > margin and zones_now:
            why = f"{ln} binds and the ship is in the {_zone_text(zones_now)} ({now.overall:.2f} -> {adv.overall:.2f})"
        elif now.overall > margin - UTILISATION_HYSTERESIS and not zones_now:
            why = f"{ln} binds ({now.overall:.2f} -> {adv.overall:.2f})"
        elif zones_now and (left := tuple(z for z in zones_now if z not in adv.zones)):
            why = f"this leaves the {_zone_text(left)} (utilisation {adv.overall:.2f}, {la} highest)"
        elif zones_now:
            why = (f"this moves toward the edge of the {_zone_text(zones_now)} (utilisation {adv.overall:.2f}, "
                   f"{la} highest)")
        else:
            why = f"utilisation {now.overall:.2f} -> {adv.overall:.2f}"
        # the advised cell may lie within the zones once the estimate's uncertainty is allowed for (a
        # corrected step of an advice given): say so rather than let the sentence read as clear of them
        near = (f"; there it is still near the {_zone_text(adv.zones)} when the estimate's uncertainty is "
                f"allowed for (screening only)") if adv.zones else ""
        return f"Suggest {action}: {why}{near}{_turn_text(turn)}."
    where = f"{_deg(h)} at {_kn(s)}"
    zone = f", still in the {_zone_text(adv.zones)}" if adv.zones else ""
    if h == heading_now and s == speed_now and adv.zones and adv.overall <= margin:
        return (
            f"Present {where} is within the limits ({la} at {adv.overall:.2f}) but in the "
            f"{_zone_text(adv.zones)} (screening only); every heading and speed outside the screened zones is "
            f"over a limit, so no change is suggested: watch the roll."
        )
    return (
        f"No heading and speed keeps every limit within the margin {margin:.2f}; least bad is {where}, "
        f"where {la} is at {adv.overall:.2f} of its limit{zone}{_turn_text(turn)}."
    )


# ---------------------------------------------------------------------------------------------- steadiness


def steadiness_figures(
    *, heading, speed, advised_heading, advised_speed, utilisation, changed, in_zone,
    steady_heading=math.radians(10.0), steady_speed=2.0 * KNOT,
    flip_heading=math.radians(30.0), flip_speed=5.0 * KNOT, low_utilisation=0.5,
) -> dict:
    """How steady a sequence of advice is (the measure of the project's issue on steady advice).

    A *flip* is a pair of consecutive windows in which the ship held its heading within
    ``steady_heading`` and its speed within ``steady_speed`` while the advised heading moved by more
    than ``flip_heading`` or the advised speed by more than ``flip_speed``. All thresholds are
    project choices.

    Parameters
    ----------
    heading, speed : array_like
        Present heading [rad] and speed [m/s] per window.
    advised_heading, advised_speed : array_like
        Advised heading [rad] and speed [m/s] per window.
    utilisation : array_like
        Conservative utilisation at the present heading and speed [-].
    changed : array_like of bool
        A change was advised (status other than keep).
    in_zone : array_like of bool
        A screened zone held the present heading and speed.

    Returns
    -------
    dict
        ``windows``, ``changes``, ``changes_low`` (changes at utilisation < ``low_utilisation``),
        ``changes_low_no_zone`` (of those, without a zone at the present state), ``flips``.
    """
    heading, speed = np.asarray(heading, float), np.asarray(speed, float)
    ah, au = np.asarray(advised_heading, float), np.asarray(advised_speed, float)
    util = np.asarray(utilisation, float)
    changed, in_zone = np.asarray(changed, bool), np.asarray(in_zone, bool)
    low = changed & (util < low_utilisation)
    tol = 1e-9  # degrees and knots round-tripped through radians and m/s
    held = (_angdiff(heading[1:], heading[:-1]) <= steady_heading + tol) & (
        np.abs(speed[1:] - speed[:-1]) <= steady_speed + tol
    )
    moved = (_angdiff(ah[1:], ah[:-1]) > flip_heading + tol) | (np.abs(au[1:] - au[:-1]) > flip_speed + tol)
    return {
        "windows": int(heading.size),
        "changes": int(changed.sum()),
        "changes_low": int(low.sum()),
        "changes_low_no_zone": int((low & ~in_zone).sum()),
        "flips": int((held & moved).sum()) if heading.size > 1 else 0,
    }
