"""Sea-state accuracy on an independent path: truth motions that do not come from the estimator's RAOs.

Run by hand:  python benchmarks/bench_independent.py [--cases N] [--config box|quick|both] [--seed S]

``box``   (the independent path, :mod:`benchmarks.independent`): a 170 m × 27.5 m box hull solved by a
          boundary-element code; its motions are computed at the exact encounter frequency of every wave
          component at the actual speed, for a "real" ship with RAO errors (roll damping ×0.7/×1.3, GM
          ±8 %, amplitudes ±10-15 %, phases ±10°); the estimator is given the nominal model exported on a
          coarse table (0.20-1.60 rad/s every 0.05, every 15°, 0/6/12/18 kn).
``quick`` the issue's quick configuration: the project's closed-form RAOs of a 170 m hull (beam 27.5 m,
          roll period 14-20 s, table 0.20-1.60 rad/s in 0.05 steps, 0/6/12/18 kn), simulated with the very
          table the estimator is given (a pure round trip: any bias is the method's).

Both: ship speeds between the tabulated speeds, sensor 14 m aft, 2.5 m to port, 12 m above the waterline,
20-min records at 5 Hz with sensor noise, heading and speed wandering ±1.5° and ±0.1 m/s. The encounter
frequency depends on the speed through water (STW), which the voyage log carries (``stw_kn``) and the
estimator uses; a current changes only the speed over ground, which the estimator never sees, so it is not
simulated separately (a log that had only SOG would need the current; see the report of issue 12).

Printed: per case the signed Hs error and the 90 % interval; per sector the median signed error, the
median and 90th percentile of |ΔHs|, the largest |ΔHs|, |ΔTp| and direction errors; the coverage of the
90 % Hs interval; a reliability table (confidence band → observed p90 |ΔHs|); processor time per window
(cold and warm). All data are invented for the benchmark.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from benchmarks import bench_estimator  # noqa: E402
from benchmarks import independent as ind  # noqa: E402
from benchmarks.bench_estimator import _pct, circ_err_deg, sector  # noqa: E402
from estimator import hull, spectra  # noqa: E402
from estimator.constants import KNOT  # noqa: E402
from estimator.seastate import EstimatorSettings, SeaStateEstimator  # noqa: E402
from estimator.simulate import simulate  # noqa: E402

NOISE = {"roll": np.radians(0.02), "pitch": np.radians(0.02), "heave": 0.02,
         "acc_x": 0.005, "acc_y": 0.005, "acc_z": 0.005}
FS = 5.0
DURATION = 1200.0


def quick_tables():
    """The issue's quick configuration, closed-form RAOs (a round trip: truth = stored)."""
    cb, draft, kg = 0.70, 9.5, 11.0
    gm = 1.5
    t_roll = float(hull.roll_period_is_code(ind.B, draft, ind.L, gm))
    table = hull.estimate_rao_table(ind.L, ind.B, draft, cb, gm, speeds=ind.TABLE_SPEEDS_KN * KNOT,
                                    headings=np.radians(np.arange(0, 181, 15.0)), omegas=ind.TABLE_OMEGAS,
                                    t_roll=t_roll, zeta_roll=0.05, kg=kg, lwl=ind.L, name="quick")
    return table, t_roll


def make_cases(n: int, rng: np.random.Generator) -> list[dict]:
    betas = [180, 150, 120, 90, 210, 240, 270, 60, 30, 0, 330, 300]
    cases = []
    for i in range(n):
        beta = float(betas[i % len(betas)] + rng.uniform(-7, 7))
        hs = float(rng.uniform(1.5, 8.0))
        tp = float(np.clip(rng.uniform(max(6.0, 3.6 * np.sqrt(hs)), 15.0), 6.0, 15.0))
        # speeds between the tabulated 0/6/12/18 kn
        speed_kn = float(rng.choice([2.5, 4.0, 8.5, 10.0, 14.5, 16.0]) + rng.uniform(-0.5, 0.5))
        cases.append(dict(beta=beta % 360, heading=float(rng.uniform(0, 360)), speed_kn=speed_kn, hs=hs,
                          tp=tp, s=float(rng.choice([4, 8, 15, 25]))))
    return cases


