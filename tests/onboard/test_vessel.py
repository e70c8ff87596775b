"""Tests for onboard.formats.vessel: the vessel TOML contract (docs/vessel.md).

Expected values come from the contract (key names, units, relative RAO path) and the definition
of the knot (1852/3600 m/s, exact). The demo data here is invented.
"""

import textwrap

import numpy as np
import pytest

from estimator.rao import RAOTable
from onboard.formats.raofile import write_rao_csv
from onboard.formats.vessel import VesselFileError, load_condition_raos, load_vessel

GOOD = """
[vessel]
name = "Invented Trader"
lpp_m = 180.0
beam_m = 30.0
max_speed_kn = 16.0

[motion_sensor]
x_m = 5.0
y_m = -2.0
z_m = 12.0

[[points]]
name = "bridge"
x_m = 60.0
y_m = 0.0
z_m = 25.0

[[points]]
name = "forecastle"
x_m = 85.0
y_m = 0.0
z_m = 8.0

[[conditions]]
name = "full load"
draft_m = 10.0
gm_m = 1.8
roll_period_s = 16.0
rao_table = "raos/full.csv"

[[conditions]]
name = "ballast"
draft_m = 6.0
gm_m = 4.0
roll_period_s = 11.0
block_coefficient = 0.72
kg_m = 8.0
displacement_t = 25000.0
roll_damping_ratio = 0.06
"""


@pytest.fixture
def vessel_dir(tmp_path):
    (tmp_path / "raos").mkdir()
    h = np.arange(0, 360, 30.0) * np.pi / 180
    table = RAOTable([0.0, 4.0], h, [0.3, 0.8], np.full((6, 2, h.size, 2), 0.5 + 0.1j))
    write_rao_csv(table, tmp_path / "raos" / "full.csv")
    return tmp_path


def _write(folder, text, name="v.toml"):
    p = folder / name
    p.write_text(textwrap.dedent(text))
    return p


def test_good_file_is_read_into_si(vessel_dir):
    v = load_vessel(_write(vessel_dir, GOOD))
    assert v.name == "Invented Trader"
    assert v.lpp == 180.0 and v.beam == 30.0
    assert v.max_speed == pytest.approx(16.0 * 1852.0 / 3600.0, rel=1e-15)  # knot definition
    assert v.motion_sensor.xyz == (5.0, -2.0, 12.0)
    assert v.motion_sensor.signs["pitch_deg"] == 1
    assert v.points_mapping() == {"bridge": (60.0, 0.0, 25.0), "forecastle": (85.0, 0.0, 8.0)}
    full = v.condition("full load")
    assert full.rao_table == (vessel_dir / "raos" / "full.csv").resolve()  # relative to the TOML file
    assert (full.draft, full.gm, full.roll_period) == (10.0, 1.8, 16.0)
    ballast = v.condition("ballast")
    assert ballast.rao_table is None and ballast.cb == 0.72 and ballast.kg == 8.0
    assert ballast.displacement == pytest.approx(25.0e6)  # t -> kg
    with pytest.raises(VesselFileError, match=r"no loading condition 'heavy'; known: 'full load', 'ballast'"):
        v.condition("heavy")
    with pytest.raises(AttributeError):
        v.lpp = 1.0  # frozen


def test_rao_table_is_loaded_only_on_request(vessel_dir):
    v = load_vessel(_write(vessel_dir, GOOD))
    # a constant synthetic table: the plausibility checks (test_raofile.py) are off for it
    t = load_condition_raos(v, "full load", check=False)
    assert t.name == "full load"
    np.testing.assert_allclose(t.values, 0.5 + 0.1j, rtol=1e-10)


def test_condition_without_table_needs_a_grid_or_block_coefficient(vessel_dir):
    v = load_vessel(_write(vessel_dir, GOOD))
    with pytest.raises(VesselFileError, match="has no rao_table; pass speeds, headings and omegas"):
        load_condition_raos(v, "ballast")
    text = GOOD.replace("block_coefficient = 0.72\n", "")
    v = load_vessel(_write(vessel_dir, text))
    with pytest.raises(VesselFileError, match="no rao_table and no block_coefficient"):
        load_condition_raos(v, "ballast", speeds=[0.0], headings=[0.0], omegas=[0.5, 1.0])


