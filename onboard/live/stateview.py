"""The bridge state the page reads, built from the store and the service's latest in-memory results.

:class:`StoreStateProvider` implements the page's ``StateProvider`` protocol (``onboard.live.web.provider``):
``current_state()`` builds the state JSON of the contract (``onboard/live/web/openapi.yaml``) from the store
(latest cycle, latest successful cycle, alerts, active loading condition, sensor-health snapshot) and,
when the service runs in the same process, from its live view (own ship from the sample buffer, sensor
health of the last check, the polar grid of the last cycle kept in memory). ``history()`` reads the
store; ``acknowledge_alert()`` stores the time and the user.

Rules applied here, in one place:

* Old advice is never shown as current. The sea state, polar and advice of the last successful cycle are
  marked ``stale`` when its window ended more than ``stale_after_s`` ago (default two cycles) or when a
  later cycle failed or gave no advice; the advice is then ``unavailable`` with the reason.
* Own heading and speed older than ``ship_stale_after_s`` (default 15 s: the feed arrives at ≥ 1 Hz)
  are stale.
* Every value is in edge units with the unit in its name; conversions through :mod:`onboard.formats.units`.

The functions :func:`polar_json`, :func:`sea_state_record` and :func:`advice_record` turn a
:class:`onboard.core.engine.CycleResult` into the edge-unit mappings stored in the database, published on
MQTT and served to the page.

Advisory only. The master decides. The advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

import math
import threading
from collections.abc import Callable, Mapping
from datetime import UTC, datetime
from typing import Any, Protocol

import numpy as np

from estimator.seastate import CONFIDENCE_HIGH, CONFIDENCE_MEDIUM
from onboard.formats import units
from onboard.live.alerts import present_alerts
from onboard.live.web.provider import ADVISORY_NOTICE, format_utc

__all__ = [
    "LiveView",
    "StoreStateProvider",
    "advice_record",
    "compact_polar",
    "criteria_json",
    "expand_polar",
    "polar_json",
    "sea_state_record",
]


# ------------------------------------------------------------------------------ CycleResult → edge units


def _deg360(rad: float, nd: int = 1) -> float:
    """Angle [rad] → degrees in [0, 360), rounded (359.97 → 0.0, never 360.0)."""
    return round(float(units.rad_to_deg(rad)), nd) % 360.0


def _r(x: float | None, nd: int) -> float | None:
    if x is None:
        return None
    x = float(x)
    return round(x, nd) if math.isfinite(x) else None


def criteria_json(limit_set) -> list[dict[str, Any]]:
    """The limit set as the page's ``criteria`` list (limit in the unit written in the limit file)."""
    return [
        {
            "key": lim.key,
            "label": lim.label,
            "point": lim.point or "ship",
            "limit": float(lim.value_in_unit),
            "unit": lim.unit,
        }
        for lim in limit_set.limits
    ]


def polar_json(polar, limit_set) -> dict[str, Any]:
    """A :class:`advisor.polar.PolarResult` as the page's ``polar`` object (edge units).

    ``utilisation`` is the conservative utilisation (upper sea-state estimate), ``utilisation_nominal``
    the nominal one, ``limiting`` the index of the binding criterion (conservative), ``zones`` the
    conservative IMO MSC.1/Circ.1228 zone masks, grids indexed [heading][speed].
    """

    def grid(a, nd=3):
        return np.round(np.asarray(a, dtype=float), nd).tolist()

    return {
        "headings_deg": [_deg360(h, 2) for h in polar.headings],
        "speeds_kn": [round(float(v), 2) for v in units.ms_to_kn(polar.speeds)],
        "utilisation": grid(polar.overall_conservative),
        "utilisation_nominal": grid(polar.overall),
        "limiting": np.asarray(polar.limiting_conservative, dtype=int).tolist(),
        "criteria": criteria_json(limit_set),
        "zones": {name: np.asarray(m, dtype=bool).tolist() for name, m in polar.zones_conservative.items()},
        "margin": float(polar.margin),
        # optional: what the envelope and the screening used (advisor.polar, advisor.zones)
        "speed_cap_kn": None if polar.speed_cap is None else [round(float(v), 2) for v in units.ms_to_kn(polar.speed_cap)],
        "speed_cap_method": polar.speed_cap_method,
        "hs_upper_m": _r(polar.hs_upper, 3),
        "tp_factors": [round(float(f), 3) for f in polar.tp_factors],
        "parametric_check": {
            "applied": polar.parametric_check.applied,
            "vulnerable": bool(polar.parametric_check.vulnerable),
            "text": polar.parametric_check.text,
        },
        **_attainable(polar),
    }


