"""Tests for estimator.encounter.

Check values and their sources: ``tests/check_values.py`` (ENCOUNTER_*), derived from
ω_e = ω − ω²U cos β/g (Lewis 1989, PNA Vol. III) and the energy balance S_e dω_e = S dω, not published
numbers; 15 kn = 15·1852/3600 m/s, g = 9.81 m/s².
"""

import numpy as np
import pytest
import scipy.sparse as sp
from scipy.optimize import minimize_scalar

from estimator.constants import KNOT, G
from estimator.encounter import (
    BRANCHES,
    cell_edges,
    critical_encounter_frequency,
    critical_wave_frequency,
    encounter_binning_matrix,
    encounter_deposits,
    encounter_frequency,
    encounter_jacobian,
    encounter_spectrum,
    encounter_subsamples,
    following_sea_roots,
    relative_wave_heading,
)
from estimator.spectra import jonswap
from tests.check_values import (
    ENCOUNTER_CRITICAL_10MS,
    ENCOUNTER_HEAD_SEA_JONSWAP,
    ENCOUNTER_ROOTS_15KN,
    ENCOUNTER_TABLE_T10_15KN,
)

U15 = 15 * KNOT
TWO_PI = 2 * np.pi


@pytest.mark.parametrize(
    ("beta_deg", "omega_e", "t_e"),
    ENCOUNTER_TABLE_T10_15KN.value,  # derived from ω_e = ω − ω²U cos β/g: ENCOUNTER_TABLE_T10_15KN.source
)
def test_encounter_frequency_table(beta_deg, omega_e, t_e):
    we = encounter_frequency(TWO_PI / 10, U15, np.deg2rad(beta_deg))
    assert we == pytest.approx(omega_e, rel=2e-5)
    assert TWO_PI / abs(we) == pytest.approx(t_e, rel=2e-4)


def test_encounter_convention_head_raises_following_lowers():
    # DEVELOPERS.md conventions / ITTC: β = π head seas raise, β = 0 following seas lower ω_e
    w = np.linspace(0.2, 1.5, 14)
    assert np.all(encounter_frequency(w, 6.0, np.pi) > w)
    assert np.all(encounter_frequency(w, 6.0, 0.0) < w)
    np.testing.assert_allclose(encounter_frequency(w, 6.0, np.pi / 2), w, atol=1e-15)
    np.testing.assert_array_equal(encounter_frequency(w, 0.0, 0.3), w)


def test_encounter_broadcasts():
    w = np.linspace(0.2, 2.0, 40)
    beta = np.deg2rad(np.arange(0, 360, 10))[:, None, None]
    speed = np.array([2.0, 5.0, 8.0])[None, :, None]
    out = encounter_frequency(w, speed, beta)
    assert out.shape == (36, 3, 40)
    assert out[7, 1, 5] == pytest.approx(w[5] - w[5] ** 2 * 5.0 * np.cos(np.deg2rad(70)) / G, rel=1e-15)


def test_jacobian_matches_numerical_derivative():
    # analytic derivative of ω − ω²U cos β/g checked by central differences
    w = np.linspace(0.1, 2.5, 25)
    h = 1e-6
    for beta in (0.0, 0.7, np.pi / 2, 2.5, np.pi):
        fd = (encounter_frequency(w + h, U15, beta) - encounter_frequency(w - h, U15, beta)) / (2 * h)
        np.testing.assert_allclose(encounter_jacobian(w, U15, beta), fd, rtol=1e-7, atol=1e-8)


