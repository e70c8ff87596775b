"""Polar evaluation: every true heading × every speed scored against the limits of a condition.

For each cell (ship true heading ψ_h, speed U_s) and each wave direction θ_l of the directional
spectrum the relative heading is β = (π − (θ_l − ψ_h)) mod 2π (docs/conventions.md), so a bimodal sea
is scored as it is, with no reduction to a mean direction. The response moments are the absolute-
domain sums

    m_n[r, h, s] = Σ_k Σ_l |H_r(ω_k, β_hl; U_s)|² · |ω_e(ω_k, β_hl; U_s)|ⁿ · S(ω_k, θ_l) · Δω_k Δθ

(no encounter Jacobian; following seas need no special case). Because the RAOs of a loading
condition do not change between cycles, |H_r|² and ω_e are tabulated once per (condition, grid)
on a regular β grid for every speed (:func:`build_polar_model`); each cycle then only contracts
that table with the spectrum (:func:`estimator.responses.polar_response_moments`). Every limit's
statistic follows from m0 and m2 (:mod:`advisor.criteria`); the utilisation is statistic ÷ limit.

Uncertainty of the sea-state estimate (:func:`evaluate_polar`): the *conservative* utilisation
is the envelope (largest value) over the intervals of the estimate: the upper significant wave
height of its 90 % interval (moments scale with Hs²; without an interval, Hs·(1 + k·σ_rel)), the
ends of its peak-period interval (the spectrum stretched in period, S'(ω) = f·S(f·ω), which keeps
m0 and moves Tp to f·Tp), and the direction uncertainty ±σ_dir. Turning the spectrum by δ equals evaluating heading
ψ − δ, so the worst over [−σ_dir, +σ_dir] is a running maximum over neighbouring heading cells,
σ_dir rounded up to a whole heading step (exact on the grid, and never less conservative).
Nominal and conservative values are both kept. The Circ.1228 zones (:mod:`advisor.zones`) are
evaluated for every wave system of the spectrum (watershed partitions) at the nominal estimate,
and conservatively (upper Hs of the sea, periods over the stretched Tm01–Tp band, directions over
±σ_dir). Every cell faster than the speed the ship can make in this sea (``speed_cap``, from
:mod:`advisor.speedloss`) is kept in the arrays but marked, so the advice does not propose it.

References
----------
.. [1] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, §2.4 (response spectra of linear
   systems in a short-crested sea) (from memory).
.. [2] Nielsen, U. D. (2006). Estimations of on-site directional wave spectra from measured ship
   responses. *Marine Structures* 19, 33–69 (using the estimated spectrum to score headings and
   speeds) (from memory).
.. [3] IMO MSC.1/Circ.1627 (2020), chapter 4 (operational guidance shown as polar diagrams of
   sailing conditions) (from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from advisor import criteria
from advisor.limits import LimitSet
from advisor.zones import PERIOD_SCREENING_ONLY, ZONE_NAMES, ParametricRollCheck, WaveSystem, wave_systems, zone_masks
from estimator.constants import KNOT, G
from estimator.responses import heading_rotation_matrix, polar_response_moments
from estimator.spectra import DirectionalSpectrum, resample_spectrum

__all__ = ["PolarModel", "PolarResult", "CellValue", "build_polar_model", "evaluate_polar", "TWO_PI"]

TWO_PI = 2.0 * math.pi


def _readonly(a) -> np.ndarray:
    a = np.array(a, copy=True)
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class PolarModel:
    """What stays fixed between cycles for one loading condition and grid.

    Attributes
    ----------
    limit_set : LimitSet
        The limits.
    lpp : float
        Length between perpendiculars [m].
    t_roll : float
        Natural roll period of the condition [s].
    headings : numpy.ndarray, shape (H,)
        Candidate true headings, uniform over [0, 2π) [rad].
    speeds : numpy.ndarray, shape (S,)
        Candidate speeds through water [m/s].
    omega : numpy.ndarray, shape (K,)
        Absolute wave frequency grid of the tables (spectra are resampled onto it) [rad/s].
    beta : numpy.ndarray, shape (J,)
        Regular relative-heading grid of the tables [rad].
    responses : tuple of criteria.Response
        The distinct responses the limits look at.
    limit_response : numpy.ndarray of int, shape (C,)
        Index into ``responses`` of each limit.
    points : tuple of NamedPoint or None, shape (C,)
        Point of each limit.
    gain2 : numpy.ndarray, shape (R, S, K, J)
        |H_r|² per unit wave amplitude [unit²/m²].
    omega_e : numpy.ndarray, shape (S, K, J)
        Signed encounter frequency [rad/s].
    """

    limit_set: LimitSet
    lpp: float
    t_roll: float
    headings: np.ndarray
    speeds: np.ndarray
    omega: np.ndarray
    beta: np.ndarray
    responses: tuple
    limit_response: np.ndarray
    points: tuple
    gain2: np.ndarray
    omega_e: np.ndarray
    parametric_check: ParametricRollCheck = PERIOD_SCREENING_ONLY
    moment_matrix: np.ndarray | None = field(default=None, repr=False)
    moment_matrix32: np.ndarray | None = field(default=None, repr=False)

    @property
    def keys(self) -> tuple[str, ...]:
        """Limit keys, in order."""
        return tuple(lim.key for lim in self.limit_set.limits)


def build_polar_model(
    rao_table,
    limit_set: LimitSet,
    *,
    lpp: float,
    t_roll: float,
    vessel_points,
    omega,
    max_speed: float,
    speed_step: float = KNOT,
    heading_step: float = math.radians(5.0),
    beta_step: float | None = None,
    parametric_check: ParametricRollCheck = PERIOD_SCREENING_ONLY,
) -> PolarModel:
    """Tabulate |H|² and ω_e for every limit's response, speed, frequency and relative heading.

    Parameters
    ----------
    rao_table : estimator.rao.RAOTable
        RAOs of the loading condition.
    limit_set : LimitSet
        Limits of the condition.
    lpp : float
        Length between perpendiculars [m].
    t_roll : float
        Natural roll period [s].
    vessel_points : mapping of str to (x, y, z)
        The vessel's named points, body axes [m].
    omega : array_like, shape (K,)
        Absolute wave frequency grid (that of the sea-state estimates) [rad/s].
    max_speed : float
        Largest candidate speed [m/s]; speeds are 0, speed_step, … up to it.
    speed_step : float, optional
        Speed step [m/s] (default 1 kn).
    heading_step : float, optional
        Heading step [rad] (default 5°); 2π must be a whole multiple of it.
    beta_step : float, optional
        Step of the tabulated relative-heading grid [rad] (default ``heading_step``).
    parametric_check : advisor.zones.ParametricRollCheck, optional
        Outcome of the ship-specific parametric roll check of the condition (default: period
        screening only).

    Returns
    -------
    PolarModel

    Raises
    ------
    ValueError
        On a grid that is not uniform over the circle, or non-positive lengths and periods.
    advisor.limits.LimitSetError
        If a limit names an unknown point.
    """
    lpp = float(lpp)
    t_roll = float(t_roll)
    if not (lpp > 0 and math.isfinite(lpp)):
        raise ValueError(f"lpp must be > 0 m, got {lpp!r}")
    if not (t_roll > 0 and math.isfinite(t_roll)):
        raise ValueError(f"t_roll must be > 0 s, got {t_roll!r}")
    n_h = TWO_PI / heading_step
    if abs(n_h - round(n_h)) > 1e-6 or round(n_h) < 4:
        raise ValueError(
            f"heading_step must divide 360 deg into >= 4 steps, got {math.degrees(heading_step)!r} deg"
        )
    beta_step = heading_step if beta_step is None else beta_step
    n_j = TWO_PI / beta_step
    if abs(n_j - round(n_j)) > 1e-6 or round(n_j) < 4:
        raise ValueError(
            f"beta_step must divide 360 deg into >= 4 steps, got {math.degrees(beta_step)!r} deg"
        )
    if not (max_speed >= 0 and speed_step > 0):
        raise ValueError(f"max_speed must be >= 0 and speed_step > 0 m/s, got {max_speed!r}, {speed_step!r}")
    headings = np.arange(round(n_h)) * (TWO_PI / round(n_h))
    beta = np.arange(round(n_j)) * (TWO_PI / round(n_j))
    speeds = np.arange(int(math.floor(max_speed / speed_step + 1e-9)) + 1) * speed_step
    omega = np.asarray(omega, dtype=float)
    if omega.ndim != 1 or omega.size < 2 or np.any(np.diff(omega) <= 0) or omega[0] < 0:
        raise ValueError("omega must be 1-D, strictly ascending, >= 0 rad/s, with at least 2 values")

    points = limit_set.resolve_points(vessel_points)
    resp_index: dict = {}
    resp_list: list = []
    lim_resp = []
    lim_points = []
    for lim in limit_set.limits:
        r = criteria.response_of(lim, points)
        if r not in resp_index:
            resp_index[r] = len(resp_list)
            resp_list.append(r)
        lim_resp.append(resp_index[r])
        lim_points.append(points[lim.point] if lim.point is not None else None)

    rao = rao_table.on_grid(omega, beta, speeds)  # (6, S, J, K)
    rao = np.swapaxes(rao, 2, 3)  # (6, S, K, J)
    om = omega[None, :, None]
    be = beta[None, None, :]
    omega_e = om - om**2 * speeds[:, None, None] * np.cos(be) / G  # (S, K, J), docs/conventions.md
    gain2 = np.empty((len(resp_list), speeds.size, omega.size, beta.size))
    for i, r in enumerate(resp_list):
        h = criteria.transfer(r, rao, om, be, omega_e)
        gain2[i] = h.real**2 + h.imag**2
    qmat = _moment_matrix(gain2, omega_e)
    return PolarModel(
        limit_set=limit_set,
        lpp=lpp,
        t_roll=t_roll,
        headings=_readonly(headings),
        speeds=_readonly(speeds),
        omega=_readonly(omega),
        beta=_readonly(beta),
        responses=tuple(resp_list),
        limit_response=_readonly(np.asarray(lim_resp, dtype=int)),
        points=tuple(lim_points),
        gain2=_readonly(gain2),
        omega_e=_readonly(omega_e),
        parametric_check=parametric_check,
        moment_matrix=_readonly(qmat),
        moment_matrix32=_readonly(qmat.astype(np.float32)),
    )


def _moment_matrix(gain2: np.ndarray, omega_e: np.ndarray) -> np.ndarray:
    """|H_r|²·|ω_e|ⁿ for n = 0, 2 laid out as rows (speed, order, response) × columns (ω, β): the
    left factor of :func:`estimator.responses.polar_response_moments`'s product, built once."""
    n_r, n_s, k, n_j = gain2.shape
    q = np.empty((n_s, 2, n_r, k * n_j))
    g2 = gain2.reshape(n_r, n_s, k * n_j).transpose(1, 0, 2)
    q[:, 0] = g2
    q[:, 1] = g2 * (omega_e**2).reshape(n_s, 1, k * n_j)
    return q.reshape(n_s * 2 * n_r, k * n_j)


