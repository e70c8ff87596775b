"""Tests for onboard.live.buffer.SampleBuffer: windows, bounds, memory, health, thread safety."""

from __future__ import annotations

import threading
from datetime import UTC, datetime, timedelta

import numpy as np
import pandas as pd
import pytest

from onboard.live.buffer import SampleBuffer
from onboard.formats.messages import COLUMNS

T0 = 1_772_366_400_000  # 2026-03-01T12:00:00Z [ms]


def rows(n, *, start=T0, dt_ms=100, channels=("roll_deg", "pitch_deg", "heave_m")):
    return [(start + i * dt_ms, {c: float(i) + k * 0.1 for k, c in enumerate(channels)}) for i in range(n)]


def test_window_returns_voyage_log_columns_half_open():
    buf = SampleBuffer()
    buf.append_rows(rows(100))
    buf.append_rows([(T0 + 50, {"heading_deg": 10.0, "stw_kn": 12.0})][:0])  # empty batch is fine
    buf.append_rows([(T0 + 10_000, {"heading_deg": 10.0, "stw_kn": 12.0})])
    start = datetime.fromtimestamp(T0 / 1000, UTC)
    df = buf.window(start + timedelta(seconds=1), start + timedelta(seconds=9))  # [1 s, 9 s)
    assert list(df.columns) == list(COLUMNS)
    assert str(df["time_utc"].dtype) == "datetime64[ns, UTC]"
    assert len(df) == 80  # samples 10..89 at 10 Hz
    assert df["time_utc"].iloc[0] == pd.Timestamp("2026-03-01T12:00:01Z")
    np.testing.assert_array_equal(df["roll_deg"].to_numpy(), np.arange(10, 90, dtype=float))
    assert df["stw_kn"].isna().all()
    full = buf.window(T0, T0 + 20_000)
    assert len(full) == 101 and full["stw_kn"].iloc[-1] == 12.0 and np.isnan(full["roll_deg"].iloc[-1])


def test_window_rejects_naive_and_reversed():
    buf = SampleBuffer()
    with pytest.raises(ValueError, match="has no time zone"):
        buf.window(datetime(2026, 3, 1), datetime(2026, 3, 2))
    with pytest.raises(ValueError, match="before start"):
        buf.window(T0 + 10, T0)


def test_channels_with_different_times_are_joined_on_union():
    buf = SampleBuffer()
    buf.append_rows(
        [(T0, {"roll_deg": 1.0}), (T0 + 50, {"heading_deg": 90.0}), (T0 + 100, {"roll_deg": 2.0})]
    )
    df = buf.window(T0, T0 + 1000)
    assert df["roll_deg"].tolist()[::2] == [1.0, 2.0] and np.isnan(df["roll_deg"].iloc[1])
    assert df["heading_deg"].iloc[1] == 90.0


def test_out_of_order_values_are_dropped_and_counted():
    buf = SampleBuffer()
    buf.append_rows([(T0 + 200, {"roll_deg": 1.0})])
    n = buf.append_rows(
        [(T0 + 100, {"roll_deg": 9.0}), (T0 + 300, {"roll_deg": 2.0}), (T0 + 300, {"roll_deg": 3.0})]
    )
    assert n == 1 and buf.rejected_out_of_order == 2
    assert buf.window(T0, T0 + 1000)["roll_deg"].tolist() == [1.0, 2.0]


