"""Tests for estimator.simulate: the time-domain motion simulator.

Sources of the expected values are named beside each check: the absolute-domain response variance
Σ|H|²S ΔωΔθ (linear superposition, St. Denis & Pierson 1953) with the rigid-body sensor transfer
functions of estimator.kinematics and of the wave-buoy-analogy brief §1.4; the sampling error of a
variance 1/sqrt(T·B_eff) (brief §1.5, Bendat & Piersol 2010); analytical phase relations of a
wave-following ship (long-wave limits: heave 1, pitch ∓ik cos β, roll −ik sin β; capytaine 3.0.0
gives the same signs, reference-libraries.md §1.2 and §6); the quad-spectrum quadrant logic of the
brief §1.4 (sign of Im Φ_heave,pitch head/following, Im Φ_roll,heave port/starboard); statistical
linearisation of quadratic damping (Roberts & Spanos 1990); Gillespie (1996) for the wander process.
"""

import numpy as np
import pytest
from scipy import signal

from estimator.constants import G
from estimator.crossspectra import cross_spectral_matrix, effective_bandwidth
from estimator.kinematics import sensor_channels
from estimator.prep import CHANNELS, PrepSettings, Record, prepare
from estimator.simulate import NonlinearRoll, SimulationTruth, random_wander, simulate
from estimator.spectra import DirectionalSpectrum, directional_spectrum, jonswap, spreading_cos2s

DEG = np.pi / 180.0
OMEGA = np.linspace(0.2, 2.4, 111)
THETA = np.arange(72) * 5 * DEG
W_ROLL, Z_ROLL = 2 * np.pi / 16.0, 0.08
W_HEAVE, Z_HEAVE = 0.9, 0.3


def _sea(hs=3.0, tp=10.0, mean_from=0.0, s=15.0):
    return directional_spectrum(
        OMEGA, THETA, jonswap(OMEGA, hs, tp), lambda th: spreading_cos2s(th, mean_from, s)
    )


def _long_crested(hs, tp, mean_from, omega=OMEGA):
    # DirectionalSpectrum with one direction: S(ω) = 2π·density (its direction weight is 2π)
    return DirectionalSpectrum(omega, np.array([mean_from]), (jonswap(omega, hs, tp) / (2 * np.pi))[:, None])


def _sdof(we, wn, zeta):
    lam = we / wn
    return 1.0 / (1.0 - lam**2 + 2j * zeta * lam)


def analytic_rao(omega, beta, speed):
    """A wave-following ship with 1-DOF dynamics, written from the long-wave limits (analytical).

    Heave follows the elevation, pitch (+ bow down) the longitudinal slope i·k·cos β and roll
    (+ starboard down) the transverse slope −i·k·sin β of a wave exp(−ik(x cos β + y sin β))
    (DEVELOPERS.md), each filtered by a damped oscillator evaluated at the SIGNED encounter
    frequency (so the overtaking branch is the complex conjugate); heave and pitch share one
    oscillator so that their relative phase is exactly ±90°. Sway, surge and yaw are zero.
    """
    omega, beta, speed = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (omega, beta, speed)))
    k = omega**2 / G
    we = omega - k * speed * np.cos(beta)
    hv = _sdof(we, W_HEAVE, Z_HEAVE)
    out = np.zeros((6,) + omega.shape, dtype=complex)
    out[2] = hv
    out[3] = -1j * k * np.sin(beta) * _sdof(we, W_ROLL, Z_ROLL)
    out[4] = 1j * k * np.cos(beta) * hv
    return out


@pytest.fixture(scope="module")
def hull_table():
    from estimator.hull import estimate_rao_table

    return estimate_rao_table(
        180.0, 30.0, 10.0, 0.7, 1.6,
        speeds=np.array([0.0, 4.0, 8.0]), headings=np.arange(0, 181, 15) * DEG,
        omegas=np.linspace(0.2, 2.0, 37),
    )  # fmt: skip


def _predicted_variances(spectrum, rao, xyz, psi, speed, channels=CHANNELS):
    """Σ |T_c|² S Δω Δθ on the spectrum's own grid, T_c from estimator.kinematics.sensor_channels."""
    w, th = np.meshgrid(spectrum.omega, spectrum.theta, indexing="ij")
    beta = np.mod(np.pi - (th - psi), 2 * np.pi)
    we = w - w**2 / G * speed * np.cos(beta)
    t = sensor_channels(rao(w, beta, speed), xyz, we, channels)
    wts = spectrum.omega_weights[:, None] * spectrum.theta_weights[None, :]
    return {c: float(np.sum(np.abs(t[i]) ** 2 * spectrum.density * wts)) for i, c in enumerate(channels)}


