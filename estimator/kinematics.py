"""Rigid-body transfer of the six motion RAOs to a point of the ship, and relative motion.

All quantities are complex amplitudes per unit wave amplitude, with the time factor
exp(i ω_e t) and signed encounter frequency ω_e (docs/conventions.md): a response x(t) =
Re[H·a·exp(i ω_e t)]. Axes are the ITTC body axes (x forward, y to port, z up, origin midship on
the centreline at the calm waterline); η1..η6 = surge, sway, heave, roll (+ starboard down),
pitch (+ bow down), yaw (+ bow to port); rotations in rad/m.

Small-angle kinematics [1]_ [2]_: the displacement of the point r = (x, y, z) is
s = (η1, η2, η3) + (η4, η5, η6) × r, i.e.

    s_x = η1 − y·η6 + z·η5,   s_y = η2 + x·η6 − z·η4,   s_z = η3 + y·η4 − x·η5.

Velocity iω_e·s and acceleration −ω_e²·s are earth-fixed (inertial) to first order. A body-fixed
accelerometer, lashing or person feels the specific force f = a − g⃗ expressed in body axes; to
first order this adds the gravity component of the inclination: f_x = a_x − g·η5,
f_y = a_y + g·η4, f_z = a_z + g [1]_ [3]_.

References
----------
.. [1] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, §2.2 (rigid-body motion of a
   point, s = η + ω × r) and ch. 7 (relative
   vertical motion, deck wetness, slamming).
.. [2] Lewis, E. V. (ed.) (1989). *Principles of Naval Architecture*, vol. III, ch. 8
   "Motions in Waves" (motion at a point, relative motion at the bow).
.. [3] IMO MSC.1/Circ.1627 (2020), Interim guidelines on the second generation intact stability
   criteria, excessive-acceleration criterion: the lateral acceleration felt at a location
   includes the gravity component g·φ of the roll angle.
"""

from __future__ import annotations

import numpy as np

from estimator.constants import G

__all__ = [
    "point_displacement",
    "point_velocity",
    "point_acceleration",
    "vertical_acceleration",
    "lateral_specific_force",
    "longitudinal_specific_force",
    "wave_elevation_at_point",
    "relative_vertical_motion",
    "relative_vertical_velocity",
    "sensor_channels",
    "SENSOR_CHANNELS",
]

SENSOR_CHANNELS = ("roll", "pitch", "heave", "acc_x", "acc_y", "acc_z")
"""Channels a motion sensor reports, named as in the voyage log (docs/voyage-log.md)."""


def _rao6(rao6) -> np.ndarray:
    r = np.asarray(rao6)
    if r.ndim < 1 or r.shape[0] != 6:
        raise ValueError(
            f"rao6 must have the six motions (surge, sway, heave, roll, pitch, yaw) on its first axis, "
            f"got shape {r.shape}"
        )
    return r


def point_displacement(rao6, x, y, z) -> np.ndarray:
    """Displacement of a body point from the six motion RAOs (small angles) [1]_.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs at the origin: surge, sway, heave [m/m], roll, pitch, yaw [rad/m].
    x, y, z : float or array_like
        Point in ITTC body axes (x forward of midship, y to port, z up from the waterline) [m];
        broadcast with ``rao6[0]``.

    Returns
    -------
    numpy.ndarray, complex, shape (3, ...)
        (s_x, s_y, s_z) per unit wave amplitude [m/m].

    Examples
    --------
    Pure pitch of 0.01 rad/m (bow down) moves a point 50 m forward of midship down by 0.5 m/m:

    >>> import numpy as np
    >>> r = np.array([0, 0, 0, 0, 0.01, 0], dtype=complex)
    >>> float(point_displacement(r, 50.0, 0.0, 0.0)[2].real)
    -0.5
    """
    e = _rao6(rao6)
    sx = e[0] - y * e[5] + z * e[4]
    sy = e[1] + x * e[5] - z * e[3]
    sz = e[2] + y * e[3] - x * e[4]
    return np.stack(np.broadcast_arrays(sx, sy, sz))


