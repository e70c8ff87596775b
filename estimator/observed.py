"""A directional wave spectrum from the watch's visual estimate (one or two wave systems).

When the ship's motions cannot be used (sensor fault, window rejected), the officer's visual estimate of
each wave system (significant height, period, direction it comes from) is turned into a spectrum the
advisor can score: per system a JONSWAP spectrum with the DNV-RP-C205 peak enhancement γ(Hs, Tp) and
cos-2s spreading about the stated direction; the systems are summed.

Choices, stated: the visual period is taken as the peak period Tp (project choice; visual periods are
uncertain by ±2 s or more, which the advisor's uncertainty widening should cover); spreading s = 10 for
a wind sea and s = 25 for swell (from memory: Goda's s_max for wind waves and for swell of short decay
distance, used here as constant s).

References
----------
.. [1] DNV-RP-C205 (2010), *Environmental Conditions and Environmental Loads*, §3.5.5 (JONSWAP, γ from
   Tp/√Hs).
.. [2] Longuet-Higgins, M. S., Cartwright, D. E. and Smith, N. D. (1963). Observations of the
   directional spectrum of sea waves using the motions of a floating buoy (cos-2s spreading).
.. [3] Goda, Y. (2000). *Random Seas and Design of Maritime Structures*, 2nd ed., §2.3 (s_max of wind
   waves and swell), from memory.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from estimator.spectra import DirectionalSpectrum, jonswap, jonswap_gamma_dnv, spreading_cos2s

__all__ = ["ObservedSystem", "SPREADING_S", "observed_spectrum"]

SPREADING_S = {"wind sea": 10.0, "swell": 25.0}
"""cos-2s exponent per kind of system [-] (module docstring)."""


@dataclass(frozen=True)
class ObservedSystem:
    """One visually estimated wave system (SI)."""

    label: str
    """"wind sea" or "swell"."""
    hs: float
    """Significant wave height [m]."""
    tp: float
    """Period, taken as the peak period [s]."""
    wave_from: float
    """True direction the waves come from [rad]."""


def observed_spectrum(systems: Sequence[ObservedSystem], omega, n_theta: int = 72) -> DirectionalSpectrum:
    """Sum of JONSWAP × cos-2s spectra of the observed systems on ``omega`` × a uniform θ grid.

    Parameters
    ----------
    systems : sequence of ObservedSystem
        One or two systems.
    omega : array_like
        Absolute wave frequencies, ascending, ≥ 0 [rad/s].
    n_theta : int
        Number of directions on [0, 2π).

    Returns
    -------
    DirectionalSpectrum
        S(ω, θ) [m²·s/rad²], θ true coming-from.
    """
    if not systems:
        raise ValueError("no observed wave system")
    omega = np.asarray(omega, float)
    theta = np.arange(n_theta) * 2.0 * np.pi / n_theta
    density = np.zeros((omega.size, theta.size))
    for s in systems:
        if s.label not in SPREADING_S:
            raise ValueError(f"unknown system label {s.label!r}; allowed: {', '.join(SPREADING_S)}")
        if not (s.hs > 0 and s.tp > 0 and np.isfinite(s.wave_from)):
            raise ValueError(f"observed system {s!r}: hs and tp must be > 0 and the direction finite")
        s1 = jonswap(omega, s.hs, s.tp, gamma=float(jonswap_gamma_dnv(s.hs, s.tp)))
        d = spreading_cos2s(theta, s.wave_from, SPREADING_S[s.label])
        density += s1[:, None] * d[None, :]
    return DirectionalSpectrum(omega=omega, theta=theta, density=density)
