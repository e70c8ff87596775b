"""Tests for the running service (onboard.live.service, settings, health, alerts, stateview) without a broker.

Samples go through the listener's in-process feed (parse → enqueue → writer → buffer and voyage log), the
analysis runs the real engine on a window simulated with estimator.simulate from the demo ship's RAO table,
results go to a real SQLite file (and PostgreSQL, marked ``postgres``), and the page state is checked
against the page's OpenAPI contract (onboard/live/web/openapi.yaml).
"""

from __future__ import annotations

import argparse
import json
import math
import threading
import time
import uuid
from datetime import UTC, datetime, timedelta
from importlib import resources
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import sqlalchemy as sa
import yaml
from jsonschema import Draft202012Validator
from referencing import Registry, Resource
from referencing.jsonschema import DRAFT202012

from estimator import spectra
from estimator.constants import KNOT
from estimator.simulate import simulate
from onboard.live import service as svc
from onboard.live.alerts import AlertManager, utilisation_level
from onboard.live.health import assess, blank_unhealthy
from onboard.live.settings import ServiceSettings, SettingsError, load_settings
from onboard.live.stateview import StoreStateProvider, expand_polar
from onboard.core.store import Store
from onboard.formats.vessel import load_condition_raos, load_vessel
from onboard.formats.voyagelog import read_voyage_log

ROOT = Path(__file__).resolve().parents[2]
VESSEL_FILE = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"
T0 = datetime(2026, 3, 1, 6, 0, tzinfo=UTC)  # invented start of the simulated record
WINDOW_S = 1200.0
RECORD_S = 1260.0
TRUE_HS, TRUE_TP, TRUE_FROM_DEG = 5.0, 11.0, 300.0
HEADING_DEG, STW_KN = 250.0, 14.0

SPEC = yaml.safe_load(resources.files("onboard.live.web").joinpath("openapi.yaml").read_text(encoding="utf-8"))
REGISTRY = Registry().with_resource(
    "urn:bridge", Resource.from_contents(SPEC, default_specification=DRAFT202012)
)


def schema(name: str) -> Draft202012Validator:
    return Draft202012Validator({"$ref": f"urn:bridge#/components/schemas/{name}"}, registry=REGISTRY)


# ----------------------------------------------------------------------------------------------- helpers


def true_spectrum() -> spectra.DirectionalSpectrum:
    """JONSWAP (DNV gamma) × cos-2s, the sea the test record is simulated in."""
    om = np.linspace(0.15, 2.5, 240)
    th = np.arange(144) * 2 * np.pi / 144
    s1 = spectra.jonswap(om, TRUE_HS, TRUE_TP, gamma=spectra.jonswap_gamma_dnv(TRUE_HS, TRUE_TP))
    d = spectra.spreading_cos2s(th, math.radians(TRUE_FROM_DEG), 10.0)
    return spectra.DirectionalSpectrum(omega=om, theta=th, density=s1[:, None] * d[None, :])


_FRAME: pd.DataFrame | None = None


def simulated_frame() -> pd.DataFrame:
    """21 min of voyage-log rows at 2 Hz (roll, pitch, heave, heading, STW), invented, from T0."""
    global _FRAME
    if _FRAME is None:
        vessel = load_vessel(VESSEL_FILE)
        rao = load_condition_raos(vessel, CONDITION)
        rec = simulate(
            true_spectrum(),
            rao,
            heading=math.radians(HEADING_DEG),
            speed=STW_KN * KNOT,
            duration=RECORD_S,
            fs=2.0,
            sensor_xyz=vessel.motion_sensor.xyz,
            seed=11,
            noise_std={"roll": math.radians(0.02), "pitch": math.radians(0.02), "heave": 0.02},
            channels=("roll", "pitch", "heave"),
        )
        times = pd.to_datetime(T0) + pd.to_timedelta(rec.t, unit="s")
        _FRAME = pd.DataFrame(
            {
                "time_utc": times,
                "roll_deg": np.degrees(rec.channels["roll"]),
                "pitch_deg": np.degrees(rec.channels["pitch"]),
                "heave_m": rec.channels["heave"],
                "heading_deg": HEADING_DEG + 0.3 * np.sin(rec.t / 20.0),  # a live gyro is never constant
                "stw_kn": STW_KN + 0.05 * np.sin(rec.t / 30.0),
            }
        )
    return _FRAME


def window_end() -> datetime:
    return T0 + timedelta(seconds=RECORD_S)


def base_settings(tmp_path: Path, **kw) -> ServiceSettings:
    values = dict(
        vessel_file=VESSEL_FILE,
        condition=CONDITION,
        vessel_id="t" + uuid.uuid4().hex[:8],
        broker_url=None,
        db_url=f"sqlite:///{tmp_path / 'service.sqlite'}",
        voyage_log_dir=tmp_path / "log",
        voyage_log_fsync=False,
        window_s=WINDOW_S,
        cycle_s=600.0,
    )
    values.update(kw)
    return ServiceSettings(**values)


