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
* successive high waves (§4.2.2): λ > 0.8·L and Hs > 0.04·L and 1.8 ≤ TE/TW ≤ 3.0, with Hs the
  significant height of the whole sea (the circular speaks of the sea, not of one wave system);
* synchronous roll (§4.2.3.1): TE ≈ TR, screened as |TE/TR − 1| ≤ band;
* parametric roll (§4.2.3.2): TE ≈ TR/2 (waves within 60° of the bow or the stern) or TE ≈ TR
  (following or quartering seas, waves within 60° of the stern), made worse when λ is of the order of
  L; screened as |TE/(TR/2) − 1| ≤ band or |TE/TR − 1| ≤ band with λ/L inside a range. The bands,
  the λ/L range, the 60° sector and the smallest Hs of a screened system are project choices
  (:class:`advisor.limits.ZoneSettings`), not numbers of the circular.

The wave period TW. The circular works with the observed wave period TW (§1.5), a period an
observer reads from the sea, not a spectral peak. From a spectrum the mean period Tm01 = 2π·m0/m1
is taken as TW (its definition: DNV-RP-C205 (2010) §3.5.5, from memory); that visually observed
periods lie between the mean and the peak period is common practice (from memory). So every
system is screened over the band of periods from its Tm01 to its Tp (both ends and three points
between): a cell is in a zone when any period of the band puts it there. The band is a project
choice that covers the choice of TW.

Parametric roll, ship-specific (:func:`parametric_roll_level1`): where the vessel file gives the
waterplane inertia against draft, the level-1 vulnerability criterion of the second-generation
intact stability criteria (MSC.1/Circ.1627, level 1: ΔGM1/GM ≤ R_PR in a wave of length L
and steepness 0.0167) decides whether the loading condition can resonate at all; a condition that
passes it is not screened for parametric roll, and the result says which check applied.

References
----------
.. [1] IMO MSC.1/Circ.1228 (11 January 2007). *Revised guidance to the master for avoiding
   dangerous situations in adverse weather and sea conditions*, §1.5, §1.6 and Fig. 1 (wave length
   and encounter period), §4.2.1 (surf-riding and broaching-to), §4.2.2 (successive high-wave
   attack), §4.2.3 (synchronous and parametric rolling). The formulas behind the figures are
   quoted from memory as they are universally reproduced.
.. [3] IMO MSC.1/Circ.1627 (10 December 2020). *Interim guidelines on the second generation intact
   stability criteria*, chapter 2, vulnerability criteria for parametric rolling, level 1 (ΔGM1 =
   (I_H − I_L)/(2V); d_H = d + min(D − d, L·SW/2), d_L = d − min(d − 0.25·d_full, L·SW/2), SW =
   0.0167; R_PR = 1.87 for a sharp bilge, else 0.17 + 0.425·(100·A_k/(L·B)) for C_m ≥ 0.96,
   0.17 + (10.625·C_m − 9.775)·(100·A_k/(L·B)) for 0.94 < C_m < 0.96, 0.17 for C_m ≤ 0.94, with
   100·A_k/(L·B) ≤ 4) (from memory).
.. [4] DNV-RP-C205 (2010). *Environmental conditions and environmental loads*, §3.5.5 (spectral
   mean period T1 = Tm01 = 2π·m0/m1) (from memory).
.. [2] Umeda, N. and Peters, A. (2002). Recent research progress on intact stability in following
   and quartering seas. *6th International Ship Stability Workshop* (principal parametric
   resonance when the encounter period is about half the natural roll period).
