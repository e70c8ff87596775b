"""Response spectra and short-term statistics of linear ship responses in a short-crested sea.

Everything here is pure numpy/scipy, vectorised over any leading batch shape, SI units inside.

Contents
--------
Spectral moments (the engine of the polar evaluation)
    :func:`response_moments` – m_n of many responses in many (heading, speed) cells at once, integrated in
    the absolute (ω, θ) domain; :func:`polar_response_moments` – the same for a whole polar grid from
    |H|² tabulated once per speed on a relative-heading grid (the fast path);
    :func:`heading_rotation_matrix`; :func:`polar_moments_in_sea` (wrapper taking a
    ``DirectionalSpectrum``); :class:`ResponseStatistics`.
Short-term statistics (Rayleigh / Rice, narrow-band Gaussian response)
    :func:`rms`, :func:`significant_amplitude`, :func:`zero_crossing_period`, :func:`cycle_count`,
    :func:`most_probable_maximum`, :func:`expected_maximum`, :func:`maximum_quantile`,
    :func:`upcrossing_rate`, :func:`exceedance_probability`, :func:`rayleigh_exceedance`.
Slamming and deck wetness (Ochi 1964)
    :func:`ochi_threshold_velocity`, :func:`slamming_probability`, :func:`slams_per_hour`,
    :func:`deck_wetness_probability`, :func:`deck_wetness_per_hour`.
Motion sickness
    :func:`iso2631_wf`, :func:`weighted_rms_from_spectrum`, :func:`msdv`, :func:`vomiting_incidence`
    (ISO 2631-1:1997); :func:`msi_ohanlon_mccauley`, :func:`msi_lloyd` (optional MSI forms).

Conventions (DEVELOPERS.md): spectra one-sided per rad/s; directional density S(ω, θ) in m²·s/rad²
on an absolute wave-frequency grid ω (K,) and a true coming-from direction grid θ (L,); transfer
functions H per unit wave amplitude; encounter frequency ω_e = ω − ω²·U·cos β / g is signed, only
|ω_e| enters the moments.

References
----------
.. [1] S. O. Rice, "Mathematical analysis of random noise", Bell System Technical Journal 23 (1944)
   282–332 and 24 (1945) 46–156.
.. [2] M. S. Longuet-Higgins, "On the statistical distribution of the heights of sea waves", Journal
   of Marine Research 11 (1952) 245–266.
.. [3] D. E. Cartwright and M. S. Longuet-Higgins, "The statistical distribution of the maxima of a
   random function" (1956).
.. [4] M. K. Ochi, "Prediction of occurrence and severity of ship slamming at sea", Proc. 5th
   Symposium on Naval Hydrodynamics, Bergen, ONR ACR-112 (1964) 545–596.
.. [5] O. M. Faltinsen, Sea Loads on Ships and Offshore Structures
   (1990), ch. 2 and 8.
.. [6] ISO 2631-1:1997, Mechanical vibration and shock – Evaluation of human exposure to whole-body
   vibration – Part 1: General requirements (Wf weighting, Table 3 and Annex D).
.. [7] J. F. O'Hanlon and M. E. McCauley, "Motion sickness incidence as a function of the frequency
   and acceleration of vertical sinusoidal motion", Aerospace Medicine 45(4) (1974) 366–369.
.. [8] A. R. J. M. Lloyd, Seakeeping: Ship Behaviour in Rough Weather, Ellis Horwood (1989).

Bibliographic details and formulas are from memory (ISO 2631-1 [6], O'Hanlon & McCauley [7], Lloyd
[8], Rice [1], Ochi [4], Faltinsen [5]); check values in the tests are derived from these formulas,
not published numbers.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.special import ndtr

from estimator.constants import G

__all__ = [
    "ResponseStatistics",
    "cycle_count",
    "deck_wetness_per_hour",
    "deck_wetness_probability",
    "exceedance_probability",
    "expected_maximum",
    "heading_rotation_matrix",
    "iso2631_wf",
    "maximum_quantile",
    "most_probable_maximum",
    "msdv",
    "msi_lloyd",
    "msi_ohanlon_mccauley",
    "ochi_threshold_velocity",
    "polar_moments_in_sea",
    "polar_response_moments",
    "rayleigh_exceedance",
    "response_moments",
    "rms",
    "significant_amplitude",
    "slamming_probability",
    "slams_per_hour",
    "upcrossing_rate",
    "vomiting_incidence",
    "weighted_rms_from_spectrum",
    "zero_crossing_period",
]

EULER_GAMMA = 0.5772156649015329
"""Euler–Mascheroni constant (exact to double precision), used in the expected maximum [3]."""

_CHUNK_ELEMENTS = 1 << 19
"""Elements of |H|² held at once in :func:`response_moments` (≈2 MB in float32: stays in cache)."""


# --------------------------------------------------------------------------------------------------
# helpers
# --------------------------------------------------------------------------------------------------


def _orders_tuple(orders: Sequence[float] | float) -> tuple[float, ...]:
    values = tuple(np.atleast_1d(np.asarray(orders, dtype=float)).tolist())
    if len(values) == 0:
        raise ValueError("orders must name at least one moment order, got an empty sequence")
    for n in values:
        if not math.isfinite(n) or n < 0:
            raise ValueError(
                f"orders must be finite and >= 0 (|omega_e|**n is singular at omega_e = 0 for n < 0), "
                f"got {n!r} in orders={tuple(np.atleast_1d(orders).tolist())!r}"
            )
    return values


def _first_bad(value, ok) -> float:
    """The first offending value (as a plain float, for error messages)."""
    value = np.asarray(value, dtype=float)
    ok = np.broadcast_to(ok, np.broadcast_shapes(np.shape(ok), value.shape))
    return float(np.broadcast_to(value, ok.shape)[~ok].flat[0])


def _nonnegative(name: str, value: np.ndarray, unit: str) -> None:
    ok = value >= 0  # also catches NaN
    if value.size and not np.all(ok):
        raise ValueError(f"{name} must be >= 0 [{unit}] and not NaN, got {_first_bad(value, ok)!r}")


def _abs_powers(omega_e: np.ndarray, orders: tuple[float, ...]) -> list[np.ndarray]:
    """|ω_e|**n for each order, with 0**0 = 1 (n = 0 gives the plain variance).

    Integer orders use repeated squaring (several times faster than ``**`` for n > 2 on large arrays).
    """
    a = np.abs(omega_e)
    cache: dict[int, np.ndarray] = {1: a}

    def int_power(n: int) -> np.ndarray:
        if n not in cache:
            half = int_power(n // 2)
            cache[n] = half * half if n % 2 == 0 else half * half * a
        return cache[n]

    out = []
    for n in orders:
        if n == 0:
            out.append(np.ones_like(a))
        elif n == int(n):
            out.append(int_power(int(n)))
        else:
            out.append(a**n)
    return out


# --------------------------------------------------------------------------------------------------
# spectral moments
# --------------------------------------------------------------------------------------------------


def response_moments(
    transfer,
    density,
    omega,
    omega_e=None,
    weights=None,
    orders: Sequence[float] = (0, 2, 4),
    *,
    squared: bool = False,
) -> np.ndarray:
    r"""Spectral moments of linear responses, integrated in the absolute (ω, θ) domain.

    .. math::

        m_n = \sum_k \sum_l |H(\omega_k, \beta_{kl})|^2 \, |\omega_{e,kl}|^n \,
              S(\omega_k, \theta_l) \, w_{kl}

    for every response and every (heading, speed) cell of a batch in one vectorised pass.

    Parameters
    ----------
    transfer : array_like, complex or real, shape (\*R, \*C, K, L)
        Transfer function per unit wave amplitude of each response at each grid point of each cell
        [response unit / m], e.g. shape (n_resp, n_heading, n_speed, K, L). The leading ``R`` axes are
        responses (share the sea and ω_e of a cell); the ``C`` axes are cells, matched right-aligned
        with the batch axes of ``omega_e``/``density``/``weights``. With ``squared=True`` this holds
        |H|² already (real, >= 0) [response unit² / m²].
    density : array_like, shape (\*C', K, L)
        Directional wave spectrum S(ω_k, θ_l), one-sided [m²·s/rad²]. Usually (K, L) shared by all
        cells.
    omega : array_like, shape (K,)
        Absolute wave circular frequencies of the grid [rad/s]; checks the grid and stands in for
        ``omega_e`` when that is None.
    omega_e : array_like, shape (\*C', K, L) or (K, L), optional
        Signed encounter frequency at each grid point of each cell [rad/s]; only |ω_e| is used.
        None means zero speed (ω_e = ω), i.e. moments of the sea itself for a unit transfer.
    weights : array_like, broadcastable to (K, L), optional
        Quadrature weights w_kl of the (ω, θ) grid [rad²] (Δω·Δθ for a rectangle rule). None means
        all ones (``density`` already multiplied by its weights).
    orders : sequence of float, default (0, 2, 4)
        Moment orders n >= 0 in |ω_e|.
    squared : bool, default False
        True if ``transfer`` already holds |H|², which saves one pass over the largest array.

    Returns
    -------
    numpy.ndarray, float64, shape (len(orders), \*R, \*C)
        m_n of each response and cell [response unit²·(rad/s)ⁿ], so ``m0, m2, m4 = response_moments(...)``.

    Notes
    -----
    Integrating over the absolute wave frequency ω instead of the encounter frequency avoids the
    encounter Jacobian |dω_e/dω| = |1 − 2ωU cos β / g|, which is singular at ω = g/(2U cos β) in
    following seas where three wave frequencies share one |ω_e| (reference §7; Faltinsen [5] ch. 2).
    Each wave component keeps its own energy S·w and only its response frequency is |ω_e|, so m0 is
    exact and m2, m4 are the encounter-domain moments without any binning.

    Memory layout and speed: the function flattens ``transfer`` to (ΠR, ΠC, K·L) without copying, so
    pass it C-contiguous with ω and θ as the last two axes (θ fastest) and the cell axes right after
    the response axes; |H|² is formed in cache-sized chunks and contracted against the stacked
    |ω_e|ⁿ·S·w of each cell (one pass over ``transfer`` for all orders; no Python loop over cells).
    complex64/float32 input is computed in float32 (relative error ~1e-6, see
    ``benchmarks/bench_responses.py``), complex128/float64 in float64; the result is always float64.
    NaN in ``transfer`` propagates to the moments of its cell. For a whole polar grid
    :func:`polar_response_moments` avoids building the (n_heading × n_speed × K × L) transfer array.

    References
    ----------
    .. [1] O. M. Faltinsen, Sea Loads on Ships and Offshore Structures
       (1990), §2.4 (response spectra, linear superposition) (from memory).
    .. [2] J. N. Newman, Marine Hydrodynamics (1977), §6.20 (from memory).

    Examples
    --------
    >>> import numpy as np
    >>> omega = np.array([0.5, 1.0]); s = np.array([[2.0], [1.0]])   # K = 2, L = 1
    >>> m = response_moments(np.ones((2, 1)), s, omega, weights=0.1)
    >>> np.round(m, 6).tolist()
    [0.3, 0.15, 0.1125]
    """
    ords = _orders_tuple(orders)
    omega = np.asarray(omega, dtype=float)
    if omega.ndim != 1:
        raise ValueError(f"omega must be 1-D (K,) [rad/s], got shape {omega.shape}")
    k = omega.shape[0]
    transfer = np.asarray(transfer)
    if transfer.ndim < 2 or transfer.shape[-2] != k:
        raise ValueError(
            f"transfer must have shape (..., K, L) with K = len(omega) = {k}, got shape {transfer.shape}"
        )
    n_l = transfer.shape[-1]
    if squared:
        if np.iscomplexobj(transfer):
            raise ValueError("squared=True expects real |H|² values, got a complex transfer array")
        work = np.float32 if transfer.dtype == np.float32 else np.float64
    else:
        work = np.float32 if transfer.dtype in (np.complex64, np.float32) else np.float64

    density = np.asarray(density, dtype=float)
    if density.ndim < 2 or density.shape[-2:] != (k, n_l):
        raise ValueError(
            f"density must have shape (..., K, L) = (..., {k}, {n_l}) like transfer, "
            f"got shape {density.shape}"
        )
    _nonnegative("density", density, "m²·s/rad²")
    if omega_e is None:
        omega_e = omega[:, None]
    omega_e = np.asarray(omega_e, dtype=float)
    if not np.all(np.isfinite(omega_e)):
        raise ValueError("omega_e must be finite [rad/s]; found NaN or inf")
    w = np.ones((1, 1)) if weights is None else np.asarray(weights, dtype=float)
    _nonnegative("weights", w, "rad²")
    try:
        sea_shape = np.broadcast_shapes(density.shape, w.shape, omega_e.shape, (k, n_l))
    except ValueError as err:
        raise ValueError(
            f"density {density.shape}, weights {w.shape} and omega_e {omega_e.shape} must broadcast to "
            f"(..., K, L) = (..., {k}, {n_l})"
        ) from err
    if sea_shape[-2:] != (k, n_l):
        raise ValueError(f"density/weights/omega_e broadcast to {sea_shape}, expected (..., {k}, {n_l})")

    batch = transfer.shape[:-2]
    cell_nd = len(sea_shape) - 2
    if cell_nd > len(batch):
        raise ValueError(
            f"omega_e/density/weights have {cell_nd} batch axes {sea_shape[:-2]} but transfer has only "
            f"{len(batch)} {batch}"
        )
    cells = batch[len(batch) - cell_nd :]
    resp = batch[: len(batch) - cell_nd]
    try:
        np.broadcast_shapes(sea_shape[:-2], cells)
    except ValueError as err:
        raise ValueError(
            f"batch axes {sea_shape[:-2]} of omega_e/density/weights do not match the trailing transfer "
            f"axes {cells}"
        ) from err
    if np.broadcast_shapes(sea_shape[:-2], cells) != cells:
        raise ValueError(f"batch axes {sea_shape[:-2]} do not broadcast to the transfer cell axes {cells}")

    n_cells = math.prod(cells)
    n_resp = math.prod(resp)
    kl = k * n_l
    energy = density * w  # S·w [m²]
    sea = np.empty((len(ords), *cells, k, n_l), dtype=work)
    for i, power in enumerate(_abs_powers(omega_e, ords)):
        np.multiply(power, energy, out=sea[i], casting="same_kind")
    sea = sea.reshape(len(ords), n_cells, kl)

    out = np.empty((len(ords), n_resp, n_cells), dtype=work)
    if n_resp == 0 or n_cells == 0 or kl == 0:
        return np.zeros((len(ords), *resp, *cells))
    h = transfer.reshape(n_resp, n_cells, kl)
    c_step = max(1, min(n_cells, _CHUNK_ELEMENTS // max(kl, 1)))
    r_step = max(1, _CHUNK_ELEMENTS // (c_step * max(kl, 1)))
    for r0 in range(0, n_resp, r_step):
        for c0 in range(0, n_cells, c_step):
            block = h[r0 : r0 + r_step, c0 : c0 + c_step]
            if squared:
                p = block.astype(work, copy=False)
            else:
                p = np.square(block.real, dtype=work)
                p += np.square(block.imag, dtype=work)
            out[:, r0 : r0 + r_step, c0 : c0 + c_step] = np.einsum(
                "rcq,ocq->orc", p, sea[:, c0 : c0 + c_step]
            )
    return out.astype(np.float64).reshape(len(ords), *resp, *cells)


def heading_rotation_matrix(theta, psi, beta) -> np.ndarray:
    r"""Weights that carry each wave direction θ_l, seen from heading ψ_h, onto a relative-heading grid.

    The relative wave heading (ITTC, π = head seas) of a wave from θ seen from a ship heading ψ is
    β = (π − (θ − ψ)) mod 2π (docs/conventions.md). Each β falls between two nodes of the uniform,
    periodic grid ``beta``; it is given to them with linear-interpolation weights, so every row sums
    to one (energy is conserved) and a β lying on a node goes to that node alone.

    Parameters
    ----------
    theta : array_like, shape (L,)
        True wave directions, coming from, clockwise from north [rad].
    psi : array_like, shape (NH,)
        Ship true headings [rad].
    beta : array_like, shape (J,)
        Uniform relative-heading grid covering the full circle, ascending, β_j = β_0 + j·2π/J [rad].

    Returns
    -------
    numpy.ndarray, shape (NH, L, J)
        R[h, l, j] >= 0 with Σ_j R[h, l, j] = 1.

    References
    ----------
    .. [1] ITTC Recommended Procedure 7.5-02-07-02.1, Seakeeping Experiments (heading convention)
       (from memory).
    """
    theta = np.atleast_1d(np.asarray(theta, dtype=float))
    psi = np.atleast_1d(np.asarray(psi, dtype=float))
    beta = np.asarray(beta, dtype=float)
    if theta.ndim != 1 or psi.ndim != 1 or beta.ndim != 1:
        raise ValueError(
            f"theta, psi and beta must be 1-D [rad], got shapes {theta.shape}, {psi.shape}, {beta.shape}"
        )
    n_j = beta.shape[0]
    if n_j < 2:
        raise ValueError(f"beta must have at least 2 nodes covering the circle, got {n_j}")
    step = 2.0 * np.pi / n_j
    if not np.allclose(np.diff(beta), step, rtol=0.0, atol=1e-9):
        raise ValueError(
            f"beta must be uniform and cover the full circle with step 2*pi/J = {step:.6g} rad "
            f"(J = {n_j}); got steps from {np.diff(beta).min():.6g} to {np.diff(beta).max():.6g} rad"
        )
    rel = np.pi - (theta[None, :] - psi[:, None])  # (NH, L)
    u = np.mod(rel - beta[0], 2.0 * np.pi) / step
    j0 = np.floor(u)
    frac = u - j0
    # a β within rounding of a node goes to that node alone (exact for aligned grids)
    near = np.isclose(frac, 0.0, atol=1e-9) | np.isclose(frac, 1.0, atol=1e-9)
    j0 = np.where(np.isclose(frac, 1.0, atol=1e-9), j0 + 1, j0).astype(np.intp) % n_j
    frac = np.where(near, 0.0, frac)
    j1 = (j0 + 1) % n_j
    out = np.zeros((psi.shape[0], theta.shape[0], n_j))
    hh, ll = np.indices(j0.shape)
    np.add.at(out, (hh, ll, j0), 1.0 - frac)
    np.add.at(out, (hh, ll, j1), frac)
    return out


def polar_response_moments(
    gain2,
    omega_e,
    beta,
    density,
    theta,
    psi,
    weights=None,
    orders: Sequence[float] = (0, 2, 4),
    *,
    dtype=np.float64,
) -> np.ndarray:
    r"""Spectral moments of many responses for a whole polar grid of headings × speeds.

    Fast path of :func:`response_moments` that uses |H|² tabulated once per speed on a relative
    heading grid: |H|² and ω_e depend on (speed, ω, β) only, the heading enters through
    β = π − (θ − ψ) alone, so the sea is rotated into the ship's frame once per heading,

    .. math::

        A_h(\omega_k, \beta_j) = \sum_l S(\omega_k, \theta_l)\, w_{kl}\, R_{h l j},
        \qquad
        m_n[r, h, s] = \sum_{k, j} |H_r(\omega_k, \beta_j; U_s)|^2\, |\omega_e(\omega_k, \beta_j; U_s)|^n
                       \, A_h(\omega_k, \beta_j),

    with R from :func:`heading_rotation_matrix`; the second sum is one matrix product
    (n_speed·n_orders·n_resp, K·J) @ (K·J, n_heading).

    Parameters
    ----------
    gain2 : array_like, shape (\*R, NS, K, J)
        |H|² of each response per unit wave amplitude at each speed, wave frequency and relative
        heading node [response unit² / m²].
    omega_e : array_like, shape (NS, K, J)
        Signed encounter frequency at those nodes [rad/s] (e.g. ``estimator.encounter``).
    beta : array_like, shape (J,)
        Uniform relative-heading grid over the full circle, ITTC (π = head seas) [rad].
    density : array_like, shape (K, L)
        Directional wave spectrum on the absolute grid (ω_k, θ_l), one-sided [m²·s/rad²].
    theta : array_like, shape (L,)
        True wave directions, coming from [rad].
    psi : array_like, shape (NH,)
        Candidate ship headings, true [rad].
    weights : array_like, broadcastable to (K, L), optional
        Quadrature weights of the (ω, θ) grid [rad²]; None means ones.
    orders : sequence of float, default (0, 2, 4)
        Moment orders n >= 0 in |ω_e|.
    dtype : numpy float dtype, default float64
        Working precision of the final product (float32 halves memory traffic; see the benchmark).

    Returns
    -------
    numpy.ndarray, float64, shape (len(orders), \*R, NH, NS)
        m_n [response unit²·(rad/s)ⁿ], laid out like :func:`response_moments` with a transfer of shape
        (\*R, NH, NS, K, L).

    Notes
    -----
    Exact (equal to :func:`response_moments` with the transfer evaluated at every β_kl) when every
    π − (θ_l − ψ_h) lies on a node of ``beta`` (e.g. θ every 10°, ψ every 5°, β every 5°); otherwise
    |H|²·|ω_e|ⁿ is interpolated linearly in β, which conserves the wave energy exactly (m0 of a unit
    transfer is the sea's m0 for every heading). Absolute-domain integration as in
    :func:`response_moments`, so the following-sea encounter Jacobian never appears.

    References
    ----------
    .. [1] O. M. Faltinsen, Sea Loads on Ships and Offshore Structures
       (1990), §2.4 (from memory).
    """
    ords = _orders_tuple(orders)
    gain2 = np.asarray(gain2)
    if np.iscomplexobj(gain2):
        raise ValueError("gain2 must hold real |H|² values (use np.abs(H)**2), got a complex array")
    omega_e = np.asarray(omega_e, dtype=float)
    beta = np.asarray(beta, dtype=float)
    density = np.asarray(density, dtype=float)
    theta = np.atleast_1d(np.asarray(theta, dtype=float))
    psi = np.atleast_1d(np.asarray(psi, dtype=float))
    if omega_e.ndim != 3:
        raise ValueError(f"omega_e must have shape (NS, K, J) [rad/s], got {omega_e.shape}")
    n_s, k, n_j = omega_e.shape
    if gain2.ndim < 3 or gain2.shape[-3:] != (n_s, k, n_j):
        raise ValueError(
            f"gain2 must have shape (..., NS, K, J) = (..., {n_s}, {k}, {n_j}) like omega_e, "
            f"got {gain2.shape}"
        )
    if beta.shape != (n_j,):
        raise ValueError(f"beta must have shape (J,) = ({n_j},) [rad], got {beta.shape}")
    if density.shape != (k, theta.shape[0]):
        raise ValueError(
            f"density must have shape (K, L) = ({k}, {theta.shape[0]}) [m²·s/rad²], got {density.shape}"
        )
    _nonnegative("density", density, "m²·s/rad²")
    if not np.all(np.isfinite(omega_e)):
        raise ValueError("omega_e must be finite [rad/s]; found NaN or inf")
    w = np.ones((1, 1)) if weights is None else np.asarray(weights, dtype=float)
    _nonnegative("weights", w, "rad²")
    energy = density * np.broadcast_to(w, density.shape)  # (K, L) [m²]

    rot = heading_rotation_matrix(theta, psi, beta)  # (NH, L, J)
    n_h = psi.shape[0]
    sea = np.matmul(energy[None], rot)  # (NH, K, J): sea seen from each heading
    resp = gain2.shape[:-3]
    n_r = math.prod(resp)
    g2 = gain2.reshape(n_r, n_s, k * n_j).astype(dtype, copy=False)
    # q[s, o, r, :] = |H_r|² |ω_e|ⁿ on (k, j) at speed s
    q = np.empty((n_s, len(ords), n_r, k * n_j), dtype=dtype)
    for i, power in enumerate(_abs_powers(omega_e, ords)):
        np.multiply(g2.transpose(1, 0, 2), power.reshape(n_s, 1, k * n_j), out=q[:, i], casting="same_kind")
    a = sea.reshape(n_h, k * n_j).astype(dtype).T  # (K·J, NH)
    m = q.reshape(n_s * len(ords) * n_r, k * n_j) @ a  # one GEMM
    m = m.reshape(n_s, len(ords), n_r, n_h).transpose(1, 2, 3, 0)
    return m.astype(np.float64).reshape(len(ords), *resp, n_h, n_s)


def polar_moments_in_sea(
    gain2,
    omega,
    omega_e,
    beta,
    spectrum,
    psi,
    orders: Sequence[float] = (0, 2, 4),
    *,
    dtype=np.float64,
) -> np.ndarray:
    r"""Polar-grid moments in a directional sea given as an ``estimator.spectra.DirectionalSpectrum``.

    Convenience wrapper of :func:`polar_response_moments`: takes the grid, density and quadrature
    weights (``omega_weights`` ⊗ ``theta_weights``) from ``spectrum`` and checks that the transfer
    table was tabulated on the same wave frequencies.

    Parameters
    ----------
    gain2 : array_like, shape (\*R, NS, K, J)
        |H|² per unit wave amplitude [response unit² / m²].
    omega : array_like, shape (K,)
        Wave frequencies at which ``gain2`` and ``omega_e`` were tabulated [rad/s]; must equal
        ``spectrum.omega``.
    omega_e : array_like, shape (NS, K, J)
        Signed encounter frequencies [rad/s].
    beta : array_like, shape (J,)
        Uniform relative-heading grid over the full circle [rad].
    spectrum : DirectionalSpectrum
        Any object with ``omega`` (K,), ``theta`` (L,), ``density`` (K, L), ``omega_weights`` (K,) and
        ``theta_weights`` (L,) in the units of ``estimator.spectra.DirectionalSpectrum``.
    psi : array_like, shape (NH,)
        Candidate ship headings, true [rad].
    orders : sequence of float, default (0, 2, 4)
        Moment orders.
    dtype : numpy float dtype, default float64
        Working precision of the final product.

    Returns
    -------
    numpy.ndarray, float64, shape (len(orders), \*R, NH, NS)
        m_n [response unit²·(rad/s)ⁿ].

    References
    ----------
    .. [1] O. M. Faltinsen, Sea Loads on Ships and Offshore Structures (1990), §2.4 (from memory).
    """
    omega = np.asarray(omega, dtype=float)
    s_omega = np.asarray(spectrum.omega, dtype=float)
    if omega.shape != s_omega.shape or not np.allclose(omega, s_omega, rtol=1e-9, atol=1e-12):
        raise ValueError(
            f"the transfer table's omega ({omega.size} values, {omega.min():.4g}–{omega.max():.4g} rad/s) "
            f"differs from the spectrum's omega ({s_omega.size} values, {s_omega.min():.4g}–"
            f"{s_omega.max():.4g} rad/s); evaluate the transfer on spectrum.omega"
        )
    weights = np.outer(spectrum.omega_weights, spectrum.theta_weights)
    return polar_response_moments(
        gain2, omega_e, beta, spectrum.density, spectrum.theta, psi, weights, orders, dtype=dtype
    )


@dataclass(frozen=True)
class ResponseStatistics:
    """Short-term statistics of one or many responses from their spectral moments.

    Attributes
    ----------
    m0 : numpy.ndarray
        Variance [unit²].
    m2 : numpy.ndarray
        Second moment in encounter frequency [unit²·rad²/s²].
    m4 : numpy.ndarray or None
        Fourth moment [unit²·rad⁴/s⁴], only for the bandwidth.

    References
    ----------
    .. [1] D. E. Cartwright and M. S. Longuet-Higgins (1956), "The statistical distribution of the maxima of a
       random function"
       (bandwidth ε) (from memory).
    """

    m0: np.ndarray
    m2: np.ndarray
    m4: np.ndarray | None = None

    @classmethod
    def from_moments(cls, moments, orders: Sequence[float] = (0, 2, 4)) -> ResponseStatistics:
        """Build from the output of :func:`response_moments` with the given ``orders`` (must hold 0, 2)."""
        ords = list(_orders_tuple(orders))
        moments = np.asarray(moments, dtype=float)
        if 0.0 not in ords or 2.0 not in ords:
            raise ValueError(f"orders must contain 0 and 2 to give m0 and m2, got {orders!r}")
        m4 = moments[ords.index(4.0)] if 4.0 in ords else None
        return cls(moments[ords.index(0.0)], moments[ords.index(2.0)], m4)

    @property
    def sigma(self) -> np.ndarray:
        """Standard deviation (RMS about the mean) [unit]."""
        return rms(self.m0)

    @property
    def significant_amplitude(self) -> np.ndarray:
        """Significant amplitude 2σ [unit]."""
        return significant_amplitude(self.m0)

    @property
    def tz(self) -> np.ndarray:
        """Mean zero-up-crossing period in the encounter domain [s]."""
        return zero_crossing_period(self.m0, self.m2)

    @property
    def bandwidth(self) -> np.ndarray:
        """Spectral bandwidth ε = sqrt(1 − m2²/(m0·m4)) [-]; needs m4."""
        if self.m4 is None:
            raise ValueError("bandwidth needs m4; build ResponseStatistics with orders including 4")
        m0, m2, m4 = (np.asarray(x, dtype=float) for x in (self.m0, self.m2, self.m4))
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(m0 * m4 > 0, m2**2 / np.where(m0 * m4 > 0, m0 * m4, 1.0), 1.0)
        return np.sqrt(np.clip(1.0 - ratio, 0.0, 1.0))


# --------------------------------------------------------------------------------------------------
# short-term statistics
# --------------------------------------------------------------------------------------------------


def rms(m0):
    """Standard deviation σ = sqrt(m0) of a zero-mean response [unit].

    Parameters
    ----------
    m0 : array_like
        Zeroth spectral moment (variance) [unit²].

    Returns
    -------
    numpy.ndarray or float
        σ [unit].

    References
    ----------
    .. [1] Rice (1944), see module references.
    """
    m0 = np.asarray(m0, dtype=float)
    _nonnegative("m0", m0, "unit²")
    return np.sqrt(m0)


def significant_amplitude(m0):
    """Significant amplitude 2·sqrt(m0) (mean of the highest third of Rayleigh amplitudes) [unit].

    Parameters
    ----------
    m0 : array_like
        Variance [unit²].

    Returns
    -------
    numpy.ndarray or float
        2σ [unit] (the significant double amplitude, like Hs for waves, is 4σ).

    References
    ----------
    .. [1] M. S. Longuet-Higgins (1952), J. Mar. Res. 11, 245–266 (from memory).
    """
    return 2.0 * rms(m0)


def zero_crossing_period(m0, m2):
    """Mean zero-up-crossing period Tz = 2π·sqrt(m0/m2) in the encounter domain [s].

    Parameters
    ----------
    m0 : array_like
        Variance [unit²].
    m2 : array_like
        Second moment in encounter frequency [unit²·rad²/s²].

    Returns
    -------
    numpy.ndarray or float
        Tz [s]; ``inf`` where m2 = 0 (no crossings), NaN where m0 = m2 = 0 (no response).

    References
    ----------
    .. [1] S. O. Rice (1944/45), Bell Syst. Tech. J. (from memory).
    """
    m0 = np.asarray(m0, dtype=float)
    m2 = np.asarray(m2, dtype=float)
    _nonnegative("m0", m0, "unit²")
    _nonnegative("m2", m2, "unit²·rad²/s²")
    with np.errstate(divide="ignore", invalid="ignore"):
        return 2.0 * np.pi * np.sqrt(m0 / m2)


def cycle_count(tz, duration):
    """Expected number of response cycles N = duration / Tz [-].

    Parameters
    ----------
    tz : array_like
        Mean zero-up-crossing period [s] (> 0, may be inf).
    duration : array_like
        Exposure time [s] (> 0).

    Returns
    -------
    numpy.ndarray or float
        N [-].

    References
    ----------
    .. [1] Reference §4 (N = T/Tz) (common practice).
    """
    tz = np.asarray(tz, dtype=float)
    duration = np.asarray(duration, dtype=float)
    if not np.all(duration > 0):
        raise ValueError(f"duration must be > 0 [s], got {_first_bad(duration, duration > 0)!r}")
    if not np.all(tz > 0):
        raise ValueError(f"tz must be > 0 [s] (inf allowed), got {_first_bad(tz, tz > 0)!r}")
    return duration / tz


def _log_cycles(sigma, tz, duration):
    sigma = np.asarray(sigma, dtype=float)
    _nonnegative("sigma", sigma, "unit")
    tz = np.asarray(tz, dtype=float)
    # a response that does not move (σ = 0) has Tz = NaN (0/0); its maximum is 0 whatever N is
    tz = np.where(sigma == 0, 1.0, tz)
    n = cycle_count(tz, duration)
    active = (sigma > 0) & ~(n > 1)
    if np.any(active):
        raise ValueError(
            "expected number of cycles N = duration/tz must be > 1 for the Rayleigh maximum "
            f"(asymptotic for large N); got N = {_first_bad(n, ~active)!r}"
        )
    return sigma, np.log(np.where(n > 1, n, np.e))


def most_probable_maximum(sigma, tz, duration):
    r"""Most probable largest amplitude in an exposure time, A_mpm = σ·sqrt(2 ln N) [unit].

    Narrow-band Gaussian response, Rayleigh amplitudes, N = duration/Tz independent cycles.

    Parameters
    ----------
    sigma : array_like
        Standard deviation of the response [unit].
    tz : array_like
        Mean zero-up-crossing period [s].
    duration : array_like
        Exposure time [s], e.g. 3·3600.

    Returns
    -------
    numpy.ndarray or float
        A_mpm [unit] (0 where σ = 0).

    Raises
    ------
    ValueError
        If N <= 1 where σ > 0 (the asymptotic formula needs many cycles).

    References
    ----------
    .. [1] M. S. Longuet-Higgins (1952), J. Mar. Res. 11, 245–266 (from memory).
    .. [2] M. K. Ochi, Ocean Waves: The Stochastic Approach (1998), §3.6
       (from memory).
    """
    sigma, log_n = _log_cycles(sigma, tz, duration)
    return sigma * np.sqrt(2.0 * log_n)


def expected_maximum(sigma, tz, duration):
    r"""Expected largest amplitude in an exposure time [unit].

    .. math:: E[A_{max}] \approx \sigma\,(\sqrt{2\ln N} + \gamma_E/\sqrt{2\ln N})

    Parameters
    ----------
    sigma : array_like
        Standard deviation [unit].
    tz : array_like
        Mean zero-up-crossing period [s].
    duration : array_like
        Exposure time [s].

    Returns
    -------
    numpy.ndarray or float
        Expected maximum [unit] (0 where σ = 0).

    References
    ----------
    .. [1] D. E. Cartwright and M. S. Longuet-Higgins (1956), "The statistical distribution of the maxima of a
       random function"
       (from memory).
    """
    sigma, log_n = _log_cycles(sigma, tz, duration)
    root = np.sqrt(2.0 * log_n)
    return sigma * (root + EULER_GAMMA / root)


def maximum_quantile(sigma, tz, duration, p):
    r"""p-quantile of the largest amplitude in an exposure time [unit].

    With independent Rayleigh amplitudes P(A_max <= a) = (1 − exp(−a²/2σ²))^N, so

    .. math:: a_p = \sigma\sqrt{-2\ln(1 - p^{1/N})}

    Parameters
    ----------
    sigma : array_like
        Standard deviation [unit].
    tz : array_like
        Mean zero-up-crossing period [s].
    duration : array_like
        Exposure time [s].
    p : array_like
        Non-exceedance probability, 0 < p < 1 [-], e.g. 0.9.

    Returns
    -------
    numpy.ndarray or float
        a_p [unit].

    References
    ----------
    .. [1] M. K. Ochi, Ocean Waves: The Stochastic Approach (1998), §3.6 (from memory).
    """
    p = np.asarray(p, dtype=float)
    if not np.all((p > 0) & (p < 1)):
        raise ValueError(f"p must lie in (0, 1), got {_first_bad(p, (p > 0) & (p < 1))!r}")
    sigma = np.asarray(sigma, dtype=float)
    _nonnegative("sigma", sigma, "unit")
    n = cycle_count(np.where(sigma == 0, 1.0, np.asarray(tz, dtype=float)), duration)
    with np.errstate(divide="ignore"):
        tail = -np.expm1(np.log(p) / n)  # 1 − p**(1/N) without cancellation
        return sigma * np.sqrt(-2.0 * np.log(tail))


def rayleigh_exceedance(a, m0):
    """Probability that one Rayleigh amplitude exceeds a, P(A > a) = exp(−a²/(2 m0)) [-].

    Parameters
    ----------
    a : array_like
        Amplitude level [unit] (>= 0).
    m0 : array_like
        Variance of the response [unit²].

    Returns
    -------
    numpy.ndarray or float
        P(A > a) [-]; 0 where m0 = 0 and a > 0, 1 where a = 0.

    References
    ----------
    .. [1] M. S. Longuet-Higgins (1952), J. Mar. Res. 11, 245–266 (from memory).
    """
    a = np.asarray(a, dtype=float)
    m0 = np.asarray(m0, dtype=float)
    _nonnegative("a", a, "unit")
    _nonnegative("m0", m0, "unit²")
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.where(a == 0, 0.0, a**2 / (2.0 * m0))
    return np.exp(-x)


def upcrossing_rate(level, m0, m2):
    r"""Mean rate of up-crossings of a level by a zero-mean Gaussian process (Rice) [1/s].

    .. math:: \nu^+(a) = \frac{1}{2\pi}\sqrt{\frac{m_2}{m_0}}\,\exp\!\left(-\frac{a^2}{2 m_0}\right)

    Parameters
    ----------
    level : array_like
        Level a [unit].
    m0 : array_like
        Variance [unit²].
    m2 : array_like
        Second moment in encounter frequency [unit²·rad²/s²].

    Returns
    -------
    numpy.ndarray or float
        ν⁺ [1/s] (multiply by 3600 for per hour); 0 where m0 = 0.

    References
    ----------
    .. [1] S. O. Rice (1944/45), Bell Syst. Tech. J. 23, 24 (from memory).
    """
    level = np.asarray(level, dtype=float)
    m0 = np.asarray(m0, dtype=float)
    m2 = np.asarray(m2, dtype=float)
    _nonnegative("m0", m0, "unit²")
    _nonnegative("m2", m2, "unit²·rad²/s²")
    with np.errstate(divide="ignore", invalid="ignore"):
        nu0 = np.where(m0 > 0, np.sqrt(m2 / np.where(m0 > 0, m0, 1.0)) / (2.0 * np.pi), 0.0)
        x = np.where(m0 > 0, level**2 / (2.0 * np.where(m0 > 0, m0, 1.0)), np.inf)
    return nu0 * np.exp(-x)


def exceedance_probability(level, m0, m2, duration):
    """Probability of at least one up-crossing of a level in an exposure time (Poisson) [-].

    P = 1 − exp(−ν⁺(a)·T), with ν⁺ from :func:`upcrossing_rate` and up-crossings treated as
    independent rare events.

    Parameters
    ----------
    level : array_like
        Level a [unit].
    m0 : array_like
        Variance [unit²].
    m2 : array_like
        Second moment in encounter frequency [unit²·rad²/s²].
    duration : array_like
        Exposure time T [s] (>= 0).

    Returns
    -------
    numpy.ndarray or float
        P [-].

    References
    ----------
    .. [1] S. O. Rice (1944/45); Poisson assumption for rare crossings, e.g. Ochi (1998) §3.7
       (from memory).
    """
    duration = np.asarray(duration, dtype=float)
    _nonnegative("duration", duration, "s")
    return -np.expm1(-upcrossing_rate(level, m0, m2) * duration)


# --------------------------------------------------------------------------------------------------
# slamming and deck wetness
# --------------------------------------------------------------------------------------------------


def ochi_threshold_velocity(lpp, g: float = G):
    """Ochi's threshold relative velocity for slamming, v_th = 0.093·sqrt(g·Lpp) [m/s].

    Ochi's 12 ft/s for a 520 ft ship, Froude-scaled (12/sqrt(32.17·520) = 0.0928).

    Parameters
    ----------
    lpp : array_like
        Length between perpendiculars [m] (> 0).
    g : float, default G
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray or float
        v_th [m/s].

    References
    ----------
    .. [1] M. K. Ochi (1964), Proc. 5th Symp. Naval Hydrodynamics, 545–596 (from memory).
    """
    lpp = np.asarray(lpp, dtype=float)
    if not np.all(lpp > 0):
        raise ValueError(f"lpp must be > 0 [m], got {_first_bad(lpp, lpp > 0)!r}")
    return 0.093 * np.sqrt(g * lpp)


def _gauss_tail2(level, sigma):
    """exp(−level²/(2σ²)) with σ = 0 giving 0 (level > 0) and level = 0 giving 1."""
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.where(level == 0, 0.0, level**2 / (2.0 * sigma**2))
    return np.exp(-x)


def slamming_probability(sigma_r, sigma_rdot, draft_fp, threshold_velocity):
    r"""Probability of a slam per oscillation of the relative motion at the bow (Ochi 1964) [-].

    A slam needs bottom emergence at the station (r < −T_b) and a relative re-entry velocity above
    the threshold; for a Gaussian process the two are independent, so

    .. math:: P_{slam} = \exp\!\left(-\frac{T_b^2}{2\sigma_r^2} - \frac{v_{th}^2}{2\sigma_{\dot r}^2}\right)

    Parameters
    ----------
    sigma_r : array_like
        RMS relative vertical motion at the station [m].
    sigma_rdot : array_like
        RMS relative vertical velocity at the station [m/s].
    draft_fp : array_like
        Local draught at the station (commonly 0.1·L aft of the FP) [m].
    threshold_velocity : array_like
        Threshold relative velocity [m/s], e.g. :func:`ochi_threshold_velocity`.

    Returns
    -------
    numpy.ndarray or float
        P_slam per oscillation [-].

    References
    ----------
    .. [1] M. K. Ochi (1964), Proc. 5th Symp. Naval Hydrodynamics, 545–596 (from memory).
    .. [2] O. M. Faltinsen (1990), Sea Loads on Ships and Offshore Structures, §8 (from memory).
    """
    sigma_r = np.asarray(sigma_r, dtype=float)
    sigma_rdot = np.asarray(sigma_rdot, dtype=float)
    draft_fp = np.asarray(draft_fp, dtype=float)
    threshold_velocity = np.asarray(threshold_velocity, dtype=float)
    for name, v, unit in (
        ("sigma_r", sigma_r, "m"),
        ("sigma_rdot", sigma_rdot, "m/s"),
        ("draft_fp", draft_fp, "m"),
        ("threshold_velocity", threshold_velocity, "m/s"),
    ):
        _nonnegative(name, v, unit)
    return _gauss_tail2(draft_fp, sigma_r) * _gauss_tail2(threshold_velocity, sigma_rdot)


def slams_per_hour(sigma_r, sigma_rdot, draft_fp, threshold_velocity):
    """Expected number of slams per hour, (3600/Tz,r)·P_slam with Tz,r = 2π·σ_r/σ_ṙ [1/h].

    Parameters
    ----------
    sigma_r, sigma_rdot, draft_fp, threshold_velocity : array_like
        As :func:`slamming_probability` [m, m/s, m, m/s].

    Returns
    -------
    numpy.ndarray or float
        Slams per hour [1/h]; 0 where σ_r = 0.

    References
    ----------
    .. [1] M. K. Ochi (1964), Proc. 5th Symp. Naval Hydrodynamics, 545–596 (from memory).
    """
    p = slamming_probability(sigma_r, sigma_rdot, draft_fp, threshold_velocity)
    return 3600.0 * _oscillation_rate(sigma_r, sigma_rdot) * p


def _oscillation_rate(sigma_r, sigma_rdot):
    sigma_r = np.asarray(sigma_r, dtype=float)
    sigma_rdot = np.asarray(sigma_rdot, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(sigma_r > 0, sigma_rdot / (2.0 * np.pi * np.where(sigma_r > 0, sigma_r, 1.0)), 0.0)


def deck_wetness_probability(sigma_r, freeboard):
    """Probability of deck wetness per oscillation, P_wet = exp(−f²/(2σ_r²)) [-].

    Parameters
    ----------
    sigma_r : array_like
        RMS relative vertical motion at the FP [m].
    freeboard : array_like
        Effective freeboard at the FP (add bow swell-up if modelled) [m].

    Returns
    -------
    numpy.ndarray or float
        P_wet per oscillation [-].

    References
    ----------
    .. [1] M. K. Ochi (1964), Proc. 5th Symp. Naval Hydrodynamics, 545–596 (from memory).
    .. [2] NORDFORSK (1987), Assessment of ship performance in a seaway (deck wetness criterion per
       oscillation) (from memory).
    """
    sigma_r = np.asarray(sigma_r, dtype=float)
    freeboard = np.asarray(freeboard, dtype=float)
    _nonnegative("sigma_r", sigma_r, "m")
    _nonnegative("freeboard", freeboard, "m")
    return _gauss_tail2(freeboard, sigma_r)


def deck_wetness_per_hour(sigma_r, sigma_rdot, freeboard):
    """Expected number of deck wetness events per hour, (3600/Tz,r)·P_wet [1/h].

    Parameters
    ----------
    sigma_r : array_like
        RMS relative vertical motion at the FP [m].
    sigma_rdot : array_like
        RMS relative vertical velocity at the FP [m/s].
    freeboard : array_like
        Effective freeboard [m].

    Returns
    -------
    numpy.ndarray or float
        Events per hour [1/h].

    References
    ----------
    .. [1] M. K. Ochi (1964) (from memory); Rice up-crossing rate of the level f.
    """
    return 3600.0 * _oscillation_rate(sigma_r, sigma_rdot) * deck_wetness_probability(sigma_r, freeboard)


# --------------------------------------------------------------------------------------------------
# motion sickness
# --------------------------------------------------------------------------------------------------

# ISO 2631-1:1997 Table 3, weighting Wf (motion sickness), band-limiting and weighting parameters.
_WF_F1 = 0.08  # high-pass corner [Hz]
_WF_F2 = 0.63  # low-pass corner [Hz]
_WF_F4 = 0.25  # acceleration-velocity transition [Hz]
_WF_Q4 = 0.86
_WF_F5 = 0.0625  # upward step [Hz]
_WF_Q5 = 0.80
_WF_F6 = 0.1
_WF_Q6 = 0.80


def iso2631_wf(f_hz):
    r"""Magnitude of the ISO 2631-1 frequency weighting Wf (motion sickness, vertical acceleration) [-].

    Product of the four analogue filters of ISO 2631-1:1997 Annex A with s = j·2πf:

    .. math::

        H_h = \frac{s^2}{s^2 + \sqrt2\,\omega_1 s + \omega_1^2},\quad
        H_l = \frac{1}{1 + \sqrt2\, s/\omega_2 + (s/\omega_2)^2},\quad
        H_t = \frac{1}{1 + s/(Q_4\omega_4) + (s/\omega_4)^2},\quad
        H_s = \frac{s^2 + \omega_5 s/Q_5 + \omega_5^2}{s^2 + \omega_6 s/Q_6 + \omega_6^2}

    with f1 = 0.08 Hz, f2 = 0.63 Hz, f4 = 0.25 Hz, Q4 = 0.86, f5 = 0.0625 Hz, Q5 = 0.80, f6 = 0.1 Hz,
    Q6 = 0.80 (f3 = ∞, no extra gain).

    Parameters
    ----------
    f_hz : array_like
        Frequency [Hz] (>= 0); encounter frequency |ω_e|/(2π) for ship motions.

    Returns
    -------
    numpy.ndarray or float
        |Wf(f)| [-] (peak ≈ 1.006 near 0.16 Hz).

    References
    ----------
    .. [1] ISO 2631-1:1997, Annex A, Table A.1 (filter form and parameters from memory; the resulting
       |Wf| agrees with the standard's tabulated values as remembered).
    """
    f = np.asarray(f_hz, dtype=float)
    _nonnegative("f_hz", f, "Hz")
    s = 2j * np.pi * f
    w1, w2, w4 = (2.0 * np.pi * x for x in (_WF_F1, _WF_F2, _WF_F4))
    w5, w6 = 2.0 * np.pi * _WF_F5, 2.0 * np.pi * _WF_F6
    h_h = s**2 / (s**2 + np.sqrt(2.0) * w1 * s + w1**2)
    h_l = 1.0 / (1.0 + np.sqrt(2.0) * s / w2 + (s / w2) ** 2)
    h_t = 1.0 / (1.0 + s / (_WF_Q4 * w4) + (s / w4) ** 2)
    h_s = (s**2 + w5 * s / _WF_Q5 + w5**2) / (s**2 + w6 * s / _WF_Q6 + w6**2)
    return np.abs(h_h * h_l * h_t * h_s)


def weighted_rms_from_spectrum(s_acc, omega_e, weights=None):
    r"""Wf-weighted RMS vertical acceleration from an acceleration spectrum in encounter frequency.

    .. math:: a_{w,rms} = \Big(\sum_i |W_f(|\omega_{e,i}|/2\pi)|^2\, S_a(\omega_{e,i})\, w_i\Big)^{1/2}

    Parameters
    ----------
    s_acc : array_like, shape (..., N)
        One-sided vertical acceleration spectrum in encounter frequency [(m/s²)²·s/rad].
    omega_e : array_like, shape (N,)
        Encounter frequencies of the spectrum [rad/s] (sign ignored).
    weights : array_like, shape (N,), optional
        Quadrature weights [rad/s]; None means the trapezoidal rule on ``omega_e`` (ascending).

    Returns
    -------
    numpy.ndarray or float
        a_w,rms [m/s²].

    Notes
    -----
    In the absolute-domain polar evaluation the same quantity is the m0 of
    :func:`response_moments` with the transfer H_az(ω, β)·Wf(|ω_e|/2π), or of
    :func:`polar_response_moments` with ``gain2 = |H_az|² · iso2631_wf(abs(omega_e)/(2π))**2``.

    References
    ----------
    .. [1] ISO 2631-1:1997, §6.4 and Annex D (frequency-weighted RMS for motion sickness) (from
       memory).
    """
    s_acc = np.asarray(s_acc, dtype=float)
    omega_e = np.asarray(omega_e, dtype=float)
    if omega_e.ndim != 1 or s_acc.shape[-1:] != omega_e.shape:
        raise ValueError(
            f"s_acc must have shape (..., N) with N = len(omega_e); got {s_acc.shape} and {omega_e.shape}"
        )
    _nonnegative("s_acc", s_acc, "(m/s²)²·s/rad")
    if weights is None:
        if omega_e.size > 1 and not np.all(np.diff(omega_e) > 0):
            raise ValueError("omega_e must be strictly ascending for the default trapezoidal weights")
        d = np.diff(omega_e)
        weights = np.zeros_like(omega_e)
        weights[:-1] += d / 2.0
        weights[1:] += d / 2.0
    weights = np.asarray(weights, dtype=float)
    wf2 = iso2631_wf(np.abs(omega_e) / (2.0 * np.pi)) ** 2
    return np.sqrt(np.sum(wf2 * s_acc * weights, axis=-1))


def msdv(a_w_rms, duration):
    """Motion sickness dose value of a stationary record, MSDV_z = a_w,rms·sqrt(T) [m/s^1.5].

    Parameters
    ----------
    a_w_rms : array_like
        Wf-weighted RMS vertical acceleration [m/s²].
    duration : array_like
        Exposure time T [s].

    Returns
    -------
    numpy.ndarray or float
        MSDV_z [m/s^1.5].

    References
    ----------
    .. [1] ISO 2631-1:1997, §9.2.2 and Annex D (from memory).
    """
    a = np.asarray(a_w_rms, dtype=float)
    t = np.asarray(duration, dtype=float)
    _nonnegative("a_w_rms", a, "m/s²")
    _nonnegative("duration", t, "s")
    return a * np.sqrt(t)


def vomiting_incidence(msdv_value, km: float = 1.0 / 3.0):
    """Percentage of unadapted adults who may vomit, K_m·MSDV_z, capped at 100 % [%].

    Parameters
    ----------
    msdv_value : array_like
        Motion sickness dose value [m/s^1.5].
    km : float, default 1/3
        Constant for a mixed population of unadapted male and female adults [%·s^1.5/m].

    Returns
    -------
    numpy.ndarray or float
        Incidence [%], 0–100.

    References
    ----------
    .. [1] ISO 2631-1:1997, Annex D.2 (K_m ≈ 1/3) (from memory).
    """
    v = np.asarray(msdv_value, dtype=float)
    _nonnegative("msdv_value", v, "m/s^1.5")
    if not km > 0:
        raise ValueError(f"km must be > 0, got {km!r}")
    return np.minimum(km * v, 100.0)


def msi_ohanlon_mccauley(acc_mean, f_hz, g: float = G):
    r"""Motion sickness incidence in 2 h of vertical sinusoidal motion, O'Hanlon & McCauley fit [%].

    .. math::

        MSI = 100\,\Phi(z),\quad z = 2.128\log_{10} a - 9.277\log_{10} f - 5.809(\log_{10} f)^2 - 1.851

    with a the mean vertical acceleration in units of g.

    Parameters
    ----------
    acc_mean : array_like
        Mean (average absolute) vertical acceleration [m/s²] (> 0); for an irregular Gaussian
        response √(2/π)·σ is the mean of |a|.
    f_hz : array_like
        Motion frequency [Hz] (> 0).
    g : float, default G
        Acceleration of gravity used to express a in g [m/s²].

    Returns
    -------
    numpy.ndarray or float
        MSI [%].

    References
    ----------
    .. [1] J. F. O'Hanlon and M. E. McCauley (1974), Aerospace Medicine 45(4), 366–369 (from memory).
    """
    a = np.asarray(acc_mean, dtype=float)
    f = np.asarray(f_hz, dtype=float)
    if not np.all(a > 0):
        raise ValueError(f"acc_mean must be > 0 [m/s²], got {_first_bad(a, a > 0)!r}")
    if not np.all(f > 0):
        raise ValueError(f"f_hz must be > 0 [Hz], got {_first_bad(f, f > 0)!r}")
    lf = np.log10(f)
    z = 2.128 * np.log10(a / g) - 9.277 * lf - 5.809 * lf**2 - 1.851
    return 100.0 * ndtr(z)


def msi_lloyd(acc_mean, omega_e, g: float = G):
    r"""Motion sickness incidence in 2 h, Lloyd's lognormal form of the O'Hanlon–McCauley data [%].

    .. math:: MSI = 100\,\Phi\!\left(\frac{\log_{10}(a/g) - \mu}{0.4}\right),\quad
              \mu = -0.819 + 2.32(\log_{10}\omega_e)^2

    Parameters
    ----------
    acc_mean : array_like
        Mean (average absolute) vertical acceleration [m/s²] (> 0).
    omega_e : array_like
        Encounter circular frequency [rad/s] (sign ignored, non-zero).
    g : float, default G
        Acceleration of gravity [m/s²].

    Returns
    -------
    numpy.ndarray or float
        MSI [%].

    References
    ----------
    .. [1] A. R. J. M. Lloyd (1989), Seakeeping: Ship Behaviour in Rough Weather, Ellis Horwood
       (from memory).
    """
    a = np.asarray(acc_mean, dtype=float)
    w = np.abs(np.asarray(omega_e, dtype=float))
    if not np.all(a > 0):
        raise ValueError(f"acc_mean must be > 0 [m/s²], got {_first_bad(a, a > 0)!r}")
    if not np.all(w > 0):
        raise ValueError(f"|omega_e| must be > 0 [rad/s], got {_first_bad(w, w > 0)!r}")
    mu = -0.819 + 2.32 * np.log10(w) ** 2
    return 100.0 * ndtr((np.log10(a / g) - mu) / 0.4)