def point_velocity(rao6, omega_e, x, y, z) -> np.ndarray:
    """Velocity of a body point, iω_e·s [1]_.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega_e : array_like
        Signed encounter frequency, broadcast with ``rao6[0]`` [rad/s].
    x, y, z : float or array_like
        Point in body axes [m].

    Returns
    -------
    numpy.ndarray, complex, shape (3, ...)
        Velocity per unit wave amplitude [m/s per m].
    """
    return 1j * np.asarray(omega_e) * point_displacement(rao6, x, y, z)


def point_acceleration(rao6, omega_e, x, y, z) -> np.ndarray:
    """Earth-fixed (kinematic) acceleration of a body point, −ω_e²·s [1]_.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega_e : array_like
        Signed encounter frequency [rad/s].
    x, y, z : float or array_like
        Point in body axes [m].

    Returns
    -------
    numpy.ndarray, complex, shape (3, ...)
        Acceleration per unit wave amplitude, ITTC axes, without gravity [m/s² per m].
    """
    return -np.square(omega_e) * point_displacement(rao6, x, y, z)


def vertical_acceleration(rao6, omega_e, x, y) -> np.ndarray:
    """Vertical acceleration of a body point, −ω_e²·(η3 + y·η4 − x·η5), + up [1]_ [2]_.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega_e : array_like
        Signed encounter frequency [rad/s].
    x, y : float or array_like
        Point in body axes [m] (the vertical motion does not depend on z to first order).

    Returns
    -------
    numpy.ndarray, complex, shape (...)
        Vertical acceleration per unit wave amplitude [m/s² per m].
    """
    e = _rao6(rao6)
    return -np.square(omega_e) * (e[2] + y * e[3] - x * e[4])


def lateral_specific_force(rao6, omega_e, x, y, z, g: float = G) -> np.ndarray:
    """Lateral (body y, to port) specific force felt at a point: −ω_e²·s_y + g·η4 [1]_ [3]_.

    This is what cargo lashings, a person or a body-fixed accelerometer feel sideways: the
    kinematic acceleration plus the component of gravity along the heeled deck. For pure roll
    about the origin it is (g + ω_e² z)·η4.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega_e : array_like
        Signed encounter frequency [rad/s].
    x, y, z : float or array_like
        Point in body axes [m].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex, shape (...)
        Lateral specific force per unit wave amplitude, + to port [m/s² per m].
    """
    e = _rao6(rao6)
    s = point_displacement(e, x, y, z)
    return -np.square(omega_e) * s[1] + g * e[3]


def longitudinal_specific_force(rao6, omega_e, x, y, z, g: float = G) -> np.ndarray:
    """Longitudinal (body x, forward) specific force felt at a point: −ω_e²·s_x − g·η5 [1]_.

    With pitch positive bow down, gravity pushes forward along the deck, i.e. the specific force
    (opposite to gravity) points aft: −g·η5.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega_e : array_like
        Signed encounter frequency [rad/s].
    x, y, z : float or array_like
        Point in body axes [m].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex, shape (...)
        Longitudinal specific force per unit wave amplitude, + forward [m/s² per m].
    """
    e = _rao6(rao6)
    s = point_displacement(e, x, y, z)
    return -np.square(omega_e) * s[0] - g * e[4]


def wave_elevation_at_point(omega, beta, x, y, g: float = G) -> np.ndarray:
    """Complex wave elevation at body point (x, y) per unit amplitude at the origin [1]_.

    ζ(x, y) = exp(−i·k·(x·cos β + y·sin β)), k = ω²/g (deep water, absolute wave number),
    docs/conventions.md. For head seas (β = π) a point forward of midship meets the crest earlier:
    its phase leads by k·x.

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency [rad/s].
    beta : array_like
        Relative wave heading, ITTC (π = head seas) [rad].
    x, y : float or array_like
        Point in body axes [m].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex
        ζ(x, y) per unit wave amplitude [m/m].
    """
    k = np.square(omega) / g
    return np.exp(-1j * k * (x * np.cos(beta) + y * np.sin(beta)))


def relative_vertical_motion(rao6, omega, beta, x, y, g: float = G) -> np.ndarray:
    """Relative vertical motion r = ζ(x, y) − s_z(x, y), + when the water rises relative to the
    deck [1]_ [2]_.

    Deck wetness when r exceeds the freeboard, keel emergence (slamming candidate) when r falls
    below −draft at the point. The dynamic swell-up of the bow wave is not included.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega : array_like
        Absolute wave frequency [rad/s].
    beta : array_like
        Relative wave heading [rad].
    x, y : float or array_like
        Point in body axes [m].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex
        r per unit wave amplitude [m/m].
    """
    e = _rao6(rao6)
    s_z = e[2] + y * e[3] - x * e[4]
    return wave_elevation_at_point(omega, beta, x, y, g) - s_z