def turn_json(advice) -> dict[str, Any]:
    """The turn of an advice (:class:`advisor.advice.TurnPlan`) and the attainable speeds, edge units."""
    t = advice.turn

    def kn(v):
        return _r(units.ms_to_kn(v), 2) if np.isfinite(v) else None

    return {
        "direction": t.direction or None,
        "angle_deg": _r(units.rad_to_deg(t.angle), 1) if t.direction else None,
        "speed_kn": kn(t.speed) if t.direction else None,
        "reduce_speed_first": bool(t.reduce_speed_first),
        "arc_utilisation": _r(t.arc_utilisation, 3) if t.direction else None,
        "over_limit": bool(t.over_limit),
        "zones": list(t.zones),
        "speed_cap_now_kn": kn(advice.speed_cap_now),
        "speed_cap_advised_kn": kn(advice.speed_cap_advised),
        "reason": advice.reason,
    }


def _attainable(polar) -> dict[str, Any]:
    """The attainable speed per heading [kn] when the advisor provides it (``PolarResult.speed_cap``
    [m/s], one value per heading); nothing otherwise."""
    cap = getattr(polar, "speed_cap", None)
    if cap is None:
        return {}
    cap = np.asarray(cap, dtype=float)
    if cap.shape != np.shape(polar.headings) or not np.all(np.isfinite(cap)):
        return {}
    return {"attainable_stw_kn": [round(float(v), 2) for v in units.ms_to_kn(cap)]}


def compact_polar(polar: Mapping[str, Any]) -> dict[str, Any]:
    """The page polar in its stored form: zone masks as lists of ``[heading index, speed index]`` cells
    (zones cover few cells; full boolean grids would triple the stored size).

    :func:`expand_polar` undoes it.
    """
    out = {k: v for k, v in polar.items() if k != "zones"}
    out["zone_cells"] = {
        name: [[i, j] for i, row in enumerate(grid) for j, v in enumerate(row) if v]
        for name, grid in polar["zones"].items()
    }
    return out


def expand_polar(stored: Mapping[str, Any] | None) -> dict[str, Any] | None:
    """The page polar from its stored form (:func:`compact_polar`); a full polar is returned as it is."""
    if stored is None or "zones" in stored:
        return None if stored is None else dict(stored)
    n_h, n_s = len(stored["headings_deg"]), len(stored["speeds_kn"])
    zones = {}
    for name, cells in (stored.get("zone_cells") or {}).items():
        grid = [[False] * n_s for _ in range(n_h)]
        for i, j in cells:
            grid[i][j] = True
        zones[name] = grid
    out = {k: v for k, v in stored.items() if k not in ("zone_cells", "turn", ADVICE_EXTRA)}  # the advice's
    out["zones"] = zones
    return out


