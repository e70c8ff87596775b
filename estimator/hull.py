"""Response amplitude operators estimated from a ship's main particulars.

For ships with no hydrodynamic data the service needs a first estimate of the six transfer functions
(RAOs) from a handful of numbers: length, beam, draft, block coefficient, GM and, if known, the natural
roll period, the roll damping and the height of the centre of gravity.

* heave and pitch: the closed-form expressions of Jensen, Mansour & Olsen (2004) [1]_ for a
  homogeneous box-shaped hull of equal displacement, with complex phases kept (see
  :func:`jmo_heave_pitch`);
* roll: a single-degree-of-freedom forced vibration with wave-slope excitation [2]_, [3]_, natural
  period from the IMO IS Code 2008 weather criterion [4]_ when it is not given, and an equivalent
  linear damping ratio (see :func:`roll_rao_1dof`);
* surge, sway and yaw: a project approximation, the rigid-body motion of the same box following the
  undisturbed horizontal orbital displacement of the water averaged over its volume (the long-wave
  Froude-Krylov limit, see :func:`horizontal_motions_froude_krylov`).

Conventions (DEVELOPERS.md, docs/conventions.md): ITTC body axes with the origin at midship on the
calm waterline, x forward, y to port, z up; roll + starboard side down, pitch + bow down, yaw + bow to
port; relative wave heading ``beta`` with pi = head seas and pi/2 = waves from starboard; wave
elevation at the origin Re[a exp(i omega_e t)], response Re[H a exp(i omega_e t)] with the signed
encounter frequency omega_e = omega - omega**2 U cos(beta) / g; the wave elevation at (x, y) is
a exp(-i k (x cos(beta) + y sin(beta))), so the waves travel along (cos(beta), sin(beta)).

References
----------
.. [1] J. J. Jensen, A. E. Mansour and A. S. Olsen, "Estimation of ship motions using closed-form
   expressions", Ocean Engineering, vol. 31, no. 1, pp. 61-85, 2004.
   doi:10.1016/S0029-8018(03)00108-2
.. [2] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*,
   1990 (rigid-body equations of motion, strip theory, relative-motion hypothesis).
.. [3] E. V. Lewis (ed.), *Principles of Naval Architecture*, 2nd rev., vol. III, "Motions in
   Waves and Controllability", 1989 (single-degree-of-freedom roll in regular beam waves,
   effective wave slope).
.. [4] IMO, *International Code on Intact Stability, 2008* (2008 IS Code), resolution MSC.267(85),
   Part A, 2.3 "Severe wind and rolling criterion (weather criterion)".
"""

from __future__ import annotations

import math

import numpy as np

from estimator.constants import RHO_SEAWATER, G
from estimator.rao import RAOTable

__all__ = [
    "jmo_heave_pitch",
    "is_code_roll_coefficient",
    "roll_period_is_code",
    "gm_from_roll_period",
    "effective_wave_slope_coefficient",
    "roll_damping_coefficient",
    "roll_rao_1dof",
    "horizontal_motions_froude_krylov",
    "estimate_rao_table",
]

# --------------------------------------------------------------------------------------------------
# validation helpers


def _positive(name: str, value: float, unit: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a positive number {unit}, got {value!r}") from None
    if not (math.isfinite(v) and v > 0.0):
        raise ValueError(f"{name} must be a positive finite number {unit}, got {value!r}")
    return v


def _array(name: str, value, unit: str, *, positive: bool = False, nonnegative: bool = False):
    a = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(a)):
        raise ValueError(f"{name} must be finite {unit}, got non-finite values in {value!r}")
    if positive and np.any(a <= 0.0):
        raise ValueError(f"{name} must be > 0 {unit}, got minimum {float(a.min())!r}")
    if nonnegative and np.any(a < 0.0):
        raise ValueError(f"{name} must be >= 0 {unit}, got minimum {float(a.min())!r}")
    return a


