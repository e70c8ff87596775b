"""Tests for ``hwadvice replay`` (onboard.ashore.replay): outputs, determinism, damaged logs, bad input.

The logs are simulated (tests/onboard/replay_logs.py) from a known JONSWAP × cos-2s sea through the demo
vessel's RAOs, so the true Hs, heading and speed are known.
"""

from __future__ import annotations

import gzip
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
import sqlalchemy as sa
from replay_logs import CONDITION, START, VESSEL, demo_raos, sea, simulate_frame, write_log

import onboard.cli as cli
from estimator.constants import KNOT
from estimator.simulate import simulate
from onboard.ashore import replay
from onboard.ashore.replay import (
    ADVICE_COLUMNS,
    ESTIMATE_COLUMNS,
    EngineSpec,
    ReplayError,
    ReplayOptions,
    predicted_rms,
    replay_log,
    write_outputs,
)

SEC5_ESTIMATES = ["window_end_utc", "hs_m", "tp_s", "tm01_s", "wave_from_deg", "confidence"]
SEC5_ADVICE = [
    "window_end_utc",
    "heading_deg",
    "stw_kn",
    "utilisation",
    "limiting_criterion",
    "advised_heading_deg",
    "advised_stw_kn",
]
HS_TRUE = 4.0


def run_cli(argv: list[str], monkeypatch) -> int:
    """``onboard.cli.main`` with only the replay feature module (others are tested elsewhere)."""
    monkeypatch.setattr(cli, "FEATURE_MODULES", ("onboard.ashore.replay",))
    return cli.main(argv)


def base_args(log: Path, out: Path) -> list[str]:
    return [
        "replay",
        str(log),
        "--vessel",
        str(VESSEL),
        "--condition",
        CONDITION,
        "--out",
        str(out),
        "--no-progress",
    ]


@pytest.fixture(scope="module")
def short_log(tmp_path_factory) -> Path:
    # 2 h at 2 Hz, Hs 4 m, Tp 10 s, waves from 060°, ship on 020° at 12 kn
    frame = simulate_frame(2.0, hs=HS_TRUE, tp=10.0, wave_from_deg=60.0, heading_deg=20.0, speed_kn=12.0)
    return write_log(frame, tmp_path_factory.mktemp("logs") / "voyage.csv.gz")


@pytest.fixture(scope="module")
def cli_run(short_log, tmp_path_factory):
    """The CLI run with two worker processes and 1-h blocks (two blocks in the 2-h log)."""
    out = tmp_path_factory.mktemp("out_cli")
    mp = pytest.MonkeyPatch()
    try:
        rc = run_cli(base_args(short_log, out) + ["--workers", "2", "--block-hours", "1"], mp)
    finally:
        mp.undo()
    return rc, out


def test_cli_writes_one_row_per_window_with_the_interface_columns(cli_run):
    rc, out = cli_run
    assert rc == 0
    est = pd.read_csv(out / "estimates.csv")
    adv = pd.read_csv(out / "advice.csv")
    # docs/replay-outputs.md: the contract columns first, in order; extras after
    assert list(est.columns[:6]) == SEC5_ESTIMATES
    assert list(adv.columns[:7]) == SEC5_ADVICE
    assert tuple(est.columns) == ESTIMATE_COLUMNS and tuple(adv.columns) == ADVICE_COLUMNS
    # one row per 20-min window every 10 min on the UTC grid: ends 00:20 ... 02:00 (module docstring)
    expected = pd.date_range(START + pd.Timedelta("20min"), START + pd.Timedelta("2h"), freq="10min")
    assert list(pd.to_datetime(est["window_end_utc"], utc=True)) == list(expected)
    assert list(adv["window_end_utc"]) == list(est["window_end_utc"])
    assert (est["status"] == "ok").all()