def _relative_sampling_sigma(x, fs, duration):
    """1/sqrt(T·B_eff) from the record's own Welch spectrum (brief §1.5)."""
    f, p = signal.welch(x, fs=fs, nperseg=1024)
    return 1.0 / np.sqrt(duration * effective_bandwidth(2 * np.pi * f, p / (2 * np.pi)))


@pytest.mark.parametrize(
    ("name", "wave_from", "psi"),
    [("head", 0.0, 0.0), ("beam from starboard", 90 * DEG, 0.0), ("following", 0.0, 180 * DEG),
     ("bow quartering from port", 300 * DEG, 0.0)],
)  # fmt: skip
def test_channel_variances_match_the_absolute_domain_prediction(name, wave_from, psi):
    # Linear superposition: var = Σ|T|²S ΔωΔθ, T the sensor transfer functions (estimator.kinematics,
    # brief §1.4); tolerance 4 sampling sigmas (brief §1.5) + 3 % for the simulator's discretisation.
    duration, fs, speed = 3 * 3600.0, 2.0, 5.0
    xyz = (-60.0, 8.0, 15.0)
    sea = _sea(3.0, 10.0, wave_from, 10.0)
    rec = simulate(
        sea, analytic_rao, heading=psi, speed=speed, duration=duration, fs=fs, sensor_xyz=xyz, seed=7,
        n_frequencies=150, n_directions=48,
    )  # fmt: skip
    pred = _predicted_variances(sea, analytic_rao, xyz, psi, speed)
    for c in CHANNELS:
        x = rec.channels[c]
        rel = np.var(x) / pred[c] - 1.0
        tol = 4 * _relative_sampling_sigma(x, fs, duration) + 0.03
        assert abs(rel) < tol, (name, c, rel, tol)


@pytest.mark.parametrize(("wave_from", "psi"), [(0.0, 0.0), (60 * DEG, 0.0), (0.0, 150 * DEG)])
def test_channel_variances_with_the_hull_rao_table(hull_table, wave_from, psi):
    # Same oracle with the real RAOTable from estimator.hull (JMO heave/pitch, 1-DOF roll).
    duration, fs, speed = 3 * 3600.0, 2.0, 6.0
    xyz = (-70.0, 0.0, 20.0)
    sea = _sea(4.0, 11.0, wave_from, 8.0)
    rec = simulate(
        sea, hull_table, heading=psi, speed=speed, duration=duration, fs=fs, sensor_xyz=xyz, seed=3,
        n_frequencies=150, n_directions=48,
    )  # fmt: skip
    pred = _predicted_variances(sea, hull_table, xyz, psi, speed)
    for c in CHANNELS:
        x = rec.channels[c]
        rel = np.var(x) / pred[c] - 1.0
        tol = 4 * _relative_sampling_sigma(x, fs, duration) + 0.03
        assert abs(rel) < tol, (c, rel, tol)


def test_wave_elevation_variance_and_transfer_function_at_speed():
    # The wave at the origin has variance m0 (Hs = 4 sqrt(m0)); the H1 estimate
    # csd(ζ, heave)/welch(ζ) recovers the RAO in the e^{+iω_e t} convention at the encounter
    # frequency (reference-libraries.md §4), here in long-crested bow seas at 6 m/s.
    duration, fs, speed, psi = 2 * 3600.0, 2.0, 6.0, 0.0
    beta = 150 * DEG
    sea = _long_crested(3.0, 9.0, np.pi - beta)  # θ = π − β + ψ
    rec, truth = simulate(
        sea, analytic_rao, heading=psi, speed=speed, duration=duration, fs=fs, seed=1, n_frequencies=400,
        return_truth=True, channels=("heave", "pitch"),
    )  # fmt: skip
    assert isinstance(truth, SimulationTruth)
    m0 = sea.m0()
    assert np.var(truth.wave) == pytest.approx(m0, rel=4 * _relative_sampling_sigma(truth.wave, fs, duration))
    f, pzz = signal.welch(truth.wave, fs=fs, nperseg=1024)
    _, pzh = signal.csd(truth.wave, rec.channels["heave"], fs=fs, nperseg=1024)
    we = 2 * np.pi * f
    sel = (we > 0.5) & (we < 1.0)
    # encounter frequency → absolute frequency (head-ish seas: one root), ω_e = ω − ω²U cos β/g
    a = speed * np.cos(beta) / G
    w_abs = (1 - np.sqrt(1 - 4 * a * we[sel])) / (2 * a)
    h_true = analytic_rao(w_abs, beta, speed)[2]
    np.testing.assert_allclose(pzh[sel] / pzz[sel], h_true, atol=0.03)


