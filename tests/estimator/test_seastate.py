"""Tests for estimator.seastate: the sea-state estimator end to end on cross-spectra.

Sources named beside each check:

* Bendat & Piersol (2010) Eq. 9.80-9.81 for the variance of co- and quad-spectral estimates,
  var(C) = (Φ_ii Φ_jj + C² − Q²)/(2 n_d), var(Q) = (Φ_ii Φ_jj − C² + Q²)/(2 n_d), plus the RAO-error
  term (ε·sqrt(Φ_ii Φ_jj))², ε = 0.15, 0.3 within ±15 % of the roll frequency (project choice,
  from the sampling floor of Bendat & Piersol 2010 ch. 9);
* long-wave limit of heave: a ship in waves much longer than itself follows the surface, |H_heave| → 1
  (Faltinsen 1990 ch. 2; Jensen, Mansour & Olsen 2004);
* round trips without noise (common practice for inverse solvers, Kaipio & Somersalo 2005): Hs within ~5 % and
  the mean direction within ~10° for
  head, beam and stern-quartering seas, with the β = (π − (θ − ψ)) convention of docs/conventions.md for the
  true coming-from direction;
* the following-sea ambiguity (Nielsen 2017): the same sea from astern is harder
  at speed than at zero speed, so the confidence must drop;
* warm start (project choice): same window → same estimate (Hs within 2 %) for less solver work
  (BayesResult.n_solves, counted with a spy on BayesianEstimator.solve).
"""

import numpy as np
import pytest

from estimator.bayes import BayesianEstimator
from estimator.hull import estimate_rao_table, roll_period_is_code
from estimator.kinematics import SENSOR_CHANNELS
from estimator.seastate import (
    EstimatorSettings,
    SeaStateEstimate,
    SeaStateEstimator,
    channel_transfer,
    data_weights,
    tail_limited,
)
from estimator.spectra import DirectionalSpectrum, jonswap, spreading_cos2s

DEG = np.pi / 180.0
# Invented demo container ship, deep-laden condition (config/demo_vessel.toml); IMU position in ITTC axes.
LPP, BEAM, DRAFT, CB, GM, KG, LWL = 200.0, 32.2, 11.5, 0.66, 1.2, 12.3, 204.0
SENSOR = (-12.0, 0.0, 4.0)
T_ROLL = roll_period_is_code(BEAM, DRAFT, LWL, GM)
OMEGA_E = np.arange(0.1, 3.5, 0.05) + 0.025  # band centres as estimator.crossspectra gives them [rad/s]
PSI = 70 * DEG  # ship heading, not a multiple of the 15° direction cells (exercises the re-gridding)




@pytest.fixture(scope="module")
def table():
    return estimate_rao_table(
        LPP, BEAM, DRAFT, CB, GM,
        speeds=np.array([0.0, 3.0, 6.0, 9.0]), headings=np.arange(0, 181, 15) * DEG,
        omegas=np.linspace(0.15, 2.4, 60), kg=KG, lwl=LWL,
    )  # fmt: skip


@pytest.fixture(scope="module")
def estimator(table):
    return SeaStateEstimator(table, SENSOR, roll_period=T_ROLL)


@pytest.fixture(scope="module")
def bayes_only(table):
    return SeaStateEstimator(table, SENSOR, roll_period=T_ROLL, settings=EstimatorSettings(parametric=False))


def _relative_sea(grid, systems):
    """Σ JONSWAP × cos-2s on the estimator grid, directions as relative headings β [deg] (ITTC)."""
    return sum(
        jonswap(grid.omega, hs, tp)[:, None] * spreading_cos2s(grid.beta, b * DEG, s)[None, :]
        for hs, tp, b, s in systems
    )


def _hs(grid, d):
    return 4 * np.sqrt((d * grid.d_omega[:, None] * grid.d_beta).sum())


def _circ_deg(a, b):
    return abs(np.degrees(np.angle(np.exp(1j * (a - b)))))


def _window(est, systems, speed, heading=PSI):
    """Noise-free cross-spectra of a sea given in the relative frame (kernel prediction)."""
    kern, _ = est.kernel(speed, SENSOR_CHANNELS, OMEGA_E)
    truth = _relative_sea(est.grid, systems)
    return truth, kern.predict_matrix(truth)


def _estimate(est, phi, speed, heading=PSI, **kw) -> SeaStateEstimate:
    return est.estimate(
        OMEGA_E, phi, 8.0, SENSOR_CHANNELS, heading=heading, speed=speed, duration=1200.0, **kw
    )


