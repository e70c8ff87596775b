"""Small simulated voyage logs for the replay, report and fleet tests (written to tmp_path).

The motions are simulated (:func:`estimator.simulate.simulate`, random-phase superposition) from a known
JONSWAP × cos-2s sea through the demo vessel's stored RAOs (``config/demo_vessel.toml``), at the vessel's
motion-sensor position, and written in the voyage-log format of interfaces.md §2 (degrees, knots, sensor
signs). Everything here is invented test data.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from estimator import spectra
from estimator.constants import KNOT
from estimator.simulate import simulate
from onboard.vessel import load_condition_raos, load_vessel

ROOT = Path(__file__).resolve().parents[2]
VESSEL = ROOT / "config" / "demo_vessel.toml"
CONDITION = "deep laden, low GM"
START = pd.Timestamp("2026-02-10T00:00:00Z")

_RAOS: dict = {}


def demo_raos():
    if "rao" not in _RAOS:
        v = load_vessel(VESSEL)
        _RAOS["rao"] = load_condition_raos(v, v.condition(CONDITION))
        _RAOS["sensor"] = v.motion_sensor.xyz
    return _RAOS["rao"], _RAOS["sensor"]


def sea(hs: float, tp: float, wave_from_deg: float, s: float = 10.0) -> spectra.DirectionalSpectrum:
    """JONSWAP (DNV gamma) × cos-2s spreading on a fine grid [m²·s/rad²]."""
    om = np.linspace(0.2, 2.6, 240)
    th = np.arange(72) * 2 * np.pi / 72
    s1 = spectra.jonswap(om, hs, tp, gamma=spectra.jonswap_gamma_dnv(hs, tp))
    d = spectra.spreading_cos2s(th, np.radians(wave_from_deg), s)
    return spectra.DirectionalSpectrum(omega=om, theta=th, density=s1[:, None] * d[None, :])


def simulate_frame(
    hours: float,
    *,
    hs: float = 4.0,
    tp: float = 10.0,
    wave_from_deg: float = 60.0,
    heading_deg=20.0,
    speed_kn=12.0,
    fs: float = 2.0,
    seed: int = 1,
    start: pd.Timestamp = START,
    n_frequencies: int = 120,
    n_directions: int = 36,
) -> pd.DataFrame:
    """A voyage-log DataFrame (interfaces.md §2 columns) simulated in a stationary sea.

    ``heading_deg`` and ``speed_kn`` may be callables of time since the start [s].
    """
    rao, sensor = demo_raos()
    hd = (lambda t: np.radians(heading_deg(t))) if callable(heading_deg) else np.radians(heading_deg)
    sp = (lambda t: speed_kn(t) * KNOT) if callable(speed_kn) else speed_kn * KNOT
    rec = simulate(
        sea(hs, tp, wave_from_deg),
        rao,
        heading=hd,
        speed=sp,
        duration=hours * 3600.0,
        fs=fs,
        sensor_xyz=sensor,
        seed=seed,
        n_frequencies=n_frequencies,
        n_directions=n_directions,
        channels=("roll", "pitch", "heave"),
        noise_std={"roll": np.radians(0.02), "pitch": np.radians(0.02), "heave": 0.02},
    )
    t = start + pd.to_timedelta(np.round(rec.t * 1000).astype("int64"), unit="ms")
    heading = np.degrees(rec.heading) % 360.0
    stw = rec.speed / KNOT
    return pd.DataFrame(
        {
            "time_utc": t,
            "roll_deg": np.round(np.degrees(rec.channels["roll"]), 5),
            "pitch_deg": np.round(np.degrees(rec.channels["pitch"]), 5),
            "heave_m": np.round(rec.channels["heave"], 4),
            "heading_deg": np.round(heading, 4) % 360.0,
            "stw_kn": np.round(stw, 3),
            "sog_kn": np.round(stw, 3),
            "cog_deg": np.round(heading, 4) % 360.0,
        }
    )


def write_log(frame: pd.DataFrame, path: Path) -> Path:
    """Write a frame as ``.csv``, ``.csv.gz`` or ``.parquet`` (by the path's suffix)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    name = path.name.lower()
    if name.endswith(".parquet"):
        frame.to_parquet(path, index=False)
        return path
    out = frame.copy()
    out["time_utc"] = out["time_utc"].dt.strftime("%Y-%m-%dT%H:%M:%S.%f").str[:-3] + "Z"
    out.to_csv(path, index=False, compression="gzip" if name.endswith(".gz") else None, na_rep="")
    return path