def test_pitch_sign_and_gravity_terms_of_the_sensor_channels():
    # Sensor conventions (docs/conventions.md): pitch + bow UP = −ITTC pitch; at the origin with no
    # sway the lateral accelerometer reads −(g·roll) in the starboard axis (f_y = +g·φ in ITTC,
    # brief §1.4), and acc_z (down) = −d²heave/dt² (checked by finite differences at 20 Hz).
    sea = _sea(3.0, 9.0, 120 * DEG, 10.0)
    rec, truth = simulate(
        sea, analytic_rao, heading=0.0, speed=3.0, duration=300.0, fs=20.0, seed=2, n_frequencies=60,
        n_directions=24, return_truth=True,
    )  # fmt: skip
    np.testing.assert_allclose(rec.channels["pitch"], -truth.motions[4], atol=1e-15)
    np.testing.assert_allclose(rec.channels["roll"], truth.motions[3], atol=1e-15)
    np.testing.assert_allclose(rec.channels["acc_y"], -G * truth.motions[3], atol=1e-12)
    np.testing.assert_allclose(rec.channels["acc_x"], -G * truth.motions[4], atol=1e-12)
    d2 = np.gradient(np.gradient(rec.channels["heave"], 1 / 20.0), 1 / 20.0)
    inner = slice(10, -10)
    err = np.std(rec.channels["acc_z"][inner] + d2[inner]) / np.std(rec.channels["acc_z"])
    assert err < 0.02


def test_lever_arm_terms_against_the_kinematics_module():
    # A sensor off the origin: the record's channels equal the time-domain superposition of
    # estimator.kinematics.sensor_channels transfer functions component by component.
    sea = _long_crested(2.0, 8.0, 30 * DEG, omega=np.linspace(0.3, 1.5, 40))
    xyz = (50.0, -7.0, 12.0)
    fs, duration, speed, psi = 2.0, 60.0, 4.0, 10 * DEG
    rec, truth = simulate(
        sea, analytic_rao, heading=psi, speed=speed, duration=duration, fs=fs, sensor_xyz=xyz, seed=4,
        n_frequencies=40, return_truth=True,
    )  # fmt: skip
    w, th, a = truth.omega, truth.theta, truth.amplitude
    beta = np.mod(np.pi - (th - psi), 2 * np.pi)
    we = w - w**2 / G * speed * np.cos(beta)
    t = np.arange(rec.t.size) / fs
    basis = np.exp(1j * (np.outer(t, we) + truth.phase))  # ζ(t) = Σ a cos(ω_e t + ε)
    np.testing.assert_allclose(truth.wave, (basis * a).sum(axis=1).real, atol=1e-9)
    tf = sensor_channels(analytic_rao(w, beta, speed), xyz, we)
    for i, name in enumerate(CHANNELS):
        expected = (basis * (tf[i] * a)).sum(axis=1).real
        np.testing.assert_allclose(rec.channels[name], expected, atol=1e-6 * np.abs(expected).max())


def _quad_sum(rec, a, b, speed=None):
    p = prepare(rec, PrepSettings(min_duration_s=600.0))
    assert p.accepted, p.reasons
    cs = cross_spectral_matrix(p, noise_std=dict.fromkeys(p.usable, 1e-6))
    q = cs.quad[:, cs.index(a), cs.index(b)]
    sd = np.sqrt(cs.var_quad[:, cs.index(a), cs.index(b)].sum())
    return q.sum(), sd