def test_critical_frequencies():
    # derived, not published (ENCOUNTER_CRITICAL_10MS.source): U = 10 m/s following
    crit = ENCOUNTER_CRITICAL_10MS.value
    assert critical_encounter_frequency(10.0, 0.0) == pytest.approx(crit["omega_e_crit"], rel=1e-5)
    assert critical_wave_frequency(10.0, 0.0) == pytest.approx(crit["omega_crit"], rel=1e-5)
    # scipy.optimize oracle: the maximum of ω_e(ω) in following seas is the critical value
    for beta in (0.0, 0.6, 1.2):
        res = minimize_scalar(
            lambda w, b=beta: -encounter_frequency(w, 10.0, b),
            bounds=(0.01, 5.0),
            method="bounded",
            options={"xatol": 1e-10},
        )
        assert -res.fun == pytest.approx(critical_encounter_frequency(10.0, beta), rel=1e-9)
        assert res.x == pytest.approx(critical_wave_frequency(10.0, beta), rel=1e-5)
        assert encounter_jacobian(critical_wave_frequency(10.0, beta), 10.0, beta) == pytest.approx(
            0.0, abs=1e-14
        )
    # head, beam seas and zero speed: no critical frequency
    np.testing.assert_array_equal(
        critical_encounter_frequency([10.0, 10.0, 0.0], [np.pi, np.pi / 2, 0.0]), np.inf
    )


def test_following_sea_roots_check_values():
    # derived, not published (ENCOUNTER_ROOTS_15KN.source): U = 15 kn, β = 0, |ω_e| = 0.25
    cv = ENCOUNTER_ROOTS_15KN.value
    roots = following_sea_roots(cv["abs_omega_e"], U15, 0.0)
    assert roots.branch == BRANCHES
    np.testing.assert_allclose(roots.omega, cv["omega"], rtol=1e-5)
    # round trip: each root maps back to +0.25, +0.25, -0.25 (sign of the overtaking branch)
    np.testing.assert_allclose(encounter_frequency(roots.omega, U15, 0.0), [0.25, 0.25, -0.25], rtol=1e-12)
    assert critical_encounter_frequency(U15, 0.0) == pytest.approx(cv["omega_e_crit"], rel=2e-5)


def test_following_sea_roots_existence():
    # Nielsen (2017): above ω_e,crit only the overtaking root exists; head/beam seas: one root
    crit = float(critical_encounter_frequency(U15, 0.0))
    above = following_sea_roots(crit * 1.01, U15, 0.0).omega
    assert np.isnan(above[0]) and np.isnan(above[1]) and np.isfinite(above[2])
    head = following_sea_roots([0.5, 1.5], U15, np.pi).omega
    assert np.all(np.isnan(head[:, 1:]))
    np.testing.assert_allclose(encounter_frequency(head[:, 0], U15, np.pi), [0.5, 1.5], rtol=1e-13)
    still = following_sea_roots(0.8, 0.0, 0.0).omega
    assert still[0] == 0.8 and np.all(np.isnan(still[1:]))
    # tiny U cos β: the cancellation-free form stays accurate (the textbook (1 − sqrt(1 − 4aω_e))/(2a)
    # loses ~7 digits here); the root maps back to ω_e to round-off
    w1 = following_sea_roots(0.8, 1e-6, 0.0).omega[0]
    assert encounter_frequency(w1, 1e-6, 0.0) == pytest.approx(0.8, rel=1e-15)
    assert w1 > 0.8


def test_following_sea_roots_contain_every_wave_frequency():
    # property: for any ω and heading, ω is one of the roots of its own |ω_e|
    rng = np.random.default_rng(7)
    w = rng.uniform(0.05, 3.0, 500)
    beta = rng.uniform(0, TWO_PI, 500)
    speed = rng.uniform(0, 12, 500)
    roots = following_sea_roots(np.abs(encounter_frequency(w, speed, beta)), speed, beta).omega
    err = np.nanmin(np.abs(roots - w[:, None]), axis=1)
    assert np.all(err <= 1e-9 * np.maximum(w, 1.0) + 1e-12)


# ------------------------------------------------------------------------------------------
# energy binning
# ------------------------------------------------------------------------------------------

W = np.linspace(0.05, 3.0, 296)
S = jonswap(W, 5.0, 10.0, 3.3)


def _m0(spec, edges):
    return float((spec * np.diff(edges)).sum())


