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

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from estimator.crossspectra import CrossSpectra, cross_spectral_matrix
from estimator.hull import gm_from_roll_period
from estimator.prep import PreparedWindow, PrepSettings, Record, prepare
from estimator.physical import (  # the bounds live there; kept importable from here
    HS_RECORD,
    HS_RECORD_MARGIN,
    STEEPNESS_MARGIN,
    limiting_steepness,
    physical_hs_limit,
    steepness_reason,
)
from estimator.seastate import SeaStateEstimate, SeaStateEstimator

__all__ = ["HS_RECORD", "HS_RECORD_MARGIN", "STEEPNESS_MARGIN", "limiting_steepness", "physical_hs_limit",
           "steepness_reason", "implausible", "analyse_window", "roll_period_check", "RollPeriodCheck",
           "WindowAnalysis", "identified_roll", "resonance_damping", "MIN_CHANNELS", "GM_WARNING"]

MIN_CHANNELS = 2


def implausible(estimate: SeaStateEstimate) -> str:
    """Why an estimate is physically implausible ("" when it is not): non-finite values, Hs above the
    largest seas on record, or a wave system steeper than breaking allows at its own peak period (both
    with a margin, see :data:`HS_RECORD_MARGIN`, :data:`STEEPNESS_MARGIN`; :func:`steepness_reason`).
    Without systems the whole sea is held to the steepness limit at its peak period."""
    hs, tp = estimate.hs, estimate.tp
    if not (np.isfinite(hs) and np.isfinite(tp) and tp > 0 and hs >= 0):
        return f"estimate not finite (Hs {hs!r} m, Tp {tp!r} s)"
    limit = HS_RECORD * HS_RECORD_MARGIN
    if hs > limit:
        return (f"implausible estimate: Hs {hs:.1f} m is above the largest seas on record "
                f"({HS_RECORD:.0f} m, allowed up to {limit:.0f} m)")
    systems = [(s.label, s.hs, s.tp) for s in estimate.systems] or [("sea", hs, tp)]
    return steepness_reason(systems)


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
    damping : float
        Equivalent linear roll damping ratio from the half-power bandwidth of the roll resonance [-]
        (NaN when not identifiable).
    usable : bool
        True when the measured roll is dominated by its resonance, so that the period (and damping) may
        replace the stored ones in the roll transfer function.
    gm_warning : bool
        True when the implied GM differs from the condition's GM by more than :data:`GM_WARNING` (a
        warning for the master: check the loading condition).
    """

    measured: float
    expected: float
    implied_gm: float
    flagged: bool
    note: str
    damping: float = float("nan")
    usable: bool = False
    gm_warning: bool = False


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


GM_WARNING = 0.20
"""Relative difference between the GM implied by the measured roll period and the condition's GM above
which a warning is given [-]. GM ∝ T⁻² (IS Code 2008 formula), so 20 % in GM is about 10 % in period, the
period tolerance of :func:`roll_period_check` (project choice)."""
ROLL_FEED_PERIOD = 0.05
"""Relative difference of the identified roll period from the stored one above which the identified
period (and damping) replace the stored ones in the estimator's roll transfer function [-] (project
choice: about the period resolution of the identification from a 20-min record)."""
ROLL_FEED_DAMPING = 0.50
"""Relative difference of the identified damping ratio from the stored one above which it is fed [-]
(project choice: the identification from a 20-min record scatters by about ±30 % and reads about
+0.015 high, see tests/estimator/test_pipeline.py; equivalent linear roll damping is itself uncertain by
about ±30 %, Himeno 1981)."""


def resonance_damping(omega: np.ndarray, ratio: np.ndarray, k: int, t_segment: float) -> float:
    """Damping ratio of the roll resonance fitted to an empirical roll/heave spectral ratio [-].

    The ratio |H_roll|²/|H_heave|² near the resonance is modelled as c·ω⁴·B(ω), with ω⁴ the long-wave
    growth of the wave-slope roll excitation (heave ≈ 1 m/m; Lewis 1989 PNA III ch. 8) and
    B = 1/((1 − r²)² + (2ζr)²), r = ω/ω₀, the 1-DOF response, *seen through the spectral window of the
    estimate*: a lightly damped peak is narrower than a Welch band, so a half-power bandwidth read off
    the bands would only measure the window (resolution bias, Bendat & Piersol 2010 §8.5.1). Each band
    of the estimate is the mean of the Welch bins (spacing 2π/T_seg) inside it, each bin the model
    weighted by the Hann spectral window |W(x)|², W = sinc(x)/(1 − x²), x the offset in bins (Harris
    1978). ω₀ within ±10 % of the peak band and ζ in 0.01-0.4 are found by a grid search minimising
    the squared log misfit over the bands within 0.6-1.6 ω_peak (c in closed form). NaN when fewer
    than four bands are usable.

    References
    ----------
    .. [1] Harris, F.J. (1978). On the use of windows for harmonic analysis with the discrete Fourier
       transform. Proceedings of the IEEE 66(1):51-83 (Hann window kernel).
    """
    w = np.asarray(omega, float)
    y = np.asarray(ratio, float)
    edges = np.concatenate([[w[0] - 0.5 * (w[1] - w[0])], 0.5 * (w[1:] + w[:-1]),
                            [w[-1] + 0.5 * (w[-1] - w[-2])]])
    sel = np.flatnonzero((w >= 0.6 * w[k]) & (w <= 1.6 * w[k]) & (y > 0))
    if sel.size < 4:
        return float("nan")
    d_bin = 2 * np.pi / t_segment
    x = np.linspace(-4, 4, 161)
    kern = (np.sinc(x) / np.where(np.abs(np.abs(x) - 1) < 1e-9, np.nan, 1 - x**2)) ** 2
    kern = np.where(np.isnan(kern), 0.25, kern)  # limit at |x| = 1: (1/2)²
    pts, wts, band = [], [], []
    for b, m in enumerate(sel):
        bins = np.arange(np.ceil(edges[m] / d_bin), np.ceil(edges[m + 1] / d_bin)) * d_bin
        if bins.size == 0:
            bins = np.array([w[m]])
        for wb in bins:
            pts.append(wb + x * d_bin)
            wts.append(kern / kern.sum() / bins.size)
            band.append(np.full(x.size, b))
    pts, wts, band = np.concatenate(pts), np.concatenate(wts), np.concatenate(band)
    ok = pts > 0
    pts, wts, band = pts[ok], wts[ok], band[ok]
    w0 = w[k] * np.linspace(0.9, 1.1, 41)[:, None, None]
    zeta = np.geomspace(0.01, 0.4, 60)[None, :, None]
    r2 = (pts[None, None, :] / w0) ** 2
    resp = (wts * pts**4) / ((1 - r2) ** 2 + (4 * zeta**2) * r2)  # (41, 60, P)
    # the points are in band order: one reduction per band start instead of a masked copy per band
    starts = np.flatnonzero(np.r_[True, band[1:] != band[:-1]])
    model = np.add.reduceat(resp, starts, axis=2)
    lr = np.log(y[sel])[None, None, :] - np.log(model)
    misfit = ((lr - lr.mean(axis=2, keepdims=True)) ** 2).sum(axis=2)
    _, b_best = np.unravel_index(int(np.argmin(misfit)), misfit.shape)
    return float(zeta[0, b_best, 0])


def roll_period_check(spectra: CrossSpectra, expected: float, *, beam: float, draft: float, lwl: float,
                      tolerance: float = 0.10, min_share: float = 0.3, gm: float | None = None
                      ) -> RollPeriodCheck:
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
    gm : float, optional
        The condition's GM [m], for :data:`GM_WARNING`.

    The damping ratio comes from a 1-DOF resonance fitted to the band-averaged roll/heave ratio around
    the same peak (:func:`resonance_damping`).

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
        gm_implied = float(gm_from_roll_period(beam, draft, lwl, measured))
    except ValueError:
        gm_implied = nan
    t_seg = spectra.nperseg / spectra.fs
    zeta = (resonance_damping(w, s / np.maximum(np.real(spectra.phi[:, q, q]), 1e-300), k, t_seg)
            if ref is not None else float("nan"))
    diff = measured / expected - 1
    flagged = abs(diff) > tolerance
    gm_warning = bool(gm and np.isfinite(gm_implied) and abs(gm_implied / gm - 1) > GM_WARNING)
    note = (f"measured roll period {measured:.1f} s vs {expected:.1f} s for the loading condition "
            f"({100 * diff:+.0f} %); implied GM {gm_implied:.2f} m")
    if gm:
        note += f" vs {gm:.2f} m"
    if flagged or gm_warning:
        note += " - check the loading condition and GM"
    return RollPeriodCheck(measured, expected, gm_implied, flagged, note, zeta, True, gm_warning)


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


def identified_roll(check: RollPeriodCheck, estimator: SeaStateEstimator) -> tuple[float, float] | None:
    """(period [s], damping ratio [-]) to use in the roll transfer function, or None to keep the stored.

    The identified roll replaces the stored one when the roll is resonance-dominated (``check.usable``)
    and the period differs by more than :data:`ROLL_FEED_PERIOD` or the damping by more than
    :data:`ROLL_FEED_DAMPING`; an unidentifiable damping keeps the stored damping ratio.
    """
    if not check.usable or not np.isfinite(check.measured) or estimator.roll_period is None:
        return None
    zeta_stored = estimator.roll_damping
    zeta = check.damping if np.isfinite(check.damping) and 0.005 <= check.damping <= 0.5 else zeta_stored
    if (abs(check.measured / estimator.roll_period - 1) > ROLL_FEED_PERIOD
            or abs(zeta / zeta_stored - 1) > ROLL_FEED_DAMPING):
        return (float(check.measured), float(zeta))
    return None


def analyse_window(record: Record, estimator: SeaStateEstimator, *, prep_settings: PrepSettings | None = None,
                   previous: SeaStateEstimate | None = None, noise_std: dict | None = None,
                   roll_check_particulars: dict | None = None, rao_valid: tuple[bool, str] = (True, ""),
                   prior=None) -> WindowAnalysis:
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
    prior : estimator.seastate.SeaPrior, optional
        An independent estimate of the sea (the watch's visual estimate) used as the estimator's prior;
        default None (the motions alone).
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
    check = None
    roll = None
    if roll_check_particulars:
        check = roll_period_check(spectra, **roll_check_particulars)
        roll = identified_roll(check, estimator)
    estimate = estimator.estimate(spectra.omega_e, spectra.phi, spectra.n_d, spectra.channels,
                                  heading=prepared.heading_mean, speed=prepared.speed_mean,
                                  duration=prepared.duration, gate=gate, previous=previous,
                                  window_factors=window_factors, rao_valid=rao_valid, roll=roll,
                                  prior=prior)
    why = implausible(estimate)
    if why:
        # an absurd estimate is a failed window with its reason; the replay or live cycle goes on
        return WindowAnalysis(False, (why,), None, prepared, spectra, None, rms)
    # the upper bound of the Hs interval never exceeds what the sea can physically hold (same bounds)
    cap = physical_hs_limit(estimate.tp_p95 if np.isfinite(estimate.tp_p95) else estimate.tp)
    if estimate.hs_p95 > cap:
        estimate = dataclasses.replace(estimate, hs_p95=float(max(cap, estimate.hs)))
    return WindowAnalysis(True, tuple(prepared.reasons), estimate, prepared, spectra, check, rms)
