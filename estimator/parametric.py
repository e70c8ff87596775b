"""Parametric wave-buoy-analogy fit: one or two JONSWAP × cos-2s wave systems.

The directional spectrum is modelled as a sum of P = 1 or 2 systems,
S(ω, β) = Σ_p S_J(ω; Hs_p, Tp_p, γ_p) · D(β; β̄_p, s_p), with S_J the JONSWAP spectrum in the DNV-RP-C205
form and D the cos-2s spreading of Longuet-Higgins et al. (1963). The parameters are found by weighted
least squares on all measured co- and quad-spectra (the same equations and weights as the Bayesian
estimate), from several starting points (multi-start), with bounds; one versus two systems is decided
by the Bayesian information criterion (Schwarz 1978) on the weighted residuals. This is the parametric
family of Tannuri et al. (2003) and Nielsen (2006).

The spectrum is averaged over each grid cell (3 × 3 sub-points), so a narrow peak is not missed by a
coarse grid.

References
----------
.. [1] Tannuri, E.A., Sparano, J.V., Simos, A.N., Da Cruz, J.J. (2003). Estimating directional wave
   spectrum based on stationary ship motion measurements. Applied Ocean Research 25:243-261.
.. [2] Nielsen, U.D. (2006). Estimations of on-site directional wave spectra from measured ship
   responses. Marine Structures 19:33-69.
.. [3] DNV-RP-C205 (2010), §3.5.5 JONSWAP spectrum.
.. [4] Longuet-Higgins, M.S., Cartwright, D.E., Smith, N.D. (1963). Observations of the directional
   spectrum of sea waves using the motions of a floating buoy. Ocean Wave Spectra.
.. [5] Schwarz, G. (1978). Estimating the dimension of a model. Annals of Statistics 6:461-464.
.. [6] Tarantola, A. (2005). Inverse Problem Theory and Methods for Model Parameter Estimation. SIAM,
   §3.2 (least squares with an a-priori model; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.optimize
from scipy.special import gammaln

from estimator.forward import SpectralGrid

N_PAR = 5  # per system: ln Hs, ln Tp, β̄, ln s, ln γ
HS_BOUNDS = (0.05, 25.0)  # [m]
TP_BOUNDS = (3.0, 25.0)  # [s]
S_BOUNDS = (1.0, 40.0)  # cos-2s exponent [-]
GAMMA_BOUNDS = (1.0, 7.0)  # JONSWAP γ range (Goda 1985, via DNV-RP-C205) [-]


@dataclass(frozen=True)
class SystemParameters:
    """One fitted wave system (relative heading convention of the grid).

    Attributes: hs [m], tp [s], beta_mean [rad] (relative wave heading, ITTC), s [-] (cos-2s), gamma [-].
    """

    hs: float
    tp: float
    beta_mean: float
    s: float
    gamma: float


@dataclass(frozen=True)
class ParametricResult:
    """Best parametric fit.

    Attributes
    ----------
    systems : tuple of SystemParameters
        Ordered by decreasing Hs.
    density : ndarray (K, L)
        Cell-averaged model spectrum on the grid [m²·s/rad²].
    chi2 : float
        Normalised weighted misfit [-].
    bic : float
        Bayesian information criterion of the chosen model.
    bic_one, bic_two : float
        BIC of the best one- and two-system fits (inf when not tried).
    n_evaluations : int
        Model evaluations used (cost measure).
    best_one, best_two : tuple of SystemParameters or None
        Best one- and two-system parameters (to restart a reweighted fit).
    """

    systems: tuple[SystemParameters, ...]
    density: np.ndarray
    chi2: float
    bic: float
    bic_one: float
    bic_two: float
    n_evaluations: int
    best_one: tuple[SystemParameters, ...] | None = None
    best_two: tuple[SystemParameters, ...] | None = None


class ParametricModel:
    """Cell-averaged JONSWAP × cos-2s model on a :class:`SpectralGrid`."""

    def __init__(self, grid: SpectralGrid, n_sub: int = 3):
        self.grid = grid
        frac = (np.arange(n_sub) + 0.5) / n_sub
        self.w_sub = grid.omega_edges[:-1, None] + frac[None, :] * grid.d_omega[:, None]  # (K, n)
        self.b_sub = grid.beta[:, None] + (frac[None, :] - 0.5) * grid.d_beta  # (L, n)

    def spectral_factor(self, hs, tp, gamma) -> np.ndarray:
        """Cell-averaged JONSWAP S_J(ω; Hs, Tp, γ) per frequency cell (K,) [m²·s/rad]."""
        w = self.w_sub
        wp = 2 * np.pi / tp
        s_pm = 5.0 / 16.0 * hs**2 * wp**4 * w**-5.0 * np.exp(-1.25 * (w / wp) ** -4.0)
        sig = np.where(w <= wp, 0.07, 0.09)
        s_j = (1 - 0.287 * np.log(gamma)) * s_pm * gamma ** np.exp(-0.5 * ((w - wp) / (sig * wp)) ** 2)
        return s_j.mean(axis=1)  # (K,)

    def directional_factor(self, beta_mean, s) -> np.ndarray:
        """Cell-averaged cos-2s spreading D(β; β̄, s) per direction cell (L,) [1/rad]."""
        log_c = gammaln(s + 1) - gammaln(s + 0.5) - np.log(2 * np.sqrt(np.pi))
        d = np.exp(log_c) * np.abs(np.cos(0.5 * (self.b_sub - beta_mean))) ** (2 * s)
        return d.mean(axis=1)  # (L,)

    def system_density(self, hs, tp, beta_mean, s, gamma) -> np.ndarray:
        s_w = self.spectral_factor(hs, tp, gamma)
        d_b = self.directional_factor(beta_mean, s)
        return s_w[:, None] * d_b[None, :]

    def _factors(self, p: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
        out = []
        for q in range(p.size // N_PAR):
            lh, lt, bm, ls, lg = p[q * N_PAR : (q + 1) * N_PAR]
            out.append((self.spectral_factor(np.exp(lh), np.exp(lt), np.exp(lg)),
                        self.directional_factor(bm, np.exp(ls))))
        return out

    def _sum(self, parts) -> np.ndarray:
        out = np.zeros(self.grid.shape)
        for part in parts:
            out += part
        return out

    def density(self, p: np.ndarray) -> np.ndarray:
        return self._sum(s_w[:, None] * d_b[None, :] for s_w, d_b in self._factors(p))

    def density_jacobian(self, p: np.ndarray, steps: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The density at ``p`` (flattened) and its forward-difference derivatives (K·L, P) with steps ``steps``.

        A step in Tp or γ only recomputes the frequency factor of its own system, and a step in β̄ or s only
        the direction factor (the spectrum is separable per system); the difference is taken on that
        system's part alone (the other systems cancel). The density is proportional to Hs², so its
        derivative with respect to ln Hs is exact: 2 × the system's part (``steps`` is not used for it).
        """
        factors = self._factors(p)
        prods = [s_w[:, None] * d_b[None, :] for s_w, d_b in factors]
        s0 = self._sum(prods).reshape(-1)
        ds = np.empty((s0.size, p.size))
        for j in range(p.size):
            q, i = divmod(j, N_PAR)
            if i == 0:
                ds[:, j] = 2.0 * prods[q].reshape(-1)
                continue
            pj = p[q * N_PAR : (q + 1) * N_PAR].copy()
            pj[i] += steps[j]
            lh, lt, bm, ls, lg = pj
            s_w, d_b = factors[q]
            if i in (2, 3):
                d_b = self.directional_factor(bm, np.exp(ls))
            else:
                s_w = self.spectral_factor(np.exp(lh), np.exp(lt), np.exp(lg))
            ds[:, j] = (np.outer(s_w, d_b) - prods[q]).reshape(-1) / steps[j]
        return s0, ds