def test_cli_estimates_recover_the_simulated_sea(cli_run):
    _, out = cli_run
    est = pd.read_csv(out / "estimates.csv")
    # Tolerances: the 1-σ sampling error of Hs from a 20-min record is ≈ 5.6 % (wave-buoy-analogy reference
    # notes, Bendat-Piersol variance table); ship-based estimates agree with buoys to 10-20 % on Hs
    # (same notes). Each window: ±25 % (≈ 4σ); the median over the 11 windows: ±10 %.
    assert np.all(np.abs(est["hs_m"] / HS_TRUE - 1) < 0.25), est["hs_m"].tolist()
    assert abs(est["hs_m"].median() / HS_TRUE - 1) < 0.10
    # 90 % intervals (issue 12): ordered around the estimate; the interval holds the simulated Hs in most
    # windows (a 90 % interval: at least 8 of the 11 windows, binomial(11, 0.9) gives >= 8 with p ≈ 0.98)
    assert (est["hs_p05_m"] < est["hs_m"]).all() and (est["hs_m"] < est["hs_p95_m"]).all()
    assert (est["tp_p05_s"] < est["tp_s"]).all() and (est["tp_s"] < est["tp_p95_s"]).all()
    assert ((est["hs_p05_m"] <= HS_TRUE) & (HS_TRUE <= est["hs_p95_m"])).sum() >= 8
    assert (est["dir_spread_deg"] > 0).all()
    # direction the waves come from: simulated 060°; 10-30° agreement is typical (same notes): ±30°
    d = (est["wave_from_deg"] - 60.0 + 180) % 360 - 180
    assert np.all(np.abs(d) < 30), est["wave_from_deg"].tolist()
    assert est["confidence"].between(0, 1).all()


def test_cli_advice_reports_the_ship_heading_and_speed(cli_run):
    _, out = cli_run
    adv = pd.read_csv(out / "advice.csv")
    # the simulated ship steered 020° at 12 kn (simulation input; log values rounded to 1e-4° and 1e-3 kn)
    assert np.allclose(adv["heading_deg"], 20.0, atol=0.05)
    assert np.allclose(adv["stw_kn"], 12.0, atol=0.01)
    assert adv["utilisation"].gt(0).all()
    assert adv["limiting_criterion"].notna().all()
    assert adv["advised_heading_deg"].between(0, 360).all() and adv["advised_stw_kn"].ge(0).all()


def test_cli_stores_every_window_in_the_database(cli_run):
    _, out = cli_run
    eng = sa.create_engine(f"sqlite:///{out / 'replay.db'}")
    try:
        with eng.connect() as c:
            n_cycles = c.execute(sa.text("select count(*) from analysis_cycles")).scalar()
            n_sea = c.execute(sa.text("select count(*) from sea_state_estimates")).scalar()
            n_adv = c.execute(sa.text("select count(*) from advice")).scalar()
            hs = [r[0] for r in c.execute(sa.text("select hs_m from sea_state_estimates order by id"))]
            ev = c.execute(sa.text("select kind from events")).scalars().all()
    finally:
        eng.dispose()
    est = pd.read_csv(out / "estimates.csv")
    assert n_cycles == n_sea == n_adv == len(est)
    assert np.allclose(hs, est["hs_m"])
    assert ev == ["replay"]


def test_workers_one_and_two_give_identical_files(cli_run, short_log, tmp_path):
    """Second run, one worker, in-process: byte-identical to the CLI run with two worker processes."""
    _, out_cli = cli_run
    spec = EngineSpec(str(VESSEL), CONDITION)
    res = replay_log(short_log, spec, ReplayOptions(block_s=3600.0), workers=1)
    write_outputs(res, tmp_path)
    for name in ("estimates.csv", "advice.csv", "envelope.csv"):
        assert (tmp_path / name).read_bytes() == (out_cli / name).read_bytes(), name