class Running:
    """A built service with a manual replay clock; stopped by the fixture."""

    def __init__(self, settings: ServiceSettings, start: datetime = T0, **build_kw):
        self.clock = svc.ReplayClock(start, rate=0.0)
        self.service = svc.build_service(settings, clock=self.clock, wall_clock=None, **build_kw)
        self.service.start(threads=False)

    def feed_window(self) -> None:
        feeder = svc.VoyageFeeder(simulated_frame(), self.service.listener)
        feeder.feed_until(window_end())
        assert self.service.listener.flush(30.0)

    def cycle_at(self, when: datetime):
        self.clock.set(when)
        return self.service.run_cycle(when)


@pytest.fixture
def running(tmp_path):
    made: list[Running] = []

    def make(**kw) -> Running:
        build_kw = {k: kw.pop(k) for k in ("engine_factory",) if k in kw}
        r = Running(base_settings(tmp_path, **kw), **build_kw)
        made.append(r)
        return r

    yield make
    for r in made:
        r.service.stop()


# ---------------------------------------------------------------------------------------------- settings


def test_settings_precedence_defaults_toml_environment_command_line(tmp_path):
    cfg = tmp_path / "service.toml"
    cfg.write_text(
        '[vessel]\nfile = "v.toml"\nid = "tern"\n[analysis]\ncycle_s = 300\n[web]\nport = 8700\n'
        '[mqtt]\nurl = "mqtt://broker.local:1883"\nusername = "svc"\n[database]\nurl = "sqlite:///x.sqlite"\n'
    )
    env = {"HW_BROKER_URL": "mqtts://other:8883", "HW_WEB_PORT": "8701", "HW_ALERTS_CAUTION": "0.85"}
    s = load_settings(cfg, environ=env, overrides={("web", "port"): 8702, ("vessel", "condition"): None})
    assert s.vessel_file == tmp_path / "v.toml"  # relative to the TOML file
    assert (s.vessel_id, s.cycle_s, s.mqtt_username) == ("tern", 300.0, "svc")  # from the file
    assert s.broker_url == "mqtts://other:8883"  # environment over file
    assert s.alert_caution == 0.85
    assert s.web_port == 8702  # command line over environment
    assert s.condition is None  # None on the command line means "not given"
    assert s.window_s == 1200.0 and s.stale_after_s == 600.0  # defaults; stale after two cycles
    d = load_settings(environ={})
    assert (d.cycle_s, d.web_port, d.broker_url) == (600.0, 8650, "mqtt://127.0.0.1:1883")


@pytest.mark.parametrize(
    ("text", "env", "match"),
    [
        ("[analysis]\ncycle_s = -5\n", {}, r"service.toml: analysis.cycle_s = -5; allowed: 1 to 7200"),
        ("[web]\nprot = 1\n", {}, r"unknown key web.prot; allowed in \[web\]: host, port, threads"),
        ("[webb]\n", {}, r"unknown table \[webb\]"),
        (
            "[alerts]\ncaution = 1.2\nwarning = 1.0\n",
            {},
            r"alerts.warning = 1.0 is below alerts.caution = 1.2",
        ),
        ("", {"HW_WEB_PORT": "eighty"}, r"environment HW_WEB_PORT = 'eighty'; allowed: a number"),
        ("", {"HW_MQTT_TLS": "maybe"}, r"environment HW_MQTT_TLS = 'maybe'; allowed: true or false"),
        ("", {"HW_BROKER_URL": "http://x"}, r"mqtt.url = 'http://x'; allowed: mqtt://"),
        ('[health]\nrequired = ["roll_deg", "heading_deg", "stw_kn"]\n', {}, r"at least two of roll_deg"),
        ("[vessel\n", {}, r"service.toml: not valid TOML"),
        # issue 16: settings checked against each other, unknown HW_* refused (rules: settings docstring)
        (
            "[ingest]\nreorder_s = 5\nsource_idle_s = 10\n[health]\nsilent_after_s = 15\n",
            {},
            r"reorder_s \+ ingest.source_idle_s = 5 \+ 10 s is not below health.silent_after_s = 15 s",
        ),
        (
            "[analysis]\nwindow_s = 600\ncycle_s = 600\n",
            {},
            r"window_s = 600.0 cannot hold .* \(600 s\) plus the ingest hold-back \(7 s\); allowed: window_s >= 607",
        ),
        ("", {"HW_ANALYSIS_CYCLES": "300"}, r"environment HW_ANALYSIS_CYCLES: unknown .*HW_ANALYSIS_CYCLE_S"),
        ("[ingest]\npriority = { roll = [\"imu1\"] }\n", {}, r"ingest.priority.roll = \['imu1'\]; allowed"),
        ("", {"HW_INGEST_PRIORITY": "roll_deg imu1"}, r"HW_INGEST_PRIORITY = 'roll_deg imu1'; allowed"),
    ],
)
def test_settings_errors_name_source_key_value_and_allowed(tmp_path, text, env, match):
    cfg = tmp_path / "service.toml"
    cfg.write_text(text)
    with pytest.raises(SettingsError, match=match):
        load_settings(cfg, environ=env)