# -- building blocks ---------------------------------------------------------------------------------------


def test_channel_transfer_long_wave_limit_of_heave(table):
    # Faltinsen (1990): in waves much longer than the ship, heave follows the surface (|H| → 1) and roll,
    # pitch are small; the sensor's heave channel includes its lever arm but it vanishes for long waves too.
    tr = channel_transfer(table, SENSOR, ("heave", "roll", "pitch"))
    h = tr(np.array([0.15, 0.15]), np.array([180 * DEG, 90 * DEG]), 0.0)
    assert h.shape == (3, 2)
    np.testing.assert_allclose(np.abs(h[0]), 1.0, atol=0.05)


def test_data_weights_follow_bendat_piersol():
    # One bin, two channels, Φ = [[4, 1+1j], [1−1j, 1]], n_d = 8 (Bendat & Piersol 2010, Eq. 9.80-9.81).
    phi = np.array([[[4.0, 1 + 1j], [1 - 1j, 1.0]]])
    kw = dict(rao_error=0.0, rao_error_roll=0.0, roll_frequency=None, floor_share=0.0)
    w = data_weights(phi, 8.0, ("heave", "pitch"), np.array([0.5]), **kw)
    # stack order: Re Φ_00, Re Φ_01, Re Φ_11, Im Φ_01
    var = np.array([(16 + 16) / 16, (4 + 1 - 1) / 16, (1 + 1) / 16, (4 - 1 + 1) / 16])
    np.testing.assert_allclose(w, 1 / np.sqrt(var), rtol=1e-12)
    # RAO-error term (project choice): + (ε·sqrt(Φ_ii Φ_jj))²
    w_e = data_weights(phi, 8.0, ("heave", "pitch"), np.array([0.5]), **{**kw, "rao_error": 0.15})
    np.testing.assert_allclose(w_e, 1 / np.sqrt(var + 0.15**2 * np.array([16, 4, 1, 4])), rtol=1e-12)
    # roll equations within ±15 % of the roll frequency get ε = 0.3, others keep 0.15
    kw_r = {**kw, "rao_error": 0.15, "rao_error_roll": 0.3, "roll_frequency": 0.45}
    w_near = data_weights(phi, 8.0, ("heave", "roll"), np.array([0.5]), **kw_r)
    eps = np.array([0.15, 0.3, 0.3, 0.3])
    np.testing.assert_allclose(w_near, 1 / np.sqrt(var + eps**2 * np.array([16, 4, 1, 4])), rtol=1e-12)
    w_far = data_weights(phi, 8.0, ("heave", "roll"), np.array([0.7]), **kw_r)
    np.testing.assert_allclose(w_far, w_e, rtol=1e-12)


# -- noise-free round trips ------------------------------------------------------------------------------


@pytest.mark.parametrize("which", ["default", "bayes_only"])
@pytest.mark.parametrize(("label", "beta_deg"), [("head", 180.0), ("beam", 90.0), ("stern quartering", 45.0)])
def test_round_trip_recovers_hs_and_true_direction(request, which, label, beta_deg):
    est = request.getfixturevalue("estimator" if which == "default" else "bayes_only")
    speed = 6.0
    truth, phi = _window(est, [(4.0, 10.0, beta_deg, 10.0)], speed)
    e = _estimate(est, phi, speed)
    assert e.hs == pytest.approx(_hs(est.grid, truth), rel=0.05)  # project acceptance, ~5 %
    theta_true = PSI + np.pi - beta_deg * DEG  # docs/conventions.md
    assert _circ_deg(e.wave_from, theta_true) < 10.0  # project acceptance, ~10°
    assert e.tp == pytest.approx(10.0, rel=0.07)  # one geometric cell is 8 % wide
    # the reported spectrum is in true directions and carries the same energy
    assert isinstance(e.spectrum, DirectionalSpectrum)
    assert e.spectrum.hs() == pytest.approx(e.hs, rel=0.03)
    assert _circ_deg(e.spectrum.mean_direction(), e.wave_from) < 2.0
    assert e.heading == pytest.approx(PSI) and e.speed == pytest.approx(speed)
    if which == "bayes_only":
        assert e.method == "bayesian" and e.parametric_systems == ()