def _block_coefficient(cb: float) -> float:
    try:
        v = float(cb)
    except (TypeError, ValueError):
        raise ValueError(f"cb (block coefficient) must be a number in (0, 1], got {cb!r}") from None
    if not (math.isfinite(v) and 0.0 < v <= 1.0):
        raise ValueError(f"cb (block coefficient) must be in (0, 1], got {cb!r}")
    return v


# --------------------------------------------------------------------------------------------------
# small analytic kernels (even/odd functions written so that they are exact at u = 0)


def _sinc(u):
    """sin(u)/u with the limit 1 at u = 0 [-]."""
    return np.sinc(np.asarray(u, dtype=float) / np.pi)


def _j(u):
    """3 (sin u - u cos u) / u**3, limit 1 at u = 0 (3 j1(u)/u, j1 the spherical Bessel function) [-]."""
    u = np.asarray(u, dtype=float)
    small = np.abs(u) < 1e-3
    us = np.where(small, 1.0, u)
    exact = 3.0 * (np.sin(us) - us * np.cos(us)) / us**3
    series = 1.0 - u**2 / 10.0 + u**4 / 280.0
    return np.where(small, series, exact)


def _encounter(omega, beta, speed):
    """Signed encounter frequency omega - omega**2 U cos(beta) / g (deep water) [rad/s]."""
    return omega - omega**2 * speed * np.cos(beta) / G


# --------------------------------------------------------------------------------------------------
# heave and pitch


