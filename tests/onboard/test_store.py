"""Tests for onboard.core.store on a SQLite file and on PostgreSQL (the same tests, parametrised)."""

from __future__ import annotations

import threading
from datetime import UTC, datetime, timedelta

import pytest
import sqlalchemy as sa

from onboard.core.store import MIGRATIONS, Base, Store, StoreError, make_engine

NOW = datetime(2026, 3, 1, 12, 0, tzinfo=UTC)


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def engine(request, tmp_path):
    if request.param == "sqlite":
        e = make_engine(f"sqlite:///{tmp_path / 'onboard.db'}")
        yield e
        e.dispose()
    else:
        yield request.getfixturevalue("pg_engine")


@pytest.fixture()
def store(engine):
    s = Store(engine)
    yield s


def cycle(store, minutes_ago=0.0, *, status="ok", hs=3.0, util=0.6, **kw):
    end = NOW - timedelta(minutes=minutes_ago)
    args = dict(
        started_utc=end,
        finished_utc=end + timedelta(seconds=20),
        status=status,
        window_start_utc=end - timedelta(minutes=20),
        window_end_utc=end,
        condition="ballast",
        timings_s={"estimate": 4.2, "advice": 1.1},
        code_version="0.1.0",
        sea_state={
            "hs_m": hs,
            "tp_s": 10.5,
            "tm01_s": 8.7,
            "wave_from_deg": 280.0,
            "spread_deg": 25.0,
            "confidence": 0.8,
            "method": "bayes",
            "reasons": ["stationary window"],
            "systems": [{"label": "total", "hs_m": hs, "tp_s": 10.5}],
        }
        if status != "failed"
        else None,
        advice={
            "status": "keep",
            "heading_deg": 245.0,
            "stw_kn": 12.5,
            "utilisation": util,
            "utilisation_nominal": util * 0.9,
            "limiting_criterion": "roll_sig",
            "advised_heading_deg": 250.0,
            "advised_stw_kn": 11.0,
            "explanation": "Keep course. The master decides.",
            "polar": {
                "headings_deg": [0, 180],
                "speeds_kn": [0, 10],
                "utilisation": [[0.1, 0.2], [0.3, 0.4]],
            },
        }
        if status == "ok"
        else None,
    )
    args.update(kw)
    return store.add_cycle(**args)


def test_migrations_versioned_and_idempotent(engine):
    s = Store(engine, migrate=False)
    assert s.schema_version() == 0
    assert s.migrate(target=1) == 1
    assert s.migrate() == len(MIGRATIONS) == s.schema_version()
    assert Store(engine).schema_version() == len(MIGRATIONS)  # second start applies nothing
    # a freshly migrated database has exactly the models' tables and columns (drift check)
    insp = sa.inspect(engine)
    for name, table in Base.metadata.tables.items():
        assert {c["name"] for c in insp.get_columns(name)} == {c.name for c in table.columns}, name
    assert "ix_cycles_finished" in {i["name"] for i in insp.get_indexes("analysis_cycles")}


def test_cycle_round_trip_and_latest_state(store):
    cycle(store, 10, hs=2.0)
    cid = cycle(store, 0, hs=3.5)
    state = store.latest_state()
    c = state["cycle"]
    assert c["id"] == cid and c["status"] == "ok" and c["condition"] == "ballast"
    assert c["window_end_utc"] == NOW and c["window_end_utc"].tzinfo is not None  # aware UTC back
    assert c["sea_state"]["hs_m"] == 3.5 and c["sea_state"]["reasons"] == ["stationary window"]
    assert c["advice"]["polar"]["utilisation"] == [[0.1, 0.2], [0.3, 0.4]]
    assert c["advice"]["limiting_criterion"] == "roll_sig" and c["timings_s"] == {
        "estimate": 4.2,
        "advice": 1.1,
    }


def test_failed_cycle_needs_reason_and_is_latest_but_not_ok(store):
    cycle(store, 5)
    with pytest.raises(StoreError, match="needs a reason"):
        cycle(store, 0, status="failed")
    cycle(store, 0, status="failed", reason="sensors silent: roll_deg")
    st = store.latest_state()
    assert st["cycle"]["status"] == "failed" and st["cycle"]["reason"] == "sensors silent: roll_deg"
    assert st["cycle"]["sea_state"] is None and st["last_ok_cycle"]["status"] == "ok"


def test_history_window_and_order(store):
    for m in (400, 100, 50, 0):
        cycle(store, m, hs=m / 100)
    cycle(store, 20, status="no_advice", reason="low confidence")
    h = store.history(2, now=NOW + timedelta(minutes=1))
    assert h["times_utc"] == [
        "2026-03-01T10:20:00Z",
        "2026-03-01T11:10:00Z",
        "2026-03-01T11:40:00Z",
        "2026-03-01T12:00:00Z",
    ]
    assert h["hs_m"] == [1.0, 0.5, 3.0, 0.0] and h["status"][2] == "no_advice" and h["utilisation"][2] is None
    with pytest.raises(StoreError, match=r"hours must be in \(0, 8784\]"):
        store.history(0)