def test_retention_and_memory_flat_over_a_long_run():
    # 10 Hz for 12 simulated hours with 1 h retention: memory must stop growing once retention is reached
    buf = SampleBuffer(retention_s=3600.0, chunk_size=1024)
    chans = ("roll_deg", "pitch_deg", "heave_m", "heading_deg", "stw_kn")
    sizes = []
    for hour in range(6):
        for block in range(60):
            start = T0 + (hour * 3600 + block * 60) * 1000
            buf.append_rows(rows(600, start=start, channels=chans))
        sizes.append(buf.nbytes())
    # flat after the first hours: it may only move by the one chunk per channel being filled
    assert max(sizes[2:]) - min(sizes[2:]) <= len(chans) * 1024 * 16
    # held samples per channel: at least retention worth, at most retention + one chunk
    counts = buf.sample_counts()
    assert 36_000 <= counts["roll_deg"] <= 36_000 + 1024
    newest = buf.newest_ms()
    df = buf.window(newest - 3_600_000, newest + 1)
    assert len(df) == 36_001


def test_max_samples_cap_bounds_memory_whatever_the_rate():
    buf = SampleBuffer(retention_s=10 * 3600.0, max_samples_per_channel=8192, chunk_size=1024)
    for k in range(50):
        buf.append_rows(rows(1000, start=T0 + k * 1000 * 10, dt_ms=10, channels=("roll_deg",)))
    assert buf.sample_counts()["roll_deg"] <= 8192 + 1024


def test_channel_health_statuses():
    buf = SampleBuffer()
    now = T0 + 60_000
    rng = np.random.default_rng(1)
    data = []
    for i in range(600):  # 60 s at 10 Hz
        t = T0 + i * 100
        data.append((t, {"roll_deg": float(rng.normal()), "pitch_deg": 0.25, "heading_deg": 45.0}))
    data.append((T0 + 59_900, {"stw_kn": 12.0}))
    buf.append_rows(data)
    buf.append_rows([(T0 + 60_000, {"heave_m": 0.1})])
    buf.append_rows([(T0 + 1_000 + 59_000, {"lat_deg": 1.0})][:0])
    health = {h["channel"]: h for h in buf.channel_health(now, implausible={"acc_z_ms2": 3, "heave_m": 1})}
    assert health["roll_deg"]["status"] == "ok"
    assert (
        health["pitch_deg"]["status"] == "frozen"
        and "identical values (0.25)" in health["pitch_deg"]["detail"]
    )
    assert health["heading_deg"]["status"] == "ok"  # constant for 60 s only: heading window is 120 s
    assert health["heave_m"]["status"] == "implausible"
    assert health["acc_z_ms2"]["status"] == "implausible" and "none accepted" in health["acc_z_ms2"]["detail"]
    assert health["lat_deg"]["status"] == "missing"
    assert health["roll_deg"]["last_utc"] == "2026-03-01T12:00:59.900Z"
    later = {h["channel"]: h for h in buf.channel_health(now + 30_000)}
    assert later["roll_deg"]["status"] == "silent" and later["roll_deg"]["age_s"] == pytest.approx(30.1)
    with pytest.raises(ValueError, match="unknown channel 'yaw_deg'"):
        buf.channel_health(now, channels=["yaw_deg"])


def test_concurrent_writer_and_readers():
    buf = SampleBuffer(retention_s=3600.0, chunk_size=256)
    errors = []
    stop = threading.Event()

    def reader():
        try:
            while not stop.is_set():
                df = buf.window(T0, T0 + 10**9)
                t = pd.DatetimeIndex(df["time_utc"]).asi8
                assert (np.diff(t) > 0).all()
                buf.channel_health(T0 + 10**6)
        except Exception as exc:  # pragma: no cover - reported below
            errors.append(exc)

    threads = [threading.Thread(target=reader) for _ in range(3)]
    for th in threads:
        th.start()
    for k in range(200):
        buf.append_rows(rows(50, start=T0 + k * 5000))
    stop.set()
    for th in threads:
        th.join()
    assert not errors
    assert buf.sample_counts()["roll_deg"] == 10_000


def test_constructor_validation():
    with pytest.raises(ValueError, match="retention_s must be > 0"):
        SampleBuffer(retention_s=0)
    with pytest.raises(ValueError, match="must be >= chunk_size"):
        SampleBuffer(max_samples_per_channel=10, chunk_size=100)
