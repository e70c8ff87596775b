"""Fusion of consecutive sea-state estimates: the sea the advice is evaluated in.

One 20-minute window gives a noisy estimate: its spectrum scatters from one window to the next by
the sampling error of a short record (Bendat & Piersol 2010 §8.2) and by the ill-posedness of the
inversion, while the sea state itself is usually taken as stationary over half an hour to three
hours (DNV-RP-C205 (2010) §3.3.1 and §3.5.1: a short-term sea state of 3 to 6 hours, common
practice). Acting on each window alone makes the advice follow that scatter. :func:`fuse_estimates`
combines the latest estimates of one chain into one spectrum by inverse-variance weighting, the
minimum-variance linear unbiased combination of independent estimates of one quantity (Gauss-Markov;
e.g. Bendat & Piersol 2010 §4.6 on averaging; the precision-weighted mean of meta-analysis), with
three guards:

* an estimate older than ``max_age`` is dropped, and weights decay with age as exp(−age/τ) (the
  sea may change: a project choice of τ and ``max_age``);
* an estimate whose ln Hs differs from the newest one's by more than ``z_consistent`` standard
  deviations of the difference is dropped: the sea has changed, or one of the two is an outlier;
  a confident newest estimate then stands alone, and a low-confidence newest one (wide interval)
  is weighted down by its own variance;
* overlapping windows share data, so their errors are correlated; the variance of the fused ln Hs
  is computed with the correlation ρ = shared fraction of the record between two windows (exact
  for the sampling error of averaged periodograms of a stationary record, to first order; Welch
  1967), and the RAO-level error of the condition (the same table for every window) is fully
  correlated and never averages down.

The weights use the estimate's own interval: σ_ln = ln(Hs_p95/Hs)/1.645 (the 90 % interval of
:class:`estimator.seastate.SeaStateEstimate`). Everything is SI.

References
----------
.. [1] Bendat, J.S. & Piersol, A.G. (2010). Random Data, 4th ed. Wiley. §4.6, §8.2.
.. [2] Welch, P.D. (1967). The use of fast Fourier transform for the estimation of power spectra.
   IEEE Trans. Audio Electroacoust. 15(2), 70-73 (variance of averaged, overlapping segments).
.. [3] DNV-RP-C205 (2010). Environmental conditions and environmental loads. §3.3, §3.5.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Sequence

import numpy as np

from estimator.spectra import DirectionalSpectrum

__all__ = ["FusionSettings", "FusedSea", "fuse_estimates", "INTERVAL_Z"]

INTERVAL_Z = 1.6448536269514722
"""Standard normal quantile of 0.95 (two-sided 90 % interval) [-]."""


@dataclass(frozen=True)
class FusionSettings:
    """Settings of :func:`fuse_estimates` (all project choices).

    Attributes
    ----------
    tau : float
        Time constant of the weight decay with age [s] (30 min).
    max_age : float
        Estimates older than this (window end to newest window end) are dropped [s] (40 min: the
        newest five windows at the default 10-min step, which span one hour of record).
    z_consistent : float
        Largest difference in ln Hs from the newest estimate, in standard deviations of the
        difference, for an estimate to be fused [-].
    """

    tau: float = 1800.0
    max_age: float = 2400.0
    z_consistent: float = 2.0


@dataclass(frozen=True)
class FusedSea:
    """The fused sea state (the newest estimate with the fused spectrum and intervals).

    Attributes
    ----------
    estimate : SeaStateEstimate
        The newest estimate with ``spectrum``, ``hs``, ``hs_p05``/``hs_p95``, ``tm01`` and
        ``tm01_p05``/``tm01_p95`` and ``confidence`` replaced by the fused values; its wave systems
        are the newest estimate's (they are for the zones and the page).
    used : int
        Number of estimates fused (1: the newest alone).
    weights : tuple of float
        Normalised weights, newest first [-].
    """

    estimate: object
    used: int
    weights: tuple[float, ...]


def _sd_ln(est, attr_lo: str, attr_hi: str, ref: float) -> float:
    lo, hi = getattr(est, attr_lo, math.nan), getattr(est, attr_hi, math.nan)
    if not (math.isfinite(lo) and math.isfinite(hi) and lo > 0 and hi > 0 and ref > 0):
        return math.nan
    return max(math.log(hi / lo) / (2 * INTERVAL_Z), 1e-6)


def fuse_estimates(
    estimates: Sequence,
    ends: Sequence[float],
    window: float,
    *,
    rao_scale_error: float = 0.0,
    settings: FusionSettings | None = None,
) -> FusedSea:
    """Fuse the latest sea-state estimates of one chain (module docstring).

    Parameters
    ----------
    estimates : sequence of SeaStateEstimate
        Newest first.
    ends : sequence of float
        End time of each estimate's window [s] (any origin), newest first.
    window : float
        Length of the analysis window [s] (for the overlap of two windows).
    rao_scale_error : float, optional
        Relative standard error of the RAO level common to all windows [-]
        (``EstimatorSettings.rao_scale_error``); never averaged down.
    settings : FusionSettings, optional

    Returns
    -------
    FusedSea
    """
    if not estimates:
        raise ValueError("fuse_estimates needs at least one estimate")
    if len(ends) != len(estimates):
        raise ValueError(f"{len(ends)} window ends for {len(estimates)} estimates")
    if not (window > 0 and math.isfinite(window)):
        raise ValueError(f"window must be a finite length > 0 s, got {window!r}")
    s = settings or FusionSettings()
    new = estimates[0]
    sd_new = _sd_ln(new, "hs_p05", "hs_p95", new.hs)
    if not math.isfinite(sd_new) or not new.hs > 0:
        return FusedSea(new, 1, (1.0,))
    keep, sds, ages = [new], [sd_new], [0.0]
    for est, end in zip(estimates[1:], ends[1:]):
        age = float(ends[0]) - float(end)
        if not (0 < age <= s.max_age) or not est.hs > 0:
            continue
        if est.spectrum.omega.shape != new.spectrum.omega.shape or est.spectrum.theta.shape != new.spectrum.theta.shape:
            continue
        sd = _sd_ln(est, "hs_p05", "hs_p95", est.hs)
        if not math.isfinite(sd):
            continue
        if abs(math.log(est.hs / new.hs)) > s.z_consistent * math.hypot(sd, sd_new):
            continue
        keep.append(est)
        sds.append(sd)
        ages.append(age)
    if len(keep) == 1:
        return FusedSea(new, 1, (1.0,))
    sds = np.asarray(sds)
    ages = np.asarray(ages)
    w = np.exp(-ages / s.tau) / sds**2
    a = w / w.sum()
    density = np.tensordot(a, np.stack([e.spectrum.density for e in keep]), axes=1)
    spectrum = DirectionalSpectrum(omega=new.spectrum.omega, theta=new.spectrum.theta, density=density)
    hs = float(spectrum.hs())
    # variance of the fused ln Hs: random parts correlated by the shared share of the record,
    # the RAO-level part fully correlated
    rao = float(rao_scale_error)
    rnd = np.sqrt(np.maximum(sds**2 - rao**2, 0.0))
    rho = np.clip(1.0 - np.abs(ages[:, None] - ages[None, :]) / window, 0.0, 1.0)
    var = float(a @ (rho * np.outer(rnd, rnd)) @ a) + rao**2
    sd_hs = math.sqrt(max(var, 0.0))
    changes = {
        "spectrum": spectrum,
        "hs": hs,
        "hs_sd": hs * sd_hs,
        "hs_p05": hs * math.exp(-INTERVAL_Z * sd_hs),
        "hs_p95": hs * math.exp(INTERVAL_Z * sd_hs),
        "confidence": float(np.clip(np.dot(a, [e.confidence for e in keep]), 0.0, 1.0)),
    }
    tm = float(spectrum.tm01())
    sd_tm = np.array([_sd_ln(e, "tm01_p05", "tm01_p95", getattr(e, "tm01", math.nan)) for e in keep])
    if math.isfinite(tm) and tm > 0 and np.all(np.isfinite(sd_tm)):
        sd_t = math.sqrt(max(float(a @ (rho * np.outer(sd_tm, sd_tm)) @ a), 0.0))
        changes.update(tm01=tm, tm01_p05=tm * math.exp(-INTERVAL_Z * sd_t), tm01_p95=tm * math.exp(INTERVAL_Z * sd_t))
    return FusedSea(replace(new, **changes), len(keep), tuple(float(x) for x in a))
