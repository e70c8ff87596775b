"""Tests for onboard.formats.raofile: the RAO table CSV contract (docs/rao-csv.md).

Expected values come from the contract itself (column names, units deg/m for rotations, phase lead
in degrees, mirroring of 0–180° tables by port/starboard symmetry, Faltinsen 1990 ch. 7) and from
exact round trips (write → read gives the table back).
"""

import csv

import numpy as np
import pytest

from estimator.constants import KNOT
from estimator.rao import MIRROR_SIGNS, RAOTable
from onboard.formats.raofile import COLUMNS, RaoFileError, read_rao_csv, write_rao_csv

DEG = np.pi / 180.0


def _table(half=False, seed=0):
    rng = np.random.default_rng(seed)
    h = np.arange(0.0, 181.0 if half else 359.0, 30.0) * DEG
    s = np.array([0.0, 5.0, 10.0]) * KNOT
    w = np.linspace(0.2, 1.6, 8)
    v = rng.normal(size=(6, 3, h.size, 8)) + 1j * rng.normal(size=(6, 3, h.size, 8))
    if half:
        v[[1, 3, 5], :, 0] = 0.0
        v[[1, 3, 5], :, -1] = 0.0
        return RAOTable.mirrored(s, h, w, v, name="t")
    return RAOTable(s, h, w, v, name="t")


def _write_rows(path, rows, header=COLUMNS):
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)
    return path


def _good_rows(headings_deg=(0, 45, 90, 135, 180), omegas=(0.4, 0.8), speeds_kn=(0, 10)):
    rows = []
    for s in speeds_kn:
        for h in headings_deg:
            for d in ("surge", "sway", "heave", "roll", "pitch", "yaw"):
                for w in omegas:
                    amp = 0.0 if d in ("sway", "roll", "yaw") and h in (0, 180, 360) else 1.0
                    rows.append([s, h, w, d, amp, 30.0])
    return rows


def test_writer_uses_exactly_the_contract_columns(tmp_path):
    p = write_rao_csv(_table(), tmp_path / "r.csv")
    with open(p, newline="") as fh:
        header = next(csv.reader(fh))
    # docs/rao-csv.md column names, in order
    assert header == ["speed_kn", "heading_deg", "omega_rad_s", "dof", "amplitude", "phase_deg"]


@pytest.mark.parametrize("half", [False, True])
def test_round_trip_write_read(tmp_path, half):
    t = _table(half=True) if half else _table()
    p = write_rao_csv(t, tmp_path / "r.csv", half_circle=half)
    nrows = len(p.read_text().splitlines()) - 1
    # half circle: 7 headings (0..180) instead of 12; 3 speeds, 6 dofs, 8 omegas
    assert nrows == 3 * (7 if half else 12) * 6 * 8
    back = read_rao_csv(p)
    np.testing.assert_allclose(back.speeds, t.speeds, rtol=1e-11)
    np.testing.assert_allclose(back.headings, t.headings, rtol=1e-11)
    np.testing.assert_allclose(back.omegas, t.omegas, rtol=1e-11)
    np.testing.assert_allclose(back.values, t.values, rtol=1e-10, atol=1e-11)
    assert back.name == "r"


def test_writer_rejects_half_circle_for_an_asymmetric_table(tmp_path):
    with pytest.raises(RaoFileError, match="not port/starboard symmetric"):
        write_rao_csv(_table(), tmp_path / "r.csv", half_circle=True)


def test_units_and_phase_convention_when_reading(tmp_path):
    # docs/rao-csv.md: amplitude deg/m for rotations, m/m for translations; phase lead in degrees;
    # speed in knots; heading in degrees.
    rows = _good_rows()
    p = _write_rows(tmp_path / "r.csv", rows)
    t = read_rao_csv(p)
    np.testing.assert_allclose(t.speeds, [0.0, 10 * 1852 / 3600], rtol=1e-12)  # 1 kn = 1852/3600 m/s
    h = t(0.4, 90 * DEG, 10 * KNOT)
    np.testing.assert_allclose(h[2], np.exp(1j * 30 * DEG), rtol=1e-12)  # heave 1 m/m, 30 deg lead
    np.testing.assert_allclose(h[3], DEG * np.exp(1j * 30 * DEG), rtol=1e-12)  # roll 1 deg/m -> rad/m
    # 0..180 deg given: mirrored, sway/roll/yaw change sign on the port side (Faltinsen 1990 ch. 7)
    assert t.headings.size == 8
    np.testing.assert_allclose(t(0.4, 270 * DEG, 0.0), MIRROR_SIGNS * t(0.4, 90 * DEG, 0.0), rtol=1e-12)


