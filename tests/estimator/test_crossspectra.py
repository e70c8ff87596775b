"""Tests for estimator.crossspectra: Welch cross-spectral matrix, phase convention, variances, gate.

Sources of the expected values are named beside each check: scipy.signal.welch as the reference
implementation of the one-sided density (scipy.signal.welch documentation), analytical results for pure tones
(a tone of amplitude A carries
variance A²/2; a known phase lag), the Bendat & Piersol (2010) variance formulas checked by Monte
Carlo, Welch (1967) for non-overlapping segments, the Butterworth magnitude response, and the
sampling-floor table derived from var(m̂0)/m0² ≈ ∫G_e² df/(T·m0²) (Bendat & Piersol 2010 ch. 9; not
published numbers).
"""

import numpy as np
import pytest
from scipy import signal

from estimator.crossspectra import (
    DEFAULT_NOISE_STD,
    CrossSpectra,
    cross_spectral_matrix,
    effective_bandwidth,
    hs_sampling_error,
    welch_degrees,
    white_noise_psd,
)
from estimator.prep import PrepSettings, Record, prepare

FS = 2.0


def _window(channels, fs=FS, settings=None):
    n = next(iter(channels.values())).size
    t = np.arange(n) / fs
    rec = Record(t=t, channels=channels, heading=np.full(n, 1.0), speed=np.full(n, 5.0))
    p = prepare(rec, settings or PrepSettings(fs=fs, min_duration_s=100.0))
    assert p.accepted, p.reasons
    return p


def test_auto_spectrum_is_scipy_welch_per_rad_s_and_integrates_to_the_variance():
    # Oracle: scipy.signal.welch (Hann, 50 % overlap, one-sided density per Hz); per rad/s is
    # Φ(ω) = Φ(f)/2π (scipy.signal.welch documentation), and ∫Φ dω equals the variance.
    rng = np.random.default_rng(3)
    x = 0.05 * rng.standard_normal(7200)
    p = _window({"roll": x})
    cs = cross_spectral_matrix(p, nperseg=256, domega=None, omega_band=(0.0, np.pi * FS))
    f, pxx = signal.welch(p.channels["roll"], fs=FS, window="hann", nperseg=256, noverlap=128)
    np.testing.assert_allclose(cs.omega_e, 2 * np.pi * f, rtol=1e-12)
    np.testing.assert_allclose(cs.auto("roll"), pxx / (2 * np.pi), rtol=1e-10)
    # the Hann-weighted average and the plain sample variance differ randomly by ~1/sqrt(n/2)
    variance = np.sum(cs.auto("roll")) * cs.domega
    assert variance == pytest.approx(np.var(p.channels["roll"]), rel=0.03)


def test_tone_of_amplitude_a_gives_a_squared_over_two_in_the_band():
    # Analytical: a cos(ωt) has variance A²/2; Hann leakage stays within a few bins of the tone.
    t = np.arange(3600) / FS
    a, w = 0.08, 0.9
    p = _window({"roll": a * np.cos(w * t + 0.3)})
    cs = cross_spectral_matrix(p)
    band = np.abs(cs.omega_e - w) < 0.3
    assert np.sum(cs.auto("roll")[band]) * cs.domega == pytest.approx(a**2 / 2, rel=0.005)
    assert cs.omega_e[np.argmax(cs.auto("roll"))] == pytest.approx(w, abs=cs.domega)


@pytest.mark.parametrize("lag", [0.7, -1.2, 2.5])
def test_quad_spectrum_sign_for_a_known_phase_lag(lag):
    # Analytical: x_i = cos ωt, x_j = cos(ωt − φ) are Re[H e^{iωt}] with H_i = 1, H_j = e^{−iφ};
    # Φ_ij = H_i H_j* = e^{+iφ}, so Im Φ_ij = sin φ > 0 when j lags i by 0 < φ < π.
    t = np.arange(3600) / FS
    w = 0.8
    p = _window({"roll": 0.1 * np.cos(w * t), "pitch": 0.05 * np.cos(w * t - lag)})
    cs = cross_spectral_matrix(p)
    m = np.argmax(cs.auto("roll"))
    phi_rp = cs.cross("roll", "pitch")[m]
    assert np.angle(phi_rp) == pytest.approx(lag, abs=1e-3)
    assert np.sign(cs.quad[m, cs.index("roll"), cs.index("pitch")]) == np.sign(np.sin(lag))
    # Hermitian: Φ_ji = conj Φ_ij
    assert cs.cross("pitch", "roll")[m] == pytest.approx(np.conj(phi_rp))


