"""Read and write RAO tables as CSV (docs/rao-csv.md).

One row per (speed, heading, frequency, motion) with exactly these columns::

    speed_kn, heading_deg, omega_rad_s, dof, amplitude, phase_deg

* ``speed_kn`` ship speed through water [kn];
* ``heading_deg`` relative wave heading β, ITTC (180 = head seas, 0 = following, 90 = waves from
  starboard) [deg], in [0, 360]; 360 is the same heading as 0;
* ``omega_rad_s`` absolute wave frequency [rad/s], > 0;
* ``dof`` one of surge, sway, heave, roll, pitch, yaw (ITTC axes, motions of the body-axis origin);
* ``amplitude`` [m/m] for surge/sway/heave, [deg/m] for roll/pitch/yaw, ≥ 0;
* ``phase_deg`` phase lead relative to the wave elevation at the origin [deg].

Reading rules: the header must hold the six columns (extra columns are ignored); rows may come in
any order; every (speed, heading, dof) must list the same set of frequencies and every speed the
same headings; no duplicates; headings within 0–180° only mean a port/starboard symmetric ship and
are mirrored (sway, roll and yaw change sign on the mirrored side); otherwise the headings must
cover the circle with no gap above 45° (:data:`estimator.rao.MAX_HEADING_GAP`).

The complex RAO inside is amplitude·exp(i·phase) with rotations in rad/m (docs/conventions.md).
"""

from __future__ import annotations

import csv
import logging
import math
from pathlib import Path

import numpy as np

from estimator.constants import DOFS
from estimator.rao import MAX_HEADING_GAP, RAOTable, RAOTableError, long_to_dense
from estimator.raocheck import check_rao_table
from onboard.formats.units import kn_to_ms, ms_to_kn

__all__ = ["COLUMNS", "RaoFileError", "check_table", "read_rao_csv", "write_rao_csv"]

log = logging.getLogger(__name__)

COLUMNS = ("speed_kn", "heading_deg", "omega_rad_s", "dof", "amplitude", "phase_deg")
"""Column names of an RAO table file, in the order written (docs/rao-csv.md)."""

_ROTATIONS = {"roll", "pitch", "yaw"}
_NUMERIC = ("speed_kn", "heading_deg", "omega_rad_s", "amplitude", "phase_deg")


class RaoFileError(ValueError):
    """An RAO table file is malformed; the message names file, line, column and value."""


def _fail(path, line, column, value, problem, allowed) -> RaoFileError:
    where = f"{path}"
    if line is not None:
        where += f", line {line}"
    if column is not None:
        where += f", column '{column}'"
    val = "" if value is None else f": value {value!r}"
    return RaoFileError(f"{where}{val}: {problem}; allowed: {allowed}")


