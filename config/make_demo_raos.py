"""Regenerate the RAO tables of the invented demo vessel (config/demo_vessel.toml).

Every loading condition of the vessel file that names a ``rao_table`` gets a CSV (docs/rao-csv.md)
estimated from the ship's main particulars with
:func:`estimator.hull.estimate_rao_table` (JMO 2004 heave and pitch, 1-DOF roll with the given
roll period, damping ratio and IS Code effective wave slope from KG, Froude-Krylov surge, sway and
yaw) on the grid below, written by :func:`onboard.formats.raofile.write_rao_csv` on headings 0-180 deg
(readers mirror them to the full circle). The output is deterministic: running the script again
reproduces the files byte for byte.

Usage (from the repository root, in the project's virtual environment)::

    python config/make_demo_raos.py           # (re)write the CSV files
    python config/make_demo_raos.py --check   # compare the files on disk with a fresh estimate

The data are invented for demonstration; they are not the RAOs of any real ship.
"""

from __future__ import annotations

import argparse
import sys
import tomllib
from pathlib import Path

import numpy as np

from estimator.constants import KNOT
from estimator.hull import estimate_rao_table
from onboard.formats.raofile import read_rao_csv, write_rao_csv
from onboard.formats.vessel import load_vessel

HERE = Path(__file__).resolve().parent
VESSEL_FILE = HERE / "demo_vessel.toml"

SPEEDS_KN = np.array([0.0, 3.0, 6.0, 9.0, 12.0, 15.0, 18.0, 22.0])
"""Tabulated speeds through water [kn], up to the vessel's max_speed_kn."""

HEADINGS_DEG = np.arange(0.0, 180.0 + 1e-9, 15.0)
"""Relative wave headings beta (ITTC, 180 = head seas) [deg]; mirrored to 360 on reading."""

OMEGAS = np.round(np.concatenate([np.linspace(0.20, 0.60, 27), np.linspace(0.65, 2.00, 19)]), 6)
"""Wave frequencies [rad/s]: 0.0154 rad/s steps up to 0.6 rad/s, where the roll resonances of the
two conditions lie (0.31 and 0.46 rad/s at zero speed, half-power width about 2 zeta omega = 0.03
and 0.05 rad/s), then 0.075 rad/s steps up to 2.0 rad/s; 46 values."""


def build_tables(vessel_file: Path = VESSEL_FILE) -> dict[Path, object]:
    """Estimate the RAO table of every condition with a ``rao_table`` key.

    Returns
    -------
    dict
        {absolute CSV path: estimator.rao.RAOTable}.
    """
    with open(vessel_file, "rb") as fh:
        doc = tomllib.load(fh)
    ship = doc["vessel"]
    tables = {}
    for cond in doc["conditions"]:
        if "rao_table" not in cond:
            continue
        table = estimate_rao_table(
            ship["lpp_m"],
            ship["beam_m"],
            cond["draft_m"],
            cond["block_coefficient"],
            cond["gm_m"],
            speeds=SPEEDS_KN * KNOT,
            headings=np.radians(HEADINGS_DEG),
            omegas=OMEGAS,
            t_roll=cond["roll_period_s"],
            zeta_roll=cond["roll_damping_ratio"],
            kg=cond["kg_m"],
            lwl=cond["lwl_m"],
            name=cond["name"],
        )
        tables[(vessel_file.parent / cond["rao_table"]).resolve()] = table
    return tables


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="compare the files with a fresh estimate")
    args = parser.parse_args(argv)
    tables = build_tables()
    status = 0
    for path, table in tables.items():
        rel = path.relative_to(HERE)
        if args.check:
            stored = read_rao_csv(path)
            same = (
                np.allclose(stored.speeds, table.speeds, rtol=1e-9)
                and np.allclose(stored.headings, table.headings, atol=1e-9)
                and np.allclose(stored.omegas, table.omegas, rtol=1e-9)
                and np.allclose(stored.values, table.values, rtol=1e-9, atol=1e-12)
            )
            print(f"{rel}: {'matches' if same else 'DIFFERS FROM'} a fresh estimate")
            status |= 0 if same else 1
        else:
            path.parent.mkdir(parents=True, exist_ok=True)
            write_rao_csv(table, path, half_circle=True)
            print(f"{rel}: {path.stat().st_size / 1e6:.2f} MB, {table.source}")
    # the vessel file must read cleanly with the tables in place (onboard.formats.vessel validation)
    vessel = load_vessel(VESSEL_FILE)
    counts = f"{len(vessel.conditions)} conditions, {len(vessel.points)} points"
    print(f"{VESSEL_FILE.name}: {vessel.name!r}, {counts}")
    return status


if __name__ == "__main__":
    sys.exit(main())
