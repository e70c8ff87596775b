"""Preparation of a window of measured motion records for spectral analysis.

Pure computation on arrays: a :class:`Record` (the raw samples of one analysis window, already in
SI units and the SENSOR sign conventions of docs/conventions.md) goes in, a :class:`PreparedWindow`
(uniform time base, cleaned channels, per-channel quality flags, window statistics and the reasons
behind every decision) comes out. Nothing here reads files or the clock.

Processing chain, per channel (Bendat & Piersol 2010 ch. 11; defaults are project choices [6]):

1. values outside a plausible physical range are removed; many of them make the channel
   "implausible";
2. clipping (a sensor saturating at its range limit) is detected from repeated extreme values;
3. frozen stretches (the same value repeated for ``frozen_s`` or longer) are removed;
4. spikes are removed with a Hampel-type identifier (residual from the neighbours' interpolation
   beyond k·1.4826·MAD, Hampel 1974; Pearson 2002);
5. roll/pitch values that look like radians labelled as degrees are flagged;
6. samples are brought to a uniform native grid (short gaps bridged by linear interpolation),
   low-pass filtered with a zero-phase windowed-sinc FIR below the output Nyquist frequency
   (anti-aliasing) and interpolated to the output rate (default 2 Hz) with a cubic spline;
7. long gaps (> ``max_gap_s``) split the window: the longest gap-free stretch common to the usable
   channels is kept if it is long enough, otherwise the worst-covered channel is dropped;
8. each kept channel is linearly detrended; heave and accelerations are high-pass filtered
   (Butterworth, zero-phase ``sosfiltfilt``, default 0.02 Hz);
9. stationarity: circular standard deviation of the heading, standard deviation of the speed and
   the ratio of the variances of the two halves of each channel (Bendat & Piersol 2010 ch. 10 [1]), judged
   against its own sampling scatter.

References
----------
.. [1] Bendat, J. S. and Piersol, A. G. (2010). *Random Data: Analysis and Measurement
   Procedures*, 4th ed., ch. 10-11 (data qualification: detrending, filtering, wild points,
   stationarity by comparing sub-record statistics) - from memory.
.. [2] Hampel, F. R. (1974). The influence curve and its role in robust estimation. *J. Am. Stat.
   Assoc.* 69(346), 383-393; Pearson, R. K. (2002). Outliers in process modeling and
   identification. *IEEE Trans. Control Syst. Technol.* 10(1), 55-63 (Hampel identifier with the
   MAD scale 1.4826).
.. [3] Mardia, K. V. and Jupp, P. E. (2000). *Directional Statistics*, §2.3 (circular mean
   and circular standard deviation sqrt(−2 ln R)).
.. [4] Oppenheim, A. V. and Schafer, R. W. (2010). *Discrete-Time Signal Processing*, 3rd ed.,
   §7.5 (window-method FIR design; a symmetric FIR applied centred has zero phase) and §4.6
   (anti-aliasing before sample-rate reduction).
.. [5] Gustafsson, F. (1996). Determining the initial states in forward-backward filtering.
   *IEEE Trans. Signal Process.* 44(4), 988-992 (zero-phase forward-backward IIR filtering, as in
   ``scipy.signal.sosfiltfilt``; the effective gain is |H|²).
.. [6] Project choices, not published numbers: 2 Hz output rate, high-pass ~0.02 Hz,
   σ(heading) < 5°, σ(speed) < 1 kn, variance ratio of window halves 0.67-1.5.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np
from scipy import interpolate, signal

from estimator.constants import KNOT

__all__ = [
    "CHANNELS",
    "CHANNEL_UNITS",
    "PLAUSIBLE_LIMITS",
    "PrepSettings",
    "PreparedWindow",
    "Record",
    "circular_mean_std",
    "highpass_gain",
    "prepare",
]

CHANNELS = ("roll", "pitch", "heave", "acc_x", "acc_y", "acc_z")
"""Channel names a :class:`Record` may carry, in SENSOR conventions (docs/conventions.md, docs/voyage-log.md):
roll [rad] (+ starboard down), pitch [rad] (+ bow UP), heave [m] (+ up, at the sensor),
acc_x, acc_y, acc_z [m/s²] (x forward, y starboard, z down; static gravity removed)."""

CHANNEL_UNITS = MappingProxyType(
    {"roll": "rad", "pitch": "rad", "heave": "m", "acc_x": "m/s²", "acc_y": "m/s²", "acc_z": "m/s²"}
)
"""Unit of each channel inside the core."""

PLAUSIBLE_LIMITS = MappingProxyType(
    {
        "roll": np.deg2rad(60.0),
        "pitch": np.deg2rad(30.0),
        "heave": 25.0,
        "acc_x": 30.0,
        "acc_y": 30.0,
        "acc_z": 30.0,
    }
)
"""Largest plausible absolute value of each channel [rad, m, m/s²]. Common practice for
merchant ships (roll beyond 60° or pitch beyond 30° is not a measurement an estimator should
use; heave amplitudes beyond 25 m and accelerations beyond about 3 g at a motion sensor do not
occur in service); a project choice."""

_HIGHPASS_CHANNELS = ("heave", "acc_x", "acc_y", "acc_z")
_ANGLE_CHANNELS = ("roll", "pitch")
_MAD_TO_SIGMA = 1.4826  # 1/Φ⁻¹(3/4): MAD of a Gaussian sample → standard deviation [2]


def _frozen_array(values, name: str, cls: str) -> np.ndarray:
    arr = np.array(values, dtype=float, copy=True)
    arr.setflags(write=False)
    return arr


def _frozen_mapping(d: Mapping) -> Mapping:
    return MappingProxyType(dict(d))


@dataclass(frozen=True, eq=False)
class Record:
    """Raw samples of one analysis window (immutable).

    Parameters
    ----------
    t : array_like, shape (N,)
        Sample times, strictly ascending, finite (seconds since the window start or epoch
        seconds; only differences are used). The rate may vary; N >= 2. [s]
    channels : mapping of str to array_like, shape (N,)
        Motion channels by name (see :data:`CHANNELS`), SI units, SENSOR sign conventions.
        NaN marks a missing sample (a blank cell in a voyage log). At least one channel.
    heading : array_like, shape (N,)
        Ship true heading, clockwise from north; NaN where missing. [rad]
    speed : array_like, shape (N,)
        Ship speed through water; NaN where missing. [m/s]

    Raises
    ------
    ValueError
        If a shape, a time value or a channel name is not allowed (the message names the field,
        the index and the value).
    """

    t: np.ndarray
    channels: Mapping[str, np.ndarray]
    heading: np.ndarray
    speed: np.ndarray

    def __post_init__(self) -> None:
        cls = "Record"
        t = np.asarray(self.t, dtype=float)
        if t.ndim != 1 or t.size < 2:
            raise ValueError(f"{cls}: t must be 1-D with at least 2 samples, got shape {t.shape}")
        bad = ~np.isfinite(t)
        if bad.any():
            i = int(np.argmax(bad))
            raise ValueError(f"{cls}: t must be finite, got {float(t[i])!r} at index {i}")
        dt = np.diff(t)
        if (dt <= 0).any():
            i = int(np.argmax(dt <= 0))
            raise ValueError(
                f"{cls}: t must be strictly ascending, t[{i}]={float(t[i])!r} s >= "
                f"t[{i + 1}]={float(t[i + 1])!r} s"
            )
        if not isinstance(self.channels, Mapping) or len(self.channels) == 0:
            raise ValueError(
                f"{cls}: channels must be a non-empty mapping name -> array, got {self.channels!r}"
            )
        chans = {}
        for name, values in self.channels.items():
            if name not in CHANNELS:
                raise ValueError(f"{cls}: unknown channel {name!r}; allowed: {', '.join(CHANNELS)}")
            arr = np.asarray(values, dtype=float)
            if arr.shape != t.shape:
                raise ValueError(f"{cls}: channel {name!r} must have shape {t.shape} like t, got {arr.shape}")
            if np.isinf(arr).any():
                i = int(np.argmax(np.isinf(arr)))
                raise ValueError(
                    f"{cls}: channel {name!r} has an infinite value at index {i}; use NaN for missing"
                )
            chans[name] = _frozen_array(arr, name, cls)
        for name in ("heading", "speed"):
            arr = np.asarray(getattr(self, name), dtype=float)
            if arr.shape != t.shape:
                raise ValueError(f"{cls}: {name} must have shape {t.shape} like t, got {arr.shape}")
            if np.isinf(arr).any():
                i = int(np.argmax(np.isinf(arr)))
                raise ValueError(f"{cls}: {name} has an infinite value at index {i}; use NaN for missing")
            object.__setattr__(self, name, _frozen_array(arr, name, cls))
        object.__setattr__(self, "t", _frozen_array(t, "t", cls))
        object.__setattr__(self, "channels", _frozen_mapping(chans))

    @property
    def duration(self) -> float:
        """t[-1] − t[0]. [s]"""
        return float(self.t[-1] - self.t[0])


@dataclass(frozen=True)
class PrepSettings:
    """Thresholds of :func:`prepare` (all SI).

    Parameters
    ----------
    fs : float
        Output sample rate [Hz]. 2 Hz, a project choice (Nyquist 6.3 rad/s above the
        3.5 rad/s analysis band).
    highpass_hz : float
        Corner of the zero-phase high-pass on heave and accelerations; 0 disables it [Hz]
        (project choice: ~0.02 Hz).
    highpass_order : int
        Order of the Butterworth high-pass (applied forward and backward: gain |H|²) [-].
    max_gap_s : float
        Longest gap bridged by interpolation [s]. Longer gaps split the window. Project choice.
    min_duration_s : float
        Shortest acceptable window after splitting [s] (common practice uses 15-30 min
        windows; 10 min is the floor used here, a project choice).
    frozen_s : float
        A value repeated unchanged for this long or longer is a frozen sensor [s] (common practice).
    spike_k : float
        Spike threshold in robust standard deviations of the residual from the neighbours'
        interpolation [-] (Pearson 2002 uses 3 for outliers in noise; 6 keeps false alarms in a
        Gaussian record of 10⁴ samples below 10⁻⁴, a project choice).
    max_spike_fraction : float
        More spikes than this fraction of the samples make the channel unusable [-].
    clip_fraction : float
        More samples than this fraction sitting exactly at the channel's extreme value (and at
        least ``clip_min_count``) means the sensor saturated [-] (common practice).
    clip_min_count : int
        Minimum count of extreme-valued samples before clipping is declared [-].
    implausible_fraction : float
        More out-of-range samples than this fraction make the channel "implausible" [-].
    radians_max_deg : float
        A roll or pitch channel whose absolute values never exceed this many degrees while the
        ship is clearly moving is suspected to hold radians labelled as degrees [deg]
        (0.6 rad ≈ 34° is a very large roll, so values ≤ 0.6 are what a radian series read as
        degrees looks like; a project choice).
    moving_heave_std : float
        Heave standard deviation above which the ship is "clearly moving" [m] (project choice).
    moving_acc_std : float
        Vertical-acceleration standard deviation used instead when heave is absent [m/s²].
    max_heading_std : float
        Circular standard deviation of heading for a stationary window [rad] (project choice: 5°).
    max_speed_std : float
        Standard deviation of speed for a stationary window [m/s] (project choice: 1 kn).
    variance_ratio_band : tuple of float
        Accepted range of var(second half)/var(first half) per channel [-] (project choice: 0.67-1.5).
    variance_ratio_z : float
        A ratio outside the band flags the channel only if |ln ratio| also exceeds this many
        sampling standard deviations of ln ratio for a stationary Gaussian record with the
        channel's own effective bandwidth [-]; a narrow-band 20-min roll record has σ(ln ratio)
        ≈ 0.3-0.4, so the band alone would flag it often by chance (Bendat & Piersol 2010, §10.3:
        stationarity judged against the sampling distribution - from memory).
    """

    fs: float = 2.0
    highpass_hz: float = 0.02
    highpass_order: int = 2
    max_gap_s: float = 5.0
    min_duration_s: float = 600.0
    frozen_s: float = 10.0
    spike_k: float = 6.0
    max_spike_fraction: float = 0.01
    clip_fraction: float = 0.005
    clip_min_count: int = 5
    implausible_fraction: float = 0.01
    radians_max_deg: float = 0.6
    moving_heave_std: float = 0.3
    moving_acc_std: float = 0.3
    max_heading_std: float = np.deg2rad(5.0)
    max_speed_std: float = 1.0 * KNOT
    variance_ratio_band: tuple[float, float] = (0.67, 1.5)
    variance_ratio_z: float = 3.0

    def __post_init__(self) -> None:
        positive = (
            "fs",
            "max_gap_s",
            "min_duration_s",
            "frozen_s",
            "spike_k",
            "variance_ratio_z",
            "radians_max_deg",
            "max_heading_std",
            "max_speed_std",
        )
        for name in positive:
            v = getattr(self, name)
            if not np.isfinite(v) or v <= 0:
                raise ValueError(f"PrepSettings: {name} must be a finite number > 0, got {v!r}")
        if not np.isfinite(self.highpass_hz) or self.highpass_hz < 0 or self.highpass_hz >= self.fs / 2:
            raise ValueError(
                f"PrepSettings: highpass_hz must be in [0, fs/2) = [0, {self.fs / 2}) Hz, "
                f"got {self.highpass_hz!r}"
            )
        if int(self.highpass_order) != self.highpass_order or self.highpass_order < 1:
            raise ValueError(
                f"PrepSettings: highpass_order must be an integer >= 1, got {self.highpass_order!r}"
            )
        for name in ("max_spike_fraction", "clip_fraction", "implausible_fraction"):
            v = getattr(self, name)
            if not 0 <= v < 1:
                raise ValueError(f"PrepSettings: {name} must be in [0, 1), got {v!r}")
        lo, hi = self.variance_ratio_band
        if not 0 < lo < 1 < hi:
            raise ValueError(
                f"PrepSettings: variance_ratio_band must satisfy 0 < lo < 1 < hi, got {(lo, hi)!r}"
            )


@dataclass(frozen=True, eq=False)
class PreparedWindow:
    """A window of motion records ready for cross-spectral analysis (immutable).

    Attributes
    ----------
    accepted : bool
        False when no usable stretch of data remains; ``reasons`` says why.
    t : numpy.ndarray, shape (n,)
        Uniform time base from the start of the kept stretch, t[i] = i/fs. [s]
    t_start : float
        Time of t[0] on the time axis of the input :class:`Record`. [s]
    fs : float
        Sample rate. [Hz]
    channels : mapping of str to numpy.ndarray, shape (n,)
        Usable channels, detrended (and high-passed for heave/accelerations), SENSOR conventions.
        [rad, m, m/s²]
    usable : tuple of str
        Names of the usable channels, in :data:`CHANNELS` order.
    flags : mapping of str to tuple of str
        Quality flags of every channel of the record: ``missing``, ``implausible``, ``clipped``,
        ``frozen``, ``spikes``, ``units_suspect``, ``gap``, ``nonstationary``.
    channel_means : mapping of str to float
        Mean of each usable channel before detrending (static heel, trim, offsets). [rad, m, m/s²]
    variance_ratio : mapping of str to float
        var(second half)/var(first half) of each usable channel. [-]
    highpass_hz : mapping of str to float
        High-pass corner applied to each usable channel (0 for none). [Hz]
    highpass_order : int
        Butterworth order of the high-pass (applied forward-backward). [-]
    heading, speed : numpy.ndarray, shape (n,)
        Heading [rad] (true, in [0, 2π)) and speed through water [m/s] on the uniform time base.
    heading_mean, heading_std : float
        Circular mean [rad] in [0, 2π) and circular standard deviation [rad] of the heading.
    speed_mean, speed_std : float
        Mean and standard deviation of the speed. [m/s]
    duration : float
        n/fs. [s]
    stationary : bool
        Heading and speed steady and every usable channel within the variance-ratio band.
    reasons : tuple of str
        Plain-language reasons for every flag, split, drop or rejection.
    """

    accepted: bool
    t: np.ndarray
    t_start: float
    fs: float
    channels: Mapping[str, np.ndarray]
    usable: tuple[str, ...]
    flags: Mapping[str, tuple[str, ...]]
    channel_means: Mapping[str, float]
    variance_ratio: Mapping[str, float]
    highpass_hz: Mapping[str, float]
    highpass_order: int
    heading: np.ndarray
    speed: np.ndarray
    heading_mean: float
    heading_std: float
    speed_mean: float
    speed_std: float
    duration: float
    stationary: bool
    reasons: tuple[str, ...] = field(default=())


# ---------------------------------------------------------------------------------------------
# helpers
# ---------------------------------------------------------------------------------------------


def circular_mean_std(angles) -> tuple[float, float]:
    """Circular mean and circular standard deviation of angles (NaN ignored).

    Parameters
    ----------
    angles : array_like
        Angles. [rad]

    Returns
    -------
    mean : float
        atan2(mean sin, mean cos) in [0, 2π); NaN if no finite angle. [rad]
    std : float
        sqrt(−2 ln R), R the mean resultant length. [rad]

    References
    ----------
    .. [1] Mardia, K. V. and Jupp, P. E. (2000). *Directional Statistics*, §2.3.
    """
    a = np.asarray(angles, dtype=float).ravel()
    a = a[np.isfinite(a)]
    if a.size == 0:
        return float("nan"), float("nan")
    c, s = np.cos(a).mean(), np.sin(a).mean()
    r = min(1.0, float(np.hypot(c, s)))
    mean = float(np.mod(np.arctan2(s, c), 2 * np.pi))
    std = float(np.sqrt(-2.0 * np.log(r))) if r > 0 else float("inf")
    return mean, std


def highpass_gain(omega, highpass_hz: float, order: int):
    """Gain of the zero-phase Butterworth high-pass used by :func:`prepare`.

    Forward-backward filtering multiplies each Fourier amplitude by the real, zero-phase gain
    g = |H(f)|² = 1/(1 + (f_c/f)^(2n)) of a Butterworth high-pass of order n, so a cross-spectrum
    Φ_ij is multiplied by g_i·g_j and an auto-spectrum by g_i².

    Parameters
    ----------
    omega : array_like
        Circular frequency. [rad/s]
    highpass_hz : float
        Corner frequency f_c; 0 gives gain 1. [Hz]
    order : int
        Butterworth order n. [-]

    Returns
    -------
    numpy.ndarray
        Amplitude gain g in [0, 1] (0.5 at the corner). [-]

    References
    ----------
    .. [1] Oppenheim, A. V. and Schafer, R. W. (2010). *Discrete-Time Signal Processing*, 3rd ed.,
       §7.2 (Butterworth magnitude response, bilinear design; the analogue formula is exact at the
       corner and accurate well below the Nyquist frequency).
    .. [2] Gustafsson (1996), forward-backward filtering (gain |H|², zero phase).
    """
    w = np.abs(np.asarray(omega, dtype=float))
    if highpass_hz <= 0:
        return np.ones_like(w)
    wc = 2 * np.pi * highpass_hz
    with np.errstate(divide="ignore", over="ignore"):
        ratio = np.where(w > 0, (wc / np.where(w > 0, w, 1.0)) ** (2 * order), np.inf)
    return 1.0 / (1.0 + ratio)


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, stop) index pairs of the runs of True in a boolean array (stop exclusive)."""
    m = np.concatenate(([False], np.asarray(mask, dtype=bool), [False]))
    d = np.diff(m.astype(np.int8))
    starts = np.flatnonzero(d == 1)
    stops = np.flatnonzero(d == -1)
    return list(zip(starts.tolist(), stops.tolist(), strict=True))