def read_rao_csv(
    path, *, name: str | None = None, check: bool = False, lpp: float | None = None,
    t_roll: float | None = None
) -> RAOTable:
    """Read an RAO table CSV (docs/rao-csv.md) into an :class:`estimator.rao.RAOTable`.

    Parameters
    ----------
    path : str or os.PathLike
        The CSV file.
    name : str, optional
        Table name (default: the file stem).
    check : bool
        Also run the plausibility checks of :func:`estimator.raocheck.check_rao_table` (bounds per
        dof, long-wave limits, rotation units, sign and phase conventions, port/starboard
        symmetry); the first error is raised naming file, line, dof, speed, heading, frequency,
        value and likely cause; warnings are logged.
    lpp, t_roll : float, optional
        Ship length [m] and natural roll period [s] for the checks (see ``check_rao_table``).

    Returns
    -------
    RAOTable
        Speeds [m/s], headings [rad] over the full circle (mirrored if the file gives 0–180°),
        frequencies [rad/s], complex values with rotations in rad/m.

    Raises
    ------
    RaoFileError
        Naming the file, the line (1 = header), the column and the offending value, and what is
        allowed: missing file or columns, a blank/NaN/non-numeric cell, unknown dof, negative
        speed, heading outside 0–360°, frequency ≤ 0, negative amplitude, duplicate rows,
        frequency sets that differ between blocks, heading gaps above 45°; with ``check``, a table
        that fails a plausibility check.
    """
    path = Path(path)
    try:
        fh = open(path, newline="", encoding="utf-8-sig")  # noqa: SIM115
    except OSError as exc:
        raise RaoFileError(f"{path}: cannot open RAO table: {exc.strerror or exc}") from exc
    with fh:
        reader = csv.reader(fh)
        try:
            header = next(reader)
        except StopIteration:
            raise _fail(
                path, 1, None, None, "file is empty, expected a header row", ", ".join(COLUMNS)
            ) from None
        header = [h.strip() for h in header]
        missing = [c for c in COLUMNS if c not in header]
        if missing:
            raise _fail(
                path,
                1,
                None,
                ",".join(header),
                f"missing column(s) {', '.join(missing)}",
                "a header with " + ", ".join(COLUMNS),
            )
        dupcols = sorted({c for c in COLUMNS if header.count(c) > 1})
        if dupcols:
            raise _fail(path, 1, dupcols[0], None, "column appears more than once", "each column once")
        col = {c: header.index(c) for c in COLUMNS}
        ncol = len(header)
        nums = {c: [] for c in _NUMERIC}
        dofs: list[int] = []
        lines: list[int] = []
        for row in reader:
            line = reader.line_num
            if not row or all(not cell.strip() for cell in row):
                continue  # blank line
            if len(row) < ncol:
                raise _fail(
                    path,
                    line,
                    COLUMNS[0],
                    ",".join(row),
                    f"row has {len(row)} cells, the header has {ncol}",
                    "one cell per header column",
                )
            for c in _NUMERIC:
                text = row[col[c]].strip()
                try:
                    x = float(text)
                except ValueError:
                    raise _fail(path, line, c, text, "not a number", "a finite decimal number") from None
                if not math.isfinite(x):
                    raise _fail(path, line, c, text, "not a finite number", "a finite decimal number")
                nums[c].append(x)
            d = row[col["dof"]].strip().lower()
            if d not in DOFS:
                raise _fail(path, line, "dof", row[col["dof"]], "unknown dof", ", ".join(DOFS))
            dofs.append(DOFS.index(d))
            lines.append(line)
    if not lines:
        raise _fail(
            path, None, None, None, "no data rows", "at least one row per speed, heading, frequency, dof"
        )
    arr = {c: np.asarray(v) for c, v in nums.items()}
    lines_a = np.asarray(lines)
    dof_a = np.asarray(dofs)

    def refuse(mask, column, problem, allowed):
        if np.any(mask):
            i = int(np.nonzero(mask)[0][0])
            raise _fail(path, int(lines_a[i]), column, float(arr[column][i]), problem, allowed)

    refuse(arr["speed_kn"] < 0, "speed_kn", "negative speed", "speed_kn >= 0")
    refuse(
        (arr["heading_deg"] < 0) | (arr["heading_deg"] > 360),
        "heading_deg",
        "heading outside 0..360 deg",
        "0 <= heading_deg <= 360 (ITTC: 180 = head seas)",
    )
    refuse(arr["omega_rad_s"] <= 0, "omega_rad_s", "frequency must be positive", "omega_rad_s > 0 [rad/s]")
    refuse(arr["amplitude"] < 0, "amplitude", "negative amplitude", "amplitude >= 0 (sign goes in phase_deg)")

    heading = arr["heading_deg"].copy()
    at360 = np.isclose(heading, 360.0, rtol=0, atol=1e-9)
    if np.any(at360):
        heading[at360] = 0.0
        has_zero = np.any(np.isclose(arr["heading_deg"], 0.0, rtol=0, atol=1e-9))
        if has_zero:
            # Both 0 and 360 given: they are the same heading; keep the 0 rows, drop 360.
            keep = ~at360
            check_dup_360 = _same_values_360(arr, dof_a, at360)
            if check_dup_360 is not None:
                i = check_dup_360
                raise _fail(
                    path,
                    int(lines_a[i]),
                    "amplitude",
                    float(arr["amplitude"][i]),
                    "heading 360 deg differs from the row for heading 0 deg (the same heading)",
                    "equal values at 0 and 360 deg, or only one of them",
                )
            arr = {c: v[keep] for c, v in arr.items()}
            heading = heading[keep]
            dof_a = dof_a[keep]
            lines_a = lines_a[keep]

    amp = arr["amplitude"].copy()
    rot = np.isin(dof_a, [DOFS.index(d) for d in _ROTATIONS])
    amp[rot] = np.deg2rad(amp[rot])
    value = amp * np.exp(1j * np.deg2rad(arr["phase_deg"]))
    try:
        speeds, headings, omegas, values = long_to_dense(
            kn_to_ms(arr["speed_kn"]), np.deg2rad(heading), arr["omega_rad_s"], dof_a, value
        )
    except RAOTableError as exc:
        rows = getattr(exc, "rows", ())
        if hasattr(exc, "missing"):
            d, s, h, w = exc.missing
            block = ", ".join(str(int(lines_a[r])) for r in rows[:5]) or "none"
            raise RaoFileError(
                f"{path}: incomplete table: no row for dof {d} at speed_kn {float(ms_to_kn(s)):.6g}, "
                f"heading_deg {np.rad2deg(h):.6g}, omega_rad_s {w:.6g} (lines of that block: {block}); "
                f"allowed: every speed, heading and dof with the same set of omega_rad_s values"
            ) from None
        if len(rows) == 2:
            a, b = (int(lines_a[r]) for r in rows)
            raise RaoFileError(
                f"{path}, line {b}: duplicate of line {a} (same speed_kn, heading_deg, omega_rad_s, dof "
                f"{DOFS[dof_a[rows[0]]]}); allowed: one row per speed, heading, frequency and dof"
            ) from None
        raise RaoFileError(f"{path}: {exc}") from None
    half = headings[-1] <= np.pi + 1e-9
    line_of = {
        (round(float(s_), 6), round(float(h_) % 360.0, 6), round(float(w_), 9), int(d_)): int(n_)
        for s_, h_, w_, d_, n_ in zip(
            arr["speed_kn"], heading, arr["omega_rad_s"], dof_a, lines_a, strict=True
        )
    }
    try:
        table = RAOTable.from_arrays(
            speeds,
            headings,
            omegas,
            values,
            mirror=half,
            name=path.stem if name is None else name,
            source=str(path.name),
        )
    except RAOTableError as exc:
        raise RaoFileError(
            f"{path}, column 'heading_deg': {exc}"
            + ("" if half else f" (largest gap allowed {np.rad2deg(MAX_HEADING_GAP):.0f} deg)")
        ) from None
    if check:
        check_table(table, path, line_of=line_of, lpp=lpp, t_roll=t_roll)
    return table


