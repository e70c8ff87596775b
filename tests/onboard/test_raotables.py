"""The ``hwadvice rao`` command (onboard.admin.raotables): RAO tables for a ship without them.

(a) main particulars: the table written equals estimator.hull.estimate_rao_table on the same grid
    (round trip through the CSV, docs/rao-csv.md) and passes the checks of estimator.raocheck;
(b) hull mesh: a box barge written here as a WAMIT .gdf file (format: title, ULEN GRAV, ISX ISY, NPAN,
    then four vertices per panel; the layout capytaine's reader documents), solved by the command and
    compared at zero speed with capytaine 3.0.0's own post-processing ``capytaine.post_pro.rao`` (reference
    library) on the same body, inertia and damping. Forward speed: at beam seas (cos beta = 0) the
    encounter frequency equals the wave frequency, so the encounter-frequency method must give the
    zero-speed values exactly (analytic property of the method).
"""

import os

import numpy as np
import pytest

from estimator.constants import KNOT, RHO_SEAWATER, G
from estimator.hull import estimate_rao_table
from onboard.cli import main
from onboard.formats.raofile import read_rao_csv

L, B, T, GM, T_ROLL = 100.0, 20.0, 5.0, 2.0, 10.0

VESSEL = f"""
[vessel]
name = "Invented Box"
lpp_m = {L}
beam_m = {B}
max_speed_kn = 12.0

[motion_sensor]
x_m = 0.0
y_m = 0.0
z_m = 2.0

[[conditions]]
name = "even keel"
draft_m = {T}
gm_m = {GM}
roll_period_s = {T_ROLL}
block_coefficient = 0.9
roll_damping_ratio = 0.08
"""


@pytest.fixture
def vessel_file(tmp_path):
    p = tmp_path / "box.toml"
    p.write_text(VESSEL)
    return p


def _argv(vessel_file, out, *extra):
    return [
        "rao",
        "estimate",
        "--vessel",
        str(vessel_file),
        "--condition",
        "even keel",
        "--out",
        str(out),
        "--no-progress",
        *extra,
    ]


def test_estimate_from_particulars_writes_a_checked_table(vessel_file, tmp_path, capsys):
    out = tmp_path / "est.csv"
    argv = _argv(
        vessel_file, out, "--speeds-kn", "0,6,12", "--headings-deg", "0:180:30", "--omegas", "0.2:1.6:0.2"
    )
    assert main(argv) == 0
    assert "checks passed" in capsys.readouterr().out
    back = read_rao_csv(out, check=True, lpp=L, t_roll=T_ROLL)
    ref = estimate_rao_table(
        L,
        B,
        T,
        0.9,
        GM,
        speeds=np.array([0, 6, 12]) * KNOT,
        headings=np.radians(np.arange(0, 181, 30)),
        omegas=np.arange(0.2, 1.61, 0.2),
        t_roll=T_ROLL,
        zeta_roll=0.08,
    )
    np.testing.assert_allclose(back.values, ref.values, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (["--speeds-kn", "0:abc"], r"--speeds-kn '0:abc': not a list or range"),
        (["--headings-deg", "90,30"], r"--headings-deg '90,30': empty or not ascending"),
        (["--omegas", "0,1"], r"--omegas '0,1': outside the range"),
        (["--condition", "ballast"], r"no loading condition 'ballast'"),
    ],
)
def test_bad_options_give_one_line(vessel_file, tmp_path, capsys, args, match):
    import re

    argv = _argv(vessel_file, tmp_path / "x.csv", *args)
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert re.search(match, err) and "\n" not in err
    assert not (tmp_path / "x.csv").exists()


