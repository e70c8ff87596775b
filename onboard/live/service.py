"""The running onboard service and the embedded demo: sub-commands ``hwadvice run`` and ``hwadvice demo``.

Composition root
----------------
:func:`build_service` is the one place that builds the service from :class:`~onboard.live.settings.ServiceSettings`
(nothing connects at import time, nothing connects before :meth:`Service.start`):

* MQTT :class:`~onboard.live.listener.Listener` (network thread validates and enqueues; writer thread orders
  rows into the :class:`~onboard.live.buffer.SampleBuffer` and the rolling
  :class:`~onboard.formats.voyagelog.VoyageLogWriter`);
* the analysis-cycle thread (off the network thread): every ``cycle_s`` of the service clock, on the
  latest ``window_s`` of samples, sensor health → :meth:`onboard.core.engine.Engine.analyse` → store (cycle
  ``ok`` / ``failed`` / ``no_advice`` with its reason) → the latest sea state and advice published
  retained on MQTT → alerts → page state. An exception in a cycle is stored as a ``failed`` cycle with
  its reason and never ends the thread;
* the sensor-health thread: every ``health.interval_s``, per-channel health from the buffer (silent,
  frozen, implausible, missing; :mod:`onboard.live.health`), sensor alerts, a health snapshot in the store at
  least every ``health.store_every_s`` and on every change, published retained;
* the bridge page: :func:`onboard.live.web.create_app` with a :class:`~onboard.live.stateview.StoreStateProvider`
  served by waitress in the same process.

The active loading condition lives in the store (:meth:`onboard.core.store.Store.set_condition`); the cycle
reads it each time and rebuilds the :class:`~onboard.core.engine.Engine` when it changed.

MQTT topics (``{vessel}`` = ``vessel.id``; layout in :mod:`onboard.live.listener`)
-------------------------------------------------------------------------------
=============================  =================================================================  ============
topic                          payload                                                            QoS / retain
=============================  =================================================================  ============
``hw/{vessel}/samples/{src}``  sample batches ``hw-samples/1`` (read)                             1 / no
``hw/{vessel}/signalk``        Signal K delta messages (read)                                     1 / no
``hw/{vessel}/status``         ``online`` / ``offline`` (last will)                               1 / yes
``hw/{vessel}/seastate``       ``hw-seastate/1``: latest estimate or ``status: unavailable``      1 / yes
``hw/{vessel}/advice``         ``hw-advice/1``: latest advice or ``status: unavailable``          1 / yes
``hw/{vessel}/health``         ``hw-health/1``: sensor health per channel                         1 / yes
=============================  =================================================================  ============

Every published advice carries ``valid_until_utc`` (window end + 2 cycles) and the advisory notice; when
a cycle gives no advice, ``status`` is ``unavailable`` with the ``reason``, so no other bridge system keeps
showing an old advice as current.

Demo
----
``hwadvice demo`` runs the same path without a broker or a database server: the bundled invented voyage
(``replay_data/demo_voyage.csv.gz``) is fed as sample batches through :meth:`Listener.feed` (parse →
enqueue → writer → buffer and voyage log → cycles) on a replay clock running ``--speedup`` times faster
than real time, results go to a local SQLite file, and the page is served on http://127.0.0.1:8650/. The
first analysis window is fed at once and analysed before the replay clock starts, so advice shows within
seconds and is fresh when it arrives however busy the computer is. ``--once`` runs through the voyage
headless, cycle by cycle, and exits 0.

Advisory only. The master decides. The advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

import argparse
import contextlib
import hashlib
import json
import logging
import math
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, replace
from datetime import UTC, datetime, timedelta
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from onboard.live.alerts import AlertManager
from onboard.live.buffer import SampleBuffer
from onboard.live.health import HealthReport, assess, blank_unhealthy
from onboard.live.settings import ROOT, ServiceSettings, SettingsError, load_settings
from onboard.live.stateview import StoreStateProvider, advice_record, polar_json, sea_state_record
from onboard.live.web.provider import ADVISORY_NOTICE, format_utc

log = logging.getLogger(__name__)

DEMO_VOYAGE = ROOT / "replay_data" / "demo_voyage.csv.gz"
DEMO_CONDITION = "deep laden, low GM"
MIN_WINDOW_COVERAGE = 0.9
"""Fraction of the analysis window the samples must span before a cycle is attempted (project choice)."""


def _iso(t: datetime) -> str:
    return format_utc(t.replace(microsecond=(t.microsecond // 1000) * 1000))


# ----------------------------------------------------------------------------------------------- clocks


class ReplayClock:
    """A clock for replayed data: ``start`` plus ``rate`` × the real time elapsed since it was started.

    Before :meth:`start` (and with ``rate = 0``) it stands at ``start``; :meth:`set` moves it by hand
    (headless runs).
    """

    def __init__(self, start: datetime, rate: float = 1.0):
        if start.tzinfo is None:
            raise ValueError(f"start {start!r} must be timezone-aware (UTC)")
        if not (math.isfinite(rate) and rate >= 0):
            raise ValueError(f"rate must be >= 0, got {rate!r}")
        self._t0 = start
        self.rate = float(rate)
        self._wall0: float | None = None
        self._lock = threading.Lock()

    def start(self) -> None:
        with self._lock:
            self._wall0 = time.monotonic()

    def set(self, when: datetime) -> None:
        with self._lock:
            self._t0 = when
            self._wall0 = time.monotonic() if self._wall0 is not None else None

    def __call__(self) -> datetime:
        with self._lock:
            if self._wall0 is None or self.rate == 0:
                return self._t0
            return self._t0 + timedelta(seconds=(time.monotonic() - self._wall0) * self.rate)


def system_clock() -> datetime:
    return datetime.now(UTC)


# ----------------------------------------------------------------------------------------------- service


@dataclass(frozen=True)
class CycleOutcome:
    """What one analysis cycle did (the stored row's id, status and reason, and the in-memory result)."""

    cycle_id: int | None
    status: str
    reason: str | None
    result: Any = None
    window_start: datetime | None = None
    window_end: datetime | None = None


def _finite_or_none(x: Any) -> Any:
    if isinstance(x, float | np.floating):
        return float(x) if math.isfinite(float(x)) else None
    return x


def _code_version() -> str:
    try:
        from importlib.metadata import version

        return version("heavyweather-advice")
    except Exception:  # pragma: no cover - not installed
        return "unknown"


class Service:
    """The running service (built by :func:`build_service`; see the module docstring).

    Also the page's live view (:class:`onboard.live.stateview.LiveView`): own ship from the buffer, sensor
    health of the last check, the polar of the last cycle.
    """

    def __init__(
        self,
        settings: ServiceSettings,
        *,
        vessel,
        store,
        buffer: SampleBuffer,
        voyage_log,
        listener,
        alerts: AlertManager,
        clock: Callable[[], datetime] = system_clock,
        clock_rate: float = 1.0,
        limit_set=None,
        engine_factory=None,
        limit_store=None,
        nmea_inputs=(),
    ):
        from onboard.core.engine import Engine, EngineSettings

        self.settings = settings
        self.vessel = vessel
        self.store = store
        self.buffer = buffer
        self.voyage_log = voyage_log
        self.listener = listener
        self.nmea_inputs = tuple(nmea_inputs)  # onboard.live.nmea.NmeaInput readers feeding the listener
        self.alerts = alerts
        self.clock = clock
        self.clock_rate = float(clock_rate) if clock_rate > 0 else 1.0
        self.limit_set = limit_set
        self.limit_store = limit_store
        self._engine_factory = engine_factory or Engine
        self._engine_settings = EngineSettings(window_s=settings.window_s, step_s=settings.cycle_s)
        self._engines: dict[str, Any] = {}
        self._lock = threading.Lock()
        self._latest: tuple[int, dict[str, Any], Any] | None = None  # (cycle id, page polar, CycleResult)
        self._health: HealthReport | None = None
        self._health_stored_at: datetime | None = None
        self._health_key: str | None = None
        self._stop = threading.Event()
        self._threads: list[threading.Thread] = []
        self._last_purge: datetime | None = None
        self._observed_fallback: dict[str, Any] | None = None
        self.provider = StoreStateProvider(
            store,
            vessel=vessel,
            cycle_s=settings.cycle_s,
            clock=clock,
            live=self,
            base_condition=self.base_condition,
        )
        self.cycles_run = 0

    # -- engines and conditions
    def active_condition(self) -> str:
        """The loading condition set in the store (the first of the vessel file if none was ever set)."""
        rec = self.store.active_condition()
        return rec["condition"] if rec else self.vessel.conditions[0].name

    def set_condition(self, name: str, *, set_by: str | None = None, note: str | None = None) -> None:
        """Make ``name`` the active loading condition (used from the next cycle on).

        ``name`` is a loading condition of the vessel file or a stored condition of the limits
        administration (:mod:`onboard.admin.limitstore`); the page and the admin commands use the same history.
        """
        self.base_condition(name)  # raises naming the known conditions
        self.store.set_condition(name, set_by=set_by, note=note, when=self.clock())
        self.store.add_event(
            "condition",
            f"loading condition set to {name!r}",
            time_utc=self.clock(),
            data={"condition": name, "set_by": set_by},
        )

    def _stored(self, name: str):
        """``(base condition, limit set, version)`` of a stored condition, or None if ``name`` is not one."""
        if self.limit_store is None:
            return None
        from onboard.admin.limitstore import LimitStoreError

        try:
            return self.limit_store.engine_inputs(name)
        except LimitStoreError:
            return None

    def base_condition(self, name: str) -> str:
        """The vessel-file loading condition behind ``name`` (itself, or a stored condition's base)."""
        stored = self._stored(name)
        if stored is not None:
            return stored[0]
        self.vessel.condition(name)  # raises VesselFileError naming the known conditions
        return name

    def engine(self, condition: str):
        """The engine of ``condition`` (built once and cached).

        A stored condition (limits administration) takes its base loading condition and its current
        limit set from the store; an edit raises its version and the engine is rebuilt on the next cycle,
        as is a switch of condition. Otherwise the vessel-file condition with ``analysis.limits`` (or the
        condition's own / the default limit set).
        """
        stored = self._stored(condition)
        if stored is not None:
            base, limit_set, version = stored
        else:
            base, limit_set, version = condition, self.limit_set, 0
        key = (condition, version)
        eng = self._engines.get(key)
        if eng is None:
            self._engines.clear()  # one condition at a time: free the previous model
            eng = self._engine_factory(self.vessel, base, limit_set=limit_set, settings=self._engine_settings)
            self._engines[key] = eng
            self._engine_revision = (condition, version)
        return eng

    def config_digest(self, condition: str) -> str:
        """Digest of what determines the advice: vessel file, RAO table, limit set, condition, window."""
        h = hashlib.sha256()
        base = self.base_condition(condition)
        for p in (self.vessel.source, self.vessel.condition(base).rao_table, self.settings.limits_file):
            if p is not None and Path(p).exists():
                h.update(Path(p).read_bytes())
        eng = self._engines.get(getattr(self, "_engine_revision", None))
        if eng is not None and getattr(eng, "limit_set", None) is not None:
            h.update(repr(eng.limit_set).encode())
        h.update(f"{condition}|{base}|{self.settings.window_s}|{self.settings.cycle_s}".encode())
        return h.hexdigest()[:16]

    # -- sensor health
    def check_health(self, now: datetime | None = None) -> HealthReport:
        """Check the required channels, update the sensor alert, store/publish on change or now and then."""
        now = now or self.clock()
        implausible = self.listener.recent_implausible(300.0) if self.listener is not None else {}
        channels = self.buffer.channel_health(
            now,
            channels=self.settings.required_channels,
            silent_after_s=self.settings.silent_after_s,
            implausible=implausible,
        )
        report = assess(channels, now, required=self.settings.required_channels)
        with self._lock:
            self._health = report
        self.alerts.update_sensors(
            report.problems, advice_possible=report.advice_possible, summary=report.summary(), now=now
        )
        key = json.dumps(sorted(report.problems.items()))
        due = (
            self._health_stored_at is None
            or (now - self._health_stored_at).total_seconds() >= self.settings.health_store_every_s
        )
        if key != self._health_key or due:
            self._health_key = key
            self._health_stored_at = now
            stats = self.listener.stats() if self.listener is not None else None
            if stats is not None and self.nmea_inputs:
                stats = {**stats, "nmea": [n.stats() for n in self.nmea_inputs]}
            self.store.add_sensor_health(
                now, [{k: _finite_or_none(v) for k, v in c.items()} for c in channels], listener=stats
            )
            self._publish(
                "health",
                {
                    "schema": "hw-health/1",
                    "vessel": self.settings.vessel_id,
                    "time_utc": _iso(now),
                    "advice_possible": report.advice_possible,
                    "reason": report.reason,
                    "channels": [{k: _finite_or_none(v) for k, v in c.items()} for c in channels],
                },
            )
        return report

    # -- one cycle
    def run_cycle(self, now: datetime | None = None) -> CycleOutcome:
        """Run one analysis cycle on the window ending at ``now`` (service clock) and record it.

        Never raises for a failure inside the cycle: it is stored as ``failed`` with its reason.
        """
        now = now or self.clock()
        started = now
        wall0 = time.perf_counter()
        start = now - timedelta(seconds=self.settings.window_s)
        status, reason, result, condition, digest = "failed", None, None, None, None
        try:
            condition = self.active_condition()
            engine = self.engine(condition)
            digest = self.config_digest(condition)
            health = self.check_health(now)
            frame = self.buffer.window(start, now)
            span = 0.0
            if len(frame) >= 2:
                span = (frame["time_utc"].iloc[-1] - frame["time_utc"].iloc[0]).total_seconds()
            if not health.advice_possible:
                status, reason = "no_advice", health.reason
            elif span < MIN_WINDOW_COVERAGE * self.settings.window_s:
                status = "no_advice"
                reason = (
                    f"collecting data: {span / 60:.0f} of {self.settings.window_s / 60:.0f} min of the "
                    "analysis window received"
                )
            else:
                obs = self._watch_observation(now)
                kw = {} if obs is None else {"observation": obs}  # the prior: only when there is one
                result = engine.analyse(blank_unhealthy(frame, health), course_deg=self.settings.course_deg, **kw)
                if result.accepted and result.advice is not None:
                    status = "ok"
                else:
                    status = "no_advice"
                    reason = "window rejected: " + ("; ".join(result.reasons) or "no reason given")
        except Exception as exc:  # a failed cycle is recorded, never fatal
            log.exception("analysis cycle failed")
            status, reason = "failed", f"{type(exc).__name__}: {exc}"
            result = None
        self._update_observed_fallback(status, condition, now)
        return self._record(status, reason, result, condition, digest, started, start, now, wall0)

    def _record(self, status, reason, result, condition, digest, started, start, end, wall0) -> CycleOutcome:
        polar = None
        sea = adv = None
        if status == "ok":
            try:
                polar = polar_json(result.polar, self.engine(condition).limit_set)
                sea = sea_state_record(result)
                adv = advice_record(result, polar)
            except Exception as exc:
                log.exception("could not convert the cycle result")
                status, reason, sea, adv, polar = "failed", f"{type(exc).__name__}: {exc}", None, None, None
        elapsed = time.perf_counter() - wall0
        finished = max(started, self.clock())
        timings = {"cycle_s": elapsed}
        if result is not None:
            timings["analysis_cpu_s"] = float(result.seconds)
        cycle_id = None
        try:
            cycle_id = self.store.add_cycle(
                started_utc=started,
                finished_utc=finished,
                status=status,
                window_start_utc=start,
                window_end_utc=end,
                reason=reason,
                condition=condition,
                timings_s=timings,
                code_version=_code_version(),
                config_digest=digest,
                sea_state=sea,
                advice=adv,
            )
        except Exception:
            log.exception("could not store the cycle (status %s, reason %s)", status, reason)
        self.cycles_run += 1
        with self._lock:
            if status == "ok" and cycle_id is not None:
                self._latest = (cycle_id, polar, result)
        self._publish_cycle(status, reason, end, sea, adv, condition)
        try:
            if status == "ok":
                a = result.advice
                self.alerts.update_utilisation(
                    a.utilisation_now,
                    binding=a.binding_now_label,
                    heading_deg=adv["heading_deg"],
                    stw_kn=adv["stw_kn"],
                    now=end,
                )
        except Exception:
            log.exception("could not update the alerts")
        log.info("cycle %s at %s: %s%s", cycle_id, _iso(end), status, f" ({reason})" if reason else "")
        return CycleOutcome(cycle_id, status, reason, result, start, end)

    # -- publishing
    def _publish(self, kind: str, obj: dict[str, Any]) -> None:
        if self.listener is None or self.listener.client is None:
            return
        try:
            self.listener.publish_json(kind, obj)
        except Exception:
            log.exception("could not publish %s", kind)

    def _publish_cycle(self, status, reason, end, sea, adv, condition) -> None:
        base = {
            "vessel": self.settings.vessel_id,
            "window_end_utc": _iso(end),
            "valid_until_utc": _iso(end + timedelta(seconds=self.settings.stale_after_s)),
            "condition": condition,
            "advisory_notice": ADVISORY_NOTICE,
        }
        if status == "ok":
            s = {k: v for k, v in sea.items() if k != "method"}
            self._publish(
                "seastate", {"schema": "hw-seastate/1", **base, "status": "ok", "reason": None, **s}
            )
            a = {k: v for k, v in adv.items() if k not in ("polar", "explanation")}
            a["turn"] = (adv.get("polar") or {}).get("turn")  # optional: which way, what the arc passes
            self._publish(
                "advice",
                {"schema": "hw-advice/1", **base, **a, "sentence": adv["explanation"], "reason": None},
            )
        else:
            for kind in ("seastate", "advice"):
                self._publish(
                    kind, {"schema": f"hw-{kind}/1", **base, "status": "unavailable", "reason": reason}
                )

    # -- live view for the page
    def live_ship(self) -> dict[str, Any] | None:
        newest = self.buffer.latest_times()
        th, ts = newest.get("heading_deg"), newest.get("stw_kn")
        if th is None or ts is None:
            return None
        t = max(th, ts)
        frame = self.buffer.window(t - 10_000, t + 1)
        hd = frame["heading_deg"].dropna()
        sp = frame["stw_kn"].dropna()
        if hd.empty or sp.empty:
            return None
        return {
            "time_utc": datetime.fromtimestamp(min(th, ts) / 1000.0, tz=UTC),
            "heading_deg": float(hd.iloc[-1]),
            "stw_kn": float(sp.iloc[-1]),
        }

    def live_link(self) -> dict[str, Any] | None:
        """The broker link (:meth:`onboard.live.listener.Listener.link_health`) for the page."""
        health = getattr(self.listener, "link_health", None)
        return health() if health is not None else None

    def live_sensors(self) -> list[dict[str, Any]] | None:
        with self._lock:
            return None if self._health is None else [dict(c) for c in self._health.channels]

    def live_polar(self, cycle_id: int) -> dict[str, Any] | None:
        with self._lock:
            if self._latest is not None and self._latest[0] == cycle_id:
                return self._latest[1]
        return None

    def intended_course_deg(self) -> float | None:
        if self.settings.course_deg is not None:
            return float(self.settings.course_deg) % 360.0
        with self._lock:
            res = self._latest[2] if self._latest else None
        if res is None or not math.isfinite(res.course):
            return None
        return round(float(np.degrees(res.course)), 1) % 360.0

    # -- the watch's visual sea-state estimate (onboard.admin.observedsea)
    def observed_sea(self, now: datetime | None = None) -> dict[str, Any] | None:
        """The current visual observation for the page state, with the fallback advice computed from it
        when the last cycle could not use the motions; None when there is no current observation."""
        from onboard.admin.observedsea import latest_observation

        now = now or self.clock()
        try:
            obs = latest_observation(self.store.engine, now)
        except Exception:  # the administration tables may not exist yet: no observation
            log.debug("no observed sea", exc_info=True)
            return None
        if obs is None:
            return None
        with self._lock:
            fallback = self._observed_fallback
        if fallback is not None and fallback.get("entered_utc") != _iso(obs["entered_utc"]):
            fallback = None
        return {
            "entered_utc": _iso(obs["entered_utc"]),
            "entered_by": obs["entered_by"],
            "age_s": round(obs["age_s"], 1),
            "note": obs["note"],
            "systems": obs["systems"],
            "fallback_advice": None if fallback is None else fallback["advice"],
            "fallback_polar": None if fallback is None else fallback.get("polar"),
        }

    def _watch_observation(self, now: datetime):
        """The watch's latest visual estimate for the estimator's prior (:class:`onboard.core.engine.
        WatchObservation`), or None: none current, or entered before the active loading condition was set
        (a new condition is a new voyage or load; an older observation belongs to the previous one). The
        engine applies the age limit (``EngineSettings.prior_max_age_s``)."""
        from estimator.observed import ObservedSystem
        from onboard.admin.observedsea import latest_observation
        from onboard.core.engine import WatchObservation

        try:
            obs = latest_observation(self.store.engine, now)
        except Exception:  # the administration tables may not exist yet: no observation
            log.debug("no observed sea for the prior", exc_info=True)
            return None
        if obs is None:
            return None
        rec = self.store.active_condition()
        since = rec["time_utc"] if rec else None
        if since is not None:
            since = since if since.tzinfo else since.replace(tzinfo=UTC)
            if obs["entered_utc"] < since:
                return None
        systems = tuple(
            ObservedSystem(s["label"], float(s["hs_m"]), float(s["period_s"]), math.radians(s["wave_from_deg"]))
            for s in obs["systems"]
        )
        return WatchObservation(systems, obs["entered_by"], obs["entered_utc"])

    def _update_observed_fallback(self, status: str, condition: str | None, now: datetime) -> None:
        """When a cycle gives no advice from the motions, score the polar in the observed sea instead."""
        advice = None
        if status != "ok" and condition is not None:
            try:
                advice = self._advise_from_observation(condition, now)
            except Exception:
                log.exception("fallback advice from the observed sea failed")
        with self._lock:
            self._observed_fallback = advice

    def _advise_from_observation(self, condition: str, now: datetime) -> dict[str, Any] | None:
        from estimator.observed import ObservedSystem
        from onboard.admin.observedsea import latest_observation
        from onboard.formats.units import kn_to_ms, ms_to_kn

        obs = latest_observation(self.store.engine, now)
        ship = self.live_ship()
        if obs is None or ship is None:
            return None
        systems = [
            ObservedSystem(s["label"], float(s["hs_m"]), float(s["period_s"]),
                           math.radians(s["wave_from_deg"]))
            for s in obs["systems"]
        ]
        heading = math.radians(ship["heading_deg"])
        course = math.radians(self.settings.course_deg) if self.settings.course_deg is not None else heading
        from onboard.live.stateview import polar_json

        engine = self.engine(condition)
        polar, adv = engine.advise_from_observation(systems, heading, float(kn_to_ms(ship["stw_kn"])), course)
        return {
            "entered_utc": _iso(obs["entered_utc"]),
            # the chart scored in the observed sea (the page draws it under its own banner)
            "polar": polar_json(polar, engine.limit_set),
            "advice": {
                "computed_utc": _iso(now),
                "status": adv.status,
                "sentence": f"From the watch's visual estimate, not from the motions: {adv.sentence}",
                "advised_heading_deg": round(math.degrees(adv.heading) % 360.0, 1),
                "advised_stw_kn": round(float(ms_to_kn(adv.speed)), 1),
                "utilisation_now": round(float(adv.utilisation_now), 3),
                "binding_limit": adv.binding_now_label,
            },
        }

    def latest_result(self):
        """The newest successful :class:`onboard.core.engine.CycleResult` held in memory (None before)."""
        with self._lock:
            return self._latest[2] if self._latest else None

    # -- life cycle
    def _wait(self, seconds_of_clock: float) -> bool:
        """Sleep ``seconds_of_clock`` of the service clock (True if asked to stop)."""
        return self._stop.wait(max(seconds_of_clock / self.clock_rate, 0.02))

    def _cycle_loop(self, first_delay_s: float) -> None:
        due = self.clock() + timedelta(seconds=first_delay_s)
        while not self._stop.is_set():
            now = self.clock()
            if now >= due:
                try:
                    self.run_cycle(now)
                    self._maybe_purge(now)
                except Exception:  # pragma: no cover - run_cycle records its own failures
                    log.exception("cycle loop step failed; the loop continues")
                due += timedelta(seconds=self.settings.cycle_s)
                if due <= self.clock():
                    due = self.clock() + timedelta(seconds=self.settings.cycle_s)
            left = (due - self.clock()).total_seconds()
            if self._wait(min(max(left, 0.0), 1.0 * self.clock_rate)):
                break

    def _health_loop(self) -> None:
        while not self._stop.is_set():
            try:
                self.check_health()
            except Exception:
                log.exception("health check failed; the loop continues")
            if self._wait(self.settings.health_interval_s):
                break

    def _maybe_purge(self, now: datetime) -> None:
        if self._last_purge is None or (now - self._last_purge).total_seconds() >= 86400.0:
            self._last_purge = now
            counts = self.store.purge_older_than(self.settings.retention_days, now=now)
            if any(counts.values()):
                log.info("purged old rows: %s", counts)

    def start(self, *, threads: bool = True, first_cycle_delay_s: float | None = None) -> None:
        """Start the listener (connects to the broker if one is configured) and, with ``threads``, the
        cycle and health threads. The first cycle runs after ``first_cycle_delay_s`` of the service clock
        (default one cycle)."""
        self.store.add_event(
            "service",
            "service started",
            time_utc=self.clock(),
            data={"vessel_id": self.settings.vessel_id, "broker": self.listener.client is not None},
        )
        self.prefill_from_voyage_log()
        self.listener.start()
        for nmea in self.nmea_inputs:
            nmea.start()
        if threads:
            self.start_threads(first_cycle_delay_s)

    def prefill_from_voyage_log(self) -> int:
        """After a restart, load the last analysis window from the rolling voyage log into the buffer,
        so that the first cycle need not wait a whole window for new data. Returns the rows loaded.

        Only rows of the last ``window_s`` before the service clock are loaded; a damaged or unreadable
        file is skipped (logged).
        """
        if self.voyage_log is None or self.voyage_log.last_time_ms() is None:
            return 0
        from onboard.formats.voyagelog import VoyageLogError, read_voyage_log

        now_ms = int(self.clock().timestamp() * 1000)
        start_ms = now_ms - int(self.settings.window_s * 1000)
        if self.voyage_log.last_time_ms() < start_ms:
            return 0
        frames = []
        for path in reversed(self.voyage_log.files()):
            try:
                df = read_voyage_log(path, check_units=False).read_all()
            except (VoyageLogError, OSError):
                log.exception("voyage log %s unreadable; not used to prefill the buffer", path)
                continue
            if not len(df):
                continue
            frames.append(df)
            if int(df["time_utc"].iloc[0].value // 1_000_000) <= start_ms:
                break
        if not frames:
            return 0
        df = pd.concat(frames[::-1], ignore_index=True)
        ms = (df["time_utc"].astype("int64") // 1_000_000).to_numpy()
        keep = (ms >= start_ms) & (ms <= now_ms)
        cols = [c for c in df.columns if c != "time_utc" and c in self.buffer.latest_times()]
        values = {c: pd.to_numeric(df[c], errors="coerce").to_numpy(dtype=float) for c in cols}
        rows = []
        for i in np.flatnonzero(keep):
            row = {c: float(values[c][i]) for c in cols if values[c][i] == values[c][i]}
            if row:
                rows.append((int(ms[i]), row))
        stored = self.buffer.append_rows(rows) if rows else 0
        if rows:
            self.store.add_event(
                "service",
                f"buffer prefilled with {len(rows)} rows from the voyage log",
                time_utc=self.clock(),
                data={"rows": len(rows), "values": stored},
            )
        return len(rows)

    def start_threads(self, first_cycle_delay_s: float | None = None) -> None:
        """Start the cycle and health threads (after :meth:`start` with ``threads=False``)."""
        if self._threads:
            raise RuntimeError("service threads already started")
        self._stop.clear()
        delay = self.settings.cycle_s if first_cycle_delay_s is None else first_cycle_delay_s
        self._threads = [
            threading.Thread(target=self._cycle_loop, args=(delay,), name="hw-cycle", daemon=True),
            threading.Thread(target=self._health_loop, name="hw-health", daemon=True),
        ]
        for t in self._threads:
            t.start()

    def stop(self, timeout: float = 30.0) -> None:
        """Stop the threads and the listener, close the voyage log, record the event."""
        self._stop.set()
        for t in self._threads:
            t.join(timeout)
        self._threads = []
        for nmea in self.nmea_inputs:
            nmea.stop()
        try:
            self.listener.stop()
        finally:
            if self.voyage_log is not None:
                self.voyage_log.close()
            try:
                self.store.add_event("service", "service stopped", time_utc=self.clock())
            except Exception:
                log.exception("could not record the stop event")

    # -- web page
    def web_app(
        self,
        config: dict[str, Any] | None = None,
        *,
        ack_requires_login: bool = True,
        extra: dict[str, Any] | None = None,
    ):
        """The bridge page app reading this service's state, with the conditions-and-limits
        administration on the same database (logins, roles, audit trail: :mod:`onboard.live.web.admin`).

        ``ack_requires_login`` False lets anyone on the page acknowledge alerts with a typed name (the
        embedded demo, which has no users); on board an officer login is required.
        """
        from onboard.live.web import create_app

        base = {
            "ADMIN_DB": self.store.engine,
            "ADMIN_VESSEL": self.vessel,
            "ADMIN_ACK_REQUIRES_LOGIN": ack_requires_login,
        }
        return create_app({**base, **(extra or {}), **(config or {})}, provider=self.provider)

    def web_server(
        self,
        host: str | None = None,
        port: int | None = None,
        *,
        ack_requires_login: bool = True,
        extra: dict[str, Any] | None = None,
    ):
        """A waitress server for the page (call ``.run()`` to serve, ``.close()`` to stop)."""
        from waitress import create_server

        return create_server(
            self.web_app(ack_requires_login=ack_requires_login, extra=extra),
            host=host or self.settings.web_host,
            port=self.settings.web_port if port is None else port,
            threads=self.settings.web_threads,
            ident="bridge",
        )


def serve_until(server, stop: threading.Event) -> None:
    """Serve the waitress ``server`` in the calling thread until ``stop`` is set, then close it there.

    waitress's own ``run()`` polls its sockets until its socket map is empty; closing those sockets from
    another thread while that loop polls them makes the poll fail with EBADF. Here the loop polls once at
    a time and checks ``stop`` between polls (so it ends within one poll timeout, ``asyncore_loop_timeout``,
    1 s by default, of ``stop`` being set), and the sockets are closed only after the loop has returned,
    by the thread that ran it. Ctrl-C (KeyboardInterrupt) ends the loop the same way and propagates.
    """
    socket_map = server._map  # waitress keeps the loop's dispatchers (listener, trigger, channels) here
    try:
        while not stop.is_set():
            server.asyncore.loop(
                timeout=server.adj.asyncore_loop_timeout,
                map=socket_map,
                use_poll=server.adj.asyncore_use_poll,
                count=1,
            )
    finally:
        stop.set()
        close_server(server)


def close_server(server) -> None:
    """Close a waitress server whose loop is not running: worker threads first, then every socket."""
    server.task_dispatcher.shutdown()
    for dispatcher in list(server._map.values()):
        with contextlib.suppress(OSError):
            dispatcher.close()


# --------------------------------------------------------------------------------------- composition root


def _sqlite_parent(url: str) -> None:
    """Create the folder of a SQLite file URL (the store creates the file itself)."""
    import sqlalchemy as sa

    u = sa.engine.make_url(url)
    if u.get_backend_name() == "sqlite" and u.database not in (None, "", ":memory:"):
        Path(u.database).expanduser().parent.mkdir(parents=True, exist_ok=True)


def broker_config(settings: ServiceSettings):
    """The listener's :class:`onboard.live.listener.BrokerConfig` from the settings (None without a broker)."""
    from onboard.live.listener import BrokerConfig

    if settings.broker_url is None:
        return None
    cfg = BrokerConfig.from_url(
        settings.broker_url,
        vessel=settings.vessel_id,
        client_id=settings.mqtt_client_id,
        ca_file=settings.mqtt_ca_file,
        cert_file=settings.mqtt_cert_file,
        key_file=settings.mqtt_key_file,
        keepalive_s=settings.mqtt_keepalive_s,
    )
    changes: dict[str, Any] = {}
    if settings.mqtt_username is not None:
        changes["username"] = settings.mqtt_username
    if settings.mqtt_password is not None:
        changes["password"] = settings.mqtt_password
    if settings.mqtt_tls:
        changes["tls"] = True
        if cfg.port == 1883:
            changes["port"] = 8883
    return replace(cfg, **changes) if changes else cfg


def build_service(
    settings: ServiceSettings,
    *,
    clock: Callable[[], datetime] = system_clock,
    clock_rate: float = 1.0,
    wall_clock: Callable[[], float] | None = time.time,
    engine_factory: Callable[..., Any] | None = None,
) -> Service:
    """Build the whole service from settings (the composition root; nothing is started).

    Parameters
    ----------
    settings : ServiceSettings
    clock : callable
        Service clock (aware UTC); the system clock on board, a :class:`ReplayClock` in the demo.
    clock_rate : float
        Seconds of ``clock`` per real second (for the threads' sleeps).
    wall_clock : callable or None
        For the listener's check against samples from the future (None disables it, for replayed data).
    engine_factory : callable, optional
        ``factory(vessel, condition, limit_set=..., settings=...)``; default :class:`onboard.core.engine.Engine`.

    Raises
    ------
    SettingsError, onboard.formats.vessel.VesselFileError, onboard.formats.limitsfile errors
        Bad settings or files (one-line reasons).
    """
    from onboard.core.store import Store
    from onboard.formats.vessel import load_vessel
    from onboard.formats.voyagelog import VoyageLogWriter
    from onboard.live.listener import Ingestor, Listener

    vessel = load_vessel(settings.vessel_file)
    if settings.condition is not None:
        vessel.condition(settings.condition)  # fail early with the known names
    limit_set = None
    if settings.limits_file is not None:
        from onboard.formats.limitsfile import read_limit_set

        limit_set = read_limit_set(settings.limits_file, vessel_points=vessel.points_mapping().keys())
    _sqlite_parent(settings.db_url)
    store = Store(settings.db_url)
    active = store.active_condition()
    if settings.condition is not None and (active is None or active["condition"] != settings.condition):
        store.set_condition(settings.condition, set_by="service start", when=clock())
    elif active is None:
        store.set_condition(
            vessel.conditions[0].name,
            set_by="service start (first condition of the vessel file)",
            when=clock(),
        )
    from onboard.admin.limitstore import LimitStore

    limit_store = LimitStore(store.engine, vessel)  # stored conditions and limits edited ashore/on board
    buffer = SampleBuffer(retention_s=max(3 * 3600.0, 2 * settings.window_s))
    voyage_log = VoyageLogWriter(
        settings.voyage_log_dir,
        period=settings.voyage_log_period,
        compress=settings.voyage_log_compress,
        fsync=settings.voyage_log_fsync,
    )
    ingestor = Ingestor(
        reorder_s=settings.reorder_s,
        source_idle_s=settings.source_idle_s,
        max_jump_s=settings.max_jump_s,
        start_after_ms=voyage_log.last_time_ms(),
        source_priority=dict(settings.source_priority),
        implausible_rate=settings.implausible_rate,
    )
    listener = Listener(
        broker_config(settings),
        buffer=buffer,
        voyage_log=voyage_log,
        ingestor=ingestor,
        wall_clock=wall_clock,
        own_contexts=settings.own_contexts,
    )
    nmea_inputs = ()
    if settings.nmea_inputs:
        from onboard.live.nmea import NmeaInput

        nmea_inputs = tuple(NmeaInput(c, listener) for c in settings.nmea_inputs)
    alerts = AlertManager(
        store,
        caution=settings.alert_caution,
        warning=settings.alert_warning,
        hysteresis=settings.alert_hysteresis,
        sensor_clear_s=settings.sensor_clear_s,
        clock=clock,
    )
    return Service(
        settings,
        vessel=vessel,
        store=store,
        buffer=buffer,
        voyage_log=voyage_log,
        listener=listener,
        alerts=alerts,
        clock=clock,
        clock_rate=clock_rate,
        limit_set=limit_set,
        engine_factory=engine_factory,
        limit_store=limit_store,
        nmea_inputs=nmea_inputs,
    )


# ------------------------------------------------------------------------------------------- demo feeding

MOTION_SOURCE_COLUMNS = ("roll_deg", "pitch_deg", "heave_m", "acc_x_ms2", "acc_y_ms2", "acc_z_ms2")
NAV_SOURCE_COLUMNS = ("heading_deg", "stw_kn", "sog_kn", "cog_deg", "lat_deg", "lon_deg")


class VoyageFeeder:
    """Feeds voyage-log rows to a listener as ``hw-samples/1`` batches, one per source and second.

    Motion columns go out from source ``imu1``, navigation columns from ``nav1`` (as two sensors would
    send them); the listener merges them back into one row per sample time.
    """

    def __init__(self, frame: pd.DataFrame, listener, *, batch_s: float = 1.0):
        from onboard.formats.messages import BATCH_SCHEMA, format_time_ms

        self.listener = listener
        self.schema = BATCH_SCHEMA
        t = pd.to_datetime(frame["time_utc"], utc=True)
        self.ms = (
            (t.astype("int64") // 1_000_000).to_numpy()
            if t.dt.unit == "ns"
            else t.dt.as_unit("ms").astype("int64").to_numpy()
        )
        self.times = [format_time_ms(int(m)) for m in self.ms]
        self.cols = {
            "imu1": [c for c in MOTION_SOURCE_COLUMNS if c in frame.columns],
            "nav1": [c for c in NAV_SOURCE_COLUMNS if c in frame.columns],
        }
        self.values = {
            c: pd.to_numeric(frame[c], errors="coerce").to_numpy(dtype=float)
            for cols in self.cols.values()
            for c in cols
        }
        self.batch_ms = int(batch_s * 1000)
        self.pos = 0

    @property
    def done(self) -> bool:
        return self.pos >= len(self.ms)

    @property
    def first(self) -> datetime:
        return datetime.fromtimestamp(self.ms[0] / 1000.0, tz=UTC)

    @property
    def last(self) -> datetime:
        return datetime.fromtimestamp(self.ms[-1] / 1000.0, tz=UTC)

    def feed_until(self, when: datetime) -> int:
        """Feed every row with time <= ``when``; returns the number of rows fed."""
        end_ms = int(when.timestamp() * 1000)
        stop = int(np.searchsorted(self.ms, end_ms, side="right"))
        n0 = self.pos
        while self.pos < stop:
            batch_end = min(
                stop, int(np.searchsorted(self.ms, self.ms[self.pos] + self.batch_ms, side="left"))
            )
            batch_end = max(batch_end, self.pos + 1)
            for source, cols in self.cols.items():
                samples = []
                for i in range(self.pos, batch_end):
                    s = {"time_utc": self.times[i]}
                    for c in cols:
                        x = self.values[c][i]
                        if x == x:
                            s[c] = float(x)
                    if len(s) > 1:
                        samples.append(s)
                if samples:
                    self.listener.feed({"schema": self.schema, "source": source, "samples": samples})
            self.pos = batch_end
        return self.pos - n0


def demo_settings(out_dir: Path, port: int, *, vessel_file: Path | None = None) -> ServiceSettings:
    """Settings of the embedded demo: no broker, SQLite in ``out_dir``, page on ``port``."""
    return ServiceSettings(
        vessel_file=vessel_file or ServiceSettings().vessel_file,
        condition=DEMO_CONDITION,
        vessel_id="demo",
        broker_url=None,
        db_url=f"sqlite:///{(out_dir / 'demo.sqlite').as_posix()}",
        voyage_log_dir=out_dir / "voyage-log",
        voyage_log_fsync=False,
        health_interval_s=30.0,
        silent_after_s=60.0,
        health_store_every_s=600.0,
        web_port=port,
    )


def _clean_demo_output(out_dir: Path) -> None:
    """Remove what a previous demo run left in ``out_dir`` (only the demo's own files)."""
    for name in ("demo.sqlite", "demo.sqlite-wal", "demo.sqlite-shm"):
        (out_dir / name).unlink(missing_ok=True)
    logs = out_dir / "voyage-log"
    if logs.is_dir():
        for p in logs.glob("voyage_*"):
            p.unlink()


#: The demo officer's login name (demo only; the password is new and random on every run).
DEMO_USER = "demo-officer"

#: Where the demo looks for the replay report of its voyage (README: how to write it).
DEMO_REPORT = Path("replay") / "report.html"


def prepare_demo_admin(service: Service) -> tuple[list[str], str]:
    """Store the vessel's loading conditions with their limit sets (as ``hwadvice limits load-vessel`` does)
    and create the demo officer login with a fresh random password (editor rights: switch the
    condition, edit limits, acknowledge). Returns the conditions stored and the password.

    Demo only: a real installation creates its users with ``hwadvice users add``.
    """
    import secrets

    from onboard.admin.auth import Users

    made = service.limit_store.load_vessel_conditions(actor="demo") if service.limit_store is not None else []
    password = secrets.token_urlsafe(12)
    Users(service.store.engine).add(
        DEMO_USER, password, "editor", actor="demo", client="demo", reason="demo login, printed at start"
    )
    return made, password


def load_demo_voyage(path: Path, hours: float | None = None) -> pd.DataFrame:
    """The demo voyage log (optionally only its first ``hours``)."""
    from onboard.formats.voyagelog import read_voyage_log

    frame = read_voyage_log(path).read_all()
    if hours is not None:
        t = pd.to_datetime(frame["time_utc"], utc=True)
        frame = frame[t <= t.iloc[0] + pd.Timedelta(hours=hours)].reset_index(drop=True)
    return frame


def run_demo(
    *,
    out_dir: Path,
    port: int = 8650,
    speedup: float = 60.0,
    once: bool = False,
    hours: float | None = None,
    voyage: Path = DEMO_VOYAGE,
    host: str = "127.0.0.1",
    cycle_s: float | None = None,
    echo: Callable[[str], None] = print,
    stop: threading.Event | None = None,
    on_ready: Callable[[str, Service], None] | None = None,
) -> dict[str, Any]:
    """Run the embedded demo (module docstring); returns a summary (cycle counts by status, timings).

    Parameters
    ----------
    out_dir : Path
        Where the SQLite file and the voyage log go (the demo's own files there are replaced).
    port : int
        Port of the page.
    speedup : float
        Replay speed (seconds of voyage per real second).
    once : bool
        Headless: run through the voyage cycle by cycle as fast as possible, then return.
    hours : float, optional
        Use only the first ``hours`` of the voyage.
    stop : threading.Event, optional
        Set it to end a paced run (as Ctrl-C does).
    on_ready : callable, optional
        Called with the page URL and the service once the page is being served (paced run).
    """
    out_dir.mkdir(parents=True, exist_ok=True)
    _clean_demo_output(out_dir)
    frame = load_demo_voyage(voyage, hours)
    settings = demo_settings(out_dir, port)
    if cycle_s is not None:
        settings = replace(settings, cycle_s=cycle_s)
    t_first = pd.Timestamp(frame["time_utc"].iloc[0]).to_pydatetime()
    first_cycle = t_first + timedelta(seconds=settings.window_s)
    clock = ReplayClock(first_cycle, rate=0.0 if once else speedup)
    service = build_service(settings, clock=clock, clock_rate=speedup if not once else 1.0, wall_clock=None)
    feeder = VoyageFeeder(frame, service.listener)
    echo(ADVISORY_NOTICE)
    echo(
        f"demo voyage: {voyage.name}, {feeder.first:%Y-%m-%d %H:%MZ} to {feeder.last:%H:%MZ} "
        f"({(feeder.last - feeder.first).total_seconds() / 3600:.1f} h, invented data); "
        f"output in {out_dir}"
    )
    summary: dict[str, Any] = {"cycles": {}, "wall_s": 0.0}
    wall0 = time.perf_counter()
    if once:
        service.start(threads=False)
        try:
            now = first_cycle
            while True:
                feeder.feed_until(now)
                service.listener.flush(60.0)
                clock.set(now)
                out = service.run_cycle(now)
                summary["cycles"][out.status] = summary["cycles"].get(out.status, 0) + 1
                echo(f"  {_iso(now)[:16]}Z  {out.status:9s} " + _cycle_line(out))
                if now >= feeder.last:
                    break
                now = min(now + timedelta(seconds=settings.cycle_s), feeder.last)
        finally:
            service.stop()
        summary["wall_s"] = time.perf_counter() - wall0
        summary["db_url"] = settings.db_url
        return summary

    # paced: the first window at once, then in accelerated time; the page in this process
    service.start(threads=False)
    try:
        feeder.feed_until(first_cycle)
        service.listener.flush(60.0)
        stored, password = prepare_demo_admin(service)
        server = service.web_server(
            host=host,
            port=port,
            ack_requires_login=False,
            extra={"DEMO_LOGIN": DEMO_USER, "BRIDGE_REPORT_FILE": str((out_dir / DEMO_REPORT).resolve())},
        )
    except BaseException:
        service.stop()
        raise
    url = f"http://{host}:{server.effective_port}/"
    echo(f"conditions stored with their limit sets: {', '.join(stored) or '(already stored)'}")
    echo(
        f"demo login (demo only, editor rights: conditions and limits, acknowledgement): "
        f"user {DEMO_USER}, one-time password {password}  at {url}admin/login"
    )
    if (out_dir / DEMO_REPORT).exists():
        echo(f"replay report of the demo voyage: {url}report")
    stop = stop or threading.Event()

    def pace() -> None:
        if on_ready is not None:
            on_ready(url, service)
        # the first cycle runs with the replay clock still standing at its window's end, and the clock
        # starts only when it is recorded: however long a busy computer takes, the first advice reaches
        # the page fresh (valid two cycles of replay time) instead of already stale
        service.run_cycle(first_cycle)
        if stop.is_set():
            return
        clock.start()
        service.start_threads(first_cycle_delay_s=settings.cycle_s)
        ended = False
        while not stop.is_set():
            if not feeder.done:
                feeder.feed_until(clock())
            elif not ended:
                ended = True
                echo(
                    "end of the demo voyage: the sensors now fall silent and the page shows no advice; "
                    "Ctrl-C to stop"
                )
            stop.wait(0.05)
        # the serving loop sees ``stop`` within one poll timeout and closes the server in its own thread

    pacer = threading.Thread(target=pace, name="hw-demo-feed", daemon=True)
    pacer.start()
    echo(f"bridge page: {url}  (replay {speedup:g}x real time; Ctrl-C to stop)")
    try:
        serve_until(server, stop)
    except KeyboardInterrupt:
        pass
    finally:
        stop.set()
        pacer.join()  # at most the first cycle: the service is stopped only after the pacer is done
        service.stop()
    summary["wall_s"] = time.perf_counter() - wall0
    return summary


def _cycle_line(out: CycleOutcome) -> str:
    if out.status != "ok":
        return f"no advice: {out.reason}"
    e, a = out.result.estimate, out.result.advice
    return (
        f"Hs {e.hs:4.1f} m Tp {e.tp:4.1f} s from {math.degrees(e.wave_from) % 360:03.0f}°  "
        f"util {a.utilisation_now:.2f}  {a.sentence}"
    )


# ------------------------------------------------------------------------------------------ command line


@contextlib.contextmanager
def _terminate_as_interrupt():
    """While inside, SIGTERM (a service manager stopping us) ends the command like Ctrl-C: orderly stop,
    ``offline`` published, voyage log closed. The previous handler is restored on the way out."""
    import signal

    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def _raise(_signum, _frame):
        raise KeyboardInterrupt

    previous = signal.signal(signal.SIGTERM, _raise)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


def _one_line(exc: BaseException) -> str:
    """The first line of a settings or file error; an OS error as :func:`onboard.errors.describe` says it."""
    from onboard.errors import describe

    if isinstance(exc, OSError):
        return describe(exc) or str(exc)
    return str(exc).splitlines()[0]


def _check_port(host: str, port: int, hint: str) -> None:
    """End the command with one line if the page's address cannot be bound (before any work starts).

    The socket is bound and closed again; waitress binds it for real moments later (a program taking
    the port in between still gets the same one-line reason from :func:`_port_error`)."""
    import socket

    from onboard.errors import CommandError

    if port == 0:
        return
    try:
        infos = socket.getaddrinfo(host, port, type=socket.SOCK_STREAM)
    except OSError as exc:
        raise CommandError(f"bridge page address {host!r}: {exc.strerror or exc}; {hint}") from None
    family, _, _, _, addr = infos[0]
    with socket.socket(family, socket.SOCK_STREAM) as sock:
        sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)  # as waitress does
        try:
            sock.bind(addr)
        except OSError as exc:
            raise _port_error(exc, host, port, hint) from None


def _port_error(exc: OSError, host: str, port: int, hint: str):
    """One-line :class:`CommandError` for a page port that cannot be used."""
    import errno

    from onboard.errors import CommandError, describe

    if exc.errno == errno.EADDRINUSE:
        return CommandError(
            f"port {port} on {host} is already in use (another hwadvice, or another program); {hint}"
        )
    return CommandError(f"bridge page on {host}:{port}: {describe(exc)}; {hint}")


def _cmd_run(args: argparse.Namespace) -> int:
    from onboard.errors import CommandError

    overrides = {
        ("mqtt", "url"): args.broker,
        ("vessel", "file"): args.vessel,
        ("vessel", "condition"): args.condition,
        ("vessel", "id"): args.vessel_id,
        ("database", "url"): args.db,
        ("web", "port"): args.port,
        ("web", "host"): args.host,
        ("mqtt", "username"): args.username,
        ("mqtt", "password"): args.password,
        ("mqtt", "ca_file"): args.ca_file,
        ("mqtt", "cert_file"): args.cert_file,
        ("mqtt", "key_file"): args.key_file,
        ("analysis", "cycle_s"): args.cycle_s,
        ("voyage_log", "dir"): args.voyage_log_dir,
    }
    if args.tls:
        overrides[("mqtt", "tls")] = True
    try:
        settings = load_settings(args.config, overrides=overrides)
    except (SettingsError, ValueError, OSError) as exc:
        raise CommandError(_one_line(exc)) from None
    hint = "choose another with --port or HW_WEB_PORT"
    _check_port(settings.web_host, settings.web_port, hint)
    try:
        service = build_service(settings)
    except (SettingsError, ValueError, OSError) as exc:
        raise CommandError(_one_line(exc)) from None
    try:
        server = service.web_server()
    except OSError as exc:
        service.store.close()
        raise _port_error(exc, settings.web_host, settings.web_port, hint) from None
    print(ADVISORY_NOTICE)
    service.start()
    print(
        f"connecting to {settings.broker_url or '(no broker)'} as vessel {settings.vessel_id!r}; "
        f"condition {service.active_condition()!r}; bridge page: "
        f"http://{settings.web_host}:{server.effective_port}/  (Ctrl-C to stop)"
    )
    if settings.broker_url:
        if service.listener.wait_connected(5.0):
            print(f"connected to the broker {settings.broker_url}")
        else:
            problem = service.listener.link_health()["problem"] or "no answer yet"
            print(f"broker {settings.broker_url} not reachable ({problem}); retrying, the page says so")
    try:
        with _terminate_as_interrupt():
            server.run()
    except KeyboardInterrupt:
        pass
    finally:
        server.close()
        service.stop()
    return 0


def _cmd_demo(args: argparse.Namespace) -> int:
    from onboard.errors import CommandError

    if not (args.speedup > 0 and math.isfinite(args.speedup)):
        raise CommandError(f"--speedup {args.speedup!r}: expected a number > 0")
    if args.hours is not None and not args.hours > 0:
        raise CommandError(f"--hours {args.hours!r}: expected a number of hours > 0")
    voyage = Path(args.voyage)
    if not voyage.exists():
        raise CommandError(
            f"{voyage}: demo voyage log not found (regenerate it with replay_data/make_demo_voyage.py)"
        )
    if not args.once:
        _check_port(args.host, args.port, "choose another with --port")
    try:
        with _terminate_as_interrupt():
            summary = run_demo(
                out_dir=Path(args.out),
                port=args.port,
                speedup=args.speedup,
                once=args.once,
                hours=args.hours,
                voyage=voyage,
                host=args.host,
            )
    except OSError as exc:
        import errno

        if exc.errno == errno.EADDRINUSE:
            raise _port_error(exc, args.host, args.port, "choose another with --port") from None
        raise CommandError(_one_line(exc)) from None
    except (SettingsError, ValueError) as exc:
        raise CommandError(_one_line(exc)) from None
    if args.once:
        counts = ", ".join(f"{n} {s}" for s, n in sorted(summary["cycles"].items()))
        print(f"demo finished: {counts} cycles in {summary['wall_s']:.0f} s; results in {summary['db_url']}")
        if summary["cycles"].get("ok", 0) == 0:
            print("hwadvice demo: no cycle gave advice", file=__import__("sys").stderr)
            return 1
    return 0


def add_commands(subparsers) -> None:
    """Add ``run`` and ``demo`` to the ``hwadvice`` command line (:mod:`onboard.cli`)."""
    run = subparsers.add_parser(
        "run",
        help="run the onboard service (MQTT listener, analysis cycles, store, bridge page)",
        description="Run the onboard service. Settings: defaults < --config TOML < HW_* environment "
        "< options. Advisory only: the master decides.",
    )
    run.add_argument("--config", help="service settings TOML (see config/service.toml)")
    run.add_argument(
        "--broker", help="broker URL mqtt://[user[:password]@]host[:port] or mqtts://... (HW_BROKER_URL)"
    )
    run.add_argument("--vessel", help="vessel TOML (HW_VESSEL)")
    run.add_argument("--vessel-id", help="vessel id in the MQTT topics hw/{id}/... (HW_VESSEL_ID)")
    run.add_argument("--condition", help="loading condition to start with (HW_CONDITION)")
    run.add_argument("--db", help="database URL, sqlite:///file or postgresql+psycopg2://... (HW_DB_URL)")
    run.add_argument("--port", type=int, help="port of the bridge page (HW_WEB_PORT)")
    run.add_argument("--host", help="address of the bridge page (HW_WEB_HOST)")
    run.add_argument("--cycle-s", type=float, help="seconds between analysis cycles (HW_ANALYSIS_CYCLE_S)")
    run.add_argument("--voyage-log-dir", help="folder of the rolling voyage log (HW_VOYAGE_LOG_DIR)")
    run.add_argument("--username", help="MQTT user name (HW_MQTT_USER)")
    run.add_argument("--password", help="MQTT password (HW_MQTT_PASSWORD; prefer the environment)")
    run.add_argument("--tls", action="store_true", help="use TLS to the broker (HW_MQTT_TLS)")
    run.add_argument("--ca-file", help="TLS CA bundle (HW_MQTT_CA_FILE)")
    run.add_argument("--cert-file", help="TLS client certificate (HW_MQTT_CERT_FILE)")
    run.add_argument("--key-file", help="TLS client key (HW_MQTT_KEY_FILE)")
    run.set_defaults(func=_cmd_run)

    demo = subparsers.add_parser(
        "demo",
        help="embedded demo: replay the bundled invented voyage through the service, page on :8650",
        description="Replay the bundled invented heavy-weather voyage through the same listener-to-page "
        "path, without a broker or database server. Advisory only: the master decides.",
    )
    demo.add_argument("--port", type=int, default=8650, help="port of the bridge page (default 8650)")
    demo.add_argument("--host", default="127.0.0.1", help="address of the bridge page (default 127.0.0.1)")
    demo.add_argument(
        "--speedup", type=float, default=60.0, help="replay speed, times real time (default 60)"
    )
    demo.add_argument("--once", action="store_true", help="run through the voyage headless, then exit 0")
    demo.add_argument("--hours", type=float, help="use only the first HOURS of the voyage")
    demo.add_argument("--out", default="demo-output", help="output folder (default ./demo-output)")
    demo.add_argument(
        "--voyage", default=str(DEMO_VOYAGE), help="voyage log to replay (default the bundled one)"
    )
    demo.set_defaults(func=_cmd_demo)


__all__ = [
    "CycleOutcome",
    "ReplayClock",
    "Service",
    "VoyageFeeder",
    "add_commands",
    "broker_config",
    "build_service",
    "demo_settings",
    "run_demo",
]
