"""Non-parametric Bayesian estimate of the directional wave spectrum (wave-buoy analogy).

The unknowns are x = ln s on the (ω, β) grid (log transform for positivity). The posterior mode solves

    min_x  ||W (b − A e^x)||² + u_β² ||D_β x||² + u_ω² ||D_ω x||² + u_0² ||x − x_p||²

with D_β the cyclic second difference along direction and D_ω the second difference along frequency
(smoothness priors), W the data weights (1/σ per equation), and a weak ridge towards a prior x_p (a flat
spectrum of the measured energy, or the previous window's estimate), which also makes the prior proper.
The two hyperparameters (u_β, u_ω) are chosen by minimising Akaike's Bayesian information criterion

    ABIC = M ln(2π σ̂²) + M + ln det(JᵀJ + P) − ln det P,    σ̂² = f(x̂)/M,

(Laplace approximation around the mode, J = W A diag(e^x̂), P the prior precision), following Akaike
(1980), Iseki & Ohtsu (2000) and Nielsen (2006, 2008; two hyperparameters). The problem is solved by
Gauss–Newton on the normal equations with a Cholesky factorisation; ln det P is exact and cheap because
P is a Kronecker sum whose eigenvalues are known (cyclic second differences have eigenvalues
16 sin⁴(πj/L)).

Warm start: the previous window's solution and hyperparameters seed the next window; then only a few
Gauss–Newton steps and a local hyperparameter refinement are needed.

References
----------
.. [1] Akaike, H. (1980). Likelihood and the Bayes procedure. Bayesian Statistics, Valencia.
.. [2] Iseki, T., Ohtsu, K. (2000). Bayesian estimation of directional wave spectra based on ship
   motions. Control Engineering Practice 8:215-219.
.. [3] Nielsen, U.D. (2006). Estimations of on-site directional wave spectra from measured ship
   responses. Marine Structures 19:33-69.
.. [4] Nielsen, U.D. (2008). Introducing two hyperparameters in Bayesian estimation of wave spectra.
   Probabilistic Engineering Mechanics 23:84-94.
.. [5] Tarantola, A. (2005). Inverse Problem Theory and Methods for Model Parameter Estimation. SIAM,
   §3.2 (least squares with an a-priori model m_prior and its covariance; from memory).
.. [6] Kaipio, J., Somersalo, E. (2005). Statistical and Computational Inverse Problems. Springer, §3.3
   (Gaussian smoothness priors with a non-zero mean; from memory).
"""

from __future__ import annotations

import copy
import dataclasses
from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse

X_MIN, X_MAX = -40.0, 12.0  # bounds on ln s [ln(m²·s/rad²)]: keeps e^x finite (numerical safeguard)


@dataclass(frozen=True)
class SmoothnessPrior:
    """Prior precision pieces for a (K, L) grid; x flattened row-major as k·L + l."""

    shape: tuple[int, int]
    k_beta: np.ndarray  # (n, n) I_K ⊗ D_βᵀD_β
    k_omega: np.ndarray  # (n, n) D_ωᵀD_ω ⊗ I_L
    eig_beta: np.ndarray  # (L,) eigenvalues of D_βᵀD_β
    eig_omega: np.ndarray  # (K,) eigenvalues of D_ωᵀD_ω

    @classmethod
    def for_shape(cls, shape: tuple[int, int]) -> SmoothnessPrior:
        k_n, l_n = shape
        d_b = np.zeros((l_n, l_n))
        for i in range(l_n):
            d_b[i, (i - 1) % l_n] += 1.0
            d_b[i, i] -= 2.0
            d_b[i, (i + 1) % l_n] += 1.0
        b_mat = d_b.T @ d_b
        d_w = np.zeros((k_n - 2, k_n))
        for i in range(k_n - 2):
            d_w[i, i : i + 3] = (1.0, -2.0, 1.0)
        c_mat = d_w.T @ d_w
        eig_b = 16.0 * np.sin(np.pi * np.arange(l_n) / l_n) ** 4
        eig_w = np.clip(np.linalg.eigvalsh(c_mat), 0.0, None)
        return cls(
            shape=shape,
            k_beta=np.kron(np.eye(k_n), b_mat),
            k_omega=np.kron(c_mat, np.eye(l_n)),
            eig_beta=eig_b,
            eig_omega=eig_w,
        )

    def precision(self, u_beta: float, u_omega: float, u0: float) -> np.ndarray:
        n = self.k_beta.shape[0]
        return u_beta**2 * self.k_beta + u_omega**2 * self.k_omega + u0**2 * np.eye(n)

    def logdet(self, u_beta: float, u_omega: float, u0: float) -> float:
        lam = u_beta**2 * self.eig_beta[None, :] + u_omega**2 * self.eig_omega[:, None] + u0**2
        return float(np.sum(np.log(lam)))


