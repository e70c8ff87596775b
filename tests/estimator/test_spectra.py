"""Tests for estimator.spectra.

Check values and their sources: ``tests/check_values.py`` (derived with numpy/scipy from the formulas
of DNV-RP-C205 and the other named sources, not published numbers, unless marked otherwise).
Tolerances: rel. 1e-3 unless stated (the values are given to 4-5 significant figures).
"""

import numpy as np
import pytest
from scipy import integrate
from scipy.special import gamma as gamma_fn

from estimator.spectra import (
    DirectionalSpectrum,
    cos2s_s_from_spread,
    directional_spectrum,
    grid_weights,
    hs_from_spectrum,
    jonswap,
    jonswap_gamma_dnv,
    ochi_hubble,
    peak_frequency,
    pierson_moskowitz,
    resample_spectrum,
    spectral_moment,
    spread_from_cos2s,
    spread_from_cosn,
    spreading_cos2s,
    spreading_cosn,
    tm01_from_spectrum,
    tm02_from_spectrum,
    wrap_angle,
)
from tests.check_values import COS2S_TABLE as COS2S_TABLE_CHECK
from tests.check_values import COSN_TABLE as COSN_TABLE_CHECK
from tests.check_values import JONSWAP_GAMMA_DNV, OCHI_HUBBLE, PM_5_10, PM_WORKED_EXAMPLE
from tests.check_values import JONSWAP_TABLE as JONSWAP_TABLE_CHECK

TWO_PI = 2 * np.pi
# integration grid of the check values (tests/check_values.py: ω ∈ [0.001, 12] rad/s)
W_FINE = np.linspace(0.001, 12.0, 120_001)
THETA36 = np.arange(36) * TWO_PI / 36


# ------------------------------------------------------------------------------------------
# Pierson–Moskowitz
# ------------------------------------------------------------------------------------------


def test_pm_peak_value():
    # derived from S_PM(ωp) = (5/16)Hs²e^-1.25/ωp, Hs 5, Tp 10, not a published number (PM_5_10.source)
    assert pierson_moskowitz(TWO_PI / 10, 5.0, 10.0) == pytest.approx(PM_5_10.value["s_peak"], rel=1e-4)
    # analytic closed form of the peak (DNV-RP-C205 PM formula evaluated at ω = ωp)
    assert pierson_moskowitz(TWO_PI / 10, 5.0, 10.0) == pytest.approx(
        5 / 16 * 25 * np.exp(-1.25) / (TWO_PI / 10), rel=1e-13
    )


def test_pm_dnv_online_example():
    # worked example, from memory (PM_WORKED_EXAMPLE.source): Hs 12, Tz 10 → Tp = 14.0776 s, S(0.5) = 25.840
    ex = PM_WORKED_EXAMPLE.value
    assert pierson_moskowitz(ex["omega"], ex["hs_m"], ex["tp_s"]) == pytest.approx(ex["s"], rel=2e-4)


def test_pm_periods_and_hs():
    # derived, not published (PM_5_10.source): Hs 5, Tp 10 → Tz = 7.116 s, T1 = 7.719 s;
    # analytic: m0 = Hs²/16 over [0, ∞) (DNV-RP-C205)
    s = pierson_moskowitz(W_FINE, 5.0, 10.0)
    assert hs_from_spectrum(W_FINE, s) == pytest.approx(5.0, rel=1e-4)
    assert tm02_from_spectrum(W_FINE, s) == pytest.approx(PM_5_10.value["tz_s"], rel=1e-3)
    assert tm01_from_spectrum(W_FINE, s) == pytest.approx(PM_5_10.value["t1_s"], rel=1e-3)


def test_pm_peak_is_at_tp():
    # analytic: dS/dω = 0 at ω = ωp for the PM form (DNV-RP-C205)
    w = np.linspace(0.3, 1.2, 90_001)
    assert peak_frequency(w, pierson_moskowitz(w, 3.0, 9.0)) == pytest.approx(TWO_PI / 9.0, abs=2e-5)


def test_pm_zero_frequency_and_zero_hs():
    # analytic limit S → 0 as ω → 0 (exp(-1.25(ωp/ω)^4) dominates); Hs = 0 gives no energy
    assert pierson_moskowitz(0.0, 5.0, 10.0) == 0.0
    assert pierson_moskowitz(1e-30, 5.0, 10.0) == 0.0
    assert np.all(pierson_moskowitz(W_FINE[::1000], 0.0, 10.0) == 0.0)