def jmo_heave_pitch(omega, beta, speed, lpp, beam, draft, cb):
    """Complex heave and pitch transfer functions from main particulars (Jensen, Mansour & Olsen 2004).

    The ship is replaced by a homogeneously loaded box of length ``lpp``, draft ``draft`` and breadth
    ``cb * beam`` (same displacement as the ship). The amplitudes are exactly the closed-form
    expressions of [1]_; the phases come from the complex form of the same strip-theory equations
    (see Notes).

    Parameters
    ----------
    omega : array_like
        Wave (absolute) circular frequency, > 0. [rad/s]
    beta : array_like
        Relative wave heading, ITTC: pi = head seas, 0 = following seas. [rad]
    speed : array_like
        Ship speed through the water, >= 0. [m/s]
    lpp : float
        Length between perpendiculars. [m]
    beam : float
        Moulded breadth B0. [m]
    draft : float
        Draft T at midship. [m]
    cb : float
        Block coefficient, in (0, 1]. [-]

    Returns
    -------
    heave : ndarray of complex
        Heave of the origin per unit wave amplitude, + up, phase lead relative to the wave elevation
        at the origin. Shape: ``omega``, ``beta`` and ``speed`` broadcast together. [m/m]
    pitch : ndarray of complex
        Pitch per unit wave amplitude, + bow down (ITTC). [rad/m]

    Notes
    -----
    With k = omega**2/g, Fn = U/sqrt(g L), B = C_B B0, alpha = 1 - Fn sqrt(kL) cos(beta)
    (so omega_e = alpha omega), k_x = k cos(beta), k_e = |k_x|, u = k_x L/2 ([1]_, section 2):

    .. math::

        A = 2 \\sin(k B \\alpha^2/2)\\, e^{-k T \\alpha^2}, \\qquad \\kappa = e^{-k_e T}

        f_c = (1 - kT) + i\\, \\frac{A^2}{k B |\\alpha|^3}, \\qquad
        \\eta_c = \\left[1 - 2kT\\alpha^2 + i\\,\\mathrm{sgn}(\\alpha) \\frac{A^2}{k B \\alpha^2}\\right]^{-1}

        H_3 = \\eta_c\\, \\kappa f_c\\, \\frac{\\sin u}{u}, \\qquad
        H_5 = i\\, \\eta_c\\, \\kappa f_c\\, k_x\\, \\frac{3(\\sin u - u\\cos u)}{u^3}

    |f_c|, |eta_c|, |H_3| and |H_5| are JMO's f, eta, heave and pitch (their F and G). The phases are
    a project derivation from the equations behind them: sectional excitation by the relative-motion
    hypothesis (rho g B - omega**2 a33 + i omega b33 times the wave elevation reduced by kappa, with
    a33 = rho B T and b33 = rho g**2 A**2/|omega_e|**3 as in [1]_, [2]_; the water moves with the
    absolute frequency, hence i omega), the heave/pitch equation -omega_e**2 (m + a) + i omega_e b + c
    with the *signed* omega_e (so the tables are continuous through omega_e = 0 and conjugate on the
    overtaking branch, docs/conventions.md), and the longitudinal integrals of exp(-i k_x x) and
    x exp(-i k_x x) over the box, with the pitch moment -integral x f_z dx (bow down positive).
    Consequences: in long waves the heave tends to 1 (in phase with the wave at the origin) and the
    pitch to i k cos(beta), the slope -d(zeta)/dx of the surface: in head seas the pitch is -i k, so
    the bow rises (pitch < 0) a quarter period before the crest reaches midship, while the crest
    approaches the bow.

    The Smith factor uses kappa = exp(-k_e T) as in Jensen, Mansour & Olsen (2004) [1]_,
    section 2 (from memory); some implementations use exp(-k T), which differs in
    oblique seas only.

    References
    ----------
    .. [1] J. J. Jensen, A. E. Mansour and A. S. Olsen, "Estimation of ship motions using
       closed-form expressions", Ocean Engineering 31(1), 61-85, 2004.
       doi:10.1016/S0029-8018(03)00108-2
    .. [2] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*, 1990, ch. 3-4 (relative-motion strip
       theory).

    Examples
    --------
    >>> heave, pitch = jmo_heave_pitch(0.5, np.pi, 15 * 1852 / 3600, 200.0, 32.2, 11.0, 0.65)
    >>> round(float(abs(heave)), 4), round(float(abs(pitch)), 6)
    (0.3785, 0.021297)
    """
    lpp = _positive("lpp", lpp, "[m]")
    beam = _positive("beam", beam, "[m]")
    draft = _positive("draft", draft, "[m]")
    cb = _block_coefficient(cb)
    omega = _array("omega", omega, "[rad/s]", positive=True)
    beta = _array("beta", beta, "[rad]")
    speed = _array("speed", speed, "[m/s]", nonnegative=True)
    omega, beta, speed = np.broadcast_arrays(omega, beta, speed)

    b = cb * beam  # [1]: breadth reduced to keep the displacement
    k = omega**2 / G
    alpha = _encounter(omega, beta, speed) / omega  # = 1 - Fn sqrt(kL) cos(beta)
    kx = k * np.cos(beta)
    ke = np.abs(kx)
    a2 = alpha**2
    x = 0.5 * k * b * a2
    # A = 2 sin(k B alpha^2/2) exp(-k T alpha^2) = k B alpha^2 sinc(x) exp(-k T alpha^2); written this
    # way the damping terms below stay finite at alpha = 0 (omega_e = 0).
    a_over_a2 = k * b * _sinc(x) * np.exp(-k * draft * a2)  # A / alpha^2
    damp_eta = a_over_a2**2 * a2 / (k * b)  # A^2 / (k B alpha^2)
    damp_f = a_over_a2**2 * np.abs(alpha) / (k * b)  # A^2 / (k B |alpha|^3)
    kappa = np.exp(-ke * draft)  # Smith correction, [1] with k_e (Jensen, Mansour & Olsen 2004, from memory)
    f_c = (1.0 - k * draft) + 1j * damp_f
    eta_c = 1.0 / ((1.0 - 2.0 * k * draft * a2) + 1j * np.sign(alpha) * damp_eta)
    u = 0.5 * kx * lpp
    common = eta_c * kappa * f_c
    heave = common * _sinc(u)
    pitch = 1j * common * kx * _j(u)
    return heave, pitch


# --------------------------------------------------------------------------------------------------
# roll


