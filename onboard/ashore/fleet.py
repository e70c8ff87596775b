"""Fleet runs: many voyage logs replayed in parallel, all results into one database.

``hwadvice fleet LOGS... (or DIR) --vessel VESSEL.toml --condition NAME --out DIR [--db URL]
[--scheduler ADDRESS]`` replays every log with :func:`onboard.ashore.replay.replay_log` (the same windows,
blocks and engine as ``hwadvice replay``, so each log's files are byte-identical to a single replay
of it). By default the logs are spread over local worker processes (:mod:`concurrent.futures`,
``--workers``); with ``--scheduler`` they run as tasks on a dask.distributed cluster (the optional
``fleet`` extra). The tasks return their rows to this process, which writes ``DIR/<log name>/``
(estimates, advice, envelope, skipped, optionally the report) and adds everything to one database
(``DIR/fleet.db`` unless ``--db URL``), in the order the logs were given, so the database content does
not depend on which task finished first. Cluster workers must be able to read the log paths.

A log that cannot be replayed (missing columns, unsorted times, ...) does not stop the others: its
one-line reason is printed and the command exits with status 1 after the rest are done.

Advisory only: the master decides; replayed advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship.
"""

from __future__ import annotations

import os
import sys
import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from advisor.advice import ADVISORY_NOTICE
from onboard.ashore.progress import progress_bar
from onboard.ashore.replay import OUTPUTS as REPLAY_OUTPUTS
from onboard.ashore.replay import (
    EngineSpec,
    ReplayError,
    ReplayOptions,
    ReplayResult,
    add_common_options,
    default_db,
    open_store,
    options_from_args,
    process_pool,
    replay_log,
    spec_from_args,
    write_outputs,
)
from onboard.formats.voyagelog import VoyageLogError

__all__ = ["FleetResult", "add_commands", "find_logs", "output_names", "replay_task", "run_fleet"]

_SUFFIXES = (".csv.gz", ".csv", ".parquet")


def _is_log_file(p: Path) -> bool:
    return p.is_file() and p.name.lower().endswith(_SUFFIXES)


def find_logs(paths: Sequence[str | os.PathLike]) -> list[Path]:
    """The logs to replay.

    One directory that holds log files or sub-directories: every ``.csv``, ``.csv.gz``, ``.parquet``
    file and every sub-directory in it is one log (a sub-directory is read as one log, its files in
    name order). Otherwise every path given is one log (a file, or a directory read as one log).

    Raises
    ------
    ReplayError
        A path that does not exist, or a directory with nothing to replay.
    """
    ps = [Path(p) for p in paths]
    for p in ps:
        if not p.exists():
            raise ReplayError(f"{p}: no such file or directory")
    if len(ps) == 1 and ps[0].is_dir():
        entries = sorted(e for e in ps[0].iterdir() if _is_log_file(e) or e.is_dir())
        if not entries:
            raise ReplayError(f"{ps[0]}: directory holds no .csv, .csv.gz or .parquet voyage log")
        return entries
    return ps


def output_names(logs: Sequence[Path]) -> list[str]:
    """Output sub-directory per log: the file name without its suffix, made unique with -2, -3, ..."""
    names: list[str] = []
    for p in logs:
        base = p.name
        for suf in _SUFFIXES:
            if base.lower().endswith(suf):
                base = base[: -len(suf)]
                break
        name, n = base or "log", 2
        while name in names:
            name = f"{base}-{n}"
            n += 1
        names.append(name)
    return names


def replay_task(log: str, spec: EngineSpec, options: ReplayOptions) -> ReplayResult:
    """One fleet task: replay a log sequentially in the worker (no inner parallelism)."""
    return replay_log(log, spec, options, workers=1, progress=False)


@dataclass
class FleetResult:
    """What a fleet run did: per log its output paths or its error."""

    outputs: dict[str, dict[str, Path]] = field(default_factory=dict)
    errors: dict[str, str] = field(default_factory=dict)
    windows: int = 0
    log_hours: float = 0.0
    elapsed_s: float = 0.0


