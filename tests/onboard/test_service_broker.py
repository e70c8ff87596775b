"""The service against a REAL MQTT broker (mosquitto, started by tests/onboard/conftest.py when
HW_TEST_MQTT_URL is not set) and real databases (SQLite file, PostgreSQL): a recorded window published
over MQTT in the project's own batch format gives an estimate and advice in the database and on the
retained topics; silent sensors replace the retained advice by "unavailable" with the reason.
"""

from __future__ import annotations

import json
import subprocess
import threading
import time
from datetime import timedelta

import paho.mqtt.client as mqtt
import pandas as pd
import pytest
from paho.mqtt.enums import CallbackAPIVersion
from test_service import (  # noqa: F401  (pg_url is a fixture)
    Running,
    _check_estimate,
    base_settings,
    pg_url,
    simulated_frame,
    window_end,
)

from onboard.live import service as svc
from onboard.live.listener import close_client_socket, samples_topic, topics
from onboard.formats.messages import BATCH_SCHEMA, format_time_ms
from onboard.live.settings import load_settings


class Client:
    """A plain paho client (publisher / retained-topic reader) for the tests."""

    def __init__(self, host: str, port: int, *, username: str | None = None, password: str | None = None):
        self.c = mqtt.Client(CallbackAPIVersion.VERSION2, client_id=f"test-{time.monotonic_ns()}")
        if username:
            self.c.username_pw_set(username, password)
        self.messages: dict[str, bytes] = {}
        self.got = threading.Condition()
        self.c.on_message = self._on_message
        self.c.connect(host, port)
        self.c.loop_start()

    def _on_message(self, _c, _u, msg) -> None:
        with self.got:
            self.messages[msg.topic] = bytes(msg.payload)
            self.got.notify_all()

    def read_retained(self, topic: str, timeout: float = 10.0, *, where=None) -> dict:
        """Subscribe and wait for the retained (or a new) message on ``topic`` matching ``where``."""
        self.c.subscribe(topic, qos=1)
        end = time.monotonic() + timeout
        with self.got:
            while True:
                raw = self.messages.get(topic)
                if raw is not None:
                    doc = json.loads(raw)
                    if where is None or where(doc):
                        return doc
                left = end - time.monotonic()
                if left <= 0:
                    raise AssertionError(
                        f"no matching message on {topic} within {timeout} s (last: {raw!r:.200})"
                    )
                self.got.wait(left)

    def publish_frame(self, vessel: str, frame: pd.DataFrame) -> int:
        """Publish voyage-log rows as 1-s ``hw-samples/1`` batches from two sources (motion, navigation)."""
        infos = []
        ms = (pd.to_datetime(frame["time_utc"], utc=True).astype("int64") // 1_000_000).to_numpy()
        sources = {"imu1": ("roll_deg", "pitch_deg", "heave_m"), "nav1": ("heading_deg", "stw_kn")}
        seconds = ms // 1000
        for sec in pd.unique(seconds):
            rows = frame[seconds == sec]
            rms = ms[seconds == sec]
            for src, cols in sources.items():
                samples = [
                    {"time_utc": format_time_ms(int(t)), **{c: float(r[c]) for c in cols}}
                    for t, (_, r) in zip(rms, rows.iterrows(), strict=True)
                ]
                payload = json.dumps({"schema": BATCH_SCHEMA, "source": src, "samples": samples})
                infos.append(self.c.publish(samples_topic(vessel, src), payload, qos=1))
        for info in infos:
            info.wait_for_publish(10)
        return len(infos)

    def close(self) -> None:
        self.c.loop_stop()
        close_client_socket(self.c)
        self.c.disconnect()


def _wait(pred, timeout=30.0, what="condition"):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if pred():
            return
        time.sleep(0.05)
    raise AssertionError(f"timed out waiting for {what}")


def _window() -> pd.DataFrame:
    f = simulated_frame()
    return f[f["time_utc"] <= pd.Timestamp(window_end())]


@pytest.mark.broker
@pytest.mark.parametrize("db", ["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def test_window_over_mqtt_gives_estimate_in_database_and_retained_advice(
    mqtt_broker, vessel_id, tmp_path, db, request
):
    db_url = request.getfixturevalue("pg_url") if db == "postgres" else f"sqlite:///{tmp_path / 'svc.sqlite'}"
    r = Running(base_settings(tmp_path, broker_url=mqtt_broker.url, vessel_id=vessel_id, db_url=db_url))
    pub = Client(mqtt_broker.host, mqtt_broker.port)
    reader = Client(mqtt_broker.host, mqtt_broker.port)
    try:
        assert r.service.listener.wait_connected(10)
        n = pub.publish_frame(vessel_id, _window())
        _wait(lambda: r.service.listener.stats()["messages_ok"] == n, what=f"{n} batches through the broker")
        assert r.service.listener.flush(30)
        assert r.service.listener.stats()["rejected_total"] == 0
        out = r.cycle_at(window_end())
        assert out.status == "ok", out.reason
        # in the database
        cyc = r.service.store.latest_cycle()
        assert cyc["status"] == "ok" and cyc["advice"]["polar"] is not None
        _check_estimate(cyc["sea_state"])
        # retained on the broker, for other bridge systems
        t = topics(vessel_id)
        adv = reader.read_retained(t["advice"])
        sea = reader.read_retained(t["seastate"])
        assert adv["schema"] == "hw-advice/1" and adv["status"] == out.result.advice.status
        assert adv["utilisation"] == pytest.approx(out.result.advice.utilisation_now, abs=1e-4)
        assert adv["advised_heading_deg"] == cyc["advice"]["advised_heading_deg"]
        assert adv["window_end_utc"] == "2026-03-01T06:21:00Z"
        assert adv["valid_until_utc"] == "2026-03-01T06:41:00Z"  # two cycles later
        assert "master decides" in adv["advisory_notice"]
        assert sea["hs_m"] == cyc["sea_state"]["hs_m"] and sea["status"] == "ok"
        health = reader.read_retained(t["health"])
        assert health["advice_possible"] is True
        # sensors go silent: the retained advice is replaced by "unavailable" with the reason
        later = window_end() + timedelta(seconds=120)
        out2 = r.cycle_at(later)
        assert out2.status == "no_advice"
        adv2 = reader.read_retained(t["advice"], where=lambda d: d["status"] == "unavailable")
        assert adv2["reason"] == out2.reason and adv2["reason"].startswith("sensors silent: roll_deg")
        late = Client(mqtt_broker.host, mqtt_broker.port)  # a display connecting now sees only the new one
        try:
            assert late.read_retained(t["advice"])["status"] == "unavailable"
        finally:
            late.close()
    finally:
        pub.close()
        reader.close()
        r.service.stop()


@pytest.mark.broker
def test_credentials_from_the_environment_reach_the_broker(tmp_path, vessel_id, mosquitto_tools):
    d = tmp_path / "broker"
    d.mkdir()
    subprocess.run(
        ["mosquitto_passwd", "-b", "-c", str(d / "passwd"), "bridge", "s3cret"],
        check=True,
        capture_output=True,
    )
    b = mosquitto_tools.Mosquitto(d, allow_anonymous=False, extra=[f"password_file {d / 'passwd'}"])
    b.start()
    try:
        env = {
            "HW_BROKER_URL": f"mqtt://127.0.0.1:{b.port}",
            "HW_MQTT_USER": "bridge",
            "HW_MQTT_PASSWORD": "s3cret",
            "HW_VESSEL_ID": vessel_id,
            "HW_DB_URL": f"sqlite:///{tmp_path / 'a.sqlite'}",
            "HW_VOYAGE_LOG_DIR": str(tmp_path / "log"),
        }
        s = load_settings(environ=env)
        service = svc.build_service(s)
        service.start(threads=False)
        try:
            assert service.listener.wait_connected(10)
            service.check_health()
            reader = Client("127.0.0.1", b.port, username="bridge", password="s3cret")
            try:
                h = reader.read_retained(topics(vessel_id)["health"])
                assert h["vessel"] == vessel_id and h["advice_possible"] is False
                assert h["reason"].startswith("sensors missing: roll_deg, pitch_deg, heave_m")
            finally:
                reader.close()
        finally:
            service.stop()
        wrong = svc.build_service(load_settings(environ={**env, "HW_MQTT_PASSWORD": "wrong"}))
        wrong.start(threads=False)
        try:
            assert not wrong.listener.wait_connected(2)
        finally:
            wrong.stop()
    finally:
        b.stop()
