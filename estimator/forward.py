"""Forward model of the wave-buoy analogy: from a directional wave spectrum to measured cross-spectra.

The unknown spectrum lives on an *absolute* frequency grid ω_k and a grid of relative wave headings β_l
(ITTC, π = head seas), because for a ship at a steady heading and speed the measured cross-spectra depend
on the sea only through S(ω, β). The spectrum is taken constant over each cell (ω_k ± Δω_k/2, β_l ± Δβ/2).
The encounter frequency ω_e = ω − ω²U cos β / g maps each absolute cell onto one or more encounter
bins; in following seas one encounter frequency collects energy from up to three absolute frequencies
(waves overtaking the ship fast, slowly, and waves the ship overtakes, where ω_e < 0).

Instead of evaluating the singular Jacobian dω/dω_e pointwise, each absolute cell is sub-sampled into
``n_sub`` points; every sub-sample carries energy S·Δω/n_sub·Δβ into the |ω_e| bin it falls in, so the
binned kernel integrates the (integrable) singularity and conserves energy exactly (project
choice; Iseki & Ohtsu 2000 three-root formulation). On the branch where the ship overtakes the waves
(ω_e < 0) the measured signal at |ω_e| sees the complex conjugate of the transfer function, so the kernel
uses conj(H_i H_j*) there.

The model cross-spectral density (one-sided, per rad/s of encounter frequency) of channels i, j in
encounter bin m is

    Φ_ij(m) = Σ_{k,l} K_ij(m; k, l) · s_kl,
    K_ij(m; k, l) = Σ_{sub-samples of cell (k,l) in bin m} G_ij · (Δω_k / n_sub) · Δβ / Δω_e,m,
    G_ij = H_i H_j*  (ω_e > 0),  conj(H_i H_j*)  (ω_e < 0).

References
----------
.. [1] Iseki, T., Ohtsu, K. (2000). Bayesian estimation of directional wave spectra based on ship
   motions. Control Engineering Practice 8:215-219.
.. [2] Nielsen, U.D. (2006). Estimations of on-site directional wave spectra from measured ship
   responses. Marine Structures 19:33-69.
.. [3] Bendat, J.S., Piersol, A.G. (2010). Random Data, 4th ed. (cross-spectral estimates).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from estimator.constants import G
from estimator.encounter import encounter_deposits

TransferFunction = Callable[[np.ndarray, np.ndarray, float], np.ndarray]
"""Callable ``(omega, beta, speed) -> complex (n_channels, *omega.shape)``: transfer functions of the
measured channels per unit wave amplitude, in the core's complex-amplitude convention with signed ω_e."""


@dataclass(frozen=True)
class SpectralGrid:
    """Grid of the unknown spectrum: absolute frequencies × relative wave headings.

    Attributes
    ----------
    omega : ndarray (K,)
        Cell centres of absolute wave frequency [rad/s], ascending.
    omega_edges : ndarray (K+1,)
        Cell edges [rad/s].
    beta : ndarray (L,)
        Relative wave headings, uniformly spaced on the full circle [rad] (ITTC, π = head seas).
    """

    omega: np.ndarray
    omega_edges: np.ndarray
    beta: np.ndarray

    def __post_init__(self) -> None:
        if self.omega_edges.shape != (self.omega.size + 1,):
            raise ValueError(
                f"omega_edges must have K+1 = {self.omega.size + 1} values, got {self.omega_edges.size}"
            )
        if np.any(np.diff(self.omega_edges) <= 0) or self.omega_edges[0] <= 0:
            raise ValueError("omega_edges must be positive and strictly ascending")
        d = np.diff(self.beta)
        if self.beta.size < 4 or not np.allclose(d, 2 * np.pi / self.beta.size):
            raise ValueError(f"beta must be a uniform full-circle grid, got {self.beta.size} values")

    @classmethod
    def default(cls, n_omega: int = 28, omega_min: float = 0.22, omega_max: float = 1.9, n_beta: int = 24):
        """Geometric frequency cells between ``omega_min`` and ``omega_max`` [rad/s] and ``n_beta`` headings.

        Geometric spacing gives the same relative resolution at swell and wind-sea periods (common
        practice for spectral grids).
        """
        edges = np.geomspace(omega_min, omega_max, n_omega + 1)
        omega = np.sqrt(edges[:-1] * edges[1:])
        beta = np.arange(n_beta) * (2 * np.pi / n_beta)
        return cls(omega=omega, omega_edges=edges, beta=beta)

    @property
    def d_omega(self) -> np.ndarray:
        """Cell widths Δω_k [rad/s]."""
        return np.diff(self.omega_edges)

    @property
    def d_beta(self) -> float:
        """Direction cell width Δβ [rad]."""
        return 2 * np.pi / self.beta.size

    @property
    def shape(self) -> tuple[int, int]:
        return (self.omega.size, self.beta.size)

    @property
    def size(self) -> int:
        return self.omega.size * self.beta.size


