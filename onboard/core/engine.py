"""The analysis engine shared by the live service and replay ashore.

One :class:`Engine` per (vessel, loading condition, limit set): it converts a window of voyage-log rows
(edge units: degrees, knots, sensor signs) into a core :class:`estimator.prep.Record`, runs the estimator
pipeline, scores every heading and speed with the advisor and returns a :class:`CycleResult`. The live
service and ``hwadvice replay`` call the same :meth:`Engine.analyse`, so replay ashore gives exactly the
advice the ship would have been given with the same settings.

Units are converted here (and in :mod:`onboard.formats.units`) and nowhere else.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import datetime
from pathlib import Path

import numpy as np
import pandas as pd

from advisor.advice import ADVISORY_NOTICE, Advice, advise
from advisor.geometry import Waterline, default_limit_mapping
from advisor.limits import LimitSet, parse_limit_set
from advisor.polar import PolarResult, build_polar_model, evaluate_polar
from advisor.speedloss import KWON_METHOD, STAWAVE1_METHOD, attainable_speed, attainable_speed_power
from advisor.zones import PERIOD_SCREENING_ONLY, ParametricRollCheck, WaveSystem, parametric_roll_level1
from estimator.constants import RHO_SEAWATER
from estimator.fusion import FusedSea, FusionSettings, fuse_estimates
from estimator.pipeline import WindowAnalysis, analyse_window
from estimator.prep import PrepSettings, Record
from estimator.seastate import EstimatorSettings, SeaStateEstimate, SeaStateEstimator
from onboard.formats import units
from onboard.formats.limitsfile import read_limit_set
from onboard.formats.vessel import LoadingCondition, Vessel, load_condition_raos

MOTION_COLUMNS = {
    "roll_deg": "roll",
    "pitch_deg": "pitch",
    "heave_m": "heave",
    "acc_x_ms2": "acc_x",
    "acc_y_ms2": "acc_y",
    "acc_z_ms2": "acc_z",
}
"""Voyage-log column → core channel name (docs/voyage-log.md)."""

OBSERVED_SIGMA_HS = 0.25
"""Relative standard uncertainty of a visually estimated Hs [-] (project choice; visual heights are
commonly quoted as within about 20-30 % of measured ones, from memory)."""
OBSERVED_SIGMA_DIR = float(np.radians(30.0))
"""Standard uncertainty of a visually estimated wave direction [rad] (project choice)."""

DEFAULT_LIMITS = Path(__file__).resolve().parents[2] / "config" / "limits" / "nordforsk_merchant.toml"
"""A limit file written for the demo vessel (kept for the demo and tests; never used as a default for
other vessels: a condition without a limit file gets :func:`advisor.geometry.default_limit_mapping`)."""

TP_FALLBACK_HALF_WIDTH = 0.10
"""Half-width of the peak-period interval, relative, when the estimate gives none [-] (project choice)."""


def confidence_widening(confidence: float) -> float:
    """Factor on the half-widths of the estimate's intervals: 1 at full confidence, 2 at none [-].

    Lower confidence widens the margins, never narrows them (project choice).
    """
    c = min(max(float(confidence), 0.0), 1.0) if math.isfinite(confidence) else 0.0
    return 1.0 + (1.0 - c)


def estimate_intervals(est, hs_k: float = 1.0) -> tuple[float, tuple[float, float]]:
    """Upper Hs [m] and period-stretch factors (lower, upper) [-] for the conservative utilisation.

    Hs: the estimate's 90 % interval (``hs_p95``, SI) when it has one; else Hs·(1 + hs_k·σ_Hs/Hs) from
    its posterior standard deviation. Periods: the envelope stretches the whole spectrum by one factor
    (:func:`advisor.polar.period_stretched`), which moves every period alike, so the factor's bounds are
    those of the mean period Tm01 (``tm01_p05``/``tm01_p95``: spectral moments, smooth in the spectrum)
    when the estimate has them; the Tp interval otherwise, and Tp·(1 ± TP_FALLBACK_HALF_WIDTH) when it
    has neither. Tp's own interval is reported but not used as a stretch when Tm01's exists: Tp is
    the arg-max of the spectrum, and its posterior draws jump between the peaks of a multi-peaked sea
    (5–31 s seen for a 12 s sea), which no stretch of the whole spectrum represents.
    Half-widths are widened by :func:`confidence_widening`.
    """
    w = confidence_widening(est.confidence)
    hs = float(est.hs)
    hs95 = getattr(est, "hs_p95", None)
    if hs95 is None or not math.isfinite(hs95):
        hs95 = hs + hs_k * float(est.hs_sd)
    hs_up = hs + max(float(hs95) - hs, 0.0) * w
    for ref, lo, hi in (
        (getattr(est, "tm01", None), getattr(est, "tm01_p05", None), getattr(est, "tm01_p95", None)),
        (getattr(est, "tp", None), getattr(est, "tp_p05", None), getattr(est, "tp_p95", None)),
    ):
        if ref is None or lo is None or hi is None:
            continue
        ref, lo, hi = float(ref), float(lo), float(hi)
        if math.isfinite(ref) and ref > 0 and math.isfinite(lo) and math.isfinite(hi):
            break
    else:
        ref = float(est.tp)
        if not ref > 0:
            return hs_up, (1.0, 1.0)
        lo, hi = ref * (1 - TP_FALLBACK_HALF_WIDTH), ref * (1 + TP_FALLBACK_HALF_WIDTH)
    f_lo = max(1.0 - max(1.0 - lo / ref, 0.0) * w, 0.5)
    f_hi = min(1.0 + max(hi / ref - 1.0, 0.0) * w, 2.0)
    return hs_up, (f_lo, f_hi)


def condition_waterline(vessel: Vessel, cond: LoadingCondition) -> Waterline:
    """The waterline of a loading condition (draft, trim; the vessel's reference draft of its points)."""
    return Waterline(vessel.lpp, cond.draft, cond.trim or 0.0, vessel.points_draft)


def vessel_default_limits(vessel: Vessel, cond: LoadingCondition) -> tuple[LimitSet, tuple[str, ...]]:
    """The default limit set built for this vessel and condition (:func:`advisor.geometry.default_limit_mapping`)
    and the criteria it had to skip; never a file written for another ship."""
    wl = condition_waterline(vessel, cond)
    points = wl.points(vessel.points_mapping())
    mapping, skipped = default_limit_mapping(
        lpp=vessel.lpp, waterline=wl, freeboard_bow=cond.freeboard_bow, depth=vessel.depth,
        vessel_points=points, name=f"NORDFORSK merchant ship, built for {vessel.name} ({cond.name})")
    return parse_limit_set(mapping, f"default limits for {vessel.name}", vessel_points=points.keys()), skipped


def parametric_check_for(vessel: Vessel, cond: LoadingCondition) -> ParametricRollCheck:
    """MSC.1/Circ.1627 level-1 parametric roll check where the vessel file gives what it needs."""
    need = {
        "waterplane_draft_m/waterplane_inertia_m4": bool(vessel.waterplane_draft),
        "midship_coefficient": vessel.midship_coefficient is not None,
        "depth_m": vessel.depth is not None,
        "displacement_t": cond.displacement is not None,
    }
    missing = [k for k, ok in need.items() if not ok]
    if missing:
        return replace(
            PERIOD_SCREENING_ONLY,
            text="Parametric roll: period screening of MSC.1/Circ.1228 only (the vessel file lacks "
            + ", ".join(missing) + " for the MSC.1/Circ.1627 level-1 check).",
        )
    return parametric_roll_level1(
        lpp=vessel.lpp, beam=vessel.beam, depth=vessel.depth, draft=cond.draft,
        draft_full=max(c.draft for c in vessel.conditions), volume=cond.displacement / RHO_SEAWATER,
        gm=cond.gm, wp_draft=vessel.waterplane_draft, wp_inertia=vessel.waterplane_inertia,
        cm=vessel.midship_coefficient, bilge_keel_area=vessel.bilge_keel_area,
    )


@dataclass(frozen=True)
class EngineSettings:
    """Analysis settings shared by the service and replay (so replay reproduces the ship's advice).

    Attributes
    ----------
    window_s : float
        Analysis window length [s] (20 min default: the usual length of a wave record, common
        practice; project choice).
    step_s : float
        Time between analyses [s] (every 10 min by default on board and in replay).
    prior_max_age_s : float
        The watch's visual estimate is used as the estimator's prior only while it is at most this old at
        the end of the window [s] (3 h by default, project choice: within the watch that entered it and
        the next hour; the page keeps showing it, and uses it as the fallback, for
        :data:`onboard.admin.observedsea.MAX_AGE_S`).
    prep : PrepSettings
    estimator : EstimatorSettings
    """

    window_s: float = 1200.0
    step_s: float = 600.0
    prior_max_age_s: float = 3 * 3600.0
    prep: PrepSettings = field(default_factory=PrepSettings)
    estimator: EstimatorSettings = field(default_factory=EstimatorSettings)


@dataclass(frozen=True)
class WatchObservation:
    """The watch's visual sea-state estimate as the engine takes it (SI systems).

    Attributes
    ----------
    systems : tuple of estimator.observed.ObservedSystem
    entered_by : str
        Who entered it (the logged-in officer of the audit trail).
    entered_utc : datetime
        When it was entered (timezone-aware UTC).
    """

    systems: tuple
    entered_by: str
    entered_utc: datetime


@dataclass(frozen=True)
class CycleResult:
    """Everything one analysis cycle produced (SI inside; use :meth:`edge_row` for edge units).

    ``estimate``, ``polar`` and ``advice`` are None when the window was rejected; ``reasons`` says why.
    """

    window_start: datetime
    window_end: datetime
    accepted: bool
    reasons: tuple[str, ...]
    heading: float
    speed: float
    course: float
    analysis: WindowAnalysis | None
    estimate: SeaStateEstimate | None
    polar: PolarResult | None
    advice: Advice | None
    seconds: float = 0.0
    prior: dict | None = None
    """The watch's visual estimate used as the estimator's prior in this cycle, or None when none was:
    ``{"entered_by": str, "entered_utc": datetime, "age_s": float}`` (:meth:`Engine.analyse`)."""
    fused: FusedSea | None = None
    """The sea the advice was worked out in (:meth:`Engine.fuse`), None when the window was rejected."""

    def advice_sea(self) -> dict | None:
        """The sea the advice was worked out in, in edge units, when it combines more than this window's
        estimate (:func:`estimator.fusion.fuse_estimates`); None otherwise.

        Keys ``hs_m``, ``hs_p95_m``, ``estimates`` (how many were combined), ``newest_weight`` (the share
        of this window's estimate) and ``sentence`` (plain words for the page)."""
        f = self.fused
        if f is None or f.used < 2:
            return None
        e = f.estimate
        return {"hs_m": round(e.hs, 2), "hs_p95_m": round(e.hs_p95, 2), "estimates": int(f.used),
                "newest_weight": round(f.weights[0], 3),
                "sentence": f"Advice uses the last {f.used} estimates combined: Hs {e.hs:.1f} m (up to {e.hs_p95:.1f} m)."}

    def prior_sentence(self) -> str | None:
        """Plain words for the page: who entered the prior and when; None when no prior was used."""
        if self.prior is None:
            return None
        return (f"The watch's estimate was used as a prior (entered by {self.prior['entered_by']} at "
                f"{units.format_utc(self.prior['entered_utc'])[11:16]} UTC); the motions decide where they "
                "reveal the sea.")

    def roll_identified(self) -> dict | None:
        """The roll natural period and damping identified from the measured roll (edge units), None when
        the window did not allow it (:func:`estimator.pipeline.roll_period_check`, ``usable``).

        Keys ``roll_period_measured_s``, ``roll_damping_measured``, ``implied_gm_m`` (NaN when not
        computable), ``roll_period_condition_s`` (the loading condition's) and ``roll_gm_warning`` (1 when
        the implied GM differs from the condition's by more than
        :data:`estimator.pipeline.GM_WARNING`, else 0).
        """
        rc = self.analysis.roll_check if self.analysis is not None else None
        if rc is None or not rc.usable:
            return None
        return {"roll_period_measured_s": round(rc.measured, 2),
                "roll_damping_measured": round(rc.damping, 3),
                "implied_gm_m": round(rc.implied_gm, 2),
                "roll_period_condition_s": round(rc.expected, 2),
                "roll_gm_warning": int(rc.gm_warning)}

    def estimate_row(self) -> dict:
        """One row of ``estimates.csv`` (docs/replay-outputs.md), edge units."""
        e = self.estimate
        row = {"window_end_utc": units.format_utc(self.window_end)}
        if e is None:
            row.update(hs_m=np.nan, tp_s=np.nan, tm01_s=np.nan, wave_from_deg=np.nan, confidence=np.nan,
                       spread_deg=np.nan, status="rejected", reasons="; ".join(self.reasons))
            return row
        row.update(hs_m=round(e.hs, 3), tp_s=round(e.tp, 2), tm01_s=round(e.tm01, 2),
                   wave_from_deg=round(float(units.rad_to_deg(e.wave_from)) % 360.0, 1),
                   confidence=round(e.confidence, 3), spread_deg=round(float(units.rad_to_deg(e.spread)), 1),
                   tm02_s=round(e.tm02, 2), status="ok", reasons="; ".join(self.reasons),
                   hs_p05_m=round(e.hs_p05, 3), hs_p95_m=round(e.hs_p95, 3), tp_p05_s=round(e.tp_p05, 2),
                   tp_p95_s=round(e.tp_p95, 2),
                   dir_spread_deg=round(float(units.rad_to_deg(e.wave_from_halfwidth)), 1))
        roll = self.roll_identified()
        if roll is not None:
            # roll identified from the measured roll; the warning joins the reasons
            row.update(roll)
            rc = self.analysis.roll_check
            if rc.flagged or rc.gm_warning:
                row["reasons"] = "; ".join(x for x in (row["reasons"], rc.note) if x)
        for i, s in enumerate(e.systems[:2]):
            row[f"system{i + 1}_label"] = s.label
            row[f"system{i + 1}_hs_m"] = round(s.hs, 3)
            row[f"system{i + 1}_tp_s"] = round(s.tp, 2)
            row[f"system{i + 1}_from_deg"] = round(float(units.rad_to_deg(s.wave_from)) % 360.0, 1)
        return row

    def advice_row(self) -> dict:
        """One row of ``advice.csv`` (docs/replay-outputs.md), edge units."""
        row = {
            "window_end_utc": units.format_utc(self.window_end),
            "heading_deg": round(float(units.rad_to_deg(self.heading)) % 360.0, 1) if np.isfinite(self.heading) else np.nan,
            "stw_kn": round(float(units.ms_to_kn(self.speed)), 2) if np.isfinite(self.speed) else np.nan,
        }
        a = self.advice
        if a is None:
            row.update(utilisation=np.nan, utilisation_nominal=np.nan, limiting_criterion="",
                       advised_heading_deg=np.nan, advised_stw_kn=np.nan, status="unavailable",
                       explanation="no advice: " + "; ".join(self.reasons))
            return row
        row.update(
            utilisation=round(a.utilisation_now, 4),
            utilisation_nominal=round(a.utilisation_now_nominal, 4),
            limiting_criterion=a.binding_now_label,
            advised_heading_deg=round(float(units.rad_to_deg(a.heading)) % 360.0, 1),
            advised_stw_kn=round(float(units.ms_to_kn(a.speed)), 2),
            utilisation_advised=round(a.utilisation_advised, 4),
            status=a.status,
            zones_now=" ".join(a.zones_now),
            explanation=a.sentence,
            reason=a.reason,
            turn=a.turn.direction,
            turn_arc_utilisation=round(a.turn.arc_utilisation, 4) if a.turn.direction else np.nan,
            turn_over_limit=a.turn.over_limit if a.turn.direction else "",
            turn_reduce_speed_first=a.turn.reduce_speed_first if a.turn.direction else "",
            speed_cap_kn=round(float(units.ms_to_kn(a.speed_cap_now)), 2) if math.isfinite(a.speed_cap_now) else np.nan,
        )
        return row


def _utc_times(column: pd.Series) -> pd.Series:
    """The ``time_utc`` column as timezone-aware UTC timestamps (parsed only when it is not already)."""
    if isinstance(column.dtype, pd.DatetimeTZDtype) and str(column.dtype.tz) == "UTC":
        return column
    return pd.to_datetime(column, utc=True)


class Engine:
    """Estimator + advisor for one vessel, loading condition and limit set.

    Parameters
    ----------
    vessel : Vessel
    condition : str
        Name of the active loading condition.
    limit_set : LimitSet, optional
        Limits; default the condition's own ``limits`` file, else :func:`vessel_default_limits`.
    settings : EngineSettings, optional
    """

    def __init__(self, vessel: Vessel, condition: str, *, limit_set: LimitSet | None = None,
                 settings: EngineSettings | None = None):
        self.vessel = vessel
        self.condition: LoadingCondition = vessel.condition(condition)
        self.settings = settings or EngineSettings()
        self.rao_table = load_condition_raos(vessel, self.condition)
        cond = self.condition
        self.waterline = condition_waterline(vessel, cond)
        points = self.waterline.points(vessel.points_mapping())
        self.skipped_limits: tuple[str, ...] = ()
        if limit_set is None and cond.limits is None:
            limit_set, self.skipped_limits = vessel_default_limits(vessel, cond)
        elif limit_set is None:
            # a limit file belongs to its condition: its own [[points]] are above that condition's
            # waterline already; only the vessel's points are moved (advisor.geometry)
            limit_set = read_limit_set(cond.limits, vessel_points=vessel.points_mapping().keys())
        self.limit_set = limit_set
        self.parametric_check = parametric_check_for(vessel, cond)
        self.estimator = SeaStateEstimator(self.rao_table, vessel.motion_sensor.xyz,
                                           roll_period=self.condition.roll_period,
                                           roll_damping=self.condition.zeta_roll, settings=self.settings.estimator)
        self.polar_model = build_polar_model(
            self.rao_table, limit_set, lpp=vessel.lpp, t_roll=self.condition.roll_period,
            vessel_points=points, omega=self.estimator.grid.omega, max_speed=vessel.max_speed,
            parametric_check=self.parametric_check)
        self._previous: SeaStateEstimate | None = None
        self._previous_advice: Advice | None = None
        self._history: list[tuple[float, SeaStateEstimate]] = []  # (window end [s], estimate), newest first
        self.fused: FusedSea | None = None

    @property
    def notice(self) -> str:
        return ADVISORY_NOTICE

    def reset(self) -> None:
        """Forget the warm start and the previous advice (e.g. after a gap in the data)."""
        self._previous = None
        self._previous_advice = None
        self._history = []
        self.fused = None

    def fuse(self, est: SeaStateEstimate, end: datetime) -> FusedSea:
        """The sea the advice is evaluated in: ``est`` fused with the chain's latest estimates
        (:func:`estimator.fusion.fuse_estimates`)."""
        t = end.timestamp()
        self._history = [(t, est)] + [(tt, e) for tt, e in self._history if 0 < t - tt <= FusionSettings().max_age]
        self.fused = fuse_estimates([e for _, e in self._history], [tt for tt, _ in self._history],
                                    self.settings.window_s,
                                    rao_scale_error=self.settings.estimator.rao_scale_error)
        return self.fused

    def speed_cap(self, est: SeaStateEstimate) -> tuple[np.ndarray | None, str]:
        """Attainable speed per polar heading [m/s] and the method, or (None, reason)."""
        cond = self.condition
        v = self.vessel
        if v.available_power is not None:
            cap = attainable_speed_power(
                self.polar_model.headings, est.wave_from, est.hs, max_speed=v.max_speed, beam=v.beam,
                bow_length=v.bow_length, calm_speed=v.calm_water_speed, calm_resistance=v.calm_water_resistance,
                power=v.available_power, efficiency=v.propulsive_efficiency)
            return cap, STAWAVE1_METHOD
        if cond.cb is None or cond.displacement is None:
            return None, "no speed cap: the condition gives no block_coefficient and displacement_t (Kwon 2008 needs them)"
        full = max(c.draft for c in self.vessel.conditions)
        cap = attainable_speed(
            self.polar_model.headings, est.wave_from, est.hs, max_speed=self.vessel.max_speed, lpp=self.vessel.lpp,
            cb=cond.cb, volume=cond.displacement / RHO_SEAWATER, container=self.vessel.ship_type == "container",
            ballast=cond.draft < 0.75 * full)
        return cap, KWON_METHOD

    def evaluate(self, est: SeaStateEstimate) -> PolarResult:
        """Score every heading and speed in the estimated sea: nominal, and the envelope over the
        estimate's Hs, Tp and direction intervals (:func:`estimate_intervals`), with the zones and the
        attainable speed."""
        hs_up, tp_factors = estimate_intervals(est, self.limit_set.uncertainty.hs_k)
        # Direction uncertainty: the spread of the estimate is not its uncertainty; use a fixed 10°
        # widened when the confidence is low (project choice, documented in DEVELOPERS.md).
        sigma_dir = np.radians(10.0 + 20.0 * (1.0 - est.confidence))
        # The Circ.1228 zones are screened for the wave systems the estimate reports (the ones the page
        # shows), each over its Tm01-Tp band; the sec. 4.2.2 height test uses the Hs of the whole sea.
        min_hs = min(self.limit_set.zones.min_system_hs, 0.04 * self.vessel.lpp)  # as advisor.polar's default
        systems = [WaveSystem(hs=s.hs, tp=s.tp, theta=s.wave_from, label=s.label, tm01=s.tm01) for s in est.systems
                   if np.isfinite(s.tp) and s.hs >= min_hs]
        cap, method = self.speed_cap(est)
        return evaluate_polar(self.polar_model, est.spectrum, sigma_dir=sigma_dir, systems=systems,
                              hs_upper=hs_up, tp_factors=tp_factors, hs_total=est.hs, speed_cap=cap,
                              speed_cap_method=method)

    # -- edge conversion ----------------------------------------------------------------------------
    def frame_to_record(self, frame: pd.DataFrame) -> Record:
        """Voyage-log rows (docs/voyage-log.md columns) → core record in SI and sensor conventions.

        The vessel file's sign mapping for the motion sensor is applied here (docs/voyage-log.md: a
        sensor whose signs differ is mapped in the vessel configuration).
        """
        t = _utc_times(frame["time_utc"])
        secs = (t - t.iloc[0]).dt.total_seconds().to_numpy(dtype=float)
        signs = self.vessel.motion_sensor.signs
        channels = {}
        for col, name in MOTION_COLUMNS.items():
            if col in frame.columns:
                v = pd.to_numeric(frame[col], errors="coerce").to_numpy(dtype=float) * signs[col]
                if np.isfinite(v).sum() == 0:
                    continue
                channels[name] = units.deg_to_rad(v) if col.endswith("_deg") else v
        self.frame_notes = self._sensor_frame(channels, secs)
        heading = units.deg_to_rad(pd.to_numeric(frame["heading_deg"], errors="coerce").to_numpy(dtype=float))
        speed = units.kn_to_ms(pd.to_numeric(frame["stw_kn"], errors="coerce").to_numpy(dtype=float))
        return Record(t=secs, channels=channels, heading=heading, speed=speed)

    def _sensor_frame(self, channels: dict, secs: np.ndarray) -> tuple[str, ...]:
        """Mounting rotation and acceleration frame of the motion sensor (vessel file), in place.

        Roll/pitch and acc_x/acc_y are turned into ship axes (``mounting_yaw_deg``); the frame of the
        lateral acceleration is checked against the data
        (:func:`estimator.sensorframe.acceleration_frame_check`)
        and, on a mismatch, the horizontal accelerations are left out of the window (they would corrupt
        the estimate) with a note; earth-frame accelerations are turned into the body-frame specific force
        the estimator models. Returns the notes (one line each).
        """
        from estimator.sensorframe import acceleration_frame_check, earth_to_body, rotate_mounting

        sensor = self.vessel.motion_sensor
        notes: list[str] = []
        mount = getattr(sensor, "mounting_yaw", 0.0)
        if mount:
            if "roll" in channels and "pitch" in channels:
                turned = rotate_mounting(channels["roll"], channels["pitch"], mount)
                channels["roll"], channels["pitch"] = turned
            elif "roll" in channels or "pitch" in channels:
                channels.pop("roll", None), channels.pop("pitch", None)
                notes.append("motion sensor mounted across the ship: roll and pitch need each other; "
                             "both left out")
            if "acc_x" in channels and "acc_y" in channels:
                turned = rotate_mounting(channels["acc_x"], channels["acc_y"], mount)
                channels["acc_x"], channels["acc_y"] = turned
            else:
                channels.pop("acc_x", None), channels.pop("acc_y", None)
        configured = getattr(sensor, "acceleration_frame", "body")
        if "acc_y" in channels and "roll" in channels:
            w_roll = 2.0 * np.pi / self.condition.roll_period if self.condition.roll_period else None
            chk = acceleration_frame_check(
                secs, channels["roll"], channels["acc_y"], sensor.z, roll_frequency=w_roll
            )
            if chk is not None and chk.frame is not None and chk.frame != configured:
                channels.pop("acc_x", None)
                channels.pop("acc_y", None)
                notes.append(
                    f"motion sensor: acc_y/roll = {chk.ratio:.2f} m/s2 per rad at {chk.omega:.2f} rad/s "
                    f"looks like {chk.frame}-frame accelerations (expected {chk.expected_body:.2f} body, "
                    f"{chk.expected_earth:.2f} earth) but the vessel file says acceleration_frame = "
                    f"{configured!r}; acc_x and acc_y left out"
                )
        if configured == "earth":
            if "acc_x" in channels and "pitch" in channels:
                channels["acc_x"], _ = earth_to_body(channels["acc_x"], 0.0, 0.0, channels["pitch"])
            else:
                channels.pop("acc_x", None)
            if "acc_y" in channels and "roll" in channels:
                _, channels["acc_y"] = earth_to_body(0.0, channels["acc_y"], channels["roll"], 0.0)
            else:
                channels.pop("acc_y", None)
        return tuple(notes)

    def advise_from_observation(self, systems, heading: float, speed: float, course: float | None = None):
        """Polar and advice in a visually observed sea (the fallback when the motions cannot be used).

        Parameters
        ----------
        systems : sequence of estimator.observed.ObservedSystem
            The watch's estimate (SI).
        heading, speed : float
            Present true heading [rad] and speed through water [m/s].
        course : float, optional
            Intended course [rad]; default the heading.

        Returns
        -------
        (advisor.polar.PolarResult, advisor.advice.Advice)
            Scored with a relative Hs uncertainty of :data:`OBSERVED_SIGMA_HS` and a direction
            uncertainty of :data:`OBSERVED_SIGMA_DIR` (visual estimates; project choices).
        """
        from estimator.observed import observed_spectrum

        spectrum = observed_spectrum(systems, self.estimator.grid.omega)
        waves = [WaveSystem(hs=s.hs, tp=s.tp, theta=s.wave_from, label=s.label) for s in systems]
        polar = evaluate_polar(self.polar_model, spectrum, sigma_hs_rel=OBSERVED_SIGMA_HS,
                               sigma_dir=OBSERVED_SIGMA_DIR, systems=waves)
        adv = advise(polar, heading, speed, heading if course is None else course, self.limit_set.advice)
        return polar, adv

    # -- one cycle ----------------------------------------------------------------------------------
    def prior_for(self, observation: WatchObservation | None, window_end: datetime):
        """The estimator's prior from the watch's visual estimate, or None when there is none or it is older
        than ``settings.prior_max_age_s`` at ``window_end`` (or entered after it).

        Returns
        -------
        (estimator.seastate.SeaPrior, dict) or None
            The prior (:func:`estimator.observed.observed_spectrum` on the estimator's frequencies, the
            systems for the parametric fit) and the record for :attr:`CycleResult.prior`.
        """
        from estimator.observed import observed_spectrum
        from estimator.seastate import SeaPrior

        if observation is None or not observation.systems:
            return None
        age = (window_end - observation.entered_utc).total_seconds()
        if not (-60.0 <= age <= self.settings.prior_max_age_s):
            return None
        systems = tuple(observation.systems)
        prior = SeaPrior(observed_spectrum(systems, self.estimator.grid.omega),
                         systems=tuple((s.hs, s.tp, s.wave_from) for s in systems))
        return prior, {"entered_by": observation.entered_by, "entered_utc": observation.entered_utc,
                       "age_s": max(age, 0.0)}

    def analyse(self, frame: pd.DataFrame, *, course_deg: float | None = None, warm: bool = True,
                observation: WatchObservation | None = None) -> CycleResult:
        """Analyse one window of voyage-log rows and advise.

        Parameters
        ----------
        frame : DataFrame
            Voyage-log rows of the window, sorted by ``time_utc``.
        course_deg : float, optional
            Intended course, true [deg]; default the mean heading of the window.
        warm : bool
            Warm-start from the previous window of this engine.
        observation : WatchObservation, optional
            The watch's latest visual estimate: used as the estimator's prior when it is recent
            (:meth:`prior_for`); the result's ``prior`` says whether it was. Replay passes none.
        """
        import time as _t

        t0 = _t.process_time()
        times = _utc_times(frame["time_utc"])
        start, end = times.iloc[0].to_pydatetime(), times.iloc[-1].to_pydatetime()
        try:
            record = self.frame_to_record(frame)
        except ValueError as exc:
            return CycleResult(start, end, False, (f"bad window: {exc}",), np.nan, np.nan, np.nan, None, None,
                               None, None, _t.process_time() - t0)
        cond = self.condition
        roll_check = None
        if cond.roll_period:
            roll_check = {"expected": cond.roll_period, "beam": self.vessel.beam, "draft": cond.draft,
                          "lwl": cond.lwl or self.vessel.lpp, "gm": cond.gm}
        use = self.prior_for(observation, end)
        analysis = analyse_window(record, self.estimator, prep_settings=self.settings.prep,
                                  previous=self._previous if warm else None, roll_check_particulars=roll_check,
                                  prior=None if use is None else use[0])
        notes = getattr(self, "frame_notes", ())
        if not analysis.accepted or analysis.estimate is None:
            self._previous = None
            self._previous_advice = None
            self._history = []
            self.fused = None
            heading = float(np.nan)
            speed = float(np.nan)
            reasons = (*notes, *analysis.reasons)
            return CycleResult(start, end, False, reasons, heading, speed, np.nan, analysis, None, None,
                               None, _t.process_time() - t0)
        est = analysis.estimate
        self._previous = est
        if not warm:
            self._history = []
        fused = self.fuse(est, end)
        heading = analysis.prepared.heading_mean
        speed = analysis.prepared.speed_mean
        course = float(units.deg_to_rad(course_deg)) if course_deg is not None else heading
        polar = self.evaluate(fused.estimate)
        adv = advise(polar, heading, speed, course, self.limit_set.advice, previous=self._previous_advice)
        self._previous_advice = adv
        reasons = (*notes, *est.reasons)
        return CycleResult(start, end, True, reasons, heading, speed, course, analysis, est, polar, adv,
                           _t.process_time() - t0, prior=None if use is None else use[1], fused=fused)