def _equal_runs(x: np.ndarray) -> list[tuple[int, int]]:
    """Runs (start, stop) of consecutive exactly equal finite values, length >= 2."""
    same = np.isfinite(x[1:]) & (x[1:] == x[:-1])
    return [(a, b + 1) for a, b in _runs(same)]


def _spikes(t: np.ndarray, x: np.ndarray, k: float) -> np.ndarray:
    """Boolean mask of spikes among the finite samples of x.

    Hampel-type identifier [2] applied to the residual from the neighbours' linear interpolation,
    r_i = x_i − (x_{i−1}(t_{i+1} − t_i) + x_{i+1}(t_i − t_{i−1}))/(t_{i+1} − t_{i−1}), with the
    robust scale 1.4826·MAD(r) of the whole record: a sample is a spike when |r_i| > k·scale and
    |r_i| is the largest of its three neighbours' (a spike also disturbs r at i ± 1 by half its
    size). For a smooth or Gaussian signal r is a linear filter of the signal, so its MAD scale
    reflects the signal's own curvature and noise and no valid sample reaches k = 6.
    """
    ok = np.flatnonzero(np.isfinite(x))
    out = np.zeros(x.shape, dtype=bool)
    if ok.size < 5:
        return out
    xv, tv = x[ok], t[ok]
    wl = (tv[2:] - tv[1:-1]) / (tv[2:] - tv[:-2])
    r = np.zeros(xv.size)
    r[1:-1] = xv[1:-1] - (wl * xv[:-2] + (1.0 - wl) * xv[2:])
    a = np.abs(r)
    scale = _MAD_TO_SIGMA * np.median(np.abs(r[1:-1] - np.median(r[1:-1])))
    if scale <= 0:
        return out
    peak = np.zeros(xv.size, dtype=bool)
    peak[1:-1] = (a[1:-1] >= a[:-2]) & (a[1:-1] >= a[2:])
    out[ok] = peak & (a > k * scale)
    return out


