"""Steadiness of the advice on the bundled demo voyage, and the cost of a full advice cycle.

Replays ``replay_data/demo_voyage.csv.gz`` (invented data; the demo vessel's "deep laden, low GM"
condition) with the replay command's own code (``onboard.ashore.replay``), or reads an ``advice.csv``
written earlier (``--from DIR``), and prints, with :func:`advisor.advice.steadiness_figures`:

* windows with advice, and in how many a change was advised;
* changes advised while the conservative utilisation at the present heading and speed was below
  0.5, and how many of those had no screened Circ.1228 zone at the present heading and speed
  (goal: none);
* flips: consecutive windows in which the ship held its heading within ±10° and its speed within
  ±2 kn while the advised heading moved by more than 30° or the advised speed by more than 5 kn
  (goal: at most 2).

With ``--cycle`` it also times one full advice cycle on one core: the polar evaluation (72
headings × 25 speeds, every criterion of the limit set, envelope over the Hs, Tp and direction
intervals, zones) plus the advice with its turn arcs, on the estimates of the demo voyage
(goal ≤ 100 ms per cycle).

Run from the repository root: ``python benchmarks/bench_advice.py [--from DIR] [--cycle]``.
"""

import os

for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import csv  # noqa: E402
import math  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from advisor.advice import steadiness_figures  # noqa: E402
from estimator.constants import KNOT  # noqa: E402

LOG = ROOT / "replay_data" / "demo_voyage.csv.gz"
VESSEL = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"


def _float(v) -> float:
    try:
        return float(v)
    except (TypeError, ValueError):
        return math.nan


def figures_from_rows(rows) -> dict:
    rows = [r for r in rows if r.get("status") in ("keep", "change", "none_acceptable")]
    deg = math.pi / 180.0
    return steadiness_figures(
        heading=np.array([_float(r["heading_deg"]) for r in rows]) * deg,
        speed=np.array([_float(r["stw_kn"]) for r in rows]) * KNOT,
        advised_heading=np.array([_float(r["advised_heading_deg"]) for r in rows]) * deg,
        advised_speed=np.array([_float(r["advised_stw_kn"]) for r in rows]) * KNOT,
        utilisation=np.array([_float(r["utilisation"]) for r in rows]),
        changed=np.array([r["status"] != "keep" for r in rows]),
        in_zone=np.array([bool(str(r.get("zones_now") or "").strip()) for r in rows]),
    )


def replay_rows():
    from onboard.ashore.replay import EngineSpec, replay_log

    spec = EngineSpec(str(VESSEL), CONDITION)
    t0 = time.perf_counter()
    result = replay_log(LOG, spec, workers=1)
    print(f"replayed {len(result.windows)} windows in {time.perf_counter() - t0:.1f} s")
    return [w.advice for w in result.windows]


def time_cycle(repeat: int) -> None:
    """Polar + advice (with turn arcs) on the demo voyage's estimates, one core."""
    import pandas as pd

    from advisor.advice import advise
    from onboard.core.engine import Engine
    from onboard.formats.vessel import load_vessel

    engine = Engine(load_vessel(VESSEL), CONDITION)
    frame = pd.read_csv(LOG)
    frame["time_utc"] = pd.to_datetime(frame["time_utc"], utc=True)
    t = frame["time_utc"]
    ests = []
    for k in range(3):
        start = t.iloc[0] + pd.Timedelta(minutes=60 * (1 + 2 * k))
        win = frame[(t >= start) & (t < start + pd.Timedelta(minutes=20))]
        r = engine.analyse(win)
        if r.estimate is not None:
            ests.append((r.estimate, r.heading, r.speed))
    times = []
    for _ in range(repeat):
        for est, psi, u in ests:
            t0 = time.perf_counter()
            polar = engine.evaluate(est)
            advise(polar, psi, u, psi + 1.0, engine.limit_set.advice)  # course 57° off: a change with turn arcs
            times.append(time.perf_counter() - t0)
    ms = np.array(times) * 1e3
    print(
        f"full advice cycle (polar {engine.polar_model.headings.size} headings x "
        f"{engine.polar_model.speeds.size} speeds, {len(engine.limit_set.limits)} limits, envelope over "
        f"Hs/Tp/direction intervals, zones, advice with turn arcs): median {np.median(ms):.1f} ms, "
        f"max {ms.max():.1f} ms over {ms.size} cycles (one core; goal <= 100 ms)"
    )


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--from", dest="src", help="read DIR/advice.csv instead of replaying")
    ap.add_argument("--cycle", action="store_true", help="also time a full advice cycle")
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args(argv)
    if args.src:
        with open(Path(args.src) / "advice.csv", newline="") as fh:
            rows = list(csv.DictReader(fh))
    else:
        rows = replay_rows()
    f = figures_from_rows(rows)
    print(f"windows with advice: {f['windows']}")
    print(f"change advised: {f['changes']} of {f['windows']}")
    print(
        f"change advised at utilisation < 0.5: {f['changes_low']} "
        f"(of which with no screened zone at the present heading and speed: {f['changes_low_no_zone']}; goal 0)"
    )
    print(f"flips (ship steady within 10 deg / 2 kn, advice moved > 30 deg or > 5 kn): {f['flips']} (goal <= 2)")
    if args.cycle:
        time_cycle(args.repeat)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
