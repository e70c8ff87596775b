"""Tests for estimator.parametric: the JONSWAP × cos-2s one/two-system fit.

Sources named beside each check:

* JONSWAP in the DNV-RP-C205 §3.5.5 form and its check values (JONSWAP_TABLE of tests/check_values.py,
  derived:
  Hs 5 m, Tp 10 s, γ 3.3 → S_J(ω_p) = 7.7277 m²s/rad, Hm0 from m0 = 5.006 m; γ = 1 → S_PM(ω_p) = 3.5624);
* cos-2s spreading of Longuet-Higgins et al. (1963) with C(s) = Γ(s+1)/(2√π Γ(s+½)) and the check values of
  COS2S_TABLE of tests/check_values.py, derived (s = 10: D(0) = 0.90328, D(30°) = 0.45154);
* the project's own independent implementations estimator.spectra.jonswap / spreading_cos2s (tested there
  against wavespectra) as a second oracle;
* round trips without noise (common practice for inverse solvers, Kaipio & Somersalo 2005): the exact model is
  recovered from a
  perturbed start; Schwarz (1978) BIC prefers two systems for a clearly bimodal sea and one system for a
  unimodal sea when the data carry noise of the assumed variance.
"""

import numpy as np
import pytest

from estimator.forward import SpectralGrid, build_kernel
from estimator.hull import estimate_rao_table, roll_period_is_code
from estimator.kinematics import SENSOR_CHANNELS
from estimator.parametric import ParametricModel, fit
from estimator.seastate import channel_transfer, data_weights
from estimator.spectra import jonswap, spreading_cos2s
from tests.check_values import COS2S_TABLE, JONSWAP_TABLE

S10 = next(r for r in COS2S_TABLE.value if r[0] == 10)  # (s, D(0), D(30°), σθ [deg]), derived

DEG = np.pi / 180.0
# Invented demo container ship, deep-laden condition (config/demo_vessel.toml); IMU position in ITTC axes.
LPP, BEAM, DRAFT, CB, GM, KG, LWL = 200.0, 32.2, 11.5, 0.66, 1.2, 12.3, 204.0
SENSOR = (-12.0, 0.0, 4.0)
T_ROLL = roll_period_is_code(BEAM, DRAFT, LWL, GM)
OMEGA_E = np.arange(0.1, 3.5, 0.05) + 0.025  # band centres as estimator.crossspectra gives them [rad/s]
EDGES_E = np.concatenate([[0.1], OMEGA_E + 0.025])




@pytest.fixture(scope="module")
def setup():
    table = estimate_rao_table(
        LPP, BEAM, DRAFT, CB, GM,
        speeds=np.array([0.0, 3.0, 6.0]), headings=np.arange(0, 181, 15) * DEG,
        omegas=np.linspace(0.15, 2.4, 60), kg=KG, lwl=LWL,
    )  # fmt: skip
    grid = SpectralGrid.default()
    kern = build_kernel(grid, channel_transfer(table, SENSOR, SENSOR_CHANNELS), 4.0, EDGES_E, SENSOR_CHANNELS)
    return grid, kern, ParametricModel(grid)


def _weights(kern, density):
    """Realistic 1/σ: Bendat & Piersol variances, n_d = 8, plus a 15 % RAO-error term (project choice)."""
    w = data_weights(
        kern.predict_matrix(density), 8.0, SENSOR_CHANNELS, OMEGA_E, rao_error=0.15, rao_error_roll=0.3,
        roll_frequency=2 * np.pi / T_ROLL, floor_share=0.01,
    )  # fmt: skip
    return np.where(np.abs(kern.matrix).sum(axis=1) > 0, w, 0.0)


def _density(model, systems):
    return sum(model.system_density(*s) for s in systems)


def _circ_deg(a, b):
    return abs(np.degrees(np.angle(np.exp(1j * (a - b)))))


# -- the model --


def _point_grid(omega_p):
    """Tiny frequency cells around ω_p and 0.5° direction cells: cell averages ≈ point values."""
    edges = np.array([omega_p - 1e-5, omega_p + 1e-5, omega_p + 0.1, omega_p + 0.2])
    n = 720
    return SpectralGrid(0.5 * (edges[1:] + edges[:-1]), edges, np.arange(n) * (2 * np.pi / n))


