"""Encounter frequency, the following-sea one-to-three mapping and energy-conserving binning.

Conventions (DEVELOPERS.md): ``omega`` absolute wave frequency [rad/s]; ``beta`` relative wave
heading, ITTC (π = head seas, 0 = following seas, π/2 = waves from starboard) [rad]; ``speed``
ship speed through water [m/s]; deep water. The encounter frequency is signed:

    ω_e = ω − ω²·U·cos β / g,

negative where the ship overtakes the waves. Code that works with |ω_e| conjugates complex
transfer functions on that branch (``sign == -1`` below).

In following and quartering seas (U cos β > 0) the map ω → |ω_e| is one-to-three below the
critical encounter frequency g/(4U cos β), and its Jacobian dω_e/dω = 1 − 2ωU cos β/g vanishes
at ω = g/(2U cos β). Spectra are therefore moved to the encounter domain by *energy binning*
(each absolute cell is sub-sampled, every sub-sample deposits its energy S·Δω/n_sub into the
|ω_e| bin it falls in), which integrates the singular Jacobian exactly instead of evaluating it.

References
----------
.. [1] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III, Motions in Waves and
   Controllability (encounter frequency, encounter spectrum).
.. [2] Nielsen, U. D. (2017), "Transformation of a wave energy spectrum from encounter to absolute
   domain when observing from an advancing ship", Applied Ocean Research 69, 160-172.
.. [3] Fossen, T. I. (2021), Handbook of Marine Craft Hydrodynamics and Motion Control, 2nd ed. (encounter
   frequency).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import scipy.sparse as sp

from estimator.constants import G

__all__ = [
    "BRANCHES",
    "EncounterBinning",
    "EncounterDeposits",
    "EncounterRoots",
    "EncounterSubsamples",
    "cell_edges",
    "critical_encounter_frequency",
    "critical_wave_frequency",
    "encounter_binning_matrix",
    "encounter_deposits",
    "encounter_frequency",
    "encounter_jacobian",
    "encounter_spectrum",
    "encounter_subsamples",
    "following_sea_roots",
    "relative_wave_heading",
]

BRANCHES = ("fast_overtaking", "slow_overtaking", "ship_overtaking")
"""Labels of the three absolute-frequency roots of a given |ω_e| (order of the last axis of
:func:`following_sea_roots`): waves overtake the ship fast (ω < g/(2Ucosβ), dω_e/dω > 0; the only
root in head and beam seas), waves overtake the ship slowly (g/(2Ucosβ) < ω < g/(Ucosβ),
dω_e/dω < 0), the ship overtakes the waves (ω > g/(Ucosβ), ω_e < 0)."""

OMEGA_E_SIGN = (1, 1, -1)
"""Sign of ω_e on each branch of :data:`BRANCHES`."""


def _finite(func: str, name: str, value, unit: str) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    bad = ~np.isfinite(arr)
    if bad.any():
        raise ValueError(f"{func}: {name} must be finite [{unit}], got {float(arr[bad].flat[0])!r}")
    return arr


def _non_negative(func: str, name: str, value, unit: str) -> np.ndarray:
    arr = _finite(func, name, value, unit)
    bad = arr < 0
    if bad.any():
        raise ValueError(f"{func}: {name} must be >= 0 {unit}, got {float(arr[bad].flat[0])!r}")
    return arr


def _doppler(func: str, speed, beta) -> np.ndarray:
    """a = U cos β / g [s/rad], broadcast of speed and beta.

    |cos β| < 1e-12 is taken as exactly 0, so that beam seas given as π/2 or 3π/2 in floating
    point (cos = 6e-17) have no spurious critical frequency.
    """
    speed = _non_negative(func, "speed", speed, "m/s")
    beta = _finite(func, "beta", beta, "rad")
    c = np.cos(beta)
    c = np.where(np.abs(c) < 1e-12, 0.0, c)
    return speed * c / G


def relative_wave_heading(theta, psi):
    """Relative wave heading β (ITTC) from the wave direction and the ship heading.

    β = (π − (θ − ψ)) mod 2π: π = head seas, 0 = following seas, π/2 = waves from starboard.

    Parameters
    ----------
    theta : array_like
        True direction the waves come from, clockwise from north. [rad]
    psi : array_like
        Ship true heading, clockwise from north. [rad]

    Returns
    -------
    numpy.ndarray
        β in [0, 2π). [rad]

    References
    ----------
    .. [1] ITTC (2017), Recommended Procedures 7.5-02-07-02.1, Seakeeping Experiments (heading
       convention μ = 180° head seas); project convention, docs/conventions.md.
    """
    theta = _finite("relative_wave_heading", "theta", theta, "rad")
    psi = _finite("relative_wave_heading", "psi", psi, "rad")
    out = np.mod(np.pi - (theta - psi), 2.0 * np.pi)
    return np.where(out >= 2.0 * np.pi, 0.0, out)


def encounter_frequency(omega, speed, beta):
    """Signed encounter frequency in deep water, ω_e = ω − ω²·U·cos β / g.

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency, >= 0. [rad/s]
    speed : array_like
        Ship speed through water, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC (π = head seas). [rad]

    Returns
    -------
    numpy.ndarray
        ω_e, broadcast shape; negative where the ship overtakes the waves. [rad/s]

    References
    ----------
    .. [1] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III.
    .. [2] Fossen, T. I. (2021), Handbook of Marine Craft Hydrodynamics and Motion Control, 2nd ed. (encounter
       frequency).

    Examples
    --------
    >>> round(float(encounter_frequency(2 * np.pi / 10, 15 * 1852 / 3600, np.pi)), 5)
    0.93886
    """
    omega = _non_negative("encounter_frequency", "omega", omega, "rad/s")
    return omega - omega**2 * _doppler("encounter_frequency", speed, beta)


def encounter_jacobian(omega, speed, beta):
    """Derivative dω_e/dω = 1 − 2ω·U·cos β / g (signed; zero at the critical wave frequency).

    Parameters
    ----------
    omega : array_like
        Absolute wave frequency, >= 0. [rad/s]
    speed : array_like
        Ship speed, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC. [rad]

    Returns
    -------
    numpy.ndarray
        dω_e/dω. [-]

    References
    ----------
    .. [1] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III
       (S_e(ω_e) = S(ω)/|dω_e/dω|).
    """
    omega = _non_negative("encounter_jacobian", "omega", omega, "rad/s")
    return 1.0 - 2.0 * omega * _doppler("encounter_jacobian", speed, beta)


def critical_encounter_frequency(speed, beta):
    """Largest encounter frequency reachable in following/quartering seas, g/(4U cos β).

    Parameters
    ----------
    speed : array_like
        Ship speed, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC. [rad]

    Returns
    -------
    numpy.ndarray
        g/(4U cos β) where U cos β > 0, ``inf`` otherwise (head/beam seas or zero speed). [rad/s]

    References
    ----------
    .. [1] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172 (ω_e,max = g/(4U cos β)).
    """
    a = _doppler("critical_encounter_frequency", speed, beta)
    pos = a > 0
    return np.where(pos, 0.25 / np.where(pos, a, 1.0), np.inf)


def critical_wave_frequency(speed, beta):
    """Absolute frequency g/(2U cos β) where dω_e/dω = 0 (wave group velocity = U cos β).

    Parameters
    ----------
    speed : array_like
        Ship speed, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC. [rad]

    Returns
    -------
    numpy.ndarray
        g/(2U cos β) where U cos β > 0, ``inf`` otherwise. [rad/s]

    References
    ----------
    .. [1] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172.
    """
    a = _doppler("critical_wave_frequency", speed, beta)
    pos = a > 0
    return np.where(pos, 0.5 / np.where(pos, a, 1.0), np.inf)


class EncounterRoots(NamedTuple):
    """Absolute frequencies that map to a given |ω_e| (result of :func:`following_sea_roots`)."""

    omega: np.ndarray
    """Roots, shape broadcast(omega_e_abs, speed, beta) + (3,), NaN where a root does not exist
    [rad/s]."""
    branch: tuple[str, str, str]
    """Labels of the last axis (:data:`BRANCHES`)."""


def following_sea_roots(omega_e_abs, speed, beta) -> EncounterRoots:
    """All absolute wave frequencies ω >= 0 with |ω − ω²U cos β/g| = |ω_e|.

    With a = U cos β / g:

    - branch 0 (``fast_overtaking``, ω_e > 0): ω1 = 2|ω_e| / (1 + sqrt(1 − 4a|ω_e|)); exists
      whenever 4a|ω_e| <= 1 (always in head and beam seas, where it is the only root);
    - branch 1 (``slow_overtaking``, ω_e > 0, a > 0 only): ω2 = (1 + sqrt(1 − 4a|ω_e|)) / (2a),
      for |ω_e| <= g/(4U cos β);
    - branch 2 (``ship_overtaking``, ω_e < 0, a > 0 only): ω3 = (1 + sqrt(1 + 4a|ω_e|)) / (2a).

    Branch 0 is written in the cancellation-free form, equal to (1 − sqrt(1 − 4a|ω_e|))/(2a).

    Parameters
    ----------
    omega_e_abs : array_like
        Magnitude of the encounter frequency, >= 0. [rad/s]
    speed : array_like
        Ship speed, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC. [rad]

    Returns
    -------
    EncounterRoots
        ``omega`` with a trailing axis of 3 (NaN where a root does not exist) and the ``branch``
        labels.

    References
    ----------
    .. [1] Nielsen, U. D. (2017), "Transformation of a wave energy spectrum from encounter to
       absolute domain when observing from an advancing ship", Applied Ocean Research 69,
       160-172.
    """
    we = _non_negative("following_sea_roots", "omega_e_abs", omega_e_abs, "rad/s")
    a = _doppler("following_sea_roots", speed, beta)
    we, a = np.broadcast_arrays(we, a)
    disc = 1.0 - 4.0 * a * we
    ok1 = disc >= 0
    sq = np.sqrt(np.where(ok1, disc, 0.0))
    w1 = np.where(ok1, 2.0 * we / (1.0 + sq), np.nan)
    pos = a > 0
    a_safe = np.where(pos, a, 1.0)
    w2 = np.where(pos & ok1, (1.0 + sq) / (2.0 * a_safe), np.nan)
    w3 = np.where(pos, (1.0 + np.sqrt(1.0 + 4.0 * a_safe * we)) / (2.0 * a_safe), np.nan)
    return EncounterRoots(np.stack([w1, w2, w3], axis=-1), BRANCHES)


# ---------------------------------------------------------------------------------------------
# energy binning absolute → encounter
# ---------------------------------------------------------------------------------------------


def cell_edges(omega):
    """Edges of the cells around frequency nodes whose widths equal the trapezoid weights.

    Edges are [ω_0, (ω_0+ω_1)/2, ..., (ω_{K−2}+ω_{K−1})/2, ω_{K−1}], so the first and last cells
    are half cells and Σ S_k·Δω_k is the trapezoid m0 of S on ``omega``.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Strictly ascending frequency nodes, >= 0, K >= 2. [rad/s]

    Returns
    -------
    numpy.ndarray, shape (K+1,)
        Cell edges. [rad/s]

    References
    ----------
    .. [1] Davis, P. J. and Rabinowitz, P. (1984), Methods of Numerical Integration (trapezoid
       rule as a sum over dual cells).
    """
    omega = _non_negative("cell_edges", "omega", omega, "rad/s")
    if omega.ndim != 1 or omega.size < 2:
        raise ValueError(f"cell_edges: omega must be 1-D with at least 2 nodes, got shape {omega.shape}")
    if (np.diff(omega) <= 0).any():
        raise ValueError("cell_edges: omega must be strictly ascending")
    return np.concatenate(([omega[0]], 0.5 * (omega[:-1] + omega[1:]), [omega[-1]]))


def _check_edges(func: str, name: str, edges) -> np.ndarray:
    edges = _non_negative(func, name, edges, "rad/s")
    if edges.ndim != 1 or edges.size < 2:
        raise ValueError(f"{func}: {name} must be 1-D with at least 2 edges, got shape {edges.shape}")
    d = np.diff(edges)
    if (d <= 0).any():
        i = int(np.argmax(d <= 0))
        raise ValueError(
            f"{func}: {name} must be strictly ascending, {name}[{i}]={float(edges[i])!r} >= "
            f"{name}[{i + 1}]={float(edges[i + 1])!r}"
        )
    return edges


@dataclass(frozen=True, eq=False)
class EncounterSubsamples:
    """Where each sub-sample of each absolute-frequency cell lands in the encounter domain.

    Shapes are P + (K, n_sub) with P = broadcast(speed, beta).shape, K absolute cells.
    A quantity q given per unit absolute frequency on cell k (energy density S_k, or a kernel
    G_k·S_k) becomes, per unit encounter frequency in bin m,
    ``Σ_{k,j: bin_index[..., k, j] == m} weight[..., k, j] · q_k`` (conjugate complex kernels
    where ``sign == -1``).
    """

    omega: np.ndarray
    """Absolute frequency of each sub-sample (midpoints of n_sub equal sub-cells) [rad/s]."""
    omega_e: np.ndarray
    """Signed encounter frequency of each sub-sample [rad/s]."""
    bin_index: np.ndarray
    """Encounter bin of |omega_e| (0..M−1), −1 where it falls outside the encounter edges [-]."""
    weight: np.ndarray
    """Δω_k / (n_sub·Δω_e,m): converts a density per rad/s absolute into a density per rad/s
    encounter for bin m; 0 where outside [-]."""
    sign: np.ndarray
    """Sign of omega_e (+1, or −1 on the ship-overtaking branch, where kernels are conjugated)
    (int8) [-]."""


def encounter_subsamples(omega_edges, speed, beta, omega_e_edges, n_sub: int = 8) -> EncounterSubsamples:
    """Sub-sample absolute frequency cells and locate them in encounter-frequency bins.

    Each absolute cell [e_k, e_{k+1}] is split into ``n_sub`` equal sub-cells; the midpoint of
    each is mapped to ω_e, and its share of the cell (Δω_k/n_sub) is assigned to the bin of
    ``omega_e_edges`` that contains |ω_e|. Vectorised over ``speed`` and ``beta`` (broadcast
    together), e.g. 36 headings × 3 speeds in one call.

    Parameters
    ----------
    omega_edges : array_like, shape (K+1,)
        Strictly ascending edges of the absolute cells, >= 0 (see :func:`cell_edges`). [rad/s]
    speed : array_like
        Ship speed, >= 0. [m/s]
    beta : array_like
        Relative wave heading, ITTC (π = head seas). [rad]
    omega_e_edges : array_like, shape (M+1,)
        Strictly ascending edges of the |ω_e| bins, >= 0. [rad/s]
    n_sub : int, optional
        Sub-samples per absolute cell, >= 1 (5-10 is usually enough; more resolves the
        pile-up near the critical encounter frequency better).

    Returns
    -------
    EncounterSubsamples

    Notes
    -----
    Energy is conserved exactly: every sub-sample that lands inside the encounter range
    deposits exactly S_k·Δω_k/n_sub, whatever the Jacobian; the singular point
    dω_e/dω = 0 is never evaluated. A sub-sample landing exactly on the last edge belongs to
    the last bin.

    References
    ----------
    .. [1] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172 (one-to-three mapping).
    .. [2] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III
       (S_e dω_e = S dω).
    """
    func = "encounter_subsamples"
    edges = _check_edges(func, "omega_edges", omega_edges)
    e_edges = _check_edges(func, "omega_e_edges", omega_e_edges)
    if int(n_sub) != n_sub or n_sub < 1:
        raise ValueError(f"{func}: n_sub must be an integer >= 1, got {n_sub!r}")
    n_sub = int(n_sub)
    a = _doppler(func, speed, beta)[..., None, None]  # P + (1, 1)
    width = np.diff(edges)  # (K,)
    frac = (np.arange(n_sub) + 0.5) / n_sub  # (n_sub,)
    omega_sub = edges[:-1, None] + width[:, None] * frac[None, :]  # (K, n_sub)
    omega_e = omega_sub - omega_sub**2 * a  # P + (K, n_sub)
    mag = np.abs(omega_e)
    m = e_edges.size - 1
    inside = (mag >= e_edges[0]) & (mag <= e_edges[-1])
    idx = np.clip(np.searchsorted(e_edges, mag, side="right") - 1, 0, m - 1)
    d_e = np.diff(e_edges)
    weight = np.where(inside, (width[:, None] / n_sub) / d_e[idx], 0.0)
    bin_index = np.where(inside, idx, -1)
    sign = np.where(omega_e < 0, -1, 1).astype(np.int8)
    omega_sub = np.broadcast_to(omega_sub, omega_e.shape)
    return EncounterSubsamples(omega_sub, omega_e, bin_index, weight, sign)


@dataclass(frozen=True, eq=False)
class EncounterDeposits:
    """Interval deposits of absolute-frequency pieces into encounter bins (flat, COO-like).

    Entry i says: a piece of absolute cell ``cell[i]`` centred at ``omega[i]`` contributes
    ``weight[i] · q_cell`` to bin ``bin_index[i]`` for a quantity q given per unit absolute
    frequency (conjugate complex kernels where ``sign[i] == -1``).
    """

    cell: np.ndarray
    """Absolute cell index k (0..K−1) (int) [-]."""
    bin_index: np.ndarray
    """Encounter bin m (0..M−1) (int) [-]."""
    weight: np.ndarray
    """(length of the piece) × (share of its |ω_e| image inside bin m) / Δω_e,m [-]."""
    sign: np.ndarray
    """Sign of ω_e on the piece (int8) [-]."""
    omega: np.ndarray
    """Absolute frequency at the middle of the piece [rad/s]."""


def encounter_deposits(
    omega_edges, speed: float, beta: float, omega_e_edges, n_sub: int = 4
) -> EncounterDeposits:
    """Energy-conserving deposits that spread each sub-cell over its |ω_e| image.

    Each absolute cell is split into ``n_sub`` equal sub-cells, which are further split at the
    critical wave frequency g/(2U cos β) (fold of ω_e) and at g/(U cos β) (ω_e = 0, fold of
    |ω_e|), so that |ω_e| is monotonic on every piece. A piece [p, q] carries the energy
    S_k·(q − p) and deposits it uniformly over its image [min, max] of |ω_e(p)|, |ω_e(q)|,
    in proportion to the overlap with each encounter bin. Unlike point deposits
    (:func:`encounter_subsamples`) this has no quantisation noise when a bin is narrow compared
    with the image of a sub-cell; the energy is still conserved exactly and the singular
    Jacobian is never evaluated (only near the fold is the uniform spread an approximation).

    Parameters
    ----------
    omega_edges : array_like, shape (K+1,)
        Edges of the absolute cells. [rad/s]
    speed : float
        Ship speed, >= 0. [m/s]
    beta : float
        Relative wave heading, ITTC. [rad]
    omega_e_edges : array_like, shape (M+1,)
        Edges of the |ω_e| bins. [rad/s]
    n_sub : int, optional
        Sub-cells per absolute cell, >= 1 (the map is quadratic, so a few suffice).

    Returns
    -------
    EncounterDeposits

    References
    ----------
    .. [1] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III
       (S_e dω_e = S dω).
    .. [2] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172 (one-to-three mapping).
    """
    func = "encounter_deposits"
    edges = _check_edges(func, "omega_edges", omega_edges)
    e_edges = _check_edges(func, "omega_e_edges", omega_e_edges)
    if int(n_sub) != n_sub or n_sub < 1:
        raise ValueError(f"{func}: n_sub must be an integer >= 1, got {n_sub!r}")
    if np.ndim(speed) != 0 or np.ndim(beta) != 0:
        raise ValueError(
            f"{func}: speed and beta must be scalars, got shapes {np.shape(speed)} and {np.shape(beta)}"
        )
    n_sub = int(n_sub)
    a = float(_doppler(func, speed, beta))
    width = np.diff(edges)
    frac = np.arange(n_sub) / n_sub
    pts = (edges[:-1, None] + width[:, None] * frac[None, :]).ravel()
    pts = np.concatenate((pts, edges[-1:]))
    if a > 0:
        folds = np.array([0.5 / a, 1.0 / a])
        folds = folds[(folds > edges[0]) & (folds < edges[-1])]
        pts = np.union1d(pts, folds)
    lo_w, hi_w = pts[:-1], pts[1:]
    keep = hi_w > lo_w
    lo_w, hi_w = lo_w[keep], hi_w[keep]
    mid = 0.5 * (lo_w + hi_w)
    cell = np.clip(np.searchsorted(edges, mid, side="right") - 1, 0, width.size - 1)
    length = hi_w - lo_w
    e_lo = lo_w - a * lo_w**2
    e_hi = hi_w - a * hi_w**2
    sign = np.where(mid - a * mid**2 < 0, -1, 1).astype(np.int8)
    lo = np.minimum(np.abs(e_lo), np.abs(e_hi))
    hi = np.maximum(np.abs(e_lo), np.abs(e_hi))
    m = e_edges.size - 1
    d_e = np.diff(e_edges)
    # bins overlapped by [lo, hi] (closed on the right at the last edge)
    first = np.searchsorted(e_edges, lo, side="right") - 1
    last = np.searchsorted(e_edges, hi, side="left") - 1
    first = np.clip(first, 0, m - 1)
    last = np.clip(last, 0, m - 1)
    touches = (hi >= e_edges[0]) & (lo <= e_edges[-1])
    last = np.maximum(last, first)
    count = np.where(touches, last - first + 1, 0)
    piece = np.repeat(np.arange(lo.size), count)
    offset = np.arange(piece.size) - np.repeat(np.cumsum(count) - count, count)
    bins = first[piece] + offset
    span = hi[piece] - lo[piece]
    overlap = np.minimum(hi[piece], e_edges[bins + 1]) - np.maximum(lo[piece], e_edges[bins])
    point = span <= 1e-14 * np.maximum(hi[piece], 1.0)
    share = np.where(point, 1.0, np.clip(overlap, 0.0, None) / np.where(point, 1.0, span))
    weight = length[piece] * share / d_e[bins]
    nz = weight > 0
    return EncounterDeposits(cell[piece][nz], bins[nz], weight[nz], sign[piece][nz], mid[piece][nz])


@dataclass(frozen=True, eq=False)
class EncounterBinning:
    """Sparse binning matrices absolute cells → encounter bins for one speed and heading.

    ``matrix @ s`` turns a spectrum on K absolute cells [m²·s/rad] into the encounter spectrum
    on M bins [m²·s/rad]. ``matrix = matrix_direct + matrix_overtaking``; for a complex kernel
    G per cell use ``matrix_direct @ G + matrix_overtaking @ conj(G)``.
    """

    matrix: sp.csr_matrix
    """All branches, shape (M, K) [-]."""
    matrix_direct: sp.csr_matrix
    """Contributions with ω_e > 0 (waves overtake the ship, or head/beam seas), shape (M, K) [-]."""
    matrix_overtaking: sp.csr_matrix
    """Contributions with ω_e < 0 (ship overtakes the waves), shape (M, K) [-]."""
    overtaking: np.ndarray
    """Bool flag per cell and sub-sample, shape (K, n_sub): True where ω_e < 0."""


def encounter_binning_matrix(
    omega_edges, speed: float, beta: float, omega_e_edges, n_sub: int = 8, *, method: str = "interval"
) -> EncounterBinning:
    """Sparse CSR matrix that bins an absolute-frequency spectrum into encounter bins.

    For one ``speed`` and ``beta``. With ``method="point"`` it is built from
    :func:`encounter_subsamples`: B[m, k] = Σ_j weight[k, j] over the sub-samples j of cell k
    whose |ω_e| lands in bin m. With ``method="interval"`` (default) from
    :func:`encounter_deposits`, which spreads each sub-cell over its |ω_e| image and so avoids
    the quantisation noise of point deposits (about (sub-sample spacing in ω_e)/(bin width) per
    bin). Both conserve energy exactly.

    Parameters
    ----------
    omega_edges : array_like, shape (K+1,)
        Edges of the absolute cells. [rad/s]
    speed : float
        Ship speed, >= 0. [m/s]
    beta : float
        Relative wave heading, ITTC. [rad]
    omega_e_edges : array_like, shape (M+1,)
        Edges of the |ω_e| bins. [rad/s]
    n_sub : int, optional
        Sub-samples (point) or sub-cells (interval) per absolute cell.
    method : {"interval", "point"}, optional
        Deposit scheme (see above).

    Returns
    -------
    EncounterBinning
        ``overtaking`` is always the (K, n_sub) flag of the point sub-samples.

    References
    ----------
    .. [1] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172.
    .. [2] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III.
    """
    if np.ndim(speed) != 0 or np.ndim(beta) != 0:
        raise ValueError(
            "encounter_binning_matrix: speed and beta must be scalars "
            f"(got shapes {np.shape(speed)} and {np.shape(beta)}); use encounter_subsamples for arrays"
        )
    if method not in ("interval", "point"):
        raise ValueError(f"encounter_binning_matrix: method must be 'interval' or 'point', got {method!r}")
    sub = encounter_subsamples(omega_edges, speed, beta, omega_e_edges, n_sub)
    k_cells, n = sub.bin_index.shape
    m = np.size(omega_e_edges) - 1
    over = sub.sign < 0
    if method == "point":
        inside = sub.bin_index >= 0
        rows = sub.bin_index[inside]
        cols = np.broadcast_to(np.arange(k_cells)[:, None], (k_cells, n))[inside]
        data = sub.weight[inside]
        neg = over[inside]
    else:
        dep = encounter_deposits(omega_edges, speed, beta, omega_e_edges, n_sub)
        rows, cols, data, neg = dep.bin_index, dep.cell, dep.weight, dep.sign < 0

    def build(mask: np.ndarray) -> sp.csr_matrix:
        return sp.csr_matrix((data[mask], (rows[mask], cols[mask])), shape=(m, k_cells))

    every = np.ones(data.shape, dtype=bool)
    return EncounterBinning(build(every), build(~neg), build(neg), over.copy())


def encounter_spectrum(
    omega, s, speed: float, beta: float, omega_e_edges, n_sub: int = 8, *, method: str = "interval"
):
    """Encounter-frequency spectrum binned from an absolute spectrum, conserving energy.

    The spectrum given at the nodes ``omega`` is taken as constant over the trapezoid cells of
    :func:`cell_edges`, so Σ_m S_e,m·Δω_e,m equals the trapezoid m0 of ``s`` whenever all of
    the encounter frequencies fall inside ``omega_e_edges``.

    Parameters
    ----------
    omega : array_like, shape (K,)
        Absolute frequency nodes. [rad/s]
    s : array_like, shape (..., K)
        Spectral density on ``omega`` (leading axes allowed, e.g. several spectra). [m²·s/rad]
    speed : float
        Ship speed, >= 0. [m/s]
    beta : float
        Relative wave heading, ITTC. [rad]
    omega_e_edges : array_like, shape (M+1,)
        Edges of the |ω_e| bins. [rad/s]
    n_sub : int, optional
        Sub-samples / sub-cells per absolute cell.
    method : {"interval", "point"}, optional
        Deposit scheme of :func:`encounter_binning_matrix`.

    Returns
    -------
    numpy.ndarray, shape (..., M)
        Encounter spectrum S_e per bin (density per rad/s of |ω_e|). [m²·s/rad]

    References
    ----------
    .. [1] Lewis, E. V. (ed.) (1989), Principles of Naval Architecture, Vol. III
       (S_e(ω_e) = Σ S(ω_i)/|1 − 2ω_iU cos β/g| over all roots).
    .. [2] Nielsen, U. D. (2017), Applied Ocean Research 69, 160-172.
    """
    omega = np.asarray(omega, dtype=float)
    s = _finite("encounter_spectrum", "s", s, "m²·s/rad")
    if s.ndim == 0 or s.shape[-1] != omega.size:
        raise ValueError(
            f"encounter_spectrum: last axis of s must have length len(omega)={omega.size}, "
            f"got shape {s.shape}"
        )
    binning = encounter_binning_matrix(cell_edges(omega), speed, beta, omega_e_edges, n_sub, method=method)
    flat = s.reshape(-1, omega.size)
    out = (binning.matrix @ flat.T).T
    return out.reshape(s.shape[:-1] + (np.size(omega_e_edges) - 1,))
