"""Stored response amplitude operators (RAOs) on a speed × heading × frequency grid.

An :class:`RAOTable` holds the six rigid-body complex transfer functions of one loading condition,
tabulated on a regular grid of ship speed, relative wave heading β (ITTC, π = head seas) and
absolute wave frequency ω, and interpolates them to any (ω, β, U).

Conventions (docs/conventions.md): ITTC body axes (x forward, y to port, z up, origin midship on the
centreline at the calm waterline); motions surge, sway, heave [m/m], roll (+ starboard down),
pitch (+ bow down), yaw (+ bow to port) [rad/m]; the complex amplitude ``H`` means
x(t) = Re[H·a·exp(i ω_e t)] for a wave elevation a·cos(ω_e t) at the origin (phase lead).

References
----------
.. [1] ITTC (2017). *ITTC Symbols and Terminology List*, version 2017, section "Seakeeping"
   (body axes, sign of the motions, relative wave heading with 180° = head seas).
.. [2] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, ch. 2 and 7 (linear transfer
   functions, port/starboard symmetry: the
   symmetric motions surge, heave, pitch are even in the heading about the centre plane and the
   antisymmetric motions sway, roll, yaw are odd).
.. [3] Newman, J. N. (1977). *Marine Hydrodynamics*, §6.17 (long-wave and short-wave
   limits of the motion transfer functions: the motions vanish for waves much shorter than the
   ship, which motivates the high-frequency taper used here).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from estimator.constants import DOFS

__all__ = [
    "RAOTable",
    "RAOTableError",
    "MAX_HEADING_GAP",
    "HIGH_FREQUENCY_TAPER",
    "MIRROR_SIGNS",
    "mirror_half_circle",
    "dof_indices",
]

TWO_PI = 2.0 * np.pi

MAX_HEADING_GAP = np.deg2rad(45.0)
"""Largest allowed gap between neighbouring tabulated headings, the wrap 360°→0° included [rad].