def _moments_many(model: PolarModel, spectra, weights) -> list[tuple[np.ndarray, np.ndarray]]:
    """(m0, m2), each (R, H, S), for several spectra on the model's grid and one θ grid.

    The same sums as :func:`estimator.responses.polar_response_moments` (absolute-domain integration,
    the sea rotated onto the relative-heading grid of the tables for every heading). The first
    spectrum (the nominal one) in double precision; the others (the envelope over the intervals) in
    one single-precision product (relative error about 1e-7, far inside the intervals)."""
    theta = spectra[0].theta
    rot = heading_rotation_matrix(theta, model.headings, model.beta)  # (H, L, J)
    n_h, k, n_j = model.headings.size, model.omega.size, model.beta.size
    n_s, n_r = model.speeds.size, len(model.responses)
    cols = [np.matmul((sp.density * weights)[None], rot).reshape(n_h, k * n_j).T for sp in spectra]

    def split(m, n):
        m = np.asarray(m, dtype=float).reshape(n_s, 2, n_r, n, n_h).transpose(3, 1, 2, 4, 0)  # (N, 2, R, H, S)
        return [(m[i, 0], m[i, 1]) for i in range(n)]

    out = split(model.moment_matrix @ cols[0], 1)
    if len(cols) > 1:
        rest = np.concatenate(cols[1:], axis=1).astype(np.float32)
        out += split(model.moment_matrix32 @ rest, len(cols) - 1)
    return out