def sea_state_record(result) -> dict[str, Any] | None:
    """The estimate of a cycle as the store's ``sea_state`` mapping (edge units); None without one."""
    e = result.estimate
    if e is None:
        return None
    return {
        "hs_m": _r(e.hs, 3),
        "tp_s": _r(e.tp, 2),
        "tm01_s": _r(e.tm01, 2),
        "wave_from_deg": _deg360(e.wave_from),
        "spread_deg": _r(units.rad_to_deg(e.spread), 1),
        "confidence": _r(e.confidence, 3),
        "method": "wave-buoy analogy (Bayesian)",
        "reasons": list(e.reasons),
        "systems": [
            {
                "label": s.label,
                "hs_m": _r(s.hs, 3),
                "tp_s": _r(s.tp, 2),
                "wave_from_deg": _deg360(s.wave_from),
                "spread_deg": _r(units.rad_to_deg(s.spread), 1),
                "energy_share": _r(s.energy_share, 3),
            }
            for s in e.systems
        ]
        # the roll identified from the measured roll rides in the stored systems JSON under its own label
        # (optional; no schema change of the store; the page's wave systems keep only wave labels)
        + ([{"label": ROLL_LABEL, **roll}] if (roll := result.roll_identified()) is not None else [])
        # likewise the watch's visual estimate when it was the estimator's prior (who entered it, when)
        + ([{"label": PRIOR_LABEL, "entered_by": p["entered_by"], "entered_utc": _iso(p["entered_utc"]),
             "sentence": result.prior_sentence()}]
           if (p := getattr(result, "prior", None)) is not None else [])
        # and the sea the advice was worked out in, when it combines several windows' estimates
        + ([{"label": ADVICE_SEA_LABEL, **sea}] if (sea := _advice_sea(result)) is not None else []),
    }


def _advice_sea(result) -> dict | None:
    fn = getattr(result, "advice_sea", None)
    return fn() if callable(fn) else None


#: Label of the stored entry holding the roll identified from the measured roll
#: (see :func:`sea_state_record`).
ROLL_LABEL = "roll identified"

#: Label of the stored entry saying the watch's visual estimate was the estimator's prior
#: (see :func:`sea_state_record`; the page's optional ``sea_state.prior``).
PRIOR_LABEL = "watch prior"

#: Label of the stored entry describing the sea the advice was worked out in (the fused estimates;
#: :meth:`onboard.core.engine.CycleResult.advice_sea`; the page's optional ``sea_state.advice_sea``).
ADVICE_SEA_LABEL = "sea for the advice"


def _roll_json(stored: Mapping[str, Any] | None) -> dict[str, Any] | None:
    """The page's optional ``sea_state.roll`` from the stored entry (None without one or without a period)."""
    if not stored:
        return None
    measured = _finite(stored.get("roll_period_measured_s"))
    if measured is None:
        return None
    return {
        "period_measured_s": measured,
        "period_condition_s": _finite(stored.get("roll_period_condition_s")),
        "damping": _finite(stored.get("roll_damping_measured")),
        "implied_gm_m": _finite(stored.get("implied_gm_m")),
        "gm_warning": bool(stored.get("roll_gm_warning")),
    }


def _finite(x) -> float | None:
    """A stored number as float, None when absent or not finite."""
    try:
        v = float(x)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def advice_record(result, polar: Mapping[str, Any] | None = None) -> dict[str, Any] | None:
    """The advice of a cycle as the store's ``advice`` mapping (edge units); None without one."""
    a = result.advice
    if a is None:
        return None
    return {
        "status": a.status,
        "heading_deg": _deg360(a.heading_now),
        "stw_kn": _r(units.ms_to_kn(a.speed_now), 2),
        "utilisation": _r(a.utilisation_now, 4),
        "utilisation_nominal": _r(a.utilisation_now_nominal, 4),
        "limiting_criterion": a.binding_now_label,
        "advised_heading_deg": _deg360(a.heading),
        "advised_stw_kn": _r(units.ms_to_kn(a.speed), 2),
        "utilisation_advised": _r(a.utilisation_advised, 4),
        "explanation": a.sentence,
        # the turn rides in the stored polar JSON (optional keys; no schema change of the store)
        "polar": _with_advice_extra({**compact_polar(polar), "turn": turn_json(a)}, a) if polar is not None else None,
    }


def _with_advice_extra(stored_polar: dict[str, Any] | None, a) -> dict[str, Any] | None:
    """Keep the advisor's optional results (turn direction, attainable speed at the suggestion) with the
    stored polar, so the store's advice columns stay as they are; absent fields add nothing."""
    extra = {
        "turn_direction": _turn(getattr(getattr(a, "turn", None), "direction", None)),
        "attainable_stw_kn": _kn_or_none(getattr(a, "speed_cap_advised", None)),
    }
    extra = {k: v for k, v in extra.items() if v is not None}
    if stored_polar is None or not extra:
        return stored_polar
    return {**stored_polar, ADVICE_EXTRA: extra}


