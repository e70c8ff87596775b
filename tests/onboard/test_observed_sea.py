"""The watch's visual sea-state estimate: form on the administration page, who entered it, the page
state's ``observed_sea`` and the fallback advice when the motions cannot be used.

Sources: form ranges and messages are onboard.admin.observedsea's own; the state is validated against the
page contract (onboard/live/web/openapi.yaml, jsonschema); the fallback advice is checked against linear
theory (responses scale with the wave height: utilisation of an RMS-type criterion doubles when Hs
doubles, an analytic property of the linear model, Faltinsen 1990 ch. 2) and the observed spectrum's
Hs against sqrt(Hs1^2 + Hs2^2) (m0 of independent systems add; definition Hs = 4 sqrt(m0)).
"""

from __future__ import annotations

import math
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest
from admin_fixtures import FAST_HASH, VESSEL_FILE
from web_fixtures import make_provider

from estimator.observed import ObservedSystem, observed_spectrum
from onboard.admin import audit
from onboard.admin.auth import Users
from onboard.admin.limitstore import LimitStore
from onboard.admin.observedsea import (
    ACTION,
    ObservationError,
    latest_observation,
    parse_observation,
    record_observation,
)
from onboard.core.store import make_engine
from onboard.formats.vessel import load_vessel
from onboard.live.web import create_app

GOOD = {
    "label1": "wind sea",
    "hs1_m": "3.5",
    "period1_s": "8",
    "from1_deg": "250",
    "label2": "swell",
    "hs2_m": "2",
    "period2_s": "13",
    "from2_deg": "300",
    "note": "from the bridge wing",
}


def test_parse_good_and_bad_forms():
    systems, note = parse_observation(GOOD)
    assert [s["label"] for s in systems] == ["wind sea", "swell"] and note == "from the bridge wing"
    assert systems[0] == {"label": "wind sea", "hs_m": 3.5, "period_s": 8.0, "wave_from_deg": 250.0}
    one = {k: v for k, v in GOOD.items() if not k.endswith("2") and "2_" not in k}
    assert len(parse_observation(one)[0]) == 1
    bad = [
        ({**GOOD, "hs1_m": "35"}, r"hs1_m = '35': out of range; allowed: 0.1 to 25"),
        ({**GOOD, "period2_s": "abc"}, r"period2_s = 'abc': not a number"),
        ({**GOOD, "from1_deg": ""}, r"system 1: wave_from_deg missing"),
        ({**GOOD, "label2": "wind sea"}, r"two systems both labelled 'wind sea'"),
        ({**GOOD, "label1": "tsunami"}, r"label1 = 'tsunami': unknown"),
        ({"note": "x"}, r"no wave system given"),
        ({**GOOD, "note": "a\x00b"}, r"note: .*control characters"),
    ]
    for form, match in bad:
        with pytest.raises(ObservationError, match=match) as ei:
            parse_observation(form)
        assert "\n" not in str(ei.value)


def test_observed_spectrum_hs_adds_in_m0():
    sp = observed_spectrum(
        [ObservedSystem("wind sea", 3.0, 8.0, 1.0), ObservedSystem("swell", 2.0, 12.0, 2.0)],
        np.linspace(0.05, 4.0, 400),
    )
    assert sp.hs() == pytest.approx(math.hypot(3.0, 2.0), rel=0.01)  # 1 % for the tail beyond 4 rad/s


@pytest.fixture()
def engine(tmp_path):
    e = make_engine(f"sqlite:///{tmp_path / 'onboard.db'}")
    yield e
    e.dispose()


@pytest.fixture()
def client(engine):
    vessel = load_vessel(VESSEL_FILE)
    LimitStore(engine, vessel).load_vessel_conditions(actor="cli:test")  # also creates the admin tables
    Users(engine, hash_method=FAST_HASH).add("oow", "officer pass 1", "officer", actor="cli:test")
    app = create_app(
        {"TESTING": True, "ADMIN_DB": engine, "ADMIN_VESSEL": vessel, "ADMIN_PASSWORD_METHOD": FAST_HASH},
        make_provider(),
    )
    return app.test_client()


def _token(client):
    return client.get("/admin/api/session").get_json()["csrf_token"]


def test_form_needs_an_officer_and_records_who(client, engine):
    r = client.post("/admin/observed-sea", data={**GOOD, "csrf_token": _token(client)})
    assert r.status_code == 401  # not logged in: nothing recorded
    assert latest_observation(engine, datetime.now(UTC)) is None
    tok = _token(client)
    r = client.post("/admin/login", data={"username": "oow", "password": "officer pass 1", "csrf_token": tok})
    assert r.status_code == 303
    r = client.post("/admin/observed-sea", data={**GOOD, "hs1_m": "40", "csrf_token": _token(client)})
    assert r.status_code == 400 and "hs1_m = &#39;40&#39;: out of range" in r.get_data(as_text=True)
    r = client.post("/admin/observed-sea", data={**GOOD, "csrf_token": _token(client)})
    assert r.status_code == 303
    page = client.get("/admin/observed-sea").get_data(as_text=True)
    assert "Entered by <strong>oow</strong>" in page and "from the bridge wing" in page
    obs = latest_observation(engine, datetime.now(UTC))
    assert obs["entered_by"] == "oow" and [s["hs_m"] for s in obs["systems"]] == [3.5, 2.0]
    entries = [e for e in audit.entries(engine) if e["action"] == ACTION]
    assert len(entries) == 1 and entries[0]["actor"] == "oow"
    assert audit.verify_chain(engine).ok  # kept in the hash-chained, append-only trail


