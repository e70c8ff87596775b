"""The bridge page's JSON API, with the Flask test client, checked against onboard/live/web/openapi.yaml."""

from __future__ import annotations

import copy
from datetime import UTC, datetime, timedelta
from importlib import resources

import pytest
import yaml
from jsonschema import Draft202012Validator
from jsonschema.exceptions import ValidationError
from referencing import Registry, Resource
from referencing.jsonschema import DRAFT202012
from web_fixtures import MARGIN, NOW, build_state, make_provider, utilisation_grids, zone_grids

from onboard.live.web import DEFAULTS, InMemoryStateProvider, check_state, create_app, format_utc, parse_utc
from onboard.live.web.api import state_etag

SPEC = yaml.safe_load(resources.files("onboard.live.web").joinpath("openapi.yaml").read_text(encoding="utf-8"))
SPEC_URI = "urn:bridge-openapi"
REGISTRY = Registry().with_resource(SPEC_URI, Resource.from_contents(SPEC, default_specification=DRAFT202012))


def validator(name: str) -> Draft202012Validator:
    """A JSON Schema 2020-12 validator for components/schemas/<name> (OpenAPI 3.1 schemas are 2020-12)."""
    return Draft202012Validator({"$ref": f"{SPEC_URI}#/components/schemas/{name}"}, registry=REGISTRY)


@pytest.fixture
def provider():
    return make_provider()


@pytest.fixture
def app(provider):
    return create_app({"TESTING": True}, provider)


@pytest.fixture
def client(app):
    return app.test_client()


# ------------------------------------------------------------------------------------------ the schema
def test_openapi_document_is_served_and_describes_every_route(client, app):
    response = client.get("/api/openapi.yaml")
    assert response.status_code == 200
    assert response.mimetype == "application/yaml"
    served = yaml.safe_load(response.data)
    assert served == SPEC
    assert served["openapi"].startswith("3.1")
    routes = {
        r.rule.replace("<int:alert_id>", "{alert_id}")
        for r in app.url_map.iter_rules()
        if r.rule.startswith("/api/")
    }
    assert routes == set(served["paths"])
    # The contract text (notes/state_contract.md) is carried in the description.
    assert "Bridge state JSON contract" in served["info"]["description"]
    Draft202012Validator.check_schema(served["components"]["schemas"]["State"])


def test_state_matches_the_schema(client):
    response = client.get("/api/state")
    assert response.status_code == 200
    validator("State").validate(response.get_json())


def test_the_schema_rejects_what_the_contract_forbids():
    # Guards against a vacuous schema: each of these breaks one rule of the contract.
    good = build_state()
    validator("State").validate(good)
    breakages = {
        "missing key": lambda s: s.pop("advice"),
        "unknown advice status": lambda s: s["advice"].update(status="maybe"),
        "unknown confidence level": lambda s: s["sea_state"].update(confidence_level="so-so"),
        "heading 360": lambda s: s["ship"].update(heading_deg=360.0),
        "time without Z": lambda s: s.update(generated_utc="2026-12-01T03:00:00"),
        "zone grid of numbers": lambda s: s["polar"]["zones"].update(surf_riding=[[1]]),
        "sensor status unknown": lambda s: s["sensors"][0].update(status="fine"),
        "missing zone": lambda s: s["polar"]["zones"].pop("parametric_roll"),
    }
    for name, breaking in breakages.items():
        bad = copy.deepcopy(good)
        breaking(bad)
        with pytest.raises(ValidationError):
            validator("State").validate(bad)
        assert name  # the dict key documents which rule broke


def test_waiting_state_before_any_data_matches_the_schema_and_says_so():
    client = create_app({"TESTING": True}).test_client()
    state = client.get("/api/state").get_json()
    validator("State").validate(state)
    assert state["status"] == {"advice_available": False, "reason": "no data received from the service yet"}
    assert state["advice"]["status"] == "unavailable"
    assert state["ship"]["stale"] is True