# ------------------------------------------------------------------------------------------
# JONSWAP
# ------------------------------------------------------------------------------------------

JONSWAP_TABLE = JONSWAP_TABLE_CHECK.value  # source: JONSWAP_TABLE_CHECK.source (derived)


@pytest.mark.parametrize(("gamma", "s_peak", "hm0", "tz", "t1"), JONSWAP_TABLE)
def test_jonswap_table(gamma, s_peak, hm0, tz, t1):
    # derived from the DNV-RP-C205 §3.5.5 form, not published numbers (JONSWAP_TABLE_CHECK.source)
    s = jonswap(W_FINE, 5.0, 10.0, gamma=gamma)
    assert jonswap(TWO_PI / 10, 5.0, 10.0, gamma=gamma) == pytest.approx(s_peak, rel=1e-4)
    assert hs_from_spectrum(W_FINE, s) == pytest.approx(hm0, rel=2e-4)
    assert tm02_from_spectrum(W_FINE, s) == pytest.approx(tz, rel=1e-3)
    assert tm01_from_spectrum(W_FINE, s) == pytest.approx(t1, rel=1e-3)


def test_jonswap_peak_analytic():
    # analytic, DNV-RP-C205 §3.5.5: S_J(ωp) = A_γ·γ·S_PM(ωp), A_γ = 1 - 0.287 ln γ
    for g in (1.5, 3.3, 7.0):
        expected = (1 - 0.287 * np.log(g)) * g * pierson_moskowitz(TWO_PI / 12, 4.0, 12.0)
        assert jonswap(TWO_PI / 12, 4.0, 12.0, gamma=g) == pytest.approx(expected, rel=1e-13)


def test_jonswap_gamma_one_is_pm():
    # DNV-RP-C205 §3.5.5: γ = 1 reduces JONSWAP to Pierson–Moskowitz (A_γ = 1, enhancement = 1)
    w = np.linspace(0.0, 4.0, 401)
    np.testing.assert_allclose(jonswap(w, 3.0, 8.0, gamma=1.0), pierson_moskowitz(w, 3.0, 8.0), rtol=1e-14)


def test_jonswap_sigma_sides():
    # DNV-RP-C205 §3.5.5: σ_a applies for ω <= ωp, σ_b above; changing σ_b must not change S below ωp
    w = np.linspace(0.2, 2.0, 181)
    wp = TWO_PI / 10
    a = jonswap(w, 5.0, 10.0, sigma_b=0.09)
    b = jonswap(w, 5.0, 10.0, sigma_b=0.2)
    np.testing.assert_array_equal(a[w <= wp], b[w <= wp])
    band = (w > wp + 0.01) & (w < wp + 0.3)  # where the enhancement is still > 1
    assert np.all(b[band] > a[band])


def test_jonswap_broadcasts_parameters():
    # vectorisation contract: (P, 1) parameters against (K,) omega give (P, K), row = scalar call
    w = np.linspace(0.1, 3.0, 50)
    hs = np.array([[1.0], [3.0], [6.0]])
    tp = np.array([[6.0], [9.0], [13.0]])
    g = np.array([[1.0], [3.3], [5.0]])
    out = jonswap(w, hs, tp, gamma=g)
    assert out.shape == (3, 50)
    for i in range(3):
        np.testing.assert_allclose(out[i], jonswap(w, hs[i, 0], tp[i, 0], gamma=g[i, 0]), rtol=1e-15)
    assert pierson_moskowitz(w, hs, tp).shape == (3, 50)


@pytest.mark.parametrize(
    ("hs", "tp", "gamma"),
    JONSWAP_GAMMA_DNV.value,  # derived from DNV-RP-C205 §3.5.5.5, not published (JONSWAP_GAMMA_DNV.source)
)
def test_jonswap_gamma_dnv_table(hs, tp, gamma):
    assert jonswap_gamma_dnv(hs, tp) == pytest.approx(gamma, abs=6e-4)