def is_code_roll_coefficient(beam, draft, lwl):
    """Coefficient C of the IMO IS Code 2008 roll-period formula.

    Parameters
    ----------
    beam : float
        Moulded breadth B. [m]
    draft : float
        Mean moulded draft d. [m]
    lwl : float
        Length of the waterline L_wl. [m]

    Returns
    -------
    float
        C = 0.373 + 0.023 B/d - 0.043 L_wl/100. [-]

    References
    ----------
    .. [1] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3.4 (weather criterion, roll period T = 2 C B / sqrt(GM)).
    """
    beam = _positive("beam", beam, "[m]")
    draft = _positive("draft", draft, "[m]")
    lwl = _positive("lwl", lwl, "[m]")
    return 0.373 + 0.023 * beam / draft - 0.043 * lwl / 100.0


def roll_period_is_code(beam, draft, lwl, gm):
    """Natural roll period from the IMO IS Code 2008 weather criterion.

    Parameters
    ----------
    beam : float
        Moulded breadth B. [m]
    draft : float
        Mean moulded draft d. [m]
    lwl : float
        Length of the waterline L_wl. [m]
    gm : float
        Transverse metacentric height corrected for free surface, > 0. [m]

    Returns
    -------
    float
        T = 2 C B / sqrt(GM), C from :func:`is_code_roll_coefficient`. [s]

    Notes
    -----
    The formula has B in metres and GM in metres and gives seconds (the factor 2/sqrt(g) times the
    roll radius of gyration is folded into C). It is an empirical fit meant for the weather
    criterion; it implies a virtual roll radius of gyration C B sqrt(g)/pi, about 0.35 B for usual
    proportions.

    References
    ----------
    .. [1] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3.4.

    Examples
    --------
    >>> round(roll_period_is_code(32.2, 11.0, 200.0, 1.5), 2)
    18.63
    """
    gm = _positive("gm", gm, "[m]")
    return 2.0 * is_code_roll_coefficient(beam, draft, lwl) * float(beam) / math.sqrt(gm)


def gm_from_roll_period(beam, draft, lwl, t_roll):
    """Transverse GM implied by a natural roll period, inverting the IMO IS Code 2008 formula.

    Parameters
    ----------
    beam : float
        Moulded breadth B. [m]
    draft : float
        Mean moulded draft d. [m]
    lwl : float
        Length of the waterline L_wl. [m]
    t_roll : float
        Natural roll period, > 0. [s]

    Returns
    -------
    float
        GM = (2 C B / T)**2. [m]

    References
    ----------
    .. [1] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3.4 (inverted; the same relation is the basis of roll-period GM estimates at sea).
    """
    t_roll = _positive("t_roll", t_roll, "[s]")
    return (2.0 * is_code_roll_coefficient(beam, draft, lwl) * float(beam) / t_roll) ** 2


def effective_wave_slope_coefficient(kg, draft):
    """Effective wave slope coefficient r of the IMO IS Code 2008 weather criterion.

    Parameters
    ----------
    kg : float
        Height of the centre of gravity above the keel, > 0. [m]
    draft : float
        Mean moulded draft d. [m]

    Returns
    -------
    float
        r = 0.73 + 0.6 OG/d with OG = KG - d (positive when G is above the waterline). [-]

    References
    ----------
    .. [1] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3.4 (roll-back angle, factor r).
    """
    kg = _positive("kg", kg, "[m]")
    draft = _positive("draft", draft, "[m]")
    # KG > 0 gives OG/d > -1, hence r > 0.13: always positive
    return 0.73 + 0.6 * (kg - draft) / draft


