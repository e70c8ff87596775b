"""The analysis engine shared by the live service and replay ashore.

One :class:`Engine` per (vessel, loading condition, limit set): it converts a window of voyage-log rows
(edge units: degrees, knots, sensor signs) into a core :class:`estimator.prep.Record`, runs the estimator
pipeline, scores every heading and speed with the advisor and returns a :class:`CycleResult`. The live
service and ``onboard replay`` call the same :meth:`Engine.analyse`, so replay ashore gives exactly the
advice the ship would have been given with the same settings.

Units are converted here (and in :mod:`onboard.units`) and nowhere else.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path

import numpy as np
import pandas as pd

from advisor.advice import ADVISORY_NOTICE, Advice, advise
from advisor.limits import LimitSet
from advisor.polar import PolarResult, build_polar_model, evaluate_polar
from advisor.zones import WaveSystem
from estimator.pipeline import WindowAnalysis, analyse_window
from estimator.prep import PrepSettings, Record
from estimator.seastate import EstimatorSettings, SeaStateEstimate, SeaStateEstimator
from onboard import units
from onboard.limitsfile import read_limit_set
from onboard.vessel import LoadingCondition, Vessel, load_condition_raos

MOTION_COLUMNS = {
    "roll_deg": "roll",
    "pitch_deg": "pitch",
    "heave_m": "heave",
    "acc_x_ms2": "acc_x",
    "acc_y_ms2": "acc_y",
    "acc_z_ms2": "acc_z",
}
"""Voyage-log column → core channel name (interfaces.md §2)."""

DEFAULT_LIMITS = Path(__file__).resolve().parents[1] / "config" / "limits" / "nordforsk_merchant.toml"


@dataclass(frozen=True)
class EngineSettings:
    """Analysis settings shared by the service and replay (so replay reproduces the ship's advice).

    Attributes
    ----------
    window_s : float
        Analysis window length [s] (wave-buoy-analogy brief §6 step 3: 20 min default).
    step_s : float
        Time between analyses [s] (every 10 min by default on board and in replay).
    prep : PrepSettings
    estimator : EstimatorSettings
    """

    window_s: float = 1200.0
    step_s: float = 600.0
    prep: PrepSettings = field(default_factory=PrepSettings)
    estimator: EstimatorSettings = field(default_factory=EstimatorSettings)


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

    def estimate_row(self) -> dict:
        """One row of ``estimates.csv`` (interfaces.md §5), edge units."""
        e = self.estimate
        row = {"window_end_utc": units.format_utc(self.window_end)}
        if e is None:
            row.update(hs_m=np.nan, tp_s=np.nan, tm01_s=np.nan, wave_from_deg=np.nan, confidence=np.nan,
                       spread_deg=np.nan, status="rejected", reasons="; ".join(self.reasons))
            return row
        row.update(hs_m=round(e.hs, 3), tp_s=round(e.tp, 2), tm01_s=round(e.tm01, 2),
                   wave_from_deg=round(float(units.rad_to_deg(e.wave_from)) % 360.0, 1),
                   confidence=round(e.confidence, 3), spread_deg=round(float(units.rad_to_deg(e.spread)), 1),
                   tm02_s=round(e.tm02, 2), status="ok", reasons="; ".join(e.reasons),
                   hs_p05_m=round(e.hs_p05, 3), hs_p95_m=round(e.hs_p95, 3), tp_p05_s=round(e.tp_p05, 2),
                   tp_p95_s=round(e.tp_p95, 2),
                   dir_spread_deg=round(float(units.rad_to_deg(e.wave_from_halfwidth)), 1))
        rc = self.analysis.roll_check if self.analysis is not None else None
        if rc is not None and rc.usable:
            # roll identified from the measured roll (issue 12); the warning joins the reasons
            row.update(roll_period_measured_s=round(rc.measured, 2), roll_damping_measured=round(rc.damping, 3),
                       implied_gm_m=round(rc.implied_gm, 2))
            if rc.flagged or rc.gm_warning:
                row["reasons"] = "; ".join(x for x in (row["reasons"], rc.note) if x)
        for i, s in enumerate(e.systems[:2]):
            row[f"system{i + 1}_label"] = s.label
            row[f"system{i + 1}_hs_m"] = round(s.hs, 3)
            row[f"system{i + 1}_tp_s"] = round(s.tp, 2)
            row[f"system{i + 1}_from_deg"] = round(float(units.rad_to_deg(s.wave_from)) % 360.0, 1)
        return row

    def advice_row(self) -> dict:
        """One row of ``advice.csv`` (interfaces.md §5), edge units."""
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
        Limits; default the condition's own ``limits`` file or :data:`DEFAULT_LIMITS`.
    settings : EngineSettings, optional
    """

    def __init__(self, vessel: Vessel, condition: str, *, limit_set: LimitSet | None = None,
                 settings: EngineSettings | None = None):
        self.vessel = vessel
        self.condition: LoadingCondition = vessel.condition(condition)
        self.settings = settings or EngineSettings()
        self.rao_table = load_condition_raos(vessel, self.condition)
        if limit_set is None:
            path = self.condition.limits or DEFAULT_LIMITS
            limit_set = read_limit_set(path, vessel_points=vessel.points_mapping().keys())
        self.limit_set = limit_set
        self.estimator = SeaStateEstimator(self.rao_table, vessel.motion_sensor.xyz,
                                           roll_period=self.condition.roll_period,
                                           roll_damping=self.condition.zeta_roll, settings=self.settings.estimator)
        self.polar_model = build_polar_model(
            self.rao_table, limit_set, lpp=vessel.lpp, t_roll=self.condition.roll_period,
            vessel_points=vessel.points_mapping(), omega=self.estimator.grid.omega, max_speed=vessel.max_speed)
        self._previous: SeaStateEstimate | None = None

    @property
    def notice(self) -> str:
        return ADVISORY_NOTICE

    def reset(self) -> None:
        """Forget the warm start (e.g. after a gap in the data)."""
        self._previous = None

    # -- edge conversion ----------------------------------------------------------------------------
    def frame_to_record(self, frame: pd.DataFrame) -> Record:
        """Voyage-log rows (interfaces.md §2 columns) → core record in SI and sensor conventions.

        The vessel file's sign mapping for the motion sensor is applied here (interfaces.md §2: a
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
        heading = units.deg_to_rad(pd.to_numeric(frame["heading_deg"], errors="coerce").to_numpy(dtype=float))
        speed = units.kn_to_ms(pd.to_numeric(frame["stw_kn"], errors="coerce").to_numpy(dtype=float))
        return Record(t=secs, channels=channels, heading=heading, speed=speed)

    # -- one cycle ----------------------------------------------------------------------------------
    def analyse(self, frame: pd.DataFrame, *, course_deg: float | None = None, warm: bool = True) -> CycleResult:
        """Analyse one window of voyage-log rows and advise.

        Parameters
        ----------
        frame : DataFrame
            Voyage-log rows of the window, sorted by ``time_utc``.
        course_deg : float, optional
            Intended course, true [deg]; default the mean heading of the window.
        warm : bool
            Warm-start from the previous window of this engine.
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
        analysis = analyse_window(record, self.estimator, prep_settings=self.settings.prep,
                                  previous=self._previous if warm else None, roll_check_particulars=roll_check)
        if not analysis.accepted or analysis.estimate is None:
            self._previous = None
            heading = float(np.nan)
            speed = float(np.nan)
            return CycleResult(start, end, False, analysis.reasons, heading, speed, np.nan, analysis, None, None,
                               None, _t.process_time() - t0)
        est = analysis.estimate
        self._previous = est
        heading = analysis.prepared.heading_mean
        speed = analysis.prepared.speed_mean
        course = float(units.deg_to_rad(course_deg)) if course_deg is not None else heading
        sigma_hs = est.hs_sd / max(est.hs, 1e-6)
        # Direction uncertainty: the spread of the estimate is not its uncertainty; use a fixed 10°
        # widened when the confidence is low (project choice, documented in DEVELOPERS.md).
        sigma_dir = np.radians(10.0 + 20.0 * (1.0 - est.confidence))
        # The Circ.1228 zones are screened for the wave systems the estimate reports (the ones the page shows).
        min_hs = min(self.limit_set.zones.min_system_hs, 0.04 * self.vessel.lpp)  # as advisor.polar's default
        systems = [WaveSystem(hs=s.hs, tp=s.tp, theta=s.wave_from, label=s.label) for s in est.systems
                   if np.isfinite(s.tp) and s.hs >= min_hs]
        polar = evaluate_polar(self.polar_model, est.spectrum, sigma_hs_rel=sigma_hs, sigma_dir=sigma_dir,
                               systems=systems)
        adv = advise(polar, heading, speed, course, self.limit_set.advice)
        return CycleResult(start, end, True, est.reasons, heading, speed, course, analysis, est, polar, adv,
                           _t.process_time() - t0)