def test_ingest_settings_from_toml_and_environment(tmp_path):
    cfg = tmp_path / "service.toml"
    cfg.write_text('[ingest]\nself_id = "urn:mrn:imo:mmsi:230000001"\n[ingest.priority]\nroll_deg = ["imu2", "imu1"]\n')
    s = load_settings(cfg, environ={"HW_INGEST_PRIORITY": "heading_deg:gyro,gps", "HW_TEST_PG_URL": "x"})
    assert s.source_priority == (("heading_deg", ("gyro", "gps")),)  # environment over file
    assert s.own_contexts == ("vessels.self", "vessels.urn:mrn:imo:mmsi:230000001")
    assert load_settings(cfg, environ={}).source_priority == (("roll_deg", ("imu2", "imu1")),)


def test_example_service_toml_is_valid():
    s = load_settings(ROOT / "config" / "service.toml", environ={})
    assert s.vessel_file == VESSEL_FILE
    assert s.cycle_s == 600.0 and s.window_s == 1200.0


def test_broker_config_takes_credentials_and_tls_from_settings(tmp_path):
    ca = tmp_path / "ca.pem"
    ca.write_text("x")
    s = load_settings(
        environ={
            "HW_BROKER_URL": "mqtt://u1:p1@ship-broker",
            "HW_VESSEL_ID": "tern",
            "HW_MQTT_TLS": "yes",
            "HW_MQTT_CA_FILE": str(ca),
            "HW_MQTT_PASSWORD": "p2",
        }
    )
    cfg = svc.broker_config(s)
    assert (cfg.host, cfg.port, cfg.vessel, cfg.username, cfg.password) == (
        "ship-broker",
        8883,
        "tern",
        "u1",
        "p2",
    )
    assert cfg.tls and cfg.ca_file == str(ca)
    assert svc.broker_config(load_settings(environ={"HW_MQTT_URL": "none"})) is None


# ------------------------------------------------------------------------------------------ pure parts


def test_utilisation_level_hysteresis():
    # Dead band below each level (common practice in alarm management): rises at the level,
    # steps down only hysteresis below it.
    kw = dict(caution=0.9, warning=1.0, hysteresis=0.05)
    assert utilisation_level(0.89, None, **kw) is None
    assert utilisation_level(0.90, None, **kw) == "caution"
    assert utilisation_level(1.00, "caution", **kw) == "warning"
    assert utilisation_level(0.96, "warning", **kw) == "warning"  # inside the band below 1.0
    assert utilisation_level(0.94, "warning", **kw) == "caution"
    assert utilisation_level(0.86, "caution", **kw) == "caution"
    assert utilisation_level(0.849, "caution", **kw) is None
    assert utilisation_level(0.86, None, **kw) is None  # the band only holds an open alert


def _health(status: dict[str, str], last="2026-03-01T06:20:58.500Z"):
    return [
        {"channel": c, "status": s, "last_utc": last, "age_s": 1.0, "detail": ""} for c, s in status.items()
    ]


def test_health_assess_names_silent_channels_and_keeps_two_motion_channels():
    ok = dict.fromkeys(("roll_deg", "pitch_deg", "heave_m", "heading_deg", "stw_kn"), "ok")
    r = assess(_health(ok), T0)
    assert r.advice_possible and r.reason is None and not r.problems
    one = {**ok, "roll_deg": "frozen"}
    r = assess(_health(one), T0)
    assert (
        r.advice_possible
        and r.usable_motion == ("pitch_deg", "heave_m")
        and r.problems == {"roll_deg": "frozen"}
    )
    two = {**ok, "roll_deg": "silent", "pitch_deg": "silent"}
    r = assess(_health(two), T0)
    assert not r.advice_possible
    assert r.reason == "sensors silent: roll_deg, pitch_deg since 06:20Z"
    nav = {**ok, "stw_kn": "missing"}
    assert assess(_health(nav), T0).reason == "sensors missing: stw_kn"
    frame = pd.DataFrame({"time_utc": [T0, T0], "roll_deg": [1.0, 2.0], "pitch_deg": [0.1, 0.2]})
    blanked = blank_unhealthy(frame, assess(_health(one), T0))
    assert blanked["roll_deg"].isna().all() and blanked["pitch_deg"].tolist() == [0.1, 0.2]