@pytest.mark.parametrize(("gamma", "s_peak"), [r[:2] for r in JONSWAP_TABLE.value if r[0] in (3.3, 1.0)])
def test_model_matches_the_jonswap_and_cos2s_check_values(gamma, s_peak):
    # JONSWAP_TABLE (derived): S_J(ω_p) for Hs 5 m, Tp 10 s; COS2S_TABLE (derived): cos-2s, s = 10,
    # D(0) = 0.90328, D(30°) = 0.45154. The model gives cell averages; the cells here are 2e-5 rad/s × 0.5°
    # wide.
    wp = 2 * np.pi / 10.0
    g = _point_grid(wp)
    d = ParametricModel(g, n_sub=5).system_density(5.0, 10.0, 0.0, 10.0, gamma)
    assert d[0, 0] == pytest.approx(s_peak * S10[1], rel=2e-4)
    assert d[0, 60] == pytest.approx(s_peak * S10[2], rel=2e-4)  # 30° off the mean direction
    assert d[0, 660] == pytest.approx(s_peak * S10[2], rel=2e-4)  # −30°: symmetric


def test_model_agrees_with_the_spectra_module_and_integrates_to_hs():
    # Second oracle: estimator.spectra (checked against wavespectra there). Hm0 from m0 = 5.006 m for
    # JONSWAP(5, 10, 3.3) (JONSWAP_TABLE, derived, integration 0.001-12 rad/s; the tail above 6 rad/s and
    # below
    # 0.1 rad/s holds < 0.1 % of m0). Cells of 0.002 rad/s × 0.5°: cell averages ≈ point values.
    edges = np.linspace(0.1, 6.0, 2951)
    g = SpectralGrid(0.5 * (edges[1:] + edges[:-1]), edges, np.arange(720) * (2 * np.pi / 720))
    d = ParametricModel(g).system_density(5.0, 10.0, 40 * DEG, 6.0, 3.3)
    ref = jonswap(g.omega, 5.0, 10.0, 3.3)[:, None] * spreading_cos2s(g.beta, 40 * DEG, 6.0)[None, :]
    np.testing.assert_allclose(d, ref, rtol=2e-3, atol=1e-6 * ref.max())
    hm0 = 4 * np.sqrt((d * g.d_omega[:, None] * g.d_beta).sum())
    assert hm0 == pytest.approx(5.006, abs=0.006)


# -- fits --


def test_one_system_round_trip_is_exact(setup):
    grid, kern, model = setup
    true = (4.0, 11.0, 150 * DEG, 8.0, 2.5)  # Hs, Tp, β̄ (bow quartering), s, γ
    dens = _density(model, [true])
    res = fit(
        kern.matrix, kern.predict(dens), _weights(kern, dens), grid, [(5.0, 9.5, 120 * DEG, 4.0, 1.5)], []
    )
    assert len(res.systems) == 1
    p = res.systems[0]
    assert (p.hs, p.tp, p.s, p.gamma) == pytest.approx(true[:1] + true[1:2] + true[3:], rel=1e-4)
    assert _circ_deg(p.beta_mean, true[2]) < 0.01
    assert 0 <= p.beta_mean < 2 * np.pi
    assert res.chi2 < 1e-8
    assert res.bic_two == np.inf  # two systems not tried
    assert res.n_evaluations > 0


def test_bimodal_sea_is_fitted_with_two_systems(setup):
    # Swell from the bow quarter + younger wind sea from the other side (project test case).
    grid, kern, model = setup
    swell = (3.0, 13.0, 60 * DEG, 15.0, 2.0)
    wind = (2.5, 7.0, 220 * DEG, 5.0, 3.3)
    dens = _density(model, [swell, wind])
    res = fit(
        kern.matrix, kern.predict(dens), _weights(kern, dens), grid,
        [(4.0, 11.0, 80 * DEG, 8.0, 2.0)],
        [((2.5, 12.0, 45 * DEG, 8.0, 2.0), (2.0, 8.0, 240 * DEG, 8.0, 2.0))],
    )  # fmt: skip
    assert res.bic_two < res.bic_one  # Schwarz (1978): the one-system model cannot fit two peaks
    assert len(res.systems) == 2
    big, small = res.systems  # ordered by decreasing Hs
    for got, true in ((big, swell), (small, wind)):
        assert (got.hs, got.tp, got.s, got.gamma) == pytest.approx(
            (true[0], true[1], true[3], true[4]), rel=1e-3
        )
        assert _circ_deg(got.beta_mean, true[2]) < 0.1


