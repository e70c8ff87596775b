"""Tests for estimator.forward: the binned forward kernel of the wave-buoy analogy.

Sources of the expected values, named beside each check:

* energy balance of the Doppler shift S_e dω_e = S dω, summed over all roots (Lewis 1989, PNA Vol. III;
  criteria-and-check-values §7 "m0 is invariant"), and the absolute-domain formulation with its one-to-three
  mapping in following seas (wave-buoy-analogy brief §1.2-§1.3);
* check values of criteria-and-check-values §7 [D]: JONSWAP(5 m, 10 s, 3.3), head seas at 15 kn,
  S_e(0.93886) = 3.8862 m²s; following seas at 15 kn, |ω_e| = 0.25 rad/s has the three roots 0.34201,
  0.92926, 1.48526 rad/s;
* conjugation of the transfer product on the branch where the ship overtakes the waves (ω_e < 0):
  wave-buoy-analogy brief §1.1 and docs/conventions.md (signed ω_e, conjugate when working with |ω_e|);
* the stationary-ship formula Φ_ij(ω) = ∫ H_i H_j* S dβ (Tannuri et al. 2003, brief §1.1) at zero speed;
* the response variance as the absolute-domain sum Σ|H|² S Δω Δβ (St. Denis & Pierson 1953; brief §6 step 10);
* β = (π − (θ − ψ)) mod 2π (docs/conventions.md) for the relative/true rotations.
"""

import numpy as np
import pytest

from estimator.constants import KNOT, G
from estimator.forward import (
    SpectralGrid,
    build_kernel,
    regrid_periodic,
    relative_from_true,
    rotate_relative_to_true,
    stack,
    unstack,
)
from estimator.hull import estimate_rao_table
from estimator.kinematics import SENSOR_CHANNELS
from estimator.seastate import channel_transfer
from estimator.spectra import jonswap, spreading_cos2s

DEG = np.pi / 180.0
# Invented demo container ship, deep-laden condition (config/demo_vessel.toml); IMU position in ITTC axes.
LPP, BEAM, DRAFT, CB, GM, KG, LWL = 200.0, 32.2, 11.5, 0.66, 1.2, 12.3, 204.0
SENSOR = (-12.0, 0.0, 4.0)


def _ones(omega, beta, speed):
    """Unit transfer function of one channel (an ideal wave probe moving with the ship)."""
    return np.ones((1, np.size(omega)), dtype=complex)


def _cell_energy(grid, density):
    return float((density * grid.d_omega[:, None] * grid.d_beta).sum())


def _covering_edges(grid, speed, n=240):
    """|ω_e| bins from 0 to beyond the largest encounter frequency of the grid (head seas)."""
    w = grid.omega_edges[-1]
    return np.linspace(0.0, 1.01 * (w + w**2 * speed / G), n + 1)


@pytest.fixture(scope="module")
def demo_table():
    return estimate_rao_table(
        LPP, BEAM, DRAFT, CB, GM,
        speeds=np.array([0.0, 3.0, 6.0, 9.0]), headings=np.arange(0, 181, 15) * DEG,
        omegas=np.linspace(0.15, 2.4, 60), kg=KG, lwl=LWL,
    )  # fmt: skip


# -- grid --


def test_default_grid_is_geometric_and_full_circle():
    g = SpectralGrid.default(n_omega=20, omega_min=0.2, omega_max=2.0, n_beta=36)
    # geometric cells: constant ratio of successive edges, centres the geometric mean of their edges
    ratio = g.omega_edges[1:] / g.omega_edges[:-1]
    np.testing.assert_allclose(ratio, (2.0 / 0.2) ** (1 / 20), rtol=1e-12)
    np.testing.assert_allclose(g.omega, np.sqrt(g.omega_edges[1:] * g.omega_edges[:-1]), rtol=1e-12)
    assert g.shape == (20, 36) and g.size == 720
    assert g.d_beta * g.beta.size == pytest.approx(2 * np.pi)  # full circle
    np.testing.assert_allclose(g.d_omega.sum(), 1.8, rtol=1e-12)