@pytest.mark.parametrize(
    ("old", "new", "match"),
    [
        ("lpp_m = 180.0", "lpp_m = 590.5", r"vessel\.lpp_m = 590\.5: out of range; allowed: \[10, 500\]"),
        ("beam_m = 30.0", 'beam_m = "30"', r"vessel\.beam_m = '30': must be a number"),
        (
            "max_speed_kn = 16.0",
            "max_speed_kn = 0.0",
            r"vessel\.max_speed_kn = 0\.0: out of range; allowed: \(0, 50\]",
        ),
        (
            "max_speed_kn = 16.0",
            "max_speed = 16.0",
            r"vessel\.max_speed = 16\.0: unknown key; "
            r"allowed: name, lpp_m, beam_m, max_speed_kn, depth_m, description",
        ),
        ("gm_m = 1.8", "gm_m = -0.2", r"conditions\[0\]\.gm_m = -0\.2: out of range; allowed: \[0\.05, 15\]"),
        (
            "roll_period_s = 16.0",
            "roll_period_s = 160.0",
            r"conditions\[0\]\.roll_period_s = 160\.0: out of range",
        ),
        ("roll_period_s = 16.0\n", "", r"conditions\[0\]\.roll_period_s: missing required key"),
        ("x_m = 85.0", "x_m = 185.0", r"points\[1\]\.x_m = 185\.0: out of range; allowed: \[-108, 108\]"),
        (
            'name = "forecastle"',
            'name = "bridge"',
            r"points\[1\]\.name = 'bridge': repeats an earlier point name",
        ),
        (
            'name = "ballast"',
            'name = "full load"',
            r"conditions\[1\]\.name = 'full load': repeats an earlier",
        ),
        ("raos/full.csv", "raos/none.csv", r"conditions\[0\]\.rao_table = 'raos/none.csv': file not found"),
        ("y_m = -2.0", "y_m = -2.0\nroll_sign = 2", r"motion_sensor\.roll_sign = 2: must be \+1 or -1"),
        (
            "z_m = 12.0",
            "z_m = 12.0\nheight = 3",
            r"motion_sensor\.height = 3: unknown key; allowed: x_m, y_m, z_m",
        ),
        (
            "kg_m = 8.0",
            'kg_m = 8.0\ncolour = "red"',
            r"conditions\[1\]\.colour = 'red': unknown key; allowed: name",
        ),
    ],
)
def test_errors_name_file_key_value_and_allowed(vessel_dir, old, new, match):
    assert old in GOOD
    p = _write(vessel_dir, GOOD.replace(old, new, 1))
    with pytest.raises(VesselFileError, match=r"v\.toml: " + match):
        load_vessel(p)


def test_structural_errors(vessel_dir):
    with pytest.raises(VesselFileError, match=r"nope\.toml: cannot open vessel file"):
        load_vessel(vessel_dir / "nope.toml")
    with pytest.raises(VesselFileError, match=r"bad\.toml: not valid TOML"):
        load_vessel(_write(vessel_dir, "[vessel\nname=1", "bad.toml"))
    with pytest.raises(VesselFileError, match=r"v\.toml: motion_sensor: missing required section"):
        load_vessel(_write(vessel_dir, GOOD.replace("[motion_sensor]", "[sensor]").replace("[sensor]", "")))
    with pytest.raises(VesselFileError, match=r"v\.toml: cargo = .*unknown top-level key; allowed: vessel"):
        load_vessel(_write(vessel_dir, "cargo = 1\n" + GOOD))
    small = GOOD.replace("lpp_m = 180.0", "lpp_m = 50.0").replace("beam_m = 30.0", "beam_m = 60.0")
    with pytest.raises(VesselFileError, match=r"vessel\.beam_m = 60\.0: must be smaller than lpp_m = 50"):
        load_vessel(_write(vessel_dir, small))


def test_condition_without_table_is_estimated_from_particulars(vessel_dir):
    # Falls back to estimator.hull.estimate_rao_table with the condition's particulars.
    v = load_vessel(_write(vessel_dir, GOOD))
    t = load_condition_raos(
        v,
        "ballast",
        speeds=[0.0, 5.0],
        headings=np.arange(0, 181, 30.0) * np.pi / 180,
        omegas=np.linspace(0.2, 1.6, 8),
    )
    assert isinstance(t, RAOTable)
    assert t.name == "ballast"
    assert t.headings.size == 12  # 0..180 deg mirrored to the full circle


def test_motion_sensor_frame_and_mounting(vessel_dir):
    # vessel file keys of estimator.sensorframe: acceleration frame and mounting yaw (module docstring)
    keys = 'acceleration_frame = "earth"\nmounting_yaw_deg = 90\n'
    text = GOOD.replace("z_m = 12.0\n", "z_m = 12.0\n" + keys, 1)
    s = load_vessel(_write(vessel_dir, text)).motion_sensor
    assert s.acceleration_frame == "earth" and s.mounting_yaw == pytest.approx(np.pi / 2)
    assert load_vessel(_write(vessel_dir, GOOD)).motion_sensor.acceleration_frame == "body"  # default
    bad = text.replace('"earth"', '"inertial"')
    match = r"motion_sensor\.acceleration_frame = 'inertial'.*'body' or 'earth'"
    with pytest.raises(VesselFileError, match=match):
        load_vessel(_write(vessel_dir, bad))
    # any mounting angle in [0, 360) (estimator.sensorframe module docstring); others refused with the range
    oblique = text.replace("mounting_yaw_deg = 90", "mounting_yaw_deg = 37.5")
    assert load_vessel(_write(vessel_dir, oblique)).motion_sensor.mounting_yaw == pytest.approx(np.radians(37.5))
    for value in ("360", "-10", "nan", '"port"', "true"):
        bad = text.replace("mounting_yaw_deg = 90", f"mounting_yaw_deg = {value}")
        with pytest.raises(VesselFileError, match=r"mounting_yaw_deg = .*not a mounting angle.*0 to below 360"):
            load_vessel(_write(vessel_dir, bad))