# ------------------------------------------------------------------------------------------ ETag
def test_state_etag_gives_304_when_unchanged_and_ignores_ages():
    clock = {"now": NOW}
    provider = make_provider(clock=lambda: clock["now"], ship_stale_after_s=600.0)
    client = create_app({"TESTING": True}, provider).test_client()
    first = client.get("/api/state")
    tag = first.headers["ETag"]
    assert tag.startswith('W/"')
    assert first.headers["Cache-Control"] == "no-cache"
    again = client.get("/api/state", headers={"If-None-Match": tag})
    assert again.status_code == 304 and again.data == b""
    # Ten seconds later only the ages differ: same weak tag (ages are excluded), still 304.
    clock["now"] = NOW + timedelta(seconds=10)
    later = client.get("/api/state", headers={"If-None-Match": tag})
    assert later.status_code == 304
    assert client.get("/api/state").get_json()["ship"]["age_s"] == pytest.approx(11.0)
    # An acknowledgement changes the state: new tag, full answer.
    assert client.post("/api/alerts/1/acknowledge", json={"user": "OOW"}).status_code == 200
    changed = client.get("/api/state", headers={"If-None-Match": tag})
    assert changed.status_code == 200 and changed.headers["ETag"] != tag


def test_etag_changes_when_a_part_turns_stale():
    clock = {"now": NOW}
    provider = make_provider(clock=lambda: clock["now"], ship_stale_after_s=15.0)
    client = create_app({"TESTING": True}, provider).test_client()
    tag = client.get("/api/state").headers["ETag"]
    clock["now"] = NOW + timedelta(seconds=20)  # ship data now 21 s old, beyond 15 s
    response = client.get("/api/state", headers={"If-None-Match": tag})
    assert response.status_code == 200
    assert response.get_json()["ship"]["stale"] is True


def test_state_etag_is_stable_and_content_sensitive():
    state = build_state()
    assert state_etag(state) == state_etag(copy.deepcopy(state))
    other = copy.deepcopy(state)
    other["ship"]["age_s"] = 99.0
    assert state_etag(other) == state_etag(state)
    other["ship"]["heading_deg"] = 256.0
    assert state_etag(other) != state_etag(state)


# ------------------------------------------------------------------------------------------ history
def test_history_matches_the_schema_and_filters_by_hours(client):
    six = client.get("/api/history?hours=6")
    assert six.status_code == 200
    data = six.get_json()
    validator("History").validate(data)
    assert len(data["times_utc"]) == 37  # fixture: every 10 min over 6 h, both ends included
    assert data["times_utc"][-1] == format_utc(NOW)
    lengths = {len(v) for v in data.values()}
    assert lengths == {37}
    one = client.get("/api/history?hours=1").get_json()
    assert one["times_utc"][0] == "2026-12-01T02:00:00Z" and len(one["times_utc"]) == 7
    default = client.get("/api/history").get_json()
    assert len(default["times_utc"]) == 37  # DEFAULTS["BRIDGE_HISTORY_HOURS"] == 6
    assert DEFAULTS["BRIDGE_HISTORY_HOURS"] == 6


@pytest.mark.parametrize("hours", ["0", "-1", "abc", "nan", "inf", "73"])
def test_history_rejects_bad_hours(client, hours):
    response = client.get(f"/api/history?hours={hours}")
    assert response.status_code == 400
    validator("Error").validate(response.get_json())
    assert "hours" in response.get_json()["error"] and repr(hours) in response.get_json()["error"]


def test_history_trend_agrees_with_the_state(client):
    # The last trend sample is the utilisation of the own-ship cell and the present Hs.
    history = client.get("/api/history?hours=6").get_json()
    state = client.get("/api/state").get_json()
    assert history["hs_m"][-1] == state["sea_state"]["hs_m"]
    assert history["utilisation"][-1] == pytest.approx(state["advice"]["utilisation_now"], abs=1e-3)


# ------------------------------------------------------------------------------------------ alerts
def test_acknowledge_stores_time_and_user_then_409_then_404(client, provider):
    response = client.post("/api/alerts/1/acknowledge", json={"user": "  Chief Officer B. Example "})
    assert response.status_code == 200
    assert response.get_json() == {"ok": True}
    validator("Ok").validate(response.get_json())
    alert = [a for a in client.get("/api/state").get_json()["alerts"] if a["id"] == 1][0]
    assert alert["acknowledged"] is True
    assert alert["acknowledged_by"] == "Chief Officer B. Example"
    assert alert["acknowledged_utc"] == format_utc(NOW)
    again = client.post("/api/alerts/1/acknowledge", json={"user": "someone else"})
    assert again.status_code == 409
    validator("Error").validate(again.get_json())
    assert [a for a in provider.alerts() if a["id"] == 1][0]["acknowledged_by"] == "Chief Officer B. Example"
    missing = client.post("/api/alerts/999/acknowledge", json={"user": "OOW"})
    assert missing.status_code == 404
    assert "999" in missing.get_json()["error"]


