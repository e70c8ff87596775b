"""Dangerous zones of IMO MSC.1/Circ.1228 on a grid of true headings and speeds.

The circular [1]_ names four situations the master should keep out of in adverse weather:
surf-riding and broaching-to in following and quartering seas (§4.2.1), successive high-wave
attack (§4.2.2), synchronous rolling (§4.2.3.1) and parametric rolling (§4.2.3.2). Each is
screened here for every significant wave system (its significant height, peak period and the
direction it comes from) and every cell of the heading × speed grid.

Angles: the circular's angle of encounter α is 0 for head seas and 180° for following seas
(90° = sea from starboard); with the ITTC relative heading β (π = head seas) α = π − β, and with
θ the true direction the waves come from and ψ the ship's true heading, α = (θ − ψ) mod 2π.

Formulas (V in knots inside the circular's formulas; the functions take and return m/s):

* encounter period, the closed form behind the circular's Fig. 1 nomogram:
  TE = 3·TW² / (3·TW + V·cos α) [s] (the "3" is the deep-water wave celerity in kn per second of
  period, 1.56/0.5144); wave length λ = 1.56·TW² [m] (§1.5);
* surf-riding / broaching (§4.2.1): 135° < α < 225° and V > 1.8·√L / cos(180° − α) [kn];
* successive high waves (§4.2.2): λ > 0.8·L and Hs > 0.04·L and 1.8 ≤ TE/TW ≤ 3.0;
* synchronous roll (§4.2.3.1): TE ≈ TR, screened as |TE/TR − 1| ≤ band;
* parametric roll (§4.2.3.2): TE ≈ TR/2 (waves within 60° of the bow or the stern) or TE ≈ TR
  (following or quartering seas, waves from abaft the beam), made worse when λ is of the order of
  L; screened as |TE/(TR/2) − 1| ≤ band or |TE/TR − 1| ≤ band with λ/L inside a range. The bands,
  the λ/L range, the 60° sector and the smallest Hs of a screened system are project choices
  (:class:`advisor.limits.ZoneSettings`), not numbers of the circular.

References
----------
.. [1] IMO MSC.1/Circ.1228 (11 January 2007). *Revised guidance to the master for avoiding
   dangerous situations in adverse weather and sea conditions*, §1.5, §1.6 and Fig. 1 (wave length
   and encounter period), §4.2.1 (surf-riding and broaching-to), §4.2.2 (successive high-wave
   attack), §4.2.3 (synchronous and parametric rolling). The formulas behind the figures are
   quoted from memory as they are universally reproduced.
.. [2] Umeda, N. and Peters, A. (2002). Recent research progress on intact stability in following
   and quartering seas. *6th International Ship Stability Workshop* (principal parametric
   resonance when the encounter period is about half the natural roll period).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from estimator.constants import KNOT
from estimator.partition import partition

__all__ = [
    "ZONE_NAMES",
    "ZONE_LABELS",
    "WaveSystem",
    "wavelength_circ1228",
    "encounter_period_circ1228",
    "surf_riding_speed",
    "successive_wave_speed_band",
    "zone_masks",
    "wave_systems",
]

TWO_PI = 2.0 * np.pi

ZONE_NAMES = ("surf_riding", "successive_waves", "synchronous_roll", "parametric_roll")
"""Keys of the zone masks, in display order."""

ZONE_LABELS = {
    "surf_riding": "surf-riding / broaching zone",
    "successive_waves": "successive high-wave zone",
    "synchronous_roll": "synchronous roll zone",
    "parametric_roll": "parametric roll zone",
}
"""Plain-language names of the zones (MSC.1/Circ.1228 §4.2)."""

_CELERITY_KN_PER_S = 3.0  # [1] Fig. 1: deep-water celerity ≈ 3 kn per second of wave period
_WAVELENGTH_FACTOR = 1.56  # [1] §1.5: λ = 1.56·TW² [m]
_SURF_COEFF_KN = 1.8  # [1] §4.2.1: 1.8·√L [kn]
_SECTOR_PARAMETRIC = np.cos(np.deg2rad(60.0))  # project choice: within 60° of bow or stern


@dataclass(frozen=True)
class WaveSystem:
    """One wave system (a partition of the directional spectrum, or the whole of it).

    Attributes
    ----------
    hs : float
        Significant wave height of the system, 4·sqrt(m0) [m].
    tp : float
        Peak period [s].
    theta : float
        True direction the waves come from, clockwise from north [rad].
    label : str
        Free text (e.g. "system 1").
    """

    hs: float
    tp: float
    theta: float
    label: str = ""


def wavelength_circ1228(tw):
    """Wave length from the wave period as used in MSC.1/Circ.1228 §1.5: λ = 1.56·TW².

    Parameters
    ----------
    tw : array_like
        Wave period [s].

    Returns
    -------
    numpy.ndarray
        Wave length [m].

    References
    ----------
    IMO MSC.1/Circ.1228 §1.5 (from memory: λ = 1.56·TW², TW = 0.8·√λ).
    """
    tw = np.asarray(tw, dtype=float)
    return _WAVELENGTH_FACTOR * tw**2


def encounter_period_circ1228(tw, speed, alpha):
    """Encounter period of MSC.1/Circ.1228 Fig. 1: TE = 3·TW² / (3·TW + V·cos α), V in knots.

    Parameters
    ----------
    tw : array_like
        Wave period [s].
    speed : array_like
        Ship speed through water [m/s] (converted to knots for the circular's formula).
    alpha : array_like
        Angle of encounter of the circular, 0 = head seas, π = following seas [rad].

    Returns
    -------
    numpy.ndarray
        Encounter period [s], signed: negative when the ship overtakes the waves; ±inf when the
        ship moves with the waves.

    References
    ----------
    IMO MSC.1/Circ.1228 §1.6 and Fig. 1 (the closed form behind the nomogram, from memory).
    """
    tw, speed, alpha = np.broadcast_arrays(
        np.asarray(tw, dtype=float), np.asarray(speed, dtype=float), np.asarray(alpha, dtype=float)
    )
    v_kn = speed / KNOT
    den = _CELERITY_KN_PER_S * tw + v_kn * np.cos(alpha)
    with np.errstate(divide="ignore"):
        return np.where(den != 0.0, _CELERITY_KN_PER_S * tw**2 / np.where(den != 0.0, den, 1.0), np.inf)


def surf_riding_speed(lpp, alpha):
    """Speed above which surf-riding / broaching may occur (MSC.1/Circ.1228 §4.2.1).

    V = 1.8·√L / cos(180° − α) knots for 135° < α < 225°; no limit (inf) outside that sector.

    Parameters
    ----------
    lpp : float
        Length between perpendiculars [m].
    alpha : array_like
        Angle of encounter of the circular, 0 = head seas [rad].

    Returns
    -------
    numpy.ndarray
        Threshold speed [m/s] (inf outside 135° < α < 225°).

    References
    ----------
    IMO MSC.1/Circ.1228 §4.2.1 (formula from memory, universally quoted).
    """
    alpha = np.mod(np.asarray(alpha, dtype=float), TWO_PI)
    c = np.cos(np.pi - alpha)
    inside = (alpha > 0.75 * np.pi) & (alpha < 1.25 * np.pi)
    with np.errstate(divide="ignore"):
        v = _SURF_COEFF_KN * np.sqrt(float(lpp)) * KNOT / np.where(inside, c, 1.0)
    return np.where(inside, v, np.inf)


def successive_wave_speed_band(tw):
    """Band of the speed component along the wave direction, V·cos(180° − α), inside which the
    encounter period is 1.8–3.0 times the wave period (MSC.1/Circ.1228 §4.2.2.2).

    From TE = 3TW²/(3TW + V cos α): TE/TW ∈ [1.8, 3.0] ⇔ V·cos(180° − α) ∈ [3TW(1 − 1/1.8),
    3TW(1 − 1/3)] kn = [1.333·TW, 2·TW] kn.

    Parameters
    ----------
    tw : array_like
        Wave period [s].

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Lower and upper bound of the speed component [m/s].

    References
    ----------
    IMO MSC.1/Circ.1228 §4.2.2.2 and Fig. 1 (formula from memory).
    """
    tw = np.asarray(tw, dtype=float)
    c = _CELERITY_KN_PER_S * tw
    return c * (1.0 - 1.0 / 1.8) * KNOT, c * (1.0 - 1.0 / 3.0) * KNOT


def zone_masks(psi, speeds, systems, lpp, t_roll, settings):
    """The four Circ.1228 zones for every (true heading, speed) cell.

    Parameters
    ----------
    psi : array_like, shape (H,)
        Ship true headings [rad].
    speeds : array_like, shape (S,)
        Ship speeds through water [m/s].
    systems : sequence of WaveSystem
        Wave systems to screen (each with its Hs, peak period and direction).
    lpp : float
        Length between perpendiculars [m].
    t_roll : float
        Natural roll period of the loading condition [s].
    settings : advisor.limits.ZoneSettings
        Screening bands.

    Returns
    -------
    dict of str to numpy.ndarray of bool, shape (H, S)
        One mask per name in :data:`ZONE_NAMES`; True = inside the zone for at least one system.

    References
    ----------
    IMO MSC.1/Circ.1228 §4.2.1–§4.2.3; see the module docstring for the project's screening bands.
    """
    psi = np.atleast_1d(np.asarray(psi, dtype=float))[:, None]
    speed = np.atleast_1d(np.asarray(speeds, dtype=float))[None, :]
    shape = (psi.shape[0], speed.shape[1])
    out = {name: np.zeros(shape, dtype=bool) for name in ZONE_NAMES}
    lpp = float(lpp)
    t_roll = float(t_roll)
    for sys in systems:
        if not (np.isfinite(sys.tp) and sys.tp > 0 and np.isfinite(sys.hs)):
            continue
        alpha = np.mod(sys.theta - psi, TWO_PI)  # (H, 1); 0 = head seas
        tw = sys.tp
        lam = float(wavelength_circ1228(tw))
        te = encounter_period_circ1228(tw, speed, alpha)  # (H, S), signed
        te_abs = np.abs(te)
        # successive high waves: the circular's own thresholds on λ and Hs
        if lam > 0.8 * lpp and sys.hs > 0.04 * lpp:
            ratio = te / tw
            out["successive_waves"] |= (ratio >= 1.8) & (ratio <= 3.0)
        if sys.hs < settings.min_system_hs:
            continue
        out["surf_riding"] |= speed > surf_riding_speed(lpp, alpha)
        if t_roll > 0:
            sync = np.abs(te_abs / t_roll - 1.0) <= settings.synchronous_roll_band
            out["synchronous_roll"] |= sync
            lam_l = lam / lpp
            if settings.parametric_roll_wavelength_min <= lam_l <= settings.parametric_roll_wavelength_max:
                ca = np.cos(alpha)
                half = (np.abs(te_abs / (0.5 * t_roll) - 1.0) <= settings.parametric_roll_band) & (
                    np.abs(ca) >= _SECTOR_PARAMETRIC
                )
                full = (np.abs(te_abs / t_roll - 1.0) <= settings.parametric_roll_band) & (ca < 0.0)
                out["parametric_roll"] |= half | full
    return out


def wave_systems(spectrum, min_hs=0.0, *, max_systems=4):
    """Split a directional spectrum into wave systems by steepest ascent (watershed partitioning).

    Uses :func:`estimator.partition.partition` (watershed by steepest ascent, periodic in θ, with small
    and close partitions merged), the partitioning the sea-state estimate reports. Each system gives
    Hs = 4·sqrt(m0) of its energy, the peak period and its energy-weighted circular mean direction.

    Parameters
    ----------
    spectrum : estimator.spectra.DirectionalSpectrum
        The directional spectrum.
    min_hs : float, optional
        Systems with a smaller significant height are dropped [m].
    max_systems : int, optional
        Keep at most this many, most energetic first.

    Returns
    -------
    list of WaveSystem
        Most energetic first. Empty when the spectrum holds no energy.

    References
    ----------
    .. [1] Hanson, J. L. and Phillips, O. M. (2001). Automated analysis of ocean surface directional
       wave spectra. *J. Atmos. Oceanic Technol.* 18(2), 277–293 (watershed partitioning by
       steepest ascent).
    """
    if not np.any(np.asarray(spectrum.density) > 0):
        return []
    # The same watershed partitions, merged by the same rules, as the sea-state estimate reports
    # (estimator.partition), so the zones are screened for the systems the bridge page shows.
    _, parts = partition(
        np.asarray(spectrum.density, dtype=float),
        np.asarray(spectrum.omega, dtype=float),
        np.asarray(spectrum.theta, dtype=float),
        np.asarray(spectrum.omega_weights, dtype=float),
        float(spectrum.theta_weights[0]),
        max_systems=max_systems,
    )
    def direction(p) -> float:
        d = float(np.mod(p.direction, TWO_PI))
        return 0.0 if d >= TWO_PI - 1e-9 else d  # rounding below 2π is north (keeps mirror symmetry exact)

    return [
        WaveSystem(hs=p.hs, tp=p.tp, theta=direction(p), label=f"system {i + 1}")
        for i, p in enumerate(parts)
        if p.hs >= min_hs and np.isfinite(p.tp)
    ]