class ProjectedModel:
    """The parametric spectrum seen through a linear map M (e.g. the weighted kernel WA), with its Jacobian.

    The map is linear in the spectrum and each system separable, s_q = S_q(ω) ⊗ D_q(β); so
    ∂(M s)/∂θ = B_q·∂S_q with B_q = M·D_q (contracted over β) for Hs, Tp and γ, and C_q·∂D_q with
    C_q = M·S_q (contracted over ω) for β̄ and s: two contractions per system instead of one full
    product per parameter. The same numbers as ``M @ ParametricModel.density_jacobian(p, steps)[1]`` up
    to rounding: the factors' derivatives by forward differences with ``steps``, exact for ln Hs
    (S ∝ Hs²).
    """

    def __init__(self, model: ParametricModel, matrix: np.ndarray):
        self.model = model
        n_k, n_l = model.grid.shape
        self.m3 = np.asarray(matrix, float).reshape(-1, n_k, n_l)  # (M, K, L)
        self.m3t = np.ascontiguousarray(self.m3.transpose(0, 2, 1))  # (M, L, K)

    def jacobian(self, p: np.ndarray, steps: np.ndarray) -> np.ndarray:
        """∂(M s)/∂p, shape (M, P)."""
        model = self.model
        out = np.empty((self.m3.shape[0], p.size))
        for q, (s_w, d_b) in enumerate(model._factors(p)):
            lh, lt, bm, ls, lg = p[q * N_PAR : (q + 1) * N_PAR]
            b_q = self.m3 @ d_b  # (M, K)
            c_q = self.m3t @ s_w  # (M, L)
            j0 = q * N_PAR
            out[:, j0] = 2.0 * (b_q @ s_w)
            h = steps[j0 + 1]
            out[:, j0 + 1] = b_q @ ((model.spectral_factor(np.exp(lh), np.exp(lt + h), np.exp(lg)) - s_w) / h)
            h = steps[j0 + 4]
            out[:, j0 + 4] = b_q @ ((model.spectral_factor(np.exp(lh), np.exp(lt), np.exp(lg + h)) - s_w) / h)
            h = steps[j0 + 2]
            out[:, j0 + 2] = c_q @ ((model.directional_factor(bm + h, np.exp(ls)) - d_b) / h)
            h = steps[j0 + 3]
            out[:, j0 + 3] = c_q @ ((model.directional_factor(bm, np.exp(ls + h)) - d_b) / h)
        return out


