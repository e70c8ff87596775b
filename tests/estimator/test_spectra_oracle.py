"""estimator.spectra against the wavespectra reference library (MIT, test-only dependency).

wavespectra conventions (wavespectra documentation): frequency in Hz, S(f) in m²/Hz,
2-D E(f, θ) in m²/Hz/deg, directions in degrees, nautical, waves coming FROM. Our spectra are
per rad/s, so S(ω) = S(f)/(2π) with ω = 2πf, and S(ω, θ) = E(f, θ_deg)·(180/π)/(2π).
"""

import numpy as np
import pytest
import scipy.constants

from estimator.spectra import (
    DirectionalSpectrum,
    directional_spectrum,
    jonswap,
    pierson_moskowitz,
    spectral_moment,
    spreading_cos2s,
)

wavespectra = pytest.importorskip("wavespectra", reason="wavespectra is a required test oracle")
from wavespectra.construct import construct_partition  # noqa: E402
from wavespectra.construct import direction as ws_direction  # noqa: E402
from wavespectra.construct import frequency as ws_frequency  # noqa: E402

pytestmark = pytest.mark.oracle

G_WS = scipy.constants.g  # wavespectra's parametric forms use scipy.constants.g = 9.80665 (its source)
TWO_PI = 2 * np.pi
# Hz; uniform, so np.gradient Δf (wavespectra) equals the trapezoid Δf except at the two end cells;
# up to 2.5 Hz the f⁻⁵ tail is so small there that the two rules differ by < 1e-6 relative
F = np.arange(0.02, 2.5 + 1e-9, 0.002)
OMEGA = TWO_PI * F


def _alpha_for(hs, tp, gamma=1.0):
    """Phillips α that makes wavespectra's f-form equal to the DNV ω-form.

    (5/16)Hs²ωp⁴ω⁻⁵·2π = (5/16)Hs²fp⁴f⁻⁵ = α g²(2π)⁻⁴ f⁻⁵  →  α = (5/16)Hs²fp⁴(2π)⁴/g², times A_γ.
    """
    fp = 1.0 / tp
    return (1 - 0.287 * np.log(gamma)) * 5 / 16 * hs**2 * fp**4 * TWO_PI**4 / G_WS**2


@pytest.mark.parametrize(("hs", "tp"), [(5.0, 10.0), (2.0, 6.5), (9.0, 15.0)])
def test_pierson_moskowitz_equals_wavespectra(hs, tp):
    # wavespectra.construct.frequency.pierson_moskowitz: same formula, exact to round-off
    ref = ws_frequency.pierson_moskowitz(freq=F, fp=1.0 / tp, alpha=_alpha_for(hs, tp)).values / TWO_PI
    np.testing.assert_allclose(pierson_moskowitz(OMEGA, hs, tp), ref, rtol=1e-12)


@pytest.mark.parametrize(("hs", "tp", "gamma"), [(5.0, 10.0, 3.3), (3.0, 8.0, 1.8), (6.0, 12.0, 5.0)])
def test_jonswap_equals_wavespectra(hs, tp, gamma):
    # wavespectra.construct.frequency.jonswap: same peak shape; with α = A_γ·(5/16)Hs²fp⁴(2π)⁴/g²
    # the two are the same function (σ(f−fp)/fp = σ(ω−ωp)/ωp), exact to round-off
    ref = ws_frequency.jonswap(freq=F, fp=1.0 / tp, gamma=gamma, alpha=_alpha_for(hs, tp, gamma)).values
    np.testing.assert_allclose(jonswap(OMEGA, hs, tp, gamma), ref / TWO_PI, rtol=1e-12)


def test_jonswap_hs_scaled_within_published_tolerance():
    # wavespectra documentation: without rescaling, expect agreement within 0.3 % (wavespectra scales
    # to hs with an f⁻⁴ tail, DNV uses the approximate A_γ normalisation)
    ref = ws_frequency.jonswap(freq=F, fp=0.1, gamma=3.3, hs=5.0).values / TWO_PI
    ours = jonswap(OMEGA, 5.0, 10.0, 3.3)
    np.testing.assert_allclose(ours, ref, rtol=3e-3)
    # the shape agrees to round-off once both are scaled to the same m0 (wavespectra documentation)
    np.testing.assert_allclose(ours / ours.sum(), ref / ref.sum(), rtol=1e-10)