def test_alert_manager_raises_steps_and_clears_in_the_store(tmp_path):
    store = Store.sqlite(str(tmp_path / "a.sqlite"))
    now = [T0]
    am = AlertManager(
        store, caution=0.9, warning=1.0, hysteresis=0.05, sensor_clear_s=30.0, clock=lambda: now[0]
    )
    assert am.update_utilisation(0.5) is None
    assert am.update_utilisation(0.92, binding="Roll (RMS)", heading_deg=250.0, stw_kn=14.0) == "caution"
    first = store.active_alerts()
    assert len(first) == 1 and first[0]["level"] == "caution" and "0.92" in first[0]["text"]
    assert am.update_utilisation(0.93) == "caution" and len(store.active_alerts()) == 1  # same alert kept
    assert am.update_utilisation(None) == "caution"  # unknown: left as it is
    assert am.update_utilisation(1.02) == "warning"
    alerts = store.active_alerts()
    levels = {(a["level"], a["cleared_utc"] is None) for a in alerts}
    assert levels == {
        ("warning", True),
        ("caution", False),
    }  # old caution cleared, unacknowledged, still shown
    assert am.update_utilisation(0.80) is None
    assert all(a["cleared_utc"] is not None for a in store.active_alerts())
    # sensors: warning when advice is impossible; clears only after 30 s healthy
    assert (
        am.update_sensors(
            {"roll_deg": "silent", "pitch_deg": "silent"},
            advice_possible=False,
            summary="silent: roll_deg, pitch_deg since 06:20Z",
        )
        == "warning"
    )
    now[0] = T0 + timedelta(seconds=10)
    assert am.update_sensors({}, advice_possible=True) == "warning"
    now[0] = T0 + timedelta(seconds=35)
    assert am.update_sensors({}, advice_possible=True) == "warning"  # healthy for 25 s only
    now[0] = T0 + timedelta(seconds=41)
    assert am.update_sensors({}, advice_possible=True) is None
    # a restarted manager picks up the open alert instead of raising a second one
    am.update_utilisation(1.1)
    again = AlertManager(store, clock=lambda: now[0])
    assert again.open_level("utilisation") == "warning"
    again.update_utilisation(1.2)
    assert sum(1 for a in store.active_alerts() if a["cleared_utc"] is None) == 1
    store.close()


# ------------------------------------------------------------------------------------------- the service


def _check_estimate(sea: dict) -> None:
    # Truth: the simulated sea, Hs = 4·sqrt(m0) of the JONSWAP spectrum (docs/conventions.md), Tp and the
    # direction the record was simulated with. Tolerances from the estimator's benchmark on simulated
    # records (benchmarks/bench_estimator.py: 90th percentile of |dHs| about 20 %, direction within 30°).
    assert sea["hs_m"] == pytest.approx(TRUE_HS, rel=0.25)
    assert sea["tp_s"] == pytest.approx(TRUE_TP, rel=0.25)
    assert abs((sea["wave_from_deg"] - TRUE_FROM_DEG + 180) % 360 - 180) < 30


def test_cycle_stores_estimate_advice_and_serves_the_page_state(running):
    r = running()
    r.feed_window()
    out = r.cycle_at(window_end())
    assert out.status == "ok", out.reason
    cyc = r.service.store.latest_cycle()
    assert cyc["id"] == out.cycle_id and cyc["status"] == "ok" and cyc["condition"] == CONDITION
    assert cyc["window_end_utc"] == window_end() and cyc["window_start_utc"] == window_end() - timedelta(
        seconds=1200
    )
    _check_estimate(cyc["sea_state"])
    adv = cyc["advice"]
    # the stored advice is the engine's (edge units through onboard.formats.units)
    a = out.result.advice
    assert adv["utilisation"] == pytest.approx(a.utilisation_now, abs=1e-4)
    assert adv["heading_deg"] == pytest.approx(HEADING_DEG, abs=0.5)
    assert adv["stw_kn"] == pytest.approx(STW_KN, abs=0.1)
    assert adv["advised_heading_deg"] == pytest.approx(math.degrees(a.heading) % 360, abs=0.05)
    assert adv["polar"]["utilisation"][0][0] == pytest.approx(
        out.result.polar.overall_conservative[0, 0], abs=1e-3
    )
    # the page state: the contract's schema, values from the store and the live view
    state = r.service.provider.current_state()
    schema("State").validate(state)
    assert state["status"] == {"advice_available": True, "reason": None}
    assert state["advice"]["status"] == a.status and state["advice"]["sentence"] == a.sentence
    assert state["advice"]["turn"]["reason"] == a.reason  # optional turn / attainable-speed fields
    assert state["advice"]["turn"]["direction"] == (a.turn.direction or None)
    assert state["polar"]["parametric_check"]["applied"] == out.result.polar.parametric_check.applied
    assert state["sea_state"]["stale"] is False and state["sea_state"]["hs_m"] == cyc["sea_state"]["hs_m"]
    last = simulated_frame()[simulated_frame()["time_utc"] <= pd.Timestamp(window_end())].iloc[-1]
    assert state["ship"]["heading_deg"] == pytest.approx(last["heading_deg"], abs=0.051)  # newest sample
    assert (
        state["ship"]["stw_kn"] == pytest.approx(last["stw_kn"], abs=0.006)
        and state["ship"]["stale"] is False
    )
    assert state["condition"] == {"name": CONDITION, "draft_m": 11.5, "gm_m": 1.2, "roll_period_s": 20.56}
    polar = state["polar"]
    assert len(polar["headings_deg"]) == 72 and polar["speeds_kn"][-1] == pytest.approx(22.0)
    assert polar["margin"] == pytest.approx(0.9)
    assert [c["key"] for c in polar["criteria"]] == list(out.result.polar.keys)
    assert {s["channel"]: s["status"] for s in state["sensors"]} == dict.fromkeys(
        ("roll_deg", "pitch_deg", "heave_m", "heading_deg", "stw_kn"), "ok"
    )
    # the stored polar (zones as cells) gives the same page polar as the one held in memory
    assert expand_polar(cyc["advice"]["polar"]) == polar
    assert sum(map(len, cyc["advice"]["polar"]["zone_cells"].values())) == sum(
        int(np.sum(m)) for m in out.result.polar.zones_conservative.values()
    )
    cold = StoreStateProvider(r.service.store, vessel=r.service.vessel, cycle_s=600.0, clock=r.clock)
    assert cold.current_state()["polar"] == polar
    hist = r.service.provider.history(6)
    schema("History").validate(hist)
    assert hist["hs_m"] == [cyc["sea_state"]["hs_m"]]
    # the rolling voyage log holds every fed row
    r.service.voyage_log.close()
    logged = read_voyage_log(r.service.settings.voyage_log_dir).read_all()
    fed = simulated_frame()
    fed = fed[fed["time_utc"] <= pd.Timestamp(window_end())]
    assert len(logged) == len(fed)
    assert np.allclose(logged["roll_deg"].to_numpy(), fed["roll_deg"].to_numpy(), atol=1e-5)