def _bounds(n_sys: int):
    lo = np.tile([np.log(HS_BOUNDS[0]), np.log(TP_BOUNDS[0]), -4 * np.pi, np.log(S_BOUNDS[0]), 0.0], n_sys)
    hi = np.tile(
        [np.log(HS_BOUNDS[1]), np.log(TP_BOUNDS[1]), 4 * np.pi, np.log(S_BOUNDS[1]), np.log(GAMMA_BOUNDS[1])],
        n_sys,
    )
    return lo, hi


def _pack(systems) -> np.ndarray:
    out = []
    for hs, tp, bm, s, g in systems:
        out += [
            np.log(np.clip(hs, *HS_BOUNDS)),
            np.log(np.clip(tp, *TP_BOUNDS)),
            bm,
            np.log(np.clip(s, *S_BOUNDS)),
            np.log(np.clip(g, *GAMMA_BOUNDS)),
        ]
    return np.array(out, dtype=float)


def fit(
    matrix: np.ndarray,
    data: np.ndarray,
    weights: np.ndarray,
    grid: SpectralGrid,
    starts_one: list[tuple],
    starts_two: list[tuple[tuple, tuple]],
    *,
    max_nfev: int = 60,
    prior: ParametricPrior | None = None,
) -> ParametricResult:
    """Weighted least-squares fit of one and of two systems; the lower BIC wins.

    Parameters
    ----------
    matrix : ndarray (M, K·L)
        Forward kernel (see :class:`estimator.forward.Kernel`).
    data, weights : ndarray (M,)
        Stacked measured cross-spectra and 1/σ per equation (weight 0 = ignored).
    grid : SpectralGrid
    starts_one : list of (hs, tp, beta_mean, s, gamma)
        Starting points for the one-system fit [m, s, rad, -, -].
    starts_two : list of pairs of such tuples
        Starting points for the two-system fit; empty to skip it.
    max_nfev : int
        Function evaluations per start (the Jacobian counts as N_PAR·P evaluations more).
    prior : ParametricPrior, optional
        Independently estimated systems (e.g. the watch's visual estimate): a Gaussian prior on each
        fitted system's ln Hs, ln Tp and mean direction about the nearest prior system, added as
        residuals (maximum a-posteriori least squares, Tarantola 2005 §3.2 [6]). Its few residuals weigh
        little against the hundreds of data equations, so it decides only where the data cost is nearly
        flat (e.g. the following-sea ambiguity). Default None: data only. The prior systems should
        also be among the starting points (the caller adds them).
    """
    keep = weights > 0
    aw = matrix[keep] * weights[keep, None]
    bw = data[keep] * weights[keep]
    m = int(keep.sum())
    model = ParametricModel(grid)
    n_eval = 0

    def resid_data(p):
        return aw @ model.density(p).reshape(-1) - bw

    def resid(p):
        r = resid_data(p)
        return r if prior is None else np.concatenate([r, prior.residuals(p)])

    projected = ProjectedModel(model, aw)

    def jac(p):
        out = projected.jacobian(p, np.array([1e-6 * max(1.0, abs(v)) for v in p]))
        if prior is None:
            return out
        return np.vstack([out, prior.jacobian(p)])

    def run(starts, n_sys):
        nonlocal n_eval
        lo, hi = _bounds(n_sys)
        best = None
        for st in starts:
            p0 = np.clip(_pack(st if n_sys == 1 else st), lo + 1e-9, hi - 1e-9)
            try:
                r = scipy.optimize.least_squares(
                    resid,
                    p0,
                    jac=jac,
                    bounds=(lo, hi),
                    method="trf",
                    x_scale=1.0,
                    max_nfev=max_nfev,
                    xtol=1e-6,
                    ftol=1e-8,
                )
            except (ValueError, FloatingPointError):
                continue
            n_eval += r.nfev * (1 + p0.size)
            cost = float(r.fun @ r.fun)  # with a prior: the a-posteriori cost (data + prior)
            if best is None or cost < best[0]:
                best = (cost, r.x)
        return best

    best1 = run([[s] for s in starts_one], 1) if starts_one else None
    best2 = run([list(s) for s in starts_two], 2) if starts_two else None

    def bic(best, n_sys):
        if best is None:
            return np.inf
        return m * np.log(max(best[0], 1e-300) / m) + N_PAR * n_sys * np.log(m)

    b1, b2 = bic(best1, 1), bic(best2, 2)
    chosen, n_sys = (best1, 1) if b1 <= b2 else (best2, 2)
    if chosen is None:
        raise ValueError("parametric fit failed from every starting point")
    def unpack(p, n):
        out = []
        for q in range(n):
            lh, lt, bm, ls, lg = p[q * N_PAR : (q + 1) * N_PAR]
            out.append(SystemParameters(float(np.exp(lh)), float(np.exp(lt)), float(np.mod(bm, 2 * np.pi)),
                                        float(np.exp(ls)), float(np.exp(lg))))
        return tuple(sorted(out, key=lambda s: -s.hs))

    p = chosen[1]
    return ParametricResult(
        systems=unpack(p, n_sys),
        density=model.density(p),
        chi2=chosen[0] / m,
        bic=min(b1, b2),
        bic_one=b1,
        bic_two=b2,
        n_evaluations=n_eval,
        best_one=unpack(best1[1], 1) if best1 is not None else None,
        best_two=unpack(best2[1], 2) if best2 is not None else None,
    )


