"""Alert states and aggregation, the broker link shown on the page, and the advisor's optional fields
(onboard.live.alerts.present_alerts, Listener.link_health, StoreStateProvider)."""

from __future__ import annotations

import socket
import time
from datetime import UTC, datetime, timedelta

from onboard.core.store import Store
from onboard.formats.vessel import load_vessel
from onboard.live.alerts import NO_ADVICE_TAIL, AlertManager, alert_state, present_alerts
from onboard.live.buffer import SampleBuffer
from onboard.live.listener import BrokerConfig, Listener
from onboard.live.settings import ROOT
from onboard.live.stateview import StoreStateProvider

T0 = datetime(2026, 12, 1, 3, 0, tzinfo=UTC)


def _alert(i, text, *, level="warning", kind="sensors", minutes=0, ack=False, cleared=False):
    t = (T0 + timedelta(minutes=minutes)).isoformat().replace("+00:00", "Z")
    return {
        "id": i,
        "level": level,
        "kind": kind,
        "text": text,
        "raised_utc": t,
        "acknowledged": ack,
        "acknowledged_utc": t if ack else None,
        "acknowledged_by": "A. Example" if ack else None,
        "cleared_utc": t if cleared else None,
    }


def test_alert_states_follow_bridge_alert_management():
    # IMO MSC.302(87) alert states (from memory): active-unacknowledged, active-acknowledged,
    # rectified-unacknowledged; a rectified and acknowledged alert has nothing left to show.
    assert alert_state(_alert(1, "x")) == "active_unacknowledged"
    assert alert_state(_alert(1, "x", ack=True)) == "active_acknowledged"
    assert alert_state(_alert(1, "x", cleared=True)) == "rectified_unacknowledged"
    assert present_alerts([_alert(1, "x", ack=True, cleared=True)]) == []


def test_identical_alerts_aggregate_and_a_rectified_alert_stops_claiming_no_advice():
    silent = "Warning: sensors silent: roll_deg since 02:41Z." + NO_ADVICE_TAIL
    rows = present_alerts(
        [
            _alert(1, silent, minutes=0, cleared=True),
            _alert(2, silent, minutes=10, cleared=True),
            _alert(3, silent, minutes=20, cleared=True),
            _alert(4, "Caution: sensors missing acc_x_ms2.", level="caution", minutes=5),
        ]
    )
    assert len(rows) == 2
    rect = [r for r in rows if r["state"] == "rectified_unacknowledged"][0]
    assert rect["count"] == 3 and rect["ids"] == [1, 2, 3]
    assert rect["first_raised_utc"] == "2026-12-01T03:00:00Z" and rect["raised_utc"] == "2026-12-01T03:20:00Z"
    assert "No advice" not in rect["text"] and rect["text"].startswith("Warning: sensors silent")
    active = [r for r in rows if r["state"] == "active_unacknowledged"][0]
    assert active["count"] == 1 and active["ids"] == [4]


def test_rectified_sensor_alert_is_served_as_rectified_by_the_store_provider(tmp_path):
    store = Store.sqlite(str(tmp_path / "a.sqlite"))
    now = [T0]
    am = AlertManager(store, sensor_clear_s=30.0, clock=lambda: now[0])
    am.update_sensors({"roll_deg": "silent"}, advice_possible=False, summary="silent: roll_deg")
    now[0] = T0 + timedelta(seconds=5)
    am.update_sensors({}, advice_possible=True)
    now[0] = T0 + timedelta(seconds=40)
    am.update_sensors({}, advice_possible=True)  # healthy for 35 s: cleared, not acknowledged
    vessel = load_vessel(ROOT / "config" / "demo_vessel.toml")
    state = StoreStateProvider(store, vessel=vessel, clock=lambda: now[0]).current_state()
    (row,) = state["alerts"]
    from test_service import schema

    schema("State").validate(state)
    assert row["state"] == "rectified_unacknowledged" and row["rectified_utc"] == "2026-12-01T03:00:40Z"
    assert "No advice" not in row["text"]
    store.close()


class _LiveLink:
    def __init__(self, link):
        self.link = link

    def live_link(self):
        return self.link

    def live_ship(self):
        return None

    def live_sensors(self):
        return None

    def live_polar(self, cycle_id):
        return None

    def intended_course_deg(self):
        return None