def _finding_text(path, f, line_of) -> str:
    """One line naming file, line, dof, speed, heading, frequency, value, expectation and cause."""
    s_kn = float(ms_to_kn(f.speed))
    h_deg = float(np.rad2deg(f.heading)) % 360.0
    di = DOFS.index(f.dof)
    where = f"{path}"
    mirrored = ""
    if line_of is not None:
        line = line_of.get((round(s_kn, 6), round(h_deg, 6), round(f.omega, 9), di))
        if line is None:  # a heading mirrored from a 0..180 deg table
            line = line_of.get((round(s_kn, 6), round((360.0 - h_deg) % 360.0, 6), round(f.omega, 9), di))
            mirrored = f" (mirrored from heading_deg {(360.0 - h_deg) % 360.0:.6g})"
        if line is not None:
            where += f", line {line}"
    unit = "deg/m" if f.dof in _ROTATIONS else "m/m"
    scale = float(np.rad2deg(1.0)) if f.dof in _ROTATIONS else 1.0

    def amp_phase(x):
        return f"amplitude {abs(x) * scale:.4g} {unit}, phase_deg {np.rad2deg(np.angle(x)):.0f}"

    exp = "" if f.expected is None else f", expected about {amp_phase(f.expected)}"
    return (
        f"{where}: RAO table fails the {f.check} check: dof {f.dof}, speed_kn {s_kn:.4g}, heading_deg "
        f"{h_deg:.4g}{mirrored}, omega_rad_s {f.omega:.4g}: {amp_phase(f.value)}{exp}; {f.problem}; "
        f"likely cause: {f.cause}"
    )


