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
uses the upper significant wave height Hs·(1 + k·σ_rel) (moments scale with Hs²) and the worst
over the direction uncertainty ±σ_dir. Turning the spectrum by δ equals evaluating heading
ψ − δ, so the worst over [−σ_dir, +σ_dir] is a running maximum over neighbouring heading cells,
σ_dir rounded up to a whole heading step (exact on the grid, and never less conservative).
Nominal and conservative values are both kept. The Circ.1228 zones (:mod:`advisor.zones`) are
evaluated for every wave system of the spectrum (watershed partitions) at the nominal estimate,
and conservatively (upper Hs, directions over ±σ_dir).

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
from advisor.zones import ZONE_NAMES, WaveSystem, wave_systems, zone_masks
from estimator.constants import KNOT, G
from estimator.responses import polar_response_moments
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
    )


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
    _zone_args: dict = field(repr=False, default_factory=dict)

    @property
    def in_zone_conservative(self) -> np.ndarray:
        """True where a cell lies in any (conservative) Circ.1228 zone, shape (H, S)."""
        out = np.zeros(self.overall.shape, dtype=bool)
        for m in self.zones_conservative.values():
            out |= m
        return out

    def acceptable(self) -> np.ndarray:
        """Cells with conservative utilisation ≤ margin and outside every zone, shape (H, S)."""
        return (self.overall_conservative <= self.margin) & ~self.in_zone_conservative

    def at(self, heading: float, speed: float) -> CellValue:
        """Scores at any heading and speed: utilisation per limit interpolated bilinearly between
        the four surrounding cells (periodic in heading, speed clamped to the grid); zones
        evaluated exactly at that heading and speed.

        Parameters
        ----------
        heading : float
            True heading [rad].
        speed : float
            Speed through water [m/s].
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
                float(heading) + za["shifts"],
                [float(speed)],
                za["systems"],
                za["lpp"],
                za["t_roll"],
                za["settings"],
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


def evaluate_polar(
    model: PolarModel,
    spectrum: DirectionalSpectrum,
    *,
    sigma_hs_rel: float = 0.0,
    sigma_dir: float = 0.0,
    systems=None,
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
    m = polar_response_moments(
        model.gain2,
        model.omega_e,
        model.beta,
        spectrum.density,
        spectrum.theta,
        model.headings,
        weights,
        orders=(0, 2),
    )  # (2, R, H, S)
    m0, m2 = m[0], m[1]
    ls = model.limit_set
    limit_values = np.array([lim.value for lim in ls.limits])
    pred = _statistics(model, m0, m2)
    util = pred / limit_values[:, None, None]

    factor = (1.0 + ls.uncertainty.hs_k * sigma_hs_rel) ** 2
    pred_c = _statistics(model, m0 * factor, m2 * factor) if factor != 1.0 else pred
    step = TWO_PI / model.headings.size
    n_shift = int(math.ceil(sigma_dir / step - 1e-9))
    pred_c = _running_max(pred_c, n_shift, axis=1)
    util_c = pred_c / limit_values[:, None, None]

    if systems is None:
        min_hs = min(ls.zones.min_system_hs, 0.04 * model.lpp)
        systems = wave_systems(spectrum, min_hs=min_hs)
    systems = tuple(systems)
    zones = zone_masks(model.headings, model.speeds, systems, model.lpp, model.t_roll, ls.zones)
    scale = math.sqrt(factor)
    systems_up = tuple(WaveSystem(s.hs * scale, s.tp, s.theta, s.label) for s in systems)
    zones_up = zone_masks(model.headings, model.speeds, systems_up, model.lpp, model.t_roll, ls.zones)
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
        hs=spectrum.hs(),
        _zone_args={
            "shifts": shifts,
            "systems": systems_up,
            "lpp": model.lpp,
            "t_roll": model.t_roll,
            "settings": ls.zones,
        },
    )
