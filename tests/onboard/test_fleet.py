"""Tests for ``hwadvice fleet`` (onboard.ashore.fleet): many logs into one database, locally or on dask."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest
import sqlalchemy as sa
from replay_logs import CONDITION, START, VESSEL, simulate_frame, write_log

import onboard.cli as cli
from onboard.ashore.fleet import find_logs, output_names, run_fleet
from onboard.ashore.replay import EngineSpec, ReplayError, ReplayOptions, replay_log, write_outputs
from onboard.core.store import Store


@pytest.fixture(scope="module")
def three_logs(tmp_path_factory) -> list[Path]:
    """Three 40-min logs (three windows each) in three formats, different seas and headings."""
    d = tmp_path_factory.mktemp("fleet_logs")
    frames = [
        simulate_frame(40 / 60, hs=3.0, tp=9.0, wave_from_deg=30.0, heading_deg=10.0, seed=21),
        simulate_frame(
            40 / 60,
            hs=5.0,
            tp=11.0,
            wave_from_deg=200.0,
            heading_deg=90.0,
            seed=22,
            start=START + pd.Timedelta("1D"),
        ),
        simulate_frame(40 / 60, hs=2.5, tp=8.0, wave_from_deg=300.0, heading_deg=250.0, seed=23),
    ]
    names = ["ship_a.csv.gz", "ship_b.parquet", "ship_c.csv"]
    return [write_log(f, d / n) for f, n in zip(frames, names, strict=True)]


@pytest.fixture(scope="module")
def singles(three_logs, tmp_path_factory):
    """Each log replayed alone (the reference for the fleet runs)."""
    out = tmp_path_factory.mktemp("singles")
    spec = EngineSpec(str(VESSEL), CONDITION)
    for p, name in zip(three_logs, output_names(three_logs), strict=True):
        write_outputs(replay_log(p, spec, ReplayOptions(), workers=1), out / name)
    return out


def test_output_names_and_log_discovery(three_logs, tmp_path):
    assert output_names(three_logs) == ["ship_a", "ship_b", "ship_c"]
    assert output_names([Path("x/a.csv"), Path("y/a.csv.gz"), Path("a.parquet")]) == ["a", "a-2", "a-3"]
    d = three_logs[0].parent
    assert find_logs([d]) == sorted(three_logs)
    with pytest.raises(ReplayError, match="no such file or directory"):
        find_logs([tmp_path / "missing"])
    (tmp_path / "empty").mkdir()
    with pytest.raises(ReplayError, match="holds no .csv, .csv.gz or .parquet"):
        find_logs([tmp_path / "empty"])


def _same_files(a: Path, b: Path) -> None:
    for name in ("estimates.csv", "advice.csv", "envelope.csv"):
        assert (a / name).read_bytes() == (b / name).read_bytes(), f"{a.name}/{name}"


def test_fleet_on_a_local_dask_cluster_equals_three_single_runs(three_logs, singles, tmp_path, monkeypatch):
    from dask import distributed  # the 'fleet' extra, installed with the test extra

    out = tmp_path / "fleet"
    db = tmp_path / "fleet.db"
    with distributed.LocalCluster(
        processes=False, n_workers=1, threads_per_worker=2, dashboard_address=None
    ) as cluster:
        monkeypatch.setattr(cli, "FEATURE_MODULES", ("onboard.ashore.replay", "onboard.ashore.fleet"))
        rc = cli.main(
            [
                "fleet",
                str(three_logs[0].parent),
                "--vessel",
                str(VESSEL),
                "--condition",
                CONDITION,
                "--out",
                str(out),
                "--db",
                f"sqlite:///{db}",
                "--scheduler",
                cluster.scheduler_address,
                "--no-progress",
            ]
        )
    assert rc == 0
    for name in ("ship_a", "ship_b", "ship_c"):
        _same_files(out / name, singles / name)
    # all results in one database, in the order of the logs
    eng = sa.create_engine(f"sqlite:///{db}")
    try:
        with eng.connect() as c:
            ends = [
                r[0] for r in c.execute(sa.text("select window_end_utc from analysis_cycles order by id"))
            ]
            events = c.execute(sa.text("select text from events order by id")).scalars().all()
    finally:
        eng.dispose()
    n = [len(pd.read_csv(singles / s / "estimates.csv")) for s in ("ship_a", "ship_b", "ship_c")]
    assert len(ends) == sum(n) == 9
    assert [e.split(":")[0] for e in events] == [
        "replayed ship_a.csv.gz",
        "replayed ship_b.parquet",
        "replayed ship_c.csv",
    ]


@pytest.mark.slow
def test_fleet_with_local_processes_equals_single_runs(three_logs, singles, tmp_path):
    store = Store(f"sqlite:///{tmp_path / 'f.db'}")
    try:
        res = run_fleet(
            three_logs, EngineSpec(str(VESSEL), CONDITION), tmp_path / "out", store=store, workers=2
        )
        assert store.history(24 * 366, now=START + pd.Timedelta("2D"))["times_utc"]
    finally:
        store.close()
    assert not res.errors and res.windows == 9
    for name in ("ship_a", "ship_b", "ship_c"):
        _same_files(tmp_path / "out" / name, singles / name)


def test_a_bad_log_does_not_stop_the_others(three_logs, tmp_path, monkeypatch, capsys):
    bad = write_log(simulate_frame(0.2, seed=4).drop(columns=["heading_deg"]), tmp_path / "bad.csv")
    monkeypatch.setattr(cli, "FEATURE_MODULES", ("onboard.ashore.replay", "onboard.ashore.fleet"))
    rc = cli.main(
        [
            "fleet",
            str(three_logs[2]),
            str(bad),
            "--vessel",
            str(VESSEL),
            "--condition",
            CONDITION,
            "--out",
            str(tmp_path / "o"),
            "--workers",
            "1",
            "--no-progress",
        ]
    )
    captured = capsys.readouterr()
    assert rc == 1
    assert "missing required column(s): heading_deg" in captured.err
    assert (tmp_path / "o" / "ship_c" / "estimates.csv").is_file()
    assert not (tmp_path / "o" / "bad").exists()


def test_unreachable_scheduler_is_a_clear_error(three_logs, tmp_path):
    with pytest.raises(ReplayError, match=r"--scheduler tcp://127.0.0.1:9: cannot connect"):
        run_fleet(
            [three_logs[2]],
            EngineSpec(str(VESSEL), CONDITION),
            tmp_path / "o",
            scheduler="tcp://127.0.0.1:9",
            connect_timeout_s=2.0,
        )