def test_observation_expires(engine):
    LimitStore(engine, load_vessel(VESSEL_FILE))
    t0 = datetime(2026, 1, 1, 12, tzinfo=UTC)
    systems, note = parse_observation(GOOD)
    record_observation(engine, systems=systems, note=note, actor="oow", client="test", when=t0)
    assert latest_observation(engine, t0 + timedelta(hours=5))["age_s"] == pytest.approx(5 * 3600)
    assert latest_observation(engine, t0 + timedelta(hours=7)) is None


def test_fallback_advice_in_the_state_when_motions_cannot_be_used(tmp_path):
    from test_service import schema

    from onboard.live import service as svc
    from onboard.live.settings import ServiceSettings

    s = ServiceSettings(
        vessel_file=VESSEL_FILE,
        broker_url=None,
        db_url=f"sqlite:///{tmp_path / 's.sqlite'}",
        voyage_log_dir=tmp_path / "log",
        voyage_log_fsync=False,
    )
    t0 = datetime(2026, 1, 1, 12, tzinfo=UTC)
    clock = svc.ReplayClock(t0, rate=0.0)
    service = svc.build_service(s, clock=clock, wall_clock=None)
    try:
        # own ship only (no motion channels): the cycle cannot advise from the motions
        ms = int(t0.timestamp() * 1000)
        service.buffer.append_rows(
            [(ms - 1000 * k, {"heading_deg": 250.0, "stw_kn": 12.0}) for k in range(5)]
        )
        LimitStore(service.store.engine, service.vessel)
        systems, note = parse_observation(GOOD)
        record_observation(service.store.engine, systems=systems, note=note, actor="oow", client="t", when=t0)
        out = service.run_cycle(t0)
        assert out.status != "ok"
        state = service.provider.current_state()
        obs = state["observed_sea"]
        assert obs["entered_by"] == "oow" and len(obs["systems"]) == 2
        fb = obs["fallback_advice"]
        assert fb is not None and fb["sentence"].startswith("From the watch's visual estimate")
        # and the chart scored in the observed sea, on the same heading × speed grid as the page's polar
        fp = obs["fallback_polar"]
        assert fp is not None and len(fp["utilisation"]) == len(fp["headings_deg"])
        assert state["polar"] is None  # the measured chart is not faked either
        assert state["advice"]["status"] == "unavailable"  # the motion-based advice is not faked
        schema("State").validate(state)  # the page contract, with the optional observed_sea

        # linear theory: doubling Hs of the observation doubles the utilisation (RMS-type criteria)
        eng = service.engine(service.active_condition())
        one = [ObservedSystem("wind sea", 2.0, 9.0, math.radians(250.0))]
        two = [ObservedSystem("wind sea", 4.0, 9.0, math.radians(250.0))]
        _, a1 = eng.advise_from_observation(one, math.radians(250.0), 12 * 0.5144)
        _, a2 = eng.advise_from_observation(two, math.radians(250.0), 12 * 0.5144)
        assert a2.utilisation_now == pytest.approx(2.0 * a1.utilisation_now, rel=0.02)
    finally:
        service.stop()
        service.store.close()


def test_recent_observation_is_the_estimators_prior_and_the_page_says_so(tmp_path):
    # The watch's estimate is used as the estimator's prior (issue 15 item 3) only while recent
    # (EngineSettings.prior_max_age_s, 3 h) and entered under the active loading condition; the page state
    # says who entered it and when, validated against the page contract (openapi.yaml, jsonschema).
    from test_service import (
        T0,
        TRUE_FROM_DEG,
        TRUE_HS,
        TRUE_TP,
        Running,
        base_settings,
        schema,
        simulated_frame,
        window_end,
    )

    from onboard.core.engine import WatchObservation

    r = Running(base_settings(tmp_path))
    try:
        svc_ = r.service
        LimitStore(svc_.store.engine, svc_.vessel)
        form = {"label1": "swell", "hs1_m": str(TRUE_HS), "period1_s": str(TRUE_TP), "from1_deg": str(TRUE_FROM_DEG)}
        systems, note = parse_observation(form)
        entered = T0 + timedelta(minutes=5)
        record_observation(svc_.store.engine, systems=systems, note=note, actor="oow", client="t", when=entered)
        r.feed_window()
        out = r.cycle_at(window_end())
        assert out.status == "ok", out.reason
        assert out.result.prior["entered_by"] == "oow" and out.result.estimate.prior_used
        state = svc_.provider.current_state()
        prior = state["sea_state"]["prior"]
        assert prior["entered_by"] == "oow" and prior["entered_utc"] == "2026-03-01T06:05:00Z"
        assert prior["sentence"].startswith("The watch's estimate was used as a prior (entered by oow at 06:05")
        schema("State").validate(state)

        # an old observation is not used (age limit 3 h at the end of the window)
        eng = svc_.engine(svc_.active_condition())
        obs = svc_._watch_observation(window_end())
        assert obs is not None and obs.entered_by == "oow"
        assert eng.prior_for(obs, entered + timedelta(hours=2.9)) is not None
        assert eng.prior_for(obs, entered + timedelta(hours=3.1)) is None
        old = WatchObservation(obs.systems, "oow", window_end() - timedelta(hours=4))
        res = eng.analyse(simulated_frame(), observation=old)
        assert res.prior is None and not res.estimate.prior_used
        # nor one entered before the active loading condition was set (a new voyage or load)
        svc_.store.set_condition(svc_.active_condition(), set_by="test", when=entered + timedelta(minutes=1))
        assert svc_._watch_observation(window_end()) is None
    finally:
        r.service.stop()
        r.service.store.close()