"""

from __future__ import annotations

import math
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
    "ParametricRollCheck",
    "parametric_roll_level1",
    "TW_BAND_POINTS",
    "PERIOD_SCREENING_ONLY",
    "SW_LEVEL1",
    "parametric_roll_r_pr",
]

TW_BAND_POINTS = 5
"""Periods screened across each system's Tm01–Tp band (ends included; project choice)."""

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
_SECTOR_PARAMETRIC = np.cos(np.deg2rad(60.0))  # project choice: within 60° of bow or stern (TE ≈ TR/2),
# within 60° of the stern (TE ≈ TR, following and quartering seas)


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
    tm01 : float
        Mean period 2π·m0/m1 of the system [s] (NaN when unknown); with ``tp`` it bounds the band of
        wave periods TW screened (module docstring).
    """

    hs: float
    tp: float
    theta: float
    label: str = ""
    tm01: float = float("nan")

    def tw_band(self) -> np.ndarray:
        """Wave periods TW screened for this system [s]: Tm01 to Tp (only Tp when Tm01 is unknown)."""
        lo, hi = self.tp, self.tp
        if np.isfinite(self.tm01) and self.tm01 > 0:
            lo, hi = min(self.tm01, self.tp), max(self.tm01, self.tp)
        if hi - lo < 1e-6:
            return np.array([self.tp])
        return np.linspace(lo, hi, TW_BAND_POINTS)


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


def zone_masks(psi, speeds, systems, lpp, t_roll, settings, *, hs_total=None, parametric_min_hs=0.0, band_scale=1.0):
    """The four Circ.1228 zones for every (true heading, speed) cell.

    Parameters
    ----------
    psi : array_like, shape (H,)
        Ship true headings [rad].
    speeds : array_like, shape (S,)
        Ship speeds through water [m/s].
    systems : sequence of WaveSystem
        Wave systems to screen (each with its Hs, Tm01–Tp band of periods and direction).
    lpp : float
        Length between perpendiculars [m].
    t_roll : float
        Natural roll period of the loading condition [s].
    settings : advisor.limits.ZoneSettings
        Screening bands.
    hs_total : float, optional
        Significant wave height of the whole sea for the Hs > 0.04·L test of §4.2.2 [m]; default
        the root sum of squares of the systems' heights.
    parametric_min_hs : float
        Smallest significant height of a system screened for parametric roll [m]: 0 with the period
        screening alone; from the ship-specific check (:attr:`ParametricRollCheck.min_system_hs`,
        inf when the condition is not vulnerable) otherwise.
    band_scale : float
        Factor on the synchronous and parametric resonance bands (> 1 to test that a zone has been
        left by a clear distance, the advice's hysteresis) [-].

    Returns
    -------
    dict of str to numpy.ndarray of bool, shape (H, S)
        One mask per name in :data:`ZONE_NAMES`; True = inside the zone for at least one system
        and one period of its band.

    References
    ----------
    IMO MSC.1/Circ.1228 §1.5, §4.2.1–§4.2.3; see the module docstring for the project's screening
    bands and the choice of TW.
    """
    psi = np.atleast_1d(np.asarray(psi, dtype=float))[:, None]
    speed = np.atleast_1d(np.asarray(speeds, dtype=float))[None, :]
    shape = (psi.shape[0], speed.shape[1])
    out = {name: np.zeros(shape, dtype=bool) for name in ZONE_NAMES}
    lpp = float(lpp)
    t_roll = float(t_roll)
    systems = [s for s in systems if np.isfinite(s.tp) and s.tp > 0 and np.isfinite(s.hs)]
    if hs_total is None:
        hs_total = float(np.sqrt(sum(s.hs**2 for s in systems)))
    sync_band = settings.synchronous_roll_band * band_scale
    par_band = settings.parametric_roll_band * band_scale
    v_kn = speed / KNOT
    for sys in systems:
        alpha = np.mod(sys.theta - psi, TWO_PI)  # (H, 1); 0 = head seas
        ca = np.cos(alpha)
        screened = sys.hs >= settings.min_system_hs
        if screened:
            out["surf_riding"] |= speed > surf_riding_speed(lpp, alpha)
        vca = v_kn * ca  # (H, S) speed component towards the waves [kn]
        for tw in sys.tw_band():
            lam = float(wavelength_circ1228(tw))
            den = _CELERITY_KN_PER_S * tw + vca
            with np.errstate(divide="ignore"):
                te = np.where(den != 0.0, _CELERITY_KN_PER_S * tw**2 / np.where(den != 0.0, den, 1.0), np.inf)
            te_abs = np.abs(te)
            # successive high waves: the circular's own thresholds on λ and on Hs of the sea (§4.2.2)
            if lam > 0.8 * lpp and hs_total > 0.04 * lpp:
                ratio = te / tw
                out["successive_waves"] |= (ratio >= 1.8) & (ratio <= 3.0)
            if not screened or t_roll <= 0:
                continue
            out["synchronous_roll"] |= np.abs(te_abs / t_roll - 1.0) <= sync_band
            lam_l = lam / lpp
            if sys.hs >= parametric_min_hs and (
                settings.parametric_roll_wavelength_min <= lam_l <= settings.parametric_roll_wavelength_max
            ):
                half = (np.abs(te_abs / (0.5 * t_roll) - 1.0) <= par_band) & (np.abs(ca) >= _SECTOR_PARAMETRIC - 1e-9)
                full = (np.abs(te_abs / t_roll - 1.0) <= par_band) & (ca <= -_SECTOR_PARAMETRIC + 1e-9)
                out["parametric_roll"] |= half | full
    return out


@dataclass(frozen=True)
class ParametricRollCheck:
    """Which parametric roll check applies to a loading condition, and its outcome.

    Attributes
    ----------
    applied : str
        ``"circ1627_level1"`` (the ship-specific check ran) or ``"period_screening"`` (the vessel
        file lacks what it needs; the Circ.1228 period screening alone applies).
    vulnerable : bool
        True when the condition is screened for parametric roll (vulnerable, or not checked).
    dgm : float
        ΔGM1 [m] (NaN when not checked).
    ratio : float
        ΔGM1/GM [-] (NaN when not checked).
    r_pr : float
        The standard R_PR [-] (NaN when not checked).
    text : str
        One plain sentence for the page and the report.
    min_system_hs : float
        Smallest significant height of a wave system screened for parametric roll [m]: 0 for the
        period screening alone; SW·L·R_PR/(ΔGM1/GM) after the level-1 check (the level-1 ΔGM1 taken
        as growing linearly with wave height and the system's Hs taken as its wave height: a project
        choice); inf when not vulnerable.
    """

    applied: str
    vulnerable: bool
    dgm: float = float("nan")
    ratio: float = float("nan")
    r_pr: float = float("nan")
    text: str = ""
    min_system_hs: float = 0.0


SW_LEVEL1 = 0.0167
"""Wave steepness of the level-1 parametric roll check (MSC.1/Circ.1627, from memory)."""


def parametric_roll_r_pr(cm: float, bilge_keel_area: float, lpp: float, beam: float, *, sharp_bilge=False) -> float:
    """Standard R_PR of the level-1 parametric roll criterion (MSC.1/Circ.1627, from memory).

    Parameters
    ----------
    cm : float
        Midship section coefficient [-].
    bilge_keel_area : float
        Total projected area of the bilge keels A_k [m²].
    lpp, beam : float
        Length and breadth [m].
    sharp_bilge : bool
        A ship with a sharp bilge takes R_PR = 1.87.

    Returns
    -------
    float
        R_PR [-].

    References
    ----------
    Module reference [3]_.
    """
    if sharp_bilge:
        return 1.87
    ak = min(100.0 * bilge_keel_area / (lpp * beam), 4.0)
    if cm >= 0.96:
        return 0.17 + 0.425 * ak
    if cm > 0.94:
        return 0.17 + (10.625 * cm - 9.775) * ak
    return 0.17


def parametric_roll_level1(
    *, lpp, beam, depth, draft, draft_full, volume, gm, wp_draft, wp_inertia, cm, bilge_keel_area=0.0,
    sharp_bilge=False,
) -> ParametricRollCheck:
    """Level-1 vulnerability to parametric rolling (MSC.1/Circ.1627): ΔGM1/GM against R_PR.

    ΔGM1 = (I_H − I_L)/(2V), with I_H, I_L the transverse moments of inertia of the waterplane at
    the drafts d_H = d + min(D − d, L·SW/2) and d_L = d − min(d − 0.25·d_full, L·SW/2), SW = 0.0167,
    interpolated linearly in the vessel's table of waterplane inertia against draft (even keel).

    Parameters
    ----------
    lpp, beam, depth : float
        Length, breadth, moulded depth [m].
    draft : float
        Mean draft of the loading condition [m].
    draft_full : float
        Full-load draft d_full [m].
    volume : float
        Volume of displacement of the condition [m³].
    gm : float
        Metacentric height of the condition [m] (> 0).
    wp_draft, wp_inertia : array_like
        Table of drafts [m] (ascending) and transverse waterplane moments of inertia about the
        centreline [m⁴].
    cm : float
        Midship section coefficient [-].
    bilge_keel_area : float
        Total projected bilge-keel area [m²].
    sharp_bilge : bool
        Ship with a sharp bilge.

    Returns
    -------
    ParametricRollCheck

    References
    ----------
    Module reference [3]_.
    """
    wp_draft = np.asarray(wp_draft, dtype=float)
    wp_inertia = np.asarray(wp_inertia, dtype=float)
    half = lpp * SW_LEVEL1 / 2.0
    d_h = draft + min(depth - draft, half)
    d_l = draft - min(draft - 0.25 * draft_full, half)
    i_h = float(np.interp(d_h, wp_draft, wp_inertia))
    i_l = float(np.interp(d_l, wp_draft, wp_inertia))
    dgm = (i_h - i_l) / (2.0 * volume)
    ratio = dgm / gm
    r_pr = parametric_roll_r_pr(cm, bilge_keel_area, lpp, beam, sharp_bilge=sharp_bilge)
    vulnerable = ratio > r_pr
    min_hs = SW_LEVEL1 * lpp * r_pr / ratio if vulnerable else math.inf
    verdict = (
        f"vulnerable: parametric roll screened for wave systems of Hs >= {min_hs:.1f} m"
        if vulnerable
        else "not vulnerable: parametric roll not screened"
    )
    text = (
        f"Parametric roll: MSC.1/Circ.1627 level 1 for this loading condition, "
        f"dGM/GM = {ratio:.2f} against R_PR = {r_pr:.2f}, {verdict}."
    )
    return ParametricRollCheck("circ1627_level1", bool(vulnerable), dgm, ratio, r_pr, text, min_hs)


PERIOD_SCREENING_ONLY = ParametricRollCheck(
    "period_screening",
    True,
    text=(
        "Parametric roll: period screening of MSC.1/Circ.1228 only (the vessel file gives no waterplane "
        "inertia table for the MSC.1/Circ.1627 level-1 check)."
    ),
)
"""The check that applies when the vessel file lacks the particulars of the level-1 check."""


def wave_systems(spectrum, min_hs=0.0, *, max_systems=4):
    """Split a directional spectrum into wave systems by steepest ascent (watershed partitioning).

    Uses :func:`estimator.partition.partition` (watershed by steepest ascent, periodic in θ, with small
    and close partitions merged), the partitioning the sea-state estimate reports. Each system gives
    Hs = 4·sqrt(m0) of its energy, the peak and mean periods and its energy-weighted circular mean direction.

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
        WaveSystem(hs=p.hs, tp=p.tp, theta=direction(p), label=f"system {i + 1}", tm01=p.tm01)
        for i, p in enumerate(parts)
        if p.hs >= min_hs and np.isfinite(p.tp)
    ]