@pytest.mark.parametrize("speed", [0.0, 3.0, U15, 12.0])
@pytest.mark.parametrize("beta_deg", [180.0, 150.0, 90.0, 60.0, 20.0, 0.0, 330.0])
@pytest.mark.parametrize(("n_sub", "method"), [(1, "point"), (6, "point"), (1, "interval"), (4, "interval")])
def test_m0_invariant_under_binning(speed, beta_deg, n_sub, method):
    # energy balance S_e dω_e = S dω (Lewis 1989): every sub-sample deposits exactly S_k Δω_k/n_sub,
    # so the binned m0 equals the trapezoid m0 up to floating-point summation: rel 1e-12. This
    # holds in the one-to-three case too (β = 0, 20°, 60°, 330° at speed > 0), where the
    # Jacobian vanishes inside the band and is never evaluated.
    beta = np.deg2rad(beta_deg)
    top = float(np.abs(encounter_frequency(W, speed, beta)).max()) * 1.01 + 0.01
    edges_e = np.linspace(0.0, top, 400)
    se = encounter_spectrum(W, S, speed, beta, edges_e, n_sub=n_sub, method=method)
    assert _m0(se, edges_e) == pytest.approx(np.trapezoid(S, W), rel=1e-12)
    assert np.all(se >= 0)


def test_one_to_three_case_really_folds():
    # with U = 15 kn following, ω_e,crit = 0.318 rad/s, so the whole 0.05-3 rad/s band is squeezed
    # below it (three branches); the check above must not be vacuous
    we = encounter_frequency(W, U15, 0.0)
    assert (we < 0).any() and (np.diff(we) < 0).any() and (np.diff(we) > 0).any()
    assert we.max() <= critical_encounter_frequency(U15, 0.0) * (1 + 1e-12)


def _bin_average_three_roots(lo, hi, speed, beta, spectrum):
    """Exact bin average (1/h)∫ Σ_i S(ω_i)/|dω_e/dω|(ω_i) d|ω_e| over all roots, by scipy quad."""
    from scipy.integrate import quad

    def density(we):
        roots = following_sea_roots(we, speed, beta).omega
        roots = roots[np.isfinite(roots)]
        return float(np.sum(spectrum(roots) / np.abs(encounter_jacobian(roots, speed, beta))))

    return quad(density, lo, hi, epsabs=0, epsrel=1e-10, limit=200)[0] / (hi - lo)


def test_binned_head_sea_value():
    # derived, not published (ENCOUNTER_HEAD_SEA_JONSWAP.source): JONSWAP(5, 10, 3.3), head seas 15 kn:
    # S_e(0.93886) = S(0.62832)/1.98849 = 3.8862 m²s
    cv = ENCOUNTER_HEAD_SEA_JONSWAP.value
    assert encounter_jacobian(TWO_PI / 10, U15, np.pi) == pytest.approx(cv["jacobian"], rel=1e-5)

    def spec(w):
        return jonswap(w, 5.0, 10.0, 3.3)

    lo, hi = 0.93886 - 0.0005, 0.93886 + 0.0005
    exact_bin = _bin_average_three_roots(lo, hi, U15, np.pi, spec)
    assert exact_bin == pytest.approx(cv["s_e"], rel=2e-4)  # a 0.001-wide bin averages the point value
    # interval deposits: even with Δω = 0.005 rad/s absolute cells (5x wider than the bin's
    # image) the bin value is within 0.1 % (remaining error: S piecewise constant per cell)
    w = np.arange(0.05, 3.0, 0.005)
    se = encounter_spectrum(w, spec(w), U15, np.pi, np.array([lo, hi]), n_sub=4)
    assert se[0] == pytest.approx(exact_bin, rel=1e-3)
    # point deposits on the same grid quantise: a bin narrower than the sub-sample spacing in ω_e
    # gets 0 or a multiple of a whole sub-sample (documented limitation of method="point")
    sp_ = encounter_spectrum(w, spec(w), U15, np.pi, np.array([lo, hi]), n_sub=4, method="point")
    assert abs(sp_[0] - exact_bin) > 0.05 * exact_bin
    # with many sub-samples per bin the point scheme converges too (rel 2e-3)
    wf = np.arange(0.05, 3.0, 0.0001)
    sp_fine = encounter_spectrum(wf, spec(wf), U15, np.pi, np.array([lo, hi]), n_sub=64, method="point")
    assert sp_fine[0] == pytest.approx(exact_bin, rel=2e-3)