def test_transfer_function_from_the_cross_spectrum_uses_the_phase_lead_convention():
    # Analytical: x2 = Re[G e^{iωt}] for x1 = Re[e^{iωt}] ⇒ Φ_21/Φ_11 = G (DEVELOPERS.md
    # convention x = Re[H a e^{iωt}]; scipy H1 = csd/welch is the e^{+iωt} convention,
    # scipy.signal.welch documentation).
    t = np.arange(3600) / FS
    w, g = 0.6, 0.7 * np.exp(0.9j)
    x1 = 0.1 * np.cos(w * t)
    x2 = 0.1 * np.real(g * np.exp(1j * w * t))
    p = _window({"roll": x1, "pitch": x2})
    cs = cross_spectral_matrix(p)
    m = np.argmax(cs.auto("roll"))
    h = cs.cross("pitch", "roll")[m] / cs.auto("roll")[m]
    assert h == pytest.approx(g, abs=2e-3)


def test_welch_degrees_without_overlap_equals_the_segment_count():
    # Welch (1967): non-overlapping segments are independent, n_d = K exactly.
    k, nd = welch_degrees(4096, 512, 0)
    assert k == 8 and nd == pytest.approx(8.0, rel=1e-12)
    # 50 % Hann overlap (analytical): w_j = sin²(πj/N), w_{j+N/2} = cos²(πj/N) over the N/2
    # overlapping samples, so Σ w_j w_{j+N/2} = N/16 and Σ w_j² = 3N/8: the overlap correlation is
    # 1/6 (Harris 1978, Proc. IEEE 66(1), table 1: 16.7 %), ρ(1) = 1/36 and
    # n_d = K/(1 + 2(1 − 1/K)/36).
    k, nd = welch_degrees(4608, 512, 256)
    assert k == 17
    assert nd == pytest.approx(17 / (1 + 2 * (1 - 1 / 17) / 36), rel=1e-9)


def test_bendat_piersol_variances_match_monte_carlo():
    # Bendat & Piersol (2010) random-error formulas for co/quad spectra, n_d from Welch (1967) and
    # the Hann adjacent-bin correlation; oracle: the empirical scatter over 300 independent records.
    rng = np.random.default_rng(11)
    n, reps = 1200, 300
    co, qu, vco, vqu = [], [], [], []
    b = signal.firwin(15, 0.4)
    for _ in range(reps):
        e = rng.standard_normal(n + 40)
        x1 = signal.lfilter(b, 1.0, e)[40:] * 0.05
        x2 = 0.7 * np.roll(x1, 2) + 0.03 * signal.lfilter(b, 1.0, rng.standard_normal(n + 40))[40:]
        p = _window(
            {"roll": x1, "pitch": x2}, settings=PrepSettings(fs=FS, min_duration_s=100.0, spike_k=50.0)
        )
        cs = cross_spectral_matrix(
            p, nperseg=128, domega=0.15, omega_band=(0.3, 2.5), noise_std={"roll": 0, "pitch": 0}
        )
        c = cs.phi[:, 0, 1]
        co.append(c.real)
        qu.append(c.imag)
        vco.append(cs.var_co[:, 0, 1])
        vqu.append(cs.var_quad[:, 0, 1])
    co, qu, vco, vqu = map(np.asarray, (co, qu, vco, vqu))
    ratio_co = np.var(co, axis=0) / vco.mean(axis=0)
    ratio_qu = np.var(qu, axis=0) / vqu.mean(axis=0)
    # each band ratio has a sampling scatter of about sqrt(2/300) ≈ 8 %; the band mean far less
    assert np.mean(ratio_co) == pytest.approx(1.0, abs=0.12)
    assert np.mean(ratio_qu) == pytest.approx(1.0, abs=0.12)
    assert np.all((ratio_co > 0.6) & (ratio_co < 1.5))


