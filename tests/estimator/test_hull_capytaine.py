"""Oracle: estimator.hull against capytaine 3.0.0 (linear potential-flow BEM) for a box barge.

The closed-form estimates are checked against a boundary-element solution of the same body: a
box barge 100 m x 20 m x 5 m draft, GM 2.0 m, roll radius of gyration 0.35 B, zero speed, 13 wave
frequencies 0.2-1.4 rad/s, headings 0, 45, 90, 135, 180 deg (recipe and pitfalls from the capytaine
documentation: open-top 314-panel mesh, CoG chosen from the mesh
metacentre, two separate .sel calls, capytaine's exp(-i omega t) convention conjugated to ours).

What agreement to expect, honestly: the JMO expressions are a strip-theory-like closed form with a
constant added mass (= displaced mass) and 2-D damping, so they follow the BEM closely in long
waves and drift apart near heave/pitch cancellation frequencies and in short waves. The tolerances
below are about 1.5 times the differences observed when this test was written (noted beside
each). Roll: the 1-DOF model ignores sway-roll coupling, which for this box reduces the effective
wave-slope excitation with frequency; the IS Code effective slope r is therefore compared in long
waves only, and the model is checked to be conservative (not below the BEM) everywhere.

capytaine's frame: x forward, y to port, z up; wave_direction is the travel direction (pi = head
seas, pi/2 = waves travelling to port = from starboard, the same numbers as our ITTC beta); roll +
starboard down, pitch + bow down (capytaine documentation). Rotations are about the
centre of gravity; translations there are moved to our origin (waterline, midship) here.
"""

import os

import numpy as np
import pytest

os.environ.setdefault("CAPYTAINE_PROGRESS_BAR", "False")

import capytaine as cpt  # noqa: E402  (after the environment switch above)
import xarray as xr  # noqa: E402
from capytaine.post_pro import rao  # noqa: E402

from estimator.constants import RHO_SEAWATER, G  # noqa: E402
from estimator.hull import (  # noqa: E402
    effective_wave_slope_coefficient,
    horizontal_motions_froude_krylov,
    jmo_heave_pitch,
    roll_damping_coefficient,
    roll_period_is_code,
    roll_rao_1dof,
)

pytestmark = [pytest.mark.oracle, pytest.mark.slow]

L, B, T, GM = 100.0, 20.0, 5.0, 2.0
KXX = 0.35 * B
OMEGAS = np.round(np.arange(0.2, 1.401, 0.1), 10)
BETAS_DEG = np.array([0.0, 45.0, 90.0, 135.0, 180.0])
ZETA = 0.05


@pytest.fixture(scope="module")
def bem():
    """Solve the box once; return our-convention arrays (omega, beta, dof) and coefficients."""
    cpt.set_logging("ERROR")
    mesh = cpt.mesh_parallelepiped(
        size=(L, B, T), center=(0, 0, -T / 2), faces_max_radius=2.5, missing_sides={"top"}
    )
    probe = cpt.FloatingBody(mesh=mesh, center_of_mass=(0, 0, 0))
    volume = float(probe.disp_volume)
    assert volume > 0  # normals into the fluid (capytaine documentation: mesh normals)
    z_g = float(probe.center_of_buoyancy[2] + probe.transversal_metacentric_radius - GM)
    cog, mass = (0.0, 0.0, z_g), RHO_SEAWATER * volume
    body = cpt.FloatingBody(
        mesh=mesh, dofs=cpt.rigid_body_dofs(rotation_center=cog), center_of_mass=cog, mass=mass
    )
    dofs = list(body.dofs)
    lab = dict(
        dims=["influenced_dof", "radiating_dof"], coords={"influenced_dof": dofs, "radiating_dof": dofs}
    )
    inertia = np.diag([mass, mass, mass, mass * KXX**2, mass * (0.25 * L) ** 2, mass * (0.26 * L) ** 2])
    body.inertia_matrix = xr.DataArray(inertia, **lab)
    body.hydrostatic_stiffness = body.compute_hydrostatic_stiffness(rho=RHO_SEAWATER, g=G)
    test_matrix = xr.Dataset(
        coords={
            "omega": OMEGAS,
            "wave_direction": np.radians(BETAS_DEG),
            "radiating_dof": dofs,
            "water_depth": [np.inf],
            "rho": [RHO_SEAWATER],
            "g": [G],
        }
    )
    ds = cpt.BEMSolver().fill_dataset(test_matrix, body)

    def coef(var, influenced, radiating):
        return ds[var].sel(radiating_dof=radiating).sel(influenced_dof=influenced).values

    c44 = float(coef("hydrostatic_stiffness", "Roll", "Roll"))
    # effective roll inertia with sway free (sway-roll coupling through the added mass)
    m22 = mass + coef("added_mass", "Sway", "Sway")
    a24 = coef("added_mass", "Sway", "Roll")
    i_eff = mass * KXX**2 + coef("added_mass", "Roll", "Roll") - a24**2 / m22
    w = 0.5
    for _ in range(100):  # fixed point of omega^2 I_eff(omega) = C44
        w = float(np.sqrt(c44 / np.interp(w, OMEGAS, i_eff)))
    t_roll_bem = 2 * np.pi / w
    # roll dissipation giving the damping ratio ZETA for the coupled natural period
    dissipation = np.zeros((6, 6))
    dissipation[3, 3] = roll_damping_coefficient(ZETA, t_roll_bem, GM, volume)
    x0 = np.conj(rao(ds).transpose("omega", "wave_direction", "radiating_dof").values)
    xd = np.conj(
        rao(ds, dissipation=xr.DataArray(dissipation, **lab))
        .transpose("omega", "wave_direction", "radiating_dof")
        .values
    )
    f_exc = np.conj(ds["excitation_force"].transpose("omega", "wave_direction", "influenced_dof").values)
    # translations of the waterline origin (0, 0, -z_g from G): s = eta + theta x r (small angles)
    for x in (x0, xd):
        x[..., 0] = x[..., 0] - z_g * x[..., 4]  # s_x = eta1 + z eta5 with z = -z_g
        x[..., 1] = x[..., 1] + z_g * x[..., 3]  # s_y = eta2 - z eta4
    return dict(
        undamped=x0,
        damped=xd,
        f4_eff=f_exc[:, :, 3] - (a24 / m22)[:, None] * f_exc[:, :, 1],
        c44=c44,
        z_g=z_g,
        t_roll=t_roll_bem,
        volume=volume,
    )