def run_config(config: str, n_cases: int, seed: int, n_freq: int, n_dir: int,
               verbose: bool = True, truth_kind: str = "perturbed",
               resonance_roll: bool = False) -> list[dict]:
    rng = np.random.default_rng(seed)
    if config == "box":
        nominal = ind.BoxShip()
        stored = nominal.stored_table()
        t_roll = nominal.t_roll
    else:
        stored, t_roll = quick_tables()
    settings = EstimatorSettings(roll_resonance=resonance_roll)
    est = SeaStateEstimator(stored, ind.SENSOR, roll_period=t_roll, settings=settings)
    rows = []
    for i, c in enumerate(make_cases(n_cases, rng)):
        # quick: a pure round trip, the very table the estimator is given
        truth = ind.perturbed(rng) if config == "box" else stored
        if truth_kind != "perturbed":  # diagnosis: the exact nominal model, or the stored table itself
            truth = nominal if (truth_kind == "nominal" and config == "box") else stored
        wave_from = (c["heading"] + 180.0 - c["beta"]) % 360.0
        s1 = spectra.jonswap(np.linspace(0.12, 2.6, 300), c["hs"], c["tp"],
                             gamma=spectra.jonswap_gamma_dnv(c["hs"], c["tp"]))
        th = np.arange(144) * 2 * np.pi / 144
        dens = s1[:, None] * spectra.spreading_cos2s(th, np.radians(wave_from), c["s"])[None, :]
        sp = spectra.DirectionalSpectrum(omega=np.linspace(0.12, 2.6, 300), theta=th, density=dens)
        heading = np.radians(c["heading"])
        stw = c["speed_kn"] * KNOT
        # the encounter frequency depends on the speed through water, which is what the record carries
        ph = rng.uniform(0, 6.3)
        rec = simulate(sp, truth,
                       heading=lambda t, h=heading, p=ph: h + 0.026 * np.sin(2 * np.pi * t / 300 + p),
                       speed=lambda t, u=stw, p=ph: u + 0.1 * np.sin(2 * np.pi * t / 420 + p),
                       duration=DURATION, fs=FS, sensor_xyz=ind.SENSOR, seed=int(rng.integers(1 << 31)),
                       n_frequencies=n_freq, n_directions=n_dir, noise_std=NOISE)
        an, cold, warm = bench_estimator.timed_analysis(rec, est, NOISE)
        if not an.accepted:
            print(f"case {i}: rejected: {an.reasons}")
            continue
        e = an.estimate
        hs_true = sp.hs()
        row = dict(i=i, sector=sector(c["beta"]), beta=c["beta"], speed_kn=c["speed_kn"], hs=hs_true,
                   hs_est=e.hs, hs_err=(e.hs - hs_true) / hs_true, tp_err=(e.tp - c["tp"]) / c["tp"],
                   dir_err=circ_err_deg(np.degrees(e.wave_from), wave_from), conf=e.confidence, cold=cold,
                   warm=warm, method=e.method,
                   lo=getattr(e, "hs_p05", float("nan")), hi=getattr(e, "hs_p95", float("nan")),
                   tp_lo=getattr(e, "tp_p05", float("nan")), tp_hi=getattr(e, "tp_p95", float("nan")),
                   tp=c["tp"])
        rows.append(row)
        if verbose:
            print(f"{config} {i:3d} {row['sector']:9s} β={c['beta']:5.0f} U={c['speed_kn']:4.1f}kn "
                  f"Hs {hs_true:5.2f}→{e.hs:5.2f} ({100 * row['hs_err']:+5.0f}%) "
                  f"[{row['lo']:5.2f},{row['hi']:5.2f}] Tp {c['tp']:5.1f}→{e.tp:5.1f} "
                  f"dir {row['dir_err']:5.1f}° "
                  f"conf {e.confidence:.2f} {e.method[:3]} cpu {cold:.2f}/{warm:.2f}s", flush=True)
    return rows