def test_highpass_gain_is_divided_out_and_low_bands_are_gated():
    # Butterworth: |H(f_c)|² = 1/2 (analytical); forward-backward filtering applies |H|² to the
    # amplitude. cross_spectral_matrix divides it out where the power gain is >= 0.5.
    t = np.arange(4800) / FS
    w = 0.25  # rad/s, amplitude gain of the 0.02-Hz order-2 high-pass ≈ 0.947 here
    heave = 1.0 * np.cos(w * t)
    p = _window({"heave": heave, "roll": 0.05 * np.cos(w * t)})
    assert p.highpass_hz["heave"] == pytest.approx(0.02)
    raw_var = np.var(p.channels["heave"])
    assert raw_var == pytest.approx(0.5 * (1 / (1 + (2 * np.pi * 0.02 / w) ** 4)) ** 2, rel=0.01)
    cs = cross_spectral_matrix(p, noise_std={"heave": 1e-4, "roll": 1e-5})
    band = np.abs(cs.omega_e - w) < 0.12
    assert np.sum(cs.auto("heave")[band]) * cs.domega == pytest.approx(0.5, rel=0.01)
    # below 1.25·ω_c = 0.157 rad/s the heave bands are gated, roll (no high-pass) is not
    low = cs.omega_e < 0.14
    assert low.any()
    assert not cs.gate[low, cs.index("heave")].any()


def test_snr_gate_flags_bands_below_the_noise_floor():
    # Definition (project choice): a band passes when Φ_ii ≥ snr·noise.
    rng = np.random.default_rng(5)
    t = np.arange(3600) / FS
    x = 0.05 * np.cos(0.7 * t) + 1e-4 * rng.standard_normal(t.size)
    p = _window({"roll": x})
    floor = white_noise_psd(1e-4, FS)
    assert floor == pytest.approx(1e-8 / (np.pi * FS))
    cs = cross_spectral_matrix(p, noise_psd={"roll": floor}, snr=3.0)
    m = np.argmax(cs.auto("roll"))
    assert cs.gate[m, 0]
    far = np.abs(cs.omega_e - 0.7) > 1.0
    assert far.any() and not cs.gate[far, 0].any()
    assert cs.pair_gate().shape == (cs.omega_e.size, 1, 1)
    assert cs.gated_energy_fraction()[0] > 0.99


def test_defaults_follow_the_design_band_and_resolution():
    # Brief §6 step 4: 256-s segments, band [0.1, 3.5] rad/s, Δω_e ≈ 0.03-0.05 rad/s.
    rng = np.random.default_rng(1)
    p = _window({"roll": 0.02 * rng.standard_normal(2400)})
    cs = cross_spectral_matrix(p)
    assert isinstance(cs, CrossSpectra)
    assert cs.nperseg == 512
    assert 0.03 <= cs.domega <= 0.055
    assert cs.omega_e.min() >= 0.1 and cs.omega_e.max() <= 3.5
    assert cs.phi.shape == (cs.omega_e.size, 1, 1)
    assert set(DEFAULT_NOISE_STD) >= {"roll", "pitch", "heave", "acc_x", "acc_y", "acc_z"}
    with pytest.raises(ValueError):
        cs.phi[0, 0, 0] = 1.0


def test_errors_are_clear():
    rng = np.random.default_rng(2)
    p = _window({"roll": 0.02 * rng.standard_normal(1200)})
    with pytest.raises(ValueError, match="channel 'heave' is not usable"):
        cross_spectral_matrix(p, channels=["heave"])
    with pytest.raises(ValueError, match=r"nperseg must be in \[8, 1200\]"):
        cross_spectral_matrix(p, nperseg=5000)
    with pytest.raises(ValueError, match="overlap must be in"):
        cross_spectral_matrix(p, overlap=1.0)
    with pytest.raises(ValueError, match="no noise floor for channel 'roll'"):
        cross_spectral_matrix(p, noise_std={"pitch": 0.1})
    with pytest.raises(KeyError, match="channel 'pitch' not in"):
        cross_spectral_matrix(p).auto("pitch")
    t = np.arange(100) / FS
    rec = Record(t=t, channels={"roll": np.zeros(100) * np.nan}, heading=np.ones(100), speed=np.ones(100))
    bad = prepare(rec, PrepSettings(min_duration_s=10))
    with pytest.raises(ValueError, match="window was rejected by prepare"):
        cross_spectral_matrix(bad)
    with pytest.raises(ValueError, match="need duration > 0 s and b_eff > 0 Hz"):
        hs_sampling_error(0.0, 0.1)
    with pytest.raises(ValueError, match="no energy"):
        effective_bandwidth([0.1, 0.2], [0.0, 0.0])


def test_effective_bandwidth_of_a_rectangular_spectrum_is_its_width():
    # Analytical: for S constant over a band of width B Hz, m0²/∫S_f² df = B.
    w = np.linspace(0.5, 0.5 + 2 * np.pi * 0.1, 2001)
    assert effective_bandwidth(w, np.full(w.size, 3.0)) == pytest.approx(0.1, rel=1e-9)