class _FailingAnalysis:
    """A real engine whose analysis raises (stands in for a bug or a corrupt table)."""

    def __init__(self, vessel, condition, **kw):
        from onboard.core.engine import Engine

        self._e = Engine(vessel, condition, **kw)
        self.limit_set = self._e.limit_set

    def analyse(self, frame, **kw):
        raise FloatingPointError("singular matrix in the test engine")


def _bad_payload(rng: np.random.Generator, kind: int, t_ms: int) -> tuple[str | None, object]:
    """One stray or malformed message of the issue-16 families, stamped near ``t_ms`` (invented data)."""
    from onboard.formats.messages import BATCH_SCHEMA, format_time_ms

    now = format_time_ms(t_ms)
    if kind == 0:  # garbage bytes, control characters included
        return "imu1", bytes(rng.integers(0, 256, int(rng.integers(1, 200)), dtype=np.uint8))
    if kind == 1:  # a stray publisher repeating an implausible roll (source the settings do not use)
        return "imu9", {"schema": BATCH_SCHEMA, "source": "imu9", "samples": [{"time_utc": now, "roll_deg": 1000.0}]}
    if kind == 2:  # another ship's Signal K data (an AIS target forwarded by a server)
        return None, {
            "context": "vessels.urn:mrn:imo:mmsi:999999999",
            "updates": [
                {
                    "$source": "ais",
                    "timestamp": now,
                    "values": [{"path": "navigation.headingTrue", "value": 0.5}],
                }
            ],
        }
    if kind == 3:  # a sensor whose clock is an hour behind
        old = format_time_ms(t_ms - 3_600_000)
        return "imu7", {"schema": BATCH_SCHEMA, "source": "imu7", "samples": [{"time_utc": old, "roll_deg": 1.0}]}
    # the own primary sensor with one spike inside an otherwise good batch is covered by the feeder's
    # good data; here a truncated batch of it
    good = json.dumps({"schema": BATCH_SCHEMA, "source": "imu1", "samples": [{"time_utc": now, "roll_deg": 1.0}]})
    return "imu1", good[: int(rng.integers(1, len(good) - 1))].encode()


def test_fuzz_bad_traffic_interleaved_with_good_never_stops_the_advice(running):
    """Issue 16 goal in the test suite: about 2000 bad payloads of every family interleaved with 21 min
    of good 2 Hz data (seeded); the cycle still gives advice with the estimate of the clean record."""
    priority = (
        ("heading_deg", ("nav1",)),
        ("heave_m", ("imu1",)),
        ("pitch_deg", ("imu1",)),
        ("roll_deg", ("imu1",)),
        ("stw_kn", ("nav1",)),
    )
    r = running(source_priority=priority)
    lst = r.service.listener
    feeder = svc.VoyageFeeder(simulated_frame(), lst)
    rng = np.random.default_rng(16)
    t = feeder.first
    sent = 0
    while t < window_end():
        t = t + timedelta(seconds=1)
        feeder.feed_until(min(t, window_end()))
        for _ in range(int(rng.integers(0, 4))):
            source, payload = _bad_payload(rng, int(rng.integers(0, 5)), int(t.timestamp() * 1000))
            if source is None:
                lst.feed(payload)
            else:
                lst.feed(payload, source=source)
            sent += 1
    assert lst.flush(30.0)
    assert sent > 1500
    st_ = lst.stats()
    assert st_["callback_errors"] == 0 and st_["writer_errors"] == 0
    rejected = st_["rejected"]
    assert min(rejected["other_vessel"], rejected["out_of_range"], rejected["malformed_json"]) > 0, st_
    assert st_["ingest"]["clock_jump"] > 0, st_
    out = r.cycle_at(window_end())
    assert out.status == "ok", out.reason
    _check_estimate(r.service.store.latest_cycle()["sea_state"])