@pytest.mark.slow
def test_blocks_start_cold_so_history_before_a_block_does_not_matter(short_log, tmp_path):
    """Replaying the log from 00:20 (the run-in of the 01:00 block: 4 windows at a 10-min step, the fusion
    horizon of 40 min) gives the 01:00 block unchanged."""
    spec = EngineSpec(str(VESSEL), CONDITION)
    opts = ReplayOptions(block_s=3600.0)
    full = replay_log(short_log, spec, opts)
    frame = pd.read_csv(short_log)
    frame["time_utc"] = pd.to_datetime(frame["time_utc"], utc=True)
    part = write_log(frame[frame["time_utc"] >= START + pd.Timedelta("20min")], tmp_path / "late.parquet")
    late = replay_log(part, spec, opts)
    a = {w.estimate["window_end_utc"]: w.estimate for w in full.windows}
    b = {w.estimate["window_end_utc"]: w.estimate for w in late.windows}
    block2 = [k for k in a if k >= "2026-02-10T01:20:00Z"]  # windows starting 01:00 ... 01:40
    assert block2 and all(a[k] == b[k] for k in block2)
    # and so is the advice, worked out in the sea fused over the run-in's estimates as well
    adv_a = {w.advice["window_end_utc"]: w.advice for w in full.windows}
    adv_b = {w.advice["window_end_utc"]: w.advice for w in late.windows}
    assert all(adv_a[k] == adv_b[k] for k in block2)


def test_short_record_without_a_clock_aligned_window_gives_one_estimate(tmp_path, monkeypatch, capsys):
    # issue 12 item 6: 22 min from 00:36:52 hold one complete 20-min window but none on the UTC grid
    # (20-min windows every 10 min start at 00:40, which ends at 01:00 after the log's 00:58:52)
    start = START + pd.Timedelta("36min 52s")
    frame = simulate_frame(22 / 60, hs=HS_TRUE, tp=10.0, wave_from_deg=60.0, heading_deg=20.0, speed_kn=12.0,
                           start=start)
    log = write_log(frame, tmp_path / "short.csv")
    out = tmp_path / "out"
    assert run_cli(base_args(log, out), monkeypatch) == 0
    est = pd.read_csv(out / "estimates.csv")
    assert len(est) == 1 and est["status"].iloc[0] == "ok"
    assert pd.Timestamp(est["window_start_utc"].iloc[0]) == start
    assert "windows aligned to the log start" in capsys.readouterr().out


def test_predicted_rms_matches_a_simulated_record():
    """Linear superposition (St. Denis & Pierson 1953): the RMS of a simulated record equals sqrt(m0)."""
    rao, sensor = demo_raos()
    sp = sea(4.0, 10.0, 60.0)  # β = 140°, bow quartering
    heading, speed = np.radians(20.0), 12 * KNOT
    rec = simulate(
        sp,
        rao,
        heading=heading,
        speed=speed,
        duration=3 * 3600.0,
        fs=2.0,
        sensor_xyz=sensor,
        seed=5,
        n_frequencies=200,
        n_directions=72,
        channels=("roll", "pitch", "heave"),
    )
    spec = EngineSpec(str(VESSEL), CONDITION)
    engine = replay._engine_for(spec)
    pred = predicted_rms(engine, SimpleNamespace(spectrum=sp), heading, speed)
    # 3-h record: sampling error of a variance ≈ 1/sqrt(T·B) of a few per cent (Bendat & Piersol 2010);
    # 10 % on the RMS for the narrow-band roll, 6 % for pitch and heave.
    assert pred["roll"] == pytest.approx(np.std(rec.channels["roll"]), rel=0.10)
    assert pred["pitch"] == pytest.approx(np.std(rec.channels["pitch"]), rel=0.06)
    assert pred["heave"] == pytest.approx(np.std(rec.channels["heave"]), rel=0.06)
    # a sign slip in β (head ↔ following) would change the prediction: β = 40° (waves from 160°) instead
    flipped = predicted_rms(engine, SimpleNamespace(spectrum=sea(4.0, 10.0, 160.0)), heading, speed)
    assert abs(flipped["pitch"] / pred["pitch"] - 1) > 0.10


# ------------------------------------------------------------------------------------------ damaged log