def _fir_lowpass(fs_in: float, fs_out: float) -> np.ndarray:
    """Anti-aliasing FIR (Hamming window method), cut-off 0.4·fs_out, flat to ~0.32·fs_out [4]."""
    cutoff = 0.4 * fs_out
    transition = 0.15 * fs_out
    # Hamming window: transition width ≈ 3.3·fs/numtaps (Oppenheim & Schafer 2010, Table 7.2)
    half = int(np.ceil(1.65 * fs_in / transition))
    return signal.firwin(2 * half + 1, cutoff, window="hamming", fs=fs_in)


def _resample_channel(
    t_raw: np.ndarray, x_raw: np.ndarray, t_out: np.ndarray, fs_out: float, max_gap_s: float
) -> tuple[np.ndarray, np.ndarray]:
    """Anti-aliased values on t_out and a validity mask (False inside long gaps / outside the data)."""
    ok = np.isfinite(x_raw)
    tv, xv = t_raw[ok], x_raw[ok]
    valid = np.zeros(t_out.shape, dtype=bool)
    if tv.size < 4:
        return np.full(t_out.shape, np.nan), valid
    valid = (t_out >= tv[0] - 1e-9) & (t_out <= tv[-1] + 1e-9)
    gaps = np.flatnonzero(np.diff(tv) > max_gap_s)
    for g in gaps:
        valid &= ~((t_out > tv[g]) & (t_out < tv[g + 1]))
    mean = xv.mean()
    dt_native = float(np.median(np.diff(t_raw)))
    fs_native = 1.0 / dt_native
    if fs_native > 1.2 * fs_out:
        tn = np.arange(t_raw[0], t_raw[-1] + 0.5 * dt_native, dt_native)
        xn = np.interp(tn, tv, xv - mean)
        taps = _fir_lowpass(fs_native, fs_out)
        half = taps.size // 2
        if xn.size > half + 1:
            xp = np.pad(xn, half, mode="reflect")
            xn = signal.fftconvolve(xp, taps, mode="valid")
        spline = interpolate.CubicSpline(tn, xn)
    else:
        spline = interpolate.CubicSpline(tv, xv - mean)
    y = spline(np.clip(t_out, tv[0], tv[-1])) + mean
    y[~valid] = np.nan
    return y, valid


