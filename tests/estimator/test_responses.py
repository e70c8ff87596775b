"""Tests of estimator.responses: spectral moments, short-term statistics, slamming, ISO 2631.

Check values and their sources: ``tests/check_values.py``; they are derived from the published formulas
named there (not published numbers); analytic checks say so.
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import signal

from estimator import responses
from estimator.responses import (
    ResponseStatistics,
    cycle_count,
    deck_wetness_per_hour,
    deck_wetness_probability,
    exceedance_probability,
    expected_maximum,
    heading_rotation_matrix,
    iso2631_wf,
    maximum_quantile,
    most_probable_maximum,
    msdv,
    msi_lloyd,
    msi_ohanlon_mccauley,
    ochi_threshold_velocity,
    polar_moments_in_sea,
    polar_response_moments,
    rayleigh_exceedance,
    response_moments,
    rms,
    significant_amplitude,
    slamming_probability,
    slams_per_hour,
    upcrossing_rate,
    vomiting_incidence,
    weighted_rms_from_spectrum,
    zero_crossing_period,
)
from tests.check_values import (
    ENCOUNTER_HEAD_SEA_JONSWAP,
    ISO2631_VOMITING_2H,
    ISO2631_WF_TABLE,
    JONSWAP_TABLE,
    MSI_TABLE,
    OCHI_SLAMMING_WETNESS,
    RAYLEIGH_STATS,
)

G = 9.81
KNOT = 1852.0 / 3600.0
RS = RAYLEIGH_STATS.value  # derived, not published numbers: RAYLEIGH_STATS.source
SIGMA = RS["sigma"]  # Hs = 5 m
TZ = RS["tz_s"]  # JONSWAP gamma 3.3, Tp 10 s
HOUR = 3600.0


# ------------------------------------------------------------------ test-local oracles (independent code)


def jonswap_dnv(omega, hs, tp, gamma=3.3):
    """JONSWAP, DNV-RP-C205 §3.5.5 form, written here independently of estimator.spectra."""
    wp = 2 * np.pi / tp
    spm = 5 / 16 * hs**2 * wp**4 * omega**-5.0 * np.exp(-1.25 * (omega / wp) ** -4)
    sig = np.where(omega <= wp, 0.07, 0.09)
    return (1 - 0.287 * np.log(gamma)) * spm * gamma ** np.exp(-0.5 * ((omega - wp) / (sig * wp)) ** 2)


def cos2s(theta, theta0, s):
    """cos-2s spreading (Longuet-Higgins et al. 1963), C(s) = Γ(s+1)/(2√π Γ(s+½))."""
    c = math.gamma(s + 1) / (2 * math.sqrt(math.pi) * math.gamma(s + 0.5))
    return c * np.cos((theta - theta0) / 2) ** (2 * s)


def trapezoid_weights(x):
    d = np.diff(x)
    w = np.zeros_like(x)
    w[:-1] += d / 2
    w[1:] += d / 2
    return w


def encounter(omega, speed, beta):
    """ω_e = ω − ω² U cos β / g (Lewis 1989, deep water)."""
    return omega - omega**2 * speed * np.cos(beta) / G


def loop_moments(transfer, density, omega_e, weights, orders):
    """Straightforward reference: one cell at a time, plain sums (the definition in the docstring)."""
    batch = transfer.shape[:-2]
    cell_nd = omega_e.ndim - 2
    cells = batch[len(batch) - cell_nd :]
    out = np.zeros((len(orders), *batch))
    for idx in np.ndindex(*batch):
        cidx = idx[len(idx) - cell_nd :]
        we = omega_e[cidx] if cell_nd else omega_e
        assert we.shape[-2:] == transfer.shape[-2:]
        p = np.abs(transfer[idx]) ** 2
        for i, n in enumerate(orders):
            out[(i, *idx)] = np.sum(p * np.abs(we) ** n * density * weights)
    assert cells == batch[len(batch) - cell_nd :]
    return out


# ------------------------------------------------------------------ short-term statistics


def test_most_probable_maximum_ref_section4():
    # derived from Longuet-Higgins (1952), A_mpm = σ sqrt(2 ln N), not published numbers
    assert_allclose(most_probable_maximum(SIGMA, TZ, HOUR), RS["mpm_1h"], rtol=1e-3)
    assert_allclose(most_probable_maximum(SIGMA, TZ, 3 * HOUR), RS["mpm_3h"], rtol=1e-3)
    # N = duration / Tz
    assert_allclose(cycle_count(TZ, HOUR), RS["n_1h"], rtol=1e-3)
    assert_allclose(cycle_count(TZ, 3 * HOUR), RS["n_3h"], rtol=1e-3)


def test_expected_maximum_and_quantile_ref_section4():
    # derived from Cartwright & Longuet-Higgins (1956), not published numbers: E[max, 3 h]; P90 of the 3-h max
    assert_allclose(expected_maximum(SIGMA, TZ, 3 * HOUR), RS["expected_max_3h"], rtol=1e-3)
    assert_allclose(maximum_quantile(SIGMA, TZ, 3 * HOUR, 0.9), RS["p90_max_3h"], rtol=1e-3)


def test_rayleigh_exceedance_and_rice_rate_ref_section4():
    m0 = SIGMA**2
    m2 = m0 * (2 * np.pi / TZ) ** 2
    # derived from the Rayleigh distribution and Rice's upcrossing rate, not published numbers
    assert_allclose(rayleigh_exceedance(3.0, m0), RS["p_exceed_3m"], rtol=1e-3)
    assert_allclose(upcrossing_rate(3.0, m0, m2) * HOUR, RS["upcrossings_3m_per_h"], rtol=1e-3)
    # analytic (Rice): the zero level is crossed upward once per zero-crossing period
    assert_allclose(upcrossing_rate(0.0, m0, m2), 1 / TZ, rtol=1e-12)
    # Poisson: P(at least one in T) = 1 − exp(−ν T); for 1 h: 1 − exp(−25.96)
    assert_allclose(exceedance_probability(3.0, m0, m2, HOUR), -np.expm1(-25.9599), rtol=1e-6)
    # small νT: P ≈ νT − (νT)²/2 (series of 1 − exp(−x), analytic), ν from the ref value 25.96/h
    x = 25.96 / 3600
    assert_allclose(exceedance_probability(3.0, m0, m2, 1.0), x - x**2 / 2, rtol=1e-3)


def test_rms_significant_amplitude_tz():
    # analytic: Hs = 4 sqrt(m0) so the significant amplitude 2σ of a 5-m sea is 2.5 m
    assert_allclose(rms(1.5625), 1.25)
    assert_allclose(significant_amplitude(1.5625), 2.5)
    # analytic: a single tone of frequency ω has Tz = 2π/ω
    assert_allclose(zero_crossing_period(2.0, 2.0 * 0.5**2), 2 * np.pi / 0.5)
    # no crossings (m2 = 0) -> infinite period, without a warning (warnings are errors here)
    assert np.isinf(zero_crossing_period(1.0, 0.0))


def test_maxima_monte_carlo():
    # Monte Carlo of N independent Rayleigh amplitudes (Longuet-Higgins 1952): the empirical 90 % quantile
    # and mean of the maximum match the closed forms. N = 1387 (3 h), 4000 samples, seeded.
    rng = np.random.default_rng(12345)
    n = 1387
    amp = SIGMA * np.sqrt(-2 * np.log(rng.random((4000, n))))
    top = amp.max(axis=1)
    tz = 3 * HOUR / n
    assert_allclose(np.quantile(top, 0.9), maximum_quantile(SIGMA, tz, 3 * HOUR, 0.9), rtol=0.01)
    assert_allclose(top.mean(), expected_maximum(SIGMA, tz, 3 * HOUR), rtol=0.01)
    # the mode of the maximum: the histogram peak lies within a bin of σ sqrt(2 ln N)
    hist, edges = np.histogram(top, bins=40, range=(3.5, 6.5))
    mode = 0.5 * (edges[hist.argmax()] + edges[hist.argmax() + 1])
    assert abs(mode - most_probable_maximum(SIGMA, tz, 3 * HOUR)) < 0.2


def test_maxima_vectorised_and_zero_response():
    sig = np.array([0.0, 1.25, 2.5])
    tz = np.array([np.nan, TZ, TZ])  # a response that does not move has Tz = 0/0
    mpm = most_probable_maximum(sig, tz, 3 * HOUR)
    assert mpm[0] == 0.0
    assert_allclose(mpm[2], 2 * mpm[1], rtol=1e-12)  # linear in σ (analytic)
    assert expected_maximum(sig, tz, 3 * HOUR)[0] == 0.0
    assert maximum_quantile(sig, tz, 3 * HOUR, 0.5)[0] == 0.0


def test_statistics_errors():
    with pytest.raises(ValueError, match=r"N = duration/tz must be > 1.*got N = 0.5"):
        most_probable_maximum(1.0, 20.0, 10.0)
    with pytest.raises(ValueError, match=r"p must lie in \(0, 1\), got 1.0"):
        maximum_quantile(1.0, 10.0, 3600.0, 1.0)
    with pytest.raises(ValueError, match=r"duration must be > 0 \[s\], got 0.0"):
        cycle_count(10.0, 0.0)
    with pytest.raises(ValueError, match=r"m0 must be >= 0 \[unit²\] and not NaN, got -1.0"):
        rms(-1.0)
    with pytest.raises(ValueError, match=r"sigma must be >= 0"):
        most_probable_maximum(np.nan, 10.0, 3600.0)


# ------------------------------------------------------------------ slamming and deck wetness


def test_ochi_slamming_and_wetness_ref_section4_1():
    # derived from Ochi (1964), not published numbers (OCHI_SLAMMING_WETNESS.source):
    # v_th = 0.093 sqrt(g L), L = 200 -> 4.119 m/s
    cv = OCHI_SLAMMING_WETNESS.value
    vth = ochi_threshold_velocity(cv["lpp_m"])
    assert_allclose(vth, cv["threshold_velocity_ms"], rtol=1e-3)
    # Ochi's own value: 12 ft/s for a 520-ft ship (Ochi 1964, from memory) -> 0.093 sqrt(g L) within 0.3 %
    assert_allclose(ochi_threshold_velocity(520 * 0.3048), 12 * 0.3048, rtol=3e-3)
    # σ_r 2.5 m, σ_ṙ 2.0 m/s, T_b 8 m, f 10 m
    assert_allclose(slamming_probability(2.5, 2.0, 8.0, vth), cv["p_slam"], rtol=1e-3)
    # ... the product of P(emergence) = 5.976e-3 and P(v > v_th) = 0.1199
    assert_allclose(slamming_probability(2.5, 2.0, 8.0, 0.0), 5.976e-3, rtol=1e-3)
    assert_allclose(slamming_probability(2.5, 2.0, 0.0, vth), 0.1199, rtol=1e-3)
    assert_allclose(slams_per_hour(2.5, 2.0, 8.0, vth), cv["slams_per_hour"], rtol=2e-3)
    assert_allclose(deck_wetness_probability(2.5, 10.0), cv["p_wet"], rtol=1e-3)
    assert_allclose(deck_wetness_per_hour(2.5, 2.0, 10.0), cv["wet_per_hour"], rtol=3e-3)


def test_slamming_calm_and_vectorised():
    # no relative motion -> no slam, no wetness (limit of the Ochi formula), without division warnings
    assert slamming_probability(0.0, 0.0, 8.0, 4.0) == 0.0
    assert slams_per_hour(0.0, 0.0, 8.0, 4.0) == 0.0
    assert deck_wetness_probability(0.0, 10.0) == 0.0
    p = slamming_probability(np.array([1.0, 2.5, 5.0]), 2.0, 8.0, 4.119)
    assert np.all(np.diff(p) > 0)  # rises with the relative motion (monotone in σ_r, analytic)
    with pytest.raises(ValueError, match=r"lpp must be > 0 \[m\], got -1.0"):
        ochi_threshold_velocity(-1.0)
    with pytest.raises(ValueError, match=r"draft_fp must be >= 0 \[m\]"):
        slamming_probability(1.0, 1.0, -8.0, 4.0)


# ------------------------------------------------------------------ ISO 2631-1 and MSI

WF_TABLE = ISO2631_WF_TABLE.value  # derived from ISO 2631-1 Annex A, not published: ISO2631_WF_TABLE.source


@pytest.mark.parametrize(("f_hz", "expected"), WF_TABLE)
def test_iso2631_wf_table(f_hz, expected):
    # derived from the ISO 2631-1:1997 Annex A filter product, not published numbers
    assert_allclose(iso2631_wf(f_hz), expected, rtol=1e-3, atol=1e-4)


def test_iso2631_wf_against_scipy_freqs():
    # scipy.signal.freqs evaluates the same analogue transfer function from polynomial coefficients
    w1, w2, w4, w5, w6 = (2 * np.pi * f for f in (0.08, 0.63, 0.25, 0.0625, 0.1))
    num = np.polymul(np.polymul([1, 0, 0], [1, w5 / 0.8, w5**2]), [w2**2 * w4**2])
    den = np.polymul(
        np.polymul([1, np.sqrt(2) * w1, w1**2], [1, np.sqrt(2) * w2, w2**2]),
        np.polymul([1, w4 / 0.86, w4**2], [1, w6 / 0.8, w6**2]),
    )
    f = np.linspace(0.01, 2.0, 400)
    _, h = signal.freqs(num, den, worN=2 * np.pi * f)
    assert_allclose(iso2631_wf(f), np.abs(h), rtol=1e-10)
    assert iso2631_wf(0.0) == 0.0  # high-pass: no response to a constant acceleration


def test_weighted_rms_narrow_band_and_quadrature():
    # a narrow band at 0.16 Hz of variance 1 is weighted by |Wf(0.16)| = 1.0060 (ISO2631_WF_TABLE)
    w0 = 2 * np.pi * 0.16
    om = np.linspace(w0 - 1e-3, w0 + 1e-3, 201)
    s = np.full_like(om, 1.0 / 2e-3)  # ∫ S dω = 1
    assert_allclose(weighted_rms_from_spectrum(s, om), 1.0060, rtol=1e-3)
    # flat spectrum over 0.05–3 rad/s: compare with scipy.integrate.quad of |Wf|² (reference library)
    from scipy.integrate import quad

    om = np.linspace(0.05, 3.0, 4001)
    ref = quad(lambda x: iso2631_wf(x / (2 * np.pi)) ** 2 * 0.2, 0.05, 3.0, limit=200)[0]
    assert_allclose(weighted_rms_from_spectrum(np.full_like(om, 0.2), om), np.sqrt(ref), rtol=1e-5)
    # batched spectra (..., N)
    out = weighted_rms_from_spectrum(np.stack([np.full_like(om, 0.2), np.full_like(om, 0.8)]), om)
    assert_allclose(out[1], 2 * out[0], rtol=1e-12)
    with pytest.raises(ValueError, match=r"s_acc must have shape \(\.\.\., N\)"):
        weighted_rms_from_spectrum(np.ones(3), np.ones(4))
    with pytest.raises(ValueError, match=r"strictly ascending"):
        weighted_rms_from_spectrum(np.ones(3), np.array([1.0, 0.5, 2.0]))


def test_msdv_and_vomiting_ref_section3_3():
    # derived from ISO 2631-1 Annex D, not published numbers (ISO2631_VOMITING_2H.source)
    cv = ISO2631_VOMITING_2H.value
    m = msdv(cv["a_w_rms_ms2"], cv["hours"] * HOUR)
    assert_allclose(m, cv["msdv"], rtol=1e-3)
    assert_allclose(vomiting_incidence(m), cv["percent"], rtol=1e-3)
    assert vomiting_incidence(1000.0) == 100.0  # a percentage cannot exceed 100
    with pytest.raises(ValueError, match=r"km must be > 0"):
        vomiting_incidence(10.0, km=0.0)


@pytest.mark.parametrize(
    ("a_g", "f_hz", "ohm", "lloyd"),
    MSI_TABLE.value,  # derived from O'Hanlon & McCauley (1974) and Lloyd (1989): MSI_TABLE.source
)
def test_msi_ref_section3_4(a_g, f_hz, ohm, lloyd):
    assert_allclose(msi_ohanlon_mccauley(a_g * G, f_hz), ohm, rtol=1e-3)
    assert_allclose(msi_lloyd(a_g * G, 2 * np.pi * f_hz), lloyd, rtol=1e-3)


def test_msi_errors():
    with pytest.raises(ValueError, match=r"acc_mean must be > 0 \[m/s²\], got 0.0"):
        msi_ohanlon_mccauley(0.0, 0.2)
    with pytest.raises(ValueError, match=r"f_hz must be > 0 \[Hz\], got -0.2"):
        msi_ohanlon_mccauley(1.0, -0.2)
    with pytest.raises(ValueError, match=r"\|omega_e\| must be > 0 \[rad/s\], got 0.0"):
        msi_lloyd(1.0, 0.0)


# ------------------------------------------------------------------ response_moments


def test_pure_tone_response_moments():
    # analytic: a regular wave of amplitude a has variance a²/2; a response with transfer H at
    # encounter frequency ω_e has variance |H|² a²/2 and m_n = |H|² |ω_e|ⁿ a²/2
    omega = np.linspace(0.3, 1.5, 13)
    theta = np.linspace(0, 2 * np.pi, 12, endpoint=False)
    w = np.full((13, 12), 0.1 * (2 * np.pi / 12))
    s = np.zeros((13, 12))
    a = 2.0
    s[5, 3] = a**2 / 2 / w[5, 3]
    h = np.full((13, 12), 0.1 + 0.0j)
    h[5, 3] = 0.8 * np.exp(1j * 0.7)
    we = encounter(omega[:, None], 6.0, np.pi - theta[None, :])
    m = response_moments(h, s, omega, we, w, orders=(0, 1, 2, 4))
    expect = 0.64 * a**2 / 2 * np.abs(we[5, 3]) ** np.array([0, 1, 2, 4])
    assert_allclose(m, expect, rtol=1e-12)


def test_unit_transfer_gives_sea_m0_and_jonswap_periods():
    # derived, not published (JONSWAP_TABLE.source): JONSWAP(Hs 5, Tp 10, γ 3.3): Hm0 5.006, Tz 7.785 s
    _, _, hm0, tz, _ = next(r for r in JONSWAP_TABLE.value if r[0] == 3.3)
    omega = np.linspace(0.001, 12, 24001)
    theta = np.linspace(-np.pi, np.pi, 72, endpoint=False)
    spread = cos2s(theta, 0.3, 10)
    s = jonswap_dnv(omega, 5.0, 10.0)[:, None] * spread[None, :]
    w = trapezoid_weights(omega)[:, None] * np.full(72, 2 * np.pi / 72)[None, :]
    m0, m2 = response_moments(np.ones((omega.size, 72), np.complex128), s, omega, None, w, (0, 2))
    # unit transfer: m0 equals the sea's own m0 (∫ S dω, spreading normalised to 1)
    assert_allclose(m0, np.trapezoid(jonswap_dnv(omega, 5.0, 10.0), omega), rtol=1e-6)
    assert_allclose(4 * np.sqrt(m0), hm0, rtol=1e-3)
    assert_allclose(zero_crossing_period(m0, m2), tz, rtol=1e-3)


def test_encounter_period_head_seas_ref_section7():
    # derived, not published (ENCOUNTER_HEAD_SEA_JONSWAP.source): JONSWAP(5, 10, 3.3), head seas, 15 kn
    omega = np.linspace(0.05, 6, 20001)
    s = jonswap_dnv(omega, 5.0, 10.0)[:, None]
    we = encounter(omega, 15 * KNOT, np.pi)[:, None]
    w = trapezoid_weights(omega)[:, None]
    m0, m2 = response_moments(np.ones((omega.size, 1)), s, omega, we, w, (0, 2))
    assert_allclose(zero_crossing_period(m0, m2), ENCOUNTER_HEAD_SEA_JONSWAP.value["tz_e_s"], rtol=1e-3)


def test_chain_to_most_probable_maximum():
    # derived, not published (RAYLEIGH_STATS.source): σ = 1.25 m, Tz 7.7845 s -> 3-h MPM, E[max]
    omega = np.linspace(0.001, 12, 24001)
    s = jonswap_dnv(omega, 5.0, 10.0)
    s = (s * 1.5625 / np.trapezoid(s, omega))[:, None]  # scaled so that Hs = 4 sqrt(m0) = 5 m
    stats = ResponseStatistics.from_moments(
        response_moments(np.ones((omega.size, 1)), s, omega, None, trapezoid_weights(omega)[:, None])
    )
    assert_allclose(stats.sigma, 1.25, rtol=1e-9)
    assert_allclose(stats.significant_amplitude, 2.5, rtol=1e-9)
    assert_allclose(most_probable_maximum(stats.sigma, stats.tz, 3 * HOUR), RS["mpm_3h"], rtol=1e-3)
    assert_allclose(expected_maximum(stats.sigma, stats.tz, 3 * HOUR), RS["expected_max_3h"], rtol=1e-3)


def test_bandwidth_two_tones():
    # analytic: two tones of equal energy E at ω1, ω2: m0 = 2E, m2 = E(ω1²+ω2²), m4 = E(ω1⁴+ω2⁴)
    omega = np.array([0.5, 1.0])
    m = response_moments(np.ones((2, 1)), np.ones((2, 1)), omega)
    eps = np.sqrt(1 - (0.5**2 + 1) ** 2 / (2 * (0.5**4 + 1)))
    assert_allclose(ResponseStatistics.from_moments(m).bandwidth, eps, rtol=1e-12)
    # a single tone is perfectly narrow-banded
    one = response_moments(np.ones((1, 1)), np.ones((1, 1)), np.array([0.7]))
    assert_allclose(ResponseStatistics.from_moments(one).bandwidth, 0.0, atol=1e-7)
    with pytest.raises(ValueError, match=r"bandwidth needs m4"):
        _ = ResponseStatistics(1.0, 1.0).bandwidth
    with pytest.raises(ValueError, match=r"orders must contain 0 and 2"):
        ResponseStatistics.from_moments(m[:2], orders=(0, 4))


def _random_case(rng, resp=(3,), cells=(4, 5), k=7, n_l=6, dtype=np.complex128):
    shape = (*resp, *cells, k, n_l)
    h = (rng.standard_normal(shape) + 1j * rng.standard_normal(shape)).astype(dtype)
    omega = np.sort(rng.uniform(0.2, 2.0, k))
    s = rng.random((k, n_l))
    w = rng.random((k, n_l))
    we = rng.uniform(-1.5, 2.5, (*cells, k, n_l))
    return h, s, omega, we, w


def test_batch_equals_plain_loop_random():
    # the definition evaluated one cell at a time in a plain loop is the reference
    rng = np.random.default_rng(7)
    h, s, omega, we, w = _random_case(rng)
    m = response_moments(h, s, omega, we, w, orders=(0, 1, 2, 4))
    assert m.shape == (4, 3, 4, 5)
    assert m.dtype == np.float64
    assert_allclose(m, loop_moments(h, s, we, w, (0, 1, 2, 4)), rtol=1e-12)
    # |H|² given directly (squared=True) is the same computation
    m_sq = response_moments(np.abs(h) ** 2, s, omega, we, w, (0, 1, 2, 4), squared=True)
    assert_allclose(m_sq, m, rtol=1e-12)


def test_batch_many_chunks(monkeypatch):
    # force tiny chunks so that the chunk loop over responses and cells is exercised
    monkeypatch.setattr(responses, "_CHUNK_ELEMENTS", 50)
    rng = np.random.default_rng(8)
    h, s, omega, we, w = _random_case(rng, resp=(5, 2), cells=(3, 7))
    assert_allclose(response_moments(h, s, omega, we, w), loop_moments(h, s, we, w, (0, 2, 4)), rtol=1e-12)


def test_batch_shared_omega_e_and_no_cells():
    rng = np.random.default_rng(9)
    h, s, omega, we, w = _random_case(rng, resp=(2, 3), cells=())
    m = response_moments(h, s, omega, we, w)
    assert m.shape == (3, 2, 3)
    assert_allclose(m, loop_moments(h, s, we, w, (0, 2, 4)), rtol=1e-12)
    # batch axes of the sea broadcast against the cell axes (one ω_e per heading, shared by speeds)
    h, s, omega, we, w = _random_case(rng, resp=(2,), cells=(4, 3))
    we1 = we[:, :1]
    m = response_moments(h, s, omega, we1, w)
    assert_allclose(m, loop_moments(h, s, np.broadcast_to(we1, we.shape), w, (0, 2, 4)), rtol=1e-12)


def test_complex64_precision():
    # float32 arithmetic for complex64 input: error small against the float64 loop (relative 1e-5)
    rng = np.random.default_rng(10)
    h, s, omega, we, w = _random_case(rng, k=36, n_l=36)
    m32 = response_moments(h.astype(np.complex64), s, omega, we, w)
    ref = loop_moments(h.astype(np.complex64).astype(np.complex128), s, we, w, (0, 2, 4))
    assert_allclose(m32, ref, rtol=1e-5)


def test_following_seas_sign_of_omega_e():
    # only |ω_e| enters (DEVELOPERS.md: ω_e is signed, negative where the ship overtakes the waves)
    rng = np.random.default_rng(11)
    h, s, omega, we, w = _random_case(rng)
    assert_allclose(response_moments(h, s, omega, -we, w), response_moments(h, s, omega, we, w), rtol=1e-14)


def test_response_moments_errors():
    h = np.ones((3, 4, 5))
    s = np.ones((4, 5))
    om = np.linspace(0.1, 1, 4)
    with pytest.raises(ValueError, match=r"orders must be finite and >= 0.*-1"):
        response_moments(h, s, om, orders=(0, -1))
    with pytest.raises(ValueError, match=r"orders must name at least one"):
        response_moments(h, s, om, orders=())
    with pytest.raises(ValueError, match=r"K = len\(omega\) = 5"):
        response_moments(h, s, np.linspace(0.1, 1, 5))
    with pytest.raises(ValueError, match=r"density must have shape \(\.\.\., K, L\) = \(\.\.\., 4, 5\)"):
        response_moments(h, np.ones((4, 6)), om)
    with pytest.raises(ValueError, match=r"density must be >= 0 \[m²·s/rad²\].*-1.0"):
        response_moments(h, -s, om)
    with pytest.raises(ValueError, match=r"omega_e must be finite"):
        response_moments(h, s, om, np.full((4, 5), np.nan))
    with pytest.raises(ValueError, match=r"squared=True expects real"):
        response_moments(h + 0j, s, om, squared=True)
    with pytest.raises(ValueError, match=r"do not match the trailing transfer axes \(3,\)"):
        response_moments(h, s, om, np.ones((2, 4, 5)))
    with pytest.raises(ValueError, match=r"has only 1"):
        response_moments(h, s, om, np.ones((2, 3, 4, 5)))


# ------------------------------------------------------------------ polar fast path


def _gain2(omega, beta, speed):
    """A smooth analytic |H|²(ω, β; U) (heave-like resonance moved by speed), for comparisons."""
    we = encounter(omega, speed, beta)
    resonance = 1.0 / ((1 - (we / 0.8) ** 2) ** 2 + (0.3 * we / 0.8) ** 2)
    return resonance * (1.2 + 0.5 * np.cos(beta) + 0.2 * np.sin(beta))


def _polar_setup(n_theta=36, n_psi=72, n_beta=72):
    omega = np.linspace(0.2, 2.0, 18)
    theta = np.arange(n_theta) * 2 * np.pi / n_theta
    psi = np.arange(n_psi) * 2 * np.pi / n_psi
    beta = np.arange(n_beta) * 2 * np.pi / n_beta
    speeds = np.array([0.0, 3.0, 6.0, 9.0])
    s = jonswap_dnv(omega, 4.0, 9.0)[:, None] * (
        0.7 * cos2s(theta, 1.0, 8) + 0.3 * cos2s(theta, 4.0, 20)
    )[None, :]
    w = trapezoid_weights(omega)[:, None] * np.full(n_theta, 2 * np.pi / n_theta)[None, :]
    return omega, theta, psi, beta, speeds, s, w


def _exact_polar(resp_scale, omega, theta, psi, speeds, s, w):
    """The direct route: the transfer evaluated at every (ψ, U, ω, θ), then response_moments."""
    b = np.pi - (theta[None, None, None, :] - psi[:, None, None, None])  # (NH, 1, 1, L)
    we = encounter(omega[None, None, :, None], speeds[None, :, None, None], b)
    g2 = _gain2(omega[None, None, :, None], b, speeds[None, :, None, None])
    transfer2 = resp_scale[:, None, None, None, None] * g2[None]
    return response_moments(transfer2, s, omega, we, w, squared=True)


def test_polar_equals_direct_on_aligned_grids():
    # θ every 10°, ψ every 5°, β every 5°: every relative heading is a node, so the fast path is exact
    omega, theta, psi, beta, speeds, s, w = _polar_setup()
    scale = np.array([1.0, 0.3, 2.0])
    g2 = _gain2(omega[None, :, None], beta[None, None, :], speeds[:, None, None])
    g2 = scale[:, None, None, None] * g2[None]
    we = encounter(omega[None, :, None], speeds[:, None, None], beta[None, None, :])
    m = polar_response_moments(g2, we, beta, s, theta, psi, w)
    assert m.shape == (3, 3, 72, 4)
    assert_allclose(m, _exact_polar(scale, omega, theta, psi, speeds, s, w), rtol=1e-10)
    # float32 working precision: relative error below 1e-5
    m32 = polar_response_moments(g2, we, beta, s, theta, psi, w, dtype=np.float32)
    assert_allclose(m32, m, rtol=1e-5)


def test_polar_off_grid_conserves_energy_and_interpolates():
    # headings between β nodes: the sea's energy is shared between the two nearest nodes (rows sum to 1)
    omega, theta, psi, beta, speeds, s, w = _polar_setup(n_theta=36, n_psi=50, n_beta=72)
    psi = psi + 0.0123
    we = encounter(omega[None, :, None], speeds[:, None, None], beta[None, None, :])
    ones = np.ones((1, speeds.size, omega.size, beta.size))
    m0 = polar_response_moments(ones, we, beta, s, theta, psi, w, orders=(0,))
    assert_allclose(m0, np.sum(s * w), rtol=1e-12)  # unit transfer: the sea's m0 at every heading
    g2 = _gain2(omega[None, :, None], beta[None, None, :], speeds[:, None, None])[None]
    m = polar_response_moments(g2, we, beta, s, theta, psi, w)
    exact = _exact_polar(np.ones(1), omega, theta, psi, speeds, s, w)
    # linear interpolation in β on a 5° grid of a smooth transfer: within 1 % of the direct route
    assert_allclose(m, exact, rtol=1e-2)


def test_heading_rotation_matrix_conventions():
    # docs/conventions.md: β = (180° − (θ − ψ)) mod 360°; waves from ahead (θ = ψ) are head seas β = π
    beta = np.arange(8) * np.pi / 4
    r = heading_rotation_matrix(np.array([0.5]), np.array([0.5]), beta)
    assert r[0, 0, 4] == 1.0 and r.sum() == 1.0
    # waves from starboard beam (θ = ψ + 90°) -> β = 90°
    r = heading_rotation_matrix(np.array([np.pi / 2]), np.array([0.0]), beta)
    assert r[0, 0, 2] == 1.0
    # halfway between nodes -> half to each
    r = heading_rotation_matrix(np.array([np.pi / 8]), np.array([0.0]), beta)
    assert_allclose(r[0, 0, [3, 4]], [0.5, 0.5])
    with pytest.raises(ValueError, match=r"beta must be uniform and cover the full circle"):
        heading_rotation_matrix(np.zeros(1), np.zeros(1), np.array([0.0, 1.0, 3.0]))


def test_polar_errors():
    omega, theta, psi, beta, speeds, s, w = _polar_setup(n_psi=4)
    we = encounter(omega[None, :, None], speeds[:, None, None], beta[None, None, :])
    g2 = np.ones((2, *we.shape))
    with pytest.raises(ValueError, match=r"gain2 must hold real"):
        polar_response_moments(g2 + 0j, we, beta, s, theta, psi, w)
    with pytest.raises(ValueError, match=r"gain2 must have shape \(\.\.\., NS, K, J\)"):
        polar_response_moments(g2[..., :-1], we, beta, s, theta, psi, w)
    with pytest.raises(ValueError, match=r"density must have shape \(K, L\)"):
        polar_response_moments(g2, we, beta, s[:, :-1], theta, psi, w)
    with pytest.raises(ValueError, match=r"omega_e must have shape \(NS, K, J\)"):
        polar_response_moments(g2, we[0], beta, s, theta, psi, w)


def test_polar_moments_in_sea_with_directional_spectrum():
    # the wrapper gives what polar_response_moments gives with the spectrum's own trapezoid weights,
    # and a unit transfer returns the spectrum's m0 = (Hs/4)² (Hs from DirectionalSpectrum.hs())
    from estimator.spectra import DirectionalSpectrum

    omega, theta, psi, beta, speeds, s, _ = _polar_setup(n_psi=8)
    sea = DirectionalSpectrum(omega=omega, theta=theta, density=s)
    we = encounter(omega[None, :, None], speeds[:, None, None], beta[None, None, :])
    ones = np.ones((1, speeds.size, omega.size, beta.size))
    m0 = polar_moments_in_sea(ones, omega, we, beta, sea, psi, orders=(0,))
    assert_allclose(m0, (sea.hs() / 4) ** 2, rtol=1e-12)
    g2 = _gain2(omega[None, :, None], beta[None, None, :], speeds[:, None, None])[None]
    w = trapezoid_weights(omega)[:, None] * np.full(theta.size, 2 * np.pi / theta.size)[None, :]
    assert_allclose(
        polar_moments_in_sea(g2, omega, we, beta, sea, psi),
        polar_response_moments(g2, we, beta, s, theta, psi, w),
        rtol=1e-12,
    )
    with pytest.raises(ValueError, match=r"differs from the spectrum's omega"):
        polar_moments_in_sea(g2, omega * 1.01, we, beta, sea, psi)


def test_weighted_rms_through_polar_moments():
    # the Wf weighting applied to |H|² on the (speed, ω, β) grid gives the same a_w as weighting the
    # encounter-domain acceleration spectrum of a long-crested head sea (zero speed: ω_e = ω), which
    # is the definition in ISO 2631-1 §6.4 (trapezoid rule on the same ω grid in both routes)
    omega = np.linspace(0.2, 3.0, 141)
    beta = np.arange(8) * np.pi / 4
    s1 = jonswap_dnv(omega, 4.0, 8.0)
    dens = np.zeros((omega.size, 8))
    dens[:, 0] = s1 / (np.pi / 4)  # all energy from the north, one direction cell of width π/4
    we = np.broadcast_to(omega[None, :, None], (1, omega.size, 8))
    h_az = omega**2  # heave acceleration of a rigid wave follower, |H| = ω² (analytic)
    g2 = (h_az[:, None] ** 2 * iso2631_wf(np.abs(we[0]) / (2 * np.pi)) ** 2)[None, None]
    w = trapezoid_weights(omega)[:, None] * np.full(8, np.pi / 4)[None, :]
    m0 = polar_response_moments(g2, we, beta, dens, beta, np.array([0.0]), w, orders=(0,))
    assert_allclose(np.sqrt(m0[0, 0, 0, 0]), weighted_rms_from_spectrum(h_az**2 * s1, omega), rtol=1e-12)
