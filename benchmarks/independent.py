"""An independent truth for the sea-state benchmark: a box hull solved by a boundary-element code.

The estimator's own benchmark (``bench_estimator.py``) simulates the ship with perturbed copies of the
same closed-form RAO table the estimator inverts. This module gives a path that shares nothing with the
estimator's RAO model or forward kernel:

* hydrodynamic coefficients of a box hull (170 m × 27.5 m × 9.5 m draft) from capytaine 3.0 (linear
  potential flow, zero speed): added mass A(ω), radiation damping B(ω), excitation F(ω, β) on a fine
  grid (ω every 0.05 rad/s, β every 7.5°); computed once and cached in ``data/box170_bem.npz``
  (``python benchmarks/independent.py --build``);
* equations of motion solved at the *exact signed encounter frequency* of every wave component at the
  actual speed through water (the "encounter-frequency approach": zero-speed coefficients taken at
  |ω_e|, excitation at the absolute wave number; Salvesen, Tuck & Faltinsen 1970 drop the speed terms
  the same way for the excitation), coupled six degrees of freedom about the centre of gravity, plus a
  linear(ised) viscous roll damping giving a stated damping ratio (Himeno 1981: viscous roll damping
  dominates the radiation part for ship-like hulls);
* soft springs on surge, sway and yaw (natural period 200 s, autopilot and mooring-free drift: a project
  choice that only removes the 1/ω_e² singularity of the unrestrained modes at ω_e = 0);
* the "stored" table given to the estimator is the nominal model sampled on the coarse grid hydrodynamic
  codes usually deliver (ω 0.20-1.60 rad/s every 0.05 rad/s, β every 15°, speeds 0/6/12/18 kn);
  the "true" ship differs from it by realistic RAO errors (roll damping ×0.7 or ×1.3, GM ±8 % i.e. roll
  period about ∓4 %, smooth amplitude errors ±10-15 % and phase errors up to ±10° per motion).

capytaine's conventions (exp(−iωt), wave_direction the travel direction with the same numbers as the
ITTC relative heading β, rotations about the centre of gravity) are converted to the project's
(exp(+iω_e t) phase lead, translations at the waterline origin) here.

All data are invented for the benchmark; the box is no real ship.

References
----------
.. [1] Ancellin, M., Dias, F. (2019). Capytaine: a Python-based linear potential flow solver. Journal of
   Open Source Software 4(36), 1341.
.. [2] Salvesen, N., Tuck, E.O., Faltinsen, O. (1970). Ship motions and sea loads. Trans. SNAME 78.
.. [3] Himeno, Y. (1981). Prediction of ship roll damping - state of the art. Univ. of Michigan, Dept.
   of Naval Architecture report 239.
.. [4] IMO (2008). International Code on Intact Stability (2008 IS Code), Part A, 2.3.4 (roll period).
"""

from __future__ import annotations

import argparse
import os
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from estimator.constants import RHO_SEAWATER, G  # noqa: E402
from estimator.rao import RAOTable  # noqa: E402

CACHE = Path(__file__).resolve().parent / "data" / "box170_bem.npz"

# Invented box hull (the configuration: 170 m, beam 27.5 m, roll period 14-20 s).
L, B, T = 170.0, 27.5, 9.5
GM = 1.80  # [m] nominal metacentric height (gives a roll period in the 14-20 s band)
KXX, KYY, KZZ = 0.38 * B, 0.25 * L, 0.26 * L  # radii of gyration (common practice for cargo ships)
SENSOR = (-14.0, 2.5, 12.0)  # 14 m aft of midship, 2.5 m to port, 12 m above the waterline
ZETA_VISC = 0.05  # nominal viscous roll damping ratio (project choice within Himeno's range)
T_SOFT = 200.0  # natural period of the soft surge/sway/yaw springs [s] (project choice)
BEM_OMEGAS = np.round(np.arange(0.10, 2.0001, 0.05), 10)
BEM_BETAS_DEG = np.arange(0.0, 180.01, 7.5)

# Coarse stored table, as hydrodynamic codes usually deliver it (issue 12).
TABLE_OMEGAS = np.round(np.arange(0.20, 1.6001, 0.05), 10)
TABLE_BETAS_DEG = np.arange(0.0, 360.0, 15.0)
TABLE_SPEEDS_KN = np.array([0.0, 6.0, 12.0, 18.0])
KNOT = 1852.0 / 3600.0


