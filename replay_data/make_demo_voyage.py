"""Generate the bundled demo voyage log ``replay_data/demo_voyage.csv.gz`` (INVENTED data).

An invented heavy-weather passage of the invented demo ship (``config/demo_vessel.toml``, condition
"deep laden, low GM"): 6.5 hours at 2 Hz, in the voyage-log format of docs/voyage-log.md. Nothing here
is a measurement; the ship, the position and the weather are made up. Run from the top of the checkout:

    python replay_data/make_demo_voyage.py            # writes replay_data/demo_voyage.csv.gz
    python replay_data/make_demo_voyage.py --check    # regenerate in memory, compare with the file

The story (times from the start of the log):

* wind sea building from Hs 3 m to 7 m (Tp 8.5 s to 12 s, smooth ramp), its mean direction veering from
  250° to 310° true (60° clockwise); a steady swell from 220° (Hs 2 m, Tp 14 s) underneath;
* the ship steers 262° at 15 kn, slows to 12 kn between 1.5 h and 2 h as the sea builds, and at
  4.0 h alters course to 160° (turning over about 4 minutes), bringing the growing sea on the starboard
  quarter, where this deep-laden, low-GM ship with its 20.6 s natural roll period rolls most; 14 kn on
  the new course;
* heading and speed wander slightly (autopilot, waves): Ornstein–Uhlenbeck wander of 1.5° and 0.2 kn.

How the motions are made: :func:`estimator.simulate.simulate` (random-phase superposition of 300 × 72
directional components, St. Denis & Pierson 1953) with the RAO table of the condition, slightly perturbed
so that the demo ship is not exactly its own model (every motion's amplitude scaled by a smooth factor
within ±8 % over frequency and its phase shifted by up to ±5°, fixed seed). The sea state changes with
time, so the log is simulated in 10-minute segments, each with the spectrum of its middle time; adjacent
segments overlap by 60 s and are blended with weights cos(πx/2) and sin(πx/2), whose squares add to one,
so the variance of the independent segments is kept through the blend. Sensor noise: 0.02° on roll and
pitch, 0.02 m on heave. Position is integrated from the speed over ground (speed through water plus an
invented 0.6 kn current setting 045°) and written once per second (blank cells in between, as allowed by
docs/voyage-log.md). All random numbers come from fixed seeds, so the file is reproducible.

The advice computed from this log is advisory only: the master decides.
"""

from __future__ import annotations

import argparse
import gzip
import io
import math
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(ROOT))

from estimator import spectra  # noqa: E402
from estimator.constants import KNOT  # noqa: E402
from estimator.rao import RAOTable  # noqa: E402
from estimator.simulate import random_wander, simulate  # noqa: E402
from onboard.formats.messages import format_time_ms  # noqa: E402
from onboard.formats.vessel import load_condition_raos, load_vessel  # noqa: E402

OUT = HERE / "demo_voyage.csv.gz"
VESSEL = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"
START_MS = 1_736_877_600_000  # 2025-01-14T18:00:00Z, an invented date
DURATION_S = 6.5 * 3600.0
FS = 2.0
SEGMENT_S = 600.0
OVERLAP_S = 60.0
SEED = 20250114
NOISE = {"roll": math.radians(0.02), "pitch": math.radians(0.02), "heave": 0.02}
COLUMNS = (
    "time_utc",
    "roll_deg",
    "pitch_deg",
    "heave_m",
    "heading_deg",
    "stw_kn",
    "sog_kn",
    "cog_deg",
    "lat_deg",
    "lon_deg",
)
DECIMALS = {
    "roll_deg": 3,
    "pitch_deg": 3,
    "heave_m": 3,
    "heading_deg": 2,
    "stw_kn": 2,
    "sog_kn": 2,
    "cog_deg": 2,
    "lat_deg": 5,
    "lon_deg": 5,
}
START_POSITION = (46.80, -9.40)  # invented, open sea
CURRENT_KN, CURRENT_TO_DEG = 0.6, 45.0
EARTH_RADIUS_M = 6_371_000.0


