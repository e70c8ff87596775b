"""Attainable speed in a seaway: the speed the ship can make at each heading in the estimated sea.

Where the vessel file gives a calm-water resistance curve, the available power, the propulsive
efficiency and the bow length, the speed is the fastest at which calm-water plus added resistance
(STAWAVE-1) needs no more than the available power (:func:`attainable_speed_power`). Without them, the empirical involuntary speed-loss
method of Kwon (2008) is used: the loss at the power of the calm-water speed V1 is

    ΔV/V1 [%] = C_β · C_U · C_Form

with the weather-direction reduction C_β (head seas 0–30° off the bow: 2C_β = 2; bow seas 30–60°:
2C_β = 1.7 − 0.03(BN − 4)²; beam seas 60–150°: 2C_β = 0.9 − 0.06(BN − 6)²; following seas
150–180°: 2C_β = 0.4 − 0.03(BN − 8)²), the speed-reduction coefficient C_U(Fn) tabulated per block
coefficient and loading (interpolated linearly in C_b here), and the ship-form coefficient C_Form
(container ships, normal loading: 0.7·BN + BN^6.5/(22·∇^(2/3)); other ships loaded:
0.5·BN + BN^6.5/(2.7·∇^(2/3)); in ballast: 0.7·BN + BN^6.5/(2.7·∇^(2/3)); ∇ in m³). BN is the
Beaufort number; it is found here from the significant wave height with the WMO table of probable
wave heights per Beaufort force, interpolated linearly (fractional BN; a project choice, since
Kwon enters the wind force, not the sea).

The cap at each heading is V1·(1 − ΔV/V1) with V1 the vessel's top speed, never below zero. The
loading is taken as "ballast" when the condition's draft is below 0.75 of the full-load draft
(project choice). Directions: the angle of the weather to the bow is that of the mean wave
direction of the estimate.

References
----------
.. [1] Kwon, Y. J. (2008). Speed loss due to added resistance in wind and waves. *The Naval
   Architect*, March 2008, 14–16 (formulas and tables as quoted above, from memory).
.. [2] WMO (2018). *Manual on Marine Meteorological Services*, WMO-No. 558, Beaufort scale with
   probable wave heights in the open sea (0, 0.1, 0.2, 0.6, 1, 2, 3, 4, 5.5, 7, 9, 11.5, 14 m for
   forces 0 to 12) (from memory).
"""

from __future__ import annotations

import math

import numpy as np

from estimator.constants import G

__all__ = [
    "KWON_METHOD",
    "beaufort_from_hs",
    "kwon_direction_coefficient",
    "kwon_speed_coefficient",
    "kwon_form_coefficient",
    "kwon_speed_loss",
    "attainable_speed",
    "STAWAVE1_METHOD",
    "stawave1_added_resistance",
    "attainable_speed_power",
]

KWON_METHOD = "Kwon (2008) empirical speed loss in waves (BN from Hs by the WMO Beaufort table)"
"""Name shown beside the speed cap."""

_WMO_HS = np.array([0.0, 0.1, 0.2, 0.6, 1.0, 2.0, 3.0, 4.0, 5.5, 7.0, 9.0, 11.5, 14.0])
_WMO_BN = np.arange(13, dtype=float)

_CU_NORMAL = {0.55: (1.7, -1.4, -7.4), 0.60: (2.2, -2.5, -9.7), 0.65: (2.6, -3.7, -11.6), 0.70: (3.1, -5.3, -12.4)}
_CU_LOADED = {0.75: (2.4, -10.6, -9.5), 0.80: (2.6, -13.1, -15.1), 0.85: (3.1, -18.7, 28.0)}
_CU_BALLAST = {0.75: (2.6, -12.5, -13.5), 0.80: (3.0, -16.3, -21.6), 0.85: (3.4, -20.9, 31.8)}


def beaufort_from_hs(hs):
    """Fractional Beaufort number from the significant wave height (WMO probable heights) [-]."""
    return np.interp(np.asarray(hs, dtype=float), _WMO_HS, _WMO_BN)


def kwon_direction_coefficient(angle_off_bow, bn):
    """C_β of Kwon (2008): ``angle_off_bow`` 0 = head seas, π = following seas [rad]; BN [-]."""
    a = np.degrees(np.abs(np.asarray(angle_off_bow, dtype=float)))
    bn = np.asarray(bn, dtype=float)
    two = np.where(
        a <= 30.0,
        2.0,
        np.where(
            a <= 60.0,
            1.7 - 0.03 * (bn - 4.0) ** 2,
            np.where(a <= 150.0, 0.9 - 0.06 * (bn - 6.0) ** 2, 0.4 - 0.03 * (bn - 8.0) ** 2),
        ),
    )
    return two / 2.0


def kwon_speed_coefficient(fn: float, cb: float, *, ballast: bool = False) -> float:
    """C_U of Kwon (2008) at Froude number ``fn``, interpolated linearly in the block coefficient."""
    table = dict(_CU_NORMAL)
    table.update(_CU_BALLAST if ballast else _CU_LOADED)
    cbs = np.array(sorted(table))
    vals = np.array([a + b * fn + c * fn**2 for a, b, c in (table[k] for k in cbs)])
    return float(np.interp(min(max(cb, cbs[0]), cbs[-1]), cbs, vals))


def kwon_form_coefficient(bn, volume: float, *, container: bool, ballast: bool = False):
    """C_Form of Kwon (2008); ``volume`` the displacement volume ∇ [m³]."""
    bn = np.asarray(bn, dtype=float)
    v23 = volume ** (2.0 / 3.0)
    if container:
        return 0.7 * bn + bn**6.5 / (22.0 * v23)
    return (0.7 if ballast else 0.5) * bn + bn**6.5 / (2.7 * v23)