def report(config: str, rows: list[dict]) -> None:
    print(f"\n== {config}: {len(rows)} cases ==")
    print(f"{'group':22s} {'n':>3s} {'dHs med':>8s} {'high':>5s} {'|dHs| med':>9s} {'p90':>6s} {'max':>6s} "
          f"{'|dTp| med':>9s} {'dir med':>8s} {'p90':>6s}")
    groups = {"head": [r for r in rows if r["sector"] == "head"],
              "beam": [r for r in rows if r["sector"] == "beam"],
              "head to beam": [r for r in rows if r["sector"] in ("head", "beam")],
              "following/quartering": [r for r in rows if r["sector"] == "following"],
              "overall": rows}
    for name, g in groups.items():
        sg = [r["hs_err"] * 100 for r in g]
        hs = [abs(x) for x in sg]
        print(f"{name:22s} {len(g):3d} {_pct(sg, 50):+7.1f}% {sum(x > 0 for x in sg):2d}/{len(g):<2d} "
              f"{_pct(hs, 50):8.1f}% {_pct(hs, 90):5.1f}% {max(hs, default=float('nan')):5.0f}% "
              f"{_pct([abs(r['tp_err']) * 100 for r in g], 50):8.1f}% "
              f"{_pct([r['dir_err'] for r in g], 50):7.1f}° {_pct([r['dir_err'] for r in g], 90):5.1f}°")
    inside = [r["lo"] <= r["hs"] <= r["hi"] for r in rows if np.isfinite(r["lo"])]
    if inside:
        tp_in = [r["tp_lo"] <= r["tp"] <= r["tp_hi"] for r in rows if np.isfinite(r["tp_lo"])]
        print(f"90 % Hs interval holds the true Hs in {sum(inside)}/{len(inside)} = "
              f"{100 * np.mean(inside):.0f} % "
              f"of cases (Tp interval: {100 * np.mean(tp_in):.0f} %)")
    print("reliability (confidence band → cases, observed median / p90 |dHs|):")
    for lo_, hi_ in ((0.0, 0.4), (0.4, 0.7), (0.7, 1.01)):
        g = [abs(r["hs_err"]) * 100 for r in rows if lo_ <= r["conf"] < hi_]
        print(f"  {lo_:.1f}-{min(hi_, 1.0):.1f}: {len(g):3d}  {_pct(g, 50):5.1f} % / {_pct(g, 90):5.1f} %")
    hb = [r for r in rows if r["sector"] in ("head", "beam")]
    hc = [r for r in hb if r["conf"] >= 0.7]
    print(f"head-beam cases with confidence >= 0.7: {len(hc)}/{len(hb)}; their p90 |dHs| "
          f"{_pct([abs(r['hs_err']) * 100 for r in hc], 90):.1f} %")
    bench_estimator.print_times(rows)
    print("targets (issue 12): head-beam signed median within ±3 %, |dHs| median ≤ 8 %, p90 ≤ 20 %; "
          "following median ≤ 15 %, none above 60 %; ≥ half head-beam conf ≥ 0.7 with p90 ≤ 12 %; "
          "interval coverage ≥ 80 %")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=36)
    ap.add_argument("--seed", type=int, default=12)
    ap.add_argument("--config", choices=["box", "quick", "both"], default="both")
    ap.add_argument("--coarse", action="store_true", help="150 × 36 wave components instead of 300 × 72")
    ap.add_argument("--truth", choices=["perturbed", "nominal", "table"], default="perturbed",
                    help="diagnosis: simulate the box without RAO errors (nominal) or with the stored table")
    ap.add_argument("--resonance-roll", action="store_true",
                    help="read the stored roll through its 1-DOF resonance model "
                         "(EstimatorSettings.roll_resonance)")
    ap.add_argument("--old-cases", type=int, default=0,
                    help="also run the project's earlier benchmark (bench_estimator.py) with this many cases")
    a = ap.parse_args()
    if a.old_cases:
        print("== earlier benchmark (closed-form RAOs, 200 m ship, 2 Hz) ==")
        bench_estimator.run(a.old_cases, 2026, a.coarse)
    nf, nd = (150, 36) if a.coarse else (300, 72)
    configs = ["box", "quick"] if a.config == "both" else [a.config]
    results = {cfg: run_config(cfg, a.cases, a.seed, nf, nd, truth_kind=a.truth,
                                  resonance_roll=a.resonance_roll) for cfg in configs}
    for cfg, rows in results.items():
        report(cfg, rows)


if __name__ == "__main__":
    main()
