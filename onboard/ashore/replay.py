"""Replay ashore: run a voyage log through the same estimator and advisor the ship runs.

``hwadvice replay LOG --vessel VESSEL.toml --condition NAME --out DIR`` reads a voyage log
(docs/voyage-log.md: ``.csv``, ``.csv.gz``, ``.parquet`` or a directory of them) in chunks, slides
analysis windows over it, runs :meth:`onboard.core.engine.Engine.analyse` on every window with the
on-board settings, and writes

* ``DIR/estimates.csv`` - one row per analysis window, the docs/replay-outputs.md columns first
  (``window_end_utc, hs_m, tp_s, tm01_s, wave_from_deg, confidence``), extras after
  (:data:`ESTIMATE_COLUMNS`): status and reasons, spread, the two largest wave systems, the measured
  RMS roll, pitch and heave of the window and the RMS predicted for it from an earlier estimate, and the
  90 % intervals of Hs and Tp and the half-width of that of the mean direction;
* ``DIR/advice.csv`` - one row per window, §5 columns first (``window_end_utc, heading_deg,
  stw_kn, utilisation, limiting_criterion, advised_heading_deg, advised_stw_kn``), extras after
  (:data:`ADVICE_COLUMNS`);
* ``DIR/envelope.csv`` - per window the conservative utilisation at the ship's actual speed for
  every true heading of the polar grid (the safe envelope the report draws);
* ``DIR/skipped.txt`` - what could not be replayed (damaged file parts, gaps, windows rejected);
* the cycles, estimates and advice in the database (:class:`onboard.core.store.Store`; a SQLite file
  ``DIR/replay.db`` unless ``--db URL`` is given), and optionally ``DIR/report.html``
  (:mod:`onboard.ashore.report`).

Windows
-------
Windows lie on a fixed UTC grid: window *k* starts at k·step seconds after 1970-01-01T00:00Z and
lasts ``window_s`` (defaults 20 min every 10 min, as on board, :class:`onboard.core.engine.EngineSettings`).
A window is analysed when the log covers it from its start to its end (within 1 % of its length at
the two ends of the log) and its samples span at least half of it; gaps and blank stretches inside
such a window are the engine's business (it rejects a window it cannot use and says why). Windows
(mostly) inside a gap of the log are not analysis windows and get no row; the gap is listed in
``skipped.txt`` and the warm-start chain starts again after it. The row time ``window_end_utc`` is the
grid time at the window's end.

Determinism and parallel runs
-----------------------------
The estimator warm-starts every window from the previous one, so results depend on the chain of
windows analysed before. To make the output independent of the number of worker processes, the grid
is cut into fixed blocks of ``block_s`` (12 h by default, aligned to UTC midnight) and every block
is analysed by a fresh chain: the engine is reset (cold start) ``run_in`` windows before the block's
first window (``run_in`` = window/step rounded up, or the windows within the horizon over which the
advice's sea is fused from the latest estimates, whichever is more: 4 by default), those run-in windows
are analysed but not written, and the block's windows follow warm-started, with the same fused sea, as on
board (only the advice's memory of its own previous advice is shorter at a block's start). Which process
analyses which block therefore does not matter: the same log and configuration give byte-identical
CSV files for any ``--workers``. The outputs do depend on ``block_s`` and ``run_in`` (a different
cut re-starts the chain elsewhere; the difference is the warm-start effect, a few units in the last
written digit in our tests); both are part of the configuration, like the window and step. Inside a
worker the numerical libraries are limited to one thread, so that floating-point sums do not
depend on thread scheduling. Each worker builds its engine once, as soon as it starts (while this
process reads the log), and reuses it with its cached forward kernels for every block it analyses
(:func:`process_pool`).

Predicted versus measured motions
---------------------------------
For window *k* the RMS of roll, pitch and heave at the motion sensor is predicted from the sea-state
estimate of the latest earlier window that does not overlap it (the window ending where *k* begins),
through the loading condition's RAOs at window *k*'s mean heading and speed
(:func:`predicted_rms`: m0 = ΣΣ |H(ω, β)|² S(ω, θ) Δω Δθ, :func:`estimator.responses.response_moments`),
and compared with the RMS measured in window *k* (after the estimator's own record preparation).
This is the classic check of a wave-buoy-analogy estimate against the ship's own response
(Nielsen 2017).

Damaged or doubtful logs
------------------------
One bad row, window or file never ends a replay. A damaged file (truncated gzip member, cut line,
non-UTF-8 bytes) is replayed as far as it can be read; a row with an unreadable, duplicated or
out-of-order time is skipped; a value that is not a number or is outside its plausible range (speeds in
km/h, heave in cm, ...) is blanked in its row; a file of a folder that is not a voyage log is skipped
(:class:`onboard.formats.voyagelog.VoyageLogReader` with ``strict=False``). Each is listed with its
reason, file, row and channel in ``skipped.txt`` and on stderr (control characters escaped). A window
the estimator rejects gets its row with the reasons. A channel left out of a window (angles that look
like radians: roll and pitch both below 0.6 while heave or accelerations show a seaway, thresholds of
:class:`estimator.prep.PrepSettings`, common practice; frozen, spiky, blank, ...) is named with its
reason in the window's ``dropped_channels`` column of ``estimates.csv`` and in ``skipped.txt``.

``--strict`` stops at the first bad row, window or file instead, and ``--strict-units`` at the first
window (or log) whose angles look like radians; both end with the one-line reason and exit status 2.
An unknown loading condition or a missing file always do.

Output folder
-------------
The output folder is checked before any work starts: it must be a folder (or not exist yet) on a
writable file system, and it must be empty unless ``--overwrite`` is given, which first removes every
output a previous replay wrote there (so an old report or database never mixes with the new run).

Advisory only: the master decides; replayed advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.

References
----------
.. [1] Nielsen, U. D. (2017). A concise account of techniques available for shipboard sea state
   estimation. *Ocean Engineering* 129, 352-362 (validation of estimates through predicted ship
   responses).
"""

from __future__ import annotations

import csv
import hashlib
import math
import os
import sys
import threading
import time
from collections.abc import Callable, Iterable, Iterator, Sequence
from concurrent.futures import Executor, Future, ProcessPoolExecutor
from dataclasses import asdict, dataclass, field, replace
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pandas as pd

from advisor.advice import ADVISORY_NOTICE
from estimator.fusion import FusionSettings
from estimator.responses import response_moments
from estimator.seastate import channel_transfer
from onboard.ashore.progress import progress_bar
from onboard.core.engine import CycleResult, Engine, EngineSettings
from onboard.formats import units
from onboard.formats.text import printable, write_text_atomic
from onboard.formats.voyagelog import MOTION, ReadReport, VoyageLogError, VoyageLogReader

__all__ = [
    "ADVICE_COLUMNS",
    "ESTIMATE_COLUMNS",
    "EngineSpec",
    "ReplayError",
    "ReplayOptions",
    "ReplayResult",
    "add_commands",
    "predicted_rms",
    "process_pool",
    "replay_log",
    "write_outputs",
]

NS = 1_000_000_000