def test_full_circle_file_is_not_mirrored(tmp_path):
    rows = _good_rows(headings_deg=tuple(range(0, 360, 45)))
    t = read_rao_csv(_write_rows(tmp_path / "r.csv", rows))
    np.testing.assert_allclose(np.rad2deg(t.headings), np.arange(0, 360, 45.0))


def test_heading_360_is_heading_0(tmp_path):
    rows = _good_rows(headings_deg=tuple(range(0, 361, 45)))
    t = read_rao_csv(_write_rows(tmp_path / "r.csv", rows))
    assert t.headings.size == 8
    bad = [r if not (r[1] == 360 and r[3] == "heave" and r[0] == 10) else r[:4] + [2.0, 30.0] for r in rows]
    with pytest.raises(
        RaoFileError, match=r"line \d+, column 'amplitude': value 2.0: heading 360 deg differs"
    ):
        read_rao_csv(_write_rows(tmp_path / "b.csv", bad))


def test_extra_columns_and_any_row_order_are_accepted(tmp_path):
    rows = _good_rows()
    rng = np.random.default_rng(5)
    shuffled = [rows[i] + ["note"] for i in rng.permutation(len(rows))]
    p = _write_rows(tmp_path / "r.csv", shuffled, header=(*COLUMNS, "comment"))
    ref = read_rao_csv(_write_rows(tmp_path / "ref.csv", rows))
    np.testing.assert_array_equal(read_rao_csv(p).values, ref.values)


def _with(rows, index, column, value):
    out = [list(r) for r in rows]
    out[index][COLUMNS.index(column)] = value
    return out


@pytest.mark.parametrize(
    ("column", "value", "match"),
    [
        ("omega_rad_s", "nan", r"line 5, column 'omega_rad_s': value 'nan': not a finite number"),
        ("amplitude", "", r"line 5, column 'amplitude': value '': not a number; allowed: a finite"),
        ("phase_deg", "abc", r"line 5, column 'phase_deg': value 'abc': not a number"),
        ("dof", "heel", r"line 5, column 'dof': value 'heel': unknown dof; allowed: surge, sway, heave"),
        ("omega_rad_s", -0.4, r"line 5, column 'omega_rad_s': value -0.4: frequency must be positive"),
        ("omega_rad_s", 0.0, r"line 5, column 'omega_rad_s': value 0.0: frequency must be positive"),
        ("speed_kn", -1, r"line 5, column 'speed_kn': value -1.0: negative speed; allowed: speed_kn >= 0"),
        ("heading_deg", 400, r"line 5, column 'heading_deg': value 400.0: heading outside 0..360"),
        ("amplitude", -0.5, r"line 5, column 'amplitude': value -0.5: negative amplitude"),
    ],
)
def test_bad_cells_name_file_line_column_value(tmp_path, column, value, match):
    p = _write_rows(tmp_path / "bad.csv", _with(_good_rows(), 3, column, value))
    with pytest.raises(RaoFileError, match=r"bad\.csv, " + match):
        read_rao_csv(p)


def test_missing_columns_and_empty_file(tmp_path):
    header = [c for c in COLUMNS if c != "phase_deg"]
    p = _write_rows(tmp_path / "h.csv", [[0, 0, 0.4, "heave", 1.0]], header=header)
    with pytest.raises(RaoFileError, match=r"h\.csv, line 1: .*missing column\(s\) phase_deg"):
        read_rao_csv(p)
    (tmp_path / "e.csv").write_text("")
    with pytest.raises(RaoFileError, match=r"e\.csv, line 1: file is empty"):
        read_rao_csv(tmp_path / "e.csv")
    p = _write_rows(tmp_path / "n.csv", [])
    with pytest.raises(RaoFileError, match=r"n\.csv: no data rows"):
        read_rao_csv(p)
    with pytest.raises(RaoFileError, match=r"nope\.csv: cannot open RAO table"):
        read_rao_csv(tmp_path / "nope.csv")


def test_short_row(tmp_path):
    rows = _good_rows()
    rows[2] = rows[2][:4]
    with pytest.raises(RaoFileError, match=r"line 4, .*row has 4 cells, the header has 6"):
        read_rao_csv(_write_rows(tmp_path / "s.csv", rows))


def test_duplicate_rows_name_both_lines(tmp_path):
    rows = _good_rows()
    rows.append(list(rows[6]))
    n = len(rows) + 1
    with pytest.raises(RaoFileError, match=rf"line {n}: duplicate of line 8 \(same speed_kn, heading_deg"):
        read_rao_csv(_write_rows(tmp_path / "d.csv", rows))