def test_grid_errors_are_clear():
    edges = np.array([0.2, 0.3, 0.5])
    beta = np.arange(8) * (2 * np.pi / 8)
    with pytest.raises(ValueError, match="K\\+1 = 3 values, got 2"):
        SpectralGrid(np.array([0.25, 0.4]), edges[:2], beta)
    with pytest.raises(ValueError, match="positive and strictly ascending"):
        SpectralGrid(np.array([0.25, 0.4]), np.array([0.2, 0.5, 0.3]), beta)
    with pytest.raises(ValueError, match="uniform full-circle grid, got 7 values"):
        SpectralGrid(np.array([0.25, 0.4]), edges, np.arange(7) * 0.5)


def test_build_kernel_errors_are_clear():
    g = SpectralGrid.default(n_omega=6, n_beta=8)
    with pytest.raises(ValueError, match="speed must be >= 0 m/s, got -1"):
        build_kernel(g, _ones, -1.0, np.linspace(0, 3, 5), ["a"])
    with pytest.raises(ValueError, match="omega_e_edges must be ascending, non-negative"):
        build_kernel(g, _ones, 2.0, np.array([0.0, 0.5, 0.4]), ["a"])
    with pytest.raises(ValueError, match="no absolute cell maps into the encounter bins"):
        build_kernel(g, _ones, 0.0, np.array([5.0, 6.0]), ["a"])
    with pytest.raises(ValueError, match="transfer returned shape"):
        build_kernel(g, _ones, 0.0, np.linspace(0, 3, 5), ["a", "b"])


# -- energy conservation --


@pytest.mark.parametrize("speed", [0.0, 4.0, 8.0, 12.0])
@pytest.mark.parametrize("beta_deg", [180.0, 135.0, 90.0, 45.0, 0.0])
def test_unit_transfer_conserves_energy(beta_deg, speed):
    # S_e dω_e = S dω summed over every root (Lewis 1989; criteria §7: m0 is invariant). With a unit
    # transfer function the encounter-binned auto-spectrum integrates to Σ s_kl Δω_k Δβ exactly, provided
    # the bins cover the whole |ω_e| image (here 0 … 1.01·max). Following seas at 8 and 12 m/s put
    # ω* = g/(2U cos β) inside the grid, so the one-to-three mapping and the fold at ω_e = 0 are exercised.
    g = SpectralGrid.default()
    rng = np.random.default_rng(int(beta_deg + 10 * speed))
    s = np.zeros(g.shape)
    col = int(round(beta_deg / (g.d_beta / DEG)))
    s[:, col] = rng.uniform(0.1, 1.0, g.omega.size)  # a long-crested sea with an irregular spectrum
    edges = _covering_edges(g, speed)
    k = build_kernel(g, _ones, speed, edges, ["probe"])
    phi = k.predict(s)
    assert phi.shape == (edges.size - 1,)
    assert np.all(phi >= 0)
    assert (phi * np.diff(edges)).sum() == pytest.approx(_cell_energy(g, s), rel=1e-12)


