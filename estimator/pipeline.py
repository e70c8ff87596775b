"""One analysis window, end to end: raw record → prepared record → cross-spectra → sea-state estimate.

This is the composition used identically on board (every cycle) and ashore (replay), so that replay
gives the advice the ship would have been given. It is pure: the caller supplies the record (arrays in
SI units and sensor sign conventions) and keeps the previous window's result for the warm start.

An estimate outside physical bounds (:func:`implausible`: the largest seas on record, breaking-limited
steepness) makes the window a failed one, with its reason, so that replay and the live cycle go on.

The roll-period check (:func:`roll_period_check`) compares the natural roll period seen in the measured
roll spectrum with the loading condition's value and reports the metacentric height the measured period
implies through the IMO IS Code 2008 (Part A, 2.3.4) roll-period formula, inverted.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from estimator.constants import G
from estimator.crossspectra import CrossSpectra, cross_spectral_matrix
from estimator.hull import gm_from_roll_period
from estimator.prep import PreparedWindow, PrepSettings, Record, prepare
from estimator.seastate import SeaStateEstimate, SeaStateEstimator

MIN_CHANNELS = 2

HS_RECORD = 19.0
"""Largest significant wave height measured by a buoy [m]: 19 m, North Atlantic, February 2013, as
recognised by the World Meteorological Organization in 2016 (from memory)."""
HS_RECORD_MARGIN = 1.25
"""An estimate above HS_RECORD·HS_RECORD_MARGIN (about 24 m) is taken as a failed window (project choice:
a quarter above the largest seas on record, for seas not measured by a buoy)."""
STEEPNESS_MARGIN = 1.5
"""An estimate steeper than STEEPNESS_MARGIN times the breaking-limited steepness is a failed window
(project choice: the limit is for the average sea state, single estimates scatter around it)."""


def limiting_steepness(tp: float) -> float:
    """Breaking-limited average steepness S_p = 2π·Hs/(g·Tp²) of a sea state [-].

    1/15 for Tp ≤ 8 s, 1/25 for Tp ≥ 15 s, linear in between.

    References
    ----------
    .. [1] DNV (2010). Recommended practice DNV-RP-C205, Environmental conditions and environmental
       loads, §3.5.5 (limiting steepness of a sea state) - from memory.
    """
    return float(np.interp(tp, [8.0, 15.0], [1 / 15, 1 / 25]))


def implausible(estimate: SeaStateEstimate) -> str:
    """Why an estimate is physically implausible ("" when it is not): non-finite values, Hs above the
    largest seas on record or a sea steeper than breaking allows (both with a margin, see
    :data:`HS_RECORD_MARGIN`, :data:`STEEPNESS_MARGIN`)."""
    hs, tp = estimate.hs, estimate.tp
    if not (np.isfinite(hs) and np.isfinite(tp) and tp > 0 and hs >= 0):
        return f"estimate not finite (Hs {hs!r} m, Tp {tp!r} s)"
    limit = HS_RECORD * HS_RECORD_MARGIN
    if hs > limit:
        return (f"implausible estimate: Hs {hs:.1f} m is above the largest seas on record "
                f"({HS_RECORD:.0f} m, allowed up to {limit:.0f} m)")
    steep = 2 * np.pi * hs / (G * tp**2)
    s_max = STEEPNESS_MARGIN * limiting_steepness(tp)
    if steep > s_max:
        return (f"implausible estimate: Hs {hs:.1f} m with Tp {tp:.1f} s is steeper than breaking allows "
                f"(steepness 1/{1 / steep:.0f}, allowed up to 1/{1 / s_max:.0f})")
    return ""


@dataclass(frozen=True)
class RollPeriodCheck:
    """Measured versus expected natural roll period.

    Attributes
    ----------
    measured : float
        Period of the roll spectral peak in encounter frequency [s] (NaN when roll is not usable).
    expected : float
        The loading condition's natural roll period [s].
    implied_gm : float
        GM implied by the measured period through the IS Code formula [m] (NaN when not computable).
    flagged : bool
        True when the two periods differ by more than ``tolerance``.
    note : str
        Plain-language result.
    """

    measured: float
    expected: float
    implied_gm: float
    flagged: bool
    note: str


@dataclass(frozen=True)
class WindowAnalysis:
    """Result of :func:`analyse_window`.

    ``estimate`` is None when the window was rejected; ``reasons`` then says why in plain words.
    """

    accepted: bool
    reasons: tuple[str, ...]
    estimate: SeaStateEstimate | None
    prepared: PreparedWindow = field(repr=False)
    spectra: CrossSpectra | None = field(default=None, repr=False)
    roll_check: RollPeriodCheck | None = None
    channel_rms: dict = field(default_factory=dict)


def roll_period_check(spectra: CrossSpectra, expected: float, *, beam: float, draft: float, lwl: float,
                      tolerance: float = 0.10, min_share: float = 0.3) -> RollPeriodCheck:
    """Natural roll period from the measured roll spectrum, compared with the condition's value.

    The roll resonance is found as the peak of the roll spectrum divided by the heave (or vertical
    acceleration) spectrum, within a factor two of the expected frequency, refined by a parabola through
    the three highest bins: the division removes the shape of the wave spectrum, so roll that merely
    follows the waves does not pass for the natural period. The result is only used when the roll band
    ±20 % around it holds at least ``min_share`` of the roll variance (otherwise the roll is wave-driven
    away from resonance and says little about GM).

    Parameters
    ----------
    spectra : CrossSpectra
    expected : float
        Natural roll period of the loading condition [s].
    beam, draft, lwl : float
        Breadth, mean draft and waterline length [m] (IS Code formula).
    tolerance : float
        Relative difference above which the check is flagged [-] (project choice: 10 %).

    References
    ----------
    .. [1] IMO (2008). International Code on Intact Stability (2008 IS Code), res. MSC.267(85),
       Part A, 2.3.4: T = 2·C·B/√GM, C = 0.373 + 0.023·B/d − 0.043·L_wl/100.
    """
    nan = float("nan")
    if "roll" not in spectra.channels:
        return RollPeriodCheck(nan, expected, nan, False, "roll not measured")
    r = spectra.channels.index("roll")
    w = spectra.omega_e
    s = np.real(spectra.phi[:, r, r])
    w0 = 2 * np.pi / expected
    band = (w > 0.5 * w0) & (w < 2.0 * w0)
    if band.sum() < 3 or s[band].max() <= 0:
        return RollPeriodCheck(nan, expected, nan, False, "roll spectrum too weak near the expected period")
    # Wave-driven roll peaks at the wave period, not at the natural period. Dividing by the spectrum of a
    # channel that follows the waves without resonance (heave, else vertical acceleration) removes most of
    # the wave spectrum's shape, so the peak of the ratio marks the roll resonance (an empirical transfer
    # function |H_roll|²/|H_heave|², Bendat & Piersol 2010 §6.1; heave is near 1 m/m in long waves).
    ref = next((c for c in ("heave", "acc_z") if c in spectra.channels), None)
    shape = s
    if ref is not None:
        q = spectra.channels.index(ref)
        sr = np.real(spectra.phi[:, q, q])
        floor = 0.05 * float(sr[band].max()) if sr[band].max() > 0 else 1e-300
        shape = s / (sr + floor)
    idx = np.flatnonzero(band)
    k = idx[np.argmax(shape[band])]
    wk = w[k]
    if 0 < k < w.size - 1:
        y0, y1, y2 = shape[k - 1], shape[k], shape[k + 1]
        den = y0 - 2 * y1 + y2
        if den < 0:
            wk = w[k] + 0.5 * (y0 - y2) / den * (w[k + 1] - w[k - 1]) / 2
    dw = np.gradient(w)
    near = np.abs(w / wk - 1) <= 0.2
    share = float((s[near] * dw[near]).sum() / max((s * dw).sum(), 1e-300))
    measured = float(2 * np.pi / wk)
    if share < min_share:
        return RollPeriodCheck(measured, expected, nan, False,
                               f"roll is mostly wave-driven ({100 * share:.0f} % near its peak); no period check")
    try:
        gm = float(gm_from_roll_period(beam, draft, lwl, measured))
    except ValueError:
        gm = nan
    diff = measured / expected - 1
    flagged = abs(diff) > tolerance
    note = (f"measured roll period {measured:.1f} s vs {expected:.1f} s for the loading condition "
            f"({100 * diff:+.0f} %); implied GM {gm:.2f} m")
    if flagged:
        note += " - check the loading condition and GM"
    return RollPeriodCheck(measured, expected, gm, flagged, note)


def _stationarity_factor(prepared: PreparedWindow, settings: PrepSettings) -> tuple[float, str]:
    hs = prepared.heading_std / settings.max_heading_std
    ss = prepared.speed_std / settings.max_speed_std
    worst = max(hs, ss)
    value = float(np.clip(1.2 - 0.4 * worst, 0.3, 1.0))
    reason = ""
    if value < 0.9:
        reason = (f"heading or speed changed during the window (heading sd {np.degrees(prepared.heading_std):.1f}°, "
                  f"speed sd {prepared.speed_std / 0.5144:.1f} kn)")
    if not prepared.stationary:
        value = min(value, 0.7)
        reason = reason or "the motions were not stationary over the window"
    return value, reason


def analyse_window(record: Record, estimator: SeaStateEstimator, *, prep_settings: PrepSettings | None = None,
                   previous: SeaStateEstimate | None = None, noise_std: dict | None = None,
                   roll_check_particulars: dict | None = None, rao_valid: tuple[bool, str] = (True, "")
                   ) -> WindowAnalysis:
    """Prepare a record, compute its cross-spectra and estimate the sea state.

    Parameters
    ----------
    record : Record
        Raw samples of the window (SI, sensor conventions).
    estimator : SeaStateEstimator
        For the active loading condition.
    prep_settings : PrepSettings, optional
    previous : SeaStateEstimate, optional
        Previous window's estimate (warm start).
    noise_std : dict, optional
        Sensor noise standard deviation per channel [channel units] for the signal-to-noise gate.
    roll_check_particulars : dict, optional
        ``{"expected": T_roll [s], "beam": B [m], "draft": d [m], "lwl": L_wl [m]}`` to run
        :func:`roll_period_check`.
    rao_valid : (bool, str)
        Passed to the estimator's confidence.
    """
    settings = prep_settings or PrepSettings()
    prepared = prepare(record, settings)
    if not prepared.accepted:
        return WindowAnalysis(False, tuple(prepared.reasons) or ("window rejected",), None, prepared)
    usable = [c for c in prepared.usable]
    if len(usable) < MIN_CHANNELS:
        return WindowAnalysis(False, (f"only {len(usable)} usable motion channel(s): {', '.join(usable) or 'none'}",),
                              None, prepared)
    spectra = cross_spectral_matrix(prepared, channels=usable, noise_std=noise_std)
    rms = {c: float(np.std(prepared.channels[c])) for c in usable}
    factor, reason = _stationarity_factor(prepared, settings)
    window_factors = {"stationarity": (factor, reason)}
    n_flagged = [c for c, fl in prepared.flags.items() if fl and c in usable]
    if n_flagged:
        window_factors["sensor_quality"] = (0.8, "sensor flags: " + ", ".join(
            f"{c} ({', '.join(prepared.flags[c])})" for c in n_flagged))
    gate = spectra.gate
    passing = float(np.mean(np.any(gate, axis=1))) if gate.size else 0.0
    if passing < 0.2:
        window_factors["signal"] = (0.4, "motions barely above sensor noise (low sea or calm)")
    estimate = estimator.estimate(spectra.omega_e, spectra.phi, spectra.n_d, spectra.channels,
                                  heading=prepared.heading_mean, speed=prepared.speed_mean,
                                  duration=prepared.duration, gate=gate, previous=previous,
                                  window_factors=window_factors, rao_valid=rao_valid)
    why = implausible(estimate)
    if why:
        # an absurd estimate is a failed window with its reason; the replay or live cycle goes on
        return WindowAnalysis(False, (why,), None, prepared, spectra, None, rms)
    check = None
    if roll_check_particulars:
        check = roll_period_check(spectra, **roll_check_particulars)
    return WindowAnalysis(True, tuple(prepared.reasons), estimate, prepared, spectra, check, rms)
