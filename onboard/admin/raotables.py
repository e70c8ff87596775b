"""RAO tables for a ship that has none, and checking a table: the ``hwadvice rao`` command.

``hwadvice rao estimate``  writes the RAO CSV (docs/rao-csv.md) of a loading condition from the main
                           particulars, with the closed-form methods of :mod:`estimator.hull` (JMO 2004
                           heave/pitch, 1-DOF roll with the IS Code period, Froude-Krylov surge/sway/yaw).
``hwadvice rao mesh``      computes it from a hull mesh with the boundary-element code capytaine (an
                           optional dependency: ``pip install '.[raos]'``).
``hwadvice rao check``     runs the plausibility checks of :mod:`estimator.raocheck` on a table.

Every table is checked (:func:`estimator.raocheck.check_rao_table`) before it is written; a table that
fails is not written and the command says why in one line.

Mesh method and its limits (``rao mesh``)
-----------------------------------------
* The mesh is read with ``capytaine.load_mesh`` (WAMIT ``.gdf``, Nemoh ``.dat``/``.mar``, HydroStar
  ``.hst``, ``.pnl``; STL, OBJ, gmsh and others when meshio or trimesh are installed), in metres, in the
  ITTC body axes of the vessel file: origin midship on the centreline at the calm waterline of this
  loading condition, x forward, y to port, z up. Only the part below z = 0 is used.
* Linear potential flow, deep water, zero-speed radiation and diffraction (Faltinsen 1990 ch. 3;
  the capytaine solver). Mass = ρ·(mesh volume); centre of gravity above the centre of buoyancy so that
  the mesh's own BM gives the condition's GM; roll inertia such that the undamped roll period equals the
  condition's ``roll_period_s`` (I44 = C44/ω_n² − A44(ω_n)); pitch and yaw radii of gyration 0.25 and
  0.26 Lpp (common practice); viscous roll damping as the condition's ``roll_damping_ratio`` (default
  0.05) of critical at the roll resonance.
* **Forward speed** enters only through the encounter frequency: the equations of motion are solved at
  the signed ω_e = ω − ω²U cos β / g with the zero-speed added mass and damping at |ω_e| and the
  zero-speed wave excitation of the wave frequency ω (the "encounter-frequency" approximation). Missing:
  the forward-speed terms of radiation and diffraction (U-dependent cross-coupling, the steady flow),
  and the speed dependence of roll damping (lift), which is conservative. capytaine's own
  ``forward_speed`` option is not used, because where the ship overtakes the waves it flips the wave
  direction but keeps the unflipped incident velocity (measured here with capytaine 3.0.0 on a ship hull
  at 6-18 kn: the excitation on the two sides of ω_e = 0 differed by 6-70 %); the approximation here is
  continuous through ω_e = 0. Treat tables above Froude number ≈ 0.3 with caution; compare with model tests or a forward-speed code when they exist.

Run time grows with (panels)² × (frequencies × (6 + headings)); a progress bar shows it.

References
----------
.. [1] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, ch. 2 (linear waves),
   ch. 3 (wave excitation, added mass, damping, equations of motion) and ch. 5 (ships at forward speed,
   encounter frequency); chapter numbers from memory.
.. [2] Babarit, A. and Delhommeau, G. (2015). Theoretical and numerical aspects of the open source BEM
   solver NEMOH. Proc. 11th European Wave and Tidal Energy Conference (the solver capytaine derives
   from; from memory).
.. [3] IMO (2008). International Code on Intact Stability, MSC.267(85), Part A 2.3 (roll period).
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from estimator.constants import RHO_SEAWATER, G
from estimator.hull import DEFAULT_ZETA_ROLL
from estimator.rao import RAOTable
from onboard.errors import CommandError
from onboard.formats.raofile import RaoFileError, check_table, read_rao_csv, write_rao_csv
from onboard.formats.units import kn_to_ms
from onboard.formats.vessel import VesselFileError, estimate_condition_raos, load_vessel

__all__ = ["add_commands", "parse_grid", "rao_from_mesh", "rao_from_particulars"]

DEFAULT_SPEEDS_KN = "0:20:4"
DEFAULT_HEADINGS_DEG = "0:180:15"
DEFAULT_OMEGAS = "0.2:2.0:0.05"
DOF_NAMES = ("Surge", "Sway", "Heave", "Roll", "Pitch", "Yaw")


def parse_grid(text: str, option: str, unit: str, *, lo: float, hi: float, positive=False) -> np.ndarray:
    """``"a,b,c"`` or ``"start:stop:step"`` (stop included) → ascending array; CommandError otherwise."""
    allowed = f"comma-separated numbers or start:stop:step in [{lo:g}, {hi:g}] {unit}"
    try:
        if ":" in text:
            a, b, step = (float(x) for x in text.split(":"))
            if not step > 0 or b < a or (b - a) / step > 10_000:
                raise ValueError
            values = np.round(np.arange(a, b + 0.5 * step, step), 10)
        else:
            values = np.array([float(x) for x in text.split(",") if x.strip()])
    except ValueError:
        raise CommandError(f"{option} {text!r}: not a list or range; allowed: {allowed}") from None
    if values.size == 0 or not np.all(np.isfinite(values)) or np.any(np.diff(values) <= 0):
        raise CommandError(f"{option} {text!r}: empty or not ascending; allowed: {allowed}")
    if values[0] < lo or values[-1] > hi or (positive and values[0] <= 0):
        raise CommandError(f"{option} {text!r}: outside the range; allowed: {allowed}")
    return values


def _progress(total: int, desc: str, enabled: bool | None):
    from tqdm import tqdm

    return tqdm(total=total, desc=desc, unit="step", disable=None if enabled is None else not enabled)


# ------------------------------------------------------------------------------------- (a) particulars


def rao_from_particulars(vessel, condition, speeds, headings, omegas, *, progress=None) -> RAOTable:
    """RAO table of a loading condition from main particulars (:func:`estimator.hull.estimate_rao_table`).

    Parameters
    ----------
    vessel : onboard.formats.vessel.Vessel
    condition : LoadingCondition
        Needs ``block_coefficient`` in the vessel file.
    speeds, headings, omegas : array_like
        [m/s], relative headings β 0..π or the full circle [rad], wave frequencies [rad/s].
    progress : bool or None
        Progress bar (None = only on a terminal).
    """
    tables = []
    with _progress(len(speeds), "RAOs from particulars", progress) as bar:
        for s in speeds:
            tables.append(estimate_condition_raos(vessel, condition, [s], headings, omegas))
            bar.update(1)
    t0 = tables[0]
    values = np.concatenate([t.values for t in tables], axis=1)
    return RAOTable(
        np.asarray(speeds, float), t0.headings, t0.omegas, values, name=condition.name, source=t0.source
    )


# ------------------------------------------------------------------------------------------- (b) mesh


def _capytaine():
    os.environ.setdefault("CAPYTAINE_PROGRESS_BAR", "False")
    try:
        import capytaine as cpt
    except ImportError:
        raise CommandError(
            "the mesh method needs capytaine, an optional dependency; allowed: pip install '.[raos]' "
            "(or use 'hwadvice rao estimate' from the main particulars)"
        ) from None
    cpt.set_logging("ERROR")
    return cpt


def rao_from_mesh(mesh_path, vessel, condition, speeds, headings, omegas, *, progress=None) -> RAOTable:
    """RAO table of a loading condition from a hull mesh with capytaine (module docstring: method, limits).

    Parameters
    ----------
    mesh_path : path
        Hull mesh in the ITTC body axes of the condition [m].
    vessel : onboard.formats.vessel.Vessel
    condition : LoadingCondition
        GM, roll period and (optional) roll damping ratio are used.
    speeds, headings, omegas : array_like
        [m/s], β in 0..π (mirrored by port/starboard symmetry) or the full circle [rad], ω [rad/s].
    progress : bool or None
        Progress bar (None = only on a terminal).

    Raises
    ------
    CommandError
        Unreadable mesh, no immersed volume, inverted normals, roll period impossible for this hull.
    """
    cpt = _capytaine()
    from capytaine.bem.airy_waves import froude_krylov_force

    path = Path(mesh_path)
    try:
        mesh = cpt.load_mesh(path)
    except Exception as exc:  # capytaine raises many kinds for a bad file
        raise CommandError(
            f"{path}: cannot read the mesh ({type(exc).__name__}: {exc}); allowed: a mesh "
            f"file capytaine reads (.gdf, .dat, .mar, .hst, .pnl, ...)"
        ) from None
    try:
        mesh = mesh.immersed_part()
        probe = cpt.FloatingBody(mesh=mesh, center_of_mass=(0.0, 0.0, 0.0))
        volume = float(probe.disp_volume)
    except Exception as exc:
        raise CommandError(f"{path}: mesh unusable ({type(exc).__name__}: {exc})") from None
    if not volume > 0:
        raise CommandError(
            f"{path}: displaced volume {volume:.6g} m3; allowed: a hull below z = 0 with normals pointing "
            "into the water (a negative volume means inverted normals)"
        )
    xb, _, zb = (float(c) for c in probe.center_of_buoyancy)
    zg = zb + float(probe.transversal_metacentric_radius) - condition.gm
    cog = (xb, 0.0, zg)
    mass = RHO_SEAWATER * volume
    body = cpt.FloatingBody(
        mesh=mesh, dofs=cpt.rigid_body_dofs(rotation_center=cog), center_of_mass=cog, mass=mass
    )
    c = np.asarray(body.compute_hydrostatic_stiffness(rho=RHO_SEAWATER, g=G).values, float)

    speeds = np.asarray(speeds, float)
    headings = np.asarray(headings, float)
    omegas = np.asarray(omegas, float)
    b, w = headings[None, :, None], omegas[None, None, :]
    omega_e = w - w**2 * speeds[:, None, None] * np.cos(b) / G  # signed (docs/conventions.md)
    w_n = 2.0 * np.pi / condition.roll_period
    lo = max(0.05, 0.5 * float(np.abs(omega_e).min()))
    hi = max(float(np.abs(omega_e).max()), float(omegas.max()), w_n)
    rad_omegas = np.unique(np.round(np.concatenate([np.geomspace(lo, hi, 24), omegas, [w_n]]), 8))

    common = dict(body=body, rho=RHO_SEAWATER, g=G, water_depth=np.inf)
    radiation = [
        cpt.RadiationProblem(omega=o, radiating_dof=d, **common) for o in rad_omegas for d in DOF_NAMES
    ]
    diffraction = [
        cpt.DiffractionProblem(omega=o, wave_direction=h, **common) for o in omegas for h in headings
    ]
    solver = cpt.BEMSolver()
    problems = radiation + diffraction
    results = []
    with _progress(len(problems), "BEM problems", progress) as bar:
        for i in range(0, len(problems), 12):
            chunk = problems[i : i + 12]
            results.extend(solver.solve_all(chunk, progress_bar=False, _check_wavelength=False))
            bar.update(len(chunk))
    nr = len(radiation)
    a = np.zeros((rad_omegas.size, 6, 6))
    bb = np.zeros((rad_omegas.size, 6, 6))
    for r in results[:nr]:
        k = int(np.searchsorted(rad_omegas, r.omega))
        j = DOF_NAMES.index(r.radiating_dof)
        for i, d in enumerate(DOF_NAMES):
            a[k, i, j] = r.added_masses[d]
            bb[k, i, j] = r.radiation_dampings[d]
    f = np.zeros((headings.size, omegas.size, 6), complex)
    for r in results[nr:]:
        fk = froude_krylov_force(r.problem)
        ih = int(np.argmin(np.abs(headings - r.wave_direction)))
        iw = int(np.argmin(np.abs(omegas - r.omega)))
        f[ih, iw] = [np.conj(r.forces[d] + fk[d]) for d in DOF_NAMES]  # exp(-iwt) -> our exp(+iwt)

    def interp(arr, x):  # (NR, 6, 6) at |x|, clamped; damping → 0 below the grid
        xa = np.abs(x)
        out = np.empty(np.shape(x) + (6, 6))
        for i in range(6):
            for j in range(6):
                out[..., i, j] = np.interp(xa, rad_omegas, arr[:, i, j])
        return out

    a_n = interp(a, np.array(w_n))
    c44 = c[3, 3]
    i44 = c44 / w_n**2 - a_n[3, 3]
    if not i44 > 0:
        raise CommandError(
            f"{vessel.source}: condition {condition.name!r}: roll_period_s = {condition.roll_period:g} "
            f"is too short for this hull and GM (added roll inertia alone gives a longer period); allowed: a "
            f"longer roll period, or check gm_m and the mesh"
        )
    m = np.diag([mass, mass, mass, i44, mass * (0.25 * vessel.lpp) ** 2, mass * (0.26 * vessel.lpp) ** 2])
    zeta = condition.zeta_roll if condition.zeta_roll is not None else DEFAULT_ZETA_ROLL
    b44_visc = 2.0 * zeta * np.sqrt(c44 * (i44 + a_n[3, 3]))

    ns, nh, nw = omega_e.shape
    am = interp(a, omega_e)
    bm = interp(bb, omega_e) * np.clip(np.abs(omega_e) / rad_omegas[0], 0.0, 1.0)[..., None, None]
    bm[..., 3, 3] += b44_visc
    we = omega_e[..., None, None]
    z = -(we**2) * (m + am) + 1j * we * bm + c
    rhs = np.broadcast_to(f[None], (ns, nh, nw, 6))
    x = np.moveaxis(np.linalg.solve(z, rhs[..., None])[..., 0], -1, 0)
    # rotations about G; translations moved to the origin: s_o = s_G + theta x (r_o - r_G)
    x[0] = x[0] - zg * x[4]
    x[1] = x[1] + zg * x[3] - xb * x[5]
    x[2] = x[2] + xb * x[4]
    source = (
        f"onboard.admin.raotables: capytaine zero-speed BEM, encounter-frequency speed mapping; mesh "
        f"{path.name}, {mesh.nb_faces} panels, V={volume:.1f} m3, GM={condition.gm:g} m, "
        f"T_roll={condition.roll_period:g} s, zeta={zeta:g}"
    )
    mirror = bool(headings[0] >= 0.0 and headings[-1] <= np.pi + 1e-9)
    return RAOTable.from_arrays(
        speeds, headings, omegas, x, mirror=mirror, name=condition.name, source=source
    )


# ------------------------------------------------------------------------------------------- commands


def _grids(args):
    speeds_kn = parse_grid(args.speeds_kn, "--speeds-kn", "kn", lo=0.0, hi=50.0)
    headings_deg = parse_grid(args.headings_deg, "--headings-deg", "deg", lo=0.0, hi=359.999)
    omegas = parse_grid(args.omegas, "--omegas", "rad/s", lo=0.01, hi=10.0, positive=True)
    return kn_to_ms(speeds_kn), np.radians(headings_deg), omegas


def _vessel_condition(args):
    try:
        vessel = load_vessel(args.vessel)
        return vessel, vessel.condition(args.condition)
    except VesselFileError as exc:
        raise CommandError(str(exc)) from None


def _check_and_write(table: RAOTable, vessel, condition, out: Path) -> int:
    if out.exists() and not out.is_file():
        raise CommandError(f"{out}: not a file; allowed: a path for the new RAO CSV")
    try:
        report = check_table(table, f"{out} (not written)", lpp=vessel.lpp, t_roll=condition.roll_period)
    except RaoFileError as exc:
        raise CommandError(str(exc)) from None
    try:
        write_rao_csv(table, out, half_circle=table.is_symmetric())
    except OSError as exc:
        raise CommandError(f"{out}: cannot write ({exc.strerror or exc})") from None
    print(
        f"{out}: {table.speeds.size} speeds x {table.headings.size} headings x {table.omegas.size} "
        f"frequencies written; checks passed ({len(report.warnings)} warning(s)). Set rao_table in the "
        f"vessel file to use it. Advisory only: the master decides."
    )
    return 0


def _estimate(args) -> int:
    vessel, condition = _vessel_condition(args)
    speeds, headings, omegas = _grids(args)
    try:
        table = rao_from_particulars(vessel, condition, speeds, headings, omegas, progress=args.progress)
    except (VesselFileError, ValueError) as exc:
        raise CommandError(str(exc)) from None
    return _check_and_write(table, vessel, condition, Path(args.out))


def _mesh(args) -> int:
    vessel, condition = _vessel_condition(args)
    speeds, headings, omegas = _grids(args)
    table = rao_from_mesh(args.mesh, vessel, condition, speeds, headings, omegas, progress=args.progress)
    return _check_and_write(table, vessel, condition, Path(args.out))


def _check(args) -> int:
    try:
        table = read_rao_csv(args.table)
        report = check_table(table, args.table, lpp=args.lpp_m, t_roll=args.roll_period_s)
    except RaoFileError as exc:
        raise CommandError(str(exc)) from None
    for s in report.skipped:
        print(f"{args.table}: not checked: {s}")
    print(f"{args.table}: checks passed ({len(report.warnings)} warning(s))")
    return 0


def add_commands(subparsers) -> None:
    """Add ``rao estimate``, ``rao mesh`` and ``rao check`` to the ``hwadvice`` command line."""
    rao = subparsers.add_parser(
        "rao",
        help="RAO tables: make one for a ship without, or check one",
        description="Write the RAO table (CSV, docs/rao-csv.md) of a loading condition, or check "
        "one. Tables are checked before they are written. Advisory only: the master decides.",
    )
    sub = rao.add_subparsers(dest="rao_command", metavar="ACTION")
    sub.required = True

    def grid_options(p):
        p.add_argument("--vessel", required=True, help="vessel TOML (docs/vessel.md)")
        p.add_argument("--condition", required=True, help="loading condition name in the vessel file")
        p.add_argument("--out", required=True, help="RAO CSV to write")
        p.add_argument("--speeds-kn", default=DEFAULT_SPEEDS_KN, help="a,b,c or start:stop:step [kn]")
        p.add_argument(
            "--headings-deg",
            default=DEFAULT_HEADINGS_DEG,
            help="relative headings (180 = head seas); 0..180 is mirrored [deg]",
        )
        p.add_argument("--omegas", default=DEFAULT_OMEGAS, help="wave frequencies [rad/s]")
        p.add_argument("--progress", action="store_true", default=None, help="always show the progress bar")
        p.add_argument("--no-progress", dest="progress", action="store_false", help="never show it")

    p = sub.add_parser("estimate", help="from main particulars (closed-form estimates)")
    grid_options(p)
    p.set_defaults(func=_estimate)
    p = sub.add_parser(
        "mesh",
        help="from a hull mesh with capytaine (optional dependency)",
        description="Zero-speed boundary-element solution; forward speed through the encounter "
        "frequency only (see the module onboard.admin.raotables for the limits).",
    )
    p.add_argument("mesh", help="hull mesh, ITTC body axes of the condition, metres")
    grid_options(p)
    p.set_defaults(func=_mesh)
    p = sub.add_parser("check", help="plausibility checks of an RAO table")
    p.add_argument("table")
    p.add_argument("--lpp-m", type=float, default=None, help="ship length for the long-wave checks [m]")
    p.add_argument("--roll-period-s", type=float, default=None, help="natural roll period [s]")
    p.set_defaults(func=_check)