def build_cache(path: Path = CACHE) -> None:
    """Solve the box with capytaine and store coefficients in our convention (about the CoG)."""
    os.environ.setdefault("CAPYTAINE_PROGRESS_BAR", "False")
    import capytaine as cpt
    import xarray as xr

    cpt.set_logging("ERROR")
    mesh = cpt.mesh_parallelepiped(size=(L, B, T), center=(0, 0, -T / 2), faces_max_radius=3.0,
                                   missing_sides={"top"})
    probe = cpt.FloatingBody(mesh=mesh, center_of_mass=(0, 0, 0))
    volume = float(probe.disp_volume)
    z_g = float(probe.center_of_buoyancy[2] + probe.transversal_metacentric_radius - GM)
    cog, mass = (0.0, 0.0, z_g), RHO_SEAWATER * volume
    body = cpt.FloatingBody(mesh=mesh, dofs=cpt.rigid_body_dofs(rotation_center=cog), center_of_mass=cog,
                            mass=mass)
    dofs = list(body.dofs)
    lab = dict(dims=["influenced_dof", "radiating_dof"],
               coords={"influenced_dof": dofs, "radiating_dof": dofs})
    inertia = np.diag([mass, mass, mass, mass * KXX**2, mass * KYY**2, mass * KZZ**2])
    body.inertia_matrix = xr.DataArray(inertia, **lab)
    body.hydrostatic_stiffness = body.compute_hydrostatic_stiffness(rho=RHO_SEAWATER, g=G)
    tm = xr.Dataset(coords={"omega": BEM_OMEGAS, "wave_direction": np.radians(BEM_BETAS_DEG),
                            "radiating_dof": dofs, "water_depth": [np.inf], "rho": [RHO_SEAWATER], "g": [G]})
    ds = cpt.BEMSolver().fill_dataset(tm, body)
    a = ds["added_mass"].transpose("omega", "influenced_dof", "radiating_dof").values.real
    b = ds["radiation_damping"].transpose("omega", "influenced_dof", "radiating_dof").values.real
    f = np.conj(ds["excitation_force"].transpose("omega", "wave_direction", "influenced_dof").values)
    c = np.asarray(ds["hydrostatic_stiffness"].transpose("influenced_dof", "radiating_dof").values, float)
    path.parent.mkdir(parents=True, exist_ok=True)
    np.savez_compressed(path, omega=BEM_OMEGAS, beta_deg=BEM_BETAS_DEG, added_mass=a, damping=b,
                        excitation=f.astype(np.complex64), stiffness=c, mass=mass, inertia=inertia, z_g=z_g,
                        volume=volume)