def test_sampling_error_reproduces_the_derived_table_for_jonswap():
    # derived from var(m̂0) ≈ ∫G_e² df / T (Bendat & Piersol 2010 ch. 9), not published numbers: JONSWAP γ =
    # 3.3, Tp = 10 s at zero speed:
    # B_eff = 0.066 Hz and σ(Hs)/Hs = 5.6 % for 20 min (8.0 % for 10 min).
    from estimator.spectra import jonswap

    w = np.linspace(0.05, 6.0, 6000)
    b = effective_bandwidth(w, jonswap(w, 4.0, 10.0, 3.3))
    assert b == pytest.approx(0.066, abs=0.002)
    assert hs_sampling_error(1200.0, b) == pytest.approx(0.056, abs=0.002)
    assert hs_sampling_error(600.0, b) == pytest.approx(0.080, abs=0.003)


def test_cross_spectra_of_a_simulated_record_match_the_linear_prediction():
    # End to end (simulate → prepare → cross_spectral_matrix) against the closed form for a
    # long-crested sea in bow seas (one root per encounter frequency, Lewis 1989 PNA vol. III):
    # Φ_ij(ω_e) = T_i T_j* S(ω)/(dω_e/dω), ω_e = ω − ω²U cos β/g, T from
    # estimator.kinematics.sensor_channels. The normalised errors (Φ̂ − Φ)/σ with the
    # Bendat-Piersol σ must look like unit-variance noise.
    from estimator.constants import G
    from estimator.hull import estimate_rao_table
    from estimator.kinematics import sensor_channels
    from estimator.simulate import simulate
    from estimator.spectra import DirectionalSpectrum, pierson_moskowitz

    table = estimate_rao_table(
        150.0, 25.0, 9.0, 0.7, 1.4, speeds=np.array([0.0, 6.0]), headings=np.arange(0, 181, 15) * np.pi / 180,
        omegas=np.linspace(0.2, 2.0, 37),
    )  # fmt: skip
    omega = np.linspace(0.25, 2.0, 200)
    s_abs = pierson_moskowitz(omega, 3.0, 9.0)
    beta, psi, speed = 150 * np.pi / 180, 0.0, 5.0
    sea = DirectionalSpectrum(omega, np.array([np.pi - beta + psi]), (s_abs / (2 * np.pi))[:, None])
    xyz = (-50.0, 6.0, 14.0)
    names = ("roll", "pitch", "heave", "acc_y")
    rec = simulate(
        sea, table, heading=psi, speed=speed, duration=3600.0, seed=31, sensor_xyz=xyz, n_frequencies=600,
        channels=names,
    )  # fmt: skip
    p = prepare(rec)
    cs = cross_spectral_matrix(p, noise_std=dict.fromkeys(names, 1e-6))
    # closed-form prediction at each raw Welch frequency of the band, averaged like the estimate
    tau = -speed * np.cos(beta) / G  # > 0 in bow seas: ω_e = ω + τω²
    d_raw = 2 * np.pi * FS / cs.nperseg
    n_band = int(round(cs.domega / d_raw))
    i0 = int(np.ceil(0.1 / d_raw - 1e-9))
    we_raw = (i0 + np.arange(cs.omega_e.size * n_band)) * d_raw
    np.testing.assert_allclose(we_raw.reshape(-1, n_band).mean(axis=1), cs.omega_e, rtol=1e-12)
    w = (-1 + np.sqrt(1 + 4 * tau * we_raw)) / (2 * tau)
    s_w = np.interp(w, omega, s_abs, left=0.0, right=0.0) / (1 + 2 * tau * w)
    tf = sensor_channels(table(w, beta, speed), xyz, we_raw, names)  # (C, F)
    phi = np.einsum("if,jf->fij", tf, np.conj(tf)) * s_w[:, None, None]
    phi = phi.reshape(cs.omega_e.size, n_band, len(names), len(names)).mean(axis=1)
    auto = np.einsum("mii->mi", phi).real
    strong = auto > 0.05 * auto.max(axis=0)
    z = []
    for i in range(len(names)):
        for j in range(i, len(names)):
            sel = strong[:, i] & strong[:, j]
            z.append((cs.co[sel, i, j] - phi[sel, i, j].real) / np.sqrt(cs.var_co[sel, i, j]))
            if i != j:
                z.append((cs.quad[sel, i, j] - phi[sel, i, j].imag) / np.sqrt(cs.var_quad[sel, i, j]))
    z = np.concatenate(z)
    assert z.size > 100
    assert abs(np.mean(z)) < 0.3
    assert 0.6 < np.std(z) < 1.5