@dataclass(frozen=True)
class BayesResult:
    """Posterior mode and diagnostics.

    Attributes
    ----------
    density : ndarray (K, L)
        Estimated spectrum s = e^x on the (ω, β) grid [m²·s/rad²].
    x : ndarray (K·L,)
        ln s at the mode.
    u_beta, u_omega : float
        Chosen hyperparameters [-].
    abic : float
        ABIC at the chosen hyperparameters.
    chi2 : float
        Normalised weighted misfit ||W(b − A ŝ)||²/M [-] (≈ 1 when the weights are right).
    abic_interior : bool
        True when the ABIC minimum is not on the edge of the hyperparameter grid.
    n_solves : int
        Cholesky factorisations used (cost measure).
    posterior_sd_x : ndarray (K·L,)
        Laplace posterior standard deviation of x (from the diagonal of H⁻¹, scaled by σ̂²).
    edf : float
        Effective number of parameters tr(H⁻¹JᵀJ) of the smoothed estimate [-].
    posterior_draw_factor : ndarray (K·L, K·L) or None
        R = U/σ̂, U the upper Cholesky factor of H (H = UᵀU), so that σ̂²·H⁻¹ = R⁻¹R⁻ᵀ: a draw from the
        Laplace posterior is x̂ + R⁻¹z with z standard normal, one triangular solve instead of a second
        factorisation of the covariance. The full Laplace covariance σ̂²·H⁻¹ = R⁻¹R⁻ᵀ is what intervals of
        integrated parameters need (the cells are strongly correlated through the smoothness prior: the
        diagonal alone understates them); it is used through R and never formed.
    """

    density: np.ndarray
    x: np.ndarray
    u_beta: float
    u_omega: float
    abic: float
    chi2: float
    abic_interior: bool
    n_solves: int
    posterior_sd_x: np.ndarray
    edf: float = float("nan")
    posterior_draw_factor: np.ndarray | None = None


def _cholesky(hess: np.ndarray) -> tuple[np.ndarray, bool]:
    """Cholesky factor of a symmetric positive definite matrix, as ``scipy.linalg.cho_factor`` returns it.

    The same LAPACK routine (``potrf``, upper triangle) on the same numbers, without the transposing copy
    that ``cho_factor`` makes of a C-ordered array: a symmetric matrix is its own transpose, so its
    C-ordered copy read in Fortran order is the same matrix.
    """
    a = np.array(hess, dtype=float, order="C", copy=True)
    c, info = scipy.linalg.lapack.dpotrf(a.T, lower=False, clean=False, overwrite_a=True)
    if info > 0:
        raise np.linalg.LinAlgError(f"{info}-th leading minor not positive definite")
    if info < 0:
        raise ValueError(f"illegal value in {-info}-th argument of internal potrf")
    return c, False


def _triangular_inverse(c: np.ndarray) -> np.ndarray:
    """U⁻¹ from the upper Cholesky factor U of H (``_cholesky``; its lower triangle is ignored), with
    LAPACK ``trtri`` (n³/3 operations, against 2n³ for ``cho_solve(factor, I)``; Golub & Van Loan 2013,
    §3.1). H⁻¹ = U⁻¹U⁻ᵀ."""
    inv, info = scipy.linalg.lapack.dtrtri(c, lower=0)
    if info != 0:
        raise np.linalg.LinAlgError(f"trtri failed (info {info})")
    return np.triu(inv)