def roll_damping_coefficient(zeta, t_roll, gm, displacement_volume, rho=RHO_SEAWATER):
    """Equivalent linear roll damping coefficient for a given damping ratio.

    Parameters
    ----------
    zeta : float
        Equivalent linear damping ratio (fraction of critical), > 0. [-]
    t_roll : float
        Natural roll period. [s]
    gm : float
        Transverse metacentric height. [m]
    displacement_volume : float
        Displaced volume. [m³]
    rho : float, optional
        Water density. [kg/m³]

    Returns
    -------
    float
        B44 = 2 zeta sqrt((I44 + A44) C44) = 2 zeta C44 / omega_phi, with C44 = rho g V GM and
        I44 + A44 = C44 / omega_phi**2, omega_phi = 2 pi / T. [N·m·s/rad]

    Notes
    -----
    The roll equation of motion (I44 + A44) phi'' + B44 phi' + C44 phi = M(t) is the
    parameterisation behind :func:`roll_rao_1dof`: its natural frequency is omega_phi and its
    damping ratio zeta = B44 / (2 sqrt((I44 + A44) C44)) ([1]_, [2]_). Typical equivalent zeta:
    0.02-0.05 for a bare hull at zero speed, 0.05-0.10 with bilge keels (from memory, [2]_).

    References
    ----------
    .. [1] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*, 1990, ch. 2 and 7 (linear
       mass-spring-damper, roll damping).
    .. [2] E. V. Lewis (ed.), *Principles of Naval Architecture*, 2nd rev., vol. III, 1989,
       ch. 8 (roll damping, equivalent linearisation).
    """
    zeta = _positive("zeta", zeta, "[-]")
    t_roll = _positive("t_roll", t_roll, "[s]")
    gm = _positive("gm", gm, "[m]")
    vol = _positive("displacement_volume", displacement_volume, "[m³]")
    rho = _positive("rho", rho, "[kg/m³]")
    c44 = rho * G * vol * gm
    return 2.0 * zeta * c44 / (2.0 * math.pi / t_roll)


def roll_rao_1dof(omega, beta, speed, t_roll, zeta, r=1.0):
    """Complex roll transfer function of a single-degree-of-freedom roll model.

    Parameters
    ----------
    omega : array_like
        Wave (absolute) circular frequency, > 0. [rad/s]
    beta : array_like
        Relative wave heading, ITTC: pi/2 = waves from starboard, 3 pi/2 = from port. [rad]
    speed : array_like
        Ship speed through the water, >= 0. [m/s]
    t_roll : float
        Natural roll period T_phi (e.g. from :func:`roll_period_is_code`). [s]
    zeta : float
        Equivalent linear roll damping ratio, > 0 (see :func:`roll_damping_coefficient`). [-]
    r : float, optional
        Effective wave slope coefficient (fraction of the maximum wave slope that excites roll),
        e.g. from :func:`effective_wave_slope_coefficient`; default 1.0, the full wave slope. [-]

    Returns
    -------
    ndarray of complex
        Roll per unit wave amplitude, + starboard side down (ITTC), phase lead relative to the wave
        elevation at the origin; shape of the broadcast inputs. [rad/m]

    Notes
    -----
    The roll moment is taken as the hydrostatic moment of the effective wave slope,
    M = C44 r dzeta/dy at the origin ([2]_, [3]_), and the response is that of
    (I44 + A44) phi'' + B44 phi' + C44 phi = M with natural frequency omega_phi = 2 pi/T_phi and
    damping ratio zeta, evaluated at the signed encounter frequency omega_e:

    .. math::

        H_4 = \\frac{-i\\, k\\, r \\sin\\beta}{1 - \\Lambda^2 + 2 i \\zeta \\Lambda},
        \\qquad \\Lambda = \\omega_e / \\omega_\\phi, \\quad k = \\omega^2/g

    so that |H_4| = k r |sin(beta)| / sqrt((1 - Lambda**2)**2 + (2 zeta Lambda)**2), the standard
    one-degree-of-freedom form (from memory) [1]_, [2]_, [3]_.

    Sign (project derivation): the wave elevation across the ship is exp(-i k y sin(beta)), so its
    transverse slope at the origin is dzeta/dy = -i k sin(beta). A surface rising towards port
    (dzeta/dy > 0) heels a raft-like body port side up, i.e. starboard side down = positive ITTC
    roll. Hence the long-wave limit -i k r sin(beta): with waves from starboard (beta = pi/2) the
    ship is heeled most to starboard a quarter period *after* the crest has passed midship, when
    the crest is on the port side, the trough on the starboard side and the surface slopes up
    towards port; from port (beta = 3 pi/2) the sign reverses. capytaine 3.0.0 gives the same sign
    (+i k in its exp(-i omega t) convention for a box in long beam waves; capytaine, Ancellet &
    Dias 2019, measured here).

    The signed Lambda makes the table continuous through omega_e = 0 and conjugate on the branch
    where the ship overtakes the waves (docs/conventions.md). Length and beam averaging of the
    slope (short oblique waves) and sway-roll coupling are not modelled, which overestimates roll in
    short oblique waves.

    References
    ----------
    .. [1] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3 (roll in beam waves with effective wave slope r and damping, the basis of the weather
       criterion).
    .. [2] E. V. Lewis (ed.), *Principles of Naval Architecture*, 2nd rev., vol. III, 1989,
       ch. 8, section 4 (rolling in regular beam waves, effective wave slope).
    .. [3] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*, 1990, ch. 2 (linear
       single-degree-of-freedom response).

    Examples
    --------
    >>> w = 2 * np.pi / 18.63
    >>> round(float(abs(roll_rao_1dof(w, np.pi / 2, 0.0, 18.63, 0.05, 0.75))) / (w**2 / 9.81), 2)
    7.5
    """
    omega = _array("omega", omega, "[rad/s]", positive=True)
    beta = _array("beta", beta, "[rad]")
    speed = _array("speed", speed, "[m/s]", nonnegative=True)
    t_roll = _positive("t_roll", t_roll, "[s]")
    zeta = _positive("zeta", zeta, "[-]")
    r = _positive("r", r, "[-]")
    omega, beta, speed = np.broadcast_arrays(omega, beta, speed)
    k = omega**2 / G
    lam = _encounter(omega, beta, speed) * t_roll / (2.0 * np.pi)
    excitation = -1j * k * r * np.sin(beta)  # r times the transverse wave slope at the origin
    return excitation / ((1.0 - lam**2) + 2j * zeta * lam)


