"""Tests for onboard.raofile: the RAO table CSV contract (interfaces.md §3).

Expected values come from the contract itself (column names, units deg/m for rotations, phase lead
in degrees, mirroring of 0–180° tables by port/starboard symmetry, Faltinsen 1990 ch. 7) and from
exact round trips (write → read gives the table back).
"""

import csv

import numpy as np
import pytest

from estimator.constants import KNOT
from estimator.rao import MIRROR_SIGNS, RAOTable
from onboard.raofile import COLUMNS, RaoFileError, read_rao_csv, write_rao_csv

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
                    amp = 0.0 if d in ("sway", "roll", "yaw") and h in (0, 180) else 1.0
                    rows.append([s, h, w, d, amp, 30.0])
    return rows


def test_writer_uses_exactly_the_contract_columns(tmp_path):
    p = write_rao_csv(_table(), tmp_path / "r.csv")
    with open(p, newline="") as fh:
        header = next(csv.reader(fh))
    # interfaces.md §3 column names, in order
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
    # interfaces.md §3: amplitude deg/m for rotations, m/m for translations; phase lead in degrees;
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