def _longest_common_run(valid: np.ndarray) -> tuple[int, int]:
    runs = _runs(valid)
    if not runs:
        return 0, 0
    return max(runs, key=lambda r: r[1] - r[0])


def _unwrap_interp(t_raw, angle, t_out, max_gap_s):
    ok = np.isfinite(angle)
    if ok.sum() < 2:
        return np.full(t_out.shape, np.nan), np.zeros(t_out.shape, dtype=bool)
    tv = t_raw[ok]
    un = np.unwrap(angle[ok])
    y = np.interp(t_out, tv, un)
    valid = (t_out >= tv[0] - 1e-9) & (t_out <= tv[-1] + 1e-9)
    for g in np.flatnonzero(np.diff(tv) > max_gap_s):
        valid &= ~((t_out > tv[g]) & (t_out < tv[g + 1]))
    return y, valid


def _linear_interp(t_raw, x, t_out, max_gap_s):
    ok = np.isfinite(x)
    if ok.sum() < 2:
        return np.full(t_out.shape, np.nan), np.zeros(t_out.shape, dtype=bool)
    tv = t_raw[ok]
    y = np.interp(t_out, tv, x[ok])
    valid = (t_out >= tv[0] - 1e-9) & (t_out <= tv[-1] + 1e-9)
    for g in np.flatnonzero(np.diff(tv) > max_gap_s):
        valid &= ~((t_out > tv[g]) & (t_out < tv[g + 1]))
    return y, valid