def _ours(beta_deg):
    beta = np.radians(beta_deg)
    heave, pitch = jmo_heave_pitch(OMEGAS, beta, 0.0, L, B, T, 1.0)
    surge, sway, yaw = horizontal_motions_froude_krylov(OMEGAS, beta, L, B, T, 1.0)
    return dict(surge=surge, sway=sway, heave=heave, pitch=pitch, yaw=yaw)


def _rel(a, b):
    return np.abs(a - b) / np.abs(b)


@pytest.mark.parametrize("ib", range(len(BETAS_DEG)))
def test_heave_and_pitch_long_waves_complex(bem, ib):
    # capytaine 3.0.0 BEM (oracle): complex heave and pitch, amplitude and phase together, for
    # lambda/L >= 3.9 (omega <= 0.4): within 10 % (observed <= 8.4 %, beam-sea heave at 0.4).
    ours = _ours(BETAS_DEG[ib])
    low = OMEGAS <= 0.4 + 1e-9
    x = bem["undamped"][:, ib]
    assert np.all(_rel(ours["heave"], x[:, 2])[low] < 0.10)
    if abs(np.cos(np.radians(BETAS_DEG[ib]))) > 0.1:
        assert np.all(_rel(ours["pitch"], x[:, 4])[low] < 0.10)


@pytest.mark.parametrize("ib", range(len(BETAS_DEG)))
def test_heave_and_pitch_amplitudes_down_to_wave_length_1_3_ship_lengths(bem, ib):
    # capytaine 3.0.0 BEM (oracle): amplitudes for omega <= 0.7 (lambda/L >= 1.26) within 25 %
    # (observed <= 16 %, head-sea heave at 0.7 where the heave approaches its cancellation at 0.8).
    ours = _ours(BETAS_DEG[ib])
    mid = OMEGAS <= 0.7 + 1e-9
    x = bem["undamped"][:, ib]
    assert np.all(np.abs(np.abs(ours["heave"]) / np.abs(x[:, 2]) - 1)[mid] < 0.25)
    if abs(np.cos(np.radians(BETAS_DEG[ib]))) > 0.1:
        assert np.all(np.abs(np.abs(ours["pitch"]) / np.abs(x[:, 4]) - 1)[mid] < 0.25)


def test_low_frequency_limits_and_signs_agree_with_the_bem(bem):
    # capytaine (oracle) and the analytical long-wave limits (capytaine documentation):
    # heave -> 1 in phase, head-sea pitch -> -i k (bow down positive), beam-sea roll -> -i k r.
    x = bem["undamped"][0]  # omega = 0.2
    k = OMEGAS[0] ** 2 / G
    assert x[4, 2] == pytest.approx(1.0, abs=0.01)
    assert x[4, 4] == pytest.approx(-1j * k, rel=0.02)
    ours = _ours(180.0)
    assert ours["pitch"][0] == pytest.approx(x[4, 4], rel=0.02)
    roll_ours = roll_rao_1dof(OMEGAS[0], np.pi / 2, 0.0, bem["t_roll"], ZETA, 1.0)
    assert np.angle(roll_ours) == pytest.approx(np.angle(bem["damped"][0, 2, 3]), abs=np.radians(3))