@dataclass
class BoxShip:
    """Six-DOF motions of the box hull at any (ω, β, U), from the cached BEM coefficients.

    Parameters
    ----------
    gm_factor : float
        Multiplies the roll restoring (GM) [-].
    zeta_factor : float
        Multiplies the viscous roll damping [-].
    amp_errors, phase_errors : sequence of callables or None
        Per motion, a smooth amplitude factor a(ω) [-] and phase shift p(ω) [rad] (RAO errors).
    """

    gm_factor: float = 1.0
    zeta_factor: float = 1.0
    amp_errors: tuple | None = None
    phase_errors: tuple | None = None

    def __post_init__(self) -> None:
        d = np.load(CACHE)
        self.w = d["omega"]
        self.b_deg = d["beta_deg"]
        self.a = d["added_mass"]
        self.bd = d["damping"]
        self.f = d["excitation"].astype(complex)
        self.c = d["stiffness"].copy()
        self.m = d["inertia"]
        self.z_g = float(d["z_g"])
        mass = float(d["mass"])
        self.c[3, 3] *= self.gm_factor
        w_soft = 2 * np.pi / T_SOFT
        for i in (0, 1):
            self.c[i, i] += (mass + self.a[0, i, i]) * w_soft**2
        self.c[5, 5] += (self.m[5, 5] + self.a[0, 5, 5]) * w_soft**2
        # coupled roll natural frequency (sway free) and the viscous damping for the stated ratio
        i44 = self.m[3, 3] + self.a[:, 3, 3] - self.a[:, 1, 3] ** 2 / (mass + self.a[:, 1, 1])
        w0 = 0.4
        for _ in range(100):
            w0 = float(np.sqrt(self.c[3, 3] / np.interp(w0, self.w, i44)))
        self.omega_roll = w0
        self.b44_visc = 2 * ZETA_VISC * self.zeta_factor * np.sqrt(self.c[3, 3] * np.interp(w0, self.w, i44))

    @property
    def t_roll(self) -> float:
        """Coupled natural roll period [s]."""
        return 2 * np.pi / self.omega_roll

    def _coef(self, arr, we):
        """Interpolate A or B (ω, 6, 6) to |ω_e|; B → 0 linearly below the first frequency."""
        x = np.abs(we)
        out = np.empty(x.shape + (6, 6))
        for i in range(6):
            for j in range(6):
                out[..., i, j] = np.interp(x, self.w, arr[:, i, j])
        return out

    def __call__(self, omega, beta, speed) -> np.ndarray:
        """Complex RAOs (6, N) at the waterline origin, project convention (phase lead, signed ω_e)."""
        om, be, sp = np.broadcast_arrays(np.asarray(omega, float), np.asarray(beta, float),
                                         np.asarray(speed, float))
        shape = om.shape
        om, be, sp = om.ravel(), np.mod(be.ravel(), 2 * np.pi), sp.ravel()
        we = om - om**2 * sp * np.cos(be) / G
        # excitation at the absolute wave: mirror to 0..π (sway, roll, yaw odd), bilinear in (ω, β)
        mirrored = be > np.pi
        bh = np.degrees(np.where(mirrored, 2 * np.pi - be, be))
        fi = np.empty((om.size, 6), complex)
        jb = np.clip(np.searchsorted(self.b_deg, bh) - 1, 0, self.b_deg.size - 2)
        tb = ((bh - self.b_deg[jb]) / (self.b_deg[jb + 1] - self.b_deg[jb]))[:, None]
        for k in range(6):
            fk = self.f[:, :, k]
            f0 = np.array([np.interp(om, self.w, fk[:, j].real) + 1j * np.interp(om, self.w, fk[:, j].imag)
                           for j in range(self.b_deg.size)])  # (NB, N)
            n = np.arange(om.size)
            fi[:, k] = (1 - tb[:, 0]) * f0[jb, n] + tb[:, 0] * f0[jb + 1, n]
        # waves much shorter than the BEM grid: excitation fades (hold beyond, taper to zero by 1.25 ω_max)
        fi *= np.clip(1 - (om - self.w[-1]) / (0.25 * self.w[-1]), 0, 1)[:, None]
        sgn = np.array([1, -1, 1, -1, 1, -1])
        fi = np.where(mirrored[:, None], fi * sgn[None, :], fi)
        a = self._coef(self.a, we)
        bd = self._coef(self.bd, we) * np.clip(np.abs(we) / self.w[0], 0, 1)[:, None, None]
        bd[:, 3, 3] += self.b44_visc
        z = -(we**2)[:, None, None] * (self.m[None] + a) + 1j * we[:, None, None] * bd + self.c[None]
        x = np.linalg.solve(z, fi[..., None])[..., 0]  # (N, 6) about the CoG
        x[:, 0] = x[:, 0] - self.z_g * x[:, 4]
        x[:, 1] = x[:, 1] + self.z_g * x[:, 3]
        x = x.T
        if self.amp_errors is not None:
            for k in range(6):
                x[k] *= self.amp_errors[k](om) * np.exp(1j * self.phase_errors[k](om))
        return x.reshape((6,) + shape)

    def stored_table(self, name: str = "stored") -> RAOTable:
        """The model sampled on the coarse grid (what the estimator is given)."""
        sp = TABLE_SPEEDS_KN * KNOT
        be = np.radians(TABLE_BETAS_DEG)
        w = TABLE_OMEGAS
        S, Bt, W = np.meshgrid(sp, be, w, indexing="ij")
        v = self(W, Bt, S)
        return RAOTable(speeds=sp, headings=be, omegas=w, values=v, name=name)


def perturbed(rng: np.random.Generator) -> BoxShip:
    """The 'real' ship: roll damping ×0.7 or ×1.3, GM ±8 %, smooth amplitude ±10-15 %, phase ±10°."""
    def amp():
        a_, k_, p_ = rng.uniform(0.10, 0.15) * rng.choice([-1, 1]), rng.uniform(0.3, 1.0), rng.uniform(0, 6.3)
        return lambda w: 1 + a_ * np.cos(2 * np.pi * (w - 0.2) / 1.4 * k_ + p_)

    def ph():
        p_ = np.radians(rng.uniform(-10, 10))
        return lambda w: np.full(np.shape(w), p_)

    return BoxShip(gm_factor=1 + rng.choice([-1, 1]) * 0.08, zeta_factor=float(rng.choice([0.7, 1.3])),
                   amp_errors=tuple(amp() for _ in range(6)), phase_errors=tuple(ph() for _ in range(6)))


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description="build the BEM cache of the independent benchmark hull")
    ap.add_argument("--build", action="store_true")
    if ap.parse_args().build:
        build_cache()
        s = BoxShip()
        print(f"cached {CACHE.name}: roll period {s.t_roll:.1f} s")