class _Precision:
    """u_β²K_β + u_ω²K_ω held sparse (second differences: about 10 non-zeros per row).

    The dense n×n sum cost a full pass over n² numbers per hyperparameter pair (about 5 % of a window's
    processor time at n = 672); the products and the additions into the Hessian need only the non-zeros.
    """

    __slots__ = ("rows", "cols", "vals", "mat")

    def __init__(self, rows, cols, vals, n):
        self.rows, self.cols, self.vals = rows, cols, vals
        self.mat = scipy.sparse.csr_matrix((vals, (rows, cols)), shape=(n, n))

    def __matmul__(self, x):
        return self.mat @ x

    def add_into(self, dense: np.ndarray) -> np.ndarray:
        """``dense + P`` in place (the pattern has no repeated entries)."""
        dense[self.rows, self.cols] += self.vals
        return dense

    def inner(self, dense: np.ndarray) -> float:
        """Σ_ij dense_ij·P_ij."""
        return float(np.dot(dense[self.rows, self.cols], self.vals))


DEFAULT_U_GRID = 2.0 ** np.arange(-6, 3)  # 1/64 … 4, log-spaced (project choice)


class BayesianEstimator:
    """Reusable solver for one kernel (speed, condition, channel set); cheap to call per window."""

    def __init__(
        self,
        matrix: np.ndarray,
        shape: tuple[int, int],
        *,
        u_grid: np.ndarray = DEFAULT_U_GRID,
        u0: float = 0.05,
        max_iter: int = 30,
    ):
        self.a = np.asarray(matrix, dtype=float)
        self.shape = shape
        self.prior = SmoothnessPrior.for_shape(shape)
        pattern = scipy.sparse.coo_matrix((self.prior.k_beta != 0) | (self.prior.k_omega != 0))
        self._p_rows, self._p_cols = pattern.row, pattern.col
        self._p_beta = self.prior.k_beta[pattern.row, pattern.col]
        self._p_omega = self.prior.k_omega[pattern.row, pattern.col]
        self.u_grid = np.asarray(u_grid, dtype=float)
        self.u0 = float(u0)
        self.max_iter = max_iter

    # -- objective pieces -------------------------------------------------------------------------
    # With J = W A diag(s), s = e^x, everything the Gauss–Newton iteration needs follows from the Gram
    # matrix G = (WA)ᵀ(WA), h = (WA)ᵀ(Wb) and c = ||Wb||², computed once per window:
    #   ||W(b − A s)||² = sᵀGs − 2hᵀs + c,  JᵀJ = (s sᵀ) ∘ G,  Jᵀr = s ∘ (h − G s).
    # Each iteration then costs O(n²) plus one Cholesky factorisation (n = K·L unknowns).
    def _objective(self, x, gram, p_s, x_prior):
        g, h, c = gram
        s = np.exp(x)
        gs = g @ s
        dx = x - x_prior
        misfit = max(float(s @ gs - 2 * h @ s + c), 0.0)
        return misfit + float(x @ (p_s @ x)) + self.u0**2 * float(dx @ dx), gs, s, misfit

    def _normal(self, x, gram, p_s, x_prior):
        g, h, _ = gram
        f, gs, s, misfit = self._objective(x, gram, p_s, x_prior)
        hess = p_s.add_into(g * np.outer(s, s))
        hess[np.diag_indices_from(hess)] += self.u0**2
        grad = s * (h - gs) - p_s @ x - self.u0**2 * (x - x_prior)
        return f, hess, grad, misfit

    @staticmethod
    def _factor(hess):
        try:
            return _cholesky(hess)
        except np.linalg.LinAlgError:
            hess = hess.copy()
            hess[np.diag_indices_from(hess)] += 1e-10 * np.trace(hess) / hess.shape[0] + 1e-300
            return _cholesky(hess)

    def _pmat(self, u_beta, u_omega):
        return _Precision(self._p_rows, self._p_cols, u_beta**2 * self._p_beta + u_omega**2 * self._p_omega,
                          self.a.shape[1])

    def _gn(self, x, gram, u_beta, u_omega, x_prior, n_iter, tol=1e-4):
        p_s = self._pmat(u_beta, u_omega)
        n_chol = 0
        f = self._objective(x, gram, p_s, x_prior)[0]
        for _ in range(n_iter):
            f, hess, grad, _ = self._normal(x, gram, p_s, x_prior)
            step = scipy.linalg.cho_solve(self._factor(hess), grad, check_finite=False)
            n_chol += 1
            mx = np.max(np.abs(step))
            if mx > 3.0:
                step *= 3.0 / mx
            alpha = 1.0
            improved = False
            for _ls in range(8):
                xn = np.clip(x + alpha * step, X_MIN, X_MAX)
                fn = self._objective(xn, gram, p_s, x_prior)[0]
                if fn < f:
                    improved = True
                    break
                alpha *= 0.5
            if not improved:
                break
            rel = (f - fn) / max(f, 1e-300)
            x, f = xn, fn
            if rel < tol:
                break
        return x, f, n_chol

    def _abic(self, f, logdet_h, u_beta, u_omega, m):
        sigma2 = max(f / m, 1e-300)
        return m * np.log(2 * np.pi * sigma2) + m + logdet_h - self.prior.logdet(u_beta, u_omega, self.u0)

    def _abic_at(self, x, gram, u_beta, u_omega, x_prior, m):
        p_s = self._pmat(u_beta, u_omega)
        f, hess, _, _ = self._normal(x, gram, p_s, x_prior)
        c, _ = self._factor(hess)
        return self._abic(f, 2.0 * np.sum(np.log(np.abs(np.diag(c)))), u_beta, u_omega, m), f

    def _screen(self, x, gram, x_prior, m, pairs):
        """One Gauss–Newton step from a common linearisation for each hyperparameter pair, then ABIC."""
        g, h, _ = gram
        s = np.exp(x)
        gs = g @ s
        jtj = g * np.outer(s, s)
        jtr = s * (h - gs)
        out = []
        for ub, uw in pairs:
            p_s = self._pmat(ub, uw)
            hess = p_s.add_into(jtj.copy())
            hess[np.diag_indices_from(hess)] += self.u0**2
            c, low = self._factor(hess)
            step = scipy.linalg.cho_solve((c, low), jtr - p_s @ x - self.u0**2 * (x - x_prior), check_finite=False)
            mx = np.max(np.abs(step))
            if mx > 3.0:
                step *= 3.0 / mx
            xn = np.clip(x + step, X_MIN, X_MAX)
            fn = self._objective(xn, gram, p_s, x_prior)[0]
            abic = self._abic(fn, 2.0 * np.sum(np.log(np.abs(np.diag(c)))), ub, uw, m)
            out.append((abic, ub, uw, xn))
        return out

    # -- public -------------------------------------------------------------------------------------
    def solve(
        self,
        data: np.ndarray,
        weights: np.ndarray,
        *,
        x_start: np.ndarray | None = None,
        x_prior: np.ndarray | None = None,
        u_start: tuple[float, float] | None = None,
        auto_channel: np.ndarray | None = None,
        x_reference: np.ndarray | None = None,
        reference_sd: float | None = None,
    ) -> BayesResult:
        """Posterior mode with ABIC-chosen hyperparameters.

        Parameters
        ----------
        data : ndarray (M,)
            Stacked measured cross-spectra (see :func:`estimator.forward.stack`).
        weights : ndarray (M,)
            1/σ per equation; rows with weight 0 are ignored.
        x_start : ndarray (K·L,), optional
            Warm start (e.g. previous window's ln s, rotated to the present heading).
        x_prior : ndarray (K·L,), optional
            Prior mean of ln s for the weak ridge; defaults to a flat spectrum fitted to the data.
        u_start : (u_beta, u_omega), optional
            Previous window's hyperparameters: only a local 3×3 neighbourhood is searched.
        auto_channel : ndarray (M,) of int, optional
            Channel index of each auto-spectrum row, −1 for the other rows (for the flat start level).
        x_reference : ndarray (K·L,), optional
            Prior mean of ln s from an independent estimate of the sea (e.g. the watch's visual estimate,
            :func:`estimator.observed.observed_spectrum`). The prior becomes Gaussian about it,
            u_β²||D_β(x − x_r)||² + u_ω²||D_ω(x − x_r)||² + ||x − x_r||²/σ_r², instead of about a smooth
            surface and a flat level: the least-squares solution with an a-priori model of Tarantola
            (2005, §3.2) [5], Tikhonov regularisation about a reference solution (Kaipio & Somersalo 2005,
            §3.3) [6]. Where the data are informative the misfit dominates; where they are not (poorly
            observed frequencies, the following-sea ambiguity) the estimate keeps the reference's shape
            and level. The Gauss–Newton iteration starts from it unless ``x_start`` is given. Solved by
            the change of variables y = x − x_r (A → A·diag(e^{x_r})), so every step below is unchanged.
            Default None: no reference (the behaviour without a prior).
        reference_sd : float, optional
            σ_r, the prior standard deviation of each cell's ln s about ``x_reference``, in units of the
            data's normalised error (the weights make χ² ≈ 1); the ridge weight is 1/σ_r. Required with
            ``x_reference``.
        """
        if x_reference is not None:
            return self._solve_about(data, weights, x_reference, reference_sd, x_start=x_start,
                                     u_start=u_start, auto_channel=auto_channel)
        keep = weights > 0
        aw = self.a[keep] * weights[keep, None]
        bw = data[keep] * weights[keep]
        m = int(keep.sum())
        gram = (aw.T @ aw, aw.T @ bw, float(bw @ bw))
        n = self.a.shape[1]
        if m < 3:
            raise ValueError(f"too few usable equations for the Bayesian estimate: {m}")
        # Flat start: the constant spectrum that best fits the auto-spectra (closed-form least squares on
        # the rows whose kernel is non-negative: co- and quad-spectra can make a flat fit negative).
        # Each channel's auto-spectrum gives its own flat level; the median is robust against a channel
        # that a flat (all-direction) sea would excite far more than the real one (roll in head seas).
        if auto_channel is None:
            auto_channel = np.where(np.all(self.a >= 0, axis=1), 0, -1)
        levels = []
        for ch in np.unique(auto_channel[keep]):
            if ch < 0:
                continue
            rows = (auto_channel == ch) & keep
            a1 = self.a[rows].sum(axis=1)
            if a1.sum() > 0 and data[rows].sum() > 0:
                levels.append(float(data[rows].sum() / a1.sum()))
        s_flat = max(float(np.median(levels)) if levels else 1e-4, 1e-8)
        flat = np.full(n, np.log(s_flat))
        x_prior = flat if x_prior is None else np.clip(np.asarray(x_prior, float), X_MIN, X_MAX)
        x = flat.copy() if x_start is None else np.clip(np.asarray(x_start, float), X_MIN, X_MAX)
        grid = self.u_grid
        n_solves = 0
        if u_start is None:
            ub0 = uw0 = float(grid[len(grid) // 2])
            x, _, nc = self._gn(x, gram, ub0, uw0, x_prior, n_iter=8, tol=1e-3)
            n_solves += nc
            coarse = grid[1::3]
            pairs = [(ub, uw) for ub in coarse for uw in coarse]
        else:
            ub0, uw0 = u_start
            x, _, nc = self._gn(x, gram, ub0, uw0, x_prior, n_iter=3, tol=1e-3)
            n_solves += nc
            pairs = None
        # Coarse screen (cold) or local screen (warm) around the current best.
        if pairs is not None:
            res = self._screen(x, gram, x_prior, m, pairs)
            n_solves += len(pairs)
            best = min(res, key=lambda t: t[0])
            ub0, uw0, x = best[1], best[2], best[3]
        ib = int(np.argmin(np.abs(np.log(grid) - np.log(ub0))))
        iw = int(np.argmin(np.abs(np.log(grid) - np.log(uw0))))
        local = [
            (grid[a], grid[b])
            for a in range(max(ib - 1, 0), min(ib + 2, grid.size))
            for b in range(max(iw - 1, 0), min(iw + 2, grid.size))
        ]
        res = self._screen(x, gram, x_prior, m, local)
        n_solves += len(local)
        best = min(res, key=lambda t: t[0])
        ub, uw, x = best[1], best[2], best[3]
        x, f, nc = self._gn(x, gram, ub, uw, x_prior, n_iter=self.max_iter)
        n_solves += nc
        # ABIC at the mode and the Laplace posterior of x from the same factorisation of H
        p_s = self._pmat(ub, uw)
        f, hess, _, misfit = self._normal(x, gram, p_s, x_prior)
        factor = self._factor(hess)
        abic = self._abic(f, 2.0 * np.sum(np.log(np.abs(np.diag(factor[0])))), ub, uw, m)
        n_solves += 1
        interior = bool(grid[0] < ub < grid[-1] and grid[0] < uw < grid[-1])
        try:
            # H⁻¹ = U⁻¹U⁻ᵀ (H = UᵀU) is never formed: its diagonal is the row sums of (U⁻¹)², and
            # tr(H⁻¹P) = Σ_k u_kᵀPu_k over the columns u_k of U⁻¹ (P sparse), from one triangular inverse
            uinv = _triangular_inverse(factor[0])
            hinv_diag = np.einsum("ij,ij->i", uinv, uinv)
            # effective number of parameters tr(H⁻¹JᵀJ) = n − tr(H⁻¹P) (Hastie & Tibshirani 1990, §3.5)
            edf = float(n - np.einsum("ij,ij->", uinv, p_s @ uinv) - self.u0**2 * hinv_diag.sum())
        except np.linalg.LinAlgError:
            uinv = None
            hinv_diag = np.full(n, np.inf)
            edf = float(n)
        sigma2 = f / m
        s = np.exp(x)
        chi2 = misfit / m
        return BayesResult(
            density=s.reshape(self.shape),
            x=x,
            u_beta=float(ub),
            u_omega=float(uw),
            abic=float(abic),
            chi2=chi2,
            abic_interior=interior,
            n_solves=n_solves,
            posterior_sd_x=np.sqrt(np.maximum(hinv_diag * sigma2, 0.0)),
            edf=edf,
            posterior_draw_factor=None if uinv is None else np.triu(factor[0]) / np.sqrt(max(sigma2, 1e-300)),
        )

    def _solve_about(self, data, weights, x_reference, reference_sd, *, x_start, u_start, auto_channel):
        """:meth:`solve` with the prior about ``x_reference`` (y = x − x_r; see ``x_reference`` there)."""
        if reference_sd is None or not (np.isfinite(reference_sd) and reference_sd > 0):
            raise ValueError(f"reference_sd = {reference_sd!r}: a prior reference needs a standard deviation > 0")
        x_r = np.clip(np.asarray(x_reference, float).reshape(-1), X_MIN, X_MAX)
        if x_r.size != self.a.shape[1]:
            raise ValueError(f"x_reference has {x_r.size} cells; the grid has {self.a.shape[1]}")
        sub = copy.copy(self)
        sub.a = self.a * np.exp(x_r)[None, :]  # A·diag(e^{x_r}): the unknown is y = x − x_r
        sub.u0 = 1.0 / float(reference_sd)  # the ridge about y = 0, i.e. about x_r
        y0 = np.zeros_like(x_r) if x_start is None else np.asarray(x_start, float) - x_r
        r = sub.solve(data, weights, x_start=y0, x_prior=np.zeros_like(x_r), u_start=u_start,
                      auto_channel=auto_channel)
        x = np.clip(r.x + x_r, X_MIN, X_MAX)
        return dataclasses.replace(r, x=x, density=np.exp(x).reshape(self.shape))
