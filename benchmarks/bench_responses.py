"""Benchmark of estimator.responses for a whole polar grid, on one core.

Grid: 72 headings (5°) × 25 speeds × 36 wave frequencies × 36 directions (10°), 24 responses
(8 criteria × 3 points), moments m0, m2, m4. Prints the time of

* a straightforward Python loop over the 1800 (heading, speed) cells (float64, the reference),
* ``response_moments`` on the full transfer array (complex64 and, unless --no-float64, complex128),
* ``polar_response_moments`` from |H|² tabulated once per speed on a 5° relative-heading grid
  (float64 and float32),

the speed-up over the loop and the largest relative error against it. The transfer is a synthetic
resonant response with random amplitudes and phases per response (only the arithmetic is measured);
with θ every 10° and ψ, β every 5° all three routes integrate exactly the same sum.

Run: ``python benchmarks/bench_responses.py [--repeat N] [--no-float64]``.
"""

import os

# one core: pin the BLAS/OpenMP pools before numpy is imported (threadpoolctl, if present, as well)
for _var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import contextlib  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from estimator.constants import G, KNOT  # noqa: E402
from estimator.responses import polar_response_moments, response_moments  # noqa: E402

try:
    from threadpoolctl import threadpool_limits
except ImportError:  # the environment variables above already pin the pools
    threadpool_limits = None

N_RESP, N_HEAD, N_SPEED, N_OMEGA, N_THETA, N_BETA = 24, 72, 25, 36, 36, 72
ORDERS = (0, 2, 4)


def build_case(seed=2024):
    """Sea, grids and the transfer on the relative-heading grid (responses, speeds, ω, β)."""
    rng = np.random.default_rng(seed)
    omega = np.linspace(0.2, 2.0, N_OMEGA)
    theta = np.arange(N_THETA) * 2 * np.pi / N_THETA
    psi = np.arange(N_HEAD) * 2 * np.pi / N_HEAD
    beta = np.arange(N_BETA) * 2 * np.pi / N_BETA
    speeds = np.linspace(0.0, 24.0, N_SPEED) * KNOT
    # sea: Pierson–Moskowitz-type shape (Hs 5 m, Tp 10 s) × cos-2s (s = 8) from 40°
    wp = 2 * np.pi / 10.0
    s_omega = 5 / 16 * 25.0 * wp**4 * omega**-5 * np.exp(-1.25 * (omega / wp) ** -4)
    spread = np.cos((theta - np.radians(40.0)) / 2) ** 16
    spread /= spread.sum() * (2 * np.pi / N_THETA)
    density = s_omega[:, None] * spread[None, :]
    weights = np.full((N_OMEGA, N_THETA), (omega[1] - omega[0]) * 2 * np.pi / N_THETA)
    # encounter frequency on (speed, ω, β) and a resonant transfer per response
    we_rel = omega[None, :, None] - omega[None, :, None] ** 2 * speeds[:, None, None] * np.cos(beta) / G
    w_n = rng.uniform(0.4, 1.2, N_RESP)[:, None, None, None]
    amp = rng.uniform(0.2, 3.0, (N_RESP, 1, 1, N_BETA))
    phase = rng.uniform(-np.pi, np.pi, (N_RESP, N_SPEED, N_OMEGA, N_BETA))
    h_rel = amp * np.exp(1j * phase) / (1 - (we_rel[None] / w_n) ** 2 + 0.3j * we_rel[None] / w_n)
    return omega, theta, psi, beta, speeds, density, weights, we_rel, h_rel


def full_grid(psi, theta, beta, we_rel, h_rel):
    """Transfer and ω_e at every (heading, speed, ω, θ): a gather from the β grid (exact, aligned)."""
    rel = np.mod(np.pi - (theta[None, :] - psi[:, None]), 2 * np.pi)  # (NH, L)
    jj = np.rint(rel / (beta[1] - beta[0])).astype(np.intp) % N_BETA
    # h_rel (R, NS, K, J) -> (R, NH, NS, K, L), C-contiguous as response_moments expects
    transfer = np.empty((N_RESP, N_HEAD, N_SPEED, N_OMEGA, N_THETA), np.complex128)
    for h in range(N_HEAD):
        transfer[:, h] = h_rel[..., jj[h]]
    omega_e = np.ascontiguousarray(np.moveaxis(we_rel[..., jj], 2, 0))  # (NH, NS, K, L)
    return transfer, omega_e


def loop_over_cells(transfer, density, omega_e, weights):
    """The straightforward route: one (heading, speed) cell at a time, float64."""
    sw = density * weights
    out = np.empty((len(ORDERS), N_RESP, N_HEAD, N_SPEED))
    for h in range(N_HEAD):
        for s in range(N_SPEED):
            p = np.abs(transfer[:, h, s]) ** 2  # (R, K, L)
            awe = np.abs(omega_e[h, s])
            for i, n in enumerate(ORDERS):
                out[i, :, h, s] = np.sum(p * (awe**n * sw), axis=(-2, -1))
    return out


def best_time(fn, repeat):
    best, result = np.inf, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def rel_err(a, ref):
    return float(np.max(np.abs(a - ref) / np.abs(ref)))


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5, help="repetitions, best time kept (default 5)")
    parser.add_argument("--no-float64", action="store_true", help="skip timing the 855 MiB complex128 path")
    args = parser.parse_args(argv)

    limits = threadpool_limits(limits=1) if threadpool_limits else contextlib.nullcontext()
    with limits:
        omega, theta, psi, beta, speeds, density, weights, we_rel, h_rel = build_case()
        transfer64, omega_e = full_grid(psi, theta, beta, we_rel, h_rel)
        transfer = transfer64.astype(np.complex64)
        gain2 = (np.abs(h_rel) ** 2).astype(np.float64)  # |H|² once per speed: (R, NS, K, J)
        print(
            f"grid: {N_HEAD} headings x {N_SPEED} speeds x {N_OMEGA} omega x {N_THETA} theta, "
            f"{N_RESP} responses, orders {ORDERS}; threads pinned to 1 "
            f"({'threadpoolctl' if threadpool_limits else 'environment variables'})"
        )
        print(f"full transfer array: {transfer.nbytes / 2**20:.0f} MiB complex64; "
              f"|H|² per speed on beta grid: {gain2.nbytes / 2**20:.1f} MiB float64")

        t_loop, ref = best_time(lambda: loop_over_cells(transfer64, density, omega_e, weights), 1)
        print(f"{'python loop over cells (float64)':48s} {t_loop * 1e3:9.1f} ms")

        rows = []
        t, m = best_time(
            lambda: response_moments(transfer, density, omega, omega_e, weights, ORDERS), args.repeat
        )
        rows.append(("response_moments, complex64 full grid", t, m))
        if not args.no_float64:
            t, m = best_time(
                lambda: response_moments(transfer64, density, omega, omega_e, weights, ORDERS), args.repeat
            )
            rows.append(("response_moments, complex128 full grid", t, m))
        del transfer64
        for dt in (np.float64, np.float32):
            t, m = best_time(
                lambda dt=dt: polar_response_moments(
                    gain2, we_rel, beta, density, theta, psi, weights, ORDERS, dtype=dt
                ),
                args.repeat,
            )
            rows.append((f"polar_response_moments, {np.dtype(dt).name}", t, m))
        for name, t, m in rows:
            print(
                f"{name:48s} {t * 1e3:9.1f} ms   x{t_loop / t:7.1f} vs loop   "
                f"max rel. error {rel_err(m, ref):.1e}"
            )


if __name__ == "__main__":
    main()