def test_jonswap_gamma_dnv_breakpoints_and_vectorised():
    # DNV-RP-C205 §3.5.5.5 formula: γ = 5 up to Tp/√Hs = 3.6, then exp(5.75 - 1.15 r)
    # (= exp(1.61) = 5.0028 just above 3.6: the published fit has this small step), γ = 1 from 5 on
    hs = np.full(5, 4.0)
    ratio = np.array([3.6, 3.6 + 1e-9, 4.3, 5.0, 7.0])
    expected = [5.0, np.exp(5.75 - 1.15 * 3.6), np.exp(5.75 - 1.15 * 4.3), 1.0, 1.0]
    np.testing.assert_allclose(jonswap_gamma_dnv(hs, ratio * 2.0), expected, rtol=1e-8)


# ------------------------------------------------------------------------------------------
# Ochi–Hubble
# ------------------------------------------------------------------------------------------


def test_ochi_hubble_lambda_one_is_pm():
    # analytic (Ochi & Hubble 1976): λ = 1 reduces exactly to S_PM with ωp = ωm (PM_5_10 at ωp)
    w = np.linspace(0.05, 4.0, 400)
    wp = TWO_PI / 10
    oh = ochi_hubble(w, 5.0, wp, 1.0, 0.0, 1.0, 1.0)
    np.testing.assert_allclose(oh, pierson_moskowitz(w, 5.0, 10.0), rtol=1e-12)
    assert ochi_hubble(wp, 5.0, wp, 1.0, 0.0, 1.0, 1.0) == pytest.approx(PM_5_10.value["s_peak"], rel=1e-4)


def test_ochi_hubble_two_peaks():
    # derived from Ochi & Hubble (1976), not published numbers (OCHI_HUBBLE.source)
    cv = OCHI_HUBBLE.value
    s = ochi_hubble(W_FINE, *cv["args"])
    assert hs_from_spectrum(W_FINE, s) == pytest.approx(cv["hm0"], rel=1e-4)
    np.testing.assert_allclose(ochi_hubble(np.array(cv["omega"]), *cv["args"]), cv["s"], rtol=1e-4)


def test_ochi_hubble_large_lambda_is_finite_and_normalised():
    # Ochi & Hubble (1976): each component integrates to Hs_j²/16 for any λ (log-space evaluation)
    s = ochi_hubble(W_FINE, 2.0, 0.6, 60.0, 0.0, 1.0, 1.0)
    assert np.all(np.isfinite(s))
    assert hs_from_spectrum(W_FINE, s) == pytest.approx(2.0, rel=1e-4)


# ------------------------------------------------------------------------------------------
# spreading
# ------------------------------------------------------------------------------------------

COS2S_TABLE = COS2S_TABLE_CHECK.value  # source: COS2S_TABLE_CHECK.source (derived)
COSN_TABLE = COSN_TABLE_CHECK.value  # source: COSN_TABLE_CHECK.source (derived)


def _circular_spread(d_func):
    """Kuik et al. (1988) spread from the first circular moment, by scipy quadrature."""
    a1 = integrate.quad(lambda t: np.cos(t) * d_func(t), -np.pi, np.pi, limit=200)[0]
    b1 = integrate.quad(lambda t: np.sin(t) * d_func(t), -np.pi, np.pi, limit=200)[0]
    return np.sqrt(2 * (1 - np.hypot(a1, b1)))


@pytest.mark.parametrize(("s", "c", "d30", "sigma_deg"), COS2S_TABLE)
def test_cos2s_table(s, c, d30, sigma_deg):
    # derived from Longuet-Higgins et al. (1963), not published numbers (COS2S_TABLE_CHECK.source)
    theta0 = 1.0
    assert spreading_cos2s(theta0, theta0, s) == pytest.approx(c, rel=1e-4)
    assert spreading_cos2s(theta0 + np.deg2rad(30), theta0, s) == pytest.approx(d30, rel=1e-4)
    assert spreading_cos2s(theta0 - np.deg2rad(30), theta0, s) == pytest.approx(d30, rel=1e-4)
    assert np.rad2deg(spread_from_cos2s(s)) == pytest.approx(sigma_deg, abs=0.01)
    # analytic normalisation ∫D dθ = 1 (scipy.integrate.quad)
    total = integrate.quad(lambda t: spreading_cos2s(t, theta0, s), theta0 - np.pi, theta0 + np.pi)[0]
    assert total == pytest.approx(1.0, abs=1e-10)
    # σθ from the definition (Kuik et al. 1988) by quadrature equals sqrt(2/(s+1))
    assert _circular_spread(lambda t: spreading_cos2s(t, 0.0, s)) == pytest.approx(
        spread_from_cos2s(s), rel=1e-8
    )