@pytest.fixture(scope="module")
def damaged(tmp_path_factory):
    """2 h, then a 3-h gap, then 1.5 h; a 10-min NaN stretch; roll/pitch in radians for 30 min; the gzip
    cut short."""
    a = simulate_frame(2.0, seed=11)
    b = simulate_frame(1.5, seed=12, start=START + pd.Timedelta("5h"))
    nan = (a["time_utc"] >= START + pd.Timedelta("30min")) & (a["time_utc"] < START + pd.Timedelta("40min"))
    a.loc[nan, ["roll_deg", "pitch_deg", "heave_m"]] = np.nan
    rad = (b["time_utc"] >= START + pd.Timedelta("5h")) & (b["time_utc"] < START + pd.Timedelta("5h30min"))
    b.loc[rad, "roll_deg"] = np.round(np.radians(b.loc[rad, "roll_deg"]), 6)
    b.loc[rad, "pitch_deg"] = np.round(np.radians(b.loc[rad, "pitch_deg"]), 6)
    d = tmp_path_factory.mktemp("damaged")
    path = write_log(pd.concat([a, b], ignore_index=True), d / "damaged.csv.gz")
    data = path.read_bytes()
    path.write_bytes(data[: int(len(data) * 0.97)])  # truncated gzip: the last ~3 % lost
    with pytest.raises(EOFError):  # the file really is damaged (Python's gzip, RFC 1952)
        gzip.decompress(path.read_bytes())
    out = d / "out"
    mp = pytest.MonkeyPatch()
    try:
        rc = run_cli(base_args(path, out) + ["--workers", "1"], mp)
    finally:
        mp.undo()
    return rc, out


def test_damaged_log_is_replayed_as_far_as_possible(damaged):
    rc, out = damaged
    assert rc == 0
    est = pd.read_csv(out / "estimates.csv")
    ends = pd.to_datetime(est["window_end_utc"], utc=True)
    skipped = (out / "skipped.txt").read_text()
    # truncated gzip: reported, and the data before the damage replayed
    assert "stream damaged" in skipped
    assert ends.max() < START + pd.Timedelta("6h30min")
    assert ends.max() >= START + pd.Timedelta("6h")
    # the gap of hours: listed, and no window inside it
    assert "gap without samples from 2026-02-10T02:00:00Z to 2026-02-10T05:00:00Z" in skipped
    # (a window is analysed when its samples span at least half of it: 01:50-02:10 is, 04:50-05:10 is not)
    assert not ((ends > START + pd.Timedelta("2h10min")) & (ends < START + pd.Timedelta("5h20min"))).any()
    assert (ends == START + pd.Timedelta("2h10min")).any()
    # radians: the windows holding them name it and give no estimate; later windows are fine
    rad_rows = est[(ends > START + pd.Timedelta("5h")) & (ends <= START + pd.Timedelta("5h30min"))]
    assert len(rad_rows) == 2 and (rad_rows["status"] == "rejected").all()
    assert rad_rows["reasons"].str.contains("look like radians").all()
    after = est[ends >= START + pd.Timedelta("5h50min")]
    assert len(after) and (after["status"] == "ok").all()
    # the NaN stretch 00:30-00:40: windows covering it lose their estimate or say why (record preparation
    # splits at gaps longer than 5 s and needs 10 min; estimator.prep.PrepSettings)
    nan_rows = est[(ends > START + pd.Timedelta("30min")) & (ends < START + pd.Timedelta("1h"))]
    assert (nan_rows["status"] != "ok").any() or nan_rows["reasons"].fillna("").str.len().gt(0).all()
    clean = est[(ends >= START + pd.Timedelta("1h")) & (ends <= START + pd.Timedelta("2h"))]
    assert (clean["status"] == "ok").all()
    # what was skipped is said on stderr too (cmd_replay) and every rejected window is listed
    for _, r in est[est["status"] != "ok"].iterrows():
        assert r["window_end_utc"] in skipped


# ------------------------------------------------------------------------------------------ bad input


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    return simulate_frame(0.5, seed=3), tmp_path_factory.mktemp("bad")


