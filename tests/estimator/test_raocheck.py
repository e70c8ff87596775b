"""Tests for estimator.raocheck: plausibility checks of RAO tables.

Expected long-wave values are the analytic limits of linear wave kinematics (Newman 1977 §6.17;
Faltinsen 1990 ch. 2), in the conventions of docs/conventions.md: heave -> 1, pitch -> i k cos(beta),
roll -> -i k sin(beta) (times a factor of order one), surge -> -i cos(beta), sway -> -i sin(beta).
Correct tables come from two independent paths: a boundary-element solution (capytaine 3.0.0,
reference library from PyPI) and the closed-form estimates of estimator.hull. The slips are made by
hand from a correct table, each the way another code or a hand edit would make it.
"""

import os

import numpy as np
import pytest

from estimator.constants import KNOT, G
from estimator.hull import estimate_rao_table
from estimator.rao import RAOTable
from estimator.raocheck import check_rao_table

DEG = np.pi / 180.0
LPP, T_ROLL = 150.0, 14.0


@pytest.fixture(scope="module")
def good():
    # closed-form estimate (estimator.hull; JMO 2004 heave/pitch, 1-DOF roll) for a 150 m ship
    return estimate_rao_table(
        LPP,
        25.0,
        8.0,
        0.65,
        1.5,
        speeds=np.array([0.0, 8.0, 16.0]) * KNOT,
        headings=np.arange(0.0, 181.0, 30.0) * DEG,
        omegas=np.linspace(0.2, 1.6, 15),
        t_roll=T_ROLL,
    )


def _with(table, values, headings=None):
    return RAOTable(table.speeds, table.headings if headings is None else headings, table.omegas, values)


def _causes(report):
    return " | ".join(f.cause for f in report.errors)


def test_closed_form_table_passes(good):
    report = check_rao_table(good, lpp=LPP, t_roll=T_ROLL)
    assert report.ok, report.errors
    assert not report.warnings
    assert not report.skipped


def test_rotations_in_radians_are_caught(good):
    # file convention deg/m (docs/rao-csv.md); rad/m written instead = 1/57.3 of the slope
    v = good.values.copy()
    v[3:] *= DEG
    report = check_rao_table(_with(good, v), lpp=LPP)
    assert {f.dof for f in report.errors} >= {"pitch", "roll"}
    assert all("rad/m" in f.cause for f in report.errors if f.check == "units")


def test_absurd_heave_is_caught(good):
    # heave 1000 m/m: the bound TRANSLATION_MAX (project choice) and the long-wave limit heave -> 1
    v = good.values.copy()
    v[2] *= 1000.0
    report = check_rao_table(_with(good, v), lpp=LPP)
    assert report.errors[0].check == "bounds" and report.errors[0].dof == "heave"


def test_per_wave_height_is_named(good):
    v = good.values * 0.5  # response per wave height H = 2a instead of per amplitude a
    report = check_rao_table(_with(good, v), lpp=LPP, t_roll=T_ROLL)
    assert "per wave height" in _causes(report)


def test_lag_instead_of_lead_is_named(good):
    # phase lag = complex conjugate: flips pitch, roll, surge, sway in long waves (Newman §6.17)
    report = check_rao_table(_with(good, np.conj(good.values)), lpp=LPP, t_roll=T_ROLL)
    assert {f.dof for f in report.errors} == {"pitch", "roll", "surge", "sway"}
    assert "lags" in report.errors[0].cause


def test_pitch_sign_is_named(good):
    v = good.values.copy()
    v[4] *= -1.0  # pitch + bow up (sensor practice) instead of + bow down (ITTC)
    report = check_rao_table(_with(good, v), lpp=LPP, t_roll=T_ROLL)
    assert [f.dof for f in report.errors] == ["pitch"]
    assert "bow up" in report.errors[0].cause
    f = report.errors[0]
    k = f.omega**2 / G
    # the expected value is the analytic slope i k cos(beta) at that point
    assert f.expected == pytest.approx(1j * k * np.cos(f.heading))


def test_roll_sign_is_named(good):
    v = good.values.copy()
    v[3] *= -1.0
    report = check_rao_table(_with(good, v), lpp=LPP, t_roll=T_ROLL)
    assert [f.dof for f in report.errors] == ["roll"]
    assert "starboard down" in report.errors[0].cause


def test_head_seas_at_zero_heading_is_named(good):
    h = good.headings
    idx = [int(np.argmin(np.abs(np.mod(np.pi - b, 2 * np.pi) - h))) for b in h]
    report = check_rao_table(_with(good, good.values[:, :, idx]), lpp=LPP, t_roll=T_ROLL)
    assert {f.dof for f in report.errors} == {"pitch", "surge"}
    assert "0 = head seas" in report.errors[0].cause


def test_headings_the_other_way_round_are_named(good):
    h = good.headings
    idx = [int(np.argmin(np.abs(np.mod(-b, 2 * np.pi) - h))) for b in h]
    report = check_rao_table(_with(good, good.values[:, :, idx]), lpp=LPP, t_roll=T_ROLL)
    assert {f.dof for f in report.errors} == {"roll", "sway"}
    assert "other way round" in report.errors[0].cause