def test_failed_cycle_is_stored_as_failed_with_its_reason(running):
    r = running(engine_factory=_FailingAnalysis)
    r.feed_window()
    out = r.cycle_at(window_end())
    assert out.status == "failed"
    cyc = r.service.store.latest_cycle()
    assert (
        cyc["status"] == "failed"
        and cyc["reason"] == "FloatingPointError: singular matrix in the test engine"
    )
    state = r.service.provider.current_state()
    schema("State").validate(state)
    assert state["advice"]["status"] == "unavailable"
    assert state["status"]["reason"] == cyc["reason"]


def _broken_engine(vessel, condition, **kw):
    raise RuntimeError("RAO table unreadable")


def test_cycle_thread_survives_failing_cycles(tmp_path):
    s = base_settings(tmp_path, cycle_s=1.0, window_s=700.0, health_interval_s=0.5)
    service = svc.build_service(s, engine_factory=_broken_engine)
    service.start(threads=True, first_cycle_delay_s=0.0)
    try:
        deadline = time.monotonic() + 20
        while time.monotonic() < deadline:
            with service.store.engine.connect() as c:
                n = c.execute(
                    sa.text("SELECT count(*) FROM analysis_cycles WHERE status = 'failed'")
                ).scalar()
            if n >= 3:
                break
            time.sleep(0.2)
        assert n >= 3
        assert all(t.is_alive() for t in service._threads)
        assert service.store.latest_cycle()["reason"] == "RuntimeError: RAO table unreadable"
        assert service.store.latest_sensor_health() is not None  # the health thread ran too
    finally:
        service.stop()


def test_silent_sensors_give_no_advice_with_the_reason_and_never_old_advice(running):
    r = running()
    r.feed_window()
    assert r.cycle_at(window_end()).status == "ok"
    later = window_end() + timedelta(seconds=120)  # nothing received for two minutes
    out = r.cycle_at(later)
    assert out.status == "no_advice"
    assert out.reason == "sensors silent: roll_deg, pitch_deg, heave_m, heading_deg, stw_kn since 06:21Z"
    state = r.service.provider.current_state()
    schema("State").validate(state)
    assert state["advice"]["status"] == "unavailable" and state["advice"]["reason"] == out.reason
    assert state["status"] == {"advice_available": False, "reason": out.reason}
    assert state["sea_state"]["stale"] is True  # the last estimate is shown as old, not as current
    assert state["ship"]["stale"] is True
    assert {s["status"] for s in state["sensors"]} == {"silent"}
    sensor_alerts = [a for a in state["alerts"] if a["kind"] == "sensors"]
    assert len(sensor_alerts) == 1 and sensor_alerts[0]["level"] == "warning"


def test_advice_older_than_two_cycles_is_stale(running):
    r = running()
    r.feed_window()
    assert r.cycle_at(window_end()).status == "ok"
    r.clock.set(window_end() + timedelta(seconds=1199))
    assert r.service.provider.current_state()["advice"]["status"] != "unavailable"
    r.clock.set(window_end() + timedelta(seconds=1201))  # 2 × cycle_s = 1200 s
    state = r.service.provider.current_state()
    assert state["sea_state"]["stale"] is True and state["sea_state"]["stale_after_s"] == 1200.0
    assert state["advice"]["status"] == "unavailable"
    assert state["advice"]["reason"].startswith("advice is stale: the last analysis window ended at 06:21Z")


def test_alert_raised_then_acknowledged_on_the_page(running):
    # levels set low so that the real utilisation of this sea (about 1 at the present cell) crosses them
    r = running(alert_caution=0.2, alert_warning=0.3, alert_hysteresis=0.05)
    r.feed_window()
    out = r.cycle_at(window_end())
    assert out.status == "ok" and out.result.advice.utilisation_now >= 0.3
    alerts = r.service.store.active_alerts()
    assert [(a["level"], a["kind"]) for a in alerts] == [("warning", "utilisation")]
    client = r.service.web_app({"TESTING": True}).test_client()
    state = client.get("/api/state").get_json()
    assert state["alerts"][0]["id"] == alerts[0]["id"] and state["alerts"][0]["acknowledged"] is False
    r.clock.set(window_end() + timedelta(seconds=30))
    # On board, acknowledging needs an officer login (limits issue: roles) and the session's CSRF token.
    ack = f"/api/alerts/{alerts[0]['id']}/acknowledge"
    assert client.post(ack, json={"user": "second officer"}).status_code == 401
    from onboard.admin.auth import Users

    Users(r.service.store.engine, hash_method="scrypt:1024:8:1").add(
        "second_officer", "a long enough password", "officer", actor="test"
    )
    tok = client.get("/admin/api/session").get_json()["csrf_token"]
    login = client.post(
        "/admin/login",
        data={"username": "second_officer", "password": "a long enough password", "csrf_token": tok},
    )
    assert login.status_code == 303, login.get_data(as_text=True)
    hdr = {"X-CSRF-Token": client.get("/admin/api/session").get_json()["csrf_token"]}
    resp = client.post(ack, json={"user": "second officer"}, headers=hdr)
    assert resp.status_code == 200, resp.get_data(as_text=True)
    assert client.post(ack, json={"user": "x"}, headers=hdr).status_code == 409
    assert client.post("/api/alerts/99999/acknowledge", json={"user": "x"}, headers=hdr).status_code == 404
    stored = r.service.store.active_alerts()[0]
    assert stored["acknowledged_by"] == "second officer"
    assert stored["acknowledged_utc"] == "2026-03-01T06:21:30Z"  # the service clock, stored
    # page root is served from the same app
    page = client.get("/")
    assert page.status_code == 200 and b"master decides" in page.data.replace(b"\n", b" ")