# --------------------------------------------------------------------------------------------------
# surge, sway, yaw


def horizontal_motions_froude_krylov(omega, beta, lpp, beam, draft, cb):
    """Surge, sway and yaw of a box that follows the volume-averaged horizontal orbital motion.

    Project approximation for the three horizontal motions, which have no restoring force: the
    equivalent box of :func:`jmo_heave_pitch` (length ``lpp``, breadth ``cb * beam``, draft
    ``draft``) moves as a rigid body with the undisturbed horizontal water displacement averaged
    over its volume. This is exact in the long-wave limit, where the Froude-Krylov force plus the
    added-mass part of the diffraction force accelerate mass plus added mass exactly like the water
    ([1]_, G. I. Taylor's long-wave limit), and it is a smooth, documented guess in shorter waves.

    Parameters
    ----------
    omega : array_like
        Wave (absolute) circular frequency, > 0. [rad/s]
    beta : array_like
        Relative wave heading, ITTC (pi = head seas, pi/2 = waves from starboard). [rad]
    lpp, beam, draft : float
        Length between perpendiculars, moulded breadth, draft. [m]
    cb : float
        Block coefficient, in (0, 1]. [-]

    Returns
    -------
    surge, sway : ndarray of complex
        Per unit wave amplitude, + forward / + to port. [m/m]
    yaw : ndarray of complex
        Per unit wave amplitude, + bow to port. [rad/m]

    Notes
    -----
    In deep water a wave exp(i omega t - i k (x cos(beta) + y sin(beta))) moves the water at depth z
    horizontally by -i e^{kz} along the travel direction (cos(beta), sin(beta)) per unit amplitude
    (a quarter period behind the elevation, [1]_). Averaging over the box (u = k cos(beta) L/2,
    v = k sin(beta) B/2; project derivation):

    .. math::

        D = \\frac{\\sin u}{u} \\frac{\\sin v}{v} \\frac{1 - e^{-kT}}{kT}, \\quad
        H_1 = -i\\cos\\beta\\, D, \\quad H_2 = -i \\sin\\beta\\, D, \\quad
        H_6 = -k \\sin\\beta\\cos\\beta\\, \\frac{3(\\sin u - u\\cos u)}{u^3}
              \\frac{\\sin v}{v}\\frac{1 - e^{-kT}}{kT}

    Yaw is the least-squares rotation of the lateral displacement along the hull (moment of the
    lateral force over the yaw inertia of the homogeneous box, L**2/12 per unit mass). Rudder,
    autopilot, propeller and the hull's lift are ignored; sway-roll coupling is ignored. Accuracy
    beyond the long-wave trend is not claimed.

    References
    ----------
    .. [1] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*, 1990, ch. 2 (linear wave kinematics,
       Froude-Krylov and diffraction forces in long
       waves).
    """
    lpp = _positive("lpp", lpp, "[m]")
    beam = _positive("beam", beam, "[m]")
    draft = _positive("draft", draft, "[m]")
    cb = _block_coefficient(cb)
    omega = _array("omega", omega, "[rad/s]", positive=True)
    beta = _array("beta", beta, "[rad]")
    omega, beta = np.broadcast_arrays(omega, beta)
    b = cb * beam
    k = omega**2 / G
    c, s = np.cos(beta), np.sin(beta)
    u = 0.5 * k * c * lpp
    v = 0.5 * k * s * b
    kt = k * draft
    depth = -np.expm1(-kt) / kt  # (1 - exp(-kT)) / (kT), average of exp(kz) over the draft
    d = _sinc(u) * _sinc(v) * depth
    surge = -1j * c * d
    sway = -1j * s * d
    yaw = (-k * s * c * _j(u) * _sinc(v) * depth).astype(complex)
    return surge, sway, yaw