def test_an_unreachable_broker_is_the_reason_instead_of_collecting_for_ever(tmp_path):
    store = Store.sqlite(str(tmp_path / "b.sqlite"))
    vessel = load_vessel(ROOT / "config" / "demo_vessel.toml")
    down = {"broker": "127.0.0.1:1", "connected": False, "down_for_s": 30.0,
            "problem": "broker not reachable", "topics": [], "rejected": {}}
    state = StoreStateProvider(store, vessel=vessel, clock=lambda: T0, live=_LiveLink(down)).current_state()
    assert state["status"]["reason"] == "no sensor data: MQTT broker 127.0.0.1:1 not reachable"
    assert state["link"] == down
    from test_service import schema

    schema("State").validate(state)  # the contract, onboard/live/web/openapi.yaml (link and alert states)
    up = dict(down, connected=True, down_for_s=None, problem="")
    state = StoreStateProvider(store, vessel=vessel, clock=lambda: T0, live=_LiveLink(up)).current_state()
    assert "collecting the first window" in state["status"]["reason"]
    store.close()


def _closed_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]  # closed again when the block ends: nothing listens there


def test_listener_reports_an_unreachable_broker_with_its_reason(tmp_path):
    port = _closed_port()
    cfg = BrokerConfig.from_url(f"mqtt://127.0.0.1:{port}", vessel="tern")
    lis = Listener(cfg, buffer=SampleBuffer(retention_s=600.0))
    lis.start()
    try:
        deadline = time.monotonic() + 60.0  # generous: waits for a condition, asserts no duration
        while time.monotonic() < deadline and not lis.link_health()["problem"]:
            time.sleep(0.1)
        link = lis.link_health()
    finally:
        lis.stop()
    assert link["broker"] == f"127.0.0.1:{port}" and link["connected"] is False
    assert "not reachable" in link["problem"] and link["down_for_s"] is not None
    assert link["topics"] == [] and link["rejected"] == {}


def test_listener_keeps_the_last_message_time_per_topic_and_rejects_by_reason():
    lis = Listener(None, buffer=SampleBuffer(retention_s=600.0))
    lis.start()
    try:
        lis.feed(b"not json", topic="hw/local/samples/imu")
        link = lis.link_health()
    finally:
        lis.stop()
    assert link["broker"] is None
    assert [t["topic"] for t in link["topics"]] == ["hw/local/samples/imu"]
    assert sum(link["rejected"].values()) == 1


def test_one_advisory_notice_for_page_mqtt_cli_and_report():
    # Defined once (advisor.advice); the page, the MQTT messages (service), the CLI and the report use it.
    from advisor import advice
    from onboard.ashore import report, replay
    from onboard.live import service, stateview
    from onboard.live.web import page, provider

    for module in (provider, page, stateview, service, replay, report):
        assert module.ADVISORY_NOTICE is advice.ADVISORY_NOTICE, module.__name__
    # MSC.1/Circ.1228 (2007): such software should be approved by the Administration; this one is not.
    assert "not type-approved" in advice.ADVISORY_NOTICE and "supporting tool only" in advice.ADVISORY_NOTICE
    assert "the master decides" in advice.ADVISORY_NOTICE


def test_repeated_silences_of_one_kind_make_one_row_with_the_newest_text():
    rows = present_alerts(
        [
            _alert(1, "Warning: sensors silent: roll_deg since 19:05Z." + NO_ADVICE_TAIL, minutes=0, cleared=True),
            _alert(2, "Warning: sensors silent: roll_deg, heave_m since 19:12Z." + NO_ADVICE_TAIL, minutes=7, cleared=True),
            _alert(3, "Warning: sensors silent: roll_deg since 19:20Z." + NO_ADVICE_TAIL, minutes=15),
            _alert(4, "Warning: sensors silent: roll_deg since 19:31Z." + NO_ADVICE_TAIL, minutes=26),
        ]
    )
    by_state = {r["state"]: r for r in rows}
    assert by_state["rectified_unacknowledged"]["count"] == 2
    assert by_state["rectified_unacknowledged"]["text"] == "Warning: sensors silent: roll_deg, heave_m since 19:12Z."
    # the two active ones differ only in their time: identical, one row, newest text
    assert by_state["active_unacknowledged"]["count"] == 2
    assert "19:31Z" in by_state["active_unacknowledged"]["text"]