def test_one_to_three_case_is_really_exercised():
    # Brief §1.2: following seas at 8 m/s, ω* = g/(2U) = 0.61 rad/s lies inside the grid and every cell
    # above g/U = 1.23 rad/s is overtaken by the ship (ω_e < 0).
    g = SpectralGrid.default()
    k = build_kernel(g, _ones, 8.0, _covering_edges(g, 8.0), ["probe"])
    l0 = 0  # β = 0, following seas
    assert k.overtaking_share[g.omega_edges[:-1] > G / 8.0, l0].min() == 1.0
    assert k.overtaking_share[g.omega_edges[1:] < G / 8.0, l0].max() == 0.0
    # head seas are never overtaken; the fold region carries the critical share
    assert k.overtaking_share[:, g.beta.size // 2].max() == 0.0
    w_star = G / (2 * 8.0)
    near = np.abs(g.omega / w_star - 1) < 0.1
    assert np.all(k.critical_share[near, l0] > 0.5)
    assert np.all(k.critical_share[:, g.beta.size // 4] == 0.0)  # beam seas: no Doppler fold


def test_random_short_crested_sea_conserves_energy_at_speed():
    # Same balance (Lewis 1989) for a full random (ω, β) field, all directions at once.
    g = SpectralGrid.default()
    s = np.random.default_rng(3).uniform(0.0, 1.0, g.shape)
    for speed in (0.0, 7.5):
        edges = _covering_edges(g, speed)
        k = build_kernel(g, _ones, speed, edges, ["probe"])
        assert (k.predict(s) * np.diff(edges)).sum() == pytest.approx(_cell_energy(g, s), rel=1e-12)


def test_bins_that_do_not_cover_the_image_lose_exactly_the_energy_outside():
    # Energy balance per cell (Lewis 1989): at zero speed ω_e = ω, so bins covering only the lower half of
    # the grid keep exactly the energy of the cells below their upper edge.
    g = SpectralGrid.default()
    s = np.random.default_rng(4).uniform(0.1, 1.0, g.shape)
    cut = g.omega_edges[14]
    k = build_kernel(g, _ones, 0.0, np.linspace(0.0, cut, 50), ["probe"])
    kept = _cell_energy(g, np.where(g.omega[:, None] < cut, s, 0.0))
    assert (k.predict(s) * np.diff(k.omega_e_edges)).sum() == pytest.approx(kept, rel=1e-12)


def _fine_grid():
    edges = np.linspace(0.1, 3.0, 1161)  # Δω = 0.0025 rad/s
    return SpectralGrid(0.5 * (edges[1:] + edges[:-1]), edges, np.arange(24) * (2 * np.pi / 24))


def test_head_sea_encounter_spectrum_check_value():
    # criteria §7 [D]: JONSWAP(Hs 5 m, Tp 10 s, γ 3.3), head seas at 15 kn: ω = 2π/10 is met at
    # ω_e = 0.93886 rad/s with S_e = S(0.62832)/1.98849 = 3.8862 m²s. Long-crested sea in the β = π column.
    g = _fine_grid()
    s = np.zeros(g.shape)
    s[:, 12] = jonswap(g.omega, 5.0, 10.0, 3.3) / g.d_beta
    k = build_kernel(g, _ones, 15 * KNOT, np.array([0.93686, 0.94086]), ["probe"])
    assert k.predict(s)[0] == pytest.approx(3.8862, rel=1e-3)


def test_following_sea_encounter_spectrum_sums_three_roots():
    # criteria §7 [D]: U = 15 kn, β = 0, |ω_e| = 0.25 rad/s ← ω = 0.34201, 0.92926, 1.48526 rad/s;
    # S_e(|ω_e|) = Σ_i S(ω_i)/|1 − 2 ω_i U cos β / g| over the three roots (energy balance, Lewis 1989).
    g = _fine_grid()
    s = np.zeros(g.shape)
    s[:, 0] = jonswap(g.omega, 5.0, 10.0, 3.3) / g.d_beta
    a = 15 * KNOT / G
    roots = np.array([0.34201, 0.92926, 1.48526])
    np.testing.assert_allclose(roots - a * roots**2, [0.25, 0.25, -0.25], atol=2e-5)  # the check values
    expected = float(np.sum(jonswap(roots, 5.0, 10.0, 3.3) / np.abs(1 - 2 * a * roots)))
    k = build_kernel(g, _ones, 15 * KNOT, np.array([0.248, 0.252]), ["probe"])
    assert k.predict(s)[0] == pytest.approx(expected, rel=2e-3)
    # and all three branches contribute: removing the overtaken part (ω > g/(U cos β)) loses S(ω_3)/|J_3|
    s_no3 = np.where(g.omega[:, None] < 1 / a, s, 0.0)
    third = float(jonswap(roots[2:], 5.0, 10.0, 3.3)[0] / abs(1 - 2 * a * roots[2]))
    assert k.predict(s)[0] - k.predict(s_no3)[0] == pytest.approx(third, rel=5e-3)


# -- conjugation on the overtaking branch --


PHASE = 0.7  # [rad] known phase lead of channel "b" over channel "a"


def _two_channel(omega, beta, speed):
    """Analytic two-channel transfer: H_a = 1, H_b = 2·exp(i·PHASE) (constant gain and phase lead)."""
    n = np.size(omega)
    return np.stack([np.ones(n, dtype=complex), np.full(n, 2.0 * np.exp(1j * PHASE))])


def test_quad_spectrum_sign_flips_on_the_overtaking_branch():
    # Brief §1.1 / docs/conventions.md: G_ab = H_a H_b* = 2 e^{−iφ} where ω_e > 0 and its conjugate 2 e^{+iφ}
    # where the ship overtakes the waves (ω_e < 0). Per unit auto-spectrum of "a":
    #   Re Φ_ab / Φ_aa = 2 cos φ on both branches, Im Φ_ab / Φ_aa = ∓2 sin φ, Φ_bb / Φ_aa = 4.
    g = SpectralGrid.default()
    speed = 8.0
    k = build_kernel(g, _two_channel, speed, _covering_edges(g, speed), ["a", "b"])
    # rows per bin: Re Φ_aa, Re Φ_ab, Re Φ_bb, Im Φ_ab (stack order, pairs i ≤ j then i < j)
    mat = k.matrix.reshape(k.n_bins, 4, *g.shape)
    col_f = 0  # following seas
    slow = g.omega_edges[1:] < G / (2 * speed) * 0.95  # below the fold: ω_e > 0 only
    fast = g.omega_edges[:-1] > G / speed  # ship overtakes the waves: ω_e < 0 only
    assert slow.sum() >= 5 and fast.sum() >= 3
    for cells, sign in ((slow, -1.0), (fast, +1.0)):
        aa = mat[:, 0][:, cells, col_f].sum(axis=0)
        assert np.all(aa > 0)
        np.testing.assert_allclose(mat[:, 1][:, cells, col_f].sum(axis=0) / aa, 2 * np.cos(PHASE), rtol=1e-12)
        np.testing.assert_allclose(mat[:, 2][:, cells, col_f].sum(axis=0) / aa, 4.0, rtol=1e-12)
        np.testing.assert_allclose(
            mat[:, 3][:, cells, col_f].sum(axis=0) / aa, sign * 2 * np.sin(PHASE), rtol=1e-12
        )
    # head seas: never overtaken, the quad-spectrum keeps the ω_e > 0 sign everywhere
    col_h = g.beta.size // 2
    aa = mat[:, 0][:, :, col_h].sum(axis=0)
    np.testing.assert_allclose(mat[:, 3][:, :, col_h].sum(axis=0) / aa, -2 * np.sin(PHASE), rtol=1e-12)


def test_cross_spectrum_of_a_cell_straddling_the_zero_crossing():
    # A cell that maps partly to ω_e > 0 and partly to ω_e < 0 contributes Im Φ_ab ∝ −sin φ·(share > 0) +
    # sin φ·(share < 0) (brief §1.1, conjugate branch), so |Im Φ_ab| < 2 sin φ·Φ_aa for that cell.
    g = SpectralGrid.default()
    speed = 8.0
    k = build_kernel(g, _two_channel, speed, _covering_edges(g, speed), ["a", "b"])
    mat = k.matrix.reshape(k.n_bins, 4, *g.shape)
    kk = int(np.searchsorted(g.omega_edges, G / speed) - 1)  # cell containing ω_e = 0
    assert 0 < k.overtaking_share[kk, 0] < 1
    ratio = mat[:, 3, kk, 0].sum() / mat[:, 0, kk, 0].sum()
    assert abs(ratio) < 2 * np.sin(PHASE) * 0.999


# -- stack / unstack --


def test_stack_unstack_round_trip():
    rng = np.random.default_rng(7)
    m, c = 5, 4
    a = rng.standard_normal((m, c, c)) + 1j * rng.standard_normal((m, c, c))
    phi = a @ np.conj(np.transpose(a, (0, 2, 1)))  # Hermitian, positive semi-definite per bin
    v = stack(phi)
    assert v.shape == (m * c * c,)  # n_c² real equations per bin (brief §1.4)
    np.testing.assert_allclose(unstack(v, c, m), phi, rtol=1e-14, atol=1e-14)
    w = rng.standard_normal(m * c * c)
    np.testing.assert_array_equal(stack(unstack(w, c, m)), w)
    # order inside a bin: Re Φ_ij (i ≤ j) then Im Φ_ij (i < j), brief §1.4
    iu, ju = np.triu_indices(c)
    is_, js_ = np.triu_indices(c, k=1)
    np.testing.assert_array_equal(v[: iu.size], phi[0, iu, ju].real)
    np.testing.assert_array_equal(v[iu.size : c * c], phi[0, is_, js_].imag)


def test_kernel_auto_channel_marks_the_auto_spectrum_rows():
    g = SpectralGrid.default(n_omega=8, n_beta=8)
    k = build_kernel(g, _two_channel, 0.0, np.linspace(0.0, 2.0, 6), ["a", "b"])
    np.testing.assert_array_equal(k.auto_channel, np.tile([0, -1, 1, -1], 5))
    assert k.n_bins == 5 and k.matrix.shape == (20, 64)


# -- prediction against the absolute-domain sum with the demo hull ------------------------------------------


def _fine_sum(grid, transfer, speed, density, n_fine=32):
    """Σ_kl mean_cell(|H|²) s_kl Δω_k Δβ with n_fine midpoints per cell (absolute domain, no Jacobian)."""
    frac = (np.arange(n_fine) + 0.5) / n_fine
    w = grid.omega_edges[:-1, None] + frac[None, :] * grid.d_omega[:, None]  # (K, n)
    w3 = np.broadcast_to(w[:, :, None], (*w.shape, grid.beta.size))
    b3 = np.broadcast_to(grid.beta[None, None, :], w3.shape)
    h = transfer(w3.reshape(-1), b3.reshape(-1), speed).reshape(-1, *w3.shape)
    h2 = (np.abs(h) ** 2).mean(axis=2)  # (C, K, L)
    return (h2 * density[None] * grid.d_omega[None, :, None] * grid.d_beta).sum(axis=(1, 2))


@pytest.mark.parametrize("speed", [0.0, 6.0])
@pytest.mark.parametrize("beta_deg", [180.0, 90.0, 30.0])
def test_auto_spectra_integrate_to_the_absolute_domain_variance(demo_table, beta_deg, speed):
    # Brief §6 step 10 / St. Denis & Pierson (1953): σ_i² = Σ_kl |H_i(ω_k, β_l; U)|² s_kl Δω Δβ, with no
    # Jacobian; the encounter-binned kernel must give the same variance for every sensor channel. The
    # tolerance (1 %) is the midpoint-rule difference between the kernel's 4 pieces per cell and 32 here,
    # largest at the sharp roll resonance (ζ = 0.05).
    g = SpectralGrid.default()
    tr = channel_transfer(demo_table, SENSOR, SENSOR_CHANNELS)
    s = jonswap(g.omega, 4.0, 10.0, 3.3)[:, None] * spreading_cos2s(g.beta, beta_deg * DEG, 10.0)[None, :]
    edges = _covering_edges(g, speed)
    k = build_kernel(g, tr, speed, edges, SENSOR_CHANNELS)
    phi = k.predict_matrix(s)
    var_kernel = np.einsum("mii->i", phi * np.diff(edges)[:, None, None]).real
    var_direct = _fine_sum(g, tr, speed, s)
    np.testing.assert_allclose(var_kernel, var_direct, rtol=1e-2)


def test_zero_speed_kernel_is_the_stationary_ship_formula(demo_table):
    # Tannuri et al. (2003), brief §1.1: at zero speed Φ_ij(ω) = ∫ H_i H_j* S dβ; with bins equal to the
    # grid cells each bin is exactly one cell, so Φ_ij(bin k) = Σ_l mean_cell(H_i H_j*) s_kl Δβ.
    g = SpectralGrid.default(n_omega=16, n_beta=12)
    chans = ("roll", "pitch", "heave")
    tr = channel_transfer(demo_table, SENSOR, chans)
    s = np.random.default_rng(5).uniform(0.0, 1.0, g.shape)
    n_sub = 4
    k = build_kernel(g, tr, 0.0, g.omega_edges, chans, n_sub=n_sub)
    frac = (np.arange(n_sub) + 0.5) / n_sub
    w = g.omega_edges[:-1, None] + frac[None, :] * g.d_omega[:, None]
    w3 = np.broadcast_to(w[:, :, None], (*w.shape, g.beta.size))
    b3 = np.broadcast_to(g.beta[None, None, :], w3.shape)
    h = tr(w3.reshape(-1), b3.reshape(-1), 0.0).reshape(3, *w3.shape)
    gij = (h[:, None] * np.conj(h[None, :])).mean(axis=3)  # (C, C, K, L)
    expected = np.einsum("ijkl,kl->kij", gij, s) * g.d_beta
    np.testing.assert_allclose(k.predict_matrix(s), expected, rtol=1e-10, atol=1e-14)


def test_predicted_matrix_is_hermitian_and_positive_semidefinite(demo_table):
    # A cross-spectral matrix is Hermitian and non-negative definite in every bin (Bendat & Piersol 2010).
    g = SpectralGrid.default()
    tr = channel_transfer(demo_table, SENSOR, SENSOR_CHANNELS)
    s = jonswap(g.omega, 3.0, 9.0)[:, None] * spreading_cos2s(g.beta, 20 * DEG, 5.0)[None, :]
    k = build_kernel(g, tr, 6.0, _covering_edges(g, 6.0, 120), SENSOR_CHANNELS)
    phi = k.predict_matrix(s)
    np.testing.assert_allclose(phi, np.conj(np.transpose(phi, (0, 2, 1))), atol=1e-15)
    eig = np.linalg.eigvalsh(phi)
    assert np.all(eig >= -1e-9 * np.abs(eig).max())


# -- relative / true rotation --


def test_rotation_follows_the_ittc_heading_convention():
    # docs/conventions.md: β = (π − (θ − ψ)) mod 2π; head seas (β = π) come from the ship's heading θ = ψ,
    # waves from starboard (β = π/2) come from θ = ψ + π/2.
    g = SpectralGrid.default(n_omega=4, n_beta=36)
    theta = g.beta.copy()
    psi = 40 * DEG
    for beta_deg, theta_expected in ((180, 40), (90, 130), (0, 220), (270, 310)):
        d = np.zeros(g.shape)
        d[:, int(beta_deg / 10)] = 1.0
        t = rotate_relative_to_true(d, g.beta, psi, theta)
        assert np.degrees(theta[np.argmax(t[0])]) == pytest.approx(theta_expected)
        np.testing.assert_allclose(t.sum(axis=1), 1.0)


def test_rotation_round_trip_and_energy():
    # Exact permutation when ψ is a multiple of Δβ; periodic linear interpolation otherwise conserves the
    # sum over directions (the weights of the two neighbours add to one on a uniform circle).
    g = SpectralGrid.default(n_omega=5, n_beta=24)
    rng = np.random.default_rng(11)
    d = rng.uniform(0, 1, g.shape)
    theta = g.beta.copy()
    t = rotate_relative_to_true(d, g.beta, 45 * DEG, theta)
    np.testing.assert_allclose(relative_from_true(t, theta, 45 * DEG, g.beta), d, rtol=1e-12)
    t2 = rotate_relative_to_true(d, g.beta, 50 * DEG, theta)
    np.testing.assert_allclose(t2.sum(axis=1), d.sum(axis=1), rtol=1e-12)
    back = relative_from_true(t2, theta, 50 * DEG, g.beta)
    np.testing.assert_allclose(back.sum(axis=1), d.sum(axis=1), rtol=1e-12)


def test_regrid_periodic_wraps_around():
    # Linear interpolation on the circle: halfway between 350° and 0° is the mean of the two values.
    src = np.arange(36) * 10 * DEG
    d = np.arange(36, dtype=float)[None, :]
    out = regrid_periodic(d, src, np.array([355 * DEG, 5 * DEG, -5 * DEG]))
    np.testing.assert_allclose(out[0], [17.5, 0.5, 17.5])