@pytest.mark.slow
def test_condition_switch_rebuilds_the_engine_on_the_next_cycle(running):
    r = running()
    r.feed_window()
    assert r.cycle_at(window_end()).result.polar is not None
    first = r.service.engine(CONDITION)
    r.service.set_condition("light, high GM", set_by="chief officer")
    assert (
        r.service.provider.current_state()["condition"]["gm_m"] == 3.2
    )  # the page shows the new one at once
    out = r.cycle_at(window_end() + timedelta(seconds=5))
    assert r.service.store.latest_cycle()["condition"] == "light, high GM"
    assert r.service.engine("light, high GM") is not first
    assert r.service.engine("light, high GM").condition.gm == 3.2
    assert out.status in ("ok", "no_advice")
    with pytest.raises(ValueError, match="no loading condition 'ballast'; known: 'deep laden, low GM'"):
        r.service.set_condition("ballast")


def test_restart_prefills_the_window_from_the_voyage_log(tmp_path):
    s = base_settings(tmp_path)
    first = Running(s)
    first.feed_window()
    first.service.stop()
    again = Running(s, start=window_end())  # same database and voyage-log folder, as after a restart
    try:
        # the last 20 min at 2 Hz, both ends included (06:01:00.0 to 06:21:00.0)
        assert again.service.buffer.sample_counts()["roll_deg"] == int(WINDOW_S * 2) + 1
        out = again.cycle_at(window_end())
        assert out.status == "ok", out.reason
        assert any("prefilled" in e["text"] for e in again.service.store.events(kind="service"))
    finally:
        again.service.stop()


@pytest.mark.slow
def test_stored_condition_and_edited_limits_apply_from_the_next_cycle(running):
    from onboard.formats.limitsfile import read_limit_set

    r = running()
    r.feed_window()
    ls_store = r.service.limit_store
    base_ls = read_limit_set(
        ROOT / "config" / "limits" / "nordforsk_merchant.toml",
        vessel_points=r.service.vessel.points_mapping().keys(),
    )
    ls_store.create("deep laden, winter", CONDITION, base_ls, actor="chief officer", reason="test")
    r.service.set_condition("deep laden, winter", set_by="chief officer")
    state = r.service.provider.current_state()
    assert (
        state["condition"]["name"] == "deep laden, winter" and state["condition"]["gm_m"] == 1.2
    )  # base's GM
    out = r.cycle_at(window_end())
    assert out.status == "ok" and r.service.store.latest_cycle()["condition"] == "deep laden, winter"
    first = r.service.engine("deep laden, winter")
    assert first.condition.name == CONDITION and first.limit_set.name == "deep laden, winter"
    # an edit in the limits administration raises the version: the next cycle uses a rebuilt engine
    lim = ls_store.condition("deep laden, winter")["limits"][0]
    ls_store.set_limit(
        "deep laden, winter",
        lim["key"],
        {"value": lim["value"] * 0.5},
        expected_version=lim["version"],
        actor="chief officer",
        reason="tighter roll limit",
    )
    out2 = r.cycle_at(window_end() + timedelta(seconds=5))
    second = r.service.engine("deep laden, winter")
    assert second is not first
    assert second.limit_set.limits[0].value == pytest.approx(0.5 * first.limit_set.limits[0].value)
    assert out2.result.polar.limit_values[0] == pytest.approx(0.5 * out.result.polar.limit_values[0])
    with pytest.raises(ValueError, match="no loading condition 'ballast'"):
        r.service.set_condition("ballast")


def test_build_connects_nothing_until_start(tmp_path):
    # a broker URL on a port where nothing listens: building must neither connect nor start threads
    s = base_settings(tmp_path, broker_url="mqtt://127.0.0.1:9")
    before = threading.active_count()
    service = svc.build_service(s)
    assert service.listener.client is not None and not service.listener.connected
    assert threading.active_count() == before
    assert service.store.active_condition()["condition"] == CONDITION
    service.store.close()