# --------------------------------------------------------------------------------------------------
# the whole table

DEFAULT_ZETA_ROLL = 0.05
"""Default equivalent linear roll damping ratio [-]: the upper end of the bare-hull range and the
lower end of the bilge-keel range, 0.02-0.10 (from memory, Lewis 1989 PNA vol. III ch. 8; common
practice)."""


def estimate_rao_table(
    lpp,
    beam,
    draft,
    cb,
    gm,
    *,
    speeds,
    headings,
    omegas,
    t_roll=None,
    zeta_roll=DEFAULT_ZETA_ROLL,
    kg=None,
    lwl=None,
    name="",
):
    """Estimate the six RAOs of a ship from its main particulars, as an RAO table.

    Parameters
    ----------
    lpp : float
        Length between perpendiculars. [m]
    beam : float
        Moulded breadth. [m]
    draft : float
        Mean draft of the loading condition. [m]
    cb : float
        Block coefficient at that draft, in (0, 1]. [-]
    gm : float
        Transverse metacentric height, corrected for free surface, > 0. [m]
    speeds : array_like, shape (NS,)
        Ship speeds through the water, ascending, >= 0. [m/s]
    headings : array_like, shape (NH,)
        Relative wave headings beta (ITTC, pi = head seas), ascending. Headings within [0, pi]
        are completed to the full circle by port/starboard symmetry; otherwise they must cover
        the circle (see :class:`estimator.rao.RAOTable`). [rad]
    omegas : array_like, shape (NW,)
        Absolute wave frequencies, ascending, > 0. [rad/s]
    t_roll : float, optional
        Natural roll period; default from :func:`roll_period_is_code` with ``gm``. [s]
    zeta_roll : float, optional
        Equivalent linear roll damping ratio (default :data:`DEFAULT_ZETA_ROLL`). [-]
    kg : float, optional
        Centre of gravity above keel; when given, the effective wave slope coefficient
        r = 0.73 + 0.6 (KG - d)/d of the IS Code [4]_, otherwise r = 1 (the full wave slope,
        conservative). [m]
    lwl : float, optional
        Waterline length for the IS Code period formula; default ``lpp``. [m]
    name : str, optional
        Label stored in the table (e.g. the loading condition).

    Returns
    -------
    estimator.rao.RAOTable
        Complex RAOs (surge, sway, heave, roll, pitch, yaw) of the origin of the body axes, ITTC
        signs, translations in m/m and rotations in rad/m, phase lead relative to the wave at the
        origin; ``source`` records the models and inputs.

    Notes
    -----
    heave, pitch: :func:`jmo_heave_pitch` [1]_; roll: :func:`roll_rao_1dof` [2]_, [3]_ with the
    period of [4]_ unless given; surge, sway, yaw: :func:`horizontal_motions_froude_krylov`
    (project approximation). All speed effects enter through the encounter frequency (and JMO's
    Froude-number terms); roll damping does not grow with speed here (lift damping ignored,
    conservative).

    References
    ----------
    .. [1] J. J. Jensen, A. E. Mansour and A. S. Olsen, Ocean Engineering 31(1), 61-85, 2004.
    .. [2] E. V. Lewis (ed.), *Principles of Naval Architecture*, 2nd rev., vol. III, 1989.
    .. [3] O. M. Faltinsen, *Sea Loads on Ships and Offshore Structures*, 1990.
    .. [4] IMO, *International Code on Intact Stability, 2008*, resolution MSC.267(85), Part A,
       2.3.
    """
    lpp = _positive("lpp", lpp, "[m]")
    beam = _positive("beam", beam, "[m]")
    draft = _positive("draft", draft, "[m]")
    cb = _block_coefficient(cb)
    gm = _positive("gm", gm, "[m]")
    lwl = lpp if lwl is None else _positive("lwl", lwl, "[m]")
    if t_roll is None:
        t_roll = roll_period_is_code(beam, draft, lwl, gm)
    t_roll = _positive("t_roll", t_roll, "[s]")
    zeta_roll = _positive("zeta_roll", zeta_roll, "[-]")
    r = 1.0 if kg is None else effective_wave_slope_coefficient(kg, draft)

    speeds = np.atleast_1d(_array("speeds", speeds, "[m/s]", nonnegative=True))
    headings = np.atleast_1d(_array("headings", headings, "[rad]"))
    omegas = np.atleast_1d(_array("omegas", omegas, "[rad/s]", positive=True))
    for axis_name, axis in (("speeds", speeds), ("headings", headings), ("omegas", omegas)):
        if axis.ndim != 1 or np.any(np.diff(axis) <= 0.0):
            raise ValueError(f"{axis_name} must be a strictly ascending 1-D array, got {axis!r}")

    s = speeds[:, None, None]
    b = headings[None, :, None]
    w = omegas[None, None, :]
    heave, pitch = jmo_heave_pitch(w, b, s, lpp, beam, draft, cb)
    roll = roll_rao_1dof(w, b, s, t_roll, zeta_roll, r)
    surge, sway, yaw = horizontal_motions_froude_krylov(w, b, lpp, beam, draft, cb)
    shape = heave.shape
    values = np.stack([np.broadcast_to(x, shape) for x in (surge, sway, heave, roll, pitch, yaw)])
    source = (
        "estimator.hull.estimate_rao_table: JMO 2004 heave/pitch, 1-DOF roll, Froude-Krylov "
        f"surge/sway/yaw; Lpp={lpp:g} m, B={beam:g} m, T={draft:g} m, CB={cb:g}, GM={gm:g} m, "
        f"T_roll={t_roll:.4g} s, zeta={zeta_roll:g}, r={r:.4g}"
    )
    mirror = bool(headings[0] >= 0.0 and headings[-1] <= np.pi + 1e-9)
    return RAOTable.from_arrays(speeds, headings, omegas, values, mirror=mirror, name=name, source=source)
