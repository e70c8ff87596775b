"""Voyage log files (docs/voyage-log.md): a rolling crash-safe writer and a validating streaming reader.

Writer
------
:class:`VoyageLogWriter` writes exactly the docs/voyage-log.md columns, in that order, one row per sample
time, rows strictly increasing in time. One file per UTC hour or UTC day of *sample* time
(``voyage_20260101T12Z.csv`` / ``voyage_20260101.csv``; ``.csv.gz`` when compressed).

Crash safety: every :meth:`VoyageLogWriter.write_rows` call ends with ``flush`` and (by default)
``os.fsync``, so a crash loses at most the batch being written.

- Plain CSV: a crash can leave a partial last line. When the writer reopens a file it cuts it back to
  the last complete line (:func:`repair_csv`); the reader also skips and reports a final line without
  its newline, so the file is valid CSV either way.
- gzip: each batch is written as its own gzip member (RFC 1952 §2.2 allows a file to be a series of
  members; Python's ``gzip`` and ``zcat`` read them as one stream). A crash can truncate only the last
  member; the reader reads every complete member and reports the damaged tail. A restarted writer
  never appends behind a possibly damaged member: it opens a new part file
  (``voyage_20260101T12Z_part2.csv.gz``), which sorts after the first by name.

Numbers are written with a fixed number of decimals per unit (:data:`DECIMALS`), far below sensor
resolution (1e-5 deg, 1e-4 m), so the files stay small without losing information.

Reader
------
:func:`read_voyage_log` returns a :class:`VoyageLogReader`: iterate it for DataFrame chunks (streaming, for
month-long logs) or call :meth:`VoyageLogReader.read_all`. It accepts ``.csv``, ``.csv.gz``, ``.parquet``
or a directory of such files (read in name order as one log). It checks:

- required columns: ``time_utc``, ``heading_deg``, ``stw_kn`` and at least two of ``roll_deg``,
  ``pitch_deg``, ``heave_m``; unknown extra columns are kept in the frames and otherwise ignored;
- blank cells become NaN; times are parsed to ``datetime64[ns, UTC]`` (an explicit offset is converted;
  a time without zone is taken as UTC, docs/conventions.md);
- times strictly increasing (unsorted and duplicated times are errors);
- units that look wrong: headings/courses outside [0, 360), speeds above 40 kn (more than any merchant
  ship makes: km/h or a wrong column), roll or pitch beyond ±90°, and roll *and* pitch both never above
  0.6 over at least 20 min while heave or accelerations show a seaway (radians instead of degrees:
  0.6 rad = 34°; a ship moving in a seaway with significant heave ≥ 2 m shows more than 0.6° of roll or
  pitch; common practice, a heuristic that can be switched off with ``check_units=False``).

Every error (:class:`VoyageLogError`) names the file, the column, the row (1-based data row) and its
line, and the value (control characters escaped, :func:`onboard.formats.text.printable`).

Strict or lenient. By default (``strict=True``) the first bad row or file ends the read with that error.
With ``strict=False`` (replay ashore) the reader goes on and lists every problem in
:attr:`VoyageLogReader.report`: a row whose time is unreadable, duplicated or earlier than the row before
is skipped; a value that is not a number or is outside its range is blanked (not measured) in that row
only; a file that cannot be a voyage log (no header, missing columns, not readable) is skipped and the
next file of the folder is read. A heading or course of exactly 360 is valid (a sensor rounding 359.96)
and wraps to 0. Compression is recognised by content (the gzip magic bytes, RFC 1952 §2.3.1), not by
the file name. A damaged file (truncated gzip, partial or malformed lines, bytes that are not
UTF-8, a damaged Parquet row group) is read as far as possible; what was skipped is listed in
:attr:`VoyageLogReader.report`. A Parquet file cut short loses its footer (the schema) and cannot be
read at all: that is an error, which is why the live writer writes CSV.

References
----------
.. [1] RFC 4180, Common Format and MIME Type for Comma-Separated Values (CSV) Files.
.. [2] RFC 1952, GZIP file format specification version 4.3, §2.2 (multiple members).
"""

from __future__ import annotations

import csv
import gzip
import io
import os
import zlib
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pandas as pd