def pair_indices(n_channels: int) -> tuple[np.ndarray, np.ndarray]:
    """Index pairs (i ≤ j) of the upper triangle of an ``n_channels`` cross-spectral matrix."""
    i, j = np.triu_indices(n_channels)
    return i, j


@dataclass(frozen=True)
class Kernel:
    """Binned linear forward model for one speed, heading grid and set of channels.

    ``matrix`` maps the flattened spectrum s (K·L,) [m²·s/rad²] to the stacked real data vector:
    for every encounter bin m, first Re Φ_ij for the pairs i ≤ j, then Im Φ_ij for the pairs i < j.

    Attributes
    ----------
    grid : SpectralGrid
    omega_e_edges : ndarray (M+1,)
        Encounter-frequency bin edges [rad/s].
    channels : tuple of str
    speed : float
        Ship speed [m/s].
    matrix : ndarray (M·P, K·L)
        Row blocks per bin; P = n_c(n_c+1)/2 + n_c(n_c-1)/2 = n_c² real equations per bin.
    overtaking_share : ndarray (K, L)
        Share of each cell's sub-samples with ω_e < 0 (the ship overtakes the waves) [-].
    critical_share : ndarray (K, L)
        Share of each cell's sub-samples within ±20 % of the critical frequency g/(2U cos β) where the
        Doppler Jacobian is singular (following-sea ambiguity) [-].
    """

    grid: SpectralGrid
    omega_e_edges: np.ndarray
    channels: tuple[str, ...]
    speed: float
    matrix: np.ndarray
    overtaking_share: np.ndarray
    critical_share: np.ndarray
    row_bin: np.ndarray = field(repr=False)
    row_pair: np.ndarray = field(repr=False)
    row_is_imag: np.ndarray = field(repr=False)

    @property
    def n_bins(self) -> int:
        return self.omega_e_edges.size - 1

    @property
    def auto_channel(self) -> np.ndarray:
        """Channel index of each auto-spectrum row (Re Φ_ii), −1 for cross- and quad-spectrum rows."""
        c = len(self.channels)
        iu, ju = np.triu_indices(c)
        per_bin = np.concatenate([np.where(iu == ju, iu, -1), np.full(c * (c - 1) // 2, -1)])
        return np.tile(per_bin, self.n_bins)

    def predict(self, density: np.ndarray) -> np.ndarray:
        """Stacked model data for a spectrum ``density`` (K, L) [m²·s/rad²]."""
        return self.matrix @ np.asarray(density, dtype=float).reshape(-1)

    def predict_matrix(self, density: np.ndarray) -> np.ndarray:
        """Model cross-spectral matrix (M, C, C) complex for ``density`` (K, L)."""
        return unstack(self.predict(density), len(self.channels), self.n_bins)


def stack(phi: np.ndarray) -> np.ndarray:
    """Stack a cross-spectral matrix ``phi`` (M, C, C) into the real data vector used by :class:`Kernel`."""
    phi = np.asarray(phi)
    m, c, _ = phi.shape
    iu, ju = np.triu_indices(c)
    is_, js_ = np.triu_indices(c, k=1)
    return np.concatenate([phi[:, iu, ju].real, phi[:, is_, js_].imag], axis=1).reshape(-1)


def unstack(data: np.ndarray, n_channels: int, n_bins: int) -> np.ndarray:
    """Inverse of :func:`stack`: a Hermitian (M, C, C) complex matrix."""
    c = n_channels
    iu, ju = np.triu_indices(c)
    is_, js_ = np.triu_indices(c, k=1)
    d = np.asarray(data).reshape(n_bins, c * c)
    phi = np.zeros((n_bins, c, c), dtype=complex)
    phi[:, iu, ju] = d[:, : iu.size]
    phi[:, is_, js_] += 1j * d[:, iu.size :]
    phi[:, ju, iu] = np.conj(phi[:, iu, ju])
    return phi


def build_kernel(
    grid: SpectralGrid,
    transfer: TransferFunction,
    speed: float,
    omega_e_edges: np.ndarray,
    channels: Sequence[str],
    *,
    n_sub: int = 4,
) -> Kernel:
    """Build the binned forward kernel for one ship speed.

    Parameters
    ----------
    grid : SpectralGrid
        Unknown-spectrum grid (absolute ω × relative β).
    transfer : callable
        ``transfer(omega, beta, speed)`` → complex (C, N): transfer functions of the measured channels per
        unit wave amplitude (sensor conventions, signed-ω_e complex amplitudes).
    speed : float
        Ship speed through water [m/s], ≥ 0.
    omega_e_edges : ndarray (M+1,)
        Encounter-frequency bin edges [rad/s], ascending, ≥ 0.
    channels : sequence of str
        Channel names, in the order ``transfer`` returns them.
    n_sub : int
        Sub-cells per absolute cell (see :func:`estimator.encounter.encounter_deposits`).

    Returns
    -------
    Kernel
    """
    if speed < 0:
        raise ValueError(f"speed must be >= 0 m/s, got {speed}")
    edges_e = np.asarray(omega_e_edges, dtype=float)
    if edges_e.ndim != 1 or edges_e.size < 2 or np.any(np.diff(edges_e) <= 0) or edges_e[0] < 0:
        raise ValueError("omega_e_edges must be ascending, non-negative, with at least two values")
    k_n, l_n = grid.shape
    c = len(channels)
    m_n = edges_e.size - 1
    p_n = c * c
    iu, ju = np.triu_indices(c)
    is_, js_ = np.triu_indices(c, k=1)
    # Energy deposits of every absolute cell piece into the |ω_e| bins, direction by direction
    # (interval deposits: each piece spreads over its |ω_e| image; exact energy, no singular Jacobian).
    deps = [encounter_deposits(grid.omega_edges, speed, float(b), edges_e, n_sub=n_sub) for b in grid.beta]
    sizes = [d.cell.size for d in deps]
    if sum(sizes) == 0:
        raise ValueError("no absolute cell maps into the encounter bins; check omega_e_edges")
    om_p = np.concatenate([d.omega for d in deps])
    be_p = np.repeat(grid.beta, sizes)
    cell_p = np.concatenate([d.cell * l_n + li for li, d in enumerate(deps)])
    bin_p = np.concatenate([d.bin_index for d in deps])
    wgt_p = np.concatenate([d.weight for d in deps]) * grid.d_beta
    sign_p = np.concatenate([d.sign for d in deps])
    h = np.asarray(transfer(om_p, be_p, speed))
    if h.shape != (c, om_p.size):
        raise ValueError(f"transfer returned shape {h.shape}, expected {(c, om_p.size)}")
    h = np.where(sign_p[None, :] < 0, np.conj(h), h)  # effective transfer at |ω_e| (overtaking branch)
    g_re = (h[iu] * np.conj(h[ju])).real  # (Pu, N)
    g_im = (h[is_] * np.conj(h[js_])).imag  # (Ps, N)
    n_cells = k_n * l_n
    rows = bin_p[None, :] * p_n + np.arange(p_n)[:, None]  # (P, N)
    vals = np.concatenate([g_re, g_im], axis=0) * wgt_p[None, :]
    flat = (rows * n_cells + cell_p[None, :]).reshape(-1)
    mat = np.bincount(flat, weights=vals.reshape(-1), minlength=m_n * p_n * n_cells).reshape(m_n * p_n, n_cells)

    # Diagnostics per cell (sub-sample midpoints): share overtaken by the ship, share near the fold.
    frac = (np.arange(8) + 0.5) / 8
    w_sub = grid.omega_edges[:-1, None] + frac[None, :] * grid.d_omega[:, None]
    omega_s = w_sub[:, :, None]
    cos_b = np.cos(grid.beta)[None, None, :]
    omega_e = omega_s - omega_s**2 * speed * cos_b / G
    ot = (omega_e < 0).mean(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        w_star = np.where(cos_b > 1e-12, G / (2 * max(speed, 1e-9) * cos_b), np.inf)
    crit = (np.abs(omega_s / w_star - 1.0) < 0.2).mean(axis=1) if speed > 0 else np.zeros((k_n, l_n))
    row_bin = np.repeat(np.arange(m_n), p_n)
    row_pair = np.tile(np.concatenate([np.arange(iu.size), np.arange(is_.size)]), m_n)
    row_is_imag = np.tile(np.concatenate([np.zeros(iu.size, bool), np.ones(is_.size, bool)]), m_n)
    return Kernel(
        grid=grid,
        omega_e_edges=edges_e,
        channels=tuple(channels),
        speed=float(speed),
        matrix=mat,
        overtaking_share=ot,
        critical_share=crit,
        row_bin=row_bin,
        row_pair=row_pair,
        row_is_imag=row_is_imag,
    )


def rotate_relative_to_true(
    density_rel: np.ndarray, beta: np.ndarray, heading: float, theta: np.ndarray
) -> np.ndarray:
    """Re-grid a spectrum from relative headings β to true coming-from directions θ.

    θ = ψ + π − β (mod 2π), from β = (π − (θ − ψ)) mod 2π (docs/conventions.md). Periodic linear
    interpolation of the density [m²·s/rad²] along direction; energy is conserved to interpolation accuracy
    when both grids are uniform with the same spacing.
    """
    return regrid_periodic(density_rel, np.mod(heading + np.pi - beta, 2 * np.pi), theta)


def relative_from_true(
    density_true: np.ndarray, theta: np.ndarray, heading: float, beta: np.ndarray
) -> np.ndarray:
    """Inverse of :func:`rotate_relative_to_true`: true directions θ → relative headings β."""
    return regrid_periodic(density_true, np.mod(np.pi - (theta - heading), 2 * np.pi), beta)


def regrid_periodic(density: np.ndarray, src_angle: np.ndarray, dst_angle: np.ndarray) -> np.ndarray:
    """Periodic linear interpolation of ``density`` (K, L) from angles ``src_angle`` (L,) to ``dst_angle`` [rad]."""
    order = np.argsort(src_angle)
    sa = src_angle[order]
    d = density[:, order]
    sa_ext = np.concatenate([sa[-1:] - 2 * np.pi, sa, sa[:1] + 2 * np.pi])
    d_ext = np.concatenate([d[:, -1:], d, d[:, :1]], axis=1)
    dst = np.mod(dst_angle, 2 * np.pi)
    idx = np.searchsorted(sa_ext, dst, side="right") - 1
    idx = np.clip(idx, 0, sa_ext.size - 2)
    t = (dst - sa_ext[idx]) / (sa_ext[idx + 1] - sa_ext[idx])
    return d_ext[:, idx] * (1 - t) + d_ext[:, idx + 1] * t
