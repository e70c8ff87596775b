"""Tests for estimator.prep: record validation, cleaning, resampling, gaps, quality flags, stationarity.

Sources of the expected values are named beside each check: scipy.signal.resample_poly as the
reference decimator (scipy documentation), analytical aliasing of a tone, the Butterworth magnitude
response (|H(f_c)|² = 1/2), Mardia & Jupp (2000) for circular statistics, and the thresholds chosen for the
project (common practice; σ(heading) < 5°, σ(speed) < 1 kn, variance ratio 0.67-1.5). Each bad
record is constructed so that exactly one defect is present.
"""

import numpy as np
import pytest
from scipy import signal

from estimator.constants import KNOT
from estimator.prep import (
    CHANNELS,
    PreparedWindow,
    PrepSettings,
    Record,
    circular_mean_std,
    highpass_gain,
    prepare,
)

DEG = np.pi / 180.0


def _sea_like(t, scale, seed, w0=0.7, n=40):
    """A smooth random-phase narrow-band signal (sum of sinusoids around w0 rad/s)."""
    rng = np.random.default_rng(seed)
    w = w0 * (0.6 + 0.8 * rng.random(n))
    ph = rng.uniform(0, 2 * np.pi, n)
    return scale * np.sqrt(2.0 / n) * np.cos(np.outer(t, w) + ph).sum(axis=1)


def _record(duration=1200.0, fs=10.0, seed=0, heading=1.0, speed=6.0, **overrides):
    t = np.arange(int(duration * fs) + 1) / fs
    ch = {
        "roll": _sea_like(t, 3 * DEG, seed, 0.45),
        "pitch": _sea_like(t, 1 * DEG, seed + 1, 0.7),
        "heave": _sea_like(t, 1.0, seed + 2, 0.7),
        "acc_x": _sea_like(t, 0.1, seed + 3, 0.7),
        "acc_y": _sea_like(t, 0.3, seed + 4, 0.5),
        "acc_z": _sea_like(t, 0.5, seed + 5, 0.8),
    }
    ch.update(overrides)
    n = t.size
    hd = heading if np.ndim(heading) else np.full(n, heading)
    sp = speed if np.ndim(speed) else np.full(n, speed)
    return Record(t=t, channels=ch, heading=hd, speed=sp)


def test_clean_record_is_accepted_without_flags():
    p = prepare(_record())
    assert isinstance(p, PreparedWindow)
    assert p.accepted and p.stationary, p.reasons
    assert p.usable == CHANNELS
    assert all(f == () for f in p.flags.values())
    assert p.fs == 2.0 and p.t.size == 2401 and p.duration == pytest.approx(1200.5)
    assert p.heading_mean == pytest.approx(1.0) and p.speed_mean == pytest.approx(6.0)
    assert p.highpass_hz["heave"] == 0.02 and p.highpass_hz["roll"] == 0.0
    assert p.reasons == ()


def test_resampling_matches_scipy_resample_poly_in_band():
    # Oracle: scipy.signal.resample_poly(x, 1, 5) (polyphase anti-aliasing FIR) for 10 Hz → 2 Hz.
    rec = _record()
    p = prepare(rec, PrepSettings(highpass_hz=0.0))
    ref = signal.detrend(signal.resample_poly(rec.channels["roll"], 1, 5)[: p.t.size])
    inner = slice(100, -100)
    diff = p.channels["roll"][inner] - ref[inner]
    assert np.std(diff) < 0.005 * np.std(ref)


def test_anti_aliasing_removes_a_tone_above_the_output_nyquist_frequency():
    # Analytical: a 1.6-Hz tone sampled at 2 Hz would alias to 0.4 Hz (2.5 rad/s, inside the
    # analysis band); the low-pass before resampling must remove it (stop band from ~0.97 Hz).
    t = np.arange(12001) / 10.0
    wave = _sea_like(t, 2 * DEG, 3, 0.5)
    tone = 1 * DEG * np.cos(2 * np.pi * 1.6 * t)
    p = prepare(_record(roll=wave + tone), PrepSettings(highpass_hz=0.0))
    q = prepare(_record(roll=wave), PrepSettings(highpass_hz=0.0))
    residual = p.channels["roll"] - q.channels["roll"]
    assert np.std(residual) < 0.01 * np.std(tone)