@dataclass(frozen=True)
class ParametricPrior:
    """Gaussian prior on the systems of :func:`fit` from an independent estimate (relative frame).

    Attributes
    ----------
    systems : tuple of (hs, tp, beta_mean)
        Prior systems [m, s, rad] (relative wave heading, ITTC).
    sd_ln_hs, sd_ln_tp, sd_dir : float
        Prior standard deviations of ln Hs [-], ln Tp [-] and of the mean direction [rad], in units of
        the data's normalised error (the weights make χ² ≈ 1 per equation).

    Each fitted system is compared with the prior system nearest to it (in these standardised units),
    so the prior neither needs the same number of systems nor the same order.
    """

    systems: tuple[tuple[float, float, float], ...]
    sd_ln_hs: float
    sd_ln_tp: float
    sd_dir: float

    def __post_init__(self):
        if not self.systems:
            raise ValueError("ParametricPrior: no prior system")
        for name in ("sd_ln_hs", "sd_ln_tp", "sd_dir"):
            v = getattr(self, name)
            if not (np.isfinite(v) and v > 0):
                raise ValueError(f"ParametricPrior.{name} = {v!r}: must be > 0")

    def residuals(self, p: np.ndarray) -> np.ndarray:
        out = []
        sd = np.array([self.sd_ln_hs, self.sd_ln_tp, self.sd_dir])
        ref = np.array([[np.log(h), np.log(t), b] for h, t, b in self.systems])
        for q in range(p.size // N_PAR):
            lh, lt, bm = p[q * N_PAR : q * N_PAR + 3]
            d = np.column_stack([lh - ref[:, 0], lt - ref[:, 1], np.angle(np.exp(1j * (bm - ref[:, 2])))]) / sd
            out.append(d[int(np.argmin((d**2).sum(axis=1)))])
        return np.concatenate(out)

    def jacobian(self, p: np.ndarray) -> np.ndarray:
        """∂residuals/∂p: the nearest prior system held fixed, so each row is a unit over its sd."""
        r0 = self.residuals(p)
        jac = np.zeros((r0.size, p.size))
        sd = (self.sd_ln_hs, self.sd_ln_tp, self.sd_dir)
        for q in range(p.size // N_PAR):
            for i in range(3):
                jac[3 * q + i, q * N_PAR + i] = 1.0 / sd[i]
        return jac


def as_start(system: SystemParameters) -> tuple:
    """A fitted system as a starting point for :func:`fit`."""
    return (system.hs, system.tp, system.beta_mean, system.s, system.gamma)