A project choice (common practice: seakeeping tables are usually given every 15° or 30°; beyond
45° linear interpolation in heading misses the beam-sea roll peak)."""

HIGH_FREQUENCY_TAPER = 0.25
"""Width of the linear amplitude taper above the highest tabulated frequency, as a fraction of
that frequency [-]. Above ω_max·(1 + HIGH_FREQUENCY_TAPER) the RAOs are zero (waves much shorter
than the ship excite no rigid-body motion [3]; a project choice for the width)."""

MIRROR_SIGNS = np.array([1.0, -1.0, 1.0, -1.0, 1.0, -1.0])
"""Sign of H_j(2π − β)/H_j(β) for a port/starboard symmetric ship, in DOFS order [2]:
surge, heave, pitch unchanged; sway, roll, yaw change sign."""

_ANGLE_TOL = 1e-9


class RAOTableError(ValueError):
    """An RAO table is malformed (shape, ordering, coverage or values)."""


def dof_indices(dofs) -> np.ndarray:
    """Indices into :data:`estimator.constants.DOFS` for a sequence of dof names or indices.

    Parameters
    ----------
    dofs : sequence of str or int, or None
        Names from ``DOFS`` (``"surge"`` … ``"yaw"``) or indices 0–5; None means all six.

    Returns
    -------
    numpy.ndarray of int
        The indices, in the order given.
    """
    if dofs is None:
        return np.arange(6)
    if isinstance(dofs, (str, int, np.integer)):
        dofs = [dofs]
    out = []
    for d in dofs:
        if isinstance(d, str):
            if d not in DOFS:
                raise RAOTableError(f"unknown dof {d!r}; allowed: {', '.join(DOFS)}")
            out.append(DOFS.index(d))
        else:
            i = int(d)
            if not 0 <= i < 6:
                raise RAOTableError(f"dof index {d!r} out of range; allowed 0..5 ({', '.join(DOFS)})")
            out.append(i)
    return np.asarray(out, dtype=int)


def _check_axis(name: str, values, *, unit: str, strictly_positive: bool = False) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if arr.ndim != 1 or arr.size == 0:
        raise RAOTableError(f"{name} must be a non-empty 1-D array, got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        bad = arr[~np.isfinite(arr)][0]
        raise RAOTableError(f"{name} contains a non-finite value ({bad}); all values must be finite")
    if np.any(np.diff(arr) <= 0.0):
        i = int(np.nonzero(np.diff(arr) <= 0.0)[0][0])
        raise RAOTableError(
            f"{name} must be strictly ascending; {name}[{i}] = {arr[i]} {unit} is followed by "
            f"{name}[{i + 1}] = {arr[i + 1]} {unit}"
        )
    if strictly_positive and arr[0] <= 0.0:
        raise RAOTableError(f"{name} must be > 0, got {arr[0]} {unit}")
    return arr


def heading_gaps(headings: np.ndarray) -> np.ndarray:
    """Gaps between consecutive headings on the circle, the wrap-around gap last [rad]."""
    h = np.asarray(headings, dtype=float)
    return np.diff(np.append(h, h[0] + TWO_PI))


def mirror_half_circle(headings, values) -> tuple[np.ndarray, np.ndarray]:
    """Complete a table given on 0 ≤ β ≤ π to the full circle by port/starboard symmetry.

    H_j(2π − β) = s_j·H_j(β) with s = (+1, −1, +1, −1, +1, −1) for (surge, sway, heave, roll,
    pitch, yaw) [2]. Headings 0 and π map onto themselves and are not duplicated (their values
    are kept as given).

    Parameters
    ----------
    headings : array_like, shape (NH,)
        Relative wave headings β in [0, π], strictly ascending [rad].
    values : array_like, complex, shape (6, NS, NH, NW)
        Complex RAOs on those headings [m/m, rad/m].

    Returns
    -------
    headings_full : numpy.ndarray, shape (NH2,)
        Ascending headings in [0, 2π) [rad].
    values_full : numpy.ndarray, complex, shape (6, NS, NH2, NW)
        Completed RAOs [m/m, rad/m].
    """
    h = _check_axis("headings", headings, unit="rad")
    v = np.asarray(values, dtype=complex)
    if v.ndim != 4 or v.shape[0] != 6 or v.shape[2] != h.size:
        raise RAOTableError(
            f"values must have shape (6, NS, {h.size}, NW) to mirror {h.size} headings, got {v.shape}"
        )
    if h[0] < -_ANGLE_TOL or h[-1] > np.pi + _ANGLE_TOL:
        raise RAOTableError(
            f"a half-circle table needs headings within 0..180 deg, got {np.rad2deg(h[0]):.6g}.."
            f"{np.rad2deg(h[-1]):.6g} deg"
        )
    h = np.clip(h, 0.0, np.pi)
    inner = (h > _ANGLE_TOL) & (h < np.pi - _ANGLE_TOL)
    h_m = TWO_PI - h[inner][::-1]
    v_m = v[:, :, inner][:, :, ::-1] * MIRROR_SIGNS[:, None, None, None]
    return np.concatenate([h, h_m]), np.concatenate([v, v_m], axis=2)


def _periodic_weights(beta: np.ndarray, headings: np.ndarray):
    """Bracketing indices and linear weight for periodic interpolation in heading."""
    b = np.mod(beta, TWO_PI)
    ext = np.append(headings, headings[0] + TWO_PI)
    # Headings may start above 0: shift b below the first heading up by one period.
    b = np.where(b < headings[0], b + TWO_PI, b)
    j = np.searchsorted(ext, b, side="right") - 1
    j = np.clip(j, 0, headings.size - 1)
    w = (b - ext[j]) / (ext[j + 1] - ext[j])
    j1 = np.where(j + 1 == headings.size, 0, j + 1)
    return j, j1, w


def _clamped_weights(x: np.ndarray, grid: np.ndarray):
    """Bracketing indices and weight for linear interpolation, clamped at the grid ends."""
    if grid.size == 1:
        z = np.zeros(np.shape(x), dtype=int)
        return z, z, np.zeros(np.shape(x))
    xc = np.clip(x, grid[0], grid[-1])
    i = np.clip(np.searchsorted(grid, xc, side="right") - 1, 0, grid.size - 2)
    w = (xc - grid[i]) / (grid[i + 1] - grid[i])
    return i, i + 1, w


def _frequency_weights(omega: np.ndarray, omegas: np.ndarray):
    """Indices, weight and high-frequency taper factor for interpolation in ω."""
    k0, k1, w = _clamped_weights(omega, omegas)
    w_max = omegas[-1]
    taper = np.clip(1.0 - (omega - w_max) / (HIGH_FREQUENCY_TAPER * w_max), 0.0, 1.0)
    return k0, k1, w, taper


def _amp_phase_blend(v0: np.ndarray, v1: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Blend two complex values: amplitude linearly, unit phasor linearly then renormalised.

    Where the blended phasor vanishes (opposite phases, or both values zero) the plain complex
    linear blend is returned.
    """
    a0 = np.abs(v0)
    a1 = np.abs(v1)
    with np.errstate(invalid="ignore", divide="ignore"):
        p0 = np.where(a0 > 0.0, v0 / np.where(a0 > 0.0, a0, 1.0), 0.0)
        p1 = np.where(a1 > 0.0, v1 / np.where(a1 > 0.0, a1, 1.0), 0.0)
    p = (1.0 - w) * p0 + w * p1
    ap = np.abs(p)
    amp = (1.0 - w) * a0 + w * a1
    linear = (1.0 - w) * v0 + w * v1
    ok = ap > 1e-6
    return np.where(ok, amp * p / np.where(ok, ap, 1.0), linear)


