"""Tests for estimator.bayes: the non-parametric Bayesian (ABIC) estimate of the directional spectrum.

Sources named beside each check:

* eigenvalues of the cyclic second-difference operator, 16 sin⁴(πj/L) (analytical: circulant matrix,
  Gray 2006 "Toeplitz and circulant matrices"), and ln det of a Kronecker sum as the sum of ln of the
  eigenvalue sums (analytical; used for ABIC in Akaike 1980 / Nielsen 2008);
* round trips without noise (common practice for inverse solvers, Kaipio & Somersalo 2005: synthetic data
  through the same RAOs; the "inverse
  crime" is deliberate here, it tests the solver, not the method): Hs = 4·sqrt(m0) within ~5 % and the mean
  direction (a1, b1 circular mean, Kuik et al. 1988) within ~10°, for head, beam and stern-
  quartering seas at speed;
* the weighted misfit χ² = ||W(b − Aŝ)||²/M ≈ 1 when the noise has exactly the assumed variances (analytic:
  a least-squares fit with p effective parameters leaves (M − p)/M, Hastie & Tibshirani 1990 §3.5);
* the warm start (project choice: previous solution and hyperparameters, fewer Gauss–Newton steps) gives the
  same estimate for the same window (Hs within 2 %) with fewer Cholesky factorisations (BayesResult.n_solves).
"""

import numpy as np
import pytest

from estimator.bayes import BayesianEstimator, SmoothnessPrior
from estimator.forward import SpectralGrid, build_kernel
from estimator.hull import estimate_rao_table, roll_period_is_code
from estimator.kinematics import SENSOR_CHANNELS
from estimator.seastate import channel_transfer, data_weights
from estimator.spectra import jonswap, spreading_cos2s

DEG = np.pi / 180.0
# Invented demo container ship, deep-laden condition (config/demo_vessel.toml); IMU position in ITTC axes.
LPP, BEAM, DRAFT, CB, GM, KG, LWL = 200.0, 32.2, 11.5, 0.66, 1.2, 12.3, 204.0
SENSOR = (-12.0, 0.0, 4.0)
T_ROLL = roll_period_is_code(BEAM, DRAFT, LWL, GM)
OMEGA_E = np.arange(0.1, 3.5, 0.05) + 0.025  # band centres as estimator.crossspectra gives them [rad/s]
EDGES_E = np.concatenate([[0.1], OMEGA_E + 0.025])
N_D = 8.0  # independent averages of a 20-min window, 256-s segments (project choice)
SPEED = 6.0  # [m/s], about 12 kn




@pytest.fixture(scope="module")
def setup():
    table = estimate_rao_table(
        LPP, BEAM, DRAFT, CB, GM,
        speeds=np.array([0.0, 3.0, 6.0, 9.0]), headings=np.arange(0, 181, 15) * DEG,
        omegas=np.linspace(0.15, 2.4, 60), kg=KG, lwl=LWL,
    )  # fmt: skip
    grid = SpectralGrid.default()
    tr = channel_transfer(table, SENSOR, SENSOR_CHANNELS)
    kern = build_kernel(grid, tr, SPEED, EDGES_E, SENSOR_CHANNELS)
    return grid, kern, BayesianEstimator(kern.matrix, grid.shape)


def _sea(grid, hs, tp, beta_mean, s, gamma=3.3):
    return jonswap(grid.omega, hs, tp, gamma)[:, None] * spreading_cos2s(grid.beta, beta_mean, s)[None, :]


def _weights(kern, density):
    """Realistic 1/σ: Bendat & Piersol variances with n_d = 8 plus a 15 % RAO-error term (project choice)."""
    phi = kern.predict_matrix(density)
    w = data_weights(
        phi, N_D, SENSOR_CHANNELS, OMEGA_E, rao_error=0.15, rao_error_roll=0.3,
        roll_frequency=2 * np.pi / T_ROLL, floor_share=0.01,
    )  # fmt: skip
    return np.where(np.abs(kern.matrix).sum(axis=1) > 0, w, 0.0)


def _hs_dir(grid, density):
    e = density * grid.d_omega[:, None] * grid.d_beta
    ed = e.sum(axis=0)
    return 4 * np.sqrt(e.sum()), np.arctan2((ed * np.sin(grid.beta)).sum(), (ed * np.cos(grid.beta)).sum())


def _circ_deg(a, b):
    return abs(np.degrees(np.angle(np.exp(1j * (a - b)))))