@pytest.mark.parametrize("rao", ["analytic", "hull"])
def test_heave_pitch_quad_spectrum_sign_differs_between_head_and_following_seas(rao, hull_table):
    # Brief §1.4 / [S6]: sign of ∫Im Φ_heave,pitch separates head from following seas. Analytic
    # expectation for the wave-following ship: Φ_heave,pitch(sensor, + bow up) = H3·(−H5)* =
    # |G|²·i·k·cos β: negative in head seas (β = π), positive in following seas (β = 0) while the
    # encounter frequency stays positive (low speed).
    r = analytic_rao if rao == "analytic" else hull_table
    sums = {}
    for case, psi in (("head", 0.0), ("following", np.pi)):
        sea = _sea(3.0, 10.0, 0.0, 20.0)
        rec = simulate(
            sea, r, heading=psi, speed=2.0, duration=1800.0, seed=5, n_frequencies=120, n_directions=36
        )
        sums[case] = _quad_sum(rec, "heave", "pitch")
    (qh, sh), (qf, sf) = sums["head"], sums["following"]
    assert qh < -4 * sh
    assert qf > 4 * sf


def test_overtaking_branch_flips_the_quad_spectrum_sign():
    # docs/conventions.md: where the ship overtakes the waves (ω_e < 0) the measured (folded) cross
    # spectrum is the conjugate. Following seas, ω from 1.4 to 2.2 rad/s at 8 m/s: ω > 2ω* =
    # g/(U cos β) = 1.23 rad/s, so every component has ω_e < 0 and Im Φ_heave,pitch < 0, the
    # opposite of the slow following-sea case above.
    om = np.linspace(1.4, 2.2, 60)
    spec = np.exp(-(((om - 1.8) / 0.2) ** 2))
    sea = DirectionalSpectrum(om, np.array([0.0]), (0.05 * spec / (2 * np.pi))[:, None])
    rec = simulate(sea, analytic_rao, heading=np.pi, speed=8.0, duration=1800.0, seed=8, n_frequencies=200)
    q, sd = _quad_sum(rec, "heave", "pitch")
    assert q < -4 * sd


@pytest.mark.parametrize("rao", ["analytic", "hull"])
def test_roll_heave_quad_spectrum_sign_differs_between_port_and_starboard_seas(rao, hull_table):
    # Brief §1.4: port/starboard from the roll-heave quad-spectrum. Roll is odd in β (H4(2π − β) =
    # −H4(β), Faltinsen 1990), heave even, so Φ_roll,heave changes sign between waves from
    # starboard (β = 60°) and from port (β = 300°) for the same sea.
    r = analytic_rao if rao == "analytic" else hull_table
    sea = _sea(3.0, 12.0, 0.0, 20.0)
    out = {}
    for side, beta in (("starboard", 60 * DEG), ("port", 300 * DEG)):
        psi = beta - np.pi  # θ = 0: β = π + ψ
        rec = simulate(
            sea, r, heading=psi, speed=3.0, duration=1800.0, seed=9, n_frequencies=120, n_directions=36
        )
        out[side] = _quad_sum(rec, "roll", "heave")
    (qs, ss), (qp, sp) = out["starboard"], out["port"]
    assert np.sign(qs) == -np.sign(qp)
    assert abs(qs) > 4 * ss and abs(qp) > 4 * sp


def test_nonlinear_roll_reduces_roll_as_statistical_linearisation_predicts():
    # Roberts & Spanos (1990): b₂ φ̇|φ̇| under Gaussian response ≈ linear damping b₂·sqrt(8/π)·σ_φ̇,
    # i.e. ζ_eq = ζ + sqrt(8/π) b₂ σ_φ̇/(2ω_φ). Iterate ζ_eq on the linear roll spectrum of the same
    # record and compare the predicted roll variance with the simulated one (within 10 %).
    fs, duration = 2.0, 3 * 3600.0
    sea = _sea(5.0, 14.0, 90 * DEG, 10.0)
    model = NonlinearRoll(omega_roll=W_ROLL, zeta=Z_ROLL, quadratic=2.0)
    rec, truth = simulate(
        sea, analytic_rao, heading=0.0, speed=0.0, duration=duration, fs=fs, seed=12, n_frequencies=150,
        n_directions=36, nonlinear_roll=model, return_truth=True, channels=("roll", "acc_y"),
    )  # fmt: skip
    f, s_lin = signal.welch(truth.roll_linear, fs=fs, nperseg=2048)
    w = 2 * np.pi * f
    s_lin = s_lin / (2 * np.pi)
    lam = w / W_ROLL
    zeta_eq = Z_ROLL
    for _ in range(50):
        ratio = np.abs(1 - lam**2 + 2j * Z_ROLL * lam) ** 2 / np.abs(1 - lam**2 + 2j * zeta_eq * lam) ** 2
        sig_v = np.sqrt(np.trapezoid(w**2 * ratio * s_lin, w))
        zeta_eq = Z_ROLL + np.sqrt(8 / np.pi) * model.quadratic * sig_v / (2 * W_ROLL)
    predicted = np.trapezoid(ratio * s_lin, w)
    simulated = np.var(rec.channels["roll"])
    assert simulated < 0.8 * np.var(truth.roll_linear)  # the damping matters in this case
    assert simulated == pytest.approx(predicted, rel=0.10)
    # the lateral accelerometer sees the non-linear roll through g·φ (origin sensor, no sway)
    np.testing.assert_allclose(rec.channels["acc_y"], -G * truth.motions[3], atol=1e-6)
    # b₂ = 0 reproduces the linear roll
    rec0, truth0 = simulate(
        sea, analytic_rao, heading=0.0, speed=0.0, duration=600.0, fs=fs, seed=12, n_frequencies=40,
        n_directions=12, nonlinear_roll=NonlinearRoll(W_ROLL, Z_ROLL, 0.0), return_truth=True,
    )  # fmt: skip
    np.testing.assert_allclose(rec0.channels["roll"], truth0.roll_linear, atol=1e-15)