from onboard.formats.messages import CHANNELS, COLUMNS, format_time_ms
from onboard.formats.text import printable

DECIMALS: dict[str, int] = {
    "roll_deg": 5,
    "pitch_deg": 5,
    "heave_m": 4,
    "acc_x_ms2": 4,
    "acc_y_ms2": 4,
    "acc_z_ms2": 4,
    "heading_deg": 4,
    "stw_kn": 3,
    "sog_kn": 3,
    "cog_deg": 4,
    "lat_deg": 7,
    "lon_deg": 7,
}
"""Decimals written per column (1e-7 deg of latitude is 1 cm)."""

MOTION = ("roll_deg", "pitch_deg", "heave_m")
HEADER_LINE = ",".join(COLUMNS) + "\n"


class VoyageLogError(ValueError):
    """A voyage log is unusable or looks wrong; the message names file, column, row and value.

    ``whole_log`` marks an error about the log as a whole (units that look wrong over the log), which a
    lenient reader does not turn into "file skipped".
    """

    whole_log: bool = False


# --------------------------------------------------------------------------------------------- writer


def repair_csv(path: str | Path) -> int:
    """Cut a plain CSV file back to its last complete line; returns the number of bytes removed."""
    path = Path(path)
    size = path.stat().st_size
    if size == 0:
        return 0
    with open(path, "rb+") as f:
        pos = size
        step = 4096
        while pos > 0:
            start = max(0, pos - step)
            f.seek(start)
            block = f.read(pos - start)
            k = block.rfind(b"\n")
            if k >= 0:
                keep = start + k + 1
                if keep < size:
                    f.truncate(keep)
                    f.flush()
                    os.fsync(f.fileno())
                return size - keep
            pos = start
        f.truncate(0)
        return size


def _format_rows(rows: Sequence[tuple[int, Mapping[str, float]]]) -> str:
    out = []
    for t, values in rows:
        cells = [format_time_ms(t)]
        for c in CHANNELS:
            x = values.get(c)
            cells.append("" if x is None or x != x else repr(round(x, DECIMALS[c])))
        out.append(",".join(cells))
    out.append("")
    return "\n".join(out)