def _log_ratio_sigma(y: np.ndarray, fs: float) -> float:
    """Sampling standard deviation of ln(var(2nd half)/var(1st half)) for a stationary Gaussian record.

    Each half-record variance has relative standard deviation 1/sqrt(T_half·B_eff), B_eff =
    m0²/∫P(f)² df the effective bandwidth of the record's own Welch spectrum (Bendat & Piersol
    2010, §8.2 and §10.3 - from memory), so the log-ratio has sqrt(2) times that.
    """
    n = y.size
    nper = int(min(max(16, n // 8), 1024))
    f, p = signal.welch(y, fs=fs, nperseg=nper)
    df = f[1] - f[0]
    s2 = float(np.sum(p * p))
    if s2 <= 0:
        return float("inf")
    b_eff = float(np.sum(p)) ** 2 * df / s2
    return float(np.sqrt(2.0 / (0.5 * n / fs * b_eff)))


def _deg(x: float) -> float:
    return float(np.rad2deg(x))


# ---------------------------------------------------------------------------------------------
# main entry point
# ---------------------------------------------------------------------------------------------


def prepare(record: Record, settings: PrepSettings | None = None) -> PreparedWindow:
    """Clean, resample, split at long gaps, detrend and filter one window of motion records.

    Parameters
    ----------
    record : Record
        Raw samples (SI, sensor conventions).
    settings : PrepSettings, optional
        Thresholds; defaults documented in :class:`PrepSettings`.

    Returns
    -------
    PreparedWindow
        The prepared window; ``accepted`` is False (with reasons) when nothing usable remains.

    Raises
    ------
    TypeError
        If ``record`` is not a :class:`Record`.

    Notes
    -----
    Channels flagged ``implausible``, ``clipped``, ``units_suspect``, ``missing`` or with more
    spikes than allowed are not used; ``spikes`` (few), ``frozen`` stretches and short gaps are
    repaired; ``nonstationary`` is reported but the channel stays usable (the caller decides). See
    the module docstring for the chain and its sources.

    References
    ----------
    See the module docstring ([1]-[6]).
    """
    if not isinstance(record, Record):
        raise TypeError(f"prepare: record must be an estimator.prep.Record, got {type(record).__name__}")
    s = settings if settings is not None else PrepSettings()
    fs = float(s.fs)
    t_raw = record.t - record.t[0]
    n_out = int(np.floor(t_raw[-1] * fs + 1e-9)) + 1
    t_full = np.arange(n_out) / fs
    reasons: list[str] = []
    flags: dict[str, list[str]] = {name: [] for name in record.channels}
    unusable: set[str] = set()
    cleaned: dict[str, np.ndarray] = {}

    # --- per-channel checks on the raw samples -------------------------------------------------
    for name in CHANNELS:
        if name not in record.channels:
            continue
        x = np.array(record.channels[name], dtype=float)
        finite = np.isfinite(x)
        n_fin = int(finite.sum())
        if n_fin < 4:
            flags[name].append("missing")
            unusable.add(name)
            reasons.append(f"{name}: missing (only {n_fin} of {x.size} samples present)")
            continue
        # 1. plausible range
        limit = PLAUSIBLE_LIMITS[name]
        out = finite & (np.abs(x) > limit)
        if out.any():
            n_bad = int(out.sum())
            worst = float(x[out][np.argmax(np.abs(x[out]))])
            if n_bad > s.implausible_fraction * n_fin:
                flags[name].append("implausible")
                unusable.add(name)
                reasons.append(
                    f"{name}: implausible, {n_bad} of {n_fin} samples beyond ±{limit:.3g} "
                    f"{CHANNEL_UNITS[name]} (e.g. {worst:.4g}); wrong units or sensor fault"
                )
                continue
            x[out] = np.nan
            flags[name].append("spikes")
            reasons.append(
                f"{name}: {n_bad} out-of-range samples removed (beyond ±{limit:.3g} {CHANNEL_UNITS[name]})"
            )
        finite = np.isfinite(x)
        # 2. clipping: many samples exactly at the extreme value, in several separate runs
        xf = x[finite]
        for extreme in (xf.max(), xf.min()):
            tol = 1e-9 * max(abs(extreme), 1e-12)
            at = finite & (np.abs(x - extreme) <= tol)
            n_at = int(at.sum())
            if n_at >= max(s.clip_min_count, s.clip_fraction * n_fin) and len(_runs(at)) >= 2:
                if "clipped" not in flags[name]:
                    flags[name].append("clipped")
                    unusable.add(name)
                    reasons.append(
                        f"{name}: clipped, {n_at} samples sit exactly at {extreme:.4g} {CHANNEL_UNITS[name]} "
                        f"in {len(_runs(at))} stretches (sensor saturated)"
                    )
        if name in unusable:
            continue
        # 3. frozen stretches
        frozen_total = 0.0
        for a, b in _equal_runs(x):
            length = record.t[b - 1] - record.t[a]
            if length >= s.frozen_s:
                x[a:b] = np.nan
                frozen_total += length
        if frozen_total > 0:
            flags[name].append("frozen")
            reasons.append(
                f"{name}: frozen for {frozen_total:.0f} s in total (value unchanged ≥ {s.frozen_s:g} s)"
            )
        if np.isfinite(x).sum() < 4:
            flags[name].append("missing")
            unusable.add(name)
            reasons.append(f"{name}: no valid samples left after removing frozen stretches")
            continue
        # 4. spikes (Hampel identifier)
        spikes = _spikes(record.t, x, s.spike_k)
        n_sp = int(spikes.sum())
        if n_sp:
            x[spikes] = np.nan
            if "spikes" not in flags[name]:
                flags[name].append("spikes")
            if n_sp > s.max_spike_fraction * n_fin:
                unusable.add(name)
                reasons.append(
                    f"{name}: {n_sp} spikes in {n_fin} samples (more than {s.max_spike_fraction:.1%}); "
                    "channel not used"
                )
                continue
            reasons.append(f"{name}: {n_sp} spikes removed and bridged (k = {s.spike_k:g})")
        cleaned[name] = x

    # 5. units: roll/pitch that look like radians labelled as degrees
    moving = None
    if "heave" in cleaned:
        sd = float(np.nanstd(cleaned["heave"]))
        if sd >= s.moving_heave_std:
            moving = f"heave std {sd:.2f} m"
    if "heave" not in cleaned and "acc_z" in cleaned:
        sd = float(np.nanstd(cleaned["acc_z"]))
        if sd >= s.moving_acc_std:
            moving = f"vertical acceleration std {sd:.2f} m/s²"
    if moving is not None:
        for name in _ANGLE_CHANNELS:
            if name in cleaned:
                peak_deg = _deg(float(np.nanmax(np.abs(cleaned[name] - np.nanmean(cleaned[name])))))
                if peak_deg <= s.radians_max_deg:
                    flags[name].append("units_suspect")
                    unusable.add(name)
                    del cleaned[name]
                    reasons.append(
                        f"{name}: never exceeds {peak_deg:.3f}° from its mean while {moving}; "
                        f"values look like radians labelled as degrees (limit {s.radians_max_deg:g}); "
                        "channel not used"
                    )

    # --- resample to the uniform output grid ---------------------------------------------------
    resampled: dict[str, np.ndarray] = {}
    valid: dict[str, np.ndarray] = {}
    for name, x in cleaned.items():
        y, v = _resample_channel(t_raw, x, t_full, fs, s.max_gap_s)
        if v.sum() < 4:
            flags[name].append("missing")
            unusable.add(name)
            reasons.append(f"{name}: too few valid samples to resample")
            continue
        resampled[name], valid[name] = y, v
    heading_u, heading_ok = _unwrap_interp(
        t_raw, np.asarray(record.heading, dtype=float), t_full, s.max_gap_s
    )
    speed_u, speed_ok = _linear_interp(t_raw, np.asarray(record.speed, dtype=float), t_full, s.max_gap_s)

    def rejected(why: str) -> PreparedWindow:
        reasons.append(why)
        return PreparedWindow(
            accepted=False,
            t=np.zeros(0),
            t_start=float(record.t[0]),
            fs=fs,
            channels=MappingProxyType({}),
            usable=(),
            flags=MappingProxyType({k: tuple(v) for k, v in flags.items()}),
            channel_means=MappingProxyType({}),
            variance_ratio=MappingProxyType({}),
            highpass_hz=MappingProxyType({}),
            highpass_order=int(s.highpass_order),
            heading=np.zeros(0),
            speed=np.zeros(0),
            heading_mean=float("nan"),
            heading_std=float("nan"),
            speed_mean=float("nan"),
            speed_std=float("nan"),
            duration=0.0,
            stationary=False,
            reasons=tuple(reasons),
        )

    if not heading_ok.any():
        return rejected("window rejected: heading missing")
    if not speed_ok.any():
        return rejected("window rejected: speed missing")

    # --- split at long gaps: keep the longest stretch common to the kept channels --------------
    n_min = int(np.ceil(s.min_duration_s * fs))
    kept = [name for name in CHANNELS if name in resampled]
    while True:
        if not kept:
            return rejected(
                f"window rejected: no usable channel with {s.min_duration_s:g} s of gap-free data"
            )
        common = heading_ok & speed_ok
        for name in kept:
            common &= valid[name]
        a, b = _longest_common_run(common)
        if b - a >= n_min:
            break
        # drop the worst-covered channel, unless heading/speed alone are the problem
        nav = heading_ok & speed_ok
        a_nav, b_nav = _longest_common_run(nav)
        if b_nav - a_nav < n_min:
            return rejected(
                f"window rejected: heading/speed have no gap-free stretch of {s.min_duration_s:g} s "
                f"(longest {(b_nav - a_nav) / fs:.0f} s)"
            )
        worst = min(
            kept,
            key=lambda nm: _longest_common_run(valid[nm] & nav)[1] - _longest_common_run(valid[nm] & nav)[0],
        )
        kept.remove(worst)
        unusable.add(worst)
        flags[worst].append("gap")
        reasons.append(
            f"{worst}: gaps longer than {s.max_gap_s:g} s leave no {s.min_duration_s:g}-s stretch; "
            "channel not used"
        )
    if a > 0 or b < n_out:
        reasons.append(
            f"window split at gaps longer than {s.max_gap_s:g} s: kept {a / fs:.0f}-{(b - 1) / fs:.0f} s "
            f"({(b - a) / fs:.0f} s of {n_out / fs:.0f} s)"
        )
        for name in kept:
            if not valid[name].all() and "gap" not in flags[name]:
                flags[name].append("gap")

    # --- detrend, high-pass, stationarity on the kept stretch ----------------------------------
    n = b - a
    t = np.arange(n) / fs
    out_channels: dict[str, np.ndarray] = {}
    means: dict[str, float] = {}
    hp: dict[str, float] = {}
    ratios: dict[str, float] = {}
    sos = None
    if s.highpass_hz > 0:
        sos = signal.butter(int(s.highpass_order), s.highpass_hz, btype="highpass", fs=fs, output="sos")
    stationary = True
    for name in kept:
        y = resampled[name][a:b]
        means[name] = float(y.mean())
        y = signal.detrend(y, type="linear")
        corner = 0.0
        if sos is not None and name in _HIGHPASS_CHANNELS:
            y = signal.sosfiltfilt(
                sos, y, padtype="odd", padlen=min(n - 1, int(round(3 * fs / s.highpass_hz)))
            )
            corner = float(s.highpass_hz)
        hp[name] = corner
        half = n // 2
        v1, v2 = float(np.var(y[:half])), float(np.var(y[half:]))
        ratio = v2 / v1 if v1 > 0 else float("inf")
        ratios[name] = ratio
        lo, hi = s.variance_ratio_band
        sigma = _log_ratio_sigma(y, fs)
        if not lo <= ratio <= hi and abs(np.log(ratio)) > s.variance_ratio_z * sigma:
            flags[name].append("nonstationary")
            stationary = False
            reasons.append(
                f"{name}: variance ratio of window halves {ratio:.2f} outside {lo:g}-{hi:g} and beyond "
                f"{s.variance_ratio_z:g} sampling sigmas (σ of ln ratio {sigma:.2f}): non-stationary"
            )
        y.setflags(write=False)
        out_channels[name] = y
    heading = np.mod(heading_u[a:b], 2 * np.pi)
    speed = speed_u[a:b]
    h_mean, h_std = circular_mean_std(heading)
    u_mean, u_std = float(speed.mean()), float(speed.std())
    if h_std > s.max_heading_std:
        stationary = False
        reasons.append(
            f"heading not steady: circular std {_deg(h_std):.1f}° > {_deg(s.max_heading_std):.1f}°"
        )
    if u_std > s.max_speed_std:
        stationary = False
        reasons.append(f"speed not steady: std {u_std / KNOT:.2f} kn > {s.max_speed_std / KNOT:.2f} kn")
    heading.setflags(write=False)
    speed.setflags(write=False)
    t.setflags(write=False)
    usable = tuple(name for name in CHANNELS if name in out_channels)
    return PreparedWindow(
        accepted=True,
        t=t,
        t_start=float(record.t[0] + t_full[a]),
        fs=fs,
        channels=MappingProxyType(out_channels),
        usable=usable,
        flags=MappingProxyType({k: tuple(v) for k, v in flags.items()}),
        channel_means=MappingProxyType(means),
        variance_ratio=MappingProxyType(ratios),
        highpass_hz=MappingProxyType(hp),
        highpass_order=int(s.highpass_order),
        heading=heading,
        speed=speed,
        heading_mean=h_mean,
        heading_std=h_std,
        speed_mean=u_mean,
        speed_std=u_std,
        duration=n / fs,
        stationary=stationary,
        reasons=tuple(reasons),
    )