#: Key of the advisor's optional results kept in the stored polar (see :func:`advice_record`).
ADVICE_EXTRA = "advice_extra"


def _turn(value) -> str | None:
    """The advisor's optional turn direction as ``port``/``starboard`` (None when absent or unknown)."""
    return value if value in ("port", "starboard") else None


def _kn_or_none(speed_ms) -> float | None:
    """An optional speed [m/s] from the advisor in knots (None when absent)."""
    if speed_ms is None or not math.isfinite(float(speed_ms)):
        return None
    return round(float(units.ms_to_kn(speed_ms)), 2)


def confidence_level(confidence: float | None) -> str:
    """``high``, ``medium`` or ``low`` by the estimator's own bands
    (:meth:`estimator.seastate.SeaStateEstimate.confidence_level`)."""
    if confidence is None:
        return "low"
    return "high" if confidence >= CONFIDENCE_HIGH else "medium" if confidence >= CONFIDENCE_MEDIUM else "low"


# ----------------------------------------------------------------------------------------- provider


class LiveView(Protocol):
    """What the running service adds to the store (all optional: return None when unknown)."""

    def live_ship(self) -> dict[str, Any] | None:
        """``{"time_utc": datetime, "heading_deg": float, "stw_kn": float}`` of the newest samples."""
        ...

    def live_sensors(self) -> list[dict[str, Any]] | None:
        """The per-channel health list of the last check."""
        ...

    def live_polar(self, cycle_id: int) -> dict[str, Any] | None:
        """The page polar of cycle ``cycle_id`` if it is the one held in memory."""
        ...

    def intended_course_deg(self) -> float | None:
        """The intended course, true [deg]."""
        ...