@pytest.mark.parametrize(
    ("body", "expected"),
    [
        (None, "body: expected a JSON object"),
        ({}, "user: expected a name"),
        ({"user": ""}, "user: expected a name"),
        ({"user": "   "}, "user: expected a name"),
        ({"user": 7}, "user: expected a name"),
        ({"user": "x" * 65}, "1 to 64 characters"),
        ({"user": "a\x07b"}, "control characters"),
    ],
)
def test_acknowledge_rejects_bad_bodies(client, provider, body, expected):
    response = (
        client.post("/api/alerts/1/acknowledge", json=body)
        if body is not None
        else client.post("/api/alerts/1/acknowledge", data="not json", content_type="text/plain")
    )
    assert response.status_code == 400
    assert expected in response.get_json()["error"]
    assert not provider.alerts()[0]["acknowledged"]


def test_acknowledge_needs_post(client):
    assert client.get("/api/alerts/1/acknowledge").status_code == 405


# ------------------------------------------------------------------------------------------ page
def test_page_is_self_contained(client):
    response = client.get("/")
    assert response.status_code == 200
    html = response.get_data(as_text=True)
    csp = response.headers["Content-Security-Policy"]
    assert "default-src 'self'" in csp and "script-src 'self'" in csp
    # No external resource: every src/href is local (a path) or the empty data: icon.
    import re

    refs = re.findall(r'(?:src|href)="([^"]+)"', html)
    assert refs, "the page links its script and stylesheet"
    assert all(r.startswith("/") or r.startswith("data:") for r in refs), refs
    assert "not type-approved" in html and "the master decides" in html  # advisor.advice.ADVISORY_NOTICE
    for static in ("/static/bridge.js", "/static/bridge.css"):
        with client.get(static) as response:
            body = response.get_data(as_text=True)
        assert "http://" not in body.replace("http://www.w3.org/2000/svg", "")
        assert "https://" not in body


# ------------------------------------------------------------------------------------------ config
def test_create_app_reads_defaults_then_mapping():
    app = create_app({"BRIDGE_POLL_INTERVAL_MS": 1000})
    assert app.config["BRIDGE_POLL_INTERVAL_MS"] == 1000
    assert app.config["BRIDGE_HISTORY_HOURS"] == DEFAULTS["BRIDGE_HISTORY_HOURS"]
    assert isinstance(app.extensions["bridge_provider"], InMemoryStateProvider)
    html = app.test_client().get("/").get_data(as_text=True)
    assert 'data-poll-ms="1000"' in html


@pytest.mark.parametrize(
    ("config", "match"),
    [
        (
            {"BRIDGE_POLL_INTERVAL_MS": 50},
            r"BRIDGE_POLL_INTERVAL_MS: expected a number in \[250, 10000\], got 50",
        ),
        ({"BRIDGE_POLL_INTERVAL_MS": "fast"}, r"BRIDGE_POLL_INTERVAL_MS: .* got 'fast'"),
        (
            {"BRIDGE_HISTORY_HOURS": 48, "BRIDGE_HISTORY_MAX_HOURS": 24},
            "must not exceed BRIDGE_HISTORY_MAX_HOURS",
        ),
        ({"BRIDGE_CONNECTION_LOST_AFTER_MS": 3000}, "at least twice BRIDGE_POLL_INTERVAL_MS"),
    ],
)
def test_create_app_rejects_bad_settings(config, match):
    with pytest.raises(ValueError, match=match):
        create_app(config)


def test_importing_the_package_builds_nothing():
    import importlib

    import onboard.live.web as web

    module = importlib.reload(web)
    assert not hasattr(module, "app")
    assert callable(module.create_app) and callable(module.serve)