def test_run_command_rejects_bad_settings_with_one_line(tmp_path):
    from onboard.errors import CommandError

    parser = argparse.ArgumentParser()
    svc.add_commands(parser.add_subparsers(dest="command"))
    cfg = tmp_path / "bad.toml"
    cfg.write_text("[analysis]\nwindow_s = 100\ncycle_s = 600\n")
    args = parser.parse_args(["run", "--config", str(cfg)])
    with pytest.raises(CommandError, match=r"window_s = 100.0 is shorter than analysis.cycle_s = 600.0"):
        args.func(args)
    args = parser.parse_args(
        ["run", "--vessel", str(tmp_path / "missing.toml"), "--db", f"sqlite:///{tmp_path}/x.db"]
    )
    with pytest.raises(CommandError, match="missing.toml"):
        args.func(args)


# ------------------------------------------------------------------------------------------- PostgreSQL


@pytest.fixture
def pg_url(pg_base_url):
    """A URL whose connections use a fresh schema (dropped afterwards)."""
    schema_name = "hw_svc_" + uuid.uuid4().hex[:10]
    admin = sa.create_engine(pg_base_url)
    try:
        with admin.begin() as c:
            c.execute(sa.text(f'CREATE SCHEMA "{schema_name}"'))
    except sa.exc.OperationalError as exc:
        admin.dispose()
        raise RuntimeError(f"PostgreSQL at {pg_base_url} not reachable: {exc}") from None
    url = sa.engine.make_url(pg_base_url).update_query_dict({"options": f"-csearch_path={schema_name}"})
    try:
        yield url.render_as_string(hide_password=False)
    finally:
        with admin.begin() as c:
            c.execute(sa.text(f'DROP SCHEMA "{schema_name}" CASCADE'))
        admin.dispose()


@pytest.mark.postgres
def test_cycle_on_postgresql(running, pg_url):
    r = running(db_url=pg_url)
    r.feed_window()
    assert r.cycle_at(window_end()).status == "ok"
    r.cycle_at(window_end() + timedelta(seconds=120))
    cycles = r.service.store.history(24, now=window_end() + timedelta(seconds=300))
    assert cycles["status"] == ["ok", "no_advice"]
    _check_estimate(r.service.store.latest_ok_cycle()["sea_state"])
    assert r.service.store.engine.dialect.name == "postgresql"
    schema("State").validate(r.service.provider.current_state())
    r.service.store.close()


def test_identified_roll_rides_in_the_stored_sea_state_and_reaches_the_page_state(running):
    """The roll identified from the measured roll (optional ``sea_state.roll``): stored with the estimate
    (no schema change), served under the contract's schema, kept out of the wave systems."""
    from dataclasses import replace

    from estimator.hull import gm_from_roll_period
    from estimator.pipeline import GM_WARNING, RollPeriodCheck
    from onboard.live.stateview import ROLL_LABEL, sea_state_record

    r = running()
    r.feed_window()
    out = r.cycle_at(window_end())
    assert out.status == "ok", out.reason
    state = r.service.provider.current_state()
    schema("State").validate(state)
    # the real cycle: the field is there exactly when the window allowed the identification
    assert ("roll" in state["sea_state"]) == (out.result.roll_identified() is not None)

    # a window whose measured roll is 10 % shorter than the condition's 20.56 s: GM ∝ T⁻² (IMO IS Code 2008
    # roll-period formula, estimator.hull.gm_from_roll_period), so the implied GM is 1/0.81 of the
    # condition's, beyond the 20 % warning
    vessel, cond = r.service.vessel, r.service.engine(CONDITION).condition
    measured = 0.9 * cond.roll_period
    gm_implied = float(gm_from_roll_period(vessel.beam, cond.draft, vessel.lpp, measured))
    assert abs(gm_implied / cond.gm - 1) > GM_WARNING  # the premise: formula, not the code under test
    rc = RollPeriodCheck(measured, cond.roll_period, gm_implied, True, "note", 0.062, True, True)
    result = replace(out.result, analysis=replace(out.result.analysis, roll_check=rc))
    sea = sea_state_record(result)
    assert [s["label"] for s in sea["systems"]].count(ROLL_LABEL) == 1
    later = window_end() + timedelta(minutes=1)
    r.service.store.add_cycle(started_utc=later, finished_utc=later, status="ok",
                                 window_start_utc=later - timedelta(seconds=1200), window_end_utc=later,
                                 condition=CONDITION, sea_state=sea)
    r.clock.set(later)
    state = r.service.provider.current_state()
    schema("State").validate(state)
    roll = state["sea_state"]["roll"]
    assert roll["period_measured_s"] == pytest.approx(measured, abs=0.005)  # stored to 0.01 s
    assert roll["period_condition_s"] == pytest.approx(cond.roll_period, abs=0.005)
    assert roll["implied_gm_m"] == pytest.approx(gm_implied, abs=0.005) and roll["gm_warning"] is True
    assert roll["damping"] == pytest.approx(0.062, abs=5e-4)
    assert all(s["label"] != ROLL_LABEL for s in state["sea_state"]["systems"])
    # estimates.csv carries the same identification
    row = result.estimate_row()
    assert row["roll_gm_warning"] == 1 and row["roll_period_condition_s"] == round(cond.roll_period, 2)