def test_bimodal_sea_reports_swell_and_wind_sea(estimator):
    # Swell from the bow quarter and a younger wind sea from the other side (project test case); the longer
    # period system is labelled swell (common practice without wind information).
    speed = 4.0
    truth, phi = _window(estimator, [(3.0, 13.0, 60.0, 15.0), (2.5, 7.0, 220.0, 5.0)], speed)
    e = _estimate(estimator, phi, speed)
    assert e.hs == pytest.approx(_hs(estimator.grid, truth), rel=0.05)
    assert len(e.systems) == 2
    swell = next(s for s in e.systems if s.label == "swell")
    wind = next(s for s in e.systems if s.label == "wind sea")
    assert swell.tp == pytest.approx(13.0, rel=0.08) and wind.tp == pytest.approx(7.0, rel=0.08)
    assert _circ_deg(swell.wave_from, PSI + np.pi - 60 * DEG) < 10.0
    assert _circ_deg(wind.wave_from, PSI + np.pi - 220 * DEG) < 15.0
    assert swell.hs == pytest.approx(3.0, rel=0.1) and wind.hs == pytest.approx(2.5, rel=0.1)


# -- confidence --------------------------------------------------------------------------------------------


def _check_confidence_form(e: SeaStateEstimate):
    assert 0.0 <= e.confidence <= 1.0
    assert all(0.0 <= v <= 1.0 for v in e.confidence_factors.values())
    assert e.confidence == pytest.approx(np.prod(list(e.confidence_factors.values())))
    if any(v < 0.9 for v in e.confidence_factors.values()):
        assert len(e.reasons) > 0
    assert all(isinstance(r, str) and r.strip() for r in e.reasons)
    assert e.confidence_level in ("high", "medium", "low")


def test_following_sea_at_speed_lowers_the_confidence(estimator):
    # Brief §1.2 / Q10: waves from astern at 6 m/s fold three wave frequencies onto one encounter
    # frequency; the same sea at zero speed has no such ambiguity.
    sea = [(4.0, 10.0, 0.0, 10.0)]
    results = {}
    for speed in (0.0, 6.0):
        _, phi = _window(estimator, sea, speed)
        results[speed] = _estimate(estimator, phi, speed)
        _check_confidence_form(results[speed])
    assert results[6.0].confidence < results[0.0].confidence - 0.1
    assert any("following" in r for r in results[6.0].reasons)
    assert not any("following" in r for r in results[0.0].reasons)


def test_window_factors_and_rao_validity_enter_the_confidence(estimator):
    speed = 3.0
    _, phi = _window(estimator, [(3.0, 9.0, 150.0, 10.0)], speed)
    base = _estimate(estimator, phi, speed)
    _check_confidence_form(base)
    reason = "heading changed during the window"
    e = _estimate(estimator, phi, speed, window_factors={"stationarity": (0.5, reason)})
    _check_confidence_form(e)
    assert reason in e.reasons
    assert e.confidence == pytest.approx(0.5 * base.confidence, rel=1e-6)
    bad = _estimate(estimator, phi, speed, rao_valid=(False, "GM outside the RAO table"))
    _check_confidence_form(bad)
    assert "GM outside the RAO table" in bad.reasons
    assert bad.confidence < base.confidence


# -- warm start ----------------------------------------------------------------------------------------------


@pytest.fixture
def solver_spy(monkeypatch):
    """Record BayesResult.n_solves of every BayesianEstimator.solve call (the real method runs)."""
    calls = []
    real = BayesianEstimator.solve

    def spy(self, *args, **kwargs):
        res = real(self, *args, **kwargs)
        calls.append(res.n_solves)
        return res

    monkeypatch.setattr(BayesianEstimator, "solve", spy)
    return calls


def test_warm_start_reproduces_the_cold_estimate_with_less_work(estimator, solver_spy):
    speed = 6.0
    _, phi = _window(estimator, [(4.5, 11.0, 150.0, 8.0)], speed)
    cold = _estimate(estimator, phi, speed)
    cold_work = sum(solver_spy)
    solver_spy.clear()
    warm = _estimate(estimator, phi, speed, previous=cold)
    warm_work = sum(solver_spy)
    assert warm.hs == pytest.approx(cold.hs, rel=0.02)
    assert _circ_deg(warm.wave_from, cold.wave_from) < 3.0
    assert 0 < warm_work < cold_work