def test_serve_runs_the_app_under_waitress():
    # A real server in a child process (serve() blocks), asked over loopback, then stopped.
    import json
    import socket
    import subprocess
    import sys
    import time
    import urllib.request

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    code = (
        "from onboard.live.web import create_app, serve; "
        f"serve(create_app(), host='127.0.0.1', port={port}, threads=2)"
    )
    proc = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 20
        while True:
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/api/state", timeout=2) as response:
                    body = json.loads(response.read())
                    server = response.headers["Server"]
                break
            except OSError:
                if time.monotonic() > deadline or proc.poll() is not None:
                    raise
                time.sleep(0.1)
        assert server == "bridge"  # waitress sends its `ident`
        assert body["status"]["advice_available"] is False
    finally:
        proc.terminate()
        proc.wait(10)
        proc.stderr.close()


def test_serve_rejects_bad_arguments():
    app = create_app()
    from onboard.live.web import serve

    with pytest.raises(ValueError, match="threads: expected a positive integer, got 0"):
        serve(app, threads=0)
    with pytest.raises(ValueError, match=r"port: expected an integer in \[0, 65535\], got 70000"):
        serve(app, port=70000)


# ------------------------------------------------------------------------------------------ provider
def test_provider_recomputes_ages_and_staleness():
    clock = {"now": NOW}
    provider = make_provider(
        clock=lambda: clock["now"], ship_stale_after_s=15.0, sea_state_stale_after_s=1800.0
    )
    state = provider.current_state()
    assert state["ship"]["age_s"] == 1.0 and state["ship"]["stale"] is False
    assert state["sea_state"]["age_s"] == 240.0 and state["sea_state"]["stale"] is False
    assert state["ship"]["stale_after_s"] == 15.0 and state["sea_state"]["stale_after_s"] == 1800.0
    clock["now"] = NOW + timedelta(minutes=30)
    state = provider.current_state()
    assert state["ship"]["stale"] is True
    assert state["sea_state"]["age_s"] == 2040.0 and state["sea_state"]["stale"] is True


def test_provider_keeps_acknowledgements_across_new_states():
    provider = make_provider()
    assert provider.acknowledge_alert(1, "OOW") == "ok"
    provider.set_state(build_state())  # the next cycle's state carries no alerts of its own
    assert provider.current_state()["alerts"][0]["acknowledged_by"] == "OOW"
    assert provider.acknowledge_alert(1, "OOW") == "already"
    assert provider.acknowledge_alert(42, "OOW") == "unknown"
    assert provider.clear_alert(1) is True and provider.clear_alert(1) is False
    with pytest.raises(ValueError, match="user: expected a non-empty name"):
        provider.acknowledge_alert(2, " ")


def test_provider_drops_oldest_acknowledged_alerts_first():
    provider = InMemoryStateProvider(clock=lambda: NOW, max_alerts=2)
    first = provider.raise_alert(level="caution", kind="sensors", text="first")
    second = provider.raise_alert(level="warning", kind="utilisation", text="second")
    provider.acknowledge_alert(second, "OOW")
    third = provider.raise_alert(level="caution", kind="sensors", text="third")
    assert [a["id"] for a in provider.alerts()] == [first, third]


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (
            {"level": "alarm", "kind": "sensors", "text": "x"},
            "alert level: expected 'warning' or 'caution', got 'alarm'",
        ),
        (
            {"level": "caution", "kind": "weather", "text": "x"},
            "alert kind: expected 'utilisation' or 'sensors'",
        ),
        ({"level": "caution", "kind": "sensors", "text": " "}, "alert text: expected a non-empty sentence"),
    ],
)
def test_provider_rejects_bad_alerts(kwargs, match):
    with pytest.raises(ValueError, match=match):
        InMemoryStateProvider().raise_alert(**kwargs)


