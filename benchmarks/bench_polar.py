"""Benchmark of the advisor's polar evaluation (advisor.polar), on one core.

Grid: 72 true headings (5°) × 25 speeds (0–24 kn, 1 kn); the demo vessel's deep-laden RAO table;
a bimodal sea (wind sea + swell, the sum of two JONSWAP × cos-2s systems) on 36 frequencies × 36
directions (10°), as the wave-buoy-analogy estimator delivers it. Two limit sets:

* "8 x 3": all 8 criteria, each at 3 points (24 limits: roll and pitch as RMS, significant and
  3-h MPM; accelerations and motion sickness at the two top tiers and the bridge; slamming at three
  keel stations; deck wetness at three deck points) — the benchmark the budget applies to;
* the high-deck-stow set of config/limits/ (10 limits at 6 points), as the service would run it.

Prints the time of

* ``build_polar_model`` (once per loading condition and grid; not per cycle),
* ``evaluate_polar`` per cycle, nominal and conservative (σ_Hs = 10 %, σ_dir = 10°) with zones,
* the full cycle the service runs (the budget applies to it): envelope over the estimate's intervals
  (upper Hs, both ends of the Tp interval, ±σ_dir), zones over the Tm01–Tp band, a speed cap, and
  ``advise`` with its turn arcs,
* a straightforward loop over the 1800 (heading, speed) cells computing the same numbers (RAOs
  interpolated per cell at the exact β of every wave component, transfers, moments, statistics;
  nominal only, so it does less work than the polar evaluation),

the speed-up and the largest relative difference of the nominal utilisation between the two.

Run from the repository root: ``python benchmarks/bench_polar.py [--repeat N]``.
"""

import os

# one core: pin the BLAS/OpenMP pools before numpy is imported
for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import math  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from advisor import criteria  # noqa: E402
from advisor.advice import advise  # noqa: E402
from advisor.limits import parse_limit_set  # noqa: E402
from advisor.polar import build_polar_model, evaluate_polar  # noqa: E402
from estimator.constants import KNOT, G  # noqa: E402
from estimator.spectra import directional_spectrum, jonswap, spreading_cos2s  # noqa: E402
from onboard.formats.limitsfile import read_limit_set  # noqa: E402
from onboard.formats.vessel import load_condition_raos, load_vessel  # noqa: E402

DEG = math.pi / 180.0


def make_sea():
    omega = np.linspace(0.2, 2.0, 36)
    theta = np.arange(36) * 10.0 * DEG
    wind = directional_spectrum(
        omega, theta, jonswap(omega, 5.0, 9.0), lambda th: spreading_cos2s(th, 290 * DEG, 12.0)
    )
    swell = directional_spectrum(
        omega, theta, jonswap(omega, 3.0, 14.0), lambda th: spreading_cos2s(th, 220 * DEG, 40.0)
    )
    return wind + swell


def loop_over_cells(model, rao_table, spectrum, pts):
    """The same nominal utilisation, one cell at a time (reference for correctness and speed)."""
    ls = model.limit_set
    n_c = len(ls.limits)
    out = np.empty((n_c, model.headings.size, model.speeds.size))
    om = spectrum.omega[:, None]
    w = np.outer(spectrum.omega_weights, spectrum.theta_weights)
    for h, psi in enumerate(model.headings):
        beta = np.mod(np.pi - (spectrum.theta[None, :] - psi), 2 * np.pi) + 0 * om  # (K, L)
        for s, u in enumerate(model.speeds):
            omega_e = om - om**2 * u * np.cos(beta) / G
            rao6 = rao_table(om + 0 * beta, beta, u)
            for c, lim in enumerate(ls.limits):
                resp = criteria.response_of(lim, pts)
                hh = criteria.transfer(resp, rao6, om, beta, omega_e)
                e = np.abs(hh) ** 2 * spectrum.density * w
                m0, m2 = e.sum(), (omega_e**2 * e).sum()
                point = pts[lim.point] if lim.point else None
                out[c, h, s] = (
                    criteria.predicted_statistic(lim, m0, m2, point=point, lpp=model.lpp) / lim.value
                )
    return out