def test_steady_and_wandering_paths_agree_and_the_track_is_exact():
    # A heading "wander" of 1e-9 rad takes the time-varying path (RAOs re-evaluated and blended,
    # phases from the integrated track) and must reproduce the steady path.
    sea = _sea(3.0, 9.0, 40 * DEG, 10.0)
    kw = dict(speed=5.0, duration=400.0, fs=2.0, seed=21, n_frequencies=50, n_directions=24)
    steady = simulate(sea, analytic_rao, heading=0.3, **kw)
    moving = simulate(sea, analytic_rao, heading=lambda t: 0.3 + 1e-9 * np.sin(t / 50.0), **kw)
    for c in CHANNELS:
        scale = np.abs(steady.channels[c]).max()
        np.testing.assert_allclose(moving.channels[c], steady.channels[c], atol=1e-6 * scale)


def test_time_varying_heading_against_a_direct_sum():
    # Direct evaluation (no blocks, no blending): φ_n(t) = ω_n t + k_n(cos θ_n N(t) + sin θ_n E(t)) + ε_n
    # with the track integrated by the trapezoid rule, RAOs at every sample. With rao_update_s equal to
    # one sample the simulator must agree to rounding.
    sea = _long_crested(2.0, 8.0, 0.0, omega=np.linspace(0.3, 1.6, 30))
    fs, n = 2.0, 241
    psi = 0.2 + 0.4 * np.sin(np.arange(n) / fs / 40.0)
    speed = 4.0 + np.arange(n) / fs / 60.0
    rec, truth = simulate(
        sea, analytic_rao, heading=psi, speed=speed, duration=(n - 1) / fs, fs=fs, seed=3,
        n_frequencies=30, return_truth=True, rao_update_s=0.5, channels=("heave",),
    )  # fmt: skip
    w, th, a = truth.omega, truth.theta, truth.amplitude
    dt = 1 / fs
    vn, ve = speed * np.cos(psi), speed * np.sin(psi)
    north = np.concatenate(([0.0], np.cumsum(0.5 * (vn[1:] + vn[:-1]) * dt)))
    east = np.concatenate(([0.0], np.cumsum(0.5 * (ve[1:] + ve[:-1]) * dt)))
    k = w**2 / G
    t = np.arange(n) * dt
    phase = np.outer(t, w) + np.outer(north, k * np.cos(th)) + np.outer(east, k * np.sin(th)) + truth.phase
    basis = np.exp(1j * phase)
    np.testing.assert_allclose(truth.wave, (basis * a).sum(axis=1).real, atol=1e-9)
    beta = np.mod(np.pi - (th[None, :] - psi[:, None]), 2 * np.pi)
    h = analytic_rao(w[None, :], beta, speed[:, None])[2]
    expected = (h * a * basis).sum(axis=1).real
    np.testing.assert_allclose(rec.channels["heave"], expected, atol=1e-6 * np.abs(expected).max())