def _run_bad(monkeypatch, capsys, log: Path, out: Path, extra=()) -> str:
    rc = run_cli(base_args(log, out) + ["--workers", "1", *extra], monkeypatch)
    err = capsys.readouterr().err.strip().splitlines()
    assert rc == 2
    assert len(err) == 1 and err[0].startswith("hwadvice replay: ")
    return err[0]


def test_missing_column_is_one_line_error(small, monkeypatch, capsys):
    frame, d = small
    log = write_log(frame.drop(columns=["stw_kn"]), d / "nostw.csv")
    msg = _run_bad(monkeypatch, capsys, log, d / "o1")
    assert "missing required column(s): stw_kn" in msg


def _run_ok(monkeypatch, capsys, log: Path, out: Path, extra=()) -> tuple[str, str]:
    rc = run_cli(base_args(log, out) + ["--workers", "1", *extra], monkeypatch)
    captured = capsys.readouterr()
    assert rc == 0, captured.err
    return (out / "skipped.txt").read_text(encoding="utf-8"), captured.err


def test_bad_rows_are_skipped_and_reported_and_strict_stops_at_the_first(small, monkeypatch, capsys):
    """Issue 16: one bad row never ends a replay; skipped.txt names reason, row and channel."""
    frame, d = small
    f = frame.copy()
    f.loc[[100, 101], "time_utc"] = f.loc[[101, 100], "time_utc"].to_numpy()  # out of order
    f.loc[200, "time_utc"] = f.loc[199, "time_utc"]  # duplicated
    f["roll_deg"] = f["roll_deg"].astype(object)
    f.loc[300, "roll_deg"] = "abc"  # not a number
    f.loc[400, "roll_deg"] = 1000.0  # out of range
    f.loc[500, "stw_kn"] = 12.0 * 1.852 * 2.2  # km/h slip in one row
    f.loc[600, "heading_deg"] = 360.0  # a legitimate reading of north
    log = write_log(f, d / "bad_rows.csv")
    skipped, err = _run_ok(monkeypatch, capsys, log, d / "b2")
    assert "row 102 (line 103)" in skipped and "rows must be sorted by time); row skipped" in skipped
    assert "row 201 (line 202)" in skipped and "is duplicated; row skipped" in skipped
    assert "column 'roll_deg', row 301" in skipped and "'abc' is not a number" in skipped
    assert "column 'roll_deg', row 401" in skipped and "value 1000.0 is outside" in skipped
    assert "column 'stw_kn', row 501" in skipped
    assert "heading_deg" not in skipped  # 360.0 is valid (wraps to 0)
    assert "2 row(s) skipped, 3 value(s) blanked, 0 file(s) skipped" in skipped
    assert "rows must be sorted by time" in err  # said on stderr too
    est = pd.read_csv(d / "b2" / "estimates.csv")
    assert len(est) >= 1 and (est["status"] == "ok").all()
    # --strict: the first bad row ends the replay with a one-line reason naming file, column and row
    msg = _run_bad(monkeypatch, capsys, log, d / "b2s", ["--strict"])
    assert "bad_rows.csv: column 'time_utc', row 102 (line 103)" in msg and "rows must be sorted" in msg


def test_duplicated_times_in_parquet_are_skipped(small, monkeypatch, capsys):
    frame, d = small
    f = frame.copy()
    f.loc[200, "time_utc"] = f.loc[199, "time_utc"]
    log = write_log(f, d / "dup.parquet")
    skipped, _ = _run_ok(monkeypatch, capsys, log, d / "b3")
    assert "column 'time_utc', row 201" in skipped and "is duplicated" in skipped
    assert "is duplicated" in _run_bad(monkeypatch, capsys, log, d / "b3s", ["--strict"])


def test_heading_of_exactly_360_is_valid_even_with_strict(small, monkeypatch, capsys):
    frame, d = small
    f = frame.copy()
    f.loc[::50, "heading_deg"] = 360.0  # a gyro rounding 359.96 (the log's heading is about 0)
    skipped, _ = _run_ok(monkeypatch, capsys, write_log(f, d / "north.csv"), d / "b4", ["--strict"])
    assert "heading" not in skipped