class VoyageLogWriter:
    """Rolling, crash-safe voyage-log writer (module docstring).

    Parameters
    ----------
    directory : str or Path
        Folder for the log files (created if missing).
    period : {"hour", "day"}
        One file per UTC hour or UTC day of sample time.
    compress : bool
        Write ``.csv.gz`` (one gzip member per batch) instead of ``.csv``.
    fsync : bool
        ``os.fsync`` after every batch (durability against power loss; costs about a millisecond).
    prefix : str
        File name prefix.
    """

    def __init__(
        self,
        directory: str | Path,
        *,
        period: str = "hour",
        compress: bool = False,
        fsync: bool = True,
        prefix: str = "voyage",
    ):
        if period not in ("hour", "day"):
            raise ValueError(f"period must be 'hour' or 'day', got {period!r}")
        if not prefix or "/" in prefix or os.sep in prefix:
            raise ValueError(f"prefix {prefix!r} must be a plain file-name prefix")
        self.directory = Path(directory)
        self.directory.mkdir(parents=True, exist_ok=True)
        self.period = period
        self.compress = compress
        self.fsync = fsync
        self.prefix = prefix
        self._file: io.BufferedWriter | None = None
        self._period_key: str | None = None
        self.current_path: Path | None = None
        self.rows_written = 0
        self.rejected_unsorted = 0
        self._last_ms: int | None = self._scan_last_time()

    # -- naming
    def _key(self, t_ms: int) -> str:
        dt = datetime.fromtimestamp(t_ms // 1000, tz=UTC)
        return dt.strftime("%Y%m%dT%HZ") if self.period == "hour" else dt.strftime("%Y%m%d")

    @property
    def suffix(self) -> str:
        return ".csv.gz" if self.compress else ".csv"

    def files(self) -> list[Path]:
        """Log files of this writer's prefix in the directory, in name (= time) order."""
        return sorted(
            p
            for p in self.directory.iterdir()
            if p.name.startswith(self.prefix + "_") and _log_kind(p) != "?"
        )

    def _scan_last_time(self) -> int | None:
        """Newest time already on disk (so a restarted service never writes older rows again)."""
        for p in reversed(self.files()):
            try:
                last = None
                for chunk in VoyageLogReader(p, check_units=False, chunk_rows=50_000):
                    if len(chunk):
                        last = chunk["time_utc"].iloc[-1]
            except VoyageLogError:
                continue
            if last is not None:
                return int(last.value // 1_000_000)
        return None

    def last_time_ms(self) -> int | None:
        """Newest sample time written so far (including files from before a restart) [epoch ms]."""
        return self._last_ms

    def _open(self, key: str) -> None:
        self.close()
        base = self.directory / f"{self.prefix}_{key}{self.suffix}"
        path = base
        if self.compress:
            n = 2
            while path.exists():
                path = self.directory / f"{self.prefix}_{key}_part{n}{self.suffix}"
                n += 1
            self._file = open(path, "ab")
            self._file.write(gzip.compress(HEADER_LINE.encode(), compresslevel=6, mtime=0))
        else:
            exists = path.exists() and path.stat().st_size > 0
            if exists:
                repair_csv(path)
                with open(path, encoding="utf-8", errors="replace") as f:
                    head = f.readline()
                if head != HEADER_LINE:
                    n = 2
                    while path.exists():
                        path = self.directory / f"{self.prefix}_{key}_part{n}{self.suffix}"
                        n += 1
                    exists = False
            self._file = open(path, "ab")
            if not exists:
                self._file.write(HEADER_LINE.encode())
        self._sync()
        self._period_key = key
        self.current_path = path

    def _sync(self) -> None:
        assert self._file is not None
        self._file.flush()
        if self.fsync:
            os.fsync(self._file.fileno())

    def write_rows(self, rows: Sequence[tuple[int, Mapping[str, float]]]) -> int:
        """Append rows ``(time_ms, {column: value})``; flushes (and fsyncs) before returning.

        Rows not strictly after the newest written time are dropped and counted in
        ``rejected_unsorted``, so the files stay sorted and free of duplicate times. Returns rows written.
        """
        groups: list[tuple[str, list[tuple[int, Mapping[str, float]]]]] = []
        for t, values in rows:
            if self._last_ms is not None and t <= self._last_ms:
                self.rejected_unsorted += 1
                continue
            self._last_ms = t
            key = self._key(t)
            if not groups or groups[-1][0] != key:
                groups.append((key, []))
            groups[-1][1].append((t, values))
        n = 0
        for key, part in groups:
            if key != self._period_key or self._file is None:
                self._open(key)
            assert self._file is not None
            data = _format_rows(part).encode()
            if self.compress:
                data = gzip.compress(data, compresslevel=6, mtime=0)
            try:
                self._file.write(data)
                self._sync()
            except OSError:
                # e.g. disk full: drop the handle so the next batch reopens the file (a plain CSV is cut
                # back to its last complete line, a gzip log continues in a new part)
                f, self._file, self._period_key = self._file, None, None
                try:
                    f.close()
                except OSError:
                    pass
                raise
            n += len(part)
        self.rows_written += n
        return n

    def close(self) -> None:
        """Flush and close the current file."""
        if self._file is not None:
            try:
                self._sync()
            finally:
                self._file.close()
                self._file = None
                self._period_key = None

    def __enter__(self) -> VoyageLogWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


# --------------------------------------------------------------------------------------------- reader


@dataclass
class ReadReport:
    """What a reader skipped or noticed (filled while iterating).

    Attributes
    ----------
    files : list of str
        Files read, in order.
    rows : int
        Data rows delivered.
    skipped_rows : int
        Rows skipped because they were damaged.
    problems : list of str
        One line per damage found (file, line, what).
    blanked_values : int
        Values blanked because they were not numbers or out of range (lenient reading).
    skipped_files : int
        Files skipped whole (lenient reading).
    """

    files: list[str] = field(default_factory=list)
    rows: int = 0
    skipped_rows: int = 0
    problems: list[str] = field(default_factory=list)
    blanked_values: int = 0
    skipped_files: int = 0

    @property
    def damaged(self) -> bool:
        return bool(self.problems)


def _log_kind(path: Path) -> str:
    name = path.name.lower()
    if name.endswith(".csv.gz"):
        return "csv.gz"
    if name.endswith(".csv"):
        return "csv"
    if name.endswith(".parquet"):
        return "parquet"
    return "?"


@dataclass
class _Stats:
    """Running statistics for the radians check."""

    first_ns: int | None = None
    last_ns: int | None = None
    max_abs: dict[str, float] = field(default_factory=dict)
    n: dict[str, int] = field(default_factory=dict)
    s1: dict[str, float] = field(default_factory=dict)
    s2: dict[str, float] = field(default_factory=dict)

    def update(self, df: pd.DataFrame) -> None:
        for c in ("roll_deg", "pitch_deg"):
            if c in df:
                v = df[c].to_numpy(dtype=float)
                v = v[np.isfinite(v)]
                if len(v):
                    self.max_abs[c] = max(self.max_abs.get(c, 0.0), float(np.max(np.abs(v))))
        for c in ("heave_m", "acc_x_ms2", "acc_y_ms2", "acc_z_ms2"):
            if c in df:
                v = df[c].to_numpy(dtype=float)
                v = v[np.isfinite(v)]
                if len(v):
                    # shift by the first value seen to keep the variance sum well conditioned
                    self.n[c] = self.n.get(c, 0) + len(v)
                    self.s1[c] = self.s1.get(c, 0.0) + float(v.sum())
                    self.s2[c] = self.s2.get(c, 0.0) + float((v * v).sum())

    def std(self, c: str) -> float:
        n = self.n.get(c, 0)
        if n < 2:
            return 0.0
        m = self.s1[c] / n
        return float(np.sqrt(max(self.s2[c] / n - m * m, 0.0)))


class VoyageLogReader:
    """Streaming, validating voyage-log reader (module docstring). Iterate for DataFrame chunks.

    Parameters
    ----------
    path : str or Path
        ``.csv``, ``.csv.gz``, ``.parquet`` file, or a directory of them (read in name order).
    chunk_rows : int
        Rows per chunk.
    check_units : bool
        Apply the radians heuristic (the hard range checks always apply).
    strict : bool
        Stop at the first bad row or file (default); False skips and reports them (module docstring).
    """

    RADIANS_MIN_SPAN_S = 20 * 60.0
    RADIANS_MAX_ABS = 0.6
    HEAVE_STD_SEAWAY_M = 0.5
    ACC_STD_SEAWAY_MS2 = 0.3
    MAX_SPEED_KN = 40.0

    MAX_PROBLEMS = 100

    def __init__(
        self, path: str | Path, *, chunk_rows: int = 200_000, check_units: bool = True, strict: bool = True
    ):
        self.path = Path(path)
        self.strict = bool(strict)
        if chunk_rows < 1:
            raise ValueError(f"chunk_rows must be >= 1, got {chunk_rows}")
        self.chunk_rows = int(chunk_rows)
        self.check_units = check_units
        self.report = ReadReport()
        if self.path.is_dir():
            self._files = sorted(p for p in self.path.iterdir() if p.is_file() and _log_kind(p) != "?")
            if not self._files:
                raise VoyageLogError(f"{self.path}: directory holds no .csv, .csv.gz or .parquet voyage log")
        elif self.path.is_file():
            if _log_kind(self.path) == "?":
                raise VoyageLogError(
                    f"{self.path}: unknown voyage-log type; expected .csv, .csv.gz or .parquet"
                )
            self._files = [self.path]
        else:
            raise VoyageLogError(f"{self.path}: no such file or directory")

    # -- public
    def __iter__(self) -> Iterator[pd.DataFrame]:
        self.report = ReadReport()
        stats = _Stats()
        last_ns: int | None = None
        for p in self._files:
            self.report.files.append(str(p))
            kind = _log_kind(p)
            chunks = self._parquet_chunks(p) if kind == "parquet" else self._csv_chunks(p, kind)
            try:
                for df, rows, lines in chunks:
                    if not len(df):
                        continue
                    df = self._validate(p, df, rows, lines, last_ns)
                    if not len(df):
                        continue
                    last_ns = int(df["time_utc"].iloc[-1].value)
                    if self.check_units:
                        self._check_radians(p, df, stats)
                    self.report.rows += len(df)
                    yield df
            except VoyageLogError as exc:
                if self.strict or exc.whole_log:
                    raise
                self.report.skipped_files += 1
                self._problem(f"file skipped: {exc}")

    def read_all(self) -> pd.DataFrame:
        """The whole log as one DataFrame (columns as in the file; ``time_utc`` UTC)."""
        parts = list(self)
        if not parts:
            return pd.DataFrame(
                {c: pd.Series(dtype="datetime64[ns, UTC]" if c == "time_utc" else float) for c in COLUMNS}
            )
        return pd.concat(parts, ignore_index=True)

    # -- csv
    def _raw_blocks(self, p: Path, kind: str) -> Iterator[tuple[int, bytes, list[bytes], bool]]:
        """Yield (number of the first line, block bytes, its lines, complete) reading through damage.

        Blocks hold whole lines; a final piece without a line end comes last with ``complete=False``.
        """
        with open(p, "rb") as f:
            magic = f.read(2)
        opener = gzip.open if magic == b"\x1f\x8b" else open  # by content, not by name
        lineno = 1
        buf = b""
        with opener(p, "rb") as f:
            while True:
                try:
                    block = f.read1(1 << 18)  # read1: one decompression step, so data before damage is kept
                except (EOFError, OSError, zlib.error) as exc:
                    self.report.problems.append(
                        f"{p}: stream damaged after line {lineno - 1} ({exc}); rest skipped"
                    )
                    break
                if not block:
                    break
                buf += block
                k = buf.rfind(b"\n")
                if k < 0:
                    continue
                data, buf = buf[:k], buf[k + 1 :]
                lines = data.split(b"\n")
                yield lineno, data, lines, True
                lineno += len(lines)
        if buf:
            yield lineno, buf, [buf], False

    def _csv_chunks(self, p: Path, kind: str) -> Iterator[tuple[pd.DataFrame, np.ndarray, np.ndarray]]:
        header: list[str] | None = None
        head_text = ""
        ncols = 0
        good: list[str] = []
        rows_parts: list[np.ndarray] = []
        lines_parts: list[np.ndarray] = []
        row = 0  # data rows seen (including skipped damaged ones)

        def emit(n: int) -> tuple[pd.DataFrame, np.ndarray, np.ndarray]:
            nonlocal good, rows_parts, lines_parts
            rows_all, lines_all = np.concatenate(rows_parts), np.concatenate(lines_parts)
            out = (self._parse_text(head_text, good[:n]), rows_all[:n], lines_all[:n])
            good = good[n:]
            rows_parts, lines_parts = [rows_all[n:]], [lines_all[n:]]
            return out

        for first, data, lines, complete in self._raw_blocks(p, kind):
            if header is None:
                while lines and header is None:
                    text = lines[0].decode("utf-8", errors="replace").rstrip("\r").lstrip("\ufeff")
                    lines = lines[1:]
                    first += 1
                    if text.strip():
                        if "\ufffd" in text or not text.isprintable():
                            raise VoyageLogError(
                                f"{p}: not a voyage log: the first line is not a CSV header of the "
                                f"voyage-log columns ({printable(text, 60)!r})"
                            )
                        header = [h.strip() for h in next(csv.reader([text]))]
                        self._check_header(p, header)
                        ncols = len(header)
                        head_text = ",".join(header) + "\n"
                if header is None or not lines:
                    continue
                data = b"\n".join(lines)
            text = None
            if complete and b'"' not in data:
                commas = ncols - 1
                if all(ln.count(b",") == commas for ln in lines):
                    try:
                        text = data.decode("utf-8")
                    except UnicodeDecodeError:
                        text = None
            if text is not None:  # fast path: every line of the block is well formed
                block_lines = text.replace("\r", "").split("\n")
                good.extend(block_lines)
                n = len(block_lines)
                rows_parts.append(np.arange(row + 1, row + n + 1))
                lines_parts.append(np.arange(first, first + n))
                row += n
            else:  # slow path: check line by line, skip and report damaged lines
                r_list, l_list = [], []
                for i, raw in enumerate(lines):
                    lineno = first + i
                    try:
                        t = raw.decode("utf-8").rstrip("\r")
                    except UnicodeDecodeError:
                        row += 1
                        self._skip(p, lineno, "bytes are not UTF-8")
                        continue
                    if not t.strip():
                        continue
                    row += 1
                    if not complete:
                        self._skip(p, lineno, "last line has no line end (cut short by a crash?)")
                        continue
                    nf = len(next(csv.reader([t]))) if '"' in t else t.count(",") + 1
                    if nf != ncols:
                        self._skip(p, lineno, f"{nf} fields where the header has {ncols}")
                        continue
                    good.append(t)
                    r_list.append(row)
                    l_list.append(lineno)
                rows_parts.append(np.asarray(r_list, dtype=np.int64))
                lines_parts.append(np.asarray(l_list, dtype=np.int64))
            while len(good) >= self.chunk_rows:
                yield emit(self.chunk_rows)
        if header is None:
            raise VoyageLogError(f"{p}: empty file, no header line with the voyage-log columns")
        if good:
            yield emit(len(good))

    def _skip(self, p: Path, lineno: int, why: str) -> None:
        self.report.skipped_rows += 1
        self._problem(f"{p}: line {lineno} skipped: {why}")

    def _bad(self, msg: str, action: str) -> None:
        """A bad row or value: the error when strict, else a listed problem (``msg; action``)."""
        if self.strict:
            raise VoyageLogError(msg)
        self._problem(f"{msg}; {action}")

    def _drop_rows(self, df: pd.DataFrame, rows: np.ndarray, lines: np.ndarray, bad: np.ndarray):
        keep = np.ones(len(df), dtype=bool)
        keep[bad] = False
        self.report.skipped_rows += len(bad)
        return df[keep].reset_index(drop=True), rows[keep], (lines[keep] if len(lines) else lines)

    def _problem(self, text: str) -> None:
        if len(self.report.problems) < self.MAX_PROBLEMS:
            self.report.problems.append(printable(text))
        elif len(self.report.problems) == self.MAX_PROBLEMS:
            self.report.problems.append(f"more problems; only the first {self.MAX_PROBLEMS} are listed")

    def _parse_text(self, head_text: str, good: list[str]) -> pd.DataFrame:
        text = head_text + "\n".join(good) + "\n"
        known = [c for c in COLUMNS if c != "time_utc"]
        df = pd.read_csv(
            io.StringIO(text),
            dtype={"time_utc": str},
            keep_default_na=False,
            na_values={c: ["", "nan", "NaN", "NA"] for c in known},
        )
        return df

    # -- parquet
    def _parquet_chunks(self, p: Path) -> Iterator[tuple[pd.DataFrame, np.ndarray, np.ndarray]]:
        import pyarrow as pa
        import pyarrow.parquet as pq

        try:
            # pre_buffer=False: with pre-buffering, pyarrow keeps the buffered column chunks of the
            # whole file alive while iterating (measured: +21 MB per day of a 10 Hz log); without it the
            # reader's memory stays flat however long the log.
            pf = pq.ParquetFile(p, pre_buffer=False)
        except Exception as exc:  # pyarrow raises several types for unreadable files
            raise VoyageLogError(f"{p}: not a readable Parquet file ({exc})") from None
        self._check_header(p, list(pf.schema_arrow.names))
        row = 0
        try:
            for batch in pf.iter_batches(batch_size=self.chunk_rows):
                df = batch.to_pandas()
                rows = np.arange(row + 1, row + len(df) + 1)
                row += len(df)
                yield df, rows, np.zeros(0, dtype=int)
        except (OSError, pa.ArrowException) as exc:
            self.report.problems.append(f"{p}: Parquet data damaged after row {row} ({exc}); rest skipped")

    # -- validation
    def _check_header(self, p: Path, header: list[str]) -> None:
        dup = sorted({h for h in header if header.count(h) > 1})
        if dup:
            raise VoyageLogError(f"{p}: column(s) {', '.join(dup)} appear more than once in the header")
        missing = [c for c in ("time_utc", "heading_deg", "stw_kn") if c not in header]
        motion = [c for c in MOTION if c in header]
        if missing or len(motion) < 2:
            need = list(missing)
            if len(motion) < 2:
                need.append(f"at least two of {', '.join(MOTION)} (found {len(motion)})")
            raise VoyageLogError(
                f"{p}: missing required column(s): {'; '.join(need)}. "
                f"Header has: {printable(', '.join(header), 200)}"
            )

    @staticmethod
    def _where(p: Path, col: str, rows: np.ndarray, lines: np.ndarray, i: int) -> str:
        line = f" (line {int(lines[i])})" if len(lines) else ""
        return f"{p}: column '{col}', row {int(rows[i])}{line}"

    def _validate(
        self, p: Path, df: pd.DataFrame, rows: np.ndarray, lines: np.ndarray, prev_ns: int | None
    ) -> pd.DataFrame:
        # time
        raw_t = df["time_utc"]
        if pd.api.types.is_datetime64_any_dtype(raw_t):
            t = raw_t.dt.tz_localize("UTC") if raw_t.dt.tz is None else raw_t.dt.tz_convert("UTC")
        else:
            t = pd.to_datetime(raw_t, format="ISO8601", utc=True, errors="coerce")
        bad = np.flatnonzero(t.isna().to_numpy())
        if len(bad):
            msgs = (
                f"{self._where(p, 'time_utc', rows, lines, int(i))}: value {printable(raw_t.iloc[int(i)], 60)!r} "
                "is not an ISO 8601 time (expected e.g. 2026-01-01T12:00:00.100Z)"
                for i in bad
            )
            for m in msgs:
                self._bad(m, "row skipped")
            t = t.drop(index=t.index[bad]).reset_index(drop=True)
            df, rows, lines = self._drop_rows(df, rows, lines, bad)
            if not len(df):
                return df
        df["time_utc"] = t.dt.as_unit("ns")
        ns = pd.DatetimeIndex(df["time_utc"]).as_unit("ns").asi8
        start = prev_ns if prev_ns is not None else np.iinfo(np.int64).min
        prev = np.concatenate(([start], ns[:-1]))
        if self.strict:
            bad = np.flatnonzero(ns <= prev)
        else:  # against the running maximum, so one wrong time drops only its own row
            run = np.maximum.accumulate(np.concatenate(([start], ns)))[:-1]
            bad = np.flatnonzero(ns <= run)
            prev = run
        for i in map(int, bad):
            what = (
                "duplicated" if ns[i] == prev[i] else "earlier than the row before (rows must be sorted by time)"
            )
            msg = (
                f"{self._where(p, 'time_utc', rows, lines, i)}: "
                f"time {df['time_utc'].iloc[i].isoformat()} is {what}"
            )
            self._bad(msg, "row skipped")
        if len(bad):
            df, rows, lines = self._drop_rows(df, rows, lines, bad)
        # numeric columns
        for c in CHANNELS:
            if c not in df:
                continue
            col = df[c]
            if not pd.api.types.is_numeric_dtype(col) or pd.api.types.is_bool_dtype(col):
                num = pd.to_numeric(col, errors="coerce")
                badm = num.isna() & ~(col.isna() | (col.astype(str).str.strip() == ""))
                for i in np.flatnonzero(badm.to_numpy()):
                    msg = (
                        f"{self._where(p, c, rows, lines, int(i))}: value {printable(col.iloc[int(i)], 60)!r} "
                        "is not a number (blank = not measured)"
                    )
                    self._bad(msg, "value blanked")
                    self.report.blanked_values += 1
                df[c] = num.astype(float)
            else:
                df[c] = col.astype(float)
        self._check_ranges(p, df, rows, lines)
        return df

    def _check_ranges(self, p: Path, df: pd.DataFrame, rows: np.ndarray, lines: np.ndarray) -> None:
        checks = [
            ("heading_deg", 0.0, 360.0, True, "true heading in degrees [0, 360] (360 wraps to 0)"),
            ("cog_deg", 0.0, 360.0, True, "course over ground in degrees [0, 360] (360 wraps to 0)"),
            (
                "stw_kn",
                -10.0,
                self.MAX_SPEED_KN,
                False,
                f"speed in knots (|speed| <= {self.MAX_SPEED_KN:g}; km/h or m/s columns?)",
            ),
            ("sog_kn", 0.0, self.MAX_SPEED_KN, False, f"speed in knots (<= {self.MAX_SPEED_KN:g})"),
            ("roll_deg", -90.0, 90.0, False, "roll in degrees [-90, 90]"),
            ("pitch_deg", -90.0, 90.0, False, "pitch in degrees [-90, 90]"),
            ("lat_deg", -90.0, 90.0, False, "latitude in degrees [-90, 90]"),
            ("lon_deg", -180.0, 180.0, False, "longitude in degrees [-180, 180]"),
            ("heave_m", -30.0, 30.0, False, "heave in metres [-30, 30]"),
        ]
        for c, lo, hi, wraps, what in checks:
            if c not in df:
                continue
            v = df[c].to_numpy(dtype=float)
            if wraps:  # exactly 360 is a valid reading of north (a sensor rounding 359.96) and wraps to 0
                v = np.where(v == 360.0, 0.0, v)
                df[c] = v
            with np.errstate(invalid="ignore"):
                badm = (v < lo) | ((v >= hi) if wraps else (v > hi)) | np.isinf(v)
            idx = np.flatnonzero(badm)
            if not len(idx):
                continue
            for i in idx:
                msg = (
                    f"{self._where(p, c, rows, lines, int(i))}: value {float(v[int(i)])!r} "
                    f"is outside the allowed range; expected {what}"
                )
                self._bad(msg, "value blanked")
            v = v.copy()
            v[idx] = np.nan
            df[c] = v
            self.report.blanked_values += len(idx)

    def _check_radians(self, p: Path, df: pd.DataFrame, stats: _Stats) -> None:
        ns = pd.DatetimeIndex(df["time_utc"]).as_unit("ns").asi8
        if stats.first_ns is None:
            stats.first_ns = int(ns[0])
        stats.last_ns = int(ns[-1])
        stats.update(df)
        span_s = (stats.last_ns - stats.first_ns) / 1e9
        if span_s < self.RADIANS_MIN_SPAN_S:
            return
        angles = {c: m for c, m in stats.max_abs.items()}
        if not angles or any(m > self.RADIANS_MAX_ABS for m in angles.values()):
            return
        heave = stats.std("heave_m")
        acc = max(stats.std("acc_x_ms2"), stats.std("acc_y_ms2"), stats.std("acc_z_ms2"))
        if heave >= self.HEAVE_STD_SEAWAY_M or acc >= self.ACC_STD_SEAWAY_MS2:
            cols = " and ".join(sorted(angles))
            vals = ", ".join(f"max |{c}| = {m:.3g}" for c, m in sorted(angles.items()))
            err = VoyageLogError(
                f"{p}: column(s) {cols} look like radians, not degrees: {vals} over {span_s / 60:.0f} min "
                f"while the ship moves in a seaway (heave std {heave:.2f} m, "
                f"acceleration std {acc:.2f} m/s²). "
                "Convert to degrees, or read with check_units=False if the values are right"
            )
            err.whole_log = True
            raise err


def read_voyage_log(
    path: str | Path, *, chunk_rows: int = 200_000, check_units: bool = True
) -> VoyageLogReader:
    """Open a voyage log for streaming validated reading.

    Parameters
    ----------
    path : str or Path
        ``.csv``, ``.csv.gz``, ``.parquet`` file or a directory of them.
    chunk_rows : int
        Rows per DataFrame chunk.
    check_units : bool
        Apply the radians heuristic (module docstring).

    Returns
    -------
    VoyageLogReader
        Iterate it for DataFrame chunks (``time_utc`` as ``datetime64[ns, UTC]``, channels float, unknown
        columns as read); ``.read_all()`` for one frame; ``.report`` for what was skipped.

    Raises
    ------
    VoyageLogError
        At open for a missing file or unknown type; while iterating for missing columns, bad values,
        unsorted or duplicated times and units that look wrong (message names file, column, row, value).
    """
    return VoyageLogReader(path, chunk_rows=chunk_rows, check_units=check_units)