@dataclass(frozen=True)
class CellValue:
    """Scores at one (heading, speed), e.g. the ship's present one.

    Attributes
    ----------
    heading : float
        True heading [rad].
    speed : float
        Speed through water [m/s].
    utilisation : numpy.ndarray, shape (C,)
        Conservative utilisation per limit [-].
    utilisation_nominal : numpy.ndarray, shape (C,)
        Nominal utilisation per limit [-].
    overall : float
        Largest conservative utilisation [-].
    overall_nominal : float
        Largest nominal utilisation [-].
    limiting : int
        Index of the limit with the largest conservative utilisation.
    zones : tuple of str
        Circ.1228 zones (conservative) the cell lies in.
    """

    heading: float
    speed: float
    utilisation: np.ndarray
    utilisation_nominal: np.ndarray
    overall: float
    overall_nominal: float
    limiting: int
    zones: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class PolarResult:
    """Scores of every (true heading, speed) cell for one sea-state estimate.

    Attributes
    ----------
    headings : numpy.ndarray, shape (H,)
        True headings [rad].
    speeds : numpy.ndarray, shape (S,)
        Speeds through water [m/s].
    keys, labels : tuple of str, length C
        Limit keys and display labels.
    limit_values : numpy.ndarray, shape (C,)
        Limits in SI ([rad], [m/s²], [-], [1/s], [m/s^1.5]).
    predicted, predicted_conservative : numpy.ndarray, shape (C, H, S)
        Predicted statistic per limit, nominal and conservative, SI units of the limit.
    utilisation, utilisation_conservative : numpy.ndarray, shape (C, H, S)
        Predicted ÷ limit [-].
    overall, overall_conservative : numpy.ndarray, shape (H, S)
        Largest utilisation over the limits [-].
    limiting, limiting_conservative : numpy.ndarray of int, shape (H, S)
        Index of the limit with the largest utilisation.
    zones, zones_conservative : dict of str to numpy.ndarray of bool, shape (H, S)
        Circ.1228 zone masks (:data:`advisor.zones.ZONE_NAMES`).
    margin : float
        Utilisation the advice keeps to [-].
    systems : tuple of WaveSystem
        Wave systems screened for the zones (nominal).
    sigma_hs_rel : float
        Relative uncertainty of Hs used [-].
    sigma_dir : float
        Direction uncertainty used, rounded up to whole heading steps [rad].
    hs : float
        Significant wave height of the spectrum evaluated [m].
    hs_upper : float
        Significant wave height of the conservative evaluation [m].
    tp_factors : tuple of float
        Period stretch factors of the conservative envelope (lower, upper) [-].
    speed_cap : numpy.ndarray, shape (H,)
        Speed the ship can make at each heading in this sea [m/s] (inf when not known).
    speed_cap_method : str
        How ``speed_cap`` was found (method and source), "" when not known.
    parametric_check : advisor.zones.ParametricRollCheck
        Which parametric roll check applied to the loading condition.
    """

    headings: np.ndarray
    speeds: np.ndarray
    keys: tuple[str, ...]
    labels: tuple[str, ...]
    limit_values: np.ndarray
    predicted: np.ndarray
    predicted_conservative: np.ndarray
    utilisation: np.ndarray
    utilisation_conservative: np.ndarray
    overall: np.ndarray
    overall_conservative: np.ndarray
    limiting: np.ndarray
    limiting_conservative: np.ndarray
    zones: dict
    zones_conservative: dict
    margin: float
    systems: tuple
    sigma_hs_rel: float
    sigma_dir: float
    hs: float
    hs_upper: float = float("nan")
    tp_factors: tuple = (1.0, 1.0)
    speed_cap: np.ndarray | None = None
    speed_cap_method: str = ""
    parametric_check: ParametricRollCheck = PERIOD_SCREENING_ONLY
    _zone_args: dict = field(repr=False, default_factory=dict)

    def within_cap(self) -> np.ndarray:
        """Cells not faster than the attainable speed of their heading, shape (H, S)."""
        if self.speed_cap is None:
            return np.ones(self.overall.shape, dtype=bool)
        return self.speeds[None, :] <= self.speed_cap[:, None] + 1e-9

    def cap_at(self, heading: float) -> float:
        """Attainable speed at a heading [m/s] (linear between heading cells; inf when unknown)."""
        if self.speed_cap is None:
            return math.inf
        h = self.headings
        ext = np.append(self.speed_cap, self.speed_cap[0])
        return float(np.interp(np.mod(heading, TWO_PI), np.append(h, TWO_PI), ext))

    @property
    def in_zone_conservative(self) -> np.ndarray:
        """True where a cell lies in any (conservative) Circ.1228 zone, shape (H, S)."""
        out = np.zeros(self.overall.shape, dtype=bool)
        for m in self.zones_conservative.values():
            out |= m
        return out

    def in_zone_grid(self, *, band_scale: float = 1.0, nominal: bool = False) -> np.ndarray:
        """True where a cell lies in any Circ.1228 zone with the resonance bands scaled, shape (H, S).

        The grid counterpart of :meth:`at` with ``band_scale`` / ``nominal_zones``: the zones of the
        conservative systems with the direction shifts (the ``zones_conservative`` masks when
        ``band_scale`` is 1), or with ``nominal`` those of the nominal estimate (the ``zones`` masks
        when ``band_scale`` is 1).

        Parameters
        ----------
        band_scale : float
            Factor on the resonance bands [-].
        nominal : bool
            Zones of the nominal estimate instead of the conservative ones.
        """
        out = np.zeros(self.overall.shape, dtype=bool)
        za = self._zone_args
        if not za:
            return out
        if band_scale == 1.0:
            for m in (self.zones if nominal else self.zones_conservative).values():
                out |= m
            return out
        masks = zone_masks(
            self.headings, self.speeds, za["systems_nominal"] if nominal else za["systems"], za["lpp"],
            za["t_roll"], za["settings"], hs_total=za["hs_total"] / (za["scale"] if nominal else 1.0),
            parametric_min_hs=za["parametric"], band_scale=band_scale,
        )
        for m in masks.values():
            out |= m
        if not nominal:
            n_shift = (za["shifts"].size - 1) // 2
            out = _running_max(out, n_shift, axis=0)
        return out

    def acceptable(self) -> np.ndarray:
        """Cells with conservative utilisation ≤ margin and outside every zone, shape (H, S)."""
        return (self.overall_conservative <= self.margin) & ~self.in_zone_conservative

    def at(self, heading: float, speed: float, *, band_scale: float = 1.0, nominal_zones: bool = False) -> CellValue:
        """Scores at any heading and speed: utilisation per limit interpolated bilinearly between
        the four surrounding cells (periodic in heading, speed clamped to the grid); zones
        evaluated exactly at that heading and speed.

        Parameters
        ----------
        heading : float
            True heading [rad].
        speed : float
            Speed through water [m/s].
        band_scale : float
            Factor on the resonance bands of the zones (> 1: has the cell left a zone by a clear
            distance; the advice's hysteresis) [-].
        nominal_zones : bool
            Zones of the nominal estimate (no upper Hs, no direction shift) instead of the
            conservative ones.
        """
        h = self.headings
        step = TWO_PI / h.size
        u = np.mod(heading, TWO_PI) / step
        i0 = int(math.floor(u)) % h.size
        fi = u - math.floor(u)
        i1 = (i0 + 1) % h.size
        sp = self.speeds
        v = float(np.clip(speed, sp[0], sp[-1]))
        j0 = int(np.clip(np.searchsorted(sp, v, side="right") - 1, 0, sp.size - 1))
        j1 = min(j0 + 1, sp.size - 1)
        fj = 0.0 if j1 == j0 else (v - sp[j0]) / (sp[j1] - sp[j0])

        def bil(a):
            return (
                (1 - fi) * (1 - fj) * a[:, i0, j0]
                + fi * (1 - fj) * a[:, i1, j0]
                + (1 - fi) * fj * a[:, i0, j1]
                + fi * fj * a[:, i1, j1]
            )

        uc = bil(self.utilisation_conservative)
        un = bil(self.utilisation)
        zones: tuple[str, ...] = ()
        za = self._zone_args
        if za:
            masks = zone_masks(
                float(heading) + (0.0 if nominal_zones else za["shifts"]),
                [float(speed)],
                za["systems_nominal"] if nominal_zones else za["systems"],
                za["lpp"],
                za["t_roll"],
                za["settings"],
                hs_total=za["hs_total"] / (za["scale"] if nominal_zones else 1.0),
                parametric_min_hs=za["parametric"],
                band_scale=band_scale,
            )
            zones = tuple(name for name in ZONE_NAMES if masks[name].any())
        k = int(np.argmax(uc))
        return CellValue(
            heading=float(np.mod(heading, TWO_PI)),
            speed=float(speed),
            utilisation=uc,
            utilisation_nominal=un,
            overall=float(uc.max()),
            overall_nominal=float(un.max()),
            limiting=k,
            zones=zones,
        )