def test_check_command_refuses_radians(tmp_path, capsys):
    ref = estimate_rao_table(
        L,
        B,
        T,
        0.9,
        GM,
        speeds=[0.0],
        headings=np.radians(np.arange(0, 181, 30)),
        omegas=np.arange(0.2, 1.61, 0.2),
        t_roll=T_ROLL,
    )
    from estimator.rao import RAOTable
    from onboard.formats.raofile import write_rao_csv

    v = ref.values.copy()
    v[3:] *= np.pi / 180  # rotations written as rad/m
    write_rao_csv(RAOTable(ref.speeds, ref.headings, ref.omegas, v), tmp_path / "r.csv")
    assert main(["rao", "check", str(tmp_path / "r.csv"), "--lpp-m", str(L)]) == 2
    assert "rad/m" in capsys.readouterr().err


# ------------------------------------------------------------------------------------------- mesh


def _box_gdf(path, dx=5.0, dy=5.0, dz=2.5):
    """Open-top box L x B x T below z = 0, quads with normals out of the hull (into the water)."""
    xs = np.arange(-L / 2, L / 2 + 1e-9, dx)
    ys = np.arange(-B / 2, B / 2 + 1e-9, dy)
    zs = np.arange(-T, 1e-9, dz)
    faces = []  # (quad, outward normal)
    for i in range(xs.size - 1):
        for j in range(ys.size - 1):
            x0, x1, y0, y1 = xs[i], xs[i + 1], ys[j], ys[j + 1]
            faces.append(([(x0, y0, -T), (x1, y0, -T), (x1, y1, -T), (x0, y1, -T)], (0, 0, -1)))
        for k in range(zs.size - 1):
            x0, x1, z0, z1 = xs[i], xs[i + 1], zs[k], zs[k + 1]
            for y, n in ((B / 2, 1), (-B / 2, -1)):
                faces.append(([(x0, y, z0), (x1, y, z0), (x1, y, z1), (x0, y, z1)], (0, n, 0)))
    for j in range(ys.size - 1):
        for k in range(zs.size - 1):
            y0, y1, z0, z1 = ys[j], ys[j + 1], zs[k], zs[k + 1]
            for x, n in ((L / 2, 1), (-L / 2, -1)):
                faces.append(([(x, y0, z0), (x, y1, z0), (x, y1, z1), (x, y0, z1)], (n, 0, 0)))
    panels = []
    for quad, outward in faces:
        q = np.array(quad)
        normal = np.cross(q[1] - q[0], q[2] - q[0])  # right-hand rule on the vertex order
        panels.append(q if np.dot(normal, outward) > 0 else q[::-1])
    lines = ["invented box barge", f"1.0 {G}", "0 0", str(len(panels))]
    lines += [f"{x:.6f} {y:.6f} {z:.6f}" for p in panels for (x, y, z) in p]
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.fixture(scope="module")
def mesh_table(tmp_path_factory):
    pytest.importorskip("capytaine")
    d = tmp_path_factory.mktemp("mesh")
    (d / "box.toml").write_text(VESSEL)
    gdf = _box_gdf(d / "box.gdf")
    out = d / "box.csv"
    argv = [
        "rao",
        "mesh",
        str(gdf),
        "--vessel",
        str(d / "box.toml"),
        "--condition",
        "even keel",
        "--out",
        str(out),
        "--speeds-kn",
        "0,10",
        "--headings-deg",
        "0:180:45",
        "--omegas",
        "0.2,0.4,0.6,0.8,1.0",
        "--no-progress",
    ]
    assert main(argv) == 0
    return gdf, read_rao_csv(out, check=True, lpp=L, t_roll=T_ROLL)