def test_binned_head_sea_zero_crossing_period():
    # derived, not published (ENCOUNTER_HEAD_SEA_JONSWAP.source): Tz,e = 4.025 s; from the binned
    # spectrum with bin centres, Δω_e = 0.005 rad/s → discretisation error < 1e-4 relative
    w = np.linspace(0.05, 6.0, 5951)
    s = jonswap(w, 5.0, 10.0, 3.3)
    edges_e = np.arange(0.0, 35.0 + 1e-9, 0.005)
    se = encounter_spectrum(w, s, U15, np.pi, edges_e)
    c = 0.5 * (edges_e[1:] + edges_e[:-1])
    d = np.diff(edges_e)
    tz_e = TWO_PI * np.sqrt((se * d).sum() / (se * d * c**2).sum())
    assert tz_e == pytest.approx(ENCOUNTER_HEAD_SEA_JONSWAP.value["tz_e_s"], rel=5e-4)


@pytest.mark.parametrize("we_centre", [0.05, 0.25, 0.30, 0.6])
def test_binned_following_sea_matches_three_root_formula(we_centre):
    # Lewis (1989) / Nielsen (2017): S_e(ω_e) = Σ_i S(ω_i)/|1 − 2ω_iU cos β/g| over all roots
    # (three below ω_e,crit = 0.3178, one above). U = 15 kn following; exact bin averages by
    # scipy quad; absolute cells Δω = 0.002, interval deposits → rel 2e-3. At 0.25 the roots are
    # the ENCOUNTER_ROOTS_15KN values 0.342, 0.929, 1.485; 0.30 is close to the fold (ω_e,crit = 0.3178).
    def spec(w):
        return jonswap(w, 5.0, 10.0, 3.3)

    lo, hi = we_centre - 0.002, we_centre + 0.002
    exact_bin = _bin_average_three_roots(lo, hi, U15, 0.0, spec)
    w = np.arange(0.05, 3.0, 0.002)
    se = encounter_spectrum(w, spec(w), U15, 0.0, np.array([lo, hi]), n_sub=4)
    assert se[0] == pytest.approx(exact_bin, rel=2e-3)


def test_all_three_branches_contribute():
    # U = 15 kn following, |ω_e| = 0.25: with a bimodal Ochi–Hubble sea (swell at 0.35 rad/s,
    # wind sea at 1.1 rad/s) each of the three roots carries > 3 % of S_e, and the binned value
    # equals the three-root sum (Lewis 1989; Nielsen 2017) → rel 2e-3
    from estimator.spectra import ochi_hubble

    def spec(w):
        return ochi_hubble(w, 3.0, 0.35, 2.0, 3.0, 1.1, 1.0)

    roots = following_sea_roots(0.25, U15, 0.0).omega
    parts = spec(roots) / np.abs(encounter_jacobian(roots, U15, 0.0))
    assert np.all(parts > 0.03 * parts.sum())
    lo, hi = 0.249, 0.251
    exact_bin = _bin_average_three_roots(lo, hi, U15, 0.0, spec)
    assert exact_bin == pytest.approx(parts.sum(), rel=5e-4)  # bin average vs point value, O(h²)
    w = np.arange(0.05, 3.0, 0.002)
    se = encounter_spectrum(w, spec(w), U15, 0.0, np.array([lo, hi]), n_sub=4)
    assert se[0] == pytest.approx(exact_bin, rel=2e-3)


def test_binned_following_sea_second_moment():
    # the exact encounter m2 is ∫ ω_e(ω)² S(ω) dω in the absolute domain (no Jacobian needed);
    # the binned spectrum with bin centres reproduces it to O(Δω_e²): Δω_e = 0.001, rel 1e-3
    w = np.linspace(0.05, 3.0, 2951)
    s = jonswap(w, 3.0, 12.0, 3.3)
    for beta in (0.0, np.deg2rad(40.0)):
        we = encounter_frequency(w, U15, beta)
        m2_exact = np.trapezoid(we**2 * s, w)
        edges_e = np.arange(0.0, np.abs(we).max() + 0.002, 0.001)
        se = encounter_spectrum(w, s, U15, beta, edges_e, n_sub=10)
        c = 0.5 * (edges_e[1:] + edges_e[:-1])
        assert (se * np.diff(edges_e) * c**2).sum() == pytest.approx(m2_exact, rel=1e-3)


