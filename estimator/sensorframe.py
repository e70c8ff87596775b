"""Motion-sensor frames: mounting orientation, earth-frame vs body-frame accelerations, and a data check.

Motion sensors deliver linear accelerations in one of two frames:

* **body** ("specific force", a strapdown accelerometer fixed to the hull, static gravity removed): the
  first-order gravity components of the inclination stay in the signal, acc_x = a_x + g·θ and
  acc_y = a_y − g·φ in the sensor conventions (x forward, y starboard, z down; roll φ + starboard
  down, pitch θ + bow up). This is what :func:`estimator.kinematics.sensor_channels` models.
* **earth** (attitude-compensated, "free" or heave-frame acceleration): the kinematic acceleration of
  the sensor in horizontal and vertical axes, gravity removed, acc_x = a_x, acc_y = a_y.

At low encounter frequency the g·φ term is about g/(ω_e² z) times the kinematic one, ten times or more,
so a frame set wrongly corrupts the horizontal channels silently. For a motion dominated by roll about an
axis below the sensor at height z above the waterline, acc_y/φ → −(g + ω_e²·z) in the body frame and
−ω_e²·z in the earth frame (small-angle rigid-body kinematics, Faltinsen 1990 §2.2; the g·φ term as in
MSC.1/Circ.1627): :func:`acceleration_frame_check` measures this ratio at the roll peak of a record.

Mounting: a sensor whose x axis points ``mounting_yaw`` clockwise from the bow (seen from above; any
angle in [0°, 360°), 0, 90, 180 or 270° in most installations) reports vectors rotated by that angle: in
ship axes (x forward, y starboard) v_ship = R(μ)·v_sensor with R = [[cos μ, −sin μ], [sin μ, cos μ]];
this is exact for the accelerations (a plane rotation). Roll and pitch, a small rotation vector about
the same axes, turn the same way: exact for multiples of 90° (a relabelling of axes), otherwise to first
order in the angles (Euler angles equal the rotation vector's components to first order; the error is of
the order of the product roll × pitch, about 0.5° at 20° roll and 5° pitch: small-angle kinematics,
Faltinsen 1990 §2.2 [1]; the figure is the product of the two angles in radians).

References
----------
.. [1] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, §2.2 (motion of a point
   of a rigid body, s = η + ω × r).
.. [2] IMO MSC.1/Circ.1627 (2020), excessive-acceleration criterion: the lateral acceleration felt at a
   location includes the gravity component g·φ of the roll angle.
.. [3] Bendat, J. S. and Piersol, A. G. (2010). *Random Data*, 4th ed., ch. 9 (frequency response
   function H = G_xy/G_xx and coherence from cross-spectra; chapter number from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.signal import csd, welch

from estimator.constants import G

__all__ = [
    "FRAMES",
    "MOUNTING_YAWS",
    "FrameCheck",
    "earth_to_body",
    "rotate_mounting",
    "acceleration_frame_check",
]

FRAMES = ("body", "earth")
"""Acceleration frames a motion sensor may deliver (module docstring)."""

MOUNTING_YAWS = (0.0, 0.5 * np.pi, np.pi, 1.5 * np.pi)
"""Mounting yaw angles of most installations [rad] (sensor x along or across the ship; common practice);
any angle in [0, 2π) is accepted (module docstring)."""

MIN_COHERENCE = 0.6
"""Coherence of roll and lateral acceleration at the roll peak below which the check gives no verdict
[-] (project choice)."""


def earth_to_body(acc_x, acc_y, roll, pitch, g: float = G):
    """Earth-frame accelerations → body-frame specific force with the static gravity removed.

    Parameters
    ----------
    acc_x, acc_y : array_like
        Earth-frame accelerations, x forward, y starboard, gravity removed [m/s²].
    roll, pitch : array_like
        Roll (+ starboard down) and pitch (+ bow up) at the same instants [rad].
    g : float
        Acceleration of gravity [m/s²].

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        acc_x + g·pitch and acc_y − g·roll [m/s²] (first order, [1]_ [2]_).
    """
    return np.asarray(acc_x, float) + g * np.asarray(pitch, float), np.asarray(acc_y, float) - g * np.asarray(
        roll, float
    )


def rotate_mounting(x, y, mounting_yaw: float):
    """Vector components (x, y) of a sensor mounted ``mounting_yaw`` clockwise from the bow → ship axes.

    Works for accelerations (x forward, y starboard) and for the small rotation vector (roll, pitch).

    Parameters
    ----------
    x, y : array_like
        Components in the sensor's own axes.
    mounting_yaw : float
        Angle of the sensor's x axis clockwise from the bow, in [0, 2π) [rad] (module docstring).

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Components along the ship's x (forward) and y (starboard) axes.
    """
    c, s = np.round(np.cos(mounting_yaw), 12), np.round(np.sin(mounting_yaw), 12)
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    return c * x - s * y, s * x + c * y


@dataclass(frozen=True)
class FrameCheck:
    """Result of :func:`acceleration_frame_check`."""

    ratio: float
    """−Re(acc_y/roll) at the roll peak [m/s² per rad]."""
    omega: float
    """Frequency of the roll peak (encounter) [rad/s]."""
    coherence: float
    """Coherence of roll and acc_y there [-]."""
    expected_body: float
    """g + ω²·z [m/s² per rad]."""
    expected_earth: float
    """ω²·z [m/s² per rad]."""
    frame: str | None
    """"body", "earth", or None when the record cannot tell (low coherence, no roll peak)."""


ROLL_BAND = 0.3
"""With a natural roll frequency given, a verdict only where the roll peak lies within this fraction of
it [-]: there roll dominates the lateral motion (project choice; off resonance, sway and yaw of a
simulated 200 m ship moved the ratio by up to g/3)."""


def acceleration_frame_check(
    t, roll, acc_y, z: float, g: float = G, roll_frequency: float | None = None
) -> FrameCheck | None:
    """Which frame the lateral acceleration of a record is in, from its ratio to roll at the roll peak.

    Parameters
    ----------
    t : array_like
        Sample times, ascending [s]; may be irregular (resampled linearly to the median step).
    roll : array_like
        Roll, + starboard down [rad] (NaN = no sample).
    acc_y : array_like
        Lateral acceleration, + starboard [m/s²] (NaN = no sample).
    z : float
        Height of the sensor above the waterline (roll axis taken there; first order) [m].
    g : float
        Acceleration of gravity [m/s²].
    roll_frequency : float, optional
        Natural roll frequency 2π/T_roll [rad/s]; a verdict only when the roll peak lies within
        :data:`ROLL_BAND` of it.

    Returns
    -------
    FrameCheck or None
        None when the record is too short (under 64 samples of both channels).

    Notes
    -----
    H(ω) = G_{roll,acc_y}/G_{roll,roll} (Welch cross-spectra [3]_) at the peak of the roll spectrum;
    the verdict is "body" when −Re H ≥ (g/2 + ω²z), "earth" otherwise (midway between the two
    expectations of the module docstring; sway adds about ω²·ξ2/φ, small beside g near the roll peak;
    project choice), and None when the coherence there is below :data:`MIN_COHERENCE`.
    """
    t = np.asarray(t, float)
    r = np.asarray(roll, float)
    a = np.asarray(acc_y, float)
    ok = np.isfinite(t) & np.isfinite(r) & np.isfinite(a)
    if ok.sum() < 64:
        return None
    t, r, a = t[ok], r[ok], a[ok]
    dt = float(np.median(np.diff(t)))
    if not dt > 0:
        return None
    tu = np.arange(t[0], t[-1], dt)
    if tu.size < 64:
        return None
    ru = np.interp(tu, t, r)
    au = np.interp(tu, t, a)
    fs = 1.0 / dt
    nper = int(min(tu.size, max(64, 2 ** np.floor(np.log2(tu.size / 4)))))
    f, grr = welch(ru, fs=fs, nperseg=nper, detrend="linear")
    _, gaa = welch(au, fs=fs, nperseg=nper, detrend="linear")
    _, gra = csd(ru, au, fs=fs, nperseg=nper, detrend="linear")
    band = f > 0
    if not np.any(band) or not np.any(grr[band] > 0):
        return None
    i = int(np.nonzero(band)[0][np.argmax(grr[band])])
    h = gra[i] / grr[i]  # scipy csd(x, y) = conj(X) Y: H = G_xy / G_xx [3]
    coh = float(np.abs(gra[i]) ** 2 / (grr[i] * gaa[i])) if gaa[i] > 0 else 0.0
    w = 2.0 * np.pi * f[i]
    e_body, e_earth = g + w * w * z, w * w * z
    ratio = float(-h.real)
    frame = None
    near = roll_frequency is None or abs(w / roll_frequency - 1.0) <= ROLL_BAND
    if coh >= MIN_COHERENCE and near:
        frame = "body" if ratio >= 0.5 * g + w * w * z else "earth"
    return FrameCheck(ratio, float(w), coh, float(e_body), float(e_earth), frame)