def test_cos2s_normalisation_closed_forms():
    # analytic (Longuet-Higgins et al. 1963): C(s) = Γ(s+1)/(2√π Γ(s+½)) = 2^(2s-1) Γ²(s+1)/(π Γ(2s+1))
    for s in (0.5, 3.0, 7.5, 40.0):
        alt = 2 ** (2 * s - 1) * gamma_fn(s + 1) ** 2 / (np.pi * gamma_fn(2 * s + 1))
        assert spreading_cos2s(0.0, 0.0, s) == pytest.approx(alt, rel=1e-12)
    # s = 0 is isotropic 1/(2π) (analytic)
    np.testing.assert_allclose(spreading_cos2s(THETA36, 2.0, 0.0), 1 / TWO_PI, rtol=1e-14)


def test_cos2s_wraps_and_is_periodic():
    # analytic: D depends only on the wrapped difference θ - θ0
    t = np.linspace(-3, 9, 50)
    np.testing.assert_allclose(
        spreading_cos2s(t, 0.3, 4.0), spreading_cos2s(t + TWO_PI, 0.3, 4.0), rtol=1e-12
    )
    np.testing.assert_allclose(
        spreading_cos2s(t, 0.3, 4.0), spreading_cos2s(t, 0.3 - TWO_PI, 4.0), rtol=1e-12
    )
    # large exponent stays finite (log-gamma normalisation)
    assert np.isfinite(spreading_cos2s(0.0, 0.0, 2000.0))


@pytest.mark.parametrize(("n", "c", "d30", "sigma_deg"), COSN_TABLE)
def test_cosn_table(n, c, d30, sigma_deg):
    # derived from DNV-RP-C205 §3.5.8, not published numbers (COSN_TABLE_CHECK.source)
    assert spreading_cosn(0.2, 0.2, n) == pytest.approx(c, rel=1e-4)
    assert spreading_cosn(0.2 + np.deg2rad(30), 0.2, n) == pytest.approx(d30, rel=1e-4)
    assert np.rad2deg(spread_from_cosn(n)) == pytest.approx(sigma_deg, abs=0.01)
    total = integrate.quad(lambda t: spreading_cosn(t, 0.2, n), 0.2 - np.pi / 2, 0.2 + np.pi / 2)[0]
    assert total == pytest.approx(1.0, abs=1e-10)
    assert _circular_spread(lambda t: spreading_cosn(t, 0.0, n)) == pytest.approx(
        spread_from_cosn(n), rel=1e-7
    )


def test_cosn_zero_behind():
    # DNV-RP-C205 §3.5.8: cos^n spreading is zero for |θ - θ0| > π/2
    assert spreading_cosn(np.pi, 0.0, 2) == 0.0
    assert spreading_cosn(np.pi / 2 + 0.01, 0.0, 2) == 0.0
    # analytic: n = 2 → C = 1/∫cos²θ dθ over [−π/2, π/2] = 2/π
    assert spreading_cosn(0.0, 0.0, 2) == pytest.approx(2 / np.pi, rel=1e-14)


def test_spread_round_trip():
    # analytic inverse: s = 2/σ² - 1 and σ = sqrt(2/(s+1)) (Kuik et al. 1988 applied to cos-2s)
    s = np.array([0.0, 1.0, 8.0, 75.0])
    np.testing.assert_allclose(cos2s_s_from_spread(spread_from_cos2s(s)), s, atol=1e-12)
    # wavespectra's documented relation for 30° (its spreading documentation): s = 2/σ² - 1
    assert cos2s_s_from_spread(np.deg2rad(30.0)) == pytest.approx(2 / np.deg2rad(30.0) ** 2 - 1, rel=1e-14)


# ------------------------------------------------------------------------------------------
# quadrature and moments
# ------------------------------------------------------------------------------------------


def test_grid_weights_trapezoid_matches_numpy():
    # numpy.trapezoid as the oracle for the trapezoid rule on a non-uniform grid
    rng = np.random.default_rng(1)
    x = np.cumsum(rng.uniform(0.01, 0.2, 40))
    y = np.sin(x) + 2
    assert (grid_weights(x) * y).sum() == pytest.approx(np.trapezoid(y, x), rel=1e-14)