def _statistics(model: PolarModel, m0: np.ndarray, m2: np.ndarray) -> np.ndarray:
    """Predicted statistic per limit from response moments (R, H, S) → (C, H, S)."""
    out = np.empty((len(model.limit_set.limits),) + m0.shape[1:])
    for c, lim in enumerate(model.limit_set.limits):
        r = model.limit_response[c]
        out[c] = criteria.predicted_statistic(lim, m0[r], m2[r], point=model.points[c], lpp=model.lpp)
    return out


def _running_max(a: np.ndarray, n: int, axis: int) -> np.ndarray:
    """Largest value over the 2n+1 cyclic neighbours along ``axis``."""
    out = a
    for s in range(1, n + 1):
        out = np.maximum(out, np.maximum(np.roll(a, s, axis=axis), np.roll(a, -s, axis=axis)))
    return out


def period_stretched(spectrum: DirectionalSpectrum, f: float) -> DirectionalSpectrum:
    """The spectrum with every period multiplied by ``f``: S'(ω, θ) = f·S(f·ω, θ) on the same grid.

    Keeps m0 (up to the grid ends) and moves the peak period to f·Tp. Used for the envelope over the
    peak-period interval.

    Parameters
    ----------
    spectrum : DirectionalSpectrum
    f : float
        Period factor (> 0) [-].

    Returns
    -------
    DirectionalSpectrum
    """
    if f == 1.0:
        return spectrum
    om = spectrum.omega
    x = f * om
    d = np.asarray(spectrum.density, dtype=float)
    i = np.clip(np.searchsorted(om, x) - 1, 0, om.size - 2)
    w = (x - om[i]) / (om[i + 1] - om[i])
    inside = ((x >= om[0]) & (x <= om[-1]))[:, None]
    val = (1.0 - w)[:, None] * d[i] + w[:, None] * d[i + 1]
    return DirectionalSpectrum(om, spectrum.theta, np.where(inside, f * val, 0.0))