@pytest.mark.parametrize("bimodal", [False, True])
def test_bic_chooses_the_number_of_systems_with_noisy_data(setup, bimodal):
    # Data with Gaussian noise of exactly the assumed standard deviation 1/w: BIC (Schwarz 1978) must not
    # add a second system to a unimodal sea, and must keep both systems of a bimodal one; the fitted
    # parameters stay close (Hs within 10 %, Tp within 5 %, direction within 10°).
    grid, kern, model = setup
    systems = [(4.0, 11.0, 150 * DEG, 8.0, 2.5)]
    if bimodal:
        systems = [(3.0, 13.0, 60 * DEG, 15.0, 2.0), (2.5, 7.0, 220 * DEG, 5.0, 3.3)]
    dens = _density(model, systems)
    w = _weights(kern, dens)
    rng = np.random.default_rng(0)
    data = kern.predict(dens) + rng.standard_normal(w.size) / np.where(w > 0, w, 1.0)
    res = fit(
        kern.matrix, data, w, grid,
        [(4.0, 11.0, 120 * DEG, 8.0, 2.0)],
        [((3.0, 12.0, 45 * DEG, 8.0, 2.0), (2.0, 8.0, 240 * DEG, 8.0, 2.0))],
    )  # fmt: skip
    assert len(res.systems) == len(systems)
    assert 0.5 < res.chi2 < 1.5
    for got, true in zip(res.systems, systems, strict=True):
        assert got.hs == pytest.approx(true[0], rel=0.10)
        assert got.tp == pytest.approx(true[1], rel=0.05)
        assert _circ_deg(got.beta_mean, true[2]) < 10.0


def test_fit_without_any_start_is_a_clear_error(setup):
    grid, kern, model = setup
    dens = _density(model, [(4.0, 11.0, 150 * DEG, 8.0, 2.5)])
    with pytest.raises(ValueError, match="parametric fit failed from every starting point"):
        fit(kern.matrix, kern.predict(dens), _weights(kern, dens), grid, [], [])


def test_density_jacobian_matches_central_differences():
    # ParametricModel.density_jacobian (forward differences per factor, exact in ln Hs since S ∝ Hs²)
    # against central differences of the density itself (truncation error O(h²))
    from estimator.forward import SpectralGrid
    from estimator.parametric import ParametricModel, _pack

    model = ParametricModel(SpectralGrid.default())
    p = _pack([(3.0, 9.0, 2.5, 8.0, 2.0), (1.5, 14.0, 1.0, 20.0, 1.2)])
    steps = np.array([1e-6 * max(1.0, abs(v)) for v in p])
    s0, ds = model.density_jacobian(p, steps)
    assert np.allclose(s0, model.density(p).reshape(-1), rtol=1e-12)
    for j in range(p.size):
        h = 1e-5 * max(1.0, abs(p[j]))
        a, b = p.copy(), p.copy()
        a[j] += h
        b[j] -= h
        ref = (model.density(a) - model.density(b)).reshape(-1) / (2 * h)
        assert np.max(np.abs(ds[:, j] - ref)) <= 1e-4 * np.max(np.abs(ref)), j


def test_projected_jacobian_equals_the_full_product():
    # ProjectedModel.jacobian (two contractions per separable system) against M @ density_jacobian, the
    # full product with the forward-difference density derivatives (checked above against central
    # differences): equal to the rounding of a forward difference (about ε/h = 2e-16/1e-6 of the spectrum)
    from estimator.forward import SpectralGrid
    from estimator.parametric import ParametricModel, ProjectedModel, _pack

    model = ParametricModel(SpectralGrid.default())
    mat = np.random.default_rng(3).random((200, model.grid.shape[0] * model.grid.shape[1]))
    p = _pack([(3.0, 9.0, 2.5, 8.0, 2.0), (1.5, 14.0, 1.0, 20.0, 1.2)])
    steps = np.array([1e-6 * max(1.0, abs(v)) for v in p])
    full = mat @ model.density_jacobian(p, steps)[1]
    got = ProjectedModel(model, mat).jacobian(p, steps)
    assert np.all(np.max(np.abs(got - full), axis=0) <= 1e-7 * np.max(np.abs(full), axis=0))
