"""Stray-traffic benchmark (issue 16 goal): 10,000 bad or foreign payloads mixed into good sensor data
through a real MQTT broker; does the advice go on?

Run: ``python benchmarks/bench_ingest_fuzz.py [--bad 10000] [--minutes 40] [--seed 16]`` (starts a private
mosquitto on a free loopback port unless ``HW_BENCH_MQTT_URL=mqtt://host:port`` is set). Prints figures;
it is not a test (tests/onboard/test_service.py has the functional fuzz test).

What it does
------------
1. Simulates ``--minutes`` of 2 Hz roll, pitch, heave (demo vessel, deep-laden condition, JONSWAP
   Hs 5 m, Tp 11 s, waves from 300°, ship on 250° at 14 kn; invented data) plus a gyro heading and a log
   speed, published as the two sources the settings use (``imu1`` motions, ``nav1`` navigation).
2. Interleaves ``--bad`` payloads drawn from the families of the bad-input tour: garbage bytes with
   control characters, cut JSON, NaN tokens, wrong types, oversized payloads, a stray publisher sending
   roll = 1000, a second IMU the settings do not use (plausible values 3° off), another ship's Signal K
   data, a sensor whose clock is an hour behind, redelivered batches, Signal K angles out of range.
3. Runs an analysis cycle every 5 min of record once a window is full, on the service built from
   settings exactly as on board (the composition root), and the same cycles on a clean run.

Figures: payloads by family, listener counters (rejections by reason, ingest outcomes), crashes
(callback and writer errors, exceptions), cycles with advice, and the signed Hs difference of every cycle
against the clean run (the stray traffic should change nothing).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
import tempfile
import time
from datetime import UTC, datetime, timedelta
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
from bench_ingest import Pub, broker, wait_until  # noqa: E402

from estimator import spectra  # noqa: E402
from estimator.constants import KNOT  # noqa: E402
from estimator.simulate import simulate  # noqa: E402
from onboard.formats.messages import BATCH_SCHEMA, format_time_ms  # noqa: E402
from onboard.formats.vessel import load_condition_raos, load_vessel  # noqa: E402
from onboard.live import service as svc  # noqa: E402
from onboard.live.listener import samples_topic, topics  # noqa: E402
from onboard.live.settings import ServiceSettings  # noqa: E402

VESSEL_FILE = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"
T0 = datetime(2026, 3, 1, 6, 0, tzinfo=UTC)  # invented
HEADING_DEG, STW_KN = 250.0, 14.0
FAMILIES = (
    "garbage",
    "cut_json",
    "nan_token",
    "wrong_type",
    "oversized",
    "rogue_roll_1000",
    "unused_second_imu",
    "other_vessel",
    "clock_1h_behind",
    "redelivered",
    "signalk_angle_out_of_range",
)
PRIORITY = (
    ("heading_deg", ("nav1",)),
    ("heave_m", ("imu1",)),
    ("pitch_deg", ("imu1",)),
    ("roll_deg", ("imu1",)),
    ("stw_kn", ("nav1",)),
)


def record(minutes: float) -> pd.DataFrame:
    vessel = load_vessel(VESSEL_FILE)
    rao = load_condition_raos(vessel, CONDITION)
    om = np.linspace(0.15, 2.5, 240)
    th = np.arange(144) * 2 * np.pi / 144
    s1 = spectra.jonswap(om, 5.0, 11.0, gamma=spectra.jonswap_gamma_dnv(5.0, 11.0))
    d = spectra.spreading_cos2s(th, math.radians(300.0), 10.0)
    sea = spectra.DirectionalSpectrum(omega=om, theta=th, density=s1[:, None] * d[None, :])
    rec = simulate(
        sea,
        rao,
        heading=math.radians(HEADING_DEG),
        speed=STW_KN * KNOT,
        duration=minutes * 60.0,
        fs=2.0,
        sensor_xyz=vessel.motion_sensor.xyz,
        seed=11,
        noise_std={"roll": math.radians(0.02), "pitch": math.radians(0.02), "heave": 0.02},
        channels=("roll", "pitch", "heave"),
    )
    return pd.DataFrame(
        {
            "t_ms": (T0.timestamp() * 1000 + rec.t * 1000).astype(np.int64),
            "roll_deg": np.degrees(rec.channels["roll"]),
            "pitch_deg": np.degrees(rec.channels["pitch"]),
            "heave_m": rec.channels["heave"],
            "heading_deg": HEADING_DEG + 0.3 * np.sin(rec.t / 20.0),
            "stw_kn": STW_KN + 0.05 * np.sin(rec.t / 30.0),
        }
    )


def good_batches(frame: pd.DataFrame) -> list[tuple[int, str, bytes]]:
    """(second, source, payload): one batch per source and second."""
    out = []
    cols = {"imu1": ("roll_deg", "pitch_deg", "heave_m"), "nav1": ("heading_deg", "stw_kn")}
    sec = (frame["t_ms"] - frame["t_ms"].iloc[0]) // 1000
    for s, part in frame.groupby(sec):
        for src, cs in cols.items():
            samples = [
                {"time_utc": format_time_ms(int(r.t_ms)), **{c: round(float(getattr(r, c)), 5) for c in cs}}
                for r in part.itertuples()
            ]
            out.append((int(s), src, json.dumps({"schema": BATCH_SCHEMA, "source": src, "samples": samples}).encode()))
    return out


def bad_payload(rng: np.random.Generator, family: str, t_ms: int, vessel: str, last_good: bytes):
    now = format_time_ms(t_ms)
    st = lambda src: samples_topic(vessel, src)  # noqa: E731
    if family == "garbage":
        return st("imu1"), bytes(rng.integers(0, 256, int(rng.integers(1, 300)), dtype=np.uint8))
    if family == "cut_json":
        return st("imu1"), last_good[: int(rng.integers(1, max(len(last_good) - 1, 2)))]
    if family == "nan_token":
        return st("imu1"), f'{{"schema":"{BATCH_SCHEMA}","samples":[{{"time_utc":"{now}","roll_deg":NaN}}]}}'.encode()
    if family == "wrong_type":
        return st("imu1"), json.dumps({"schema": BATCH_SCHEMA, "samples": [{"time_utc": now, "roll_deg": "1.0"}]}).encode()
    if family == "oversized":
        return st("imu1"), b'{"x":"' + b"a" * 300_000 + b'"}'
    if family == "rogue_roll_1000":
        return st("imu9"), json.dumps({"schema": BATCH_SCHEMA, "samples": [{"time_utc": now, "roll_deg": 1000.0}]}).encode()
    if family == "unused_second_imu":
        return st("imu2"), json.dumps({"schema": BATCH_SCHEMA, "samples": [{"time_utc": format_time_ms(t_ms + 250), "roll_deg": 3.0, "pitch_deg": -1.0}]}).encode()
    if family == "other_vessel":
        delta = {
            "context": "vessels.urn:mrn:imo:mmsi:999999999",
            "updates": [{"$source": "ais", "timestamp": now, "values": [{"path": "navigation.headingTrue", "value": 0.5}]}],
        }
        return topics(vessel)["signalk"], json.dumps(delta).encode()
    if family == "clock_1h_behind":
        return st("imu7"), json.dumps({"schema": BATCH_SCHEMA, "samples": [{"time_utc": format_time_ms(t_ms - 3_600_000), "roll_deg": 1.0}]}).encode()
    if family == "redelivered":
        return st("imu1"), last_good
    delta = {"context": "vessels.self", "updates": [{"$source": "gyro9", "timestamp": now, "values": [{"path": "navigation.headingTrue", "value": 100.0}]}]}
    return topics(vessel)["signalk"], json.dumps(delta).encode()


def run(host: str, port: int, frame: pd.DataFrame, n_bad: int, seed: int, workdir: Path) -> dict:
    vessel_id = f"bench{seed}{n_bad}"
    settings = ServiceSettings(
        vessel_file=VESSEL_FILE,
        condition=CONDITION,
        vessel_id=vessel_id,
        broker_url=f"mqtt://{host}:{port}",
        db_url=f"sqlite:///{workdir / f'{vessel_id}.sqlite'}",
        voyage_log_dir=workdir / f"log-{vessel_id}",
        voyage_log_fsync=False,
        **({"source_priority": PRIORITY} if "source_priority" in ServiceSettings.__dataclass_fields__ else {}),
    )
    clock = svc.ReplayClock(T0, rate=0.0)
    service = svc.build_service(settings, clock=clock, wall_clock=None)
    service.start(threads=False)
    lst = service.listener
    assert lst.wait_connected(15), "listener could not connect"
    pub = Pub(host, port)

    def publish(topic: str, payload: bytes) -> None:
        pub.c.publish(topic, payload, qos=1)

    rng = np.random.default_rng(seed)
    good = good_batches(frame)
    seconds = good[-1][0] + 1
    per_second = n_bad / seconds
    counts = dict.fromkeys(FAMILIES, 0)
    t0 = time.perf_counter()
    sent = 0
    last = good[0][2]
    for s, src, payload in good:
        publish(samples_topic(vessel_id, src), payload)
        sent += 1
        last = payload if src == "imu1" else last
        if src != "nav1":
            continue
        k = rng.poisson(per_second)
        for _ in range(k):
            if sum(counts.values()) >= n_bad:
                break
            fam = FAMILIES[int(rng.integers(0, len(FAMILIES)))]
            topic, bad = bad_payload(rng, fam, int(frame["t_ms"].iloc[0]) + 1000 * s, vessel_id, last)
            publish(topic, bad)
            counts[fam] += 1
            sent += 1
    while sum(counts.values()) < n_bad:  # the remainder at the end of the record
        fam = FAMILIES[int(rng.integers(0, len(FAMILIES)))]
        topic, bad = bad_payload(rng, fam, int(frame["t_ms"].iloc[-1]), vessel_id, last)
        publish(topic, bad)
        counts[fam] += 1
        sent += 1
    wait_until(lambda: pub.acked >= sent, 300.0)
    ok = wait_until(lambda: lst.stats()["messages"] >= sent, 300.0)
    lst.flush(60.0)
    t_ingest = time.perf_counter() - t0
    outcomes = []
    errors = 0
    end = T0 + timedelta(seconds=float(settings.window_s))
    last_end = T0 + timedelta(seconds=seconds - 1)
    while end <= last_end:
        clock.set(end)
        try:
            out = service.run_cycle(end)
            sea = service.store.latest_cycle()["sea_state"]
            outcomes.append((end, out.status, out.reason, (sea or {}).get("hs_m")))
        except Exception as exc:  # counted as a crash
            errors += 1
            outcomes.append((end, "exception", repr(exc), None))
        end += timedelta(minutes=5)
    stats = lst.stats()
    service.stop()
    pub.close()
    return {
        "sent": sent,
        "all_received": ok,
        "bad_by_family": counts,
        "stats": stats,
        "ingest_s": t_ingest,
        "cycles": outcomes,
        "crashes": stats["callback_errors"] + stats["writer_errors"] + errors,
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--bad", type=int, default=10_000, help="bad or foreign payloads mixed in")
    ap.add_argument("--minutes", type=float, default=40.0, help="minutes of simulated record")
    ap.add_argument("--seed", type=int, default=16)
    args = ap.parse_args()
    url = os.environ.get("HW_BENCH_MQTT_URL")
    workdir = Path(tempfile.mkdtemp(prefix="hw-bench-fuzz-"))
    proc = None
    try:
        proc, host, port = broker(workdir)
        frame = record(args.minutes)
        clean = run(host, port, frame, 0, args.seed, workdir)
        mixed = run(host, port, frame, args.bad, args.seed, workdir)
        print(f"record: {args.minutes:g} min at 2 Hz, {len(frame)} rows; broker {'external' if url else 'private'}")
        for label, r in (("clean", clean), ("mixed", mixed)):
            st = r["stats"]
            print(
                f"{label}: {r['sent']} payloads ({sum(r['bad_by_family'].values())} bad) in {r['ingest_s']:.1f} s, "
                f"all received: {r['all_received']}; crashes {r['crashes']}; "
                f"rejected {st['rejected_total']} {dict(sorted(st['rejected'].items()))}; "
                f"outliers {st.get('outliers', '-')}; ingest {dict(sorted(st['ingest'].items()))}"
            )
        print("bad payloads by family:", mixed["bad_by_family"])
        print("cycle end            clean status  mixed status  Hs clean  Hs mixed  dHs (mixed - clean) [m]")
        stopped = 0
        for (end, s0, _r0, hs0), (_, s1, r1, hs1) in zip(clean["cycles"], mixed["cycles"], strict=True):
            d = (hs1 - hs0) if hs0 is not None and hs1 is not None else float("nan")
            print(f"{end:%Y-%m-%dT%H:%MZ}   {s0:>12}  {s1:>12}  {hs0 or float('nan'):8.3f}  {hs1 or float('nan'):8.3f}  {d:+.4f}")
            if s0 == "ok" and s1 != "ok":
                stopped += 1
                print(f"    advice stopped by the stray traffic: {r1}")
        print(
            f"GOAL {args.bad} mixed payloads: crashes {mixed['crashes']} (goal 0); cycles whose advice the "
            f"stray traffic stopped: {stopped} of {len(mixed['cycles'])} (goal 0)"
        )
    finally:
        if proc is not None:
            proc.terminate()
            proc.wait(10)


if __name__ == "__main__":
    main()