ESTIMATE_COLUMNS: tuple[str, ...] = (
    # docs/replay-outputs.md, in this order
    "window_end_utc",
    "hs_m",
    "tp_s",
    "tm01_s",
    "wave_from_deg",
    "confidence",
    # extras
    "window_start_utc",
    "status",
    "reasons",
    "spread_deg",
    "tm02_s",
    "system1_label",
    "system1_hs_m",
    "system1_tp_s",
    "system1_from_deg",
    "system2_label",
    "system2_hs_m",
    "system2_tp_s",
    "system2_from_deg",
    "samples",
    "roll_rms_deg",
    "pitch_rms_deg",
    "heave_rms_m",
    "predicted_roll_rms_deg",
    "predicted_pitch_rms_deg",
    "predicted_heave_rms_m",
    "predicted_from_utc",
    "dropped_channels",
    # 90 % intervals (SeaStateEstimate.hs_p05 ...); dir_spread_deg = half-width of the interval of the
    # mean wave direction, not the directional spread of the sea (that is spread_deg)
    "hs_p05_m",
    "hs_p95_m",
    "tp_p05_s",
    "tp_p95_s",
    "dir_spread_deg",
    # roll identified from the measured roll (estimator.pipeline.roll_period_check), when usable
    "roll_period_measured_s",
    "roll_damping_measured",
    "implied_gm_m",
    "roll_period_condition_s",
    "roll_gm_warning",
)
"""Columns of ``estimates.csv``: docs/replay-outputs.md first, extras after."""

ADVICE_COLUMNS: tuple[str, ...] = (
    # docs/replay-outputs.md, in this order
    "window_end_utc",
    "heading_deg",
    "stw_kn",
    "utilisation",
    "limiting_criterion",
    "advised_heading_deg",
    "advised_stw_kn",
    # extras
    "course_deg",
    "utilisation_nominal",
    "utilisation_advised",
    "max_safe_stw_kn",
    "status",
    "zones_now",
    "explanation",
    "reason",
    "turn",
    "turn_arc_utilisation",
    "turn_over_limit",
    "turn_reduce_speed_first",
    "speed_cap_kn",
)
"""Columns of ``advice.csv``: docs/replay-outputs.md first, extras after."""

PREDICTED_CHANNELS = ("roll", "pitch", "heave")
_MOTION_CHANNEL_UNITS = {"roll": "deg", "pitch": "deg", "heave": "m"}


class ReplayError(ValueError):
    """Bad replay input or configuration (one-line message naming file, field and value)."""


# --------------------------------------------------------------------------------------------- options


@dataclass(frozen=True)
class EngineSpec:
    """What a worker process needs to build the same :class:`~onboard.core.engine.Engine` (picklable).

    Attributes
    ----------
    vessel_path : str
        Vessel TOML file (docs/vessel.md).
    condition : str
        Loading condition name.
    limits_path : str or None
        Limit-set TOML; None for the condition's own or the default set.
    window_s, step_s : float
        Analysis window and step [s].
    """

    vessel_path: str
    condition: str
    limits_path: str | None = None
    window_s: float = 1200.0
    step_s: float = 600.0

    def build(self) -> Engine:
        """Build the engine (vessel file, RAOs and limits are read here)."""
        from onboard.formats.limitsfile import read_limit_set
        from onboard.formats.vessel import load_vessel

        vessel = load_vessel(self.vessel_path)
        vessel.condition(self.condition)  # VesselFileError for an unknown name, before anything else
        limit_set = None
        if self.limits_path is not None:
            limit_set = read_limit_set(self.limits_path, vessel_points=vessel.points_mapping().keys())
        settings = replace(EngineSettings(), window_s=float(self.window_s), step_s=float(self.step_s))
        return Engine(vessel, self.condition, limit_set=limit_set, settings=settings)

    def digest(self) -> str:
        """SHA-256 (first 16 hex digits) over the vessel, RAO and limit files and the settings."""
        h = hashlib.sha256()
        h.update(repr((self.condition, self.window_s, self.step_s)).encode())
        for p in (self.vessel_path, self.limits_path):
            if p is not None and Path(p).is_file():
                h.update(Path(p).read_bytes())
        return h.hexdigest()[:16]


@dataclass(frozen=True)
class ReplayOptions:
    """How the log is cut into windows and blocks (see the module docstring).

    Attributes
    ----------
    block_s : float
        Length of a block analysed by one warm-started chain [s]; a whole multiple of the step.
    run_in : int or None
        Windows analysed (not written) before each block to warm the chain; None: window/step
        rounded up, or the windows within the fusion horizon (``estimator.fusion.FusionSettings.max_age``,
        40 min: 4 at a 10-min step) when more.
    course_deg : float or None
        Intended course, true [deg]; None: the engine's default (the window's mean heading).
    course_from_cog : bool
        Take the intended course as the circular mean of ``cog_deg`` over each window.
    strict_units : bool
        Angles that look like radians end the replay (instead of skipping the windows).
    strict : bool
        The first bad row, window or file ends the replay (instead of being skipped and reported).
    chunk_rows : int
        Rows per chunk read from the log.
    """

    block_s: float = 12 * 3600.0
    run_in: int | None = None
    course_deg: float | None = None
    course_from_cog: bool = False
    strict_units: bool = False
    chunk_rows: int = 200_000
    strict: bool = False


