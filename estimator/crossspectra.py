"""Cross-spectral matrix of the measured motion channels, its sampling variances and a noise gate.

Welch's method (Hann window, 50 % overlap by default) through :func:`scipy.signal.csd`, one-sided,
converted from per Hz to per rad/s (Φ(ω) = Φ(f)/(2π), ω = 2πf), band-averaged to a coarser
encounter-frequency resolution inside the analysis band [0.1, 3.5] rad/s.

Phase convention (DEVELOPERS.md): a channel is x_i(t) = Re[H_i a e^{iω_e t}], so the estimate is
arranged as Φ_ij = E[X_i X_j*] ≈ H_i H_j* S. scipy's ``csd(x, y)`` returns conj(X)·Y (scipy
documentation [4], and measured here with scipy 1.17.1), hence Φ_ij = conj(csd(x_i, x_j)).
With this arrangement, if channel j lags channel i by φ (x_i = cos ωt, x_j = cos(ωt − φ)) then
Φ_ij ∝ e^{+iφ}: Im Φ_ij > 0 for 0 < φ < π. The co-spectrum is Re Φ_ij and the quad-spectrum, as
stored here, is Im Φ_ij (note that Bendat & Piersol write G_xy = C_xy − iQ_xy with the opposite
arrangement; only the squares enter the variances).

Sampling variances (Bendat & Piersol 2010, §9.1 and §11.6, from memory):
var(Ĉ_ij) ≈ (Φ_ii Φ_jj + C_ij² − Q_ij²)/(2 n_d), var(Q̂_ij) ≈ (Φ_ii Φ_jj − C_ij² + Q_ij²)/(2 n_d),
with n_d the number of independent averages, computed here from the Welch segment count corrected
for the overlap of the Hann segments (Welch 1967) and for the correlation of adjacent Hann bins in
the band average (Percival & Walden 1993, §6.7).

Signal-to-noise gate: a band passes for channel i when Φ_ii ≥ snr·N_i, N_i the one-sided noise
density of the sensor (white noise of standard deviation σ sampled at f_s: N = σ²/(π f_s) per
rad/s); the default 3× is a project choice. Bands where the zero-phase high-pass of
:func:`estimator.prep.prepare` has removed more than half the power are gated too; elsewhere its
known gain is divided out.

References
----------
.. [1] Welch, P. D. (1967). The use of fast Fourier transform for the estimation of power
   spectra: a method based on time averaging over short, modified periodograms. *IEEE Trans.
   Audio Electroacoust.* 15(2), 70-73 (overlapped segments, variance reduction).
.. [2] Bendat, J. S. and Piersol, A. G. (2010). *Random Data: Analysis and Measurement
   Procedures*, 4th ed., ch. 9 and 11 (co- and quad-spectra, their random errors) - from
   memory.
.. [3] Percival, D. B. and Walden, A. T. (1993). *Spectral Analysis for Physical Applications*, §6.6-6.7
   (equivalent degrees of freedom of smoothed and
   segment-averaged estimates) - from memory.
.. [4] Virtanen, P. et al. (2020). SciPy 1.0. *Nature Methods* 17, 261-272; ``scipy.signal.csd``
   and ``welch`` documentation (one-sided density scaling, conj(X)·Y).
.. [5] Nielsen, U.D. (2017). A concise account of techniques available for shipboard sea state
   estimation (Welch cross-spectra as the data of the wave buoy analogy); the sampling floor
   0.5/sqrt(T·B_eff) is derived from Bendat & Piersol [2] §8.2, not a published number; 256-s
   segments, the [0.1, 3.5] rad/s band and the 3× SNR gate are project choices.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from scipy import signal

from estimator.prep import PreparedWindow, highpass_gain

__all__ = [
    "DEFAULT_NOISE_STD",
    "CrossSpectra",
    "cross_spectral_matrix",
    "effective_bandwidth",
    "hs_sampling_error",
    "welch_degrees",
    "white_noise_psd",
]

TWO_PI = 2.0 * np.pi

DEFAULT_NOISE_STD = MappingProxyType(
    {
        "roll": np.deg2rad(0.02),
        "pitch": np.deg2rad(0.02),
        "heave": 0.05,
        "acc_x": 0.01,
        "acc_y": 0.01,
        "acc_z": 0.01,
    }
)
"""Default white-noise standard deviation of each channel [rad, m, m/s²] for the SNR gate: the
order of magnitude of the accuracy stated for marine motion reference units (0.02° roll/pitch,
5 cm heave, 0.01 m/s² acceleration) - common practice; configure from the actual sensor's data
sheet."""


def white_noise_psd(std: float, fs: float) -> float:
    """One-sided density per rad/s of white noise of standard deviation ``std`` sampled at ``fs``.

    Parameters
    ----------
    std : float
        Noise standard deviation. [unit]
    fs : float
        Sample rate. [Hz]

    Returns
    -------
    float
        σ²/(π f_s): the variance spread evenly over 0..π f_s rad/s. [unit²·s/rad]
    """
    if not np.isfinite(std) or std < 0 or not np.isfinite(fs) or fs <= 0:
        raise ValueError(f"white_noise_psd: need std >= 0 and fs > 0 Hz, got std={std!r}, fs={fs!r}")
    return float(std) ** 2 / (np.pi * float(fs))


def welch_degrees(n: int, nperseg: int, noverlap: int, n_band: int = 1) -> tuple[int, float]:
    """Number of Welch segments and equivalent number of independent averages n_d.

    Parameters
    ----------
    n : int
        Record length in samples. [-]
    nperseg, noverlap : int
        Segment length and overlap in samples (Hann window). [-]
    n_band : int
        Number of adjacent frequency bins averaged together. [-]

    Returns
    -------
    n_segments : int
        K = 1 + (n − nperseg) // (nperseg − noverlap). [-]
    n_d : float
        Equivalent independent averages: K divided by Welch's overlap factor
        1 + 2 Σ_l (1 − l/K) ρ(l), ρ(l) = [Σ w_j w_{j+lS}]²/[Σ w_j²]², times n_band divided by
        the adjacent-bin factor 1 + 2 Σ_m (1 − m/n_band) c(m), c(m) = |Σ w_j² e^{−2πimj/N}|²/(Σ w_j²)².
        The variance of an auto-spectrum estimate is Φ²/n_d; ν = 2 n_d degrees of freedom. [-]

    References
    ----------
    .. [1] Welch (1967), eq. for the variance of overlapped averages.
    .. [2] Percival and Walden (1993), §6.7 - from memory.
    """
    if nperseg < 2 or not 0 <= noverlap < nperseg or n < nperseg or n_band < 1:
        raise ValueError(
            f"welch_degrees: need 2 <= nperseg <= n, 0 <= noverlap < nperseg, n_band >= 1; got "
            f"n={n}, nperseg={nperseg}, noverlap={noverlap}, n_band={n_band}"
        )
    step = nperseg - noverlap
    k = 1 + (n - nperseg) // step
    w = signal.get_window("hann", nperseg)
    w2 = np.sum(w * w)
    factor = 1.0
    for lag in range(1, k):
        shift = lag * step
        if shift >= nperseg:
            break
        rho = (np.sum(w[:-shift] * w[shift:]) / w2) ** 2
        factor += 2.0 * (1.0 - lag / k) * rho
    n_d = k / factor
    if n_band > 1:
        j = np.arange(nperseg)
        bfac = 1.0
        for m in range(1, n_band):
            c = abs(np.sum(w * w * np.exp(-2j * np.pi * m * j / nperseg))) ** 2 / w2**2
            bfac += 2.0 * (1.0 - m / n_band) * c
        n_d *= n_band / bfac
    return int(k), float(n_d)


@dataclass(frozen=True, eq=False)
class CrossSpectra:
    """Band-averaged cross-spectral matrix of the usable channels (immutable).

    Attributes
    ----------
    omega_e : numpy.ndarray, shape (M,)
        Band centres, encounter frequency (>= 0, folded). [rad/s]
    channels : tuple of str
        Channel order of the matrix axes.
    phi : numpy.ndarray, complex, shape (M, C, C)
        Φ_ij = E[X_i X_j*], one-sided per rad/s, Hermitian in (i, j). [unit_i·unit_j·s/rad]
    var_co, var_quad : numpy.ndarray, shape (M, C, C)
        Sampling variances of Re Φ_ij and Im Φ_ij (Bendat & Piersol). [(unit_i·unit_j·s/rad)²]
    n_d : float
        Equivalent number of independent averages per band. [-]
    n_segments : int
        Number of Welch segments. [-]
    gate : numpy.ndarray, bool, shape (M, C)
        True where channel i is above its noise gate (and not suppressed by the high-pass).
    noise_psd : numpy.ndarray, shape (C,)
        Noise floor used for the gate, one-sided per rad/s. [unit²·s/rad]
    fs : float
        Sample rate. [Hz]
    nperseg : int
        Welch segment length. [samples]
    domega : float
        Width of each band. [rad/s]
    duration : float
        Record length analysed. [s]
    """

    omega_e: np.ndarray
    channels: tuple[str, ...]
    phi: np.ndarray
    var_co: np.ndarray
    var_quad: np.ndarray
    n_d: float
    n_segments: int
    gate: np.ndarray
    noise_psd: np.ndarray
    fs: float
    nperseg: int
    domega: float
    duration: float

    @property
    def co(self) -> np.ndarray:
        """Co-spectra Re Φ_ij, shape (M, C, C)."""
        return self.phi.real

    @property
    def quad(self) -> np.ndarray:
        """Quad-spectra Im Φ_ij, shape (M, C, C) (positive when channel j lags channel i)."""
        return self.phi.imag

    def index(self, name: str) -> int:
        """Position of a channel in :attr:`channels`."""
        try:
            return self.channels.index(name)
        except ValueError:
            raise KeyError(
                f"channel {name!r} not in the cross-spectra; have {', '.join(self.channels)}"
            ) from None

    def auto(self, name: str) -> np.ndarray:
        """Auto-spectrum Φ_ii of one channel, shape (M,). [unit²·s/rad]"""
        i = self.index(name)
        return self.phi[:, i, i].real

    def cross(self, a: str, b: str) -> np.ndarray:
        """Φ_ab, shape (M,), complex."""
        return self.phi[:, self.index(a), self.index(b)]

    def pair_gate(self) -> np.ndarray:
        """Gate of each matrix element, gate_i & gate_j, shape (M, C, C)."""
        return self.gate[:, :, None] & self.gate[:, None, :]

    def gated_energy_fraction(self) -> np.ndarray:
        """Share of each channel's in-band variance that lies in bands passing its gate, shape (C,).

        (Brief §6 quality indicator Q3.) NaN for a channel with no in-band energy. [-]
        """
        diag = np.einsum("mii->mi", self.phi).real
        total = diag.sum(axis=0)
        passing = np.where(self.gate, diag, 0.0).sum(axis=0)
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(total > 0, passing / np.where(total > 0, total, 1.0), np.nan)


def cross_spectral_matrix(
    prepared: PreparedWindow,
    *,
    channels=None,
    nperseg: int | None = None,
    overlap: float = 0.5,
    domega: float | None = 0.05,
    omega_band: tuple[float, float] = (0.1, 3.5),
    noise_std: Mapping[str, float] | None = None,
    noise_psd: Mapping[str, float] | None = None,
    snr: float = 3.0,
    min_highpass_gain: float = 0.5,
) -> CrossSpectra:
    """All auto- and cross-spectra of the usable channels of a prepared window.

    Parameters
    ----------
    prepared : PreparedWindow
        Output of :func:`estimator.prep.prepare` (must be accepted).
    channels : sequence of str, optional
        Channels to use (default: all usable ones, in their order).
    nperseg : int, optional
        Welch segment length [samples]; default 256 s of data (project choice), reduced to half
        the record if the record is shorter than two such segments.
    overlap : float
        Segment overlap fraction in [0, 1). [-]
    domega : float or None
        Target band width for band-averaging; None keeps the raw Welch resolution. [rad/s]
    omega_band : (float, float)
        Analysis band of encounter frequency. [rad/s]
    noise_std : mapping of str to float, optional
        White-noise standard deviation per channel (default :data:`DEFAULT_NOISE_STD`).
        [channel unit]
    noise_psd : mapping of str to float, optional
        Noise floor per channel given directly as a one-sided density per rad/s; overrides
        ``noise_std`` for those channels. [unit²·s/rad]
    snr : float
        Gate factor: a band passes when Φ_ii ≥ snr·noise. [-]
    min_highpass_gain : float
        Bands where the high-pass power gain is below this are gated. [-]

    Returns
    -------
    CrossSpectra

    Raises
    ------
    ValueError
        Window not accepted, unknown/unusable channel, bad segment length, overlap, band or noise.

    References
    ----------
    See the module docstring ([1]-[5]).
    """
    if not isinstance(prepared, PreparedWindow):
        raise TypeError(
            f"cross_spectral_matrix: prepared must be a PreparedWindow, got {type(prepared).__name__}"
        )
    if not prepared.accepted:
        raise ValueError(
            "cross_spectral_matrix: the window was rejected by prepare(): " + "; ".join(prepared.reasons)
        )
    names = tuple(prepared.usable) if channels is None else tuple(channels)
    if not names:
        raise ValueError("cross_spectral_matrix: no usable channel in the window")
    for nm in names:
        if nm not in prepared.channels:
            raise ValueError(
                f"cross_spectral_matrix: channel {nm!r} is not usable in this window; usable: "
                f"{', '.join(prepared.usable) or 'none'}"
            )
    fs = float(prepared.fs)
    x = np.stack([np.asarray(prepared.channels[nm], dtype=float) for nm in names])
    n = x.shape[1]
    if nperseg is None:
        nperseg = int(round(256.0 * fs))
        if n < 2 * nperseg:
            nperseg = max(2, n // 2)
    nperseg = int(nperseg)
    if nperseg < 8 or nperseg > n:
        raise ValueError(
            f"cross_spectral_matrix: nperseg must be in [8, {n}] samples (record length), got {nperseg}"
        )
    if not 0 <= overlap < 1:
        raise ValueError(f"cross_spectral_matrix: overlap must be in [0, 1), got {overlap!r}")
    lo, hi = (float(v) for v in omega_band)
    if not 0 <= lo < hi:
        raise ValueError(
            f"cross_spectral_matrix: omega_band must satisfy 0 <= low < high rad/s, got {omega_band!r}"
        )
    if not np.isfinite(snr) or snr < 0:
        raise ValueError(f"cross_spectral_matrix: snr must be >= 0, got {snr!r}")
    noverlap = int(round(overlap * nperseg))
    if noverlap >= nperseg:
        noverlap = nperseg - 1

    # Welch estimate of all pairs at once: csd(x_i, x_j) = conj(X_i)·X_j per Hz
    f, pxy = signal.csd(
        x[:, None, :],
        x[None, :, :],
        fs=fs,
        window="hann",
        nperseg=nperseg,
        noverlap=noverlap,
        detrend="constant",
        scaling="density",
        axis=-1,
    )
    omega = TWO_PI * f
    phi = np.conj(np.moveaxis(pxy, -1, 0)) / TWO_PI  # (F, C, C): Φ_ij = E[X_i X_j*] per rad/s

    # undo the known zero-phase high-pass gain; gate where it removed too much
    amp_gain = np.stack(
        [highpass_gain(omega, prepared.highpass_hz.get(nm, 0.0), prepared.highpass_order) for nm in names],
        axis=1,
    )  # (F, C) zero-phase amplitude gain per channel
    hp_ok = amp_gain**2 >= min_highpass_gain
    corr = np.where(hp_ok, amp_gain, 1.0)
    phi = phi / (corr[:, :, None] * corr[:, None, :])

    # band selection and averaging
    in_band = np.flatnonzero((omega >= lo) & (omega <= hi))
    if in_band.size == 0:
        raise ValueError(
            f"cross_spectral_matrix: no Welch frequency in the band {omega_band} rad/s "
            f"(resolution {omega[1]:.4f} rad/s)"
        )
    d_raw = float(omega[1] - omega[0])
    n_band = 1 if domega is None else max(1, int(round(float(domega) / d_raw)))
    n_groups = in_band.size // n_band
    if n_groups == 0:
        raise ValueError(
            f"cross_spectral_matrix: band {omega_band} rad/s holds {in_band.size} Welch bins, fewer than "
            f"the {n_band} needed for one band of width {domega} rad/s"
        )
    idx = in_band[: n_groups * n_band].reshape(n_groups, n_band)
    omega_e = omega[idx].mean(axis=1)
    phi_b = phi[idx].mean(axis=1)
    hp_b = hp_ok[idx].all(axis=1)
    # exact Hermitian symmetry and real diagonal
    phi_b = 0.5 * (phi_b + np.conj(np.swapaxes(phi_b, 1, 2)))

    n_seg, n_d = welch_degrees(n, nperseg, noverlap, n_band)
    auto = np.einsum("mii->mi", phi_b).real
    pp = auto[:, :, None] * auto[:, None, :]
    c2, q2 = phi_b.real**2, phi_b.imag**2
    var_co = (pp + c2 - q2) / (2.0 * n_d)
    var_quad = (pp - c2 + q2) / (2.0 * n_d)

    # noise gate
    noise_std = dict(DEFAULT_NOISE_STD if noise_std is None else noise_std)
    noise_psd = dict(noise_psd or {})
    floors = []
    for nm in names:
        if nm in noise_psd:
            v = float(noise_psd[nm])
            if not np.isfinite(v) or v < 0:
                raise ValueError(f"cross_spectral_matrix: noise_psd[{nm!r}] must be >= 0, got {v!r}")
            floors.append(v)
        elif nm in noise_std:
            floors.append(white_noise_psd(float(noise_std[nm]), fs))
        else:
            raise ValueError(
                f"cross_spectral_matrix: no noise floor for channel {nm!r}; "
                "give noise_std or noise_psd for it"
            )
    floors = np.asarray(floors)
    gate = (auto >= snr * floors[None, :]) & hp_b

    for arr in (omega_e, phi_b, var_co, var_quad, gate, floors):
        arr.setflags(write=False)
    return CrossSpectra(
        omega_e=omega_e,
        channels=names,
        phi=phi_b,
        var_co=var_co,
        var_quad=var_quad,
        n_d=n_d,
        n_segments=n_seg,
        gate=gate,
        noise_psd=floors,
        fs=fs,
        nperseg=nperseg,
        domega=n_band * d_raw,
        duration=n / fs,
    )


def effective_bandwidth(omega, density) -> float:
    """Effective statistical bandwidth B_eff = m0² / ∫S_f(f)² df of a one-sided spectrum, in Hz.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Ascending frequencies (absolute or encounter, >= 0). [rad/s]
    density : array_like, shape (K,)
        One-sided spectral density per rad/s. [unit²·s/rad]

    Returns
    -------
    float
        B_eff = (∫S dω)² / (2π ∫S² dω) (trapezoid rule; S_f = 2π S_ω, df = dω/2π). [Hz]

    References
    ----------
    .. [1] Bendat and Piersol (2010), §8.2 (statistical bandwidth) - from memory.
    .. [2] Derived from [1] (B_eff = m0²/∫S_e² df), not a published number.
    """
    w = np.asarray(omega, dtype=float)
    s = np.asarray(density, dtype=float)
    if w.ndim != 1 or s.shape != w.shape or w.size < 2:
        raise ValueError(
            f"effective_bandwidth: omega and density must be 1-D of equal length >= 2, "
            f"got {w.shape}, {s.shape}"
        )
    if not (np.isfinite(w).all() and np.isfinite(s).all()) or (np.diff(w) <= 0).any() or (s < 0).any():
        raise ValueError("effective_bandwidth: omega must be finite and ascending, density finite and >= 0")
    m0 = np.trapezoid(s, w)
    s2 = np.trapezoid(s * s, w)
    if s2 <= 0:
        raise ValueError("effective_bandwidth: the spectrum holds no energy")
    return float(m0 * m0 / (TWO_PI * s2))


def hs_sampling_error(duration: float, b_eff: float) -> float:
    """Predicted relative 1-σ sampling error of Hs from a record of a Gaussian process.

    Parameters
    ----------
    duration : float
        Record length T, > 0. [s]
    b_eff : float
        Effective bandwidth of the (encounter-domain) spectrum, > 0 (:func:`effective_bandwidth`). [Hz]

    Returns
    -------
    float
        σ(Hs)/Hs = 0.5/sqrt(T·B_eff) (var(m̂0)/m0² = 1/(T B_eff), Hs ∝ sqrt(m0)). [-]

    References
    ----------
    .. [1] Derived from Bendat and Piersol (2010), §8.2 (variance of a mean
       square estimate, 1/(B·T)) - from memory.
    """
    if not np.isfinite(duration) or duration <= 0 or not np.isfinite(b_eff) or b_eff <= 0:
        raise ValueError(
            f"hs_sampling_error: need duration > 0 s and b_eff > 0 Hz, got {duration!r}, {b_eff!r}"
        )
    return float(0.5 / np.sqrt(duration * b_eff))