def test_heading_wander_shows_in_the_record_and_in_prep_stationarity():
    # Gillespie (1996): the OU process has the requested standard deviation; a 3° wander passes the
    # 5° stationarity limit, a 12° wander does not (brief §6 step 3).
    x = random_wander(20000.0, 2.0, 0.1, 30.0, seed=1)
    assert np.std(x) == pytest.approx(0.1, rel=0.1)
    sea = _sea(3.0, 9.0, 0.0, 10.0)
    for std_deg, steady in ((3.0, True), (12.0, False)):
        wander = random_wander(1200.0, 2.0, std_deg * DEG, 60.0, seed=4)
        rec = simulate(sea, analytic_rao, heading=1.0 + wander, speed=5.0, duration=1200.0, seed=2,
                       n_frequencies=60, n_directions=24)  # fmt: skip
        p = prepare(rec)
        assert p.accepted
        assert (p.heading_std <= 5 * DEG) == steady, p.heading_std / DEG


def test_noise_reproducibility_and_record_form():
    sea = _sea()
    kw = dict(heading=0.5, speed=4.0, duration=600.0, fs=2.0, n_frequencies=40, n_directions=12)
    a, ta = simulate(
        sea, analytic_rao, seed=5, noise_std={"roll": 0.01, "heave": 0.1}, return_truth=True, **kw
    )
    b = simulate(sea, analytic_rao, seed=5, noise_std={"roll": 0.01, "heave": 0.1}, **kw)
    c = simulate(sea, analytic_rao, seed=6, **kw)
    assert isinstance(a, Record)
    assert a.t.size == 1201 and a.t[1] - a.t[0] == pytest.approx(0.5)
    np.testing.assert_array_equal(a.channels["roll"], b.channels["roll"])
    assert not np.allclose(a.channels["heave"], c.channels["heave"])
    # white noise of the requested standard deviation (χ² scatter of 1201 samples: ~4 %)
    assert np.std(a.channels["roll"] - ta.clean["roll"]) == pytest.approx(0.01, rel=0.15)
    assert np.std(a.channels["heave"] - ta.clean["heave"]) == pytest.approx(0.1, rel=0.15)
    np.testing.assert_array_equal(a.channels["pitch"], ta.clean["pitch"])
    assert np.all((a.heading >= 0) & (a.heading < 2 * np.pi))


def test_full_size_record():
    # Not a timing test (DEVELOPERS.md: benchmarks print figures): 20 min at 2 Hz with 300 × 72
    # components yields the full record in SENSOR channels.
    rec = simulate(_sea(), analytic_rao, heading=0.0, speed=6.0, duration=1200.0, seed=1)
    assert rec.t.size == 2401
    assert set(rec.channels) == set(CHANNELS)
    assert all(np.isfinite(v).all() for v in rec.channels.values())


def test_errors_are_clear():
    sea = _sea()
    kw = dict(heading=0.0, speed=1.0, duration=10.0)
    with pytest.raises(ValueError, match="duration must be > 0 s"):
        simulate(sea, analytic_rao, heading=0.0, speed=1.0, duration=0.0)
    with pytest.raises(ValueError, match="unknown channel"):
        simulate(sea, analytic_rao, channels=("yaw",), **kw)
    with pytest.raises(ValueError, match="noise_std given for 'acc_x'"):
        simulate(sea, analytic_rao, channels=("roll",), noise_std={"acc_x": 0.1}, **kw)
    with pytest.raises(ValueError, match=r"must return shape \(6, "):
        simulate(sea, lambda w, b, u: np.zeros((3, np.size(w))), **kw)
    with pytest.raises(ValueError, match="heading must be a scalar, a function of t or an array of 21"):
        simulate(sea, analytic_rao, heading=np.zeros(5), speed=1.0, duration=10.0)
    with pytest.raises(ValueError, match="speed must be >= 0"):
        simulate(sea, analytic_rao, heading=0.0, speed=-1.0, duration=10.0)
    with pytest.raises(ValueError, match="sensor_xyz must be three numbers"):
        simulate(sea, analytic_rao, sensor_xyz=(1.0, 2.0), **kw)
    with pytest.raises(TypeError, match="DirectionalSpectrum or a tuple"):
        simulate(object(), analytic_rao, **kw)
    with pytest.raises(ValueError, match="quadratic must be >= 0"):
        NonlinearRoll(0.4, 0.05, -1.0)
    with pytest.raises(ValueError, match="time_scale > 0 s"):
        random_wander(10.0, 2.0, 0.1, 0.0)