@pytest.mark.oracle
@pytest.mark.slow
def test_mesh_table_matches_capytaine_post_processing_at_zero_speed(mesh_table):
    os.environ.setdefault("CAPYTAINE_PROGRESS_BAR", "False")
    import capytaine as cpt
    import xarray as xr
    from capytaine.post_pro import rao

    gdf, table = mesh_table
    mesh = cpt.load_mesh(gdf).immersed_part()
    probe = cpt.FloatingBody(mesh=mesh, center_of_mass=(0, 0, 0))
    xb = float(probe.center_of_buoyancy[0])
    zg = float(probe.center_of_buoyancy[2] + probe.transversal_metacentric_radius - GM)
    mass = RHO_SEAWATER * float(probe.disp_volume)
    body = cpt.FloatingBody(
        mesh=mesh,
        dofs=cpt.rigid_body_dofs(rotation_center=(xb, 0, zg)),
        center_of_mass=(xb, 0, zg),
        mass=mass,
    )
    dofs = list(body.dofs)
    lab = dict(
        dims=["influenced_dof", "radiating_dof"], coords={"influenced_dof": dofs, "radiating_dof": dofs}
    )
    body.hydrostatic_stiffness = body.compute_hydrostatic_stiffness(rho=RHO_SEAWATER, g=G)
    c44 = float(body.hydrostatic_stiffness.sel(influenced_dof="Roll").sel(radiating_dof="Roll"))
    w_n = 2 * np.pi / T_ROLL
    a44 = (
        cpt.BEMSolver()
        .solve(
            cpt.RadiationProblem(
                body=body, omega=w_n, radiating_dof="Roll", rho=RHO_SEAWATER, g=G, water_depth=np.inf
            )
        )
        .added_masses["Roll"]
    )
    i44 = c44 / w_n**2 - a44  # roll inertia giving the condition's roll period (module docstring)
    body.inertia_matrix = xr.DataArray(
        np.diag([mass, mass, mass, i44, mass * (0.25 * L) ** 2, mass * (0.26 * L) ** 2]), **lab
    )
    omegas = np.array([0.2, 0.4, 0.6, 0.8, 1.0])
    betas = np.radians([0.0, 45.0, 90.0, 135.0, 180.0])
    tm = xr.Dataset(
        coords={
            "omega": omegas,
            "wave_direction": betas,
            "radiating_dof": dofs,
            "water_depth": [np.inf],
            "rho": [RHO_SEAWATER],
            "g": [G],
        }
    )
    ds = cpt.BEMSolver().fill_dataset(tm, body)
    diss = np.zeros((6, 6))
    diss[3, 3] = 2 * 0.08 * np.sqrt(c44 * (i44 + a44))  # 8 % of critical at the roll resonance
    x = np.conj(
        rao(ds, dissipation=xr.DataArray(diss, **lab))
        .transpose("radiating_dof", "wave_direction", "omega")
        .values
    )
    x[0] -= zg * x[4]
    x[1] += zg * x[3] - xb * x[5]
    x[2] += xb * x[4]
    ours = table.values[:, 0][:, [int(np.argmin(np.abs(table.headings - b))) for b in betas]]
    scale = np.abs(x).max(axis=(1, 2), keepdims=True)
    # same BEM, same equations: agreement to the CSV's 12 digits and the interpolation of A, B in omega
    # (the table's radiation grid holds these omegas exactly)
    assert np.max(np.abs(ours - x) / scale) < 1e-4


@pytest.mark.oracle
@pytest.mark.slow
def test_mesh_table_forward_speed_in_beam_seas_equals_zero_speed(mesh_table):
    _, table = mesh_table
    ib = int(np.argmin(np.abs(table.headings - np.pi / 2)))
    # omega_e = omega at beta = 90 deg: the encounter-frequency method gives the zero-speed values
    np.testing.assert_allclose(table.values[:, 1, ib], table.values[:, 0, ib], rtol=1e-6, atol=1e-9)
    # and at head seas the speed changes the response (encounter frequency moves)
    ih = int(np.argmin(np.abs(table.headings - np.pi)))
    assert np.max(np.abs(table.values[2, 1, ih] - table.values[2, 0, ih])) > 0.01


def test_unreadable_mesh_gives_one_line(vessel_file, tmp_path, capsys):
    pytest.importorskip("capytaine")
    bad = tmp_path / "hull.gdf"
    bad.write_text("not a mesh\n")
    argv = [
        "rao",
        "mesh",
        str(bad),
        "--vessel",
        str(vessel_file),
        "--condition",
        "even keel",
        "--out",
        str(tmp_path / "o.csv"),
        "--no-progress",
    ]
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert "hull.gdf: cannot read the mesh" in err and "\n" not in err