@pytest.mark.parametrize("ib", [0, 1, 3, 4])
def test_surge_long_waves(bem, ib):
    # capytaine (oracle): the volume-averaged orbital displacement gives the BEM surge of the
    # waterline origin within 6 % for omega <= 0.6 (observed <= 3.5 %).
    sel = OMEGAS <= 0.6 + 1e-9
    assert np.all(_rel(_ours(BETAS_DEG[ib])["surge"], bem["undamped"][:, ib, 0])[sel] < 0.06)


@pytest.mark.parametrize("ib", [1, 2, 3])
def test_sway_long_waves_away_from_roll_resonance(bem, ib):
    # capytaine (oracle): sway of the waterline origin within 4 % for omega <= 0.4 (observed
    # <= 1.8 %); near the roll resonance (0.5) the BEM sway carries z_G times the roll, which
    # the uncoupled estimate leaves out.
    sel = OMEGAS <= 0.4 + 1e-9
    assert np.all(_rel(_ours(BETAS_DEG[ib])["sway"], bem["undamped"][:, ib, 1])[sel] < 0.04)


@pytest.mark.parametrize("ib", [1, 3])
def test_yaw_oblique_seas(bem, ib):
    # capytaine (oracle): yaw within 15 % for omega <= 0.9 at 45 and 135 deg (observed <= 10 %).
    sel = OMEGAS <= 0.9 + 1e-9
    assert np.all(_rel(_ours(BETAS_DEG[ib])["yaw"], bem["undamped"][:, ib, 5])[sel] < 0.15)


def test_is_code_roll_period_against_the_bem_natural_period(bem):
    # capytaine (oracle): natural period of the coupled sway-roll box from its own added inertia,
    # 12.18 s when written; IMO IS Code 2008 formula 11.94 s. Within 10 % (an empirical formula).
    t_is = roll_period_is_code(B, T, L, GM)
    assert bem["t_roll"] == pytest.approx(t_is, rel=0.10)


def test_one_dof_roll_dynamics_with_the_bem_excitation(bem):
    # capytaine (oracle): fed the BEM's own roll excitation (sway decoupled through the added
    # mass, as an effective slope |F4_eff| / (C44 k)), the BEM natural period and the same damping
    # ratio, the 1-DOF amplification reproduces the coupled BEM roll in beam seas: within 12 % for
    # omega <= 0.6 and 35 % over 0.2-1.4 rad/s (observed 1.04-1.15 and 0.97-1.26).
    k = OMEGAS**2 / G
    r_eff = np.abs(bem["f4_eff"][:, 2]) / (bem["c44"] * k)
    ours = np.array(
        [
            abs(roll_rao_1dof(w, np.pi / 2, 0.0, bem["t_roll"], ZETA, r))
            for w, r in zip(OMEGAS, r_eff, strict=True)
        ]
    )
    ratio = ours / np.abs(bem["damped"][:, 2, 3])
    assert np.all(np.abs(ratio - 1)[OMEGAS <= 0.6 + 1e-9] < 0.12)
    assert np.all(np.abs(ratio - 1) < 0.35)


@pytest.mark.parametrize("ib", [1, 2, 3])
def test_roll_with_is_code_slope_is_right_in_long_waves_and_conservative(bem, ib):
    # capytaine (oracle) with the IS Code r = 0.73 + 0.6 OG/d and period: at omega = 0.2
    # (lambda = 77 B) within 10 % (observed 5 %); at every frequency not below the BEM roll
    # (observed ratio 1.05-21: the wave-slope model ignores the drop of the effective slope with
    # frequency that sway coupling causes for this box, so it over-predicts roll, on the safe side).
    beta = np.radians(BETAS_DEG[ib])
    r = effective_wave_slope_coefficient(bem["z_g"] + T, T)
    ours = roll_rao_1dof(OMEGAS, beta, 0.0, roll_period_is_code(B, T, L, GM), ZETA, r)
    bem_roll = bem["damped"][:, ib, 3]
    assert abs(ours[0]) == pytest.approx(abs(bem_roll[0]), rel=0.10)
    assert np.all(np.abs(ours) >= 0.95 * np.abs(bem_roll))