@pytest.mark.parametrize(
    "kw, match",
    [
        (dict(status="great"), "status 'great'"),
        (dict(started_utc=datetime(2026, 3, 1)), "started_utc: expected a timezone-aware"),
        (dict(sea_state={"hs_m": -1.0}), r"sea_state.hs_m: -1.0 outside \[0.0, 40.0\]"),
        (dict(sea_state={"hs_m": float("inf")}), "sea_state.hs_m"),
        (dict(sea_state={"height": 1.0}), "unknown key"),
        (dict(advice={"heading_deg": "north"}), "advice.heading_deg: expected a number"),
        (dict(advice={"advised_heading_deg": 400.0}), "advised_heading_deg"),
    ],
)
def test_bad_input_rejected(store, kw, match):
    with pytest.raises(StoreError, match=match):
        cycle(store, **kw)


def test_nan_stored_as_null(store):
    cid = cycle(store, sea_state={"hs_m": float("nan"), "tp_s": 9.0})
    assert store.latest_cycle()["id"] == cid and store.latest_cycle()["sea_state"]["hs_m"] is None


def test_alerts_acknowledge_contract(store):
    a = store.raise_alert("warning", "sensors", "roll_deg silent", raised_utc=NOW)
    assert store.raise_alert("warning", "sensors", "roll_deg silent") == a  # not raised twice while active
    b = store.raise_alert("caution", "utilisation", "roll above 90 %", raised_utc=NOW + timedelta(seconds=1))
    assert [x["id"] for x in store.active_alerts()] == [b, a]
    # page contract: "ok" | "unknown" | "already"
    assert store.acknowledge_alert(a, "oow", when=NOW) == "ok"
    assert store.acknowledge_alert(a, "master") == "already"
    assert store.acknowledge_alert(99999, "oow") == "unknown"
    alerts = {x["id"]: x for x in store.active_alerts()}
    assert alerts[a]["acknowledged"] and alerts[a]["acknowledged_by"] == "oow"
    assert alerts[a]["acknowledged_utc"] == "2026-03-01T12:00:00Z"
    store.clear_alert(a)
    assert a not in {x["id"] for x in store.active_alerts()}  # cleared and acknowledged: gone
    store.clear_alert(b)
    assert b in {x["id"] for x in store.active_alerts()}  # cleared but unacknowledged: still shown
    with pytest.raises(StoreError, match="alert level 'red'"):
        store.raise_alert("red", "x", "y")


def test_events_health_condition(store):
    store.add_event("start", "service started", time_utc=NOW, data={"version": "0.1.0"})
    store.add_event("broker", "connection lost", time_utc=NOW + timedelta(seconds=5))
    assert [e["kind"] for e in store.events()] == ["broker", "start"]
    assert store.events(kind="start")[0]["data"] == {"version": "0.1.0"}
    store.add_sensor_health(NOW, [{"channel": "roll_deg", "status": "ok"}], {"rejected_total": 3})
    assert store.latest_sensor_health()["channels"][0]["status"] == "ok"
    store.set_condition("ballast", set_by="chief officer", when=NOW - timedelta(days=3))
    store.set_condition("full load 40 % deck", set_by="chief officer", when=NOW)
    assert store.active_condition()["condition"] == "full load 40 % deck"
    assert [c["condition"] for c in store.condition_history()] == ["ballast", "full load 40 % deck"]


def test_retention_purges_old_rows(store):
    cycle(store, 60 * 24 * 40)  # 40 days old
    cycle(store, 0)
    store.add_event("old", "x", time_utc=NOW - timedelta(days=40))
    old = store.raise_alert("caution", "x", "old", raised_utc=NOW - timedelta(days=40))
    store.acknowledge_alert(old, "oow")
    store.clear_alert(old)
    store.set_condition("a", when=NOW - timedelta(days=50))
    store.set_condition("b", when=NOW - timedelta(days=45))
    counts = store.purge_older_than(30, now=NOW)
    assert counts["analysis_cycles"] == 1 and counts["sea_state_estimates"] == 1 and counts["advice"] == 1
    assert counts["events"] == 1 and counts["alerts"] == 1 and counts["condition_history"] == 1
    assert len(store.history(24 * 60, now=NOW + timedelta(minutes=1))["times_utc"]) == 1
    assert store.active_condition()["condition"] == "b"  # the active condition is never purged
    with pytest.raises(StoreError, match="days must be > 0"):
        store.purge_older_than(0)


def test_concurrent_writer_and_reader(store):
    errors = []

    def reader():
        try:
            for _ in range(30):
                store.latest_state()
                store.history(24, now=NOW)
        except Exception as exc:  # pragma: no cover
            errors.append(exc)

    th = threading.Thread(target=reader)
    th.start()
    for m in range(30):
        cycle(store, m)
    th.join()
    assert not errors and len(store.history(24, now=NOW + timedelta(minutes=1))["times_utc"]) == 30


def test_sqlite_file_uses_wal(tmp_path):
    s = Store.sqlite(str(tmp_path / "w.db"))
    with s.engine.connect() as c:
        assert c.execute(sa.text("PRAGMA journal_mode")).scalar() == "wal"
        assert c.execute(sa.text("PRAGMA busy_timeout")).scalar() == 10000
    s.close()
    with pytest.raises(StoreError, match="in-memory database"):
        make_engine("sqlite://")