def relative_vertical_velocity(rao6, omega, beta, omega_e, x, y, g: float = G) -> np.ndarray:
    """Relative vertical velocity iω_e·r (see :func:`relative_vertical_motion`) [1]_.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs [m/m, rad/m].
    omega : array_like
        Absolute wave frequency [rad/s].
    beta : array_like
        Relative wave heading [rad].
    omega_e : array_like
        Signed encounter frequency [rad/s].
    x, y : float or array_like
        Point in body axes [m].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex
        Relative velocity per unit wave amplitude [m/s per m].
    """
    return 1j * np.asarray(omega_e) * relative_vertical_motion(rao6, omega, beta, x, y, g)


def sensor_channels(rao6, sensor_xyz, omega_e, channels=SENSOR_CHANNELS, g: float = G) -> np.ndarray:
    """Transfer functions of the channels a motion sensor reports, in the SENSOR conventions.

    The sensor conventions are those of the voyage log and live messages (docs/conventions.md):

    * ``roll``  = η4 [rad/m], + starboard side down (same sign as ITTC);
    * ``pitch`` = −η5 [rad/m], + bow UP (ITTC pitch is + bow down);
    * ``heave`` = s_z at the sensor [m/m], + up;
    * ``acc_x``, ``acc_y``, ``acc_z`` [m/s² per m] in sensor axes x forward, y STARBOARD, z DOWN,
      "gravity removed".

    Gravity removal, the choice made here: a strapdown accelerometer fixed to the hull measures
    the specific force f = a − g⃗ in body axes. Its static part (g along body z when the ship is
    upright) is removed, but the first-order gravity components of the inclination are NOT,
    because a body-fixed instrument cannot separate them from acceleration without an attitude
    solution. So, in ITTC axes, f_x = −ω_e²·s_x − g·η5, f_y = −ω_e²·s_y + g·η4,
    f_z = −ω_e²·s_z, and in sensor axes acc_x = f_x, acc_y = −f_y, acc_z = −f_z. The lateral
    channel therefore includes the g·roll leakage (as a lashing or person feels it [3]_). A
    sensor that outputs earth-frame ("free") accelerations would need acc_x = −ω_e²·s_x etc.;
    such a sensor should be configured accordingly by the caller.

    Parameters
    ----------
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs at the origin, ITTC [m/m, rad/m].
    sensor_xyz : sequence of 3 floats
        Sensor position in ITTC body axes (x fwd, y port, z up) [m].
    omega_e : array_like
        Signed encounter frequency, broadcast with ``rao6[0]`` [rad/s].
    channels : sequence of str
        Any of :data:`SENSOR_CHANNELS`, in the order wanted.
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray, complex, shape (len(channels), ...)
        Transfer functions per unit wave amplitude, in the order of ``channels``.

    Raises
    ------
    ValueError
        Unknown channel name.
    """
    e = _rao6(rao6)
    try:
        x, y, z = (float(c) for c in sensor_xyz)
    except (TypeError, ValueError):
        raise ValueError(f"sensor_xyz must be three numbers (x, y, z) [m], got {sensor_xyz!r}") from None
    unknown = [c for c in channels if c not in SENSOR_CHANNELS]
    if unknown:
        raise ValueError(f"unknown sensor channel(s) {unknown}; allowed: {', '.join(SENSOR_CHANNELS)}")
    s = point_displacement(e, x, y, z)
    w2 = np.square(omega_e)
    out = {}
    for c in channels:
        if c == "roll":
            out[c] = e[3]
        elif c == "pitch":
            out[c] = -e[4]
        elif c == "heave":
            out[c] = s[2]
        elif c == "acc_x":
            out[c] = -w2 * s[0] - g * e[4]
        elif c == "acc_y":
            out[c] = -(-w2 * s[1] + g * e[3])
        else:  # acc_z
            out[c] = w2 * s[2]
    return np.stack(np.broadcast_arrays(*(out[c] for c in channels)))