def test_highpass_gain_at_the_corner_and_drift_removal():
    # Butterworth: amplitude gain of the forward-backward filter at f_c is |H|² = 1/2 (analytical).
    assert highpass_gain(2 * np.pi * 0.02, 0.02, 2) == pytest.approx(0.5)
    assert highpass_gain(2 * np.pi * 0.2, 0.02, 2) == pytest.approx(1 / (1 + 1e-4))
    t = np.arange(24001) / 10.0
    tone = 0.5 * np.cos(2 * np.pi * 0.02 * t)
    p = prepare(_record(duration=2400.0, heave=tone), PrepSettings(min_duration_s=600.0))
    core = slice(400, -400)
    amp = np.sqrt(2) * np.std(p.channels["heave"][core])
    assert amp == pytest.approx(0.25, rel=0.03)
    # a slow drift (sensor integration error, 0.002 Hz) is removed from heave, kept in roll
    drift = 0.8 * np.sin(2 * np.pi * 0.002 * t)
    p2 = prepare(_record(duration=2400.0, heave=drift + _sea_like(t, 1.0, 9)))
    q2 = prepare(_record(duration=2400.0, heave=_sea_like(t, 1.0, 9)))
    assert np.std(p2.channels["heave"] - q2.channels["heave"]) < 0.01 * 0.8


def test_frozen_stretch_is_flagged_and_splits_the_window():
    rec = _record(duration=1800.0)
    roll = np.array(rec.channels["roll"])
    roll[3000:3600] = roll[3000]  # 60 s frozen at t = 300 s
    p = prepare(_record(duration=1800.0, roll=roll))
    assert p.accepted
    assert "frozen" in p.flags["roll"] and "roll" in p.usable
    assert any("window split" in r for r in p.reasons)
    assert p.duration == pytest.approx(1800.0 - 360.0, abs=1.0)
    assert p.t_start == pytest.approx(360.0, abs=0.6)


def test_frozen_channel_is_not_usable():
    p = prepare(_record(pitch=np.full(12001, 0.01)))
    assert "frozen" in p.flags["pitch"] and "missing" in p.flags["pitch"]
    assert "pitch" not in p.usable and p.accepted


def test_spikes_are_detected_removed_and_bridged():
    rec = _record()
    heave = np.array(rec.channels["heave"])
    idx = np.array([1000, 3500, 5021, 8000, 11000])
    heave[idx] += np.array([8.0, -6.0, 7.0, 9.0, -7.0])
    p = prepare(_record(heave=heave))
    q = prepare(rec)
    assert "spikes" in p.flags["heave"] and "heave" in p.usable
    assert any("5 spikes removed" in r for r in p.reasons)
    assert np.abs(p.channels["heave"] - q.channels["heave"]).max() < 0.05
    assert "spikes" not in q.flags["heave"]


def test_many_spikes_make_the_channel_unusable():
    rec = _record()
    acc = np.array(rec.channels["acc_z"])
    rng = np.random.default_rng(1)
    idx = rng.choice(np.arange(5, acc.size - 5, 3), 400, replace=False)
    acc[idx] += 5.0 * rng.choice([-1, 1], idx.size)
    p = prepare(_record(acc_z=acc))
    assert "spikes" in p.flags["acc_z"] and "acc_z" not in p.usable