def test_frequency_sets_must_agree_between_blocks(tmp_path):
    rows = _good_rows()
    # the heave block at 10 kn, 90 deg lists 0.5 rad/s instead of 0.8 rad/s
    rows = [
        r if not (r[0] == 10 and r[1] == 90 and r[3] == "heave" and r[2] == 0.8) else r[:2] + [0.5] + r[3:]
        for r in rows
    ]
    with pytest.raises(
        RaoFileError,
        match=r"incomplete table: no row for dof \w+ at speed_kn 0, heading_deg 0, "
        r"omega_rad_s 0.5 .*same set of omega_rad_s values",
    ):
        read_rao_csv(_write_rows(tmp_path / "f.csv", rows))


def test_heading_gap_is_reported_with_the_allowed_maximum(tmp_path):
    rows = _good_rows(headings_deg=(0, 30, 60, 90, 180, 210, 240, 270, 300, 330))
    with pytest.raises(
        RaoFileError,
        match=r"column 'heading_deg': .*gap of 90 deg between 90 and 180 deg; "
        r"the largest allowed gap is 45 deg",
    ):
        read_rao_csv(_write_rows(tmp_path / "g.csv", rows))
    # a half table with a hole is also caught after mirroring
    rows = _good_rows(headings_deg=(0, 30, 60, 90, 180))
    with pytest.raises(RaoFileError, match=r"gap of 90 deg between 90 and 180 deg"):
        read_rao_csv(_write_rows(tmp_path / "g2.csv", rows))


# ------------------------------------------------------------------- plausibility checks at load
# (estimator.raocheck; long-wave limits of Newman 1977 §6.17: heave -> 1, pitch -> i k cos(beta))


def _long_wave_rows(pitch_scale=1.0, pitch_phase_sign=1.0, heave_amp=1.0):
    """A small physically plausible table: the analytic long-wave limits at every point."""
    rows = []
    for s in (0, 10):
        for h in range(0, 181, 30):
            b = h * DEG
            for w in (0.2, 0.3):
                k = w * w / 9.81
                vals = {
                    "surge": -1j * np.cos(b), "sway": -1j * np.sin(b), "heave": heave_amp + 0j,
                    "roll": -1j * k * np.sin(b), "pitch": 1j * k * np.cos(b) * pitch_phase_sign, "yaw": 0j,
                }
                for d, x in vals.items():
                    amp = abs(x) * (np.rad2deg(1.0) if d in ("roll", "pitch", "yaw") else 1.0)
                    if d == "pitch":
                        amp *= pitch_scale
                    rows.append([s, h, w, d, f"{amp:.9g}", f"{np.rad2deg(np.angle(x)):.6g}"])
    return rows


def test_demo_tables_pass_the_checks():
    # the bundled demo tables (config/raos) through the vessel loader, which checks them
    from pathlib import Path

    from onboard.formats.vessel import load_condition_raos, load_vessel

    vessel = load_vessel(Path(__file__).parents[2] / "config" / "demo_vessel.toml")
    for c in vessel.conditions:
        assert load_condition_raos(vessel, c).values.shape[0] == 6


def test_plausible_table_passes_and_checks_are_off_by_default(tmp_path):
    p = _write_rows(tmp_path / "ok.csv", _long_wave_rows())
    read_rao_csv(p, check=True, lpp=100.0)
    bad = _write_rows(tmp_path / "bad.csv", _long_wave_rows(heave_amp=1000.0))
    read_rao_csv(bad)  # the format alone is fine


def test_pitch_in_radians_names_file_line_dof_and_cause(tmp_path):
    p = _write_rows(tmp_path / "rad.csv", _long_wave_rows(pitch_scale=np.pi / 180.0))
    with pytest.raises(RaoFileError) as ei:
        read_rao_csv(p, check=True, lpp=100.0)
    msg = str(ei.value)
    assert "rad.csv, line " in msg and "dof pitch" in msg and "speed_kn" in msg and "heading_deg" in msg
    assert "omega_rad_s 0.2" in msg and "rad/m" in msg and "\n" not in msg
    line = int(msg.split(", line ")[1].split(":")[0])
    row = p.read_text().splitlines()[line - 1].split(",")
    assert row[3] == "pitch" and float(row[2]) == 0.2  # the line named is the row with that value


def test_heave_1000_is_refused_at_load(tmp_path):
    p = _write_rows(tmp_path / "h.csv", _long_wave_rows(heave_amp=1000.0))
    with pytest.raises(RaoFileError, match=r"h\.csv, line \d+: .*bounds check: dof heave.*1000 m/m"):
        read_rao_csv(p, check=True, lpp=100.0)


def test_pitch_sign_names_the_mirrored_heading(tmp_path):
    p = _write_rows(tmp_path / "s.csv", _long_wave_rows(pitch_phase_sign=-1.0))
    with pytest.raises(RaoFileError, match=r"dof pitch.*phase_deg.*expected.*likely cause: pitch sign"):
        read_rao_csv(p, check=True, lpp=100.0)