def test_mirrored_half_without_sign_change(good):
    # Faltinsen 1990 ch. 7: sway, roll, yaw change sign on the mirrored side
    v = good.values.copy()
    side = good.headings > np.pi
    for d in (1, 3, 5):
        v[d][:, side] *= -1.0
    report = check_rao_table(_with(good, v), lpp=LPP, t_roll=T_ROLL)
    assert any(f.check == "symmetry" and f.severity == "error" for f in report.errors)
    assert "one side of the ship" in _causes(report)


def test_asymmetry_is_a_warning_only(good):
    v = good.values.copy()
    v[2][:, good.headings > np.pi] *= 1.3  # heave 30 % larger on the port side: a listed ship?
    report = check_rao_table(_with(good, v), lpp=LPP, t_roll=T_ROLL)
    assert report.ok
    assert [f.dof for f in report.warnings] == ["heave"]


def test_short_lowest_wave_skips_the_long_wave_checks(good):
    t = RAOTable(good.speeds, good.headings, good.omegas[5:], good.values[..., 5:])
    report = check_rao_table(t, lpp=LPP)
    assert report.skipped and "long-wave" in report.skipped[0]


# ----------------------------------------------------------------------------------- capytaine oracle


@pytest.fixture(scope="module")
def capytaine_table():
    """Box barge 100 x 20 x 5 m, GM 2 m, zero speed, solved by capytaine 3.0.0 (reference library).

    Recipe (capytaine documentation, Ancellet & Dias 2019; measured here): open-top mesh, CoG from the
    mesh metacentre; capytaine's exp(-i omega t) convention conjugated to our phase lead; rotations
    about the CoG, translations moved to the waterline origin. Returned raw and converted.
    """
    os.environ.setdefault("CAPYTAINE_PROGRESS_BAR", "False")
    cpt = pytest.importorskip("capytaine")
    import xarray as xr
    from capytaine.post_pro import rao

    cpt.set_logging("ERROR")
    L, B, T, GM = 100.0, 20.0, 5.0, 2.0
    mesh = cpt.mesh_parallelepiped(
        size=(L, B, T), center=(0, 0, -T / 2), faces_max_radius=3.0, missing_sides={"top"}
    )
    probe = cpt.FloatingBody(mesh=mesh, center_of_mass=(0, 0, 0))
    z_g = float(probe.center_of_buoyancy[2] + probe.transversal_metacentric_radius - GM)
    mass = 1025.0 * float(probe.disp_volume)
    body = cpt.FloatingBody(
        mesh=mesh,
        dofs=cpt.rigid_body_dofs(rotation_center=(0, 0, z_g)),
        center_of_mass=(0, 0, z_g),
        mass=mass,
    )
    dofs = list(body.dofs)
    lab = dict(
        dims=["influenced_dof", "radiating_dof"], coords={"influenced_dof": dofs, "radiating_dof": dofs}
    )
    body.inertia_matrix = xr.DataArray(
        np.diag([mass, mass, mass, mass * (0.35 * B) ** 2, mass * (0.25 * L) ** 2, mass * (0.26 * L) ** 2]),
        **lab,
    )
    body.hydrostatic_stiffness = body.compute_hydrostatic_stiffness(rho=1025.0, g=G)
    omegas = np.array([0.15, 0.3, 0.5, 0.8])
    betas = np.arange(0.0, 181.0, 45.0) * DEG
    tm = xr.Dataset(
        coords={
            "omega": omegas,
            "wave_direction": betas,
            "radiating_dof": dofs,
            "water_depth": [np.inf],
            "rho": [1025.0],
            "g": [G],
        }
    )
    ds = cpt.BEMSolver().fill_dataset(tm, body)
    diss = np.zeros((6, 6))
    # linear roll damping of about 10 % of critical, 2 zeta sqrt(C44 I44) with C44 = m g GM and
    # I44 = 2 m kxx^2 (added inertia taken equal to the dry one; common practice for a first guess)
    diss[3, 3] = 0.1 * 2.0 * np.sqrt(mass * G * GM * 2.0 * mass * (0.35 * B) ** 2)
    x = (
        rao(ds, dissipation=xr.DataArray(diss, **lab))
        .transpose("wave_direction", "omega", "radiating_dof")
        .values
    )
    raw = np.moveaxis(x, -1, 0)[:, None].copy()  # (6, 1, NH, NW), capytaine's convention
    raw[0] -= z_g * raw[4]
    raw[1] += z_g * raw[3]
    ours = RAOTable.mirrored([0.0], betas, omegas, np.conj(raw), name="box")
    theirs = RAOTable.mirrored([0.0], betas, omegas, raw, name="box raw")
    return ours, theirs


@pytest.mark.oracle
def test_capytaine_table_passes(capytaine_table):
    ours, _ = capytaine_table
    report = check_rao_table(ours, lpp=100.0)
    assert report.ok, [f.problem + " / " + f.cause for f in report.errors]


@pytest.mark.oracle
def test_capytaine_table_in_its_own_time_convention_is_caught(capytaine_table):
    # capytaine's exp(-i omega t) values written as phase leads: the slip the check exists for
    _, raw = capytaine_table
    report = check_rao_table(raw, lpp=100.0)
    assert not report.ok
    assert "exp(-i omega t)" in report.errors[0].cause
