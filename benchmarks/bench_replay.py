"""Replay speed benchmark: a 30-day, 10 Hz voyage log through ``onboard.ashore.replay`` at the on-board settings.

Run by hand:  python benchmarks/bench_replay.py [--days 30] [--hz 10] [--workers 2] [--format parquet]
[--breakdown] [--log FILE]

The log is generated cheaply and written to a temporary directory (deleted afterwards unless ``--keep``):

* six one-hour base records are simulated at the sample rate (:func:`estimator.simulate.simulate`,
  JONSWAP × cos-2s seas of Hs 3-5 m, Tp 8-12 s, from six directions, ship at 10-16 kn on six headings,
  through the demo vessel's deep-laden RAOs, with sensor noise);
* the log is stitched hour by hour from them: hour h uses base record (7·h mod 6) with its motions
  scaled by a slowly varying factor (Hs following a 5-day and a 1.3-day sine, 0.5-2.2 × the base),
  which is exact for a linear ship (motions scale with wave amplitude); heading and speed are the
  base record's. The sea therefore changes every hour in steps, as a real month does more smoothly.
  This is test data only, invented;
* it is written hour by hour (Parquet row groups, or ``.csv.gz`` members), so memory stays flat.

Printed: rows and file size, generation time, replay wall time, the replay rate (log time ÷ wall
time, "× real time"), processor time per window cold (first window of a chain) and warm (from the
engine's own timing), and peak resident memory of this process and of the largest worker
(``resource.getrusage``). The target: 30 days replayed in ≤ 10 min on two cores, memory < 1 GB; a
one-day log at ≥ 4,000× real time on the two workers.

``--breakdown`` (default for logs of up to 3 days) also times the fixed costs separately, in this
process after the replay: reading the log (the replay's own reader and block cutting), building one
engine, starting the worker pool until its workers have built their engines, the run-in windows
(estimated: run-in windows per block × blocks × the cold median) and writing the CSV outputs and
``skipped.txt``. ``--log FILE`` replays an existing log instead of generating one.

All data are invented for the benchmark; nothing here is a measured record.
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from estimator import spectra  # noqa: E402
from estimator.constants import KNOT  # noqa: E402
from estimator.simulate import simulate  # noqa: E402
from onboard.ashore.replay import EngineSpec, ReplayOptions, replay_log  # noqa: E402
from onboard.formats.vessel import load_condition_raos, load_vessel  # noqa: E402

VESSEL = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"
START = pd.Timestamp("2026-01-01T00:00:00Z")
BASES = [  # (Hs [m], Tp [s], waves from [deg], heading [deg], speed [kn])
    (4.0, 10.0, 60.0, 20.0, 14.0),
    (3.0, 8.0, 200.0, 110.0, 16.0),
    (5.0, 12.0, 300.0, 250.0, 10.0),
    (3.5, 9.0, 150.0, 330.0, 15.0),
    (4.5, 11.0, 10.0, 190.0, 12.0),
    (3.0, 10.0, 250.0, 70.0, 14.0),
]


def base_records(hz: float) -> list[pd.DataFrame]:
    v = load_vessel(VESSEL)
    rao = load_condition_raos(v, v.condition(CONDITION))
    om = np.linspace(0.2, 2.6, 160)
    th = np.arange(36) * 2 * np.pi / 36
    out = []
    for i, (hs, tp, wf, hd, kn) in enumerate(BASES):
        dens = (
            spectra.jonswap(om, hs, tp)[:, None] * spectra.spreading_cos2s(th, np.radians(wf), 10.0)[None, :]
        )
        sp = spectra.DirectionalSpectrum(omega=om, theta=th, density=dens)
        rec = simulate(
            sp,
            rao,
            heading=np.radians(hd),
            speed=kn * KNOT,
            duration=3600.0 - 1.0 / hz,
            fs=hz,
            sensor_xyz=v.motion_sensor.xyz,
            seed=100 + i,
            n_frequencies=120,
            n_directions=36,
            channels=("roll", "pitch", "heave"),
            noise_std={"roll": np.radians(0.02), "pitch": np.radians(0.02), "heave": 0.02},
        )
        out.append(
            pd.DataFrame(
                {
                    "t_s": rec.t,
                    "roll_deg": np.degrees(rec.channels["roll"]).astype(np.float32),
                    "pitch_deg": np.degrees(rec.channels["pitch"]).astype(np.float32),
                    "heave_m": rec.channels["heave"].astype(np.float32),
                    "heading_deg": np.float32(hd),
                    "stw_kn": np.float32(kn),
                }
            )
        )
    return out


def scale(hour: int) -> float:
    """Slowly varying Hs factor (0.5-2.2): a 5-day and a 1.3-day sine."""
    d = hour / 24.0
    return float(1.2 + 0.6 * np.sin(2 * np.pi * d / 5.0) + 0.35 * np.sin(2 * np.pi * d / 1.3 + 1.0))


def write_log(path: Path, days: float, hz: float, fmt: str) -> int:
    bases = base_records(hz)
    hours = int(round(days * 24))
    rows = 0
    writer = None
    try:
        for h in range(hours):
            b = bases[(7 * h) % len(bases)]
            f = scale(h)
            t = (
                START
                + pd.Timedelta(hours=h)
                + pd.to_timedelta(np.round(b["t_s"].to_numpy() * 1e3).astype("int64"), unit="ms")
            )
            df = pd.DataFrame(
                {
                    "time_utc": t,
                    "roll_deg": b["roll_deg"] * f,
                    "pitch_deg": b["pitch_deg"] * f,
                    "heave_m": b["heave_m"] * f,
                    "heading_deg": b["heading_deg"],
                    "stw_kn": b["stw_kn"],
                }
            )
            if fmt == "parquet":
                import pyarrow as pa
                import pyarrow.parquet as pq

                table = pa.Table.from_pandas(df, preserve_index=False)
                if writer is None:
                    writer = pq.ParquetWriter(path, table.schema, compression="zstd")
                writer.write_table(table)
            else:
                import gzip

                out = df.copy()
                out["time_utc"] = out["time_utc"].dt.strftime("%Y-%m-%dT%H:%M:%S.%f").str[:-3] + "Z"
                text = out.to_csv(index=False, header=(h == 0), float_format="%.5g")
                with open(path, "ab") as fh:
                    fh.write(gzip.compress(text.encode(), compresslevel=3))
            rows += len(df)
    finally:
        if writer is not None:
            writer.close()
    return rows


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--days", type=float, default=30.0)
    ap.add_argument("--hz", type=float, default=10.0)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--format", choices=("parquet", "csv.gz"), default="parquet")
    ap.add_argument("--keep", action="store_true", help="keep the generated log and outputs")
    ap.add_argument("--breakdown", action="store_true", default=None, help="time the fixed costs too")
    ap.add_argument("--log", type=Path, help="replay this log instead of generating one")
    args = ap.parse_args()
    if args.breakdown is None:
        args.breakdown = args.days <= 3 and args.log is None

    tmp = Path(tempfile.mkdtemp(prefix="bench_replay_"))
    try:
        if args.log is not None:
            log, gen = args.log, 0.0
            print(f"log: {log} ({log.stat().st_size / 1e6:.0f} MB)")
        else:
            log = tmp / f"month.{args.format}"
            t0 = time.perf_counter()
            rows = write_log(log, args.days, args.hz, args.format)
            gen = time.perf_counter() - t0
            print(
                f"log: {rows:,} rows, {args.days:g} days at {args.hz:g} Hz, {log.stat().st_size / 1e6:.0f} MB "
                f"{args.format}, generated in {gen:.0f} s"
            )
        gen_peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
        spec = EngineSpec(str(VESSEL), CONDITION)
        r0, k0 = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu_main0, cpu_kids0 = r0.ru_utime + r0.ru_stime, k0.ru_utime + k0.ru_stime
        t0 = time.perf_counter()
        res = replay_log(log, spec, ReplayOptions(), workers=args.workers, progress=True)
        wall = time.perf_counter() - t0
        cold = np.array([w.seconds for w in res.windows if w.cold])
        warm = np.array([w.seconds for w in res.windows if not w.cold])
        ok = sum(w.estimate.get("status") == "ok" for w in res.windows)
        span = res.span_s
        ru_self = resource.getrusage(resource.RUSAGE_SELF)
        ru_kids = resource.getrusage(resource.RUSAGE_CHILDREN)
        me, kids = ru_self.ru_maxrss / 1024, ru_kids.ru_maxrss / 1024
        cpu_main = ru_self.ru_utime + ru_self.ru_stime - cpu_main0
        cpu_kids = ru_kids.ru_utime + ru_kids.ru_stime - cpu_kids0
        print(f"windows: {len(res.windows)} ({ok} with an estimate), workers: {args.workers}")
        print(
            f"replay wall time: {wall:.0f} s = {wall / 60:.1f} min for {span / 86400:.2f} days "
            f"-> {span / wall:.0f}x real time"
        )
        print(f"30-day equivalent: {wall / 60 * 30 * 86400 / max(span, 1):.1f} min (target <= 10 min)")
        if cold.size:
            print(f"processor time per window, cold: median {np.median(cold):.2f} s (n={cold.size})")
        if warm.size:
            print(
                f"processor time per window, warm: median {np.median(warm):.2f} s, "
                f"90 % {np.percentile(warm, 90):.2f} s (n={warm.size})"
            )
        cores = min(os.cpu_count() or 1, max(args.workers, 1))
        busy = max(cpu_main, cpu_kids / cores, (cpu_main + cpu_kids) / cores)
        print(f"processor time: main process {cpu_main:.0f} s, workers {cpu_kids:.0f} s in total")
        print(
            f"on an otherwise idle machine with {cores} cores the wall time would be about {busy:.0f} s "
            f"-> 30 days in about {busy / 60 * 30 * 86400 / max(span, 1):.1f} min"
        )
        print(
            f"peak resident memory: main process {me:.0f} MB (of which the log generation alone reached "
            f"{gen_peak:.0f} MB before the replay started), largest worker {kids:.0f} MB (target < 1 GB)"
        )
        print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} at the end")
        if args.breakdown:
            breakdown(log, spec, res, args.workers, tmp / "out", cold)
    finally:
        if args.keep:
            print(f"kept {tmp}")
        else:
            shutil.rmtree(tmp, ignore_errors=True)


def breakdown(log: Path, spec: EngineSpec, res, workers: int, out: Path, cold: np.ndarray) -> None:
    """Fixed costs of the replay, timed one by one in this process (wall time, this machine's load)."""
    from onboard.ashore import replay as rp
    from onboard.formats.voyagelog import VoyageLogReader

    opts = ReplayOptions()
    window, step, block, run_in = rp._check_grid(spec, opts)
    t0 = time.perf_counter()
    scratch = rp.ReplayResult(log=str(log))
    tasks = list(rp._iter_blocks(VoyageLogReader(log, chunk_rows=opts.chunk_rows), window, step, block, run_in,
                                 scratch, None))
    t_read = time.perf_counter() - t0
    t0 = time.perf_counter()
    spec.build()
    t_build = time.perf_counter() - t0
    t0 = time.perf_counter()
    pool = rp.process_pool(workers, spec)
    try:
        # a task that needs the engine: done once the initializer has built it
        for f in [pool.submit(rp._engine_for, spec) for _ in range(workers)]:
            f.result()
        t_pool = time.perf_counter() - t0
    finally:
        pool.shutdown(wait=True)
    t0 = time.perf_counter()
    rp.write_outputs(res, out)
    t_write = time.perf_counter() - t0
    n_run_in = run_in * len(tasks)
    cold_s = float(np.median(cold)) if cold.size else float("nan")
    warm_sum = sum(w.seconds for w in res.windows if not w.cold)
    cold_sum = sum(w.seconds for w in res.windows if w.cold)
    print("breakdown (wall s unless marked; fixed costs timed separately after the replay):")
    print(f"  log reading and block cutting ({len(tasks)} blocks): {t_read:.1f} s")
    print(f"  engine build (one, in this process): {t_build:.2f} s")
    print(f"  worker start until {workers} workers have built their engines: {t_pool:.1f} s")
    print(f"  run-in windows: {n_run_in} x cold median {cold_s:.2f} s = about {n_run_in * cold_s:.1f} s processor")
    print(f"  written windows: cold {cold_sum:.1f} s + warm {warm_sum:.1f} s processor in the workers")
    print(f"  writing estimates/advice/envelope CSV and skipped.txt: {t_write:.2f} s")


if __name__ == "__main__":
    main()