def test_short_gap_is_bridged_and_long_gap_drops_or_splits():
    rec = _record()
    roll = np.array(rec.channels["roll"])
    roll[5000:5030] = np.nan  # 3 s
    p = prepare(_record(roll=roll))
    assert p.accepted and "roll" in p.usable and "gap" not in p.flags["roll"]
    assert p.duration == pytest.approx(1200.5)
    # 60 s gap at t = 550 s: no 600-s stretch left for roll ⇒ roll dropped, the rest kept whole
    roll2 = np.array(rec.channels["roll"])
    roll2[5500:6100] = np.nan
    p2 = prepare(_record(roll=roll2))
    assert p2.accepted and "roll" not in p2.usable and "gap" in p2.flags["roll"]
    assert p2.duration == pytest.approx(1200.5)
    assert any("roll: gaps longer than 5 s" in r for r in p2.reasons)


def test_window_rejected_when_everything_has_long_gaps():
    rec = _record()
    chans = {k: np.array(v) for k, v in rec.channels.items()}
    for v in chans.values():
        v[5500:6100] = np.nan
    p = prepare(_record(**chans))
    assert not p.accepted and p.usable == ()
    assert "window rejected" in p.reasons[-1]


def test_radians_labelled_as_degrees_are_suspected():
    # A voyage-log roll_deg column that actually holds radians: after the edge conversion
    # (× π/180) the roll never exceeds 0.6° from its mean while heave moves with std ~1 m.
    rec = _record()
    roll_rad = np.array(rec.channels["roll"])  # ~3° std, in radians
    wrongly_converted = roll_rad * DEG
    p = prepare(_record(roll=wrongly_converted))
    assert "units_suspect" in p.flags["roll"] and "roll" not in p.usable
    assert any("radians labelled as degrees" in r for r in p.reasons)
    assert "units_suspect" not in p.flags["pitch"]
    # in calm water (heave std 5 cm) a small roll is not suspected
    t = rec.t
    q = prepare(_record(roll=wrongly_converted, heave=_sea_like(t, 0.05, 2)))
    assert "units_suspect" not in q.flags["roll"]


def test_clipped_channel_is_flagged():
    rec = _record()
    acc = np.clip(rec.channels["acc_y"], -0.4, 0.4)
    p = prepare(_record(acc_y=acc))
    assert "clipped" in p.flags["acc_y"] and "acc_y" not in p.usable


def test_implausible_values_are_flagged():
    rec = _record()
    roll_in_degrees = np.rad2deg(rec.channels["roll"])  # degrees passed where radians belong
    p = prepare(_record(roll=roll_in_degrees))
    assert "implausible" in p.flags["roll"] and "roll" not in p.usable
    assert any("implausible" in r for r in p.reasons)


def test_missing_channel_is_flagged():
    p = prepare(_record(acc_x=np.full(12001, np.nan)))
    assert p.flags["acc_x"] == ("missing",) and "acc_x" not in p.usable