def test_beam_seas_binning_is_identity():
    # ω_e = ω when cos β = 0 (or U = 0): with encounter bins equal to the absolute cells, B = I
    edges = cell_edges(W)
    for speed, beta in ((8.0, np.pi / 2), (0.0, 0.4)):
        b = encounter_binning_matrix(edges, speed, beta, edges, n_sub=4)
        assert isinstance(b.matrix, sp.csr_matrix)
        np.testing.assert_allclose(b.matrix.toarray(), np.eye(W.size), atol=1e-12)
        assert b.matrix_overtaking.nnz == 0


def test_cell_edges_widths_are_trapezoid_weights():
    # numpy.trapezoid as the oracle: Σ S_k Δω_k over the dual cells equals trapezoid(S, ω)
    w = np.sort(np.random.default_rng(3).uniform(0.1, 2.0, 50))
    s = jonswap(w, 2.0, 7.0)
    assert (s * np.diff(cell_edges(w))).sum() == pytest.approx(np.trapezoid(s, w), rel=1e-14)


def test_overtaking_flags_and_split_matrices():
    # the ship overtakes the waves (ω_e < 0) exactly where ω > g/(U cos β) (sign change of ω − ω²a)
    edges = cell_edges(W)
    edges_e = np.linspace(0.0, 3.0, 301)
    beta = np.deg2rad(25.0)
    b = encounter_binning_matrix(edges, U15, beta, edges_e, n_sub=6, method="point")
    sub = encounter_subsamples(edges, U15, beta, edges_e, n_sub=6)
    limit = G / (U15 * np.cos(beta))
    np.testing.assert_array_equal(b.overtaking, sub.omega > limit)
    np.testing.assert_array_equal(sub.sign == -1, sub.omega > limit)
    np.testing.assert_allclose((b.matrix_direct + b.matrix_overtaking - b.matrix).toarray(), 0.0, atol=1e-15)
    # columns of the overtaking part belong to cells above the limit only
    cols = np.unique(b.matrix_overtaking.tocoo().col)
    assert cols.size > 0 and np.all(edges[cols + 1] > limit)
    # a complex kernel of constant phase φ: the real part bins like energy, the imaginary part
    # flips sign on the overtaking branch (wave-buoy-analogy reference §1.1: conjugate where ω_e < 0)
    g = np.exp(1j * 0.7) * np.ones(W.size)
    binned = b.matrix_direct @ g + b.matrix_overtaking @ np.conj(g)
    ones = np.ones(W.size)
    np.testing.assert_allclose(binned.real, np.cos(0.7) * (b.matrix @ ones), rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(
        binned.imag,
        np.sin(0.7) * (b.matrix_direct @ ones - b.matrix_overtaking @ ones),
        rtol=1e-12,
        atol=1e-15,
    )
    # the interval scheme splits at g/(U cos β), so its overtaking part lies entirely above it
    bi = encounter_binning_matrix(edges, U15, beta, edges_e, n_sub=6)
    dep = encounter_deposits(edges, U15, beta, edges_e, n_sub=6)
    assert np.all((dep.omega > limit) == (dep.sign == -1))
    np.testing.assert_allclose(
        (bi.matrix_direct + bi.matrix_overtaking - bi.matrix).toarray(), 0.0, atol=1e-15
    )


def test_subsamples_vectorised_equal_scalar_calls():
    edges = cell_edges(W)
    edges_e = np.linspace(0.0, 4.0, 161)
    speeds = np.array([2.0, 6.0, 9.0])[:, None]
    betas = np.deg2rad(np.arange(0, 360, 10))[None, :]
    sub = encounter_subsamples(edges, speeds, betas, edges_e, n_sub=5)
    assert sub.bin_index.shape == (3, 36, W.size, 5)
    one = encounter_subsamples(edges, 6.0, np.deg2rad(70.0), edges_e, n_sub=5)
    np.testing.assert_array_equal(sub.bin_index[1, 7], one.bin_index)
    np.testing.assert_allclose(sub.weight[1, 7], one.weight, rtol=1e-15)
    np.testing.assert_array_equal(sub.sign[1, 7], one.sign)
    # outside the encounter range: index -1 and zero weight
    far = encounter_subsamples(edges, 12.0, np.pi, np.array([0.0, 0.5]), n_sub=2)
    assert np.all(far.weight[far.bin_index < 0] == 0) and (far.bin_index < 0).any()


def test_encounter_spectrum_leading_axes():
    edges_e = np.linspace(0, 6, 121)
    both = encounter_spectrum(W, np.stack([S, 2 * S]), U15, np.deg2rad(140.0), edges_e)
    assert both.shape == (2, 120)
    np.testing.assert_allclose(both[1], 2 * both[0], rtol=1e-14)


def test_relative_wave_heading_convention():
    # DEVELOPERS.md / docs/conventions.md: β = (π − (θ − ψ)) mod 2π; θ = ψ head seas, θ = ψ + π
    # following, ship heading north with waves from the east → from starboard (π/2)
    assert relative_wave_heading(1.0, 1.0) == pytest.approx(np.pi)
    assert relative_wave_heading(1.0 + np.pi, 1.0) == pytest.approx(0.0, abs=1e-15)
    assert relative_wave_heading(np.pi / 2, 0.0) == pytest.approx(np.pi / 2)
    assert relative_wave_heading(3 * np.pi / 2, 0.0) == pytest.approx(3 * np.pi / 2)


def test_errors():
    with pytest.raises(ValueError, match=r"encounter_frequency: speed must be >= 0 m/s, got -1\.0"):
        encounter_frequency(1.0, -1.0, 0.0)
    with pytest.raises(ValueError, match=r"encounter_frequency: omega must be >= 0 rad/s, got -0\.5"):
        encounter_frequency(-0.5, 1.0, 0.0)
    with pytest.raises(ValueError, match=r"following_sea_roots: beta must be finite \[rad\], got nan"):
        following_sea_roots(0.2, 5.0, np.nan)
    with pytest.raises(
        ValueError,
        match=r"encounter_subsamples: omega_e_edges must be strictly ascending, omega_e_edges\[1\]=2\.0",
    ):
        encounter_subsamples(cell_edges(W), 5.0, 0.0, [0.0, 2.0, 1.0])
    with pytest.raises(ValueError, match=r"encounter_subsamples: n_sub must be an integer >= 1, got 0"):
        encounter_subsamples(cell_edges(W), 5.0, 0.0, [0.0, 2.0], n_sub=0)
    with pytest.raises(ValueError, match=r"encounter_binning_matrix: speed and beta must be scalars"):
        encounter_binning_matrix(cell_edges(W), 5.0, np.array([0.0, 1.0]), [0.0, 2.0])
    with pytest.raises(
        ValueError, match=r"encounter_spectrum: last axis of s must have length len\(omega\)=296"
    ):
        encounter_spectrum(W, S[:-1], 5.0, 0.0, [0.0, 2.0])
    with pytest.raises(ValueError, match=r"cell_edges: omega must be strictly ascending"):
        cell_edges([0.1, 0.3, 0.2])
    with pytest.raises(ValueError, match=r"method must be 'interval' or 'point', got 'nearest'"):
        encounter_binning_matrix(cell_edges(W), 5.0, 0.0, [0.0, 2.0], method="nearest")
    with pytest.raises(ValueError, match=r"encounter_deposits: omega_edges must be >= 0 rad/s, got -0\.1"):
        encounter_deposits([-0.1, 0.5, 1.0], 5.0, 0.0, [0.0, 2.0])
    with pytest.raises(ValueError, match=r"encounter_deposits: speed and beta must be scalars"):
        encounter_deposits(cell_edges(W), np.array([1.0, 2.0]), 0.0, [0.0, 2.0])