def _iso(t: datetime | None) -> str | None:
    return None if t is None else format_utc(t.replace(microsecond=(t.microsecond // 1000) * 1000))


class StoreStateProvider:
    """Bridge state from the store (plus the live view of the service in the same process).

    Parameters
    ----------
    store : onboard.core.store.Store
    vessel : onboard.formats.vessel.Vessel
        For the name and the particulars of the active condition.
    cycle_s : float
        Analysis interval [s]; advice older than ``2 · cycle_s`` is stale.
    clock : callable, optional
        Present time, aware UTC (default the system clock; ``hwadvice demo`` passes its replay clock).
    live : LiveView, optional
        The running service.
    ship_stale_after_s : float
        Own-ship data older than this is stale [s].
    base_condition : callable, optional
        Stored condition name → its vessel-file loading condition (for the particulars shown).
    """

    def __init__(
        self,
        store,
        *,
        vessel,
        cycle_s: float = 600.0,
        clock: Callable[[], datetime] | None = None,
        live: LiveView | None = None,
        ship_stale_after_s: float = 15.0,
        base_condition: Callable[[str], str] | None = None,
    ):
        if not (math.isfinite(cycle_s) and cycle_s > 0):
            raise ValueError(f"cycle_s must be > 0 s, got {cycle_s!r}")
        self.store = store
        self.vessel = vessel
        self.cycle_s = float(cycle_s)
        self.stale_after_s = 2.0 * self.cycle_s
        self.ship_stale_after_s = float(ship_stale_after_s)
        self.clock = clock or (lambda: datetime.now(UTC))
        self.live = live
        self.base_condition = base_condition
        self._lock = threading.Lock()

    # -- protocol
    def acknowledge_alert(self, alert_id: int, user: str) -> str:
        """Store the acknowledgement (time of the service clock, user); ``ok``/``unknown``/``already``."""
        return self.store.acknowledge_alert(alert_id, user, when=self.clock())

    def history(self, hours: float) -> dict[str, list[Any]]:
        """Cycles of the last ``hours`` from the store (keys of the page's history contract and more)."""
        h = self.store.history(hours, now=self.clock())
        out = {k: h[k] for k in ("times_utc", "hs_m", "utilisation", "heading_deg", "stw_kn", "confidence")}
        out["status"] = h["status"]
        return out

    def current_state(self) -> dict[str, Any]:
        """The bridge state (contract in ``onboard/live/web/openapi.yaml``)."""
        now = self.clock()
        db = self.store.latest_state()
        cycle, ok = db["cycle"], db["last_ok_cycle"]
        cond = self._condition(db["condition"], cycle)

        # -- sea state and polar of the last successful cycle, stale by age or by a later failure
        sea_state = polar = None
        stale = True
        age = None
        if ok is not None and ok["sea_state"] is not None and ok["window_end_utc"] is not None:
            age = max((now - ok["window_end_utc"]).total_seconds(), 0.0)
            later_failed = cycle is not None and cycle["id"] != ok["id"]
            stale = age > self.stale_after_s or later_failed
            ss = ok["sea_state"]
            conf = ss.get("confidence")
            systems = [
                {k: s.get(k) for k in ("label", "hs_m", "tp_s", "wave_from_deg", "spread_deg")}
                for s in (ss.get("systems") or [])
                if s.get("label") in ("wind sea", "swell", "total") and s.get("hs_m") is not None
            ]
            sea_state = {
                "window_end_utc": _iso(ok["window_end_utc"]),
                "age_s": round(age, 1),
                "stale": bool(stale),
                "stale_after_s": self.stale_after_s,
                "hs_m": ss.get("hs_m"),
                "tp_s": ss.get("tp_s"),
                "tm01_s": ss.get("tm01_s"),
                "wave_from_deg": ss.get("wave_from_deg"),
                "spread_deg": ss.get("spread_deg"),
                "confidence": conf,
                "confidence_level": confidence_level(conf),
                "confidence_reasons": list(ss.get("reasons") or []),
                "systems": systems,
            }
            stored_roll = next((s for s in (ss.get("systems") or []) if s.get("label") == ROLL_LABEL), None)
            roll = _roll_json(stored_roll)
            if roll is not None:
                sea_state["roll"] = roll
            stored_prior = next((s for s in (ss.get("systems") or []) if s.get("label") == PRIOR_LABEL), None)
            if stored_prior is not None:
                sea_state["prior"] = {k: stored_prior.get(k) for k in ("entered_by", "entered_utc", "sentence")}
            stored_sea = next((s for s in (ss.get("systems") or []) if s.get("label") == ADVICE_SEA_LABEL), None)
            if stored_sea is not None:
                sea_state["advice_sea"] = {k: stored_sea.get(k) for k in ("hs_m", "hs_p95_m", "estimates",
                                                                           "sentence")}
            if ok["advice"] is not None:
                polar = (self.live.live_polar(ok["id"]) if self.live else None) or expand_polar(
                    ok["advice"].get("polar")
                )
                if polar is not None and ADVICE_EXTRA in polar:
                    polar = {k: v for k, v in polar.items() if k != ADVICE_EXTRA}

        # -- advice: current only if the latest cycle is the successful one and it is not stale
        link = self._link()
        reason = None
        if cycle is None and link is not None and link["broker"] and not link["connected"]:
            reason = f"no sensor data: MQTT broker {link['broker']} not reachable"
        elif cycle is None:
            reason = "no analysis yet: collecting the first window of sensor data"
        elif cycle["status"] != "ok":
            reason = cycle["reason"] or f"last cycle {cycle['status']}"
        elif ok is None or ok["advice"] is None:
            reason = "the last analysis gave no advice"
        elif stale:
            reason = (
                f"advice is stale: the last analysis window ended at "
                f"{_iso(ok['window_end_utc'])[11:16]}Z, {age / 60:.0f} min ago"
            )
        if reason is not None and link is not None and link["broker"] and not link["connected"]:
            if "not reachable" not in reason:  # the broker first: it explains the rest
                reason = f"MQTT broker {link['broker']} not reachable; {reason}"
        if reason is None:
            a = ok["advice"]
            advice = {
                "status": a["status"],
                "sentence": a.get("explanation") or "",
                "advised_heading_deg": a.get("advised_heading_deg"),
                "advised_stw_kn": a.get("advised_stw_kn"),
                "utilisation_now": a.get("utilisation"),
                "utilisation_advised": a.get("utilisation_advised"),
                "binding_limit": a.get("limiting_criterion"),
                "reason": None,
                "utilisation_now_nominal": a.get("utilisation_nominal"),
                "turn": (a.get("polar") or {}).get("turn"),
                **((a.get("polar") or {}).get(ADVICE_EXTRA) or {}),
            }
        else:
            advice = {
                "status": "unavailable",
                "sentence": f"No advice: {reason}.",
                "advised_heading_deg": None,
                "advised_stw_kn": None,
                "utilisation_now": None,
                "utilisation_advised": None,
                "binding_limit": None,
                "reason": reason,
            }

        return {
            "generated_utc": _iso(now),
            "advisory_notice": ADVISORY_NOTICE,
            "vessel": {"name": self.vessel.name},
            "condition": cond,
            "ship": self._ship(now, ok),
            "sea_state": sea_state,
            "polar": polar,
            "advice": advice,
            "sensors": self._sensors(db["sensor_health"]),
            "alerts": present_alerts(a for a in db["alerts"] if a["level"] in ("warning", "caution")),
            "status": {"advice_available": reason is None, "reason": reason},
            "observed_sea": self._observed_sea(now),
            **({"link": link} if link is not None else {}),
        }

    # -- parts
    def _observed_sea(self, now: datetime) -> dict[str, Any] | None:
        """The watch's current visual estimate and its fallback advice (optional; the running service)."""
        get = getattr(self.live, "observed_sea", None)
        if get is None:
            return None
        try:
            return get(now)
        except Exception:  # never let the optional part break the page state
            return None
    def _link(self) -> dict[str, Any] | None:
        """The broker link of the live service (None without one, e.g. a store read ashore)."""
        live_link = getattr(self.live, "live_link", None) if self.live else None
        return live_link() if live_link is not None else None

    def _condition(self, active: Mapping[str, Any] | None, cycle: Mapping[str, Any] | None) -> dict | None:
        name = (active or {}).get("condition") or (cycle or {}).get("condition")
        if not name:
            return None
        try:
            c = self.vessel.condition(self.base_condition(name) if self.base_condition else name)
        except ValueError:
            return {"name": name, "draft_m": None, "gm_m": None, "roll_period_s": None}
        if c.name != name:  # a stored condition: its own name, the particulars of its base
            return {
                "name": name,
                "base_condition": c.name,
                "draft_m": c.draft,
                "gm_m": c.gm,
                "roll_period_s": c.roll_period,
            }
        return {"name": c.name, "draft_m": c.draft, "gm_m": c.gm, "roll_period_s": c.roll_period}

    def _ship(self, now: datetime, ok: Mapping[str, Any] | None) -> dict[str, Any]:
        ship = self.live.live_ship() if self.live else None
        course = self.live.intended_course_deg() if self.live else None
        if ship is None and ok is not None and ok["advice"] is not None:
            ship = {
                "time_utc": ok["window_end_utc"],
                "heading_deg": ok["advice"].get("heading_deg"),
                "stw_kn": ok["advice"].get("stw_kn"),
            }
        if ship is None or ship.get("time_utc") is None:
            return {
                "time_utc": None,
                "age_s": None,
                "stale": True,
                "stale_after_s": self.ship_stale_after_s,
                "heading_deg": None,
                "stw_kn": None,
                "intended_course_deg": course,
            }
        age = max((now - ship["time_utc"]).total_seconds(), 0.0)
        hd = ship.get("heading_deg")
        return {
            "time_utc": _iso(ship["time_utc"]),
            "age_s": round(age, 1),
            "stale": age > self.ship_stale_after_s,
            "stale_after_s": self.ship_stale_after_s,
            "heading_deg": None if hd is None else round(float(hd), 1) % 360.0,
            "stw_kn": _r(ship.get("stw_kn"), 2),
            "intended_course_deg": course,
        }

    def _sensors(self, snapshot: Mapping[str, Any] | None) -> list[dict[str, Any]]:
        channels = self.live.live_sensors() if self.live else None
        if channels is None:
            channels = (snapshot or {}).get("channels") or []
        return [
            {
                "channel": c["channel"],
                "status": c["status"],
                "last_utc": c.get("last_utc"),
                "detail": c.get("detail") or "",
                "age_s": c.get("age_s"),
            }
            for c in channels
        ]