def smoothstep(x):
    """0 → 1 with zero slope at both ends (3x² − 2x³), clipped."""
    x = np.clip(x, 0.0, 1.0)
    return x * x * (3.0 - 2.0 * x)


def sea_state(t_s: float) -> dict:
    """The invented weather at time ``t_s`` [s] from the start: wind sea and swell parameters."""
    ramp = float(smoothstep(t_s / (5.5 * 3600.0)))
    veer = float(smoothstep((t_s - 0.5 * 3600.0) / (5.0 * 3600.0)))
    return {
        "wind": {"hs": 3.0 + 4.0 * ramp, "tp": 8.5 + 3.5 * ramp, "from_deg": 250.0 + 60.0 * veer, "s": 8.0},
        "swell": {"hs": 2.0, "tp": 14.0, "from_deg": 220.0, "s": 20.0},
    }


def spectrum_at(t_s: float) -> spectra.DirectionalSpectrum:
    omega = np.linspace(0.15, 2.5, 240)
    theta = np.arange(144) * 2 * np.pi / 144
    dens = np.zeros((omega.size, theta.size))
    for sy in sea_state(t_s).values():
        s1 = spectra.jonswap(omega, sy["hs"], sy["tp"], gamma=spectra.jonswap_gamma_dnv(sy["hs"], sy["tp"]))
        d = spectra.spreading_cos2s(theta, math.radians(sy["from_deg"]), sy["s"])
        dens += s1[:, None] * d[None, :]
    return spectra.DirectionalSpectrum(omega=omega, theta=theta, density=dens)