def run_fleet(
    logs: Sequence[str | os.PathLike],
    spec: EngineSpec,
    out_dir: str | os.PathLike,
    *,
    options: ReplayOptions | None = None,
    store=None,
    workers: int = 2,
    scheduler: str | None = None,
    client=None,
    report: bool = False,
    progress: bool = False,
    connect_timeout_s: float = 20.0,
) -> FleetResult:
    """Replay many logs in parallel and write each log's outputs and all database rows.

    Parameters
    ----------
    logs : sequence of path
        As for :func:`find_logs`.
    spec : EngineSpec
    out_dir : path
        One sub-directory per log (:func:`output_names`).
    options : ReplayOptions, optional
    store : onboard.core.store.Store, optional
        The one database for all results.
    workers : int
        Local processes when no scheduler or client is given.
    scheduler : str, optional
        dask.distributed scheduler address.
    client : dask.distributed.Client, optional
        A ready client (takes precedence over ``scheduler``).
    report : bool
        Write ``report.html`` per log.
    progress : bool
        A progress bar over the logs on stderr (:func:`onboard.ashore.progress.progress_bar`).
    connect_timeout_s : float
        How long to try to reach the scheduler [s].
    """
    options = options or ReplayOptions()
    paths = find_logs(logs)
    names = output_names(paths)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    try:
        spec.build()  # fail early on a bad vessel, condition or limit file
    except (OSError, ValueError) as exc:
        raise ReplayError(str(exc)) from None
    res = FleetResult()
    t0 = time.monotonic()
    own_client = own_pool = None
    if client is None and scheduler:
        try:
            from dask.distributed import Client
        except ImportError:
            raise ReplayError("--scheduler needs dask.distributed (install the 'fleet' extra)") from None
        try:
            own_client = client = Client(scheduler, timeout=f"{connect_timeout_s:g}s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise ReplayError(f"--scheduler {scheduler}: cannot connect ({exc})") from None
    bar = progress_bar("fleet", total=len(paths), unit="logs", enabled=progress)
    try:
        if client is not None:
            futures = [client.submit(replay_task, str(p), spec, options, pure=False) for p in paths]
        elif workers > 1 and len(paths) > 1:
            own_pool = process_pool(min(workers, len(paths)))
            futures = [own_pool.submit(replay_task, str(p), spec, options) for p in paths]
        else:
            futures = None
        for i, (p, name) in enumerate(zip(paths, names, strict=True)):
            bar.set_postfix_str(p.name, refresh=False)
            try:
                r = futures[i].result() if futures is not None else replay_task(str(p), spec, options)
                if not r.windows:
                    raise ReplayError(f"{p}: no complete window in the log{r.first_problem()}")
            except (ReplayError, VoyageLogError) as exc:
                res.errors[str(p)] = str(exc).replace("\n", " ")
                if progress:
                    bar.write(f"fleet: {p.name}: {res.errors[str(p)]}", file=sys.stderr)
                bar.update(1)
                continue
            res.outputs[str(p)] = write_outputs(r, out / name, store=store, spec=spec, report=report)
            res.windows += len(r.windows)
            res.log_hours += r.span_s / 3600.0
            bar.update(1)
    finally:
        bar.close()
        if own_pool is not None:
            own_pool.shutdown(wait=True, cancel_futures=True)
        if own_client is not None:
            own_client.close()
    res.elapsed_s = time.monotonic() - t0
    return res


def cmd_fleet(args) -> int:
    """``hwadvice fleet`` (see the module docstring)."""
    from onboard.errors import CommandError, check_output_dir

    try:
        spec = spec_from_args(args)
        options = options_from_args(args)
        if args.workers < 1:
            raise ReplayError(f"--workers must be >= 1, got {args.workers}")
        logs = find_logs(args.logs)
        out = check_output_dir(
            args.out,
            overwrite=bool(getattr(args, "overwrite", False)),
            outputs=("fleet.db", "fleet.db-*", *(f"*/{name}" for name in REPLAY_OUTPUTS)),
        )
        store = open_store(args.db or default_db(out, "fleet.db"))
        try:
            res = run_fleet(
                logs,
                spec,
                out,
                options=options,
                store=store,
                workers=args.workers,
                scheduler=args.scheduler,
                report=args.report,
                progress=not args.no_progress,
            )
        finally:
            store.close()
    except (ReplayError, VoyageLogError) as exc:
        raise CommandError(str(exc).replace("\n", " ")) from None
    print(
        f"{len(res.outputs)} of {len(res.outputs) + len(res.errors)} logs replayed: {res.windows} windows, "
        f"{res.log_hours:.1f} h of logs in {res.elapsed_s:.1f} s; results in {args.out}"
    )
    for why in res.errors.values():
        print(f"not replayed: {why}", file=sys.stderr)
    print(ADVISORY_NOTICE)
    return 1 if res.errors else 0


def add_commands(subparsers) -> None:
    """The ``fleet`` sub-command (wired by :mod:`onboard.cli`)."""
    f = subparsers.add_parser(
        "fleet",
        help="replay many voyage logs in parallel into one database",
        description="Replay many voyage logs (files or directories) in parallel, on this machine or on a "
        "dask cluster. Advisory only: the master decides.",
    )
    f.add_argument("logs", nargs="+", help="voyage logs, or one directory holding them")
    add_common_options(f)
    f.add_argument("--db", help="database URL (default: a SQLite file fleet.db in the output directory)")
    f.add_argument("--workers", type=int, default=2, help="local worker processes (without --scheduler)")
    f.add_argument("--scheduler", help="dask.distributed scheduler address, e.g. tcp://host:8786")
    f.set_defaults(func=cmd_fleet)
