"""A thread-safe, bounded, columnar buffer of recent samples, one time series per channel.

The listener's writer thread appends rows in time order (:meth:`SampleBuffer.append_rows`); the analysis
cycle reads a window as a pandas DataFrame with the voyage-log columns (:meth:`SampleBuffer.window`); the
page reads per-channel sensor health (:meth:`SampleBuffer.channel_health`).

Memory is bounded twice: by age (``retention_s``, default 3 h, measured from the newest sample of the
channel) and by count (``max_samples_per_channel``). Each channel stores its data in fixed-size numpy
chunks (int64 milliseconds, float64 values); whole chunks are dropped from the old end, so memory stays
flat in a long run (tested) and appends cost O(1) amortised.

Sensor health (:meth:`SampleBuffer.channel_health`) follows the plain checks used for sensor
monitoring (common practice): *missing* (never received), *silent* (newest sample older than a
threshold), *frozen* (every value identical over a per-channel window, the samples spanning at least
90 % of it; a live motion sensor always shows noise), *implausible* (the listener rejected out-of-range
values for the channel recently).
"""

from __future__ import annotations

import threading
from collections.abc import Iterable, Mapping, Sequence
from datetime import datetime

import numpy as np
import pandas as pd

from onboard.formats.messages import CHANNELS, COLUMNS, format_time_ms

MOTION_CHANNELS = ("roll_deg", "pitch_deg", "heave_m", "acc_x_ms2", "acc_y_ms2", "acc_z_ms2")

DEFAULT_FROZEN_WINDOW_S: dict[str, float] = {
    **{c: 20.0 for c in MOTION_CHANNELS},
    "heading_deg": 120.0,
    "stw_kn": 300.0,
    "sog_kn": 300.0,
    "cog_deg": 300.0,
    "lat_deg": 600.0,
    "lon_deg": 600.0,
}
"""Window over which constant values mean "frozen" [s] (common practice: motion sensors show noise
within seconds; heading and speeds may legitimately hold one displayed value for minutes)."""


def to_ms(t: datetime | pd.Timestamp | int | float) -> int:
    """Convert an aware datetime/Timestamp (or epoch milliseconds) to epoch milliseconds."""
    if isinstance(t, int | float | np.integer | np.floating):
        return int(t)
    if isinstance(t, datetime):
        if t.tzinfo is None:
            raise ValueError(f"time {t!r} has no time zone; pass a timezone-aware UTC datetime")
        return round(t.timestamp() * 1000.0)
    raise TypeError(f"expected an aware datetime or epoch milliseconds, got {type(t).__name__}")


class _Series:
    """Chunked append-only (time, value) series of one channel."""

    __slots__ = ("chunk_size", "chunks", "cur_t", "cur_v", "fill", "count", "last_t")

    def __init__(self, chunk_size: int):
        self.chunk_size = chunk_size
        self.chunks: list[tuple[np.ndarray, np.ndarray]] = []  # full, frozen chunks, oldest first
        self.cur_t = np.empty(chunk_size, dtype=np.int64)
        self.cur_v = np.empty(chunk_size, dtype=np.float64)
        self.fill = 0
        self.count = 0
        self.last_t: int | None = None

    def extend(self, t: np.ndarray, v: np.ndarray) -> None:
        i = 0
        n = len(t)
        while i < n:
            k = min(self.chunk_size - self.fill, n - i)
            self.cur_t[self.fill : self.fill + k] = t[i : i + k]
            self.cur_v[self.fill : self.fill + k] = v[i : i + k]
            self.fill += k
            i += k
            if self.fill == self.chunk_size:
                self.chunks.append((self.cur_t, self.cur_v))
                self.cur_t = np.empty(self.chunk_size, dtype=np.int64)
                self.cur_v = np.empty(self.chunk_size, dtype=np.float64)
                self.fill = 0
        self.count += n
        self.last_t = int(t[-1])

    def evict(self, oldest_ms: int, max_samples: int) -> None:
        while self.chunks and (self.chunks[0][0][-1] < oldest_ms or self.count > max_samples):
            self.chunks.pop(0)
            self.count -= self.chunk_size

    def parts(self) -> Iterable[tuple[np.ndarray, np.ndarray]]:
        yield from self.chunks
        if self.fill:
            yield self.cur_t[: self.fill], self.cur_v[: self.fill]

    def slice(self, start_ms: int, end_ms: int) -> tuple[np.ndarray, np.ndarray]:
        ts, vs = [], []
        for t, v in self.parts():
            if t[-1] < start_ms or t[0] >= end_ms:
                continue
            a, b = np.searchsorted(t, [start_ms, end_ms], side="left")
            ts.append(t[a:b])
            vs.append(v[a:b])
        if not ts:
            return np.empty(0, np.int64), np.empty(0, np.float64)
        return np.concatenate(ts), np.concatenate(vs)

    def nbytes(self) -> int:
        return (len(self.chunks) + 1) * self.chunk_size * 16