def eight_by_three():
    """Limit-set mapping with every criterion at three points (values of NORDFORSK size; only the
    arithmetic is measured)."""
    pts = [
        {"name": "keel_80", "x_m": 80.0, "y_m": 0.0, "z_m": -11.5},
        {"name": "keel_70", "x_m": 70.0, "y_m": 0.0, "z_m": -11.5},
        {"name": "keel_60", "x_m": 60.0, "y_m": 0.0, "z_m": -11.5},
        {"name": "deck_85", "x_m": 85.0, "y_m": 0.0, "z_m": 9.0},
        {"name": "deck_70", "x_m": 70.0, "y_m": 0.0, "z_m": 8.5},
    ]
    three = ["forward_top_tier", "aft_top_tier", "bridge"]
    lim = []
    for crit in ("roll", "pitch"):
        for stat, extra in (("rms", {}), ("significant", {}), ("mpm", {"exposure_h": 3.0})):
            lim.append({"criterion": crit, "statistic": stat, "value": 10.0, "unit": "deg", **extra})
    for crit in ("vertical_acceleration", "lateral_acceleration", "longitudinal_acceleration"):
        for p in three:
            lim.append(
                {
                    "criterion": crit,
                    "statistic": "mpm",
                    "value": 0.5,
                    "unit": "g",
                    "point": p,
                    "exposure_h": 3.0,
                }
            )
    for p in three:
        lim.append(
            {
                "criterion": "motion_sickness",
                "statistic": "msdv",
                "value": 60.0,
                "unit": "m/s^1.5",
                "point": p,
                "exposure_h": 4.0,
            }
        )
    for p in ("keel_80", "keel_70", "keel_60"):
        lim.append(
            {
                "criterion": "slamming",
                "statistic": "probability",
                "value": 0.02,
                "unit": "probability",
                "point": p,
            }
        )
    for p in ("bow", "deck_85", "deck_70"):
        lim.append(
            {
                "criterion": "deck_wetness",
                "statistic": "rate_per_hour",
                "value": 20.0,
                "unit": "per_hour",
                "point": p,
            }
        )
    for d in lim:
        d["source"] = "benchmark"
    return {"schema_version": 1, "name": "8 x 3", "points": pts, "limits": lim}


def run(label, vessel, cond, rao_table, limit_set, spectrum, repeat):
    points = limit_set.resolve_points(vessel.points_mapping())
    n_points = len({lim.point for lim in limit_set.limits if lim.point})
    n_crit = len({lim.criterion for lim in limit_set.limits})

    t0 = time.perf_counter()
    model = build_polar_model(
        rao_table,
        limit_set,
        lpp=vessel.lpp,
        t_roll=cond.roll_period,
        vessel_points=vessel.points_mapping(),
        omega=spectrum.omega,
        max_speed=24 * KNOT,
    )
    t_build = time.perf_counter() - t0

    evaluate_polar(model, spectrum, sigma_hs_rel=0.1, sigma_dir=10 * DEG)  # warm-up
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        res = evaluate_polar(model, spectrum, sigma_hs_rel=0.1, sigma_dir=10 * DEG)
        times.append(time.perf_counter() - t0)
    t_polar = float(np.median(times))

    # the full cycle as the service runs it: envelope over the estimate's intervals (upper Hs,
    # both ends of the Tp interval, ±σ_dir), zones over the Tm01–Tp band, attainable speed, and the
    # advice with its turn arcs (course 60° off the heading, so a change and a turn are assessed)
    cap = np.full(model.headings.size, 18 * KNOT)
    full = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        res_env = evaluate_polar(model, spectrum, sigma_dir=10 * DEG, hs_upper=1.3 * spectrum.hs(),
                                 tp_factors=(0.85, 1.15), speed_cap=cap, speed_cap_method="fixed")
        advise(res_env, 200 * DEG, 14 * KNOT, 260 * DEG, limit_set.advice)
        full.append(time.perf_counter() - t0)
    t_full = float(np.median(full))

    t0 = time.perf_counter()
    ref = loop_over_cells(model, rao_table, spectrum, points)
    t_loop = time.perf_counter() - t0
    rel = float(np.max(np.abs(res.utilisation - ref) / np.maximum(np.abs(ref), 1e-300)))

    print(
        f"[{label}] grid: {model.headings.size} headings x {model.speeds.size} speeds; "
        f"sea {spectrum.omega.size} x {spectrum.theta.size}; "
        f"{len(limit_set.limits)} limits ({n_crit} criteria) at {n_points} points; "
        f"{len(model.responses)} distinct responses"
    )
    print(f"  build_polar_model (once per condition):                              {t_build * 1e3:8.1f} ms")
    print(f"  evaluate_polar per cycle (median of {repeat}, nominal + conservative + zones):")
    print(f"                                                                       {t_polar * 1e3:8.1f} ms")
    print(f"  full cycle (envelope over Hs/Tp/direction intervals, zones, speed cap, advice with turn arcs):")
    print(f"                                                                       {t_full * 1e3:8.1f} ms"
          f"  (max {max(full) * 1e3:.1f} ms)")
    print(f"  straightforward loop over cells (nominal only):                      {t_loop * 1e3:8.1f} ms")
    print(f"  speed-up: {t_loop / t_polar:8.1f}x   largest relative difference of the utilisation: {rel:.2e}")
    budget = "met" if t_full <= 0.1 else "NOT met"
    ratio = "met" if t_loop / t_polar >= 20 else "NOT met"
    print(f"  budget 100 ms: {budget}; 20x: {ratio}")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=20, help="timed repetitions of evaluate_polar")
    args = ap.parse_args(argv)

    vessel = load_vessel(ROOT / "config" / "demo_vessel.toml")
    cond = vessel.conditions[0]
    rao_table = load_condition_raos(vessel, cond)
    spectrum = make_sea()
    run(
        "8 x 3",
        vessel,
        cond,
        rao_table,
        parse_limit_set(eight_by_three(), "benchmark"),
        spectrum,
        args.repeat,
    )
    cargo = read_limit_set(
        ROOT / "config" / "limits" / "high_stack_deep_laden.toml", vessel_points=vessel.points_mapping()
    )
    run("high deck stow", vessel, cond, rao_table, cargo, spectrum, args.repeat)


if __name__ == "__main__":
    main()