def test_grid_weights_periodic():
    # periodic trapezoid rule: weights sum to the period; uniform grid → all 2π/L; it integrates
    # trigonometric polynomials of degree < L exactly (Davis & Rabinowitz 1984)
    w = grid_weights(THETA36, period=TWO_PI)
    np.testing.assert_allclose(w, TWO_PI / 36, rtol=1e-14)
    theta = np.sort(np.random.default_rng(2).uniform(0, TWO_PI, 20))
    assert grid_weights(theta, period=TWO_PI).sum() == pytest.approx(TWO_PI, rel=1e-14)
    assert (w * np.cos(THETA36 - 0.3) ** 2).sum() == pytest.approx(np.pi, rel=1e-13)


def test_spectral_moment_axis_and_closed_form():
    # analytic: for S = 1 on [0, 2], m_n = 2^(n+1)/(n+1); trapezoid exact for n = 0, 1
    w = np.linspace(0.0, 2.0, 2001)
    s = np.ones_like(w)
    assert spectral_moment(w, s, 0) == pytest.approx(2.0, rel=1e-14)
    assert spectral_moment(w, s, 1) == pytest.approx(2.0, rel=1e-14)
    assert spectral_moment(w, s, 2) == pytest.approx(8 / 3, rel=1e-6)
    # same result along any axis
    stack = np.stack([s, 2 * s, 3 * s], axis=0)
    np.testing.assert_allclose(spectral_moment(w, stack, 1, axis=-1), [2, 4, 6], rtol=1e-14)
    np.testing.assert_allclose(spectral_moment(w, stack.T, 1, axis=0), [2, 4, 6], rtol=1e-14)


def test_peak_frequency_refinement_improves_coarse_grid():
    # analytic: PM peak at ωp; a parabola through 3 points of a smooth peak is closer than the grid node
    w = np.linspace(0.3, 1.5, 13)  # Δω = 0.1
    s = pierson_moskowitz(w, 4.0, 8.0)
    wp = TWO_PI / 8
    raw = peak_frequency(w, s)
    fine = peak_frequency(w, s, refine=True)
    assert abs(fine - wp) < abs(raw - wp)
    assert abs(fine - wp) < 0.02
    assert np.isnan(peak_frequency(w, np.zeros_like(w)))


# ------------------------------------------------------------------------------------------
# DirectionalSpectrum
# ------------------------------------------------------------------------------------------

W = np.linspace(0.05, 3.0, 296)


MEAN_300 = np.deg2rad(300.0)


def _spec(hs=4.0, tp=9.0, theta_mean=MEAN_300, s=10.0, theta=THETA36):
    return directional_spectrum(W, theta, jonswap(W, hs, tp), lambda th: spreading_cos2s(th, theta_mean, s))


def test_directional_integrals_match_frequency_spectrum():
    # builder with discrete normalisation: m0 equals the trapezoid m0 of S(ω) exactly (definition)
    s1 = jonswap(W, 4.0, 9.0)
    spec = _spec()
    np.testing.assert_allclose(spec.frequency_spectrum(), s1, rtol=1e-12)
    assert spec.hs() == pytest.approx(hs_from_spectrum(W, s1), rel=1e-13)
    assert spec.tm01() == pytest.approx(tm01_from_spectrum(W, s1), rel=1e-13)
    assert spec.tm02() == pytest.approx(tm02_from_spectrum(W, s1), rel=1e-13)
    assert spec.tp() == pytest.approx(TWO_PI / W[np.argmax(s1)], rel=1e-13)
    # direction distribution integrates to 1 over the circle
    assert (spec.direction_distribution() * spec.theta_weights).sum() == pytest.approx(1.0, rel=1e-13)


@pytest.mark.parametrize("s", [1.0, 4.0, 10.0, 25.0])
@pytest.mark.parametrize("mean_deg", [0.0, 45.0, 185.0, 300.0, 355.0])
def test_mean_direction_and_spread_recover_cos2s(s, mean_deg):
    # Longuet-Higgins et al. (1963) / Kuik et al. (1988): cos-2s has r1 = s/(s+1), σ = sqrt(2/(s+1));
    # the periodic rectangle rule on 72 directions is accurate to ~1e-9 for these smooth D
    theta = np.arange(72) * TWO_PI / 72
    spec = _spec(theta_mean=np.deg2rad(mean_deg), s=s, theta=theta)
    got = np.rad2deg(spec.mean_direction())
    assert abs((got - mean_deg + 180) % 360 - 180) < 1e-6
    assert 0.0 <= spec.mean_direction() < TWO_PI
    assert spec.directional_spread() == pytest.approx(np.sqrt(2 / (s + 1)), rel=1e-6)


