"""Tests for onboard.formats.voyagelog: rolling crash-safe writer and validating streaming reader."""

from __future__ import annotations

import csv
import gzip
import math

import numpy as np
import pandas as pd
import pytest

from onboard.formats.messages import COLUMNS
from onboard.formats.voyagelog import VoyageLogError, VoyageLogWriter, read_voyage_log, repair_csv

T0 = 1_772_366_400_000  # 2026-03-01T12:00:00Z [ms]


def motion_rows(n, *, start=T0, dt_ms=100, roll_amp=5.0, heave_amp=1.5):
    out = []
    for i in range(n):
        ph = 2 * math.pi * i * dt_ms / 1000 / 10.0  # 10 s motion period
        out.append(
            (
                start + i * dt_ms,
                {
                    "roll_deg": roll_amp * math.sin(ph),
                    "pitch_deg": 0.5 * roll_amp * math.cos(ph),
                    "heave_m": heave_amp * math.sin(ph + 0.3),
                    "heading_deg": 245.0,
                    "stw_kn": 12.5,
                },
            )
        )
    return out


def write_csv(path, header, lines):
    path.write_text(",".join(header) + "\n" + "".join(line + "\n" for line in lines))
    return path


BASE_HEADER = ["time_utc", "roll_deg", "pitch_deg", "heave_m", "heading_deg", "stw_kn"]


def good_lines(n=5, start_s=0):
    return [f"2026-03-01T12:00:{start_s + i:02d}Z,1.0,0.5,0.2,10.0,12.0" for i in range(n)]


# ------------------------------------------------------------------------------------------------ writer


@pytest.mark.parametrize("compress", [False, True])
def test_write_read_round_trip_exact_columns(tmp_path, compress):
    rows = motion_rows(50)
    rows[3][1]["lat_deg"] = 48.123456789
    with VoyageLogWriter(tmp_path, compress=compress) as w:
        assert w.write_rows(rows[:20]) == 20
        assert w.write_rows(rows[20:]) == 30
    files = w.files()
    assert [p.name for p in files] == ["voyage_20260301T12Z" + (".csv.gz" if compress else ".csv")]
    opener = gzip.open if compress else open
    with opener(files[0], "rt") as f:
        header = next(csv.reader(f))
    assert header == list(COLUMNS)  # docs/voyage-log.md, exactly and in order
    df = read_voyage_log(files[0]).read_all()
    assert len(df) == 50 and list(df.columns) == list(COLUMNS)
    assert df["time_utc"].iloc[1] == pd.Timestamp("2026-03-01T12:00:00.100Z")
    np.testing.assert_allclose(df["roll_deg"], [r[1]["roll_deg"] for r in rows], atol=5e-6)  # 5 decimals
    assert df["lat_deg"].iloc[3] == pytest.approx(48.1234568, abs=1e-9)  # 7 decimals
    assert df["lat_deg"].isna().sum() == 49 and df["acc_x_ms2"].isna().all()  # blank = NaN


def test_rolls_per_hour_and_per_day(tmp_path):
    rows = [
        (T0 + k * 1_800_000, {"roll_deg": 1.0, "pitch_deg": 1.0, "heading_deg": 1.0, "stw_kn": 1.0})
        for k in range(6)
    ]  # every 30 min for 3 h
    with VoyageLogWriter(tmp_path / "h") as w:
        w.write_rows(rows)
    assert [p.name for p in w.files()] == [
        "voyage_20260301T12Z.csv",
        "voyage_20260301T13Z.csv",
        "voyage_20260301T14Z.csv",
    ]
    with VoyageLogWriter(tmp_path / "d", period="day", prefix="ship") as w:
        w.write_rows(rows)
    assert [p.name for p in w.files()] == ["ship_20260301.csv"]
    assert len(read_voyage_log(tmp_path / "h").read_all()) == 6  # a directory reads as one log


def test_writer_keeps_files_sorted_and_unique(tmp_path):
    with VoyageLogWriter(tmp_path) as w:
        w.write_rows(motion_rows(10))
        assert w.write_rows(motion_rows(3, start=T0 + 500)) == 0  # older than written: dropped
        assert w.rejected_unsorted == 3
    assert len(read_voyage_log(tmp_path).read_all()) == 10