def plan(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Planned heading [deg] and speed through water [kn] (before the wander)."""
    turn = smoothstep((t - 4.0 * 3600.0) / 240.0)
    heading = 262.0 + (160.0 - 262.0) * turn
    slow = smoothstep((t - 1.5 * 3600.0) / 1800.0)
    speed = 15.0 - 3.0 * slow + 2.0 * turn
    return heading, speed


def perturbed(table: RAOTable, rng: np.random.Generator) -> RAOTable:
    """The demo ship's 'real' RAOs: amplitudes × smooth factor within ±8 %, phases shifted ±5° ."""
    v = table.values.copy()
    w = table.omegas
    x = (w - w[0]) / (w[-1] - w[0])
    for dof in range(6):
        a = rng.uniform(0.04, 0.08) * rng.choice([-1.0, 1.0])
        factor = 1.0 + a * np.cos(2 * np.pi * x * rng.uniform(0.3, 1.0) + rng.uniform(0, 2 * np.pi))
        v[dof] = v[dof] * factor[None, None, :] * np.exp(1j * math.radians(rng.uniform(-5.0, 5.0)))
    return RAOTable(
        speeds=table.speeds, headings=table.headings, omegas=table.omegas, values=v, name="demo truth"
    )


def generate() -> dict[str, np.ndarray]:
    """All columns of the voyage log as arrays (time in epoch ms)."""
    rng = np.random.default_rng(SEED)
    vessel = load_vessel(VESSEL)
    truth = perturbed(load_condition_raos(vessel, CONDITION), rng)
    n = int(round(DURATION_S * FS)) + 1
    t = np.arange(n) / FS
    heading_plan, speed_plan = plan(t)
    heading = (heading_plan + random_wander(DURATION_S, FS, 1.5, 120.0, seed=SEED + 1)[:n]) % 360.0
    stw = speed_plan + random_wander(DURATION_S, FS, 0.2, 300.0, seed=SEED + 2)[:n]

    motion = {c: np.zeros(n) for c in ("roll", "pitch", "heave")}
    weight_sum = np.zeros(n)
    n_seg = int(math.ceil(DURATION_S / SEGMENT_S))
    for k in range(n_seg):
        a = max(0.0, k * SEGMENT_S - OVERLAP_S / 2)
        b = min(DURATION_S, (k + 1) * SEGMENT_S + OVERLAP_S / 2)
        i0, i1 = int(round(a * FS)), int(round(b * FS)) + 1
        seg_t = t[i0:i1]
        rec = simulate(
            spectrum_at(0.5 * (a + b)),
            truth,
            heading=np.radians(heading[i0:i1]),
            speed=stw[i0:i1] * KNOT,
            duration=(i1 - i0 - 1) / FS,
            fs=FS,
            sensor_xyz=vessel.motion_sensor.xyz,
            seed=SEED + 100 + k,
            noise_std=NOISE,
            channels=("roll", "pitch", "heave"),
        )
        w = np.ones(seg_t.size)
        if k > 0:
            x = (seg_t - a) / OVERLAP_S
            w = np.where(x < 1.0, np.sin(0.5 * np.pi * np.clip(x, 0, 1)), w)
        if k < n_seg - 1:
            x = (b - seg_t) / OVERLAP_S
            w = np.where(x < 1.0, w * np.sin(0.5 * np.pi * np.clip(x, 0, 1)), w)
        for c in motion:
            motion[c][i0:i1] += w * rec.channels[c]
        weight_sum[i0:i1] += w**2
    if not np.allclose(weight_sum, 1.0, atol=1e-9):
        raise AssertionError("segment weights do not keep the variance (squares must add to one)")

    # ground track: STW along the heading plus the current
    v_n = stw * KNOT * np.cos(np.radians(heading)) + CURRENT_KN * KNOT * math.cos(
        math.radians(CURRENT_TO_DEG)
    )
    v_e = stw * KNOT * np.sin(np.radians(heading)) + CURRENT_KN * KNOT * math.sin(
        math.radians(CURRENT_TO_DEG)
    )
    sog = np.hypot(v_n, v_e) / KNOT
    cog = np.degrees(np.arctan2(v_e, v_n)) % 360.0
    north = np.concatenate(([0.0], np.cumsum(0.5 * (v_n[1:] + v_n[:-1]) / FS)))
    east = np.concatenate(([0.0], np.cumsum(0.5 * (v_e[1:] + v_e[:-1]) / FS)))
    lat = START_POSITION[0] + np.degrees(north / EARTH_RADIUS_M)
    lon = START_POSITION[1] + np.degrees(east / (EARTH_RADIUS_M * np.cos(np.radians(lat))))
    every_second = (np.arange(n) % int(FS)) == 0
    lat = np.where(every_second, lat, np.nan)
    lon = np.where(every_second, lon, np.nan)
    return {
        "time_ms": START_MS + np.round(t * 1000.0).astype(np.int64),
        "roll_deg": np.degrees(motion["roll"]),
        "pitch_deg": np.degrees(motion["pitch"]),
        "heave_m": motion["heave"],
        "heading_deg": heading,
        "stw_kn": stw,
        "sog_kn": sog,
        "cog_deg": cog,
        "lat_deg": lat,
        "lon_deg": lon,
    }


def to_csv(cols: dict[str, np.ndarray]) -> bytes:
    """The voyage-log CSV text (docs/voyage-log.md column names, blank = not measured)."""
    out = io.StringIO()
    out.write(",".join(COLUMNS) + "\n")
    fmt = {c: f"{{:.{d}f}}" for c, d in DECIMALS.items()}
    names = COLUMNS[1:]
    for i, tm in enumerate(cols["time_ms"]):
        cells = [format_time_ms(int(tm))]
        for c in names:
            x = cols[c][i]
            cells.append("" if x != x else fmt[c].format(x % 360.0 if c in ("heading_deg", "cog_deg") else x))
        out.write(",".join(cells) + "\n")
    return out.getvalue().encode()


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="regenerate and compare with the bundled file")
    ap.add_argument("--out", default=str(OUT), help="output file (.csv.gz)")
    args = ap.parse_args(argv)
    data = to_csv(generate())
    if args.check:
        with gzip.open(OUT, "rb") as f:
            same = f.read() == data
        print(
            "bundled file is reproduced exactly" if same else "bundled file DIFFERS from a fresh generation"
        )
        return 0 if same else 1
    path = Path(args.out)
    path.write_bytes(gzip.compress(data, compresslevel=9, mtime=0))
    print(f"wrote {path.name}: {len(data.splitlines()) - 1} rows, {path.stat().st_size / 1e6:.2f} MB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
