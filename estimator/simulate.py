"""Time-domain simulation of the motion records a ship's motion sensor would report in a short-crested sea.

Used by tests, benchmarks and the demo data: a directional wave spectrum and the ship's RAOs go
in, a :class:`estimator.prep.Record` in SENSOR conventions comes out (roll + starboard down,
pitch + bow UP, heave + up at the sensor, accelerations in sensor axes x forward, y starboard,
z down with the static gravity removed but the gravity components of roll and pitch kept, as a
body-fixed accelerometer reports them).

Wave model (random-phase superposition, St. Denis & Pierson 1953; Tucker, Challenor & Carter 1984
for the caveat of fixed amplitudes): N_ω frequencies, each drawn uniformly at random inside its
frequency bin (so the record has no repeat period), × N_θ directions drawn inside their direction
bins (every component has its own random frequency and direction inside its cell), amplitude
a_n = sqrt(2·S(ω_n, θ_n)·Δω·Δθ), independent uniform phases ε_n. The wave
elevation at the moving origin of the body axes is

    ζ(t) = Σ a_n cos(φ_n(t)),  φ_n(t) = ω_n t + k_n (cos θ_n · N(t) + sin θ_n · E(t)) + ε_n,

with k_n = ω_n²/g (deep water) and (N, E) the ship's track (north, east) integrated from heading
and speed through water. For a steady heading and speed dφ_n/dt is the signed encounter frequency
ω_e = ω − ω²U cos β/g with β = π − (θ − ψ) (ITTC), negative where the ship overtakes the waves.
Each rigid-body motion is q_j(t) = Σ Re[H_j(ω_n, β_n, U) a_n e^{iφ_n(t)}] (docs/conventions.md:
x(t) = Re[H a e^{iω_e t}] on the signed branch), velocities and accelerations multiply by iω_e and
−ω_e². Sensor channels follow from small-angle rigid-body kinematics at the sensor position r:
displacement u + α × r, acceleration ü + α̈ × r, and the specific force of a body-fixed
accelerometer f = a + g(−θ, +φ, 0) in ITTC axes (Bender et al. 2010 for why the gravity
projection matters; lateral = −ω_e² H_y + g H_4, derived from the small-angle motion of a point,
Faltinsen 1990 [3], from memory).

Heading and speed may wander: the track then bends, the phase stays exact (it follows the
integrated position) and the RAOs are re-evaluated every ``rao_update_s`` and interpolated
linearly in time in between.

Non-linear roll (optional, :class:`NonlinearRoll`): the linear roll RAO is taken to come from the
1-DOF model φ̈ + 2ζω_φ φ̇ + ω_φ² φ = m(t) (as :func:`estimator.hull.roll_rao_1dof`). The simulator
integrates φ̈ + 2ζω_φ φ̇ + b₂ φ̇|φ̇| + ω_φ² φ = m(t) with the same excitation m(t), written for
the difference δ = φ − φ_lin so that the linear roll is exact when b₂ = 0:

    δ̈ + 2ζω_φ δ̇ + ω_φ² δ = −b₂ (φ̇_lin + δ̇)|φ̇_lin + δ̇|,

by fixed-step RK4 with φ̇_lin interpolated linearly between samples, after a spin-up of ten roll
periods so that no start-up transient remains. Quadratic roll damping as in Himeno (1981); its
equivalent linear damping ratio is ζ + 4·b₂·ω·φ_a/(3π·ω_φ) for harmonic roll of amplitude φ_a at
frequency ω, and ζ + sqrt(8/π)·b₂·σ_φ̇/(2ω_φ) for Gaussian random roll (statistical
linearisation, Roberts & Spanos 1990), which the tests use as the oracle.

Performance: the phasors e^{iφ_n} are advanced by complex multiplication inside blocks of samples
(exact at the block ends) and contracted with the coefficient matrix by one matrix product per
block, so 20 min at 2 Hz with 300 × 72 components takes well under a second on two cores.

References
----------
.. [1] St. Denis, M. and Pierson, W. J. (1953). On the motions of ships in confused seas.
   (superposition of random-phase components, linear responses).
.. [2] Tucker, M. J., Challenor, P. G. and Carter, D. J. T. (1984). Numerical simulation of a
   random sea: a common error and its effect upon wave group statistics. *Applied Ocean Research*
   6(2), 118-122 (deterministic vs random amplitudes; randomised frequencies avoid periodicity).
.. [3] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, ch. 2 and 7 (rigid-body motion
   of a point, encounter frequency).
.. [4] Himeno, Y. (1981). Prediction of ship roll damping - state of the art. Report 239, Dept.
   of Naval Architecture and Marine Engineering, University of Michigan (linear + quadratic roll
   damping) - from memory.
.. [5] Roberts, J. B. and Spanos, P. D. (1990). *Random Vibration and Statistical
   Linearization*, ch. 5 (equivalent linear damping of c·ẋ|ẋ| under Gaussian response:
   c·sqrt(8/π)·σ_ẋ) - from memory.
.. [6] Bender, L. C., Guinasso, N. L., Walpert, J. N. and Howden, S. D. (2010). A comparison of
   methods for determining significant wave heights - applied to a 3-m discus buoy during
   Hurricane Katrina. *J. Atmos. Oceanic Technol.* 27, 1012-1028 (gravity projection on a
   body-fixed accelerometer).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from estimator.constants import G
from estimator.prep import CHANNELS, Record

__all__ = ["NonlinearRoll", "SimulationTruth", "random_wander", "simulate"]

TWO_PI = 2.0 * np.pi
_BLOCK_BYTES = 48e6  # memory bound of one block of phasors [bytes]

# columns of the coefficient matrix contracted with the phasors
_DISP = slice(0, 6)
_ACC = slice(6, 12)
_WAVE = 12
_ROLL_VEL = 13
_NCOL = 14


@dataclass(frozen=True)
class NonlinearRoll:
    """Parameters of the non-linear roll model (see the module docstring).

    Parameters
    ----------
    omega_roll : float
        Natural roll frequency ω_φ of the linear 1-DOF model behind the roll RAO, > 0. [rad/s]
    zeta : float
        Linear damping ratio ζ of that model, >= 0. [-]
    quadratic : float
        Quadratic damping coefficient b₂ (the φ̇|φ̇| moment divided by the roll inertia), >= 0.
        [1/rad]

    References
    ----------
    .. [1] Himeno (1981); Roberts and Spanos (1990), see the module docstring.
    """

    omega_roll: float
    zeta: float
    quadratic: float

    def __post_init__(self) -> None:
        if not np.isfinite(self.omega_roll) or self.omega_roll <= 0:
            raise ValueError(f"NonlinearRoll: omega_roll must be > 0 rad/s, got {self.omega_roll!r}")
        if not np.isfinite(self.zeta) or self.zeta < 0:
            raise ValueError(f"NonlinearRoll: zeta must be >= 0, got {self.zeta!r}")
        if not np.isfinite(self.quadratic) or self.quadratic < 0:
            raise ValueError(f"NonlinearRoll: quadratic must be >= 0 1/rad, got {self.quadratic!r}")


@dataclass(frozen=True, eq=False)
class SimulationTruth:
    """What the simulator knows but a sensor does not (for tests).

    Attributes
    ----------
    wave : numpy.ndarray, shape (n,)
        Wave elevation at the (moving) origin of the body axes. [m]
    motions : numpy.ndarray, shape (6, n)
        Rigid-body motions at the origin, ITTC signs (surge, sway, heave [m]; roll, pitch, yaw
        [rad]; pitch + bow down); roll is the non-linear roll when that model is on.
    clean : mapping of str to numpy.ndarray
        Sensor channels before noise (SENSOR conventions).
    roll_linear : numpy.ndarray, shape (n,)
        Roll of the linear model (equal to motions[3] without the non-linear model). [rad]
    omega, theta, amplitude, phase : numpy.ndarray, shape (N,)
        Component frequencies [rad/s], directions (coming from, true) [rad], amplitudes [m] and
        phases ε_n [rad] at the first output sample (ship track measured from that sample).
    """

    wave: np.ndarray
    motions: np.ndarray
    clean: Mapping[str, np.ndarray]
    roll_linear: np.ndarray
    omega: np.ndarray
    theta: np.ndarray
    amplitude: np.ndarray
    phase: np.ndarray


def random_wander(duration: float, fs: float, std: float, time_scale: float, seed=None) -> np.ndarray:
    """A smooth zero-mean random wander (Ornstein-Uhlenbeck process) on the sample grid.

    Use it to perturb heading or speed: ``heading = psi0 + random_wander(...)``.

    Parameters
    ----------
    duration : float
        Record length, > 0. [s]
    fs : float
        Sample rate, > 0. [Hz]
    std : float
        Stationary standard deviation, >= 0. [unit of the perturbed quantity]
    time_scale : float
        Correlation time τ of the process, > 0. [s]
    seed : int or numpy.random.Generator, optional
        Random seed.

    Returns
    -------
    numpy.ndarray, shape (floor(duration·fs) + 1,)
        x_{k+1} = x_k e^{−Δt/τ} + std·sqrt(1 − e^{−2Δt/τ})·n_k, x_0 ~ N(0, std²) (exact
        discretisation). [unit of std]

    References
    ----------
    .. [1] Gillespie, D. T. (1996). Exact numerical simulation of the Ornstein-Uhlenbeck process
       and its integral. *Phys. Rev. E* 54(2), 2084-2091.
    """
    if not duration > 0 or not fs > 0 or not time_scale > 0 or not std >= 0:
        raise ValueError(
            f"random_wander: need duration > 0 s, fs > 0 Hz, time_scale > 0 s, std >= 0; got "
            f"duration={duration!r}, fs={fs!r}, time_scale={time_scale!r}, std={std!r}"
        )
    rng = np.random.default_rng(seed)
    n = int(np.floor(duration * fs + 1e-9)) + 1
    rho = np.exp(-1.0 / (fs * time_scale))
    noise = rng.standard_normal(n)
    x = np.empty(n)
    x[0] = std * noise[0]
    scale = std * np.sqrt(1.0 - rho**2)
    for i in range(1, n):
        x[i] = rho * x[i - 1] + scale * noise[i]
    return x


# ---------------------------------------------------------------------------------------------
# wave components
# ---------------------------------------------------------------------------------------------


def _spectrum_arrays(spectrum):
    if isinstance(spectrum, tuple | list):
        if len(spectrum) != 3:
            raise ValueError(
                f"simulate: spectrum tuple must be (omega, theta, density), got {len(spectrum)} items"
            )
        from estimator.spectra import DirectionalSpectrum

        spectrum = DirectionalSpectrum(*spectrum)
    try:
        omega = np.asarray(spectrum.omega, dtype=float)
        theta = np.asarray(spectrum.theta, dtype=float)
        density = np.asarray(spectrum.density, dtype=float)
    except AttributeError:
        raise TypeError(
            "simulate: spectrum must be a DirectionalSpectrum or a tuple (omega, theta, density), "
            f"got {type(spectrum).__name__}"
        ) from None
    return omega, theta, density


def _components(spectrum, n_frequencies: int, n_directions: int, rng: np.random.Generator):
    """Component frequencies, directions and amplitudes, randomised within their bins."""
    omega, theta, density = _spectrum_arrays(spectrum)
    if n_frequencies < 2 or n_directions < 1:
        raise ValueError(
            f"simulate: need n_frequencies >= 2 and n_directions >= 1, got {n_frequencies}, {n_directions}"
        )
    edges = np.linspace(omega[0], omega[-1], n_frequencies + 1)
    d_omega = np.diff(edges)
    if theta.size == 1:
        # long-crested: all energy at theta[0]; S(ω) = density·2π (the DirectionalSpectrum weight)
        w = edges[:-1] + rng.random(n_frequencies) * d_omega
        s = np.interp(w, omega, density[:, 0] * TWO_PI)
        amp = np.sqrt(2.0 * s * d_omega)
        th = np.full(n_frequencies, theta[0])
    else:
        # one component per (frequency bin, direction bin), each at its own random position
        d_theta = TWO_PI / n_directions
        shape = (n_frequencies, n_directions)
        w = edges[:-1, None] + rng.random(shape) * d_omega[:, None]
        th = (np.arange(n_directions)[None, :] + rng.random(shape)) * d_theta
        # bilinear interpolation of the density, periodic in direction
        step = TWO_PI / theta.size
        pos = np.mod(th - theta[0], TWO_PI) / step
        j0 = np.floor(pos).astype(int) % theta.size
        j1 = (j0 + 1) % theta.size
        fw = pos - np.floor(pos)
        i1 = np.clip(np.searchsorted(omega, w, side="right"), 1, omega.size - 1)
        i0 = i1 - 1
        fo = np.clip((w - omega[i0]) / (omega[i1] - omega[i0]), 0.0, 1.0)
        s = (1 - fo) * ((1 - fw) * density[i0, j0] + fw * density[i0, j1]) + fo * (
            (1 - fw) * density[i1, j0] + fw * density[i1, j1]
        )
        amp = np.sqrt(2.0 * s * d_omega[:, None] * d_theta).ravel()
        w, th = w.ravel(), th.ravel()
    eps = rng.uniform(0.0, TWO_PI, amp.size)
    keep = amp > 0
    return w[keep], th[keep], amp[keep], eps[keep]


def _as_series(value, name: str, n: int, fs: float, t0: float) -> np.ndarray:
    if callable(value):
        out = np.asarray(value(t0 + np.arange(n) / fs), dtype=float)
        out = np.broadcast_to(out, (n,)).copy()
    else:
        arr = np.asarray(value, dtype=float)
        if arr.ndim == 0:
            out = np.full(n, float(arr))
        elif arr.shape == (n,):
            out = arr.copy()
        else:
            raise ValueError(
                f"simulate: {name} must be a scalar, a function of t or an array of {n} samples, "
                f"got shape {arr.shape}"
            )
    if not np.isfinite(out).all():
        i = int(np.argmax(~np.isfinite(out)))
        raise ValueError(f"simulate: {name} must be finite, got {float(out[i])!r} at sample {i}")
    return out


def _coefficients(rao, w, th, amp, psi, speed, g):
    """Coefficient matrix (N, _NCOL) at one heading and speed."""
    beta = np.mod(np.pi - (th - psi), TWO_PI)
    k = w**2 / g
    we = w - k * speed * np.cos(beta)
    h = np.asarray(rao(w, beta, speed), dtype=complex)
    if h.shape != (6, w.size):
        raise ValueError(f"simulate: rao(omega, beta, speed) must return shape (6, {w.size}), got {h.shape}")
    c = np.empty((w.size, _NCOL), dtype=complex)
    ha = h.T * amp[:, None]
    c[:, _DISP] = ha
    c[:, _ACC] = -(we**2)[:, None] * ha
    c[:, _WAVE] = amp
    c[:, _ROLL_VEL] = 1j * we * ha[:, 3]
    return c


def _real_form(c: np.ndarray) -> np.ndarray:
    """(2N, K) real matrix D with P.view(float) @ D == Re[P @ c] for complex P (N columns)."""
    d = np.empty((2 * c.shape[0], c.shape[1]))
    d[0::2] = c.real
    d[1::2] = -c.imag
    return d


def _synthesise(w, th, amp, eps, rao, psi, speed, fs, g, rao_update_s):
    """Real (n, _NCOL) series: Re[Σ_n C_n(t) e^{iφ_n(t)}]."""
    n = psi.size
    dt = 1.0 / fs
    # ship track (north, east) by the trapezoid rule, one extra sample for the last block end
    psi_x = np.append(psi, psi[-1])
    u_x = np.append(speed, speed[-1])
    vn, ve = u_x * np.cos(psi_x), u_x * np.sin(psi_x)
    north = np.concatenate(([0.0], np.cumsum(0.5 * (vn[1:] + vn[:-1]) * dt)))
    east = np.concatenate(([0.0], np.cumsum(0.5 * (ve[1:] + ve[:-1]) * dt)))
    k = w**2 / g
    kn, ke = k * np.cos(th), k * np.sin(th)
    steady = bool(np.all(psi == psi[0]) and np.all(speed == speed[0]))
    block = max(1, int(_BLOCK_BYTES // (16 * max(w.size, 1))))
    if not steady:
        block = max(1, min(block, int(round(rao_update_s * fs))))
    d_const = _real_form(_coefficients(rao, w, th, amp, psi[0], speed[0], g)) if steady else None
    out = np.empty((n, _NCOL))
    d_next = None
    p_buf = np.empty((min(block, n), w.size), dtype=complex)
    for s in range(0, n, block):
        m = min(block, n - s)
        e = s + m  # block end sample (exists in the extended track)
        ph0 = w * (s * dt) + kn * north[s] + ke * east[s] + eps
        ph1 = w * (e * dt) + kn * north[e] + ke * east[e] + eps
        step = np.exp(1j * (ph1 - ph0) / m)
        p = p_buf[:m]
        p[0] = np.exp(1j * ph0)
        for r in range(1, m):
            np.multiply(p[r - 1], step, out=p[r])
        pr = p.view(float)
        if steady:
            out[s:e] = pr @ d_const
        else:
            d_a = (
                d_next
                if d_next is not None
                else _real_form(_coefficients(rao, w, th, amp, psi[s], speed[s], g))
            )
            e_idx = min(e, n - 1)
            d_b = _real_form(_coefficients(rao, w, th, amp, psi[e_idx], speed[e_idx], g))
            frac = (np.arange(m) / m)[:, None]
            out[s:e] = (1 - frac) * (pr @ d_a) + frac * (pr @ d_b)
            d_next = d_b
    return out


def _nonlinear_roll(phidot_lin: np.ndarray, fs: float, model: NonlinearRoll):
    """δ, δ̇, δ̈ of the roll correction (module docstring), RK4 with linear interpolation of φ̇_lin."""
    w0, z, b2 = model.omega_roll, model.zeta, model.quadratic
    n = phidot_lin.size
    dt_out = 1.0 / fs
    n_sub = max(2, int(np.ceil(dt_out / (TWO_PI / w0 / 60.0))))
    h = dt_out / n_sub
    c1, c0 = 2.0 * z * w0, w0 * w0
    d = np.zeros(n)
    v = np.zeros(n)
    a = np.zeros(n)
    x, y = 0.0, 0.0
    pd = phidot_lin.tolist()

    def acc(x, y, p):
        q = p + y
        return -c1 * y - c0 * x - b2 * q * abs(q)

    a[0] = acc(0.0, 0.0, pd[0])
    for i in range(n - 1):
        p0, p1 = pd[i], pd[i + 1]
        for j in range(n_sub):
            fa = j / n_sub
            fm = (j + 0.5) / n_sub
            fb = (j + 1) / n_sub
            pa = p0 + (p1 - p0) * fa
            pm = p0 + (p1 - p0) * fm
            pb = p0 + (p1 - p0) * fb
            k1x, k1v = y, acc(x, y, pa)
            k2x, k2v = y + 0.5 * h * k1v, acc(x + 0.5 * h * k1x, y + 0.5 * h * k1v, pm)
            k3x, k3v = y + 0.5 * h * k2v, acc(x + 0.5 * h * k2x, y + 0.5 * h * k2v, pm)
            k4x, k4v = y + h * k3v, acc(x + h * k3x, y + h * k3v, pb)
            x += h / 6.0 * (k1x + 2 * k2x + 2 * k3x + k4x)
            y += h / 6.0 * (k1v + 2 * k2v + 2 * k3v + k4v)
        d[i + 1], v[i + 1] = x, y
        a[i + 1] = acc(x, y, p1)
    return d, v, a


def simulate(
    spectrum,
    rao: Callable,
    *,
    heading,
    speed,
    duration: float,
    fs: float = 2.0,
    sensor_xyz=(0.0, 0.0, 0.0),
    seed=None,
    n_frequencies: int = 300,
    n_directions: int = 72,
    noise_std: Mapping[str, float] | None = None,
    nonlinear_roll: NonlinearRoll | None = None,
    channels=CHANNELS,
    t0: float = 0.0,
    rao_update_s: float = 60.0,
    g: float = G,
    return_truth: bool = False,
):
    """Simulate a motion-sensor record of a ship in a short-crested (or long-crested) sea.

    Parameters
    ----------
    spectrum : DirectionalSpectrum or tuple (omega, theta, density)
        Directional wave spectrum, θ the true direction the waves come FROM [rad], density
        [m²·s/rad²] (see :class:`estimator.spectra.DirectionalSpectrum`). With a single direction
        the sea is long-crested and S(ω) = 2π·density[:, 0] (the DirectionalSpectrum weight).
    rao : callable
        ``rao(omega, beta, speed)`` → complex (6, N) motion RAOs at the origin (ITTC axes and
        signs, rad/m for rotations, phase lead, signed-ω_e convention), e.g. an
        :class:`estimator.rao.RAOTable`.
    heading : float, callable or array_like
        Ship true heading ψ: a constant, a function of time t [s] (same time axis as the output,
        i.e. including ``t0``) or an array with one value per output sample. [rad]
    speed : float, callable or array_like
        Speed through water, same forms. [m/s]
    duration : float
        Record length, > 0; the record has floor(duration·fs) + 1 samples. [s]
    fs : float
        Sample rate, > 0. [Hz]
    sensor_xyz : sequence of 3 floats
        Sensor position in ITTC body axes (x forward, y port, z up from the origin). [m]
    seed : int or numpy.random.Generator, optional
        Random seed (frequencies, directions, phases, noise).
    n_frequencies, n_directions : int
        Number of frequency bins (over the spectrum's ω range) and direction bins (over the full
        circle); one component per bin pair, at a random position inside the bin. [-]
    noise_std : mapping of str to float, optional
        Standard deviation of additive white Gaussian noise per channel. [channel unit]
    nonlinear_roll : NonlinearRoll, optional
        Replace the linear roll by the quadratic-damping roll model (module docstring).
    channels : sequence of str
        Channels to output, from :data:`estimator.prep.CHANNELS`.
    t0 : float
        Time of the first sample. [s]
    rao_update_s : float
        Interval at which RAOs are re-evaluated when heading or speed vary. [s]
    g : float
        Acceleration of gravity. [m/s²]
    return_truth : bool
        Also return a :class:`SimulationTruth`.

    Returns
    -------
    Record or (Record, SimulationTruth)
        The simulated record (SI, sensor conventions), heading wrapped to [0, 2π).

    Raises
    ------
    ValueError
        Bad duration, rate, channel name, noise entry, heading/speed series or RAO output shape.

    References
    ----------
    See the module docstring ([1]-[6]).
    """
    if not np.isfinite(duration) or duration <= 0:
        raise ValueError(f"simulate: duration must be > 0 s, got {duration!r}")
    if not np.isfinite(fs) or fs <= 0:
        raise ValueError(f"simulate: fs must be > 0 Hz, got {fs!r}")
    channels = tuple(channels)
    bad = [c for c in channels if c not in CHANNELS]
    if bad or not channels:
        raise ValueError(f"simulate: unknown channel(s) {bad}; allowed: {', '.join(CHANNELS)}")
    noise_std = dict(noise_std or {})
    for c, v in noise_std.items():
        if c not in channels:
            raise ValueError(
                f"simulate: noise_std given for {c!r}, which is not an output channel {channels}"
            )
        if not np.isfinite(v) or v < 0:
            raise ValueError(f"simulate: noise_std[{c!r}] must be >= 0, got {v!r}")
    try:
        sx, sy, sz = (float(v) for v in sensor_xyz)
    except (TypeError, ValueError):
        raise ValueError(
            f"simulate: sensor_xyz must be three numbers (x, y, z) [m], got {sensor_xyz!r}"
        ) from None
    rng = np.random.default_rng(seed)
    n = int(np.floor(duration * fs + 1e-9)) + 1
    psi = _as_series(heading, "heading", n, fs, t0)
    u = _as_series(speed, "speed", n, fs, t0)
    if (u < 0).any():
        raise ValueError(f"simulate: speed must be >= 0 m/s, got {float(u.min())!r}")
    w, th, amp, eps = _components(spectrum, int(n_frequencies), int(n_directions), rng)

    n_spin = 0
    if nonlinear_roll is not None:
        n_spin = int(np.ceil(10 * TWO_PI / nonlinear_roll.omega_roll * fs))
    psi_all = np.concatenate((np.full(n_spin, psi[0]), psi))
    u_all = np.concatenate((np.full(n_spin, u[0]), u))
    series = _synthesise(w, th, amp, eps, rao, psi_all, u_all, fs, g, rao_update_s)
    disp = series[:, _DISP].T.copy()  # (6, n_all)
    acc = series[:, _ACC].T.copy()
    roll_lin = disp[3].copy()
    if nonlinear_roll is not None:
        dd, _, da = _nonlinear_roll(series[:, _ROLL_VEL], fs, nonlinear_roll)
        disp[3] += dd
        acc[3] += da
    disp, acc = disp[:, n_spin:], acc[:, n_spin:]
    # phases at the first output sample (the spin-up runs at the initial heading and speed)
    k_n = w**2 / g
    phase0 = np.mod(eps + (n_spin / fs) * (w + k_n * u[0] * np.cos(th - psi[0])), TWO_PI)
    wave = series[n_spin:, _WAVE]
    roll_lin = roll_lin[n_spin:]

    # rigid-body kinematics at the sensor (ITTC axes), then sensor conventions
    phi, theta_p, yaw = disp[3], disp[4], disp[5]
    a_phi, a_theta, a_yaw = acc[3], acc[4], acc[5]
    heave = disp[2] + sy * phi - sx * theta_p
    ax = acc[0] + a_theta * sz - a_yaw * sy
    ay = acc[1] + a_yaw * sx - a_phi * sz
    az = acc[2] + a_phi * sy - a_theta * sx
    clean_all = {
        "roll": phi,
        "pitch": -theta_p,
        "heave": heave,
        "acc_x": ax - g * theta_p,
        "acc_y": -(ay + g * phi),
        "acc_z": -az,
    }
    del yaw
    clean = {c: clean_all[c] for c in channels}
    measured = {}
    for c in channels:
        sd = noise_std.get(c, 0.0)
        measured[c] = clean[c] + (sd * rng.standard_normal(n) if sd > 0 else 0.0)
    t = t0 + np.arange(n) / fs
    record = Record(t=t, channels=measured, heading=np.mod(psi, TWO_PI), speed=u)
    if not return_truth:
        return record
    truth = SimulationTruth(
        wave=wave,
        motions=disp,
        clean=MappingProxyType(clean),
        roll_linear=roll_lin,
        omega=w,
        theta=th,
        amplitude=amp,
        phase=phase0,
    )
    return record, truth