def test_crash_partial_line_repaired_on_restart(tmp_path):
    w = VoyageLogWriter(tmp_path, fsync=False)
    w.write_rows(motion_rows(10))
    path = w.current_path
    w._file.write(b"2026-03-01T12:00:01.000Z,1.2,0.")  # the crash hits mid-row
    w._file.close()  # the process is gone; the OS closes the file
    w._file = None
    # the damaged file still reads: the partial last line is skipped and reported
    r = read_voyage_log(path)
    assert len(r.read_all()) == 10
    assert r.report.skipped_rows == 1 and "no line end" in r.report.problems[0]
    w2 = VoyageLogWriter(tmp_path)  # restart: knows the last time, cuts the partial line, appends
    assert w2.last_time_ms() == T0 + 900
    w2.write_rows(motion_rows(10, start=T0 + 500) + motion_rows(5, start=T0 + 2000))
    w2.close()
    r = read_voyage_log(path)
    df = r.read_all()
    assert len(df) == 20 and not r.report.damaged  # 10 + 5 newer of the overlap + 5
    assert repair_csv(path) == 0


def test_truncated_gzip_reads_what_it_can(tmp_path):
    with VoyageLogWriter(tmp_path, compress=True) as w:
        for k in range(5):
            w.write_rows(motion_rows(100, start=T0 + k * 10_000))
    path = w.files()[0]
    data = path.read_bytes()
    path.write_bytes(data[: len(data) - 300])  # crash while writing the last gzip member
    r = read_voyage_log(path)
    df = r.read_all()
    assert 400 <= len(df) < 500  # every complete member survives
    assert r.report.damaged and any("damaged" in p or "skipped" in p for p in r.report.problems)
    assert pd.DatetimeIndex(df["time_utc"]).is_monotonic_increasing
    w2 = VoyageLogWriter(tmp_path, compress=True)  # restart: a new part, never behind the damage
    assert w2.last_time_ms() == int(df["time_utc"].iloc[-1].value // 1_000_000)
    w2.write_rows(motion_rows(10, start=T0 + 60_000))
    w2.close()
    assert w2.current_path.name == "voyage_20260301T12Z_part2.csv.gz"


def test_garbage_gzip_is_reported_not_crashing(tmp_path):
    p = tmp_path / "x.csv.gz"
    p.write_bytes(
        gzip.compress(("\n".join([",".join(BASE_HEADER), *good_lines(3)]) + "\n").encode())
        + b"\x1f\x8b\x08garbage"
    )
    r = read_voyage_log(p)
    assert len(r.read_all()) == 3 and r.report.damaged


# ------------------------------------------------------------------------------------------------ reader


def test_reader_formats_parquet_and_extra_columns(tmp_path):
    t = pd.date_range("2026-03-01T12:00:00Z", periods=30, freq="100ms")
    df = pd.DataFrame(
        {
            "time_utc": t,
            "roll_deg": 1.0,
            "heave_m": 0.5,
            "heading_deg": 100.0,
            "stw_kn": 10.0,
            "engine_rpm": 80.0,
        }
    )
    df.to_parquet(tmp_path / "log.parquet")
    out = read_voyage_log(tmp_path / "log.parquet", chunk_rows=7).read_all()
    assert len(out) == 30 and "engine_rpm" in out  # unknown columns kept
    assert str(out["time_utc"].dtype) == "datetime64[ns, UTC]"
    naive = df.assign(time_utc=t.tz_localize(None))
    naive.to_parquet(tmp_path / "naive.parquet")
    assert read_voyage_log(tmp_path / "naive.parquet").read_all()["time_utc"].iloc[0] == t[0]  # taken as UTC


def test_reader_chunks_and_times(tmp_path):
    lines = [f"2026-03-01T13:00:{i:02d}+01:00,{i},,0.2,10,12,note {i}" for i in range(25)]
    p = write_csv(tmp_path / "a.csv", [*BASE_HEADER, "remark"], lines)
    chunks = list(read_voyage_log(p, chunk_rows=10))
    assert [len(c) for c in chunks] == [10, 10, 5]
    df = pd.concat(chunks)
    assert df["time_utc"].iloc[0] == pd.Timestamp("2026-03-01T12:00:00Z")  # offset converted to UTC
    assert df["pitch_deg"].isna().all() and df["remark"].iloc[3] == "note 3"


@pytest.mark.parametrize(
    "header, lines, match",
    [
        (
            ["time_utc", "roll_deg", "heading_deg", "stw_kn"],
            [],
            r"at least two of roll_deg, pitch_deg, heave_m",
        ),
        (["roll_deg", "pitch_deg", "stw_kn", "heading_deg"], [], r"missing required column\(s\): time_utc"),
        ([*BASE_HEADER, "roll_deg"], [], "roll_deg appear more than once"),
        (
            BASE_HEADER,
            [*good_lines(3), "2026-03-01T12:00:01Z,1,1,1,1,1"],
            r"column 'time_utc', row 4 \(line 5\): time 2026-03-01T12:00:01\+00:00 is earlier",
        ),
        (BASE_HEADER, [*good_lines(3), "2026-03-01T12:00:02Z,1,1,1,1,1"], r"row 4 .* is duplicated"),
        (
            BASE_HEADER,
            ["2026-03-01T12:00:00Z,1,1,1,360.5,12"],
            r"column 'heading_deg', row 1 \(line 2\): value 360.5 is outside .* \[0, 360\]",
        ),
        (BASE_HEADER, ["2026-03-01T12:00:00Z,1,1,1,10,45.5"], r"column 'stw_kn', row 1.*45.5.*km/h or m/s"),
        (
            BASE_HEADER,
            ["2026-03-01T12:00:00Z,1,abc,1,10,12"],
            r"column 'pitch_deg', row 1 \(line 2\): value 'abc'",
        ),
        (BASE_HEADER, ["12:00:00,1,1,1,10,12"], r"column 'time_utc', row 1 .*'12:00:00' is not an ISO 8601"),
        (BASE_HEADER, ["2026-03-01T12:00:00Z,120,1,1,10,12"], r"roll_deg.*value 120.0.*\[-90, 90\]"),
    ],
)
def test_reader_errors_name_file_column_row_value(tmp_path, header, lines, match):
    p = write_csv(tmp_path / "bad.csv", header, lines)
    with pytest.raises(VoyageLogError, match=match) as exc:
        read_voyage_log(p).read_all()
    assert str(p) in str(exc.value)


def test_unsorted_across_chunks_detected(tmp_path):
    lines = good_lines(10) + ["2026-03-01T12:00:05Z,1,1,1,1,1"]
    p = write_csv(tmp_path / "u.csv", BASE_HEADER, lines)
    with pytest.raises(VoyageLogError, match="row 11"):
        list(read_voyage_log(p, chunk_rows=4))


def test_damaged_lines_skipped_and_reported(tmp_path):
    lines = good_lines(3) + ["2026-03-01T12:00:03Z,1,1"] + good_lines(2, start_s=4)
    p = write_csv(tmp_path / "d.csv", BASE_HEADER, lines)
    p.write_bytes(p.read_bytes().replace(b"12:00:04Z,1.0", b"12:00:04Z,\xff\xfe"))
    r = read_voyage_log(p)
    df = r.read_all()
    assert len(df) == 4 and r.report.skipped_rows == 2
    assert "line 5 skipped: 3 fields where the header has 6" in r.report.problems[0]
    assert "line 6 skipped: bytes are not UTF-8" in r.report.problems[1]


def test_radians_detected_over_a_long_window(tmp_path):
    # 30 min at 2 Hz, roll/pitch written in radians (|roll| <= 0.09) while heave shows a seaway (Hs ~ 4 m):
    # a ship heaving with std 1 m shows more than 0.6 deg of roll or pitch (module docstring heuristic)
    rows = motion_rows(3600, dt_ms=500, roll_amp=math.radians(5.0), heave_amp=1.5)
    with VoyageLogWriter(tmp_path) as w:
        w.write_rows(rows)
    with pytest.raises(VoyageLogError, match=r"roll_deg look like radians.*max \|roll_deg\| = 0.0873"):
        read_voyage_log(tmp_path).read_all()
    assert len(read_voyage_log(tmp_path, check_units=False).read_all()) == 3600
    # the same motion in degrees passes
    with VoyageLogWriter(tmp_path / "deg") as w:
        w.write_rows(motion_rows(3600, dt_ms=500))
    assert len(read_voyage_log(tmp_path / "deg").read_all()) == 3600
    # calm water with small angles (no seaway in heave) is not flagged
    with VoyageLogWriter(tmp_path / "calm") as w:
        w.write_rows(motion_rows(3600, dt_ms=500, roll_amp=0.3, heave_amp=0.05))
    assert len(read_voyage_log(tmp_path / "calm").read_all()) == 3600


def test_open_errors(tmp_path):
    with pytest.raises(VoyageLogError, match="no such file"):
        read_voyage_log(tmp_path / "nope.csv")
    (tmp_path / "x.txt").write_text("x")
    with pytest.raises(VoyageLogError, match="unknown voyage-log type"):
        read_voyage_log(tmp_path / "x.txt")
    (tmp_path / "e").mkdir()
    with pytest.raises(VoyageLogError, match="holds no .csv"):
        read_voyage_log(tmp_path / "e")
    (tmp_path / "empty.csv").write_text("")
    with pytest.raises(VoyageLogError, match="empty file"):
        read_voyage_log(tmp_path / "empty.csv").read_all()
    (tmp_path / "bad.parquet").write_bytes(b"not parquet")
    with pytest.raises(VoyageLogError, match="not a readable Parquet file"):
        read_voyage_log(tmp_path / "bad.parquet").read_all()
    with pytest.raises(ValueError, match="period must be 'hour' or 'day'"):
        VoyageLogWriter(tmp_path, period="week")


def test_write_failure_mid_batch_recovers_on_next_batch(tmp_path):
    w = VoyageLogWriter(tmp_path, fsync=False)
    w.write_rows(motion_rows(10))
    real = w._file

    class DiskFull:
        def write(self, data):
            real.write(data[: len(data) // 2])  # half the batch reaches the disk, then ENOSPC
            raise OSError(28, "No space left on device")

        def close(self):
            real.close()

    w._file = DiskFull()
    with pytest.raises(OSError, match="No space left"):
        w.write_rows(motion_rows(10, start=T0 + 1000))
    w.write_rows(motion_rows(10, start=T0 + 2000))  # reopens: the partial line is cut first
    w.close()
    r = read_voyage_log(tmp_path)
    df = r.read_all()
    assert not r.report.damaged
    assert df["time_utc"].iloc[9] == pd.Timestamp("2026-03-01T12:00:00.900Z")
    assert df["time_utc"].iloc[-1] == pd.Timestamp("2026-03-01T12:00:02.900Z")
    assert 20 <= len(df) < 30  # the complete lines of the failed batch may survive, never a broken one


def test_row_and_line_numbers_across_read_blocks(tmp_path):
    # ~1.2 MB: several read blocks; a blank line and a damaged line shift line numbers but not rows
    lines = [
        f"2026-03-01T12:{i // 600:02d}:{(i // 10) % 60:02d}.{(i % 10) * 100:03d}Z,1.5,0.5,0.2,10.0,12.0"
        for i in range(20_000)
    ]
    lines.insert(5000, "")
    lines.insert(9000, "2026-03-01T13:00:00Z,1")
    lines[15_001] = lines[15_001].replace("Z,1.5", "Z,x1.5")
    p = write_csv(tmp_path / "big.csv", BASE_HEADER, lines)
    with pytest.raises(VoyageLogError, match=r"column 'roll_deg', row 15001 \(line 15003\): value 'x1.5'"):
        list(read_voyage_log(p, chunk_rows=4096))
    lines[15_001] = lines[15_001].replace("x1.5", "1.5")
    p = write_csv(tmp_path / "big.csv", BASE_HEADER, lines)
    r = read_voyage_log(p, chunk_rows=4096)
    sizes = [len(c) for c in r]
    assert sizes == [4096] * 4 + [20_000 - 4 * 4096]
    assert r.report.skipped_rows == 1 and "line 9002 skipped" in r.report.problems[0]


def test_crlf_and_byte_order_mark(tmp_path):
    p = tmp_path / "win.csv"
    p.write_bytes(
        ("\ufeff" + ",".join(BASE_HEADER) + "\r\n" + "\r\n".join(good_lines(4)) + "\r\n").encode("utf-8")
    )
    df = read_voyage_log(p).read_all()
    assert len(df) == 4 and df["stw_kn"].tolist() == [12.0] * 4