def test_frequency_dependent_spreading_array():
    # DNV-RP-C205 §3.5.8 / Mitsuyasu-type s(ω): a (K, L) spreading array is accepted and each
    # row is normalised, so S(ω) is preserved exactly
    s_w = 10 * np.minimum(W / 0.7, 1.0) ** 5 + 1
    d = spreading_cos2s(THETA36[None, :], 1.0, s_w[:, None])
    s1 = jonswap(W, 3.0, 9.0)
    spec = directional_spectrum(W, THETA36, s1, d)
    np.testing.assert_allclose(spec.frequency_spectrum(), s1, rtol=1e-12)


def test_scaled_rotated_added():
    spec = _spec(theta_mean=np.deg2rad(100.0))
    # scaling energy by 4 doubles Hs (Hs = 4 sqrt(m0), definition)
    assert spec.scaled(4.0).hs() == pytest.approx(2 * spec.hs(), rel=1e-14)
    assert spec.with_hs(6.5).hs() == pytest.approx(6.5, rel=1e-14)
    # a whole-step rotation is an exact roll; a fractional one conserves m0 and moves the mean
    r = spec.rotated(np.deg2rad(30.0))
    np.testing.assert_allclose(r.density, np.roll(spec.density, 3, axis=1), rtol=1e-12, atol=1e-15)
    r2 = spec.rotated(np.deg2rad(-107.0))
    assert r2.m0() == pytest.approx(spec.m0(), rel=1e-13)
    assert np.rad2deg(r2.mean_direction()) == pytest.approx(353.0, abs=0.2)
    # sum of a wind sea and a swell: m0 adds (linear superposition)
    swell = directional_spectrum(
        W, THETA36, jonswap(W, 2.0, 14.0, 5.0), lambda th: spreading_cos2s(th, 0.5, 30)
    )
    both = spec + swell
    assert both.m0() == pytest.approx(spec.m0() + swell.m0(), rel=1e-14)


def test_resample_conserves_m0():
    spec = _spec(theta_mean=np.deg2rad(210.0), s=6.0)
    w2 = np.linspace(0.1, 2.5, 97)
    th2 = np.arange(24) * TWO_PI / 24 + np.deg2rad(7.5)
    out = resample_spectrum(spec, w2, th2)
    assert out.m0() == pytest.approx(spec.m0(), rel=1e-13)
    assert out.omega.shape == (97,) and out.theta.shape == (24,)
    # shape is kept: mean direction within 0.5°, Tp within one new grid step (interpolation)
    assert np.rad2deg(out.mean_direction()) == pytest.approx(210.0, abs=0.5)
    assert abs(TWO_PI / out.tp() - TWO_PI / spec.tp()) <= 0.025
    # without conservation the interpolated m0 stays close (energy outside [0.1, 2.5] is small)
    raw = spec.resampled(w2, th2, conserve_m0=False)
    assert raw.m0() == pytest.approx(spec.m0(), rel=2e-2)


def test_zero_spectrum_statistics_are_nan_not_warnings():
    # definition: directions and periods of an empty spectrum are undefined → NaN (no warning)
    z = DirectionalSpectrum(W, THETA36, np.zeros((W.size, 36)))
    assert z.hs() == 0.0
    assert np.isnan(z.tp()) and np.isnan(z.tm01()) and np.isnan(z.tm02())
    assert np.isnan(z.mean_direction()) and np.isnan(z.directional_spread())


def test_spectrum_is_immutable():
    spec = _spec()
    with pytest.raises(ValueError, match="read-only"):
        spec.density[0, 0] = 1.0
    with pytest.raises(AttributeError):
        spec.omega = W  # frozen dataclass


def test_wrap_angle():
    np.testing.assert_allclose(wrap_angle([-0.5, 7.0, TWO_PI]), [TWO_PI - 0.5, 7.0 - TWO_PI, 0.0])
    assert wrap_angle(-1e-18) == 0.0


# ------------------------------------------------------------------------------------------
# errors
# ------------------------------------------------------------------------------------------