class SampleBuffer:
    """Bounded columnar buffer of recent samples per voyage-log channel (thread-safe).

    Parameters
    ----------
    retention_s : float
        Keep at least this much history per channel [s] (whole chunks older than this are dropped).
    max_samples_per_channel : int
        Hard cap on stored samples per channel (memory bound whatever the sample rate).
    chunk_size : int
        Samples per storage chunk (memory granularity).
    """

    def __init__(
        self,
        *,
        retention_s: float = 3 * 3600.0,
        max_samples_per_channel: int = 1_200_000,
        chunk_size: int = 4096,
    ):
        if not retention_s > 0:
            raise ValueError(f"retention_s must be > 0 s, got {retention_s!r}")
        if max_samples_per_channel < chunk_size:
            raise ValueError(
                f"max_samples_per_channel ({max_samples_per_channel}) must be >= chunk_size ({chunk_size})"
            )
        self.retention_ms = int(retention_s * 1000)
        self.max_samples = int(max_samples_per_channel)
        self._lock = threading.Lock()
        self._series = {c: _Series(chunk_size) for c in CHANNELS}
        self.rejected_out_of_order = 0

    def append_rows(self, rows: Sequence[tuple[int, Mapping[str, float]]]) -> int:
        """Append merged rows ``(time_ms, {column: value})`` in non-decreasing time order.

        A value whose time is not after the channel's newest time is dropped and counted in
        ``rejected_out_of_order`` (the listener's ingest stage orders rows, so this is a safety net).
        Returns the number of values stored.
        """
        per: dict[str, tuple[list[int], list[float]]] = {}
        for t, values in rows:
            for c, x in values.items():
                lt = per.get(c)
                if lt is None:
                    lt = per[c] = ([], [])
                lt[0].append(t)
                lt[1].append(x)
        stored = 0
        with self._lock:
            for c, (ts, xs) in per.items():
                s = self._series.get(c)
                if s is None:
                    continue
                t = np.asarray(ts, dtype=np.int64)
                v = np.asarray(xs, dtype=np.float64)
                ok = np.empty(len(t), dtype=bool)
                ok[0] = s.last_t is None or t[0] > s.last_t
                ok[1:] = t[1:] > t[:-1]
                if not ok.all():
                    # keep a strictly increasing subsequence relative to the running maximum
                    run = np.maximum.accumulate(
                        np.concatenate(([s.last_t if s.last_t is not None else -1], t))
                    )
                    ok = t > run[:-1]
                    self.rejected_out_of_order += int((~ok).sum())
                    t, v = t[ok], v[ok]
                if len(t):
                    s.extend(t, v)
                    s.evict(int(t[-1]) - self.retention_ms, self.max_samples)
                    stored += len(t)
        return stored

    def window(self, start: datetime | int, end: datetime | int) -> pd.DataFrame:
        """Samples with ``start <= time < end`` as a DataFrame with the voyage-log columns.

        Parameters
        ----------
        start, end : datetime (timezone-aware) or int epoch milliseconds
            Half-open window.

        Returns
        -------
        pandas.DataFrame
            Columns exactly :data:`onboard.formats.messages.COLUMNS`; ``time_utc`` is ``datetime64[ns, UTC]``;
            one row per distinct sample time of any channel, NaN where a channel has no sample then.
        """
        a, b = to_ms(start), to_ms(end)
        if b < a:
            raise ValueError(f"window end {end!r} is before start {start!r}")
        with self._lock:
            parts = {c: s.slice(a, b) for c, s in self._series.items()}
        nonempty = [t for t, _ in parts.values() if len(t)]
        times = np.unique(np.concatenate(nonempty)) if nonempty else np.empty(0, np.int64)
        data: dict[str, object] = {"time_utc": pd.to_datetime(times, unit="ms", utc=True).as_unit("ns")}
        for c in CHANNELS:
            t, v = parts[c]
            col = np.full(len(times), np.nan)
            if len(t):
                col[np.searchsorted(times, t)] = v
            data[c] = col
        return pd.DataFrame(data, columns=list(COLUMNS))

    def latest_times(self) -> dict[str, int | None]:
        """Newest sample time per channel [epoch ms], None if never received."""
        with self._lock:
            return {c: s.last_t for c, s in self._series.items()}

    def newest_ms(self) -> int | None:
        """Newest sample time over all channels [epoch ms]."""
        vals = [t for t in self.latest_times().values() if t is not None]
        return max(vals) if vals else None

    def sample_counts(self) -> dict[str, int]:
        """Samples currently held per channel."""
        with self._lock:
            return {c: s.count for c, s in self._series.items()}

    def nbytes(self) -> int:
        """Bytes allocated for sample storage (all channels)."""
        with self._lock:
            return sum(s.nbytes() for s in self._series.values())

    def channel_health(
        self,
        now: datetime | int,
        *,
        channels: Sequence[str] = CHANNELS,
        silent_after_s: float = 15.0,
        frozen_window_s: Mapping[str, float] | None = None,
        min_frozen_samples: int = 5,
        implausible: Mapping[str, int] | None = None,
    ) -> list[dict[str, object]]:
        """Status per channel, shaped like the page's ``sensors`` list.

        Parameters
        ----------
        now : datetime or int
            Reference time (aware UTC datetime or epoch ms).
        channels : sequence of str
            Channels to report (those the vessel is expected to send).
        silent_after_s : float
            A channel whose newest sample is older than this is "silent" [s].
        frozen_window_s : mapping, optional
            Per-channel window for the frozen check [s]; defaults :data:`DEFAULT_FROZEN_WINDOW_S`.
        min_frozen_samples : int
            Fewest samples in the window before "frozen" can be said.
        implausible : mapping, optional
            Recent out-of-range rejections per channel (from the listener); > 0 means "implausible".

        Returns
        -------
        list of dict
            ``{"channel", "status" ("ok"|"silent"|"frozen"|"implausible"|"missing"), "last_utc", "age_s",
            "detail"}``.
        """
        now_ms = to_ms(now)
        fw = dict(DEFAULT_FROZEN_WINDOW_S)
        if frozen_window_s:
            fw.update(frozen_window_s)
        implausible = implausible or {}
        out: list[dict[str, object]] = []
        for c in channels:
            if c not in self._series:
                raise ValueError(f"unknown channel {c!r}; expected one of {', '.join(CHANNELS)}")
            with self._lock:
                s = self._series[c]
                last = s.last_t
                win = fw.get(c, 60.0)
                tw, v = s.slice(now_ms - int(win * 1000), now_ms + 1) if last is not None else (None, None)
            n_bad = int(implausible.get(c, 0))
            entry: dict[str, object] = {"channel": c, "last_utc": None, "age_s": None}
            if last is None:
                if n_bad:
                    entry.update(
                        status="implausible", detail=f"{n_bad} out-of-range values rejected, none accepted"
                    )
                else:
                    entry.update(status="missing", detail="no sample received")
                out.append(entry)
                continue
            age = (now_ms - last) / 1000.0
            entry.update(last_utc=format_time_ms(last), age_s=age)
            if n_bad:
                entry.update(status="implausible", detail=f"{n_bad} out-of-range values rejected recently")
            elif age > silent_after_s:
                entry.update(status="silent", detail=f"no sample for {age:.0f} s")
            elif (
                v is not None
                and tw is not None
                and len(v) >= min_frozen_samples
                and (tw[-1] - tw[0]) >= 0.9 * win * 1000
                and float(np.ptp(v)) == 0.0
            ):
                entry.update(status="frozen", detail=f"{len(v)} identical values ({v[-1]:g}) over {win:g} s")
            else:
                entry.update(status="ok", detail="")
            out.append(entry)
        return out