def _ours_from_wavespectra(efth):
    """DirectionalSpectrum from a wavespectra E(f, θ_deg) DataArray (dims freq, dir)."""
    dirs = efth["dir"].values
    order = np.argsort(dirs)
    dens = efth.transpose("freq", "dir").values[:, order] * (180.0 / np.pi) / TWO_PI
    return DirectionalSpectrum(TWO_PI * efth["freq"].values, np.deg2rad(dirs[order]), dens)


@pytest.mark.parametrize(("dm_deg", "dspr_deg"), [(270.0, 30.0), (15.0, 20.0), (180.0, 45.0)])
def test_directional_statistics_vs_wavespectra(dm_deg, dspr_deg):
    # wavespectra construct_partition("jonswap", "cartwright") (wavespectra documentation) and its
    # SpecArray statistics on the same grid: hs(tail=False), tp(smooth=False), tm01, tm02, dm, dspr
    dirs = np.arange(0.0, 360.0, 5.0)
    efth = construct_partition(
        freq_name="jonswap",
        dir_name="cartwright",
        freq_kwargs=dict(freq=F, fp=0.1, gamma=3.3, hs=5.0),
        dir_kwargs=dict(dir=dirs, dm=dm_deg, dspr=dspr_deg),
    )
    ours = _ours_from_wavespectra(efth)
    spec = efth.spec
    # wavespectra integrates with np.gradient(f) (full end cells), we use the trapezoid rule
    # (half end cells); the spectrum at 0.02 Hz is ~0 and at 2.5 Hz ~1e-5 m²/Hz, so the two
    # rules differ by < 1e-6 relative: rtol 1e-5
    assert ours.hs() == pytest.approx(float(spec.hs(tail=False)), rel=1e-5)
    assert ours.tm01() == pytest.approx(float(spec.tm01()), rel=1e-5)
    assert ours.tm02() == pytest.approx(float(spec.tm02()), rel=1e-5)
    assert ours.tp() == pytest.approx(float(spec.tp(smooth=False)), rel=1e-12)
    # wavespectra documentation: dm and dspr return the inputs within 0.01°
    assert np.rad2deg(ours.mean_direction()) == pytest.approx(float(spec.dm()), abs=1e-6)
    assert np.rad2deg(ours.directional_spread()) == pytest.approx(float(spec.dspr()), abs=1e-6)
    assert np.rad2deg(ours.directional_spread()) == pytest.approx(dspr_deg, abs=0.01)


@pytest.mark.parametrize("dspr_deg", [15.0, 30.0, 45.0])
def test_cos2s_equals_cartwright(dspr_deg):
    # wavespectra.construct.direction.cartwright is cos^2s((θ−dm)/2) with s = 2/σ² − 1,
    # normalised discretely (wavespectra documentation); our builder with normalise=True does the same
    dirs = np.arange(0.0, 360.0, 7.5)
    g_deg = ws_direction.cartwright(dir=dirs, dm=100.0, dspr=dspr_deg).values  # 1/deg
    s = 2.0 / np.deg2rad(dspr_deg) ** 2 - 1.0
    theta = np.deg2rad(dirs)
    s1 = np.ones(2)
    ours = directional_spectrum(
        np.array([0.5, 0.6]), theta, s1, lambda th: spreading_cos2s(th, np.deg2rad(100.0), s)
    )
    np.testing.assert_allclose(ours.density[0], g_deg * 180.0 / np.pi, rtol=1e-12)
    # and the analytic normalisation C(s) differs from the discrete one by < 1e-6 on a 7.5° grid
    # (periodic rule; for broad spreads, s < 1, the kink of |cos|^2s at θ−dm = π slows this)
    np.testing.assert_allclose(spreading_cos2s(theta, np.deg2rad(100.0), s), g_deg * 180 / np.pi, rtol=1e-6)


def test_moments_vs_wavespectra_momf():
    # wavespectra SpecArray.momf(n) = Σ fⁿ E(f) Δf (np.gradient Δf); ours in rad/s:
    # m_n(ω) = (2π)ⁿ m_n(f). Same end-cell argument as above: rtol 1e-5
    efth = ws_frequency.jonswap(freq=F, fp=0.1, gamma=2.0, hs=4.0)
    ours = jonswap(OMEGA, 4.0, 10.0, 2.0)
    s_ref = efth.values / TWO_PI
    for n in (0, 1, 2):
        ref = float(efth.spec.momf(n)) * TWO_PI**n
        assert spectral_moment(OMEGA, s_ref, n) == pytest.approx(ref, rel=1e-5)
    assert spectral_moment(OMEGA, ours, 0) == pytest.approx(float(efth.spec.momf(0)), rel=3e-3)