def check_table(table: RAOTable, path, *, line_of=None, lpp=None, t_roll=None):
    """Run :func:`estimator.raocheck.check_rao_table` on ``table`` read from ``path``.

    Raises
    ------
    RaoFileError
        The first error (one line: file, line, dof, speed, heading, frequency, value, expected
        value, likely cause) and how many more failed. Warnings are logged, not raised.

    Returns
    -------
    estimator.raocheck.RaoCheckReport
    """
    report = check_rao_table(table, lpp=lpp, t_roll=t_roll)
    for f in report.warnings:
        log.warning("%s", _finding_text(path, f, line_of))
    if report.errors:
        more = len(report.errors) - 1
        raise RaoFileError(
            _finding_text(path, report.errors[0], line_of)
            + (f" ({more} more check(s) failed)" if more else "")
            + "; allowed: a table in the conventions of docs/conventions.md and docs/rao-csv.md"
        )
    return report


def _same_values_360(arr, dof_a, at360):
    """Index of the first 360° row whose value differs from the matching 0° row, else None."""
    zero = np.isclose(arr["heading_deg"], 0.0, rtol=0, atol=1e-9)
    key0 = {
        (round(arr["speed_kn"][i], 9), round(arr["omega_rad_s"][i], 9), int(dof_a[i])): i
        for i in np.nonzero(zero)[0]
    }
    for i in np.nonzero(at360)[0]:
        j = key0.get((round(arr["speed_kn"][i], 9), round(arr["omega_rad_s"][i], 9), int(dof_a[i])))
        if j is None:
            continue
        a = arr["amplitude"][i] * np.exp(1j * np.deg2rad(arr["phase_deg"][i]))
        b = arr["amplitude"][j] * np.exp(1j * np.deg2rad(arr["phase_deg"][j]))
        if not np.isclose(a, b, rtol=1e-6, atol=1e-9):
            return int(i)
    return None


def _fmt(x: float) -> str:
    text = f"{x:.12g}"
    return "0" if text == "-0" else text


def write_rao_csv(table: RAOTable, path, *, half_circle: bool = False) -> Path:
    """Write an RAO table as CSV with exactly the docs/rao-csv.md columns.

    Rows are ordered by speed, heading, dof (DOFS order), frequency. Numbers carry 12 significant
    digits; phases are written in (−180°, 180°].

    Parameters
    ----------
    table : RAOTable
        The table (SI inside).
    path : str or os.PathLike
        Output file (overwritten).
    half_circle : bool
        Write only the headings 0–180° (the reader mirrors them back). Allowed only when the
        table is port/starboard symmetric (:meth:`RAOTable.is_symmetric`).

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    RaoFileError
        ``half_circle=True`` for a table that is not symmetric.
    """
    path = Path(path)
    headings = table.headings
    hsel = np.arange(headings.size)
    if half_circle:
        if not table.is_symmetric():
            raise RaoFileError(
                f"{path}: cannot write table {table.name!r} on 0..180 deg: it is not port/starboard "
                f"symmetric; allowed: half_circle=False for asymmetric tables"
            )
        hsel = np.nonzero(headings <= np.pi + 1e-9)[0]
    speeds_kn = ms_to_kn(table.speeds)
    with open(path, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(COLUMNS)
        for si, s_kn in enumerate(speeds_kn):
            for hi in hsel:
                h_deg = float(np.rad2deg(headings[hi]))
                for di, dof in enumerate(DOFS):
                    vals = table.values[di, si, hi]
                    amp = np.abs(vals)
                    if dof in _ROTATIONS:
                        amp = np.rad2deg(amp)
                    ph = np.rad2deg(np.angle(vals))
                    ph = np.where(ph <= -180.0, ph + 360.0, ph)
                    for wi, om in enumerate(table.omegas):
                        w.writerow((_fmt(s_kn), _fmt(h_deg), _fmt(om), dof, _fmt(amp[wi]), _fmt(ph[wi])))
    return path