def test_warm_start_after_a_course_change_keeps_the_sea_in_true_directions(estimator):
    # The sea stays fixed in true directions while the ship turns 30°: the previous solution is rotated to
    # the new relative frame (docs/conventions.md, β = π − (θ − ψ)), so warm and cold estimates agree.
    speed = 6.0
    theta = PSI + np.pi - 150 * DEG  # waves from the bow quarter at the first heading
    psi2 = PSI + 30 * DEG
    beta2 = np.degrees(np.pi - (theta - psi2)) % 360
    _, phi1 = _window(estimator, [(4.5, 11.0, 150.0, 8.0)], speed)
    _, phi2 = _window(estimator, [(4.5, 11.0, beta2, 8.0)], speed)
    first = _estimate(estimator, phi1, speed)
    cold = _estimate(estimator, phi2, speed, heading=psi2)
    warm = _estimate(estimator, phi2, speed, heading=psi2, previous=first)
    assert warm.hs == pytest.approx(cold.hs, rel=0.02)
    assert _circ_deg(warm.wave_from, theta) < 10.0 and _circ_deg(cold.wave_from, theta) < 10.0


def test_tail_limited_caps_a_rising_unobserved_tail_and_keeps_a_jonswap():
    # JONSWAP (DNV-RP-C205 §3.5.5) has an omega^-5 tail above the peak (Hasselmann et al. 1973); capping
    # the rows above 1.2 rad/s, marked poorly observed, by an omega^-5 continuation of the last observed
    # row keeps Hs within 2 % (analytic: the continuation differs from JONSWAP only by the factor
    # exp(-1.25 (wp/w)^4) between the two frequencies).
    edges = np.geomspace(0.22, 1.9, 29)
    omega = np.sqrt(edges[:-1] * edges[1:])
    dw = np.diff(edges)
    s1 = jonswap(omega, 4.0, 9.0, 3.3)
    dens = np.repeat(s1[:, None], 24, axis=1) / (2 * np.pi)
    sd = np.where(omega[:, None] > 1.2, 3.0, 0.2) * np.ones((1, 24))
    capped = tail_limited(dens, sd, omega, dw)
    hs = lambda d: 4 * np.sqrt((d * dw[:, None]).sum() * 2 * np.pi / 24)  # noqa: E731
    assert hs(capped) == pytest.approx(hs(dens), rel=0.02)
    # a tail that rises where the motions see nothing (prior extrapolation) is cut to omega^-5
    rising = dens.copy()
    rising[omega > 1.2] = dens[omega > 1.2][0] * 3.0
    cut = tail_limited(rising, sd, omega, dw)
    k = int(np.argmax(omega > 1.2))
    np.testing.assert_allclose(cut[k:, 0], rising[k - 1, 0] * (omega[k:] / omega[k - 1]) ** -5.0, rtol=1e-12)
    assert hs(cut) < 1.01 * hs(dens)
    # well-observed rows are never changed
    np.testing.assert_array_equal(cut[:k], rising[:k])


def test_tail_limited_leaves_cells_of_the_following_sea_ambiguity_alone():
    # Iseki & Ohtsu (2000), Nielsen (2006): near the critical frequency g/(2U cos beta) and on the
    # overtaking branch one encounter frequency collects up to three wave frequencies; such cells are
    # poorly observed for that reason, not because the hull filters short waves, so the omega^-5 cap
    # (Hasselmann et al. 1973) must not cut them. Here the poorly observed following-sea cells
    # (beta within 45 deg of 0) of a JONSWAP (DNV-RP-C205 §3.5.5) above its peak are marked ambiguous:
    # their energy is kept exactly, while the same cells not marked are capped.
    edges = np.geomspace(0.22, 1.9, 29)
    omega = np.sqrt(edges[:-1] * edges[1:])
    dw = np.diff(edges)
    beta = np.arange(24) * 2 * np.pi / 24
    following = np.abs(np.angle(np.exp(1j * beta))) <= np.radians(45)
    dens = np.zeros((omega.size, 24))
    dens[:, following] = (jonswap(omega, 6.0, 11.0, 3.3) / (2 * np.pi))[:, None]
    rising = dens.copy()
    above = omega > 0.7
    rising[above] = dens[above][0] * 2.0  # a flat tail: above omega^-5, capped unless exempt
    sd = np.where(above[:, None], 3.0, 0.2) * np.ones((1, 24))
    amb = np.broadcast_to(following[None, :] & above[:, None], dens.shape)
    np.testing.assert_array_equal(tail_limited(rising, sd, omega, dw, ambiguous=amb), rising)
    assert (tail_limited(rising, sd, omega, dw)[above] < rising[above]).any()