def _check_grid(spec: EngineSpec, options: ReplayOptions) -> tuple[int, int, int, int]:
    """Grid in integer nanoseconds: window, step, block, run-in; raises ReplayError."""
    if not (math.isfinite(spec.window_s) and 60.0 <= spec.window_s <= 6 * 3600.0):
        raise ReplayError(f"window length {spec.window_s / 60:g} min is outside the allowed 1-360 min")
    if not (math.isfinite(spec.step_s) and 10.0 <= spec.step_s <= spec.window_s):
        raise ReplayError(
            f"step {spec.step_s / 60:g} min must be between 10 s and the window length "
            f"({spec.window_s / 60:g} min)"
        )
    window, step = round(spec.window_s * NS), round(spec.step_s * NS)
    if not math.isfinite(options.block_s) or options.block_s <= 0:
        raise ReplayError(f"block length {options.block_s!r} s must be > 0")
    block = round(options.block_s * NS)
    if block % step or block < step:
        raise ReplayError(
            f"block length {options.block_s:g} s must be a whole multiple of the step {spec.step_s:g} s"
        )
    # enough run-in for the warm start (the windows overlapping the first one) and for the sea the advice
    # is worked out in (the estimates fused over FusionSettings.max_age, estimator.fusion)
    fused_back = int(round(FusionSettings().max_age * NS)) // step
    run_in = options.run_in if options.run_in is not None else max(-(-window // step), fused_back)
    if run_in < 0:
        raise ReplayError(f"run-in {run_in} windows must be >= 0")
    return window, step, block, int(run_in)


# --------------------------------------------------------------------------------------------- worker side

_LOCAL = threading.local()  # one engine per thread: dask runs tasks in threads of one process


def _engine_for(spec: EngineSpec) -> Engine:
    """The engine for ``spec``, built once per thread and reused (it caches kernels per speed)."""
    cache = getattr(_LOCAL, "engines", None)
    if cache is None:
        cache = _LOCAL.engines = {}
    eng = cache.get(spec)
    if eng is None:
        cache.clear()
        eng = cache[spec] = spec.build()
    return eng


def _limit_threads() -> Callable[[], object]:
    """Context manager limiting BLAS/OpenMP pools to one thread when threadpoolctl is available."""
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:  # pragma: no cover - the environment variables set for workers do the job
        import contextlib

        return contextlib.nullcontext
    return lambda: threadpool_limits(limits=1)


def predicted_rms(
    engine: Engine, estimate, heading: float, speed: float, channels: Sequence[str] = PREDICTED_CHANNELS
) -> dict[str, float]:
    """RMS of motion-sensor channels predicted from a sea-state estimate through the RAOs.

    m0 = Σ_k Σ_l |H_c(ω_k, β_kl, U)|² S(ω_k, θ_l) Δω_k Δθ_l with β = π − (θ − ψ) (ITTC), H_c the
    transfer function of channel c at the motion sensor (:func:`estimator.seastate.channel_transfer`:
    stored RAOs and rigid-body transfer), RMS = sqrt(m0) (linear superposition, St. Denis and Pierson
    1953; :func:`estimator.responses.response_moments`).

    Parameters
    ----------
    engine : Engine
        Supplies the RAO table and the sensor position.
    estimate : estimator.seastate.SeaStateEstimate
        The sea state (its ``spectrum``, θ true coming-from).
    heading : float
        Ship true heading ψ [rad].
    speed : float
        Speed through water U [m/s].
    channels : sequence of str
        Sensor channels (``roll``, ``pitch``, ``heave``, ``acc_*``).

    Returns
    -------
    dict
        Channel → RMS in SI (rad, m, m/s²).

    References
    ----------
    .. [1] St. Denis, M. and Pierson, W. J. (1953). On the motions of ships in confused seas.
    """
    sp = estimate.spectrum
    omega = np.broadcast_to(sp.omega[:, None], sp.density.shape)
    beta = np.mod(np.pi - (sp.theta[None, :] - heading), 2 * np.pi)
    beta = np.broadcast_to(beta, sp.density.shape)
    transfer = channel_transfer(engine.rao_table, engine.vessel.motion_sensor.xyz, tuple(channels))
    h = transfer(omega, beta, max(float(speed), 0.0))
    omega_e = omega - omega**2 * max(float(speed), 0.0) * np.cos(beta) / 9.80665
    weights = np.outer(sp.omega_weights, sp.theta_weights)
    (m0,) = response_moments(np.ascontiguousarray(h), sp.density, sp.omega, omega_e, weights, orders=(0,))
    return {c: float(np.sqrt(max(m, 0.0))) for c, m in zip(channels, m0, strict=True)}


def _radians_suspect(frame: pd.DataFrame, prep) -> str:
    """Reason text when roll and pitch both look like radians in this window, else ''.

    The thresholds are the record preparation's (:class:`estimator.prep.PrepSettings`:
    ``radians_max_deg``, ``moving_heave_std``, ``moving_acc_std``; common practice), so replay names
    the cause where the estimator would otherwise only find the channels unusable.
    """
    angles = [c for c in ("roll_deg", "pitch_deg") if c in frame and frame[c].notna().any()]
    if not angles:
        return ""
    peaks = {c: float(np.nanmax(np.abs(frame[c].to_numpy(dtype=float)))) for c in angles}
    if any(v > prep.radians_max_deg for v in peaks.values()):
        return ""
    heave = float(np.nanstd(frame["heave_m"].to_numpy(dtype=float))) if "heave_m" in frame else 0.0
    acc = 0.0
    for c in ("acc_x_ms2", "acc_y_ms2", "acc_z_ms2"):
        if c in frame and frame[c].notna().sum() > 1:
            acc = max(acc, float(np.nanstd(frame[c].to_numpy(dtype=float))))
    if heave >= prep.moving_heave_std or acc >= prep.moving_acc_std:
        vals = ", ".join(f"max |{c}| {v:.3g}" for c, v in peaks.items())
        return (
            f"{' and '.join(angles)} look like radians ({vals} while heave sd is {heave:.2f} m); "
            "not used in this window"
        )
    return ""


_SENSOR_COLUMN = {
    "roll": "roll_deg",
    "pitch": "pitch_deg",
    "heave": "heave_m",
    "acc_x": "acc_x_ms2",
    "acc_y": "acc_y_ms2",
    "acc_z": "acc_z_ms2",
}


def _dropped_channels(log_columns, win: pd.DataFrame, result: CycleResult, radians: Sequence[str]) -> str:
    """``column (reason); ...`` for every motion channel of the log not used in this window.

    Reasons: the replay's radians check, a channel blank over the whole window, or the record
    preparation's quality flags (:class:`estimator.prep.PreparedWindow` ``flags``: frozen, spikes,
    clipped, implausible, units_suspect, ...).
    """
    out: dict[str, str] = {c: "looks like radians" for c in radians}
    prepared = result.analysis.prepared if result.analysis is not None else None
    for name, col in _SENSOR_COLUMN.items():
        if col not in log_columns or col in out:
            continue
        if col not in win or not win[col].notna().any():
            out[col] = "blank in this window"
        elif prepared is not None and name not in prepared.usable:
            flags = [f for f in prepared.flags.get(name, ()) if f not in ("gap", "nonstationary")]
            out[col] = ", ".join(flags or prepared.flags.get(name, ())) or "not usable"
    return "; ".join(f"{c} ({why})" for c, why in out.items())


def _circular_mean_deg(values: np.ndarray) -> float:
    v = values[np.isfinite(values)]
    if not v.size:
        return float("nan")
    r = np.radians(v)
    return float(np.degrees(np.arctan2(np.sin(r).mean(), np.cos(r).mean())) % 360.0)


def _r(x, nd: int) -> float:
    x = float(x)
    return round(x, nd) if math.isfinite(x) else float("nan")


@dataclass
class WindowOutput:
    """Everything one written window produced (plain data; picklable)."""

    estimate: dict
    advice: dict
    envelope: dict
    cycle: dict
    seconds: float
    cold: bool


@dataclass
class BlockTask:
    """One block of windows and the log rows it needs."""

    index: int
    first_k: int
    n_windows: int
    run_in: int
    window_ns: int
    step_ns: int
    log_first_ns: int
    log_last_ns: int
    frame: pd.DataFrame
    offset_ns: int = 0  # window starts at k·step + offset (0: the UTC clock grid)


def _empty_result(start: datetime, end: datetime, why: str) -> CycleResult:
    nan = float("nan")
    return CycleResult(start, end, False, (why,), nan, nan, nan, None, None, None, None, 0.0)


def _envelope_row(end_text: str, result: CycleResult) -> dict:
    row: dict = {"window_end_utc": end_text}
    p = result.polar
    if p is None or not np.isfinite(result.speed):
        return row
    speeds = p.speeds
    u = float(np.clip(result.speed, speeds[0], speeds[-1]))
    j = int(np.clip(np.searchsorted(speeds, u) - 1, 0, max(speeds.size - 2, 0)))
    if speeds.size > 1:
        f = (u - speeds[j]) / (speeds[j + 1] - speeds[j])
        col = (1 - f) * p.overall_conservative[:, j] + f * p.overall_conservative[:, j + 1]
    else:
        col = p.overall_conservative[:, 0]
    for h, val in zip(np.degrees(p.headings), col, strict=True):
        row[f"util_{int(round(h)) % 360:03d}_deg"] = _r(val, 3)
    return row


def _max_safe_speed_kn(result: CycleResult) -> float:
    """Highest polar speed at the heading cell nearest the actual heading with utilisation ≤ 1 [kn]."""
    p = result.polar
    if p is None or not np.isfinite(result.heading):
        return float("nan")
    d = np.abs((p.headings - result.heading + np.pi) % (2 * np.pi) - np.pi)
    i = int(np.argmin(d))
    ok = np.flatnonzero(p.overall_conservative[i] <= 1.0)
    if not ok.size:
        return float("nan")
    return _r(units.ms_to_kn(p.speeds[ok[-1]]), 2)


def _cycle_payload(
    result: CycleResult, est: dict, adv: dict, start: datetime, end: datetime, condition: str
) -> dict:
    """Keyword arguments for :meth:`onboard.core.store.Store.add_cycle` (replayed time as cycle time)."""

    def num(v):
        return None if v is None or (isinstance(v, float) and not math.isfinite(v)) else v

    if result.estimate is None:
        status, reason = "failed", "; ".join(result.reasons) or "window rejected"
    elif result.advice is None:
        status, reason = "no_advice", "; ".join(result.reasons) or "no advice"
    else:
        status, reason = "ok", None
    payload: dict = dict(
        started_utc=end,
        finished_utc=end,
        window_start_utc=start,
        window_end_utc=end,
        status=status,
        reason=reason,
        condition=condition,
    )
    if result.estimate is not None:
        systems = []
        for i in (1, 2):
            if f"system{i}_label" in est:
                systems.append(
                    {
                        "label": est[f"system{i}_label"],
                        "hs_m": num(est[f"system{i}_hs_m"]),
                        "tp_s": num(est[f"system{i}_tp_s"]),
                        "wave_from_deg": num(est[f"system{i}_from_deg"]),
                    }
                )
        payload["sea_state"] = {
            "hs_m": num(est["hs_m"]),
            "tp_s": num(est["tp_s"]),
            "tm01_s": num(est["tm01_s"]),
            "wave_from_deg": num(est["wave_from_deg"]),
            "spread_deg": num(est.get("spread_deg")),
            "confidence": num(est["confidence"]),
            "method": "wave-buoy analogy (replay)",
            "reasons": [s for s in str(est.get("reasons") or "").split("; ") if s],
            "systems": systems,
        }
    if result.advice is not None:
        payload["advice"] = {
            k: (num(adv.get(k)) if k not in ("status", "limiting_criterion", "explanation") else adv.get(k))
            for k in (
                "heading_deg",
                "stw_kn",
                "utilisation",
                "utilisation_nominal",
                "limiting_criterion",
                "advised_heading_deg",
                "advised_stw_kn",
                "utilisation_advised",
                "status",
                "explanation",
            )
        }
    return payload


def analyse_block(spec: EngineSpec, task: BlockTask, options: ReplayOptions) -> list[WindowOutput]:
    """Analyse one block: cold start ``run_in`` windows early, then every window of the block in order.

    Runs in a worker process (or in-process with one worker); deterministic for given inputs.
    """
    with _limit_threads()():
        return _analyse_block(spec, task, options)


def _analyse_block(spec: EngineSpec, task: BlockTask, options: ReplayOptions) -> list[WindowOutput]:
    engine = _engine_for(spec)
    engine.reset()
    frame = task.frame
    t_ns = (
        frame["time_utc"].to_numpy(dtype="datetime64[ns]").view("int64")
        if len(frame)
        else np.zeros(0, "int64")
    )
    tol = task.window_ns // 100
    lag = -(-task.window_ns // task.step_ns)  # windows back to the first non-overlapping one
    estimates: dict[int, tuple[object, str]] = {}
    out: list[WindowOutput] = []
    cold = True
    for k in range(task.first_k - task.run_in, task.first_k + task.n_windows):
        s_ns = k * task.step_ns + task.offset_ns
        e_ns = s_ns + task.window_ns
        if s_ns < task.log_first_ns - tol or e_ns > task.log_last_ns + tol:
            engine.reset()
            cold = True
            continue
        i0, i1 = np.searchsorted(t_ns, [s_ns, e_ns])
        if i1 - i0 < 2 or t_ns[i1 - 1] - t_ns[i0] < task.window_ns // 2:
            # (mostly) inside a gap: not an analysis window; the chain starts again after the gap
            engine.reset()
            cold = True
            continue
        win = frame.iloc[i0:i1]
        start = datetime.fromtimestamp(s_ns / NS, tz=UTC)
        end = datetime.fromtimestamp(e_ns / NS, tz=UTC)
        course = options.course_deg
        if options.course_from_cog and "cog_deg" in win:
            c = _circular_mean_deg(win["cog_deg"].to_numpy(dtype=float))
            course = c if math.isfinite(c) else None
        suspect = _radians_suspect(win, engine.settings.prep)
        if suspect and options.strict_units and k >= task.first_k:
            raise ReplayError(f"window ending {units.format_utc(end)}: {suspect.split(';')[0]} (--strict-units)")
        suspect_cols = [c for c in ("roll_deg", "pitch_deg") if c in win] if suspect else []
        if suspect:
            win = win.drop(columns=suspect_cols)
        if sum(c in win for c in MOTION) < 2:
            result = _empty_result(start, end, suspect or "fewer than two motion channels")
        else:
            result = engine.analyse(win, course_deg=course)
        was_cold = cold
        cold = result.estimate is None
        end_text = units.format_utc(end)
        if result.estimate is not None:
            estimates[k] = (result.estimate, end_text)
        if k < task.first_k:
            continue
        if options.strict and result.estimate is None:
            raise ReplayError(
                f"window ending {end_text}: no estimate ({'; '.join(result.reasons) or 'no reason given'}) "
                "(--strict)"
            )
        est = result.estimate_row()
        est["dropped_channels"] = _dropped_channels(task.frame.columns, win, result, suspect_cols)
        if options.strict_units and "units_suspect" in est["dropped_channels"]:
            raise ReplayError(
                f"window ending {end_text}: channel units look wrong: {est['dropped_channels']} (--strict-units)"
            )
        adv = result.advice_row()
        est["window_end_utc"] = adv["window_end_utc"] = end_text
        est["window_start_utc"] = units.format_utc(start)
        if suspect and suspect not in est.get("reasons", ""):
            est["reasons"] = "; ".join(x for x in (suspect, est.get("reasons", "")) if x)
        est["samples"] = int(i1 - i0)
        rms = result.analysis.channel_rms if result.analysis is not None else {}
        for ch in PREDICTED_CHANNELS:
            v = rms.get(ch, float("nan"))
            est[f"{ch}_rms_{_MOTION_CHANNEL_UNITS[ch]}"] = (
                _r(np.degrees(v), 3) if _MOTION_CHANNEL_UNITS[ch] == "deg" else _r(v, 3)
            )
        prev = estimates.get(k - lag)
        if prev is not None and np.isfinite(result.heading) and np.isfinite(result.speed):
            pred = predicted_rms(engine, prev[0], result.heading, result.speed)
            est["predicted_roll_rms_deg"] = _r(np.degrees(pred["roll"]), 3)
            est["predicted_pitch_rms_deg"] = _r(np.degrees(pred["pitch"]), 3)
            est["predicted_heave_rms_m"] = _r(pred["heave"], 3)
            est["predicted_from_utc"] = prev[1]
        adv["course_deg"] = (
            _r(units.rad_to_deg(result.course) % 360.0, 1) if np.isfinite(result.course) else float("nan")
        )
        adv["max_safe_stw_kn"] = _max_safe_speed_kn(result)
        env = _envelope_row(end_text, result)
        env["stw_kn"] = adv["stw_kn"]
        env["heading_deg"] = adv["heading_deg"]
        out.append(
            WindowOutput(
                est,
                adv,
                env,
                _cycle_payload(result, est, adv, start, end, spec.condition),
                float(result.seconds),
                was_cold,
            )
        )
    return out


# --------------------------------------------------------------------------------------------- driver side


@dataclass
class ReplayResult:
    """Outputs of a replay before they are written (see :func:`write_outputs`).

    Attributes
    ----------
    log : str
        The log replayed.
    windows : list of WindowOutput
        In time order.
    read_report : ReadReport
        What the voyage-log reader skipped.
    gaps : list of (str, str)
        Stretches of the log without samples longer than a step (ISO start, ISO end).
    first_utc, last_utc : str
        First and last sample time.
    rows_read : int
    elapsed_s : float
        Wall time of the replay [s].
    skipped_limits : tuple of str
        Criteria of the default limit set that the vessel file cannot support (listed in ``skipped.txt``).
    alignment : str
        How the windows were placed: on the UTC clock grid, or (a log too short for any clock-aligned
        complete window) one window from the log's first sample.
    """

    log: str
    windows: list[WindowOutput] = field(default_factory=list)
    read_report: ReadReport = field(default_factory=ReadReport)
    gaps: list[tuple[str, str]] = field(default_factory=list)
    first_utc: str = ""
    last_utc: str = ""
    skipped_limits: tuple[str, ...] = ()
    rows_read: int = 0
    elapsed_s: float = 0.0
    alignment: str = "UTC clock grid"

    @property
    def span_s(self) -> float:
        if not self.first_utc:
            return 0.0
        return (units.parse_utc(self.last_utc) - units.parse_utc(self.first_utc)).total_seconds()

    def first_problem(self) -> str:
        """``; first problem: ...`` naming the first thing the reader skipped, or ''."""
        problems = self.read_report.problems
        return f"; first problem: {problems[0]}" if problems else ""

    def skipped_lines(self) -> list[str]:
        """Plain lines: damaged file parts, gaps, rejected windows (the contents of ``skipped.txt``)."""
        lines = [
            f"log {self.log}: {self.rows_read} rows read "
            f"from {self.first_utc or '-'} to {self.last_utc or '-'}"
        ]
        rep = self.read_report
        if rep.skipped_rows or rep.problems:
            lines.append(
                f"bad or damaged input: {rep.skipped_rows} row(s) skipped, {rep.blanked_values} value(s) "
                f"blanked, {rep.skipped_files} file(s) skipped"
            )
            lines += [f"  {p}" for p in rep.problems]
        for a, b in self.gaps:
            lines.append(f"gap without samples from {a} to {b}: windows in it not analysed")
        bad = [w for w in self.windows if w.estimate.get("status") != "ok"]
        if bad:
            lines.append(f"{len(bad)} of {len(self.windows)} window(s) gave no estimate:")
            lines += [f"  {w.estimate['window_end_utc']}: {w.estimate.get('reasons', '')}" for w in bad]
        noadv = [
            w
            for w in self.windows
            if w.estimate.get("status") == "ok" and w.advice.get("status") == "unavailable"
        ]
        if noadv:
            lines.append(f"{len(noadv)} window(s) with an estimate but no advice")
        lines += [f"limit not applied (default set built for this vessel): {s}" for s in self.skipped_limits]
        dropped = [w for w in self.windows if w.estimate.get("dropped_channels")]
        if dropped:
            lines.append(f"{len(dropped)} window(s) with channels left out:")
            lines += [f"  {w.estimate['window_end_utc']}: {w.estimate['dropped_channels']}" for w in dropped]
        return lines


class _Progress:
    """The replay's progress on stderr (:func:`onboard.ashore.progress.progress_bar`): hours of log
    replayed (against the log's length when cheaply known), windows done and the replay rate."""

    def __init__(self, label: str, enabled: bool, total_s: float | None):
        self.enabled = enabled
        self.t0 = time.monotonic()
        self.bar = (
            progress_bar(label, total=total_s / 3600 if total_s else None, unit="h of log", enabled=True)
            if enabled
            else None
        )

    def update(self, done_s: float, windows: int, final: bool = False) -> None:
        if self.bar is None:
            return
        rate = done_s / max(time.monotonic() - self.t0, 1e-9)
        hours = done_s / 3600
        if self.bar.total:  # the log's length is a hint (first to last row); windows may reach past it
            hours = min(hours, float(self.bar.total))
        self.bar.n = hours
        self.bar.set_postfix_str(f"{windows} windows, {rate:.0f}x real time", refresh=False)
        if final:
            self.bar.close()  # draws the last state once and ends the line
        else:
            self.bar.refresh()


def _log_span_hint(path: Path) -> float | None:
    """Log duration [s] when cheaply known (Parquet statistics, plain CSV first/last line)."""
    try:
        files = sorted(p for p in path.iterdir() if p.is_file()) if path.is_dir() else [path]
        first = last = None
        for p in (files[0], files[-1]):
            name = p.name.lower()
            if name.endswith(".parquet"):
                import pyarrow.parquet as pq

                md = pq.ParquetFile(p).metadata
                col = md.schema.to_arrow_schema().get_field_index("time_utc")
                for g in range(md.num_row_groups):
                    st = md.row_group(g).column(col).statistics
                    if st is None or not st.has_min_max:
                        return None
                    lo, hi = pd.Timestamp(st.min), pd.Timestamp(st.max)
                    first = lo if first is None else min(first, lo)
                    last = hi if last is None else max(last, hi)
            elif name.endswith(".csv"):
                with open(p, "rb") as f:
                    f.readline()
                    head = f.readline().split(b",", 1)[0].decode()
                    f.seek(max(0, p.stat().st_size - 4096))
                    tail = f.read().rstrip(b"\n").rsplit(b"\n", 1)[-1].split(b",", 1)[0].decode()
                lo, hi = pd.Timestamp(head), pd.Timestamp(tail)
                first = lo if first is None else min(first, lo)
                last = hi if last is None else max(last, hi)
            else:
                return None
        return (last - first).total_seconds() if first is not None else None
    except Exception:  # a hint only: the real reader reports any problem
        return None


_KEEP = (
    "time_utc",
    "roll_deg",
    "pitch_deg",
    "heave_m",
    "acc_x_ms2",
    "acc_y_ms2",
    "acc_z_ms2",
    "heading_deg",
    "stw_kn",
    "cog_deg",
)


def _iter_blocks(
    reader: VoyageLogReader,
    window: int,
    step: int,
    block: int,
    run_in: int,
    result: ReplayResult,
    progress: _Progress | None,
) -> Iterator[BlockTask]:
    """Stream the log and cut it into block tasks (rows overlapping as the windows need)."""
    buf: list[pd.DataFrame] = []
    first_ns: int | None = None
    last_ns: int | None = None
    next_b: int | None = None
    lead = run_in * step  # rows before a block's first window start
    per_block = block // step

    def cut(b: int, until_ns: int, final: bool) -> BlockTask:
        nonlocal buf
        frame = pd.concat(buf, ignore_index=True) if len(buf) > 1 else (buf[0] if buf else pd.DataFrame())
        lo = b * block - lead
        hi = (b + 1) * block - step + window
        if len(frame):
            t = frame["time_utc"].to_numpy(dtype="datetime64[ns]").view("int64")
            i0, i1 = np.searchsorted(t, [lo, hi])
            part = frame.iloc[i0:i1].reset_index(drop=True)
            keep_from = np.searchsorted(t, (b + 1) * block - lead)
            rest = frame.iloc[keep_from:].reset_index(drop=True)
            buf = [rest] if len(rest) else []
        else:
            part = frame
        return BlockTask(
            b, b * per_block, per_block, run_in, window, step, int(first_ns), int(until_ns), part
        )

    prev_t: int | None = None
    for chunk in reader:
        cols = [c for c in _KEEP if c in chunk.columns]
        chunk = chunk[cols]
        t = chunk["time_utc"].to_numpy(dtype="datetime64[ns]").view("int64")
        if first_ns is None:
            first_ns = int(t[0])
            next_b = first_ns // block  # the first block that can hold a window starting at or after it
        # gaps longer than one step (reported; the windows in them are not analysed)
        tt = np.concatenate(([prev_t], t)) if prev_t is not None else t
        d = np.diff(tt)
        for i in np.flatnonzero(d > step):
            result.gaps.append(
                (
                    units.format_utc(datetime.fromtimestamp(tt[i] / NS, tz=UTC)),
                    units.format_utc(datetime.fromtimestamp(tt[i + 1] / NS, tz=UTC)),
                )
            )
        prev_t = int(t[-1])
        last_ns = int(t[-1])
        result.rows_read += len(chunk)
        buf.append(chunk)
        assert next_b is not None
        # blocks complete once the log has passed their last window's end
        while (next_b + 1) * block - step + window <= last_ns:
            if not buf or int(buf[0]["time_utc"].iloc[0].value) >= (next_b + 1) * block - step + window:
                next_b += 1  # a long gap: no row for this block at all
                continue
            yield cut(next_b, last_ns, False)
            next_b += 1
    if first_ns is None:
        return
    result.first_utc = units.format_utc(datetime.fromtimestamp(first_ns / NS, tz=UTC))
    result.last_utc = units.format_utc(datetime.fromtimestamp(last_ns / NS, tz=UTC))
    assert next_b is not None and last_ns is not None
    while next_b * block <= last_ns:
        if buf:
            yield cut(next_b, last_ns, True)
        next_b += 1


_THREAD_VARS = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


_MIB = 1 << 20


def keep_freed_memory() -> bool:
    """Let the C allocator (glibc) keep freed memory for reuse instead of returning it at every free.

    The estimator allocates and frees arrays of a few MB many times per window (Gram and Hessian
    matrices of 672 × 672); by default glibc serves them by ``mmap`` and unmaps them on free, so every
    new array costs page faults (measured: about 15 % of a replay worker's processor time). With a
    32 MiB mmap threshold, a 256 MiB trim threshold and a 64 MiB top pad (``mallopt``, glibc manual
    "Malloc Tunable Parameters") they come from the process heap. Nothing numerical changes. Returns
    False where the C library is not glibc (nothing done). Meant for worker processes (it changes the
    allocator of the whole process).
    """
    try:
        import ctypes

        libc = ctypes.CDLL("libc.so.6")
        ok = libc.mallopt(-3, 32 * _MIB)  # M_MMAP_THRESHOLD (also stops its dynamic adjustment)
        ok &= libc.mallopt(-1, 256 * _MIB)  # M_TRIM_THRESHOLD
        ok &= libc.mallopt(-2, 64 * _MIB)  # M_TOP_PAD
        return bool(ok)
    except (OSError, AttributeError):
        return False


def _warm_worker(spec: EngineSpec | None) -> None:
    """Pool initializer: tune the allocator (:func:`keep_freed_memory`), then import the estimator and
    build the engine while the driver reads the log.

    A failure here is ignored: the first block builds the engine again and reports the error.
    """
    keep_freed_memory()
    if spec is None:
        return
    try:
        _engine_for(spec)
    except Exception:  # noqa: BLE001 - reported by the block that needs the engine
        pass


def process_pool(workers: int, spec: EngineSpec | None = None) -> ProcessPoolExecutor:
    """A pool of ``workers`` fresh ("spawn") processes whose numerical libraries use one thread each.

    Fresh processes do not inherit threads or open database connections of this one; one BLAS
    thread per process uses the cores through the processes and keeps sums independent of threading.
    With ``spec`` every worker builds its engine as soon as it starts (:func:`_warm_worker`), so worker
    start-up overlaps the reading of the log instead of delaying the first blocks; the call then
    returns without waiting for the workers.
    """
    import multiprocessing as mp

    saved = {v: os.environ.get(v) for v in _THREAD_VARS}
    for v in _THREAD_VARS:  # inherited by the spawned workers before they import numpy
        os.environ[v] = "1"
    try:
        pool = ProcessPoolExecutor(
            max_workers=workers, mp_context=mp.get_context("spawn"), initializer=_warm_worker, initargs=(spec,)
        )
        # start the processes now, while the variables are set (submit starts them)
        started = [pool.submit(os.getpid) for _ in range(workers)]
        if spec is None:
            for f in started:
                f.result()
    finally:
        for v, val in saved.items():
            if val is None:
                os.environ.pop(v, None)
            else:
                os.environ[v] = val
    return pool


def replay_log(
    log: str | os.PathLike,
    spec: EngineSpec,
    options: ReplayOptions | None = None,
    *,
    workers: int = 1,
    progress: bool = False,
    executor: Executor | None = None,
) -> ReplayResult:
    """Replay one voyage log (module docstring); returns the rows, not yet written.

    Parameters
    ----------
    log : path
        ``.csv``, ``.csv.gz``, ``.parquet`` or a directory of them (docs/voyage-log.md).
    spec : EngineSpec
        Vessel, condition, limits, window and step.
    options : ReplayOptions, optional
    workers : int
        Processes analysing blocks (1 = in this process). The result does not depend on it.
    progress : bool
        Show a progress bar on stderr.
    executor : concurrent.futures.Executor, optional
        Use this executor instead of starting processes.

    Raises
    ------
    ReplayError
        Bad options, unknown condition, unreadable vessel or limit file.
    onboard.formats.voyagelog.VoyageLogError
        Missing file or columns, unsorted or duplicated times, implausible values.
    """
    options = options or ReplayOptions()
    window, step, block, run_in = _check_grid(spec, options)
    if workers < 1:
        raise ReplayError(f"--workers must be >= 1, got {workers}")
    t_start = time.monotonic()
    reader = VoyageLogReader(
        log, chunk_rows=options.chunk_rows, check_units=options.strict_units, strict=options.strict
    )
    try:
        engine = _engine_for(spec)  # validates vessel, condition and limits before reading the log
    except (OSError, ValueError) as exc:
        raise ReplayError(str(exc)) from None
    result = ReplayResult(log=str(log), skipped_limits=engine.skipped_limits)
    del engine
    bar = _Progress(f"replay {Path(log).name}", progress, _log_span_hint(Path(log)) if progress else None)
    blocks = _iter_blocks(reader, window, step, block, run_in, result, bar)
    own = None
    if executor is None and workers > 1:
        # the workers import and build their engines while this process reads the log
        own = executor = process_pool(workers, spec)
    try:
        if executor is None:
            for task in blocks:
                result.windows += analyse_block(spec, task, options)
                _tick(bar, result, task)
        else:
            pending: list[tuple[BlockTask, Future]] = []
            limit = 2 * max(workers, 1)
            for task in blocks:
                pending.append((task, executor.submit(analyse_block, spec, task, options)))
                while len(pending) >= limit:
                    t, fut = pending.pop(0)
                    result.windows += fut.result()
                    _tick(bar, result, t)
            for t, fut in pending:
                result.windows += fut.result()
                _tick(bar, result, t)
    finally:
        if own is not None:
            own.shutdown(wait=True, cancel_futures=True)
    if not result.windows and result.span_s * NS >= window:
        _window_from_log_start(log, spec, options, window, step, result)
    result.read_report = reader.report
    result.elapsed_s = time.monotonic() - t_start
    bar.update(result.span_s, len(result.windows), final=True)
    return result


def _window_from_log_start(log, spec: EngineSpec, options: ReplayOptions, window: int, step: int,
                           result: ReplayResult) -> None:
    """A log that holds a complete window but no clock-aligned one (e.g. 22 min from 00:36:52 with 20-min
    windows every 10 min): analyse one window starting at the log's first sample (issue 12)."""
    first_ns = units.parse_utc(result.first_utc).timestamp()
    first_ns, last_ns = round(first_ns * NS), round(units.parse_utc(result.last_utc).timestamp() * NS)
    parts = []
    for chunk in VoyageLogReader(log, chunk_rows=options.chunk_rows, check_units=options.strict_units):
        t = chunk["time_utc"].to_numpy(dtype="datetime64[ns]").view("int64")
        keep = chunk[[c for c in _KEEP if c in chunk.columns]]
        parts.append(keep.iloc[: np.searchsorted(t, first_ns + window, "right")])
        if t[-1] > first_ns + window:
            break
    frame = pd.concat(parts, ignore_index=True)
    task = BlockTask(0, 0, 1, 0, window, step, first_ns, last_ns, frame, offset_ns=first_ns)
    result.windows += analyse_block(spec, task, options)
    result.alignment = f"log start {result.first_utc} (no complete window on the UTC clock grid)"


def _tick(bar: _Progress, result: ReplayResult, task: BlockTask) -> None:
    if not result.windows:
        return
    end = units.parse_utc(result.windows[-1].estimate["window_end_utc"]).timestamp()
    first = task.log_first_ns / NS
    bar.update(end - first, len(result.windows))


# --------------------------------------------------------------------------------------------- writing


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, bool | np.bool_):
        return "true" if v else "false"
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, float | np.floating):
        x = float(v)
        return "" if not math.isfinite(x) else repr(x)
    return str(v)


def _write_csv(path: Path, columns: Sequence[str], rows: Iterable[dict]) -> None:
    """Write through ``NAME.partial`` and rename, so a full disk never leaves a cut or empty file."""
    tmp = path.with_name(path.name + ".partial")
    try:
        with open(tmp, "w", newline="", encoding="utf-8") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(columns)
            for row in rows:
                w.writerow([_cell(row.get(c)) for c in columns])
        os.replace(tmp, path)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def envelope_columns(result: ReplayResult) -> list[str]:
    """Columns of ``envelope.csv`` (heading columns in the order of the polar grid)."""
    heads: list[str] = []
    for w in result.windows:
        heads = [k for k in w.envelope if k.startswith("util_")]
        if heads:
            break
    return ["window_end_utc", "heading_deg", "stw_kn", *heads]


def write_outputs(
    result: ReplayResult,
    out_dir: str | os.PathLike,
    *,
    store=None,
    spec: EngineSpec | None = None,
    report: bool = False,
) -> dict[str, Path]:
    """Write the CSV files and ``skipped.txt`` (and the database rows, and the report).

    Parameters
    ----------
    result : ReplayResult
    out_dir : path
        Created if missing.
    store : onboard.core.store.Store, optional
        Database to add one cycle (with estimate and advice) per window to, plus one ``replay`` event.
    spec : EngineSpec, optional
        For the event and the configuration digest.
    report : bool
        Also write ``report.html`` (:func:`onboard.ashore.report.write_report`).

    Returns
    -------
    dict
        Name → path of what was written.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    paths: dict[str, Path] = {
        "estimates": out / "estimates.csv",
        "advice": out / "advice.csv",
        "envelope": out / "envelope.csv",
        "skipped": out / "skipped.txt",
    }
    _write_csv(paths["estimates"], ESTIMATE_COLUMNS, (w.estimate for w in result.windows))
    _write_csv(paths["advice"], ADVICE_COLUMNS, (w.advice for w in result.windows))
    _write_csv(paths["envelope"], envelope_columns(result), (w.envelope for w in result.windows))
    write_text_atomic(paths["skipped"], "\n".join(result.skipped_lines()) + "\n")
    if store is not None:
        _store_result(store, result, spec)
    if report:
        from onboard.ashore.report import write_report

        paths["report"] = write_report(
            out, title=f"Voyage replay: {Path(result.log).name}", notes=result.skipped_lines()
        )
    return paths


def _store_result(store, result: ReplayResult, spec: EngineSpec | None) -> None:
    digest = spec.digest() if spec is not None else None
    ids = []
    for w in result.windows:
        c = dict(w.cycle)
        ids.append(
            store.add_cycle(
                **c, timings_s={"analysis": w.seconds}, code_version="replay", config_digest=digest
            )
        )
    when = units.parse_utc(result.last_utc) if result.last_utc else datetime.now(UTC)
    store.add_event(
        "replay",
        f"replayed {Path(result.log).name}: {len(result.windows)} windows",
        time_utc=when,
        data={
            "log": str(result.log),
            "first_utc": result.first_utc,
            "last_utc": result.last_utc,
            "cycle_ids": [min(ids), max(ids)] if ids else [],
            "spec": asdict(spec) if spec is not None else None,
            "skipped": result.skipped_lines()[:200],
        },
    )


# --------------------------------------------------------------------------------------------- command line


def _spec_from_args(args) -> EngineSpec:
    return EngineSpec(
        vessel_path=str(args.vessel),
        condition=args.condition,
        limits_path=str(args.limits) if args.limits else None,
        window_s=float(args.window_min) * 60.0,
        step_s=float(args.step_min) * 60.0,
    )


def _options_from_args(args) -> ReplayOptions:
    course_deg, from_cog = None, False
    if args.course_deg is not None:
        if str(args.course_deg).strip().lower() == "cog":
            from_cog = True
        else:
            try:
                course_deg = float(args.course_deg)
            except ValueError:
                raise ReplayError(
                    f"--course-deg {args.course_deg!r}: expected degrees true in [0, 360) or 'cog'"
                ) from None
            if not 0.0 <= course_deg < 360.0:
                raise ReplayError(f"--course-deg {course_deg:g}: expected degrees true in [0, 360) or 'cog'")
    return ReplayOptions(
        block_s=float(args.block_hours) * 3600.0,
        course_deg=course_deg,
        course_from_cog=from_cog,
        strict_units=bool(args.strict_units),
        strict=bool(getattr(args, "strict", False)),
    )


def _add_common(p) -> None:
    p.add_argument("--vessel", required=True, help="vessel TOML file (docs/vessel.md)")
    p.add_argument("--condition", required=True, help="loading condition name in the vessel file")
    p.add_argument("--out", required=True, help="output directory (created if missing)")
    p.add_argument("--limits", help="limit-set TOML file (default: the condition's own or the default set)")
    p.add_argument(
        "--window-min", type=float, default=EngineSettings.window_s / 60, help="analysis window [min]"
    )
    p.add_argument(
        "--step-min", type=float, default=EngineSettings.step_s / 60, help="time between windows [min]"
    )
    p.add_argument(
        "--course-deg",
        help="intended course, degrees true, or 'cog' for the mean course over "
        "ground of each window (default: the ship's mean heading)",
    )
    p.add_argument(
        "--block-hours",
        type=float,
        default=12.0,
        help="length of the independently warm-started blocks [h] (results depend on it, not on --workers)",
    )
    p.add_argument(
        "--strict-units",
        action="store_true",
        help="stop when roll/pitch look like radians instead of skipping those windows",
    )
    p.add_argument(
        "--strict",
        action="store_true",
        help="stop at the first bad row, window or file (default: skip it and report it in skipped.txt)",
    )
    p.add_argument(
        "--overwrite",
        action="store_true",
        help="replace the outputs of an earlier run in a non-empty --out folder (default: refuse)",
    )
    p.add_argument("--no-progress", action="store_true", help="no progress bar on stderr")
    p.add_argument("--report", action="store_true", help="also write report.html")


def _default_db(out: Path, name: str) -> str:
    return f"sqlite:///{(out / name).resolve()}"


def _open_store(url: str):
    from sqlalchemy import exc as sa_exc

    from onboard.core.store import Store, StoreError
    from onboard.errors import safe_url

    new_file = None
    if url.startswith("sqlite:///"):
        p = Path(url.removeprefix("sqlite:///"))
        new_file = None if p.exists() else p
    try:
        return Store(url)
    except (StoreError, OSError, sa_exc.SQLAlchemyError) as exc:
        if new_file is not None and new_file.is_file() and new_file.stat().st_size == 0:
            new_file.unlink()  # a database file this call created but could not write (disk full)
        if isinstance(exc, sa_exc.SQLAlchemyError):  # cannot connect, bad URL, missing driver, disk full
            raise ReplayError(
                f"--db {safe_url(url)}: cannot open the database "
                f"({type(exc).__name__}: {safe_url(str(exc).splitlines()[0])})"
            ) from None
        raise ReplayError(f"--db {safe_url(url)}: {exc}") from None


OUTPUTS = (
    "estimates.csv",
    "advice.csv",
    "envelope.csv",
    "skipped.txt",
    "report.html",
    "replay.db",
    "replay.db-wal",
    "replay.db-shm",
    "replay.db-journal",
    "*.partial",
)
"""What a replay writes into its output folder (removed first by ``--overwrite``)."""


def cmd_replay(args) -> int:
    from onboard.errors import CommandError, check_output_dir

    try:
        spec = _spec_from_args(args)
        options = _options_from_args(args)
        log = Path(args.log)
        if not log.exists():
            raise ReplayError(f"{log}: no such file or directory")
        out = check_output_dir(args.out, overwrite=bool(getattr(args, "overwrite", False)), outputs=OUTPUTS)
        store = _open_store(args.db or _default_db(out, "replay.db"))  # before the work, like the folder
        try:
            result = replay_log(log, spec, options, workers=args.workers, progress=not args.no_progress)
            if not result.windows:
                raise ReplayError(
                    f"{log}: no complete {spec.window_s / 60:g}-min window in the log "
                    f"({result.rows_read} rows from {result.first_utc or '-'} to {result.last_utc or '-'})"
                    + result.first_problem()
                )
            paths = write_outputs(result, out, store=store, spec=spec, report=args.report)
        finally:
            store.close()
    except (ReplayError, VoyageLogError) as exc:
        raise CommandError(printable(str(exc).replace("\n", " "), 1000)) from None
    ok = sum(1 for w in result.windows if w.estimate.get("status") == "ok")
    print(
        f"{len(result.windows)} windows ({ok} with an estimate) from {result.first_utc} to {result.last_utc} "
        f"in {result.elapsed_s:.1f} s ({result.span_s / max(result.elapsed_s, 1e-9):.0f}x real time), "
        f"windows aligned to the {result.alignment}; "
        f"wrote {', '.join(str(p) for p in paths.values())}"
    )
    skipped = result.skipped_lines()[1:]
    if skipped:
        print(f"skipped or rejected (see {paths['skipped']}):", file=sys.stderr)
        for line in skipped[:20]:
            print(f"  {printable(line)}", file=sys.stderr)
        if len(skipped) > 20:
            print(f"  ... {len(skipped) - 20} more lines", file=sys.stderr)
    print(ADVISORY_NOTICE)
    return 0


def add_commands(subparsers) -> None:
    """Add ``replay`` (one voyage log) and ``fleet`` (many logs) to the ``hwadvice`` command line."""
    p = subparsers.add_parser(
        "replay",
        help="replay a voyage log ashore: sea state and advice per window, CSV files and a report",
        description="Replay a voyage log through the on-board estimator and advisor. Advisory only: the "
        "master decides.",
    )
    p.add_argument("log", help="voyage log: .csv, .csv.gz, .parquet or a directory of them")
    _add_common(p)
    p.add_argument("--db", help="database URL (default: a SQLite file replay.db in the output directory)")
    p.add_argument("--workers", type=int, default=2, help="worker processes (results do not depend on it)")
    p.set_defaults(func=cmd_replay)


# helpers shared with onboard.ashore.fleet
add_common_options = _add_common
spec_from_args = _spec_from_args
options_from_args = _options_from_args
open_store = _open_store
default_db = _default_db