def test_a_bad_file_in_a_folder_is_skipped_and_the_rest_replayed(small, monkeypatch, capsys):
    frame, d = small
    folder = d / "folder"
    folder.mkdir()
    write_log(frame, folder / "voyage_b.csv")
    (folder / "voyage_a.csv.gz").write_bytes(b"\x1b[2J\x07\x00binary \xff\xfe garbage\n" * 10)
    skipped, err = _run_ok(monkeypatch, capsys, folder, d / "b5")
    assert "voyage_a.csv.gz: not a voyage log" in skipped and "1 file(s) skipped" in skipped
    assert "\x1b" not in err and "\x07" not in err and "\\x1b" in err  # control characters escaped
    assert len(pd.read_csv(d / "b5" / "estimates.csv")) >= 1
    msg = _run_bad(monkeypatch, capsys, folder, d / "b5s", ["--strict"])
    assert "voyage_a.csv.gz: not a voyage log" in msg and "\x1b" not in msg


def test_gzip_is_recognised_by_content_not_by_name(small, monkeypatch, capsys):
    frame, d = small
    plain = write_log(frame, d / "plain.csv")
    misnamed = d / "misnamed.csv.gz"  # plain CSV text under a .gz name
    misnamed.write_bytes(plain.read_bytes())
    _run_ok(monkeypatch, capsys, misnamed, d / "b6a")
    zipped = d / "zipped.csv"  # gzip under a .csv name
    zipped.write_bytes(gzip.compress(plain.read_bytes()))
    _run_ok(monkeypatch, capsys, zipped, d / "b6b")
    a, b = (pd.read_csv(d / o / "estimates.csv") for o in ("b6a", "b6b"))
    assert a.equals(b)


def test_dropped_channels_and_reasons_in_estimates_and_skipped(small, monkeypatch, capsys):
    frame, d = small
    f = frame.copy()
    f["roll_deg"] = np.radians(f["roll_deg"])
    f["pitch_deg"] = np.radians(f["pitch_deg"])
    skipped, _ = _run_ok(monkeypatch, capsys, write_log(f, d / "rad_ok.csv"), d / "b7")
    est = pd.read_csv(d / "b7" / "estimates.csv")
    assert est["dropped_channels"].str.contains("roll_deg \\(looks like radians\\)").all()
    assert "channels left out" in skipped and "pitch_deg (looks like radians)" in skipped
    g = frame.copy()
    g["heave_m"] = np.nan  # a blank channel
    _run_ok(monkeypatch, capsys, write_log(g, d / "blank.csv"), d / "b8")
    est = pd.read_csv(d / "b8" / "estimates.csv")
    assert est["dropped_channels"].str.contains("heave_m \\(blank in this window\\)").all()


def test_output_folder_checked_before_work_and_overwrite_replaces_every_output(small, monkeypatch, capsys):
    frame, d = small
    log = write_log(frame, d / "out_checks.csv")
    out = d / "b9"
    _run_ok(monkeypatch, capsys, log, out, ["--report"])
    assert (out / "report.html").exists() and (out / "replay.db").exists()
    # a second run into the same folder is refused (before any work) ...
    msg = _run_bad(monkeypatch, capsys, log, out)
    assert f"--out {out}: folder is not empty" in msg and "--overwrite" in msg
    # ... unless --overwrite, which replaces every output: no old report is left behind
    _run_ok(monkeypatch, capsys, log, out, ["--overwrite"])
    assert not (out / "report.html").exists()
    engine = sa.create_engine(f"sqlite:///{out / 'replay.db'}")
    with engine.connect() as c:  # the old database was replaced, not appended to
        assert c.execute(sa.text("select count(*) from events where kind = 'replay'")).scalar() == 1
    engine.dispose()
    # --out an existing file, or below one: one line, nothing computed
    msg = _run_bad(monkeypatch, capsys, log, log)
    assert f"--out {log}: is a file, not a folder" in msg
    msg = _run_bad(monkeypatch, capsys, log, log / "x")
    assert f"{log} is a file, not a folder" in msg