def test_parameter_errors():
    with pytest.raises(ValueError, match=r"pierson_moskowitz: hs must be >= 0 m, got -1\.0"):
        pierson_moskowitz(1.0, -1.0, 10.0)
    with pytest.raises(ValueError, match=r"jonswap: tp must be > 0 s, got 0\.0"):
        jonswap(1.0, 2.0, 0.0)
    with pytest.raises(ValueError, match=r"jonswap: tp must be > 0 s, got -3\.0"):
        jonswap(1.0, 2.0, np.array([5.0, -3.0]))
    with pytest.raises(ValueError, match=r"jonswap: gamma must be in \[1, 20\], got 0\.5"):
        jonswap(1.0, 2.0, 8.0, gamma=0.5)
    with pytest.raises(ValueError, match=r"jonswap: omega must be >= 0 rad/s, got -0\.1"):
        jonswap(np.array([-0.1, 0.2]), 2.0, 8.0)
    with pytest.raises(ValueError, match=r"jonswap: hs must be finite \[m\], got nan"):
        jonswap(1.0, np.nan, 8.0)
    with pytest.raises(ValueError, match=r"ochi_hubble: omega_m2 must be > 0 rad/s, got 0\.0"):
        ochi_hubble(1.0, 1.0, 0.5, 2.0, 1.0, 0.0, 2.0)
    with pytest.raises(ValueError, match=r"jonswap_gamma_dnv: hs must be > 0 m, got 0\.0"):
        jonswap_gamma_dnv(0.0, 10.0)
    with pytest.raises(ValueError, match=r"spreading_cos2s: s must be >= 0 -, got -1\.0"):
        spreading_cos2s(0.0, 0.0, -1.0)
    with pytest.raises(ValueError, match=r"cos2s_s_from_spread: sigma must be <= sqrt\(2\) rad"):
        cos2s_s_from_spread(2.0)
    with pytest.raises(
        ValueError, match=r"grid_weights: x must be strictly ascending, x\[1\]=2\.0 >= x\[2\]=2\.0"
    ):
        grid_weights([1.0, 2.0, 2.0])
    with pytest.raises(
        ValueError, match=r"spectral_moment: spectrum axis -1 must have length len\(omega\)=3"
    ):
        spectral_moment([0.1, 0.2, 0.3], np.ones(4), 0)
    with pytest.raises(ValueError, match=r"negative order n=-1\.0 needs omega > 0"):
        spectral_moment([0.0, 0.2, 0.3], np.ones(3), -1)


def test_directional_spectrum_validation():
    good = np.ones((W.size, 36))
    with pytest.raises(
        ValueError,
        match=r"density must have shape \(len\(omega\), len\(theta\)\) = \(296, 36\), got \(36, 296\)",
    ):
        DirectionalSpectrum(W, THETA36, good.T)
    with pytest.raises(ValueError, match=r"omega must be strictly ascending, omega\[0\]="):
        DirectionalSpectrum(W[::-1], THETA36, good)
    with pytest.raises(ValueError, match=r"omega must be >= 0 rad/s"):
        DirectionalSpectrum(W - 1.0, THETA36, good)
    with pytest.raises(ValueError, match=r"theta must lie in \[0, 2π\) rad, got -0\.1"):
        DirectionalSpectrum(W, THETA36 - 0.1, good)
    with pytest.raises(ValueError, match=r"uniformly spaced over the full circle"):
        DirectionalSpectrum(W, np.arange(36) * np.deg2rad(5.0), good)  # only half a circle
    bad = good.copy()
    bad[3, 4] = -1e-3
    with pytest.raises(ValueError, match=r"density must be >= 0 m²·s/rad², got -0\.001 at index \(3, 4\)"):
        DirectionalSpectrum(W, THETA36, bad)
    bad[3, 4] = np.inf
    with pytest.raises(ValueError, match=r"density must be finite, got inf at index \(3, 4\)"):
        DirectionalSpectrum(W, THETA36, bad)
    with pytest.raises(ValueError, match=r"omega must be 1-D with at least 2 frequencies"):
        DirectionalSpectrum(W[:1], THETA36, good[:1])
    with pytest.raises(ValueError, match=r"spreading must have shape \(L,\)=\(36,\) or \(K, L\)"):
        directional_spectrum(W, THETA36, jonswap(W, 2, 8), np.ones(35))
    other = DirectionalSpectrum(W, np.arange(24) * TWO_PI / 24, np.zeros((W.size, 24)))
    with pytest.raises(ValueError, match=r"cannot add spectra on different \(omega, theta\) grids"):
        _ = _spec() + other
    with pytest.raises(ValueError, match=r"scaled: factor must be >= 0"):
        _spec().scaled(-1.0)