@dataclass(frozen=True, eq=False)
class RAOTable:
    """Complex RAOs of the six rigid-body motions on a speed × heading × frequency grid.

    Interpolation (:meth:`__call__`, :meth:`on_grid`):

    * speed: amplitude linearly and unit phasor linearly, renormalised (as in frequency, below),
      clamped to the tabulated range (a single speed means no speed dependence). Near the pitch and
      roll resonances the phase turns by 30-90° between tabulated speeds 6 kn apart (the resonance moves
      with the encounter frequency ω_e = ω − ω²U cos β/g); a plain complex blend of two values of equal
      amplitude a and phase difference Δ gives a·cos(Δ/2) (analytical), which on the independent benchmark
      hull (benchmarks/independent.py, a boundary-element solution) lost 15-18 % of the head-sea pitch
      response between table speeds and overestimated head-sea Hs by about 8 % (issue 12). Transfer
      functions are tabulated as amplitude and phase (Journée & Massie 2001, Offshore Hydromechanics,
      ch. 6; from memory); blending the two separately is a project choice, the rule already used in
      frequency;
    * heading: periodic linear on the complex value (this keeps the port/starboard antisymmetry
      of sway, roll and yaw exact, e.g. zero at β = 0 and π for a mirrored table);
    * frequency: the amplitude linearly and the unit phasor linearly, renormalised, so the
      amplitude stays right between two points with very different phase (a plain complex blend
      would dip towards zero there); where the two phasors cancel the complex blend is used;
    * below the lowest tabulated ω the first value is held; above the highest ω_max the amplitude
      tapers linearly to zero at ω_max·(1 + :data:`HIGH_FREQUENCY_TAPER`) (phase held), because
      rigid-body motions vanish for waves much shorter than the ship [3].

    Parameters
    ----------
    speeds : numpy.ndarray, shape (NS,)
        Ship speeds through water, strictly ascending, ≥ 0 [m/s].
    headings : numpy.ndarray, shape (NH,)
        Relative wave headings β (ITTC, π = head seas), strictly ascending in [0, 2π), covering
        the full circle with no gap above :data:`MAX_HEADING_GAP` (wrap included) [rad].
    omegas : numpy.ndarray, shape (NW,)
        Absolute wave frequencies, strictly ascending, > 0, at least two [rad/s].
    values : numpy.ndarray, complex, shape (6, NS, NH, NW)
        Complex RAOs in DOFS order (surge, sway, heave, roll, pitch, yaw), ITTC axes;
        translations [m/m], rotations [rad/m]; phase lead relative to the wave at the origin.
    name : str
        Free label (e.g. loading-condition name).
    source : str
        Where the table came from (file name, model name) for provenance.

    References
    ----------
    See the module references [1]_ [2]_ [3]_.
    """

    speeds: np.ndarray
    headings: np.ndarray
    omegas: np.ndarray
    values: np.ndarray
    name: str = ""
    source: str = ""

    def __post_init__(self) -> None:
        speeds = _check_axis("speeds", self.speeds, unit="m/s")
        if speeds[0] < 0.0:
            raise RAOTableError(f"speeds must be >= 0 m/s, got {speeds[0]} m/s")
        headings = _check_axis("headings", self.headings, unit="rad")
        if headings[0] < 0.0 or headings[-1] >= TWO_PI:
            raise RAOTableError(
                f"headings must lie in [0, 2*pi) rad, got {headings[0]:.6g}..{headings[-1]:.6g} rad "
                f"({np.rad2deg(headings[0]):.6g}..{np.rad2deg(headings[-1]):.6g} deg)"
            )
        gaps = heading_gaps(headings)
        if np.any(gaps > MAX_HEADING_GAP + _ANGLE_TOL):
            i = int(np.argmax(gaps))
            start = np.rad2deg(headings[i])
            end = np.rad2deg(headings[(i + 1) % headings.size]) + (360.0 if i == headings.size - 1 else 0.0)
            raise RAOTableError(
                f"headings do not cover the full circle: gap of {np.rad2deg(gaps[i]):.6g} deg between "
                f"{start:.6g} and {end:.6g} deg; the largest allowed gap is "
                f"{np.rad2deg(MAX_HEADING_GAP):.6g} deg (a table on 0..180 deg must be mirrored)"
            )
        omegas = _check_axis("omegas", self.omegas, unit="rad/s", strictly_positive=True)
        if omegas.size < 2:
            raise RAOTableError(f"omegas needs at least two frequencies, got {omegas.size}")
        values = np.asarray(self.values)
        if values.dtype.kind not in "biufc":
            raise RAOTableError(f"values must be a numeric (complex) array, got dtype {values.dtype}")
        values = values.astype(complex)
        expected = (6, speeds.size, headings.size, omegas.size)
        if values.shape != expected:
            raise RAOTableError(f"values must have shape (6, NS, NH, NW) = {expected}, got {values.shape}")
        if not np.all(np.isfinite(values)):
            idx = tuple(int(i) for i in np.argwhere(~np.isfinite(values))[0])
            raise RAOTableError(
                f"values contain a non-finite entry at dof {DOFS[idx[0]]}, speed {speeds[idx[1]]} m/s, "
                f"heading {np.rad2deg(headings[idx[2]]):.6g} deg, omega {omegas[idx[3]]} rad/s"
            )
        for name_, arr in (
            ("speeds", speeds),
            ("headings", headings),
            ("omegas", omegas),
            ("values", values),
        ):
            arr = arr.copy()
            arr.setflags(write=False)
            object.__setattr__(self, name_, arr)
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "source", str(self.source))

    # ------------------------------------------------------------------ constructors
    @classmethod
    def from_arrays(
        cls, speeds, headings, omegas, values, *, mirror: bool = False, name: str = "", source: str = ""
    ) -> RAOTable:
        """Build a table from dense arrays, optionally mirroring a 0..π table (see
        :func:`mirror_half_circle`).

        Parameters
        ----------
        speeds : array_like, shape (NS,)
            Ship speeds [m/s].
        headings : array_like, shape (NH,)
            Relative wave headings β [rad]; with ``mirror=True`` within [0, π].
        omegas : array_like, shape (NW,)
            Absolute wave frequencies [rad/s].
        values : array_like, complex, shape (6, NS, NH, NW)
            Complex RAOs [m/m, rad/m].
        mirror : bool
            Complete a half-circle table by port/starboard symmetry.
        name, source : str
            Metadata.
        """
        if mirror:
            headings, values = mirror_half_circle(headings, values)
        return cls(
            speeds=np.asarray(speeds, dtype=float),
            headings=np.asarray(headings, dtype=float),
            omegas=np.asarray(omegas, dtype=float),
            values=np.asarray(values, dtype=complex),
            name=name,
            source=source,
        )

    @classmethod
    def mirrored(cls, speeds, headings, omegas, values, *, name: str = "", source: str = "") -> RAOTable:
        """Build a full-circle table from one given on 0 ≤ β ≤ π (port/starboard symmetric ship)."""
        return cls.from_arrays(speeds, headings, omegas, values, mirror=True, name=name, source=source)

    @classmethod
    def from_long_arrays(
        cls,
        speed,
        heading,
        omega,
        dof,
        value,
        *,
        mirror: bool | None = None,
        name: str = "",
        source: str = "",
    ) -> RAOTable:
        """Build a table from "long" records, one per (speed, heading, ω, dof), as read from a file.

        Parameters
        ----------
        speed, heading, omega : array_like, shape (N,)
            Speed [m/s], heading β [rad], wave frequency [rad/s] of each record.
        dof : array_like, shape (N,)
            Dof name (``DOFS``) or index 0–5 of each record.
        value : array_like, complex, shape (N,)
            Complex RAO of each record [m/m, rad/m].
        mirror : bool or None
            Mirror a half-circle table; None = mirror when every heading lies within [0, π].
        name, source : str
            Metadata.

        Raises
        ------
        RAOTableError
            With ``.rows`` holding the offending record indices (0-based) for duplicates and the
            record indices of an incomplete block for missing grid points.
        """
        speeds, headings, omegas, values = long_to_dense(speed, heading, omega, dof, value)
        if mirror is None:
            mirror = bool(headings[-1] <= np.pi + _ANGLE_TOL)
        return cls.from_arrays(speeds, headings, omegas, values, mirror=mirror, name=name, source=source)

    # ------------------------------------------------------------------ properties
    @property
    def shape(self) -> tuple[int, int, int]:
        """(NS, NH, NW)."""
        return (self.speeds.size, self.headings.size, self.omegas.size)

    def is_symmetric(self, rtol: float = 1e-6, atol: float = 1e-9) -> bool:
        """True when the table satisfies the port/starboard mirror relation H_j(2π−β) = s_j·H_j(β)."""
        h = self.headings
        mirror_h = np.mod(TWO_PI - h, TWO_PI)
        idx = np.searchsorted(h, mirror_h - 1e-7)
        idx = np.clip(idx, 0, h.size - 1)
        if not np.allclose(h[idx], mirror_h, atol=1e-7):
            return False
        mirrored = self.values[:, :, idx, :] * MIRROR_SIGNS[:, None, None, None]
        return bool(np.allclose(mirrored, self.values, rtol=rtol, atol=atol))

    # ------------------------------------------------------------------ interpolation
    def __call__(self, omega, beta, speed, dofs=None) -> np.ndarray:
        """Interpolated complex RAOs at arbitrary (ω, β, U), vectorised.

        Parameters
        ----------
        omega : array_like
            Absolute wave frequency [rad/s].
        beta : array_like
            Relative wave heading (ITTC, π = head seas), any real value (taken modulo 2π) [rad].
        speed : array_like
            Ship speed through water [m/s]; clamped to the tabulated range.
        dofs : sequence of str or int, optional
            Which motions (names from ``DOFS`` or indices); default all six.

        Returns
        -------
        numpy.ndarray, complex, shape (ndof, *broadcast(omega, beta, speed).shape)
            Complex RAOs [m/m for translations, rad/m for rotations].
        """
        di = dof_indices(dofs)
        om, be, sp = np.broadcast_arrays(
            np.asarray(omega, dtype=float), np.asarray(beta, dtype=float), np.asarray(speed, dtype=float)
        )
        shape = om.shape
        om, be, sp = om.ravel(), be.ravel(), sp.ravel()
        i0, i1, ws = _clamped_weights(sp, self.speeds)
        j0, j1, wh = _periodic_weights(be, self.headings)
        k0, k1, wo, taper = _frequency_weights(om, self.omegas)
        v = self.values[di]

        def at(k):
            lo = (1 - wh) * v[:, i0, j0, k] + wh * v[:, i0, j1, k]
            hi = (1 - wh) * v[:, i1, j0, k] + wh * v[:, i1, j1, k]
            return _amp_phase_blend(lo, hi, ws)

        out = _amp_phase_blend(at(k0), at(k1), wo) * taper
        return out.reshape((di.size,) + shape)

    def on_grid(self, omega, beta, speeds, dofs=None) -> np.ndarray:
        """Interpolated RAOs on the outer product of speed, heading and frequency lists.

        Same interpolation as :meth:`__call__` but computed once for a whole grid (separable
        weights and one tensor contraction), for repeated evaluation over many headings and
        speeds.

        Parameters
        ----------
        omega : array_like, shape (NWq,)
            Absolute wave frequencies [rad/s].
        beta : array_like, shape (NBq,)
            Relative wave headings [rad] (e.g. a regular grid 0, 5°, …, 355°).
        speeds : array_like, shape (NSq,)
            Ship speeds [m/s].
        dofs : sequence of str or int, optional
            Which motions; default all six.

        Returns
        -------
        numpy.ndarray, complex, shape (ndof, NSq, NBq, NWq)
            Complex RAOs [m/m, rad/m].
        """
        di = dof_indices(dofs)
        om = np.atleast_1d(np.asarray(omega, dtype=float)).ravel()
        be = np.atleast_1d(np.asarray(beta, dtype=float)).ravel()
        sp = np.atleast_1d(np.asarray(speeds, dtype=float)).ravel()
        ns, nh, nw = self.shape
        i0, i1, ws = _clamped_weights(sp, self.speeds)
        wh_mat = np.zeros((be.size, nh))
        j0, j1, wh = _periodic_weights(be, self.headings)
        np.add.at(wh_mat, (np.arange(be.size), j0), 1.0 - wh)
        np.add.at(wh_mat, (np.arange(be.size), j1), wh)
        k0, k1, wo, taper = _frequency_weights(om, self.omegas)
        used = np.unique(np.concatenate([k0, k1]))
        sub = self.values[di][:, :, :, used]
        # (d, NS, NH, K) -> (d, NSq, NBq, K)
        tmp = np.tensordot(sub, wh_mat, axes=([2], [1]))  # (d, NS, K, NBq)
        # speed: amplitude and phase blended between the bracketing speeds (as in __call__)
        tmp = _amp_phase_blend(tmp[:, i0], tmp[:, i1], ws[None, :, None, None])  # (d, NSq, K, NBq)
        grid = np.transpose(tmp, (0, 1, 3, 2))  # (d, NSq, NBq, K)
        pos = np.searchsorted(used, k0), np.searchsorted(used, k1)
        out = _amp_phase_blend(grid[..., pos[0]], grid[..., pos[1]], wo) * taper
        return out


