"""Wave spectra, directional spreading, spectral moments and the directional spectrum object.

Everything here is pure numpy/scipy and vectorised. Conventions (DEVELOPERS.md, docs/conventions.md):
frequencies ``omega`` are absolute circular frequencies [rad/s]; spectra are one-sided per rad/s,
S(ω) [m²·s/rad]; directional spectra S(ω, θ) [m²·s/rad²] with θ the true direction the waves come
FROM, clockwise from north [rad]; Hs = 4·sqrt(m0).

The parametric spectra broadcast their parameters against ``omega`` (numpy rules), so a parametric
fitter can evaluate many candidate sea states in one call, e.g. ``jonswap(omega, hs[:, None],
tp[:, None])`` → shape (P, K).

References
----------
.. [1] DNV, "Environmental conditions and environmental loads", Recommended Practice
   DNV-RP-C205, §3.5 (wave spectra, directional distribution).
.. [2] Hasselmann, K. et al. (1973), "Measurements of wind-wave growth and swell decay during the
   Joint North Sea Wave Project (JONSWAP)", Ergänzungsheft Dtsch. Hydrogr. Z., Reihe A (8), Nr. 12.
.. [3] Pierson, W. J. and Moskowitz, L. (1964), "A proposed spectral form for fully developed wind
   seas based on the similarity theory of S. A. Kitaigorodskii", J. Geophys. Res. 69(24),
   5181-5190. doi:10.1029/JZ069i024p05181
.. [4] Ochi, M. K. and Hubble, E. N. (1976), "Six-parameter wave spectra", Proc. 15th Coastal
   Engineering Conference, 301-328.
.. [5] Longuet-Higgins, M. S., Cartwright, D. E. and Smith, N. D. (1963), "Observations of the
   directional spectrum of sea waves using the motions of a floating buoy", in Ocean Wave Spectra, 111-136.
.. [6] Kuik, A. J., van Vledder, G. Ph. and Holthuijsen, L. H. (1988), "A method for the routine
   analysis of pitch-and-roll buoy wave data", J. Phys. Oceanogr. 18(7), 1020-1034.
   doi:10.1175/1520-0485(1988)018<1020:AMFTRA>2.0.CO;2
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from scipy.special import gammaln

TWO_PI = 2.0 * np.pi

__all__ = [
    "DirectionalSpectrum",
    "cos2s_s_from_spread",
    "directional_spectrum",
    "grid_weights",
    "hs_from_spectrum",
    "jonswap",
    "jonswap_gamma_dnv",
    "ochi_hubble",
    "peak_frequency",
    "pierson_moskowitz",
    "resample_spectrum",
    "spectral_moment",
    "spread_from_cos2s",
    "spread_from_cosn",
    "spreading_cos2s",
    "spreading_cosn",
    "tm01_from_spectrum",
    "tm02_from_spectrum",
    "wrap_angle",
]


# ---------------------------------------------------------------------------------------------
# input checks
# ---------------------------------------------------------------------------------------------


def _first_bad(arr: np.ndarray, bad: np.ndarray) -> float:
    return float(np.asarray(arr, dtype=float)[bad].flat[0])


def _as_float(func: str, name: str, value, unit: str) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr)
    if bad.any():
        raise ValueError(f"{func}: {name} must be finite [{unit}], got {_first_bad(arr, bad)!r}")
    return arr


def _check_min(func: str, name: str, value, unit: str, minimum: float, strict: bool) -> np.ndarray:
    arr = _as_float(func, name, value, unit)
    bad = arr <= minimum if strict else arr < minimum
    if bad.any():
        op = ">" if strict else ">="
        raise ValueError(f"{func}: {name} must be {op} {minimum:g} {unit}, got {_first_bad(arr, bad)!r}")
    return arr


def _omega(func: str, omega) -> np.ndarray:
    return _check_min(func, "omega", omega, "rad/s", 0.0, strict=False)


def wrap_angle(angle):
    """Wrap an angle to [0, 2π).

    Parameters
    ----------
    angle : array_like
        Angle. [rad]

    Returns
    -------
    numpy.ndarray
        The same angle in [0, 2π). [rad]
    """
    out = np.mod(np.asarray(angle, dtype=float), TWO_PI)
    # np.mod can return exactly 2π for tiny negative inputs
    return np.where(out >= TWO_PI, 0.0, out)


def _wrap_pi(angle: np.ndarray) -> np.ndarray:
    """Wrap to [-π, π)."""
    return np.mod(angle + np.pi, TWO_PI) - np.pi


# ---------------------------------------------------------------------------------------------
# frequency spectra
# ---------------------------------------------------------------------------------------------


def _pm_shape(omega: np.ndarray, hs: np.ndarray, omega_p: np.ndarray) -> np.ndarray:
    """(5/16)·Hs²·ωp⁴·ω⁻⁵·exp(−1.25(ω/ωp)⁻⁴), exactly 0 where ω/ωp < 0.1.

    For x = ω/ωp < 0.1 the factor exp(−1.25·x⁻⁴) < exp(−12500) underflows to 0 in double precision,
    so returning 0 there is exact and avoids overflow of x⁻⁵ near ω = 0.
    """
    x = omega / omega_p
    small = x < 0.1
    xs = np.where(small, 1.0, x)
    s = 0.3125 * hs**2 / omega_p * xs**-5 * np.exp(-1.25 * xs**-4)
    return np.where(small, 0.0, s)


def pierson_moskowitz(omega, hs, tp):
    """Two-parameter Pierson–Moskowitz (Bretschneider) spectrum, DNV-RP-C205 form.

    .. math:: S(\\omega) = \\frac{5}{16} H_s^2 \\omega_p^4 \\omega^{-5}
              \\exp\\left(-\\frac{5}{4}\\left(\\frac{\\omega}{\\omega_p}\\right)^{-4}\\right),
              \\qquad \\omega_p = 2\\pi/T_p

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency, >= 0. [rad/s]
    hs : array_like
        Significant wave height, >= 0 (broadcast against ``omega``). [m]
    tp : array_like
        Peak period, > 0 (broadcast against ``omega``). [s]

    Returns
    -------
    numpy.ndarray
        Spectral density S(ω), broadcast shape of the inputs. [m²·s/rad]

    Raises
    ------
    ValueError
        If ``omega`` or ``hs`` is negative, ``tp`` is not positive, or any input is not finite.

    Notes
    -----
    The zeroth moment over [0, ∞) is exactly Hs²/16. The peak value is
    S(ωp) = (5/16)·Hs²·e^{-5/4}/ωp.

    References
    ----------
    .. [1] DNV-RP-C205, "Environmental conditions and environmental loads", §3.5.5 (Pierson–Moskowitz
       spectrum).
    .. [2] Pierson, W. J. and Moskowitz, L. (1964), J. Geophys. Res. 69(24), 5181-5190.
       doi:10.1029/JZ069i024p05181

    Examples
    --------
    >>> round(float(pierson_moskowitz(2 * np.pi / 10, 5.0, 10.0)), 4)
    3.5624
    """
    func = "pierson_moskowitz"
    omega = _omega(func, omega)
    hs = _check_min(func, "hs", hs, "m", 0.0, strict=False)
    tp = _check_min(func, "tp", tp, "s", 0.0, strict=True)
    return _pm_shape(omega, hs, TWO_PI / tp)


def jonswap(omega, hs, tp, gamma=3.3, sigma_a=0.07, sigma_b=0.09):
    """JONSWAP spectrum in the DNV-RP-C205 form (Pierson–Moskowitz times peak enhancement).

    .. math:: S_J(\\omega) = A_\\gamma\\, S_{PM}(\\omega)\\,
              \\gamma^{\\exp\\left(-\\frac{1}{2}\\left(\\frac{\\omega-\\omega_p}{\\sigma\\,\\omega_p}
              \\right)^2\\right)},\\qquad A_\\gamma = 1 - 0.287\\ln\\gamma

    with σ = ``sigma_a`` for ω <= ωp and ``sigma_b`` for ω > ωp.

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency, >= 0. [rad/s]
    hs : array_like
        Significant wave height, >= 0. [m]
    tp : array_like
        Peak period, > 0. [s]
    gamma : array_like, optional
        Peak enhancement factor, 1 <= gamma <= 20 (DNV-RP-C205 gives the normalisation A_γ for
        1 <= γ <= 7; γ = 1 gives Pierson–Moskowitz exactly). [-]
    sigma_a, sigma_b : array_like, optional
        Spectral width parameters below / above the peak, > 0. [-]

    Returns
    -------
    numpy.ndarray
        Spectral density, broadcast shape of the inputs. [m²·s/rad]

    Raises
    ------
    ValueError
        On negative ``omega``/``hs``, non-positive ``tp``/``sigma``, ``gamma`` outside [1, 20] or
        non-finite input.

    Notes
    -----
    A_γ is an approximate normalisation: 4·sqrt(m0) differs from ``hs`` by a few tenths of a
    percent (5.006 m for Hs = 5 m, Tp = 10 s, γ = 3.3). Peak value: S_J(ωp) = A_γ·γ·S_PM(ωp).

    References
    ----------
    .. [1] DNV-RP-C205, "Environmental conditions and environmental loads", §3.5.5 (JONSWAP
       spectrum, A_γ = 1 − 0.287 ln γ, σ_a = 0.07, σ_b = 0.09).
    .. [2] Hasselmann, K. et al. (1973), Ergänzungsheft Dtsch. Hydrogr. Z., Reihe A (8), Nr. 12.

    Examples
    --------
    >>> round(float(jonswap(2 * np.pi / 10, 5.0, 10.0, gamma=3.3)), 4)
    7.7277
    """
    func = "jonswap"
    omega = _omega(func, omega)
    hs = _check_min(func, "hs", hs, "m", 0.0, strict=False)
    tp = _check_min(func, "tp", tp, "s", 0.0, strict=True)
    gamma = _as_float(func, "gamma", gamma, "-")
    bad = (gamma < 1.0) | (gamma > 20.0)
    if bad.any():
        raise ValueError(f"{func}: gamma must be in [1, 20], got {_first_bad(gamma, bad)!r}")
    sigma_a = _check_min(func, "sigma_a", sigma_a, "-", 0.0, strict=True)
    sigma_b = _check_min(func, "sigma_b", sigma_b, "-", 0.0, strict=True)
    omega_p = TWO_PI / tp
    a_gamma = 1.0 - 0.287 * np.log(gamma)  # [1] §3.5.5
    sigma = np.where(omega <= omega_p, sigma_a, sigma_b)
    peak = gamma ** np.exp(-0.5 * ((omega - omega_p) / (sigma * omega_p)) ** 2)
    return a_gamma * _pm_shape(omega, hs, omega_p) * peak


def jonswap_gamma_dnv(hs, tp):
    """Peak enhancement factor γ from Hs and Tp, DNV-RP-C205 recommendation.

    γ = 5 for Tp/√Hs <= 3.6; γ = exp(5.75 − 1.15·Tp/√Hs) for 3.6 < Tp/√Hs < 5; γ = 1 for
    Tp/√Hs >= 5 (Tp in s, Hs in m).

    Parameters
    ----------
    hs : array_like
        Significant wave height, > 0. [m]
    tp : array_like
        Peak period, > 0. [s]

    Returns
    -------
    numpy.ndarray
        γ in [1, 5], broadcast shape of the inputs. [-]

    References
    ----------
    .. [1] DNV-RP-C205, "Environmental conditions and environmental loads", §3.5.5.5.
    """
    func = "jonswap_gamma_dnv"
    hs = _check_min(func, "hs", hs, "m", 0.0, strict=True)
    tp = _check_min(func, "tp", tp, "s", 0.0, strict=True)
    ratio = tp / np.sqrt(hs)
    mid = np.exp(5.75 - 1.15 * np.clip(ratio, 3.6, 5.0))
    return np.where(ratio <= 3.6, 5.0, np.where(ratio >= 5.0, 1.0, mid))


def ochi_hubble(omega, hs1, omega_m1, lambda1, hs2, omega_m2, lambda2):
    """Ochi–Hubble six-parameter (bimodal) spectrum.

    .. math:: S(\\omega) = \\frac{1}{4}\\sum_{j=1}^{2}
              \\frac{\\left(\\frac{4\\lambda_j+1}{4}\\omega_{mj}^4\\right)^{\\lambda_j}}
              {\\Gamma(\\lambda_j)}\\frac{H_{sj}^2}{\\omega^{4\\lambda_j+1}}
              \\exp\\left(-\\frac{4\\lambda_j+1}{4}\\left(\\frac{\\omega_{mj}}{\\omega}\\right)^4\\right)

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency, >= 0. [rad/s]
    hs1, hs2 : array_like
        Significant wave heights of the lower- and higher-frequency components, >= 0. [m]
    omega_m1, omega_m2 : array_like
        Modal (peak) frequencies of the components, > 0. [rad/s]
    lambda1, lambda2 : array_like
        Shape parameters, > 0 (λ = 1 gives Pierson–Moskowitz; larger λ is narrower). [-]

    Returns
    -------
    numpy.ndarray
        Spectral density, broadcast shape of the inputs. [m²·s/rad]

    Notes
    -----
    Each component integrates exactly to H_sj²/16, so Hs = sqrt(Hs1² + Hs2²). Evaluated in
    log space so that large λ does not overflow.

    References
    ----------
    .. [1] Ochi, M. K. and Hubble, E. N. (1976), "Six-parameter wave spectra", Proc. 15th Coastal
       Engineering Conference, 301-328.
    """
    func = "ochi_hubble"
    omega = _omega(func, omega)
    total = np.zeros(())
    for j, (hs, om, lam) in enumerate(((hs1, omega_m1, lambda1), (hs2, omega_m2, lambda2)), start=1):
        hs = _check_min(func, f"hs{j}", hs, "m", 0.0, strict=False)
        om = _check_min(func, f"omega_m{j}", om, "rad/s", 0.0, strict=True)
        lam = _check_min(func, f"lambda{j}", lam, "-", 0.0, strict=True)
        c = (4.0 * lam + 1.0) / 4.0
        x = omega / om
        # exp(-c·x⁻⁴) underflows to 0 for c·x⁻⁴ > ~745; below that cut the value is exactly 0
        small = c * np.where(x > 0, x, 1.0) ** -4 > 800.0
        small = small | (x <= 0)
        xs = np.where(small, 1.0, x)
        # log of [c·ωm⁴]^λ/Γ(λ) · ω^-(4λ+1)  =  λ ln c − lnΓ(λ) − ln ωm − (4λ+1) ln x
        log_s = lam * np.log(c) - gammaln(lam) - np.log(om) - (4.0 * lam + 1.0) * np.log(xs) - c * xs**-4
        total = total + np.where(small, 0.0, 0.25 * hs**2 * np.exp(log_s))
    return total


# ---------------------------------------------------------------------------------------------
# directional spreading
# ---------------------------------------------------------------------------------------------


def _cos2s_norm(s: np.ndarray) -> np.ndarray:
    """C(s) = Γ(s+1) / (2√π Γ(s+½)), evaluated with log-gamma."""
    return np.exp(gammaln(s + 1.0) - gammaln(s + 0.5)) / (2.0 * np.sqrt(np.pi))


def _cosn_norm(n: np.ndarray) -> np.ndarray:
    """C(n) = Γ(1+n/2) / (√π Γ(½+n/2)), evaluated with log-gamma."""
    return np.exp(gammaln(1.0 + 0.5 * n) - gammaln(0.5 + 0.5 * n)) / np.sqrt(np.pi)


def spreading_cos2s(theta, theta_mean, s):
    """Cosine-2s directional spreading function, normalised over the full circle.

    .. math:: D(\\theta) = C(s)\\cos^{2s}\\left(\\frac{\\theta-\\theta_0}{2}\\right),\\quad
              |\\theta-\\theta_0| \\le \\pi,\\qquad
              C(s) = \\frac{\\Gamma(s+1)}{2\\sqrt{\\pi}\\,\\Gamma(s+\\frac{1}{2})}

    so that ∫ D dθ = 1 over any 2π interval.

    Parameters
    ----------
    theta : array_like
        Direction (any 2π range; the difference to ``theta_mean`` is wrapped). [rad]
    theta_mean : array_like
        Mean direction. [rad]
    s : array_like
        Spreading exponent, >= 0 (s = 0 is isotropic). [-]

    Returns
    -------
    numpy.ndarray
        D(θ), broadcast shape of the inputs. [1/rad]

    Notes
    -----
    The circular spread (Kuik et al. 1988) of this distribution is σ_θ = sqrt(2/(s+1)); see
    :func:`spread_from_cos2s`.

    References
    ----------
    .. [1] Longuet-Higgins, M. S., Cartwright, D. E. and Smith, N. D. (1963), "Observations of the
       directional spectrum of sea waves using the motions of a floating buoy", Ocean Wave Spectra, 111-136.
    .. [2] DNV-RP-C205, §3.5.8 (directional distribution; section number from memory).
    """
    func = "spreading_cos2s"
    theta = _as_float(func, "theta", theta, "rad")
    theta_mean = _as_float(func, "theta_mean", theta_mean, "rad")
    s = _check_min(func, "s", s, "-", 0.0, strict=False)
    half = 0.5 * _wrap_pi(theta - theta_mean)  # in [-π/2, π/2): cos >= 0
    return _cos2s_norm(s) * np.abs(np.cos(half)) ** (2.0 * s)


def spreading_cosn(theta, theta_mean, n):
    """Cosine-power directional spreading cosⁿ(θ − θ0) on the half circle, normalised.

    .. math:: D(\\theta) = C(n)\\cos^{n}(\\theta-\\theta_0)\\ \\text{for}\\ |\\theta-\\theta_0|
              \\le \\pi/2,\\ 0\\ \\text{otherwise},\\qquad
              C(n) = \\frac{\\Gamma(1+n/2)}{\\sqrt{\\pi}\\,\\Gamma(\\frac{1}{2}+n/2)}

    Parameters
    ----------
    theta : array_like
        Direction. [rad]
    theta_mean : array_like
        Mean direction. [rad]
    n : array_like
        Exponent, >= 0 (n = 2 gives C = 2/π). [-]

    Returns
    -------
    numpy.ndarray
        D(θ), broadcast shape of the inputs. [1/rad]

    References
    ----------
    .. [1] DNV-RP-C205, "Environmental conditions and environmental loads", §3.5.8 (section number
       from memory).
    """
    func = "spreading_cosn"
    theta = _as_float(func, "theta", theta, "rad")
    theta_mean = _as_float(func, "theta_mean", theta_mean, "rad")
    n = _check_min(func, "n", n, "-", 0.0, strict=False)
    d = _wrap_pi(theta - theta_mean)
    inside = np.abs(d) <= 0.5 * np.pi
    c = np.where(inside, np.abs(np.cos(d)), 0.0)
    return np.where(inside, _cosn_norm(n) * c**n, 0.0)


def cos2s_s_from_spread(sigma):
    """Cos-2s exponent from a circular directional spread: s = 2/σ² − 1.

    Parameters
    ----------
    sigma : array_like
        Circular spread (Kuik et al. 1988), 0 < σ <= √2. [rad]

    Returns
    -------
    numpy.ndarray
        s >= 0. [-]

    References
    ----------
    .. [1] Kuik, van Vledder and Holthuijsen (1988), J. Phys. Oceanogr. 18(7), 1020-1034.
    .. [2] Longuet-Higgins, Cartwright and Smith (1963) (first circular moment of cos-2s is s/(s+1)).
    """
    sigma = _check_min("cos2s_s_from_spread", "sigma", sigma, "rad", 0.0, strict=True)
    bad = sigma > np.sqrt(2.0) * (1.0 + 1e-12)
    if bad.any():
        raise ValueError(
            f"cos2s_s_from_spread: sigma must be <= sqrt(2) rad (s >= 0), got {_first_bad(sigma, bad)!r}"
        )
    return np.maximum(2.0 / sigma**2 - 1.0, 0.0)


def spread_from_cos2s(s):
    """Circular directional spread of a cos-2s distribution: σ = sqrt(2/(s+1)).

    Parameters
    ----------
    s : array_like
        Cos-2s exponent, >= 0. [-]

    Returns
    -------
    numpy.ndarray
        Circular spread σ_θ = sqrt(2(1 − r1)), r1 = s/(s+1). [rad]

    References
    ----------
    .. [1] Kuik, van Vledder and Holthuijsen (1988), J. Phys. Oceanogr. 18(7), 1020-1034.
    """
    s = _check_min("spread_from_cos2s", "s", s, "-", 0.0, strict=False)
    return np.sqrt(2.0 / (s + 1.0))


def spread_from_cosn(n):
    """Circular directional spread of a cosⁿ distribution: σ = sqrt(2(1 − C(n)/C(n+1))).

    Parameters
    ----------
    n : array_like
        Exponent, >= 0. [-]

    Returns
    -------
    numpy.ndarray
        Circular spread; the first circular moment is r1 = C(n)/C(n+1). [rad]

    References
    ----------
    .. [1] Kuik, van Vledder and Holthuijsen (1988), J. Phys. Oceanogr. 18(7), 1020-1034.
    .. [2] DNV-RP-C205, §3.5.8 (section number from memory).
    """
    n = _check_min("spread_from_cosn", "n", n, "-", 0.0, strict=False)
    r1 = _cosn_norm(n) / _cosn_norm(n + 1.0)
    return np.sqrt(2.0 * (1.0 - r1))


# ---------------------------------------------------------------------------------------------
# quadrature and moments
# ---------------------------------------------------------------------------------------------


def grid_weights(x, *, period: float | None = None):
    """Quadrature weights for a 1-D grid.

    Without ``period``: trapezoid weights of an ascending grid (first and last weight are half a
    cell), so ``(w * y).sum() == np.trapezoid(y, x)``. With ``period`` (e.g. 2π for directions):
    periodic weights w_i = (x_{i+1} − x_{i−1})/2 with wrap-around, summing to ``period``.

    Parameters
    ----------
    x : array_like, shape (N,)
        Strictly ascending grid points (for ``period``: all within one period). [any unit]
    period : float, optional
        Period of a periodic grid. [same unit as x]

    Returns
    -------
    numpy.ndarray, shape (N,)
        Weights. [unit of x]

    Raises
    ------
    ValueError
        If ``x`` is not 1-D, not strictly ascending, too short, or spans more than one period.

    References
    ----------
    .. [1] Davis, P. J. and Rabinowitz, P. (1984), Methods of Numerical Integration, 2nd ed. (trapezoid rule;
       exactness of the periodic trapezoid rule).
    """
    x = _as_float("grid_weights", "x", x, "-")
    if x.ndim != 1:
        raise ValueError(f"grid_weights: x must be 1-D, got shape {x.shape}")
    if period is None:
        if x.size < 2:
            raise ValueError(f"grid_weights: x needs at least 2 points, got {x.size}")
    elif x.size < 1:
        raise ValueError("grid_weights: x needs at least 1 point")
    dx = np.diff(x)
    if (dx <= 0).any():
        i = int(np.argmax(dx <= 0))
        raise ValueError(
            f"grid_weights: x must be strictly ascending, x[{i}]={float(x[i])!r} >= "
            f"x[{i + 1}]={float(x[i + 1])!r}"
        )
    if period is None:
        w = np.empty_like(x)
        w[0] = 0.5 * dx[0]
        w[-1] = 0.5 * dx[-1]
        w[1:-1] = 0.5 * (dx[:-1] + dx[1:])
        return w
    period = float(period)
    span = x[-1] - x[0]
    if not period > 0 or span >= period:
        raise ValueError(
            f"grid_weights: periodic grid must span less than period={period!r}, spans {float(span)!r}"
        )
    gap = period - span  # the wrap-around cell
    cells = np.concatenate(([gap], dx, [gap]))
    return 0.5 * (cells[:-1] + cells[1:])


def _moveaxis_check(func: str, omega: np.ndarray, s: np.ndarray, axis: int) -> np.ndarray:
    if omega.ndim != 1:
        raise ValueError(f"{func}: omega must be 1-D, got shape {omega.shape}")
    if s.ndim == 0 or s.shape[axis] != omega.size:
        raise ValueError(
            f"{func}: spectrum axis {axis} must have length len(omega)={omega.size}, got shape {s.shape}"
        )
    return np.moveaxis(s, axis, -1)


def spectral_moment(omega, s, n, axis: int = -1):
    """Spectral moment m_n = ∫ ωⁿ S(ω) dω by the trapezoid rule.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Strictly ascending frequencies, >= 0 (> 0 for n < 0). [rad/s]
    s : array_like
        Spectral density with length K along ``axis``. [m²·s/rad or unit²·s/rad]
    n : float
        Order of the moment. [-]
    axis : int, optional
        Axis of ``s`` that runs along ``omega``.

    Returns
    -------
    numpy.ndarray
        m_n with ``axis`` removed. [unit²·(rad/s)ⁿ]

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (spectral moments); Tucker, M. J. and Pitt, E. G. (2001), Waves in
       Ocean Engineering.
    """
    func = "spectral_moment"
    omega = _omega(func, omega)
    s = _as_float(func, "s", s, "m²·s/rad")
    s = _moveaxis_check(func, omega, s, axis)
    n = float(n)
    if n < 0 and (omega <= 0).any():
        raise ValueError(f"{func}: negative order n={n!r} needs omega > 0, got omega[0]={float(omega[0])!r}")
    w = grid_weights(omega) * omega**n
    return s @ w


def hs_from_spectrum(omega, s, axis: int = -1):
    """Significant wave height Hm0 = 4·sqrt(m0) of a frequency spectrum (trapezoid rule).

    Parameters
    ----------
    omega : array_like, shape (K,)
        Frequencies. [rad/s]
    s : array_like
        Spectral density along ``axis``. [m²·s/rad]
    axis : int, optional
        Frequency axis of ``s``.

    Returns
    -------
    numpy.ndarray
        Hm0. [m]

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (spectral moments and periods).
    """
    return 4.0 * np.sqrt(spectral_moment(omega, s, 0, axis=axis))


def _period_ratio(num: np.ndarray, den: np.ndarray) -> np.ndarray:
    num, den = np.broadcast_arrays(num, den)
    out = np.full(num.shape, np.nan)
    ok = den > 0
    out[ok] = num[ok] / den[ok]
    return out


def tm01_from_spectrum(omega, s, axis: int = -1):
    """Mean period Tm01 = 2π·m0/m1 (NaN where m1 = 0).

    Parameters
    ----------
    omega : array_like, shape (K,)
        Frequencies. [rad/s]
    s : array_like
        Spectral density along ``axis``. [m²·s/rad]
    axis : int, optional
        Frequency axis of ``s``.

    Returns
    -------
    numpy.ndarray
        Tm01. [s]

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (spectral moments and periods).
    """
    m0 = spectral_moment(omega, s, 0, axis=axis)
    m1 = spectral_moment(omega, s, 1, axis=axis)
    return TWO_PI * _period_ratio(np.asarray(m0), np.asarray(m1))


def tm02_from_spectrum(omega, s, axis: int = -1):
    """Zero-crossing period Tm02 = 2π·sqrt(m0/m2) (NaN where m2 = 0).

    Parameters
    ----------
    omega : array_like, shape (K,)
        Frequencies. [rad/s]
    s : array_like
        Spectral density along ``axis``. [m²·s/rad]
    axis : int, optional
        Frequency axis of ``s``.

    Returns
    -------
    numpy.ndarray
        Tm02 (= Tz). [s]

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (spectral moments and periods).
    """
    m0 = spectral_moment(omega, s, 0, axis=axis)
    m2 = spectral_moment(omega, s, 2, axis=axis)
    return TWO_PI * np.sqrt(_period_ratio(np.asarray(m0), np.asarray(m2)))


def peak_frequency(omega, s, *, refine: bool = False, axis: int = -1):
    """Frequency of the spectral peak, optionally refined by a parabola through three points.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Strictly ascending frequencies. [rad/s]
    s : array_like
        Spectral density along ``axis``. [m²·s/rad]
    refine : bool, optional
        If True, return the vertex of the parabola through the maximum and its two neighbours
        (not at the grid ends, and only where the three points form a maximum).
    axis : int, optional
        Frequency axis of ``s``.

    Returns
    -------
    numpy.ndarray
        ωp (NaN where the spectrum is identically zero). [rad/s]

    References
    ----------
    .. [1] Press, W. H. et al. (2007), Numerical Recipes, 3rd ed., §10.3 (parabolic interpolation
       of an extremum).
    """
    func = "peak_frequency"
    omega = _omega(func, omega)
    s = _as_float(func, "s", s, "m²·s/rad")
    s = _moveaxis_check(func, omega, s, axis)
    i = np.asarray(np.argmax(s, axis=-1))
    smax = np.take_along_axis(s, i[..., None], axis=-1)[..., 0]
    wp = omega[i].astype(float)
    if refine and omega.size >= 3:
        ic = np.clip(i, 1, omega.size - 2)
        x0, x1, x2 = omega[ic - 1], omega[ic], omega[ic + 1]
        y0 = np.take_along_axis(s, (ic - 1)[..., None], axis=-1)[..., 0]
        y1 = np.take_along_axis(s, ic[..., None], axis=-1)[..., 0]
        y2 = np.take_along_axis(s, (ic + 1)[..., None], axis=-1)[..., 0]
        num = (x1 - x0) ** 2 * (y1 - y2) - (x1 - x2) ** 2 * (y1 - y0)
        den = (x1 - x0) * (y1 - y2) - (x1 - x2) * (y1 - y0)
        interior = (i == ic) & (y1 >= y0) & (y1 >= y2) & (den != 0)
        vertex = x1 - 0.5 * num / np.where(interior, den, 1.0)
        wp = np.where(interior, np.clip(vertex, x0, x2), wp)
    return np.where(smax > 0, wp, np.nan)


# ---------------------------------------------------------------------------------------------
# the directional spectrum
# ---------------------------------------------------------------------------------------------


def _frozen_copy(arr: np.ndarray) -> np.ndarray:
    out = np.array(arr, dtype=float, copy=True)
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class DirectionalSpectrum:
    """A directional wave spectrum S(ω, θ) on a rectangular grid (immutable).

    Parameters
    ----------
    omega : numpy.ndarray, shape (K,)
        Absolute wave frequencies, strictly ascending, >= 0, K >= 2. [rad/s]
    theta : numpy.ndarray, shape (L,)
        True directions the waves come FROM, clockwise from north, ascending in [0, 2π) and
        uniformly spaced over the full circle (spacing 2π/L). [rad]
    density : numpy.ndarray, shape (K, L)
        Directional spectral density, finite and >= 0. [m²·s/rad²]

    Attributes
    ----------
    omega_weights : numpy.ndarray, shape (K,)
        Trapezoid weights over ``omega`` (:func:`grid_weights`). [rad/s]
    theta_weights : numpy.ndarray, shape (L,)
        Periodic weights over ``theta``, all 2π/L. [rad]

    Notes
    -----
    Integrals use the trapezoid rule in ω and the periodic trapezoid (rectangle) rule in θ, which
    is spectrally accurate for smooth periodic integrands. The arrays are stored as read-only
    copies; transformations return new objects.

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (directional wave spectrum S(ω, θ) = S(ω)·D(θ)).
    .. [2] Kuik, van Vledder and Holthuijsen (1988), J. Phys. Oceanogr. 18(7), 1020-1034 (mean
       direction and spread from the first circular moments).
    """

    omega: np.ndarray
    theta: np.ndarray
    density: np.ndarray
    omega_weights: np.ndarray = field(init=False, repr=False)
    theta_weights: np.ndarray = field(init=False, repr=False)

    def __post_init__(self) -> None:
        cls = "DirectionalSpectrum"
        omega = np.asarray(self.omega, dtype=float)
        theta = np.asarray(self.theta, dtype=float)
        density = np.asarray(self.density, dtype=float)
        if omega.ndim != 1 or omega.size < 2:
            raise ValueError(f"{cls}: omega must be 1-D with at least 2 frequencies, got shape {omega.shape}")
        if theta.ndim != 1 or theta.size < 1:
            raise ValueError(f"{cls}: theta must be 1-D with at least 1 direction, got shape {theta.shape}")
        if density.shape != (omega.size, theta.size):
            raise ValueError(
                f"{cls}: density must have shape (len(omega), len(theta)) = "
                f"{(omega.size, theta.size)}, got {density.shape}"
            )
        for name, arr in (("omega", omega), ("theta", theta), ("density", density)):
            bad = ~np.isfinite(arr)
            if bad.any():
                idx = tuple(int(v) for v in np.argwhere(bad)[0])
                raise ValueError(f"{cls}: {name} must be finite, got {float(arr[idx])!r} at index {idx}")
        if (omega < 0).any():
            raise ValueError(f"{cls}: omega must be >= 0 rad/s, got {float(omega.min())!r}")
        d_omega = np.diff(omega)
        if (d_omega <= 0).any():
            i = int(np.argmax(d_omega <= 0))
            raise ValueError(
                f"{cls}: omega must be strictly ascending, omega[{i}]={float(omega[i])!r} >= "
                f"omega[{i + 1}]={float(omega[i + 1])!r}"
            )
        if (theta < 0).any() or (theta >= TWO_PI).any():
            bad = (theta < 0) | (theta >= TWO_PI)
            raise ValueError(f"{cls}: theta must lie in [0, 2π) rad, got {_first_bad(theta, bad)!r}")
        step = TWO_PI / theta.size
        if theta.size > 1 and not np.allclose(np.diff(theta), step, rtol=0.0, atol=1e-9):
            raise ValueError(
                f"{cls}: theta must be ascending and uniformly spaced over the full circle "
                f"(spacing 2π/L = {step!r} rad for L={theta.size}), got spacings "
                f"{float(np.diff(theta).min())!r} .. {float(np.diff(theta).max())!r}"
            )
        if (density < 0).any():
            idx = tuple(int(v) for v in np.argwhere(density < 0)[0])
            raise ValueError(
                f"{cls}: density must be >= 0 m²·s/rad², got {float(density[idx])!r} at index {idx}"
            )
        object.__setattr__(self, "omega", _frozen_copy(omega))
        object.__setattr__(self, "theta", _frozen_copy(theta))
        object.__setattr__(self, "density", _frozen_copy(density))
        object.__setattr__(self, "omega_weights", _frozen_copy(grid_weights(omega)))
        object.__setattr__(self, "theta_weights", _frozen_copy(np.full(theta.size, step)))

    # -- integrals -----------------------------------------------------------------------------

    def frequency_spectrum(self) -> np.ndarray:
        """Frequency spectrum S(ω) = ∫ S(ω, θ) dθ, shape (K,). [m²·s/rad]"""
        return self.density @ self.theta_weights

    def direction_distribution(self) -> np.ndarray:
        """Normalised distribution of energy over direction D(θ) = ∫S dω / m0, shape (L,). [1/rad]

        NaN everywhere if the spectrum holds no energy.
        """
        e = self.omega_weights @ self.density
        m0 = self.m0()
        if m0 <= 0:
            return np.full(self.theta.size, np.nan)
        return e / m0

    def moment(self, n: float) -> float:
        """Frequency moment m_n = ∫∫ ωⁿ S dω dθ. [m²·(rad/s)ⁿ]"""
        return float(spectral_moment(self.omega, self.frequency_spectrum(), n))

    def m0(self) -> float:
        """Zeroth moment (variance of the surface elevation). [m²]"""
        return float(self.omega_weights @ self.density @ self.theta_weights)

    def hs(self) -> float:
        """Significant wave height Hm0 = 4·sqrt(m0). [m]"""
        return 4.0 * np.sqrt(self.m0())

    def tp(self, refine: bool = False) -> float:
        """Peak period 2π/ωp of the frequency spectrum (NaN if no energy). [s]

        Parameters
        ----------
        refine : bool, optional
            Parabolic refinement of the peak frequency (:func:`peak_frequency`).
        """
        wp = float(peak_frequency(self.omega, self.frequency_spectrum(), refine=refine))
        return TWO_PI / wp if wp > 0 else float("nan")

    def tm01(self) -> float:
        """Mean period 2π·m0/m1 (NaN if no energy). [s]"""
        return float(tm01_from_spectrum(self.omega, self.frequency_spectrum()))

    def tm02(self) -> float:
        """Zero-crossing period 2π·sqrt(m0/m2) (NaN if no energy). [s]"""
        return float(tm02_from_spectrum(self.omega, self.frequency_spectrum()))

    def _first_circular_moments(self) -> tuple[float, float]:
        m0 = self.m0()
        if m0 <= 0:
            return float("nan"), float("nan")
        e = self.omega_weights @ self.density * self.theta_weights
        return float(e @ np.cos(self.theta)) / m0, float(e @ np.sin(self.theta)) / m0

    def mean_direction(self) -> float:
        """Mean direction the waves come from, atan2(b1, a1) over the whole spectrum, in [0, 2π).

        a1 = ∫∫cos θ S dω dθ / m0, b1 = ∫∫sin θ S dω dθ / m0 (Kuik et al. 1988). NaN if no energy.
        [rad]
        """
        a1, b1 = self._first_circular_moments()
        if np.isnan(a1):
            return float("nan")
        return float(wrap_angle(np.arctan2(b1, a1)))

    def directional_spread(self) -> float:
        """Circular directional spread sqrt(2(1 − sqrt(a1² + b1²))) (Kuik et al. 1988). [rad]"""
        a1, b1 = self._first_circular_moments()
        if np.isnan(a1):
            return float("nan")
        r1 = min(np.hypot(a1, b1), 1.0)
        return float(np.sqrt(2.0 * (1.0 - r1)))

    # -- transformations -----------------------------------------------------------------------

    def scaled(self, factor: float) -> DirectionalSpectrum:
        """Spectrum with the density (energy) multiplied by ``factor`` >= 0 (Hs × sqrt(factor))."""
        factor = float(_check_min("DirectionalSpectrum.scaled", "factor", factor, "-", 0.0, strict=False))
        return DirectionalSpectrum(self.omega, self.theta, self.density * factor)

    def with_hs(self, hs: float) -> DirectionalSpectrum:
        """Spectrum scaled to significant wave height ``hs`` [m] (the shape is kept)."""
        hs = float(_check_min("DirectionalSpectrum.with_hs", "hs", hs, "m", 0.0, strict=False))
        m0 = self.m0()
        if m0 <= 0:
            raise ValueError("DirectionalSpectrum.with_hs: the spectrum holds no energy; cannot rescale")
        return self.scaled(hs**2 / 16.0 / m0)

    def rotated(self, angle: float) -> DirectionalSpectrum:
        """Spectrum turned so that waves from θ now come from θ + ``angle`` [rad].

        Rotation by a whole number of grid steps is an exact roll; otherwise the density is
        interpolated linearly and periodically in θ, which conserves m0 exactly on the uniform grid.
        """
        angle = float(_as_float("DirectionalSpectrum.rotated", "angle", angle, "rad"))
        density = _interp_periodic(self.density, self.theta, self.theta - angle)
        return DirectionalSpectrum(self.omega, self.theta, density)

    def resampled(self, omega, theta, conserve_m0: bool = True) -> DirectionalSpectrum:
        """This spectrum on another grid; see :func:`resample_spectrum`."""
        return resample_spectrum(self, omega, theta, conserve_m0=conserve_m0)

    def same_grid(self, other: DirectionalSpectrum) -> bool:
        """True if ``other`` is defined on the same (ω, θ) grid (to 1e-12 rad/s and rad)."""
        return (
            self.omega.shape == other.omega.shape
            and self.theta.shape == other.theta.shape
            and bool(np.allclose(self.omega, other.omega, rtol=0.0, atol=1e-12))
            and bool(np.allclose(self.theta, other.theta, rtol=0.0, atol=1e-12))
        )

    def __add__(self, other: DirectionalSpectrum) -> DirectionalSpectrum:
        """Sum of two spectra on the same grid (e.g. wind sea + swell)."""
        if not isinstance(other, DirectionalSpectrum):
            return NotImplemented
        if not self.same_grid(other):
            raise ValueError(
                "DirectionalSpectrum: cannot add spectra on different (omega, theta) grids "
                f"(K={self.omega.size}, L={self.theta.size} vs K={other.omega.size}, "
                f"L={other.theta.size}); resample one with resample_spectrum(...) first"
            )
        return DirectionalSpectrum(self.omega, self.theta, self.density + other.density)


def _interp_periodic(values: np.ndarray, theta: np.ndarray, theta_new) -> np.ndarray:
    """Linear periodic interpolation along the last axis from a uniform full-circle grid."""
    L = theta.size
    if L == 1:
        return np.repeat(values[..., :1], np.size(theta_new), axis=-1)
    step = TWO_PI / L
    pos = np.mod((np.asarray(theta_new, dtype=float) - theta[0]) / step, L)
    j = np.floor(pos).astype(int) % L
    f = pos - np.floor(pos)
    # snap round-off so whole-step rotations are exact rolls
    near = np.isclose(f, 0.0, atol=1e-9) | np.isclose(f, 1.0, atol=1e-9)
    j = np.where(np.isclose(f, 1.0, atol=1e-9), (j + 1) % L, j)
    f = np.where(near, 0.0, f)
    return values[..., j] * (1.0 - f) + values[..., (j + 1) % L] * f


def resample_spectrum(spectrum: DirectionalSpectrum, omega, theta, conserve_m0: bool = True):
    """Interpolate a directional spectrum onto another (ω, θ) grid, conserving m0.

    The density is interpolated linearly in ω (zero outside the original frequency range) and
    linearly and periodically in θ; with ``conserve_m0`` the result is then rescaled so that its
    m0 equals the original m0 (the same choice as wavespectra ``interp(maintain_m0=True)``).

    Parameters
    ----------
    spectrum : DirectionalSpectrum
        Source spectrum.
    omega : array_like, shape (K2,)
        New frequencies (strictly ascending, >= 0). [rad/s]
    theta : array_like, shape (L2,)
        New directions (ascending in [0, 2π), uniform over the full circle). [rad]
    conserve_m0 : bool, optional
        Rescale to the original m0 (skipped when either m0 is zero).

    Returns
    -------
    DirectionalSpectrum
        The resampled spectrum.

    References
    ----------
    .. [1] wavespectra (open-source Python library, MIT licence), ``SpecArray.interp(maintain_m0=True)``,
       https://wavespectra.readthedocs.io (same conservation choice).
    """
    if not isinstance(spectrum, DirectionalSpectrum):
        raise TypeError(
            f"resample_spectrum: spectrum must be a DirectionalSpectrum, got {type(spectrum).__name__}"
        )
    omega_new = np.asarray(omega, dtype=float)
    theta_new = np.asarray(theta, dtype=float)
    # validate the new grid through the constructor (zeros density)
    DirectionalSpectrum(omega_new, theta_new, np.zeros((np.size(omega_new), np.size(theta_new))))
    by_theta = _interp_periodic(spectrum.density, spectrum.theta, theta_new)  # (K, L2)
    om = spectrum.omega
    idx = np.clip(np.searchsorted(om, omega_new, side="right") - 1, 0, om.size - 2)
    f = (omega_new - om[idx]) / (om[idx + 1] - om[idx])
    inside = (omega_new >= om[0]) & (omega_new <= om[-1])
    f = np.clip(f, 0.0, 1.0)
    dens = (1.0 - f)[:, None] * by_theta[idx] + f[:, None] * by_theta[idx + 1]
    dens = np.where(inside[:, None], dens, 0.0)
    out = DirectionalSpectrum(omega_new, theta_new, dens)
    if conserve_m0:
        m0_old, m0_new = spectrum.m0(), out.m0()
        if m0_old > 0 and m0_new > 0:
            out = out.scaled(m0_old / m0_new)
    return out


def directional_spectrum(
    omega,
    theta,
    s_omega,
    spreading: Callable[[np.ndarray], np.ndarray] | np.ndarray,
    *,
    normalise: bool = True,
) -> DirectionalSpectrum:
    """Build S(ω, θ) = S(ω)·D(θ) (or D(ω, θ)) on a grid.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Frequencies. [rad/s]
    theta : array_like, shape (L,)
        Directions the waves come from, uniform over [0, 2π). [rad]
    s_omega : array_like, shape (K,)
        Frequency spectrum. [m²·s/rad]
    spreading : callable or array_like
        Either a function of ``theta`` (shape (L,)) returning D(θ) with shape (L,) or (K, L)
        (e.g. ``lambda th: spreading_cos2s(th, 1.2, 10)``), or an array of shape (L,) or (K, L).
        [1/rad]
    normalise : bool, optional
        If True (default), each row of D is rescaled so that its periodic sum Σ D Δθ is exactly 1
        on this grid (rows that are all zero are left zero). Then the m0 of the result equals the
        trapezoid m0 of ``s_omega`` exactly; the same discrete normalisation as wavespectra
        ``cartwright``.

    Returns
    -------
    DirectionalSpectrum

    References
    ----------
    .. [1] DNV-RP-C205, §3.5 (S(ω, θ) = S(ω)·D(θ)).
    """
    func = "directional_spectrum"
    omega = np.asarray(omega, dtype=float)
    theta = np.asarray(theta, dtype=float)
    s_omega = _as_float(func, "s_omega", s_omega, "m²·s/rad")
    if s_omega.shape != omega.shape:
        raise ValueError(f"{func}: s_omega must have the shape of omega {omega.shape}, got {s_omega.shape}")
    d = spreading(theta) if callable(spreading) else spreading
    d = _as_float(func, "spreading", d, "1/rad")
    if d.shape not in ((theta.size,), (omega.size, theta.size)):
        raise ValueError(
            f"{func}: spreading must have shape (L,)={(theta.size,)} or (K, L)={(omega.size, theta.size)}, "
            f"got {d.shape}"
        )
    d = np.broadcast_to(d, (omega.size, theta.size))
    if normalise and theta.size >= 1:
        total = d.sum(axis=1, keepdims=True) * (TWO_PI / theta.size)
        d = np.where(total > 0, d / np.where(total > 0, total, 1.0), 0.0)
    return DirectionalSpectrum(omega, theta, s_omega[:, None] * d)