def test_stationarity_checks_heading_speed_and_variance_ratio():
    # Brief §6 step 3 / Q1: σ(heading) < 5°, σ(speed) < 1 kn, variance ratio of halves 0.67-1.5.
    n = 12001
    turn = 1.0 + np.where(np.arange(n) < n // 2, 0.0, 20 * DEG)
    p = prepare(_record(heading=turn))
    assert not p.stationary and any("heading not steady" in r for r in p.reasons)
    slow = 6.0 + np.where(np.arange(n) < n // 2, 0.0, 3 * KNOT)
    p = prepare(_record(speed=slow))
    assert not p.stationary and any("speed not steady" in r for r in p.reasons)
    rec = _record()
    grow = np.array(rec.channels["heave"]) * np.where(np.arange(n) < n // 2, 1.0, 2.0)
    p = prepare(_record(heave=grow))
    assert "nonstationary" in p.flags["heave"] and "heave" in p.usable
    assert p.variance_ratio["heave"] == pytest.approx(4.0, rel=0.15)
    # the narrow-band roll of the stationary record falls outside 0.67-1.5 by chance (its σ of
    # ln ratio is ~0.3), which the sampling test does not call non-stationary
    q = prepare(rec)
    assert not 0.67 <= q.variance_ratio["roll"] <= 1.5
    assert "nonstationary" not in q.flags["roll"]


def test_heading_mean_across_north_and_circular_std():
    # Mardia & Jupp (2000): for angles ±δ about 0 the resultant length is R = cos δ, the mean 0 and
    # the circular std sqrt(−2 ln cos δ).
    m, s = circular_mean_std([2 * np.pi - 0.1, 0.1])
    assert min(m, 2 * np.pi - m) == pytest.approx(0.0, abs=1e-12)
    assert s == pytest.approx(np.sqrt(-2 * np.log(np.cos(0.1))))
    n = 12001
    hd = np.mod(np.where(np.arange(n) % 2 == 0, -1 * DEG, 1 * DEG), 2 * np.pi)
    p = prepare(_record(heading=hd))
    assert min(p.heading_mean, 2 * np.pi - p.heading_mean) < 0.01 * DEG


def test_irregular_input_sampling_gives_a_uniform_output():
    rng = np.random.default_rng(4)
    t = np.cumsum(0.1 + 0.02 * rng.random(11000))
    t -= t[0]
    ch = {"heave": _sea_like(t, 1.0, 5), "roll": _sea_like(t, 2 * DEG, 6, 0.45)}
    rec = Record(t=t, channels=ch, heading=np.full(t.size, 2.0), speed=np.full(t.size, 3.0))
    p = prepare(rec)
    assert p.accepted, p.reasons
    np.testing.assert_allclose(np.diff(p.t), 0.5)
    # compare with the analytic signal evaluated on the output grid (roll: no high-pass)
    exact = _sea_like(p.t, 2 * DEG, 6, 0.45)
    exact = signal.detrend(exact)
    assert np.std(p.channels["roll"] - exact) < 0.01 * np.std(exact)


def test_record_validation_messages():
    t = np.arange(10.0)
    ok = dict(heading=np.zeros(10), speed=np.zeros(10))
    with pytest.raises(ValueError, match="unknown channel 'yaw'; allowed: roll, pitch"):
        Record(t=t, channels={"yaw": np.zeros(10)}, **ok)
    with pytest.raises(ValueError, match=r"t must be strictly ascending, t\[3\]=3.0 s >= t\[4\]=3.0 s"):
        Record(t=np.array([0, 1, 2, 3, 3, 5, 6, 7, 8, 9.0]), channels={"roll": np.zeros(10)}, **ok)
    with pytest.raises(ValueError, match=r"channel 'heave' must have shape \(10,\) like t, got \(9,\)"):
        Record(t=t, channels={"heave": np.zeros(9)}, **ok)
    with pytest.raises(ValueError, match="channel 'roll' has an infinite value at index 2"):
        Record(t=t, channels={"roll": np.array([0.0, 0.0, np.inf] + [0.0] * 7)}, **ok)
    with pytest.raises(ValueError, match="non-empty mapping"):
        Record(t=t, channels={}, **ok)
    with pytest.raises(ValueError, match=r"speed must have shape \(10,\)"):
        Record(t=t, channels={"roll": np.zeros(10)}, heading=np.zeros(10), speed=np.zeros(3))
    with pytest.raises(TypeError, match="record must be an estimator.prep.Record"):
        prepare({"roll": np.zeros(10)})
    with pytest.raises(ValueError, match=r"highpass_hz must be in \[0, fs/2\)"):
        PrepSettings(highpass_hz=1.5)
    with pytest.raises(ValueError, match="variance_ratio_band must satisfy"):
        PrepSettings(variance_ratio_band=(1.2, 1.5))
    rec = Record(t=t, channels={"roll": np.zeros(10)}, **ok)
    with pytest.raises(ValueError, match="read-only"):
        rec.channels["roll"][0] = 1.0