def long_to_dense(speed, heading, omega, dof, value):
    """Arrange long records (one per speed, heading, ω, dof) on the dense grid.

    Parameters
    ----------
    speed, heading, omega : array_like, shape (N,)
        Speed [m/s], heading [rad], frequency [rad/s] per record.
    dof : array_like, shape (N,)
        Dof names or indices per record.
    value : array_like, complex, shape (N,)
        Complex RAO per record.

    Returns
    -------
    speeds, headings, omegas : numpy.ndarray
        Sorted unique axis values.
    values : numpy.ndarray, complex, shape (6, NS, NH, NW)

    Raises
    ------
    RAOTableError
        Duplicate records or an incomplete grid; ``.rows`` lists the record indices concerned.
    """
    sp = np.asarray(speed, dtype=float).ravel()
    hd = np.asarray(heading, dtype=float).ravel()
    om = np.asarray(omega, dtype=float).ravel()
    val = np.asarray(value, dtype=complex).ravel()
    d = np.asarray(dof).ravel()
    n = sp.size
    if not (hd.size == om.size == val.size == d.size == n) or n == 0:
        raise RAOTableError(
            f"long arrays must be non-empty and of equal length, got {sp.size}, {hd.size}, {om.size}, "
            f"{d.size}, {val.size}"
        )
    di = np.array([dof_indices([x])[0] for x in d]) if d.dtype.kind in "USO" else dof_indices(d)

    def axis(x):
        key = np.round(x, 9)
        _, first, inv = np.unique(key, return_index=True, return_inverse=True)
        return x[first], inv

    speeds, si = axis(sp)
    headings, hi = axis(hd)
    omegas, wi = axis(om)
    flat = ((di * speeds.size + si) * headings.size + hi) * omegas.size + wi
    order = np.argsort(flat, kind="stable")
    sf = flat[order]
    dup = np.nonzero(np.diff(sf) == 0)[0]
    if dup.size:
        a, b = int(order[dup[0]]), int(order[dup[0] + 1])
        err = RAOTableError(
            f"duplicate record: rows {a} and {b} both give dof {DOFS[di[a]]}, speed {sp[a]} m/s, "
            f"heading {np.rad2deg(hd[a]):.6g} deg, omega {om[a]} rad/s"
        )
        err.rows = (a, b)
        raise err
    total = 6 * speeds.size * headings.size * omegas.size
    if n != total:
        present = np.zeros(total, dtype=bool)
        present[flat] = True
        missing = int(np.nonzero(~present)[0][0])
        w_m = missing % omegas.size
        h_m = (missing // omegas.size) % headings.size
        s_m = (missing // (omegas.size * headings.size)) % speeds.size
        d_m = missing // (omegas.size * headings.size * speeds.size)
        err = RAOTableError(
            f"incomplete grid: {total - n} of {total} records missing, e.g. dof {DOFS[d_m]} at speed "
            f"{speeds[s_m]} m/s, heading {np.rad2deg(headings[h_m]):.6g} deg, omega {omegas[w_m]} rad/s "
            f"(every dof, speed and heading needs the same set of frequencies)"
        )
        block = np.nonzero((di == d_m) & (si == s_m) & (hi == h_m))[0]
        err.rows = tuple(int(r) for r in block)
        err.missing = (DOFS[d_m], float(speeds[s_m]), float(headings[h_m]), float(omegas[w_m]))
        raise err
    values = np.empty(total, dtype=complex)
    values[flat] = val
    return speeds, headings, omegas, values.reshape(6, speeds.size, headings.size, omegas.size)