def test_radians_with_strict_units_is_one_line_error(small, monkeypatch, capsys):
    frame, d = small
    f = frame.copy()
    f["roll_deg"] = np.radians(f["roll_deg"])
    f["pitch_deg"] = np.radians(f["pitch_deg"])
    msg = _run_bad(monkeypatch, capsys, write_log(f, d / "rad.csv"), d / "o5", ["--strict-units"])
    assert "look like radians" in msg


def test_unknown_condition_and_missing_file_are_one_line_errors(small, monkeypatch, capsys, tmp_path):
    frame, d = small
    log = write_log(frame, d / "ok.csv")
    args = base_args(log, d / "o6")
    args[args.index(CONDITION)] = "half loaded"
    rc = run_cli(args + ["--workers", "1"], monkeypatch)
    err = capsys.readouterr().err.strip().splitlines()
    assert rc == 2 and len(err) == 1 and "no loading condition 'half loaded'" in err[0]
    msg = _run_bad(monkeypatch, capsys, tmp_path / "nothere.csv.gz", d / "o7")
    assert "no such file or directory" in msg


def test_bad_options_are_one_line_errors(small, monkeypatch, capsys):
    frame, d = small
    log = write_log(frame, d / "ok2.csv")
    assert "whole multiple of the step" in _run_bad(
        monkeypatch, capsys, log, d / "o8", ["--block-hours", "0.26"]
    )
    assert "expected degrees true" in _run_bad(monkeypatch, capsys, log, d / "o9", ["--course-deg", "400"])
    assert "no complete 60-min window" in _run_bad(
        monkeypatch, capsys, log, d / "o10", ["--window-min", "60"]
    )
    with pytest.raises(ReplayError, match="step 30 min must be between 10 s and the window length"):
        replay_log(log, EngineSpec(str(VESSEL), CONDITION, window_s=1200.0, step_s=1800.0))


def test_course_from_cog(small, tmp_path):
    frame, _ = small
    f = frame.copy()
    f["cog_deg"] = 35.0  # a current sets the ship 15° off its heading
    log = write_log(f, tmp_path / "cog.csv")
    res = replay_log(log, EngineSpec(str(VESSEL), CONDITION), ReplayOptions(course_from_cog=True))
    assert res.windows and all(w.advice["course_deg"] == 35.0 for w in res.windows)
    res = replay_log(log, EngineSpec(str(VESSEL), CONDITION), ReplayOptions(course_deg=90.0))
    assert all(w.advice["course_deg"] == 90.0 for w in res.windows)


@pytest.mark.postgres
def test_results_go_to_postgresql(small, pg_engine, tmp_path):
    """--db URL: the same repository API on PostgreSQL (tests/onboard/conftest.py provides the server)."""
    from onboard.core.store import Store

    frame, _ = small
    log = write_log(frame, tmp_path / "pg.csv")
    res = replay_log(log, EngineSpec(str(VESSEL), CONDITION))
    store = Store(pg_engine)
    write_outputs(res, tmp_path / "out", store=store)
    est = pd.read_csv(tmp_path / "out" / "estimates.csv")
    with pg_engine.connect() as c:
        hs = [r[0] for r in c.execute(sa.text("select hs_m from sea_state_estimates order by id"))]
        kinds = c.execute(sa.text("select kind from events")).scalars().all()
    assert len(hs) == len(est) >= 1 and np.allclose(hs, est["hs_m"])
    assert kinds == ["replay"]


def test_bad_database_url_is_one_line_error(small, monkeypatch, capsys):
    frame, d = small
    log = write_log(frame, d / "ok3.csv")
    msg = _run_bad(monkeypatch, capsys, log, d / "o11", ["--db", "nosuchdriver://x/y"])
    assert "--db nosuchdriver://x/y: cannot open the database" in msg
