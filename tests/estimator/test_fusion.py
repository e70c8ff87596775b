"""Fusion of consecutive sea-state estimates (estimator.fusion) against the inverse-variance
weighted mean of independent estimates (Gauss-Markov; Bendat & Piersol 2010 §4.6) worked by hand."""

import math
from types import SimpleNamespace

import numpy as np
import pytest

from estimator.fusion import INTERVAL_Z, FusionSettings, fuse_estimates
from estimator.spectra import directional_spectrum, jonswap, spreading_cos2s

OMEGA = np.linspace(0.2, 2.0, 91)
THETA = np.radians(np.arange(0.0, 360.0, 10.0))


def _est(hs, sd_ln, confidence=1.0, tm_sd=None):
    sp = directional_spectrum(OMEGA, THETA, jonswap(OMEGA, hs, 10.0), spreading_cos2s(THETA, np.radians(250.0), 10.0))
    h = float(sp.hs())
    extra = {}
    if tm_sd is not None:
        tm = float(sp.tm01())
        extra = dict(tm01=tm, tm01_p05=tm * math.exp(-INTERVAL_Z * tm_sd), tm01_p95=tm * math.exp(INTERVAL_Z * tm_sd))
    from estimator.seastate import SeaStateEstimate  # the real result type (dataclasses.replace)

    return SeaStateEstimate(
        spectrum=sp, hs=h, tp=10.0, tm01=extra.get("tm01", float("nan")), tm02=float("nan"), wave_from=0.0,
        spread=0.5, systems=(), confidence=confidence, confidence_factors={}, reasons=(), parametric_systems=(),
        chi2=1.0, hs_sd=h * sd_ln, heading=0.0, speed=5.0, warm=None, hs_p05=h * math.exp(-INTERVAL_Z * sd_ln),
        hs_p95=h * math.exp(INTERVAL_Z * sd_ln), **{k: v for k, v in extra.items() if k != "tm01"})


def test_independent_windows_give_the_inverse_variance_mean():
    # two windows that share no data (age >= window) and no common error: weights 1/σ² (decay off),
    # fused m0 = Σ a_k m0_k and σ² = Σ a_k² σ_k² = 1/Σ(1/σ_k²) (hand-worked)
    a, b = _est(4.0, 0.10), _est(5.0, 0.20)
    fused = fuse_estimates([a, b], [3600.0, 2400.0], 1200.0, settings=FusionSettings(tau=1e12, max_age=3600.0,
                                                                                         z_consistent=10.0))
    w = np.array([1 / 0.10**2, 1 / 0.20**2])
    aw = w / w.sum()
    assert fused.used == 2 and fused.weights == pytest.approx(tuple(aw))
    m0 = aw[0] * (a.hs / 4) ** 2 + aw[1] * (b.hs / 4) ** 2
    assert fused.estimate.hs == pytest.approx(4 * math.sqrt(m0), rel=1e-9)
    sd = math.sqrt(1 / w.sum())
    assert math.log(fused.estimate.hs_p95 / fused.estimate.hs) == pytest.approx(INTERVAL_Z * sd, rel=1e-9)


def test_overlap_and_rao_level_do_not_average_down():
    # identical windows fully overlapping (same data) and a common RAO-level error: no gain at all
    a = _est(4.0, 0.15)
    fused = fuse_estimates([a, a], [600.0, 600.0 - 1e-6], 1200.0, rao_scale_error=0.1,
                           settings=FusionSettings(tau=1e12))
    assert fused.used == 2
    assert math.log(fused.estimate.hs_p95 / fused.estimate.hs) == pytest.approx(INTERVAL_Z * 0.15, rel=1e-4)


def test_an_inconsistent_or_old_estimate_is_left_out():
    new = _est(4.0, 0.05)
    assert fuse_estimates([new, _est(8.0, 0.05)], [1200.0, 600.0], 1200.0).used == 1  # the sea changed
    assert fuse_estimates([new, _est(4.1, 0.05)], [9000.0, 600.0], 1200.0).used == 1  # too old
    # a wide (low-confidence) newest estimate is weighted down, not followed
    wide = _est(9.0, 0.8, confidence=0.2)
    fused = fuse_estimates([wide, _est(4.0, 0.1), _est(4.2, 0.1)], [1800.0, 1200.0, 600.0], 1200.0)
    assert fused.used == 3 and fused.weights[0] < 0.05
    assert fused.estimate.hs < 5.0 and fused.estimate.hs_p95 < wide.hs_p95


def test_bad_arguments_are_refused():
    with pytest.raises(ValueError, match="at least one"):
        fuse_estimates([], [], 1200.0)
    with pytest.raises(ValueError, match="window ends"):
        fuse_estimates([_est(4.0, 0.1)], [], 1200.0)