def kwon_speed_loss(angle_off_bow, hs, *, speed, lpp, cb, volume, container, ballast=False):
    """Involuntary speed loss ΔV/V1 [-] (fraction, in [0, 1]) of Kwon (2008).

    Parameters
    ----------
    angle_off_bow : array_like
        Angle of the waves off the bow, 0 = head seas [rad].
    hs : float
        Significant wave height [m].
    speed : float
        Calm-water speed V1 [m/s].
    lpp : float
        Length [m].
    cb : float
        Block coefficient [-].
    volume : float
        Displacement volume [m³].
    container : bool
        Container ship (its own C_Form).
    ballast : bool
        Ballast condition.

    Returns
    -------
    numpy.ndarray
        ΔV/V1 as a fraction.
    """
    bn = beaufort_from_hs(hs)
    fn = speed / math.sqrt(G * lpp)
    pct = (
        kwon_direction_coefficient(angle_off_bow, bn)
        * kwon_speed_coefficient(fn, cb, ballast=ballast)
        * kwon_form_coefficient(bn, volume, container=container, ballast=ballast)
    )
    return np.clip(pct / 100.0, 0.0, 1.0)


def _angle_off_bow(headings, wave_from) -> np.ndarray:
    """Angle of the waves off the bow, 0 = head seas, π = following seas [rad]."""
    headings = np.asarray(headings, dtype=float)
    return np.abs(np.mod(wave_from - headings + math.pi, 2.0 * math.pi) - math.pi)


def attainable_speed(headings, wave_from, hs, *, max_speed, lpp, cb, volume, container, ballast=False):
    """Speed the ship can make at each true heading in a sea of ``hs`` from ``wave_from`` [m/s].

    Parameters
    ----------
    headings : array_like
        Ship true headings [rad].
    wave_from : float
        Mean direction the waves come from, true [rad].
    hs : float
        Significant wave height [m].
    max_speed, lpp, cb, volume, container, ballast
        See :func:`kwon_speed_loss` (``max_speed`` is V1).

    Returns
    -------
    numpy.ndarray
        Attainable speed per heading [m/s].

    References
    ----------
    Module references.
    """
    off = _angle_off_bow(headings, wave_from)
    loss = kwon_speed_loss(off, hs, speed=max_speed, lpp=lpp, cb=cb, volume=volume, container=container, ballast=ballast)
    return max_speed * (1.0 - loss)


STAWAVE1_METHOD = (
    "added resistance in waves (STAWAVE-1, ITTC 7.5-04-01-01.1 (2014) / ISO 15016:2015) against the "
    "available power and calm-water resistance of the vessel file"
)
"""Name shown beside the speed cap when the vessel file gives resistance and power."""


def stawave1_added_resistance(hs: float, beam: float, bow_length: float, angle_off_bow) -> np.ndarray:
    """Added resistance in waves, STAWAVE-1: R_AW = ρ·g·Hs²·B·√(B/L_BWL)/16 for waves within 45° of
    the bow, zero otherwise [N].

    Parameters
    ----------
    hs : float
        Significant wave height [m].
    beam : float
        Breadth [m].
    bow_length : float
        L_BWL, length of the bow on the waterline to 95 % of the maximum breadth [m].
    angle_off_bow : array_like
        Angle of the waves off the bow, 0 = head seas [rad].

    References
    ----------
    .. [1] ITTC (2014). Recommended Procedure 7.5-04-01-01.1, *Preparation, conduct and analysis of
       speed/power trials*, STAWAVE-1 (valid for small heave and pitch, waves within ±45° of the bow;
       outside that sector no correction) (from memory); ISO 15016:2015 (the same formula).
    """
    from estimator.constants import RHO_SEAWATER

    a = np.abs(np.asarray(angle_off_bow, dtype=float))
    r = RHO_SEAWATER * G * hs**2 * beam * math.sqrt(beam / bow_length) / 16.0
    return np.where(a <= math.radians(45.0) + 1e-12, r, 0.0)


def attainable_speed_power(
    headings, wave_from, hs, *, max_speed, beam, bow_length, calm_speed, calm_resistance, power, efficiency
):
    """Fastest speed at which calm-water resistance plus added resistance (STAWAVE-1) needs no more than
    the available delivered power: (R_calm(V) + R_AW)·V ≤ η_D·P, V ≤ max_speed [m/s].

    Parameters
    ----------
    headings, wave_from, hs
        As :func:`attainable_speed`.
    max_speed : float
        Top of the advised speed range [m/s].
    beam, bow_length : float
        Breadth and L_BWL [m].
    calm_speed, calm_resistance : array_like
        Calm-water resistance curve: speeds [m/s] (ascending) and resistance [N] (linear between).
    power : float
        Available brake power [W].
    efficiency : float
        Quasi-propulsive efficiency η_D [-] (delivered to effective power).

    Returns
    -------
    numpy.ndarray
        Attainable speed per heading [m/s].

    References
    ----------
    :func:`stawave1_added_resistance`; effective power P_E = R·V (definition).
    """
    off = _angle_off_bow(headings, wave_from)
    r_aw = stawave1_added_resistance(hs, beam, bow_length, off)  # (H,)
    v = np.linspace(0.0, max_speed, 401)
    r_calm = np.interp(v, np.asarray(calm_speed, float), np.asarray(calm_resistance, float))
    need = (r_calm[None, :] + r_aw[:, None]) * v[None, :]  # effective power [W]
    ok = need <= efficiency * power
    # the fastest speed of the grid that the power can drive (the need grows with speed)
    last = np.where(ok.any(axis=1), ok.shape[1] - 1 - np.argmax(ok[:, ::-1], axis=1), 0)
    return v[last]