# -- prior --


def test_prior_eigenvalues_and_log_determinant():
    # Circulant second difference: eigenvalues (2 − 2cos(2πj/L))² = 16 sin⁴(πj/L) (analytical).
    p = SmoothnessPrior.for_shape((5, 8))
    b_block = p.k_beta[:8, :8]
    np.testing.assert_allclose(np.sort(np.linalg.eigvalsh(b_block)), np.sort(p.eig_beta), atol=1e-12)
    np.testing.assert_allclose(np.sort(p.eig_beta), np.sort(16 * np.sin(np.pi * np.arange(8) / 8) ** 4))
    # ln det of the Kronecker-sum precision equals the dense determinant (analytical identity)
    for ub, uw, u0 in ((0.5, 2.0, 0.05), (4.0, 1 / 64, 0.1)):
        sign, logdet = np.linalg.slogdet(p.precision(ub, uw, u0))
        assert sign == 1.0
        assert p.logdet(ub, uw, u0) == pytest.approx(logdet, rel=1e-10)


# -- round trips without noise --


@pytest.mark.parametrize(("label", "beta_deg"), [("head", 180.0), ("beam", 90.0), ("stern quartering", 45.0)])
def test_noise_free_round_trip_recovers_hs_and_direction(setup, label, beta_deg):
    grid, kern, solver = setup
    truth = _sea(grid, 4.0, 10.0, beta_deg * DEG, 10.0)
    res = solver.solve(kern.predict(truth), _weights(kern, truth), auto_channel=kern.auto_channel)
    hs_t, dir_t = _hs_dir(grid, truth)
    hs_e, dir_e = _hs_dir(grid, res.density)
    assert hs_e == pytest.approx(hs_t, rel=0.05)  # project acceptance, ~5 %
    assert _circ_deg(dir_e, dir_t) < 10.0  # project acceptance, ~10°
    # log transform keeps the spectrum positive (the Bayesian fit works on log S, Nielsen 2008)
    assert np.all(res.density > 0)
    assert res.chi2 < 0.1  # noise-free data are fitted far below the assumed error level
    assert np.all(np.isfinite(res.posterior_sd_x)) and np.all(res.posterior_sd_x > 0)
    assert res.u_beta in solver.u_grid and res.u_omega in solver.u_grid


def test_misfit_is_near_one_with_noise_of_the_assumed_variance(setup):
    # χ² ≈ (M − p_eff)/M when every equation has Gaussian noise of standard deviation 1/w (analytic, Hastie &
    # Tibshirani 1990 §3.5).
    grid, kern, solver = setup
    truth = _sea(grid, 4.0, 10.0, 150 * DEG, 10.0)
    w = _weights(kern, truth)
    rng = np.random.default_rng(2)
    data = kern.predict(truth) + rng.standard_normal(w.size) / np.where(w > 0, w, 1.0)
    res = solver.solve(data, w, auto_channel=kern.auto_channel)
    assert 0.6 < res.chi2 < 1.2
    hs_t, dir_t = _hs_dir(grid, truth)
    hs_e, dir_e = _hs_dir(grid, res.density)
    assert hs_e == pytest.approx(hs_t, rel=0.1)
    assert _circ_deg(dir_e, dir_t) < 15.0


def test_warm_start_reproduces_the_cold_estimate_with_less_work(setup):
    # Brief §4 item 1: warm-started from the previous solution and hyperparameters the same window needs
    # fewer Cholesky factorisations and gives the same Hs (within 2 %).
    grid, kern, solver = setup
    truth = _sea(grid, 5.0, 11.0, 200 * DEG, 8.0)
    data, w = kern.predict(truth), _weights(kern, truth)
    cold = solver.solve(data, w, auto_channel=kern.auto_channel)
    warm = solver.solve(
        data, w, x_start=cold.x, u_start=(cold.u_beta, cold.u_omega), auto_channel=kern.auto_channel
    )
    assert _hs_dir(grid, warm.density)[0] == pytest.approx(_hs_dir(grid, cold.density)[0], rel=0.02)
    assert warm.n_solves < cold.n_solves
    assert cold.n_solves > 0


def test_too_few_equations_is_a_clear_error(setup):
    grid, kern, solver = setup
    w = np.zeros(kern.matrix.shape[0])
    w[:2] = 1.0
    with pytest.raises(ValueError, match="too few usable equations for the Bayesian estimate: 2"):
        solver.solve(np.ones_like(w), w)