def evaluate_polar(
    model: PolarModel,
    spectrum: DirectionalSpectrum,
    *,
    sigma_hs_rel: float = 0.0,
    sigma_dir: float = 0.0,
    systems=None,
    hs_upper: float | None = None,
    tp_factors: tuple[float, float] = (1.0, 1.0),
    hs_total: float | None = None,
    speed_cap=None,
    speed_cap_method: str = "",
) -> PolarResult:
    """Score every (heading, speed) cell of ``model`` in the sea ``spectrum``.

    Parameters
    ----------
    model : PolarModel
        Tables of the loading condition (:func:`build_polar_model`).
    spectrum : estimator.spectra.DirectionalSpectrum
        Estimated directional wave spectrum (true coming-from directions). Resampled onto the
        model's frequency grid (m0 kept) when its grid differs; any uniform θ grid is accepted.
    sigma_hs_rel : float, optional
        Relative standard uncertainty of Hs [-] (conservative Hs = Hs·(1 + k·σ_rel), k from the
        limit set).
    sigma_dir : float, optional
        Standard uncertainty of the wave direction [rad].
    systems : sequence of WaveSystem, optional
        Wave systems for the Circ.1228 zones; default the watershed partitions of ``spectrum``.
    hs_upper : float, optional
        Upper significant wave height of the estimate's interval [m]; when given it replaces
        Hs·(1 + k·σ_rel) (never below the nominal Hs).
    tp_factors : (float, float), optional
        Lower and upper peak period of the estimate's interval divided by its Tp [-]; the
        conservative values are the largest over the spectrum stretched to both ends and the
        nominal one.
    hs_total : float, optional
        Significant wave height of the whole sea for the §4.2.2 test [m]; default that of ``spectrum``.
    speed_cap : array_like, shape (H,), optional
        Attainable speed at every heading of the model [m/s].
    speed_cap_method : str, optional
        Method and source of ``speed_cap`` (shown with it).

    Returns
    -------
    PolarResult

    References
    ----------
    See the module references.
    """
    if not (sigma_hs_rel >= 0 and math.isfinite(sigma_hs_rel)):
        raise ValueError(f"sigma_hs_rel must be a finite number >= 0, got {sigma_hs_rel!r}")
    if not (sigma_dir >= 0 and math.isfinite(sigma_dir)):
        raise ValueError(f"sigma_dir must be a finite number >= 0 rad, got {sigma_dir!r}")
    if spectrum.omega.shape != model.omega.shape or not np.allclose(
        spectrum.omega, model.omega, rtol=0, atol=1e-12
    ):
        spectrum = resample_spectrum(spectrum, model.omega, spectrum.theta)
    weights = np.outer(spectrum.omega_weights, spectrum.theta_weights)
    f_lo, f_hi = (float(tp_factors[0]), float(tp_factors[1]))
    if not (0 < f_lo <= 1.0 <= f_hi < 10 and math.isfinite(f_hi)):
        raise ValueError(f"tp_factors must satisfy 0 < lower <= 1 <= upper < 10, got {tp_factors!r}")
    stretch = sorted({f_lo, f_hi} - {1.0})
    variants = [spectrum] + [period_stretched(spectrum, f) for f in stretch]
    if model.moment_matrix is not None:
        moments = _moments_many(model, variants, weights)
    else:
        moments = []
        for sp in variants:
            mm = polar_response_moments(
                model.gain2, model.omega_e, model.beta, sp.density, sp.theta, model.headings, weights, orders=(0, 2)
            )
            moments.append((mm[0], mm[1]))
    m = moments[0]
    m0, m2 = m[0], m[1]
    ls = model.limit_set
    limit_values = np.array([lim.value for lim in ls.limits])
    pred = _statistics(model, m0, m2)
    util = pred / limit_values[:, None, None]

    hs_nom = spectrum.hs()
    if hs_upper is not None:
        if not (math.isfinite(hs_upper) and hs_upper >= 0):
            raise ValueError(f"hs_upper must be a finite height >= 0 m, got {hs_upper!r}")
        factor = (max(hs_upper, hs_nom) / hs_nom) ** 2 if hs_nom > 0 else 1.0
    else:
        factor = (1.0 + ls.uncertainty.hs_k * sigma_hs_rel) ** 2
    pred_c = _statistics(model, m0 * factor, m2 * factor) if factor != 1.0 else pred
    for m0f, m2f in moments[1:]:
        pred_c = np.maximum(pred_c, _statistics(model, m0f * factor, m2f * factor))
    step = TWO_PI / model.headings.size
    n_shift = int(math.ceil(sigma_dir / step - 1e-9))
    pred_c = _running_max(pred_c, n_shift, axis=1)
    util_c = pred_c / limit_values[:, None, None]

    if systems is None:
        min_hs = min(ls.zones.min_system_hs, 0.04 * model.lpp)
        systems = wave_systems(spectrum, min_hs=min_hs)
    systems = tuple(systems)
    hs_total = hs_nom if hs_total is None else float(hs_total)
    parametric = model.parametric_check.min_system_hs
    zones = zone_masks(
        model.headings, model.speeds, systems, model.lpp, model.t_roll, ls.zones,
        hs_total=hs_total, parametric_min_hs=parametric,
    )
    scale = math.sqrt(factor)
    systems_up = tuple(
        WaveSystem(s.hs * scale, s.tp * f_hi, s.theta, s.label, min(s.tm01, s.tp * f_lo) if np.isfinite(s.tm01) else s.tp * f_lo)
        for s in systems
    )
    zones_up = zone_masks(
        model.headings, model.speeds, systems_up, model.lpp, model.t_roll, ls.zones,
        hs_total=hs_total * scale, parametric_min_hs=parametric,
    )
    zones_c = {k: _running_max(v, n_shift, axis=0) for k, v in zones_up.items()}
    shifts = np.arange(-n_shift, n_shift + 1) * step

    return PolarResult(
        headings=model.headings,
        speeds=model.speeds,
        keys=model.keys,
        labels=tuple(lim.label for lim in ls.limits),
        limit_values=limit_values,
        predicted=pred,
        predicted_conservative=pred_c,
        utilisation=util,
        utilisation_conservative=util_c,
        overall=util.max(axis=0),
        overall_conservative=util_c.max(axis=0),
        limiting=util.argmax(axis=0),
        limiting_conservative=util_c.argmax(axis=0),
        zones=zones,
        zones_conservative=zones_c,
        margin=ls.margin,
        systems=systems,
        sigma_hs_rel=float(sigma_hs_rel),
        sigma_dir=n_shift * step,
        hs=hs_nom,
        hs_upper=hs_nom * scale,
        tp_factors=(f_lo, f_hi),
        speed_cap=None if speed_cap is None else _readonly(np.broadcast_to(np.asarray(speed_cap, float), model.headings.shape)),
        speed_cap_method=speed_cap_method,
        parametric_check=model.parametric_check,
        _zone_args={
            "shifts": shifts,
            "systems": systems_up,
            "systems_nominal": systems,
            "scale": scale,
            "lpp": model.lpp,
            "t_roll": model.t_roll,
            "settings": ls.zones,
            "hs_total": hs_total * scale,
            "parametric": parametric,
        },
    )