def test_provider_history_rejects_disorder_and_bad_values():
    provider = InMemoryStateProvider(clock=lambda: NOW)
    provider.append_history(NOW, hs_m=5.0, utilisation=0.9, heading_deg=10.0, stw_kn=12.0, confidence=None)
    with pytest.raises(ValueError, match="samples must be in time order; 2026-12-01T02:59:00Z is before"):
        provider.append_history(
            NOW - timedelta(minutes=1),
            hs_m=5.0,
            utilisation=0.9,
            heading_deg=10.0,
            stw_kn=12.0,
            confidence=0.8,
        )
    with pytest.raises(ValueError, match="history hs_m: expected a finite number or None, got nan"):
        provider.append_history(
            NOW, hs_m=float("nan"), utilisation=0.9, heading_deg=10.0, stw_kn=12.0, confidence=0.8
        )
    with pytest.raises(ValueError, match="hours: expected a positive number of hours, got 0"):
        provider.history(0)
    assert provider.history(1)["confidence"] == [None]


def test_provider_rejects_bad_settings():
    with pytest.raises(ValueError, match="ship_stale_after_s: expected a positive number of seconds, got -1"):
        InMemoryStateProvider(ship_stale_after_s=-1)
    with pytest.raises(ValueError, match="history_max_samples: expected a positive integer, got 0"):
        InMemoryStateProvider(history_max_samples=0)


@pytest.mark.parametrize(
    ("breaking", "match"),
    [
        (lambda s: s.pop("polar"), r"state: missing keys \['polar'\]"),
        (
            lambda s: s.update(generated_utc="2026-12-01 03:00"),
            "generated_utc: expected an ISO 8601 UTC time",
        ),
        (lambda s: s["ship"].update(time_utc=None), "ship.time_utc: expected an ISO 8601 UTC time"),
        (
            lambda s: s["polar"]["utilisation"].pop(),
            r"polar.utilisation: expected 72 rows \(one per heading\), got 71",
        ),
        (
            lambda s: s["polar"]["zones"]["surf_riding"][3].pop(),
            r"polar.zones.surf_riding\[3\]: expected 23 values \(one per speed\), got 22",
        ),
        (lambda s: s.update(alerts=None), "'alerts' and 'sensors' must be lists"),
    ],
)
def test_check_state_names_the_field(breaking, match):
    state = build_state()
    breaking(state)
    with pytest.raises(ValueError, match=match):
        check_state(state)
    with pytest.raises(ValueError, match=match):
        InMemoryStateProvider().set_state(state)


def test_utc_helpers_round_trip():
    moment = datetime(2026, 12, 1, 3, 0, 0, 250000, tzinfo=UTC)
    assert format_utc(moment) == "2026-12-01T03:00:00.250Z"
    assert parse_utc(format_utc(moment), field="t") == moment
    with pytest.raises(ValueError, match="has no timezone"):
        format_utc(datetime(2026, 12, 1))
    with pytest.raises(
        ValueError, match="t: expected an ISO 8601 UTC time ending in 'Z', got '2026-13-01T00:00:00Z'"
    ):
        parse_utc("2026-13-01T00:00:00Z", field="t")


# ------------------------------------------------------------------------------------------ the fixture
def test_fixture_zones_follow_the_circ1228_relations():
    # Check values CIRC1228_* of tests/check_values.py (derived, not published), rebuilt on the fixture's
    # own numbers: surf-riding threshold in following seas 1.8·√L = 1.8·√120 = 19.72 kn (α = 180°), so the
    # heading straight down-sea (wave_from 50° -> heading 230°) is in the zone at 20 kn and not at 19 kn.
    zones = zone_grids()
    i = 230 // 5
    assert zones["surf_riding"][i, 20] and not zones["surf_riding"][i, 19]
    # Head seas (heading 050°) can never surf-ride (135° < α < 225° only).
    assert not zones["surf_riding"][50 // 5].any()
    # Successive high waves, following seas: V·cos(180° − α) in [1.333·TW, 2.0·TW]
    # = [15.06, 22.6] kn for TW = 11.3 s.
    assert zones["successive_waves"][i, 16] and not zones["successive_waves"][i, 15]


def test_fixture_utilisation_is_conservative_and_advice_consistent():
    conservative, nominal, _ = utilisation_grids(0.82)
    assert (conservative >= nominal).all()
    state = build_state()
    advice = state["advice"]
    assert advice["utilisation_now"] > MARGIN >= advice["utilisation_advised"]
    i = int(advice["advised_heading_deg"] // 5)
    j = int(advice["advised_stw_kn"])
    assert state["polar"]["utilisation"][i][j] == pytest.approx(advice["utilisation_advised"], abs=1e-3)
