"""MQTT listener: validate and enqueue on the network thread, order and write on one writer thread.

Topic layout (plain names of our own; ``{vessel}`` is the configured vessel id, ``{source}`` a sensor id)
------------------------------------------------------------------------------------------------------

=================================  ======================================================  ===============
topic                              payload                                                 QoS / retained
=================================  ======================================================  ===============
``hw/{vessel}/samples/{source}``   project batch ``hw-samples/1`` (onboard.formats.messages)       1 / no
``hw/{vessel}/signalk``            Signal K delta message (onboard.formats.messages)               1 / no
``hw/{vessel}/status``             ``online`` on connect; ``offline`` as last will and     1 / yes
                                   on orderly stop
``hw/{vessel}/seastate``           latest sea-state estimate, JSON (:meth:`publish_json`)  1 / yes
``hw/{vessel}/advice``             latest advice, JSON (:meth:`publish_json`)              1 / yes
=================================  ======================================================  ===============

Delivery
--------
The client uses paho-mqtt 2.x with ``CallbackAPIVersion.VERSION2``, a stable client id, MQTT 3.1.1
``clean_session=False`` (a persistent session) and QoS 1 subscriptions made in ``on_connect`` (so a
reconnect renews them even if the broker lost the session). ``connect_async`` + ``loop_start`` retry the
first connection too; ``reconnect_delay_set`` doubles the wait from ``reconnect_min_s`` to
``reconnect_max_s``. While the listener is away the broker queues QoS 1 messages for the session
(size the broker's ``max_queued_messages`` for the longest outage; its default of 1000 silently drops).

paho acknowledges a QoS 1 message when ``on_message`` returns, so whatever the callback accepted is the
listener's responsibility. The callback therefore only validates (:mod:`onboard.formats.messages`) and puts the
samples on a large bounded queue. If the queue is full it *waits* up to ``queue_put_timeout_s`` (well
inside the keepalive), which holds the ack back and lets the broker's in-flight window apply
backpressure to the sender; only then is the message dropped and counted (``dropped_queue_full``).
Every callback is wrapped so that no exception can end paho's network thread (an exception in a
callback silently stops delivery); errors are counted (``callback_errors``).

Writer thread and ingest rules (:class:`Ingestor`)
--------------------------------------------------
- De-duplication by (source, sample time): QoS 1 is at-least-once, so a redelivered batch is dropped
  (``duplicate``).
- Out-of-order samples are held for ``reorder_s`` and inserted in time order; rows of different sources
  with the same time are merged into one voyage-log row, but each *channel* comes from one source at a
  time (its configured priority, others standby; :class:`Ingestor`). A sample older than what was
  already written is ``late``.
- Own ship only: Signal K deltas about another vessel are rejected (``other_vessel``).
- An out-of-range value drops only itself (``outliers``); a source sending them at a high rate is
  degraded for that channel and its standby takes over (:class:`Ingestor`).
- Clock jumps: a sample more than ``max_jump_s`` ahead of its source's latest time plus the real time
  elapsed since then, or more than ``max_jump_s`` behind it, is ``clock_jump``; optionally also a sample
  more than ``max_future_s`` ahead of the computer's clock. A run of consistent jumped samples
  re-anchors the source (``clock_rebased``), so one mistimed sample never locks ingest out.
- Released rows go to the :class:`~onboard.live.buffer.SampleBuffer` and the
  :class:`~onboard.formats.voyagelog.VoyageLogWriter` in one batch (one file flush per batch).

:meth:`Listener.feed` pushes a payload through the same parse → enqueue → writer path without a broker
(used by ``hwadvice demo`` and tests).
"""

from __future__ import annotations

import heapq
import json
import logging
import queue
import ssl
import threading
import time
from collections import Counter, deque
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any
from urllib.parse import unquote, urlsplit

import paho.mqtt.client as mqtt
from paho.mqtt.enums import CallbackAPIVersion

from onboard.formats.messages import (
    MAX_PAYLOAD_BYTES,
    MAX_SAMPLES_PER_MESSAGE,
    SELF_CONTEXT,
    MessageRejected,
    Outlier,
    Reason,
    Sample,
    parse_batch,
    parse_signalk_delta,
)
from onboard.formats.text import printable
from onboard.formats.voyagelog import VoyageLogWriter
from onboard.live.buffer import SampleBuffer

log = logging.getLogger(__name__)

TOPIC_ROOT = "hw"
PUBLISH_KINDS = ("seastate", "advice", "health")


def topics(vessel: str) -> dict[str, str]:
    """Topic names for one vessel (module docstring)."""
    _check_name(vessel, "vessel")
    base = f"{TOPIC_ROOT}/{vessel}"
    return {
        "samples": f"{base}/samples/+",
        "signalk": f"{base}/signalk",
        "status": f"{base}/status",
        **{k: f"{base}/{k}" for k in PUBLISH_KINDS},
    }


def samples_topic(vessel: str, source: str) -> str:
    """Topic on which source ``source`` publishes project batches."""
    _check_name(vessel, "vessel")
    _check_name(source, "source")
    return f"{TOPIC_ROOT}/{vessel}/samples/{source}"


def _check_name(name: str, what: str) -> None:
    if not isinstance(name, str) or not name or any(ch in name for ch in "/+#") or not name.isprintable():
        raise ValueError(f"{what} {name!r} must be a non-empty printable name without '/', '+' or '#'")


# ------------------------------------------------------------------------------------------ configuration


@dataclass(frozen=True)
class BrokerConfig:
    """How to reach the broker.

    Parameters
    ----------
    host, port : str, int
        Broker address (TLS usually on 8883).
    vessel : str
        Vessel id used in the topics.
    client_id : str, optional
        Stable client id (default ``hw-onboard-{vessel}``). Never run two listeners with one id: they
        take the session from each other.
    username, password : str, optional
        MQTT credentials.
    tls : bool
        Use TLS (system CA store unless ``ca_file``).
    ca_file, cert_file, key_file : str, optional
        TLS trust store and client certificate.
    keepalive_s, reconnect_min_s, reconnect_max_s : int
        Keepalive and reconnect backoff bounds [s].
    """

    host: str = "127.0.0.1"
    port: int = 1883
    vessel: str = "demo"
    client_id: str | None = None
    username: str | None = None
    password: str | None = None
    tls: bool = False
    ca_file: str | None = None
    cert_file: str | None = None
    key_file: str | None = None
    keepalive_s: int = 30
    reconnect_min_s: int = 1
    reconnect_max_s: int = 30

    def __post_init__(self) -> None:
        _check_name(self.vessel, "vessel")
        if not 0 < int(self.port) < 65536:
            raise ValueError(f"port must be in 1..65535, got {self.port!r}")
        if not 1 <= self.reconnect_min_s <= self.reconnect_max_s:
            raise ValueError(
                f"need 1 <= reconnect_min_s ({self.reconnect_min_s}) "
                f"<= reconnect_max_s ({self.reconnect_max_s})"
            )

    @property
    def effective_client_id(self) -> str:
        return self.client_id or f"hw-onboard-{self.vessel}"

    @classmethod
    def from_url(cls, url: str, **kw: Any) -> BrokerConfig:
        """Build from ``mqtt://[user[:password]@]host[:port]`` or ``mqtts://...`` (TLS, default port 8883)."""
        parts = urlsplit(url)
        if parts.scheme not in ("mqtt", "mqtts"):
            raise ValueError(f"broker URL {url!r}: scheme must be mqtt:// or mqtts://")
        if not parts.hostname:
            raise ValueError(f"broker URL {url!r} has no host")
        tls = parts.scheme == "mqtts"
        return cls(
            host=parts.hostname,
            port=parts.port or (8883 if tls else 1883),
            username=unquote(parts.username) if parts.username else None,
            password=unquote(parts.password) if parts.password else None,
            tls=tls,
            **kw,
        )


# --------------------------------------------------------------------------------------------- ingest


@dataclass
class _Row:
    values: dict[str, float]
    sources: list[str]


class Ingestor:
    """Ordering, de-duplication, clock checks and per-channel source choice between parsing and the sinks
    (no I/O, no threads of its own; :meth:`quality` may be read from another thread).

    Source choice (failover, not merging). Every channel has an ordered list of candidate sources: the
    configured ``source_priority`` for that channel first, then any other source in the order it was
    first heard. At each sample the *active* source of a channel is the first candidate that has sent that
    channel within ``source_idle_s`` (receive time) and is not *degraded*; only its values enter the voyage
    log, the others are standby (counted ``standby``). Two sensors of one channel are thus never merged
    into one series (their offsets and phases differ and would make spikes), and a stopped or degraded
    primary is replaced by the next one at once.

    Degraded source. An out-of-range value (:class:`~onboard.formats.messages.Outlier`) drops only that
    value; the source is *degraded* for that channel when, in the last ``implausible_window_s``, it sent at
    least ``implausible_min`` out-of-range values and they make at least ``implausible_rate`` of its values
    of that channel. A single spike, or a stray publisher on a source the channel does not use, therefore
    never affects the advice; a sensor that keeps sending garbage hands the channel to its standby. The
    channel is "implausible" for sensor health only when every source heard recently is degraded
    (:meth:`implausible_channels`). The thresholds are a project choice (common practice in sensor
    voting: a rate, not a single event).

    Clock jumps recover by themselves: a run of ``rebase_after`` consecutive jumped samples of one source
    that agree with each other (each within the jump rule of the previous one) re-anchors that source's
    clock, so one mistimed sample (or a sensor whose clock was really reset) cannot lock ingest out; a
    single stray timestamp inside a good stream never forms such a run.

    Parameters
    ----------
    reorder_s : float
        Samples are held this long (in sample time, behind the newest of each active source) so that
        out-of-order arrivals can be inserted in order [s].
    max_jump_s : float
        Clock-jump threshold relative to the source's latest sample [s].
    max_future_s : float or None
        Reject samples more than this ahead of the wall clock passed to :meth:`add` [s]; None disables.
    source_idle_s : float
        A source silent (in receive time) for this long no longer holds back the release, and a channel's
        source silent this long hands the channel to the next candidate [s].
    start_after_ms : int, optional
        Samples at or before this time are ``late`` (the newest time already in the voyage log).
    recent_keys : int
        How many released (source, time) keys are remembered to tell a redelivered ``duplicate`` from a
        ``late`` sample (both are dropped; only the label depends on it). Bounds memory.
    source_priority : mapping of str to sequence of str, optional
        Channel -> sources in order of preference (settings ``[ingest] priority``).
    implausible_window_s, implausible_rate, implausible_min : float, float, int
        The degraded-source rule above [s, -, count].
    rebase_after : int
        Consistent jumped samples that re-anchor a source's clock.
    """

    def __init__(
        self,
        *,
        reorder_s: float = 5.0,
        max_jump_s: float = 600.0,
        max_future_s: float | None = 120.0,
        source_idle_s: float = 10.0,
        start_after_ms: int | None = None,
        recent_keys: int = 20_000,
        source_priority: Mapping[str, Sequence[str]] | None = None,
        implausible_window_s: float = 300.0,
        implausible_rate: float = 0.05,
        implausible_min: int = 3,
        rebase_after: int = 10,
    ):
        if reorder_s < 0 or max_jump_s <= reorder_s:
            raise ValueError(f"need 0 <= reorder_s ({reorder_s}) < max_jump_s ({max_jump_s})")
        if not 0.0 < implausible_rate <= 1.0 or implausible_min < 1 or rebase_after < 2:
            raise ValueError(
                f"need 0 < implausible_rate ({implausible_rate}) <= 1, implausible_min ({implausible_min}) "
                f">= 1 and rebase_after ({rebase_after}) >= 2"
            )
        self.reorder_ms = int(reorder_s * 1000)
        self.max_jump_ms = int(max_jump_s * 1000)
        self.max_future_ms = None if max_future_s is None else int(max_future_s * 1000)
        self.source_idle_s = float(source_idle_s)
        self.released_ms: int | None = start_after_ms
        self._latest: dict[str, int] = {}  # newest accepted sample time per source
        self._latest_recv: dict[str, float] = {}  # receive time (monotonic) when that was accepted
        self._last_seen: dict[str, float] = {}  # last receive time per source that fed a row
        self._pending: dict[int, _Row] = {}
        self._heap: list[int] = []
        self._recent: set[tuple[str, int]] = set()
        self._recent_order: deque[tuple[str, int]] = deque()
        self._recent_max = recent_keys
        self.pending_count = 0
        self.priority = {c: tuple(v) for c, v in (source_priority or {}).items()}
        self._order: dict[str, list[str]] = {c: list(v) for c, v in self.priority.items()}
        self._chan_seen: dict[str, dict[str, float]] = {}  # channel -> source -> last receive time
        self._quality: dict[tuple[str, str], deque[list[float]]] = {}  # (source, channel) -> buckets
        self._q_window_s = float(implausible_window_s)
        self._q_rate = float(implausible_rate)
        self._q_min = int(implausible_min)
        self._rebase_after = int(rebase_after)
        self._runs: dict[str, list[float]] = {}  # source -> [last_t, last_recv, count] of jumped samples
        self._qlock = threading.Lock()

    # -- source quality
    _BUCKET_S = 10.0

    def _tally(self, src: str, channel: str, recv_s: float, ok: int, bad: int) -> None:
        key = (src, channel)
        buckets = self._quality.get(key)
        if buckets is None:
            buckets = self._quality[key] = deque()
        b = recv_s - recv_s % self._BUCKET_S
        if buckets and buckets[-1][0] == b:
            buckets[-1][1] += ok
            buckets[-1][2] += bad
        else:
            buckets.append([b, ok, bad])
        while buckets and buckets[0][0] < recv_s - self._q_window_s - self._BUCKET_S:
            buckets.popleft()
        if len(self._quality) > self.MAX_TRACKED:
            self._prune(recv_s)

    MAX_TRACKED = 512
    """(source, channel) pairs tracked before sources unheard for a whole window are forgotten (memory
    stays bounded whatever source names a publisher invents)."""

    def _prune(self, now_s: float) -> None:
        old = now_s - self._q_window_s - self._BUCKET_S
        for key in [k for k, b in self._quality.items() if not b or b[-1][0] < old]:
            del self._quality[key]
        for channel, order in self._order.items():
            keep = set(self.priority.get(channel, ())) | {s for s, c in self._quality if c == channel}
            order[:] = [s for s in order if s in keep]
            seen = self._chan_seen.get(channel, {})
            for src in [x for x in seen if x not in keep]:
                del seen[src]
        for src in [x for x, t in self._last_seen.items() if t < old]:
            for d in (self._last_seen, self._latest, self._latest_recv, self._runs):
                d.pop(src, None)

    def note_outliers(self, outliers: Iterable[Outlier], recv_s: float) -> int:
        """Record out-of-range values dropped by the parser (for the degraded-source rule)."""
        n = 0
        with self._qlock:
            for o in outliers:
                self._tally(o.source, o.column, recv_s, 0, 1)
                self._seen_channel(o.column, o.source, None)
                n += 1
        return n

    def _counts(self, src: str, channel: str, now_s: float) -> tuple[int, int]:
        cutoff = now_s - self._q_window_s
        ok = bad = 0
        for b, n_ok, n_bad in self._quality.get((src, channel), ()):
            if b + self._BUCKET_S > cutoff:
                ok += int(n_ok)
                bad += int(n_bad)
        return ok, bad

    def degraded(self, src: str, channel: str, now_s: float) -> bool:
        """True if ``src`` sent too many out-of-range values of ``channel`` recently (class docstring)."""
        ok, bad = self._counts(src, channel, now_s)
        return bad >= self._q_min and bad >= self._q_rate * (ok + bad)

    def _seen_channel(self, channel: str, src: str, recv_s: float | None) -> None:
        order = self._order.setdefault(channel, [])
        if src not in order:
            order.append(src)
        if recv_s is not None:
            self._chan_seen.setdefault(channel, {})[src] = recv_s

    def active_source(self, channel: str, now_s: float) -> str | None:
        """The source whose values of ``channel`` are used now (None if no candidate is current)."""
        seen = self._chan_seen.get(channel, {})
        current = [s for s in self._order.get(channel, ()) if now_s - seen.get(s, -1e18) < self.source_idle_s]
        for s in current:
            if not self.degraded(s, channel, now_s):
                return s
        return current[0] if current else None

    def implausible_channels(self, now_s: float) -> dict[str, int]:
        """Channels whose every recently heard source is degraded -> out-of-range values in the window."""
        out: dict[str, int] = {}
        with self._qlock:
            channels = {c for _, c in self._quality}
            for c in channels:
                sources = [s for (s, ch) in self._quality if ch == c]
                recent = [s for s in sources if sum(self._counts(s, c, now_s))]
                if recent and all(self.degraded(s, c, now_s) for s in recent):
                    out[c] = sum(self._counts(s, c, now_s)[1] for s in recent)
        return out

    def quality(self, now_s: float) -> dict[str, dict[str, Any]]:
        """Per channel: active source, candidates and each one's recent good/out-of-range counts."""
        out: dict[str, dict[str, Any]] = {}
        with self._qlock:
            for c, order in self._order.items():
                out[c] = {
                    "active": self.active_source(c, now_s),
                    "sources": {
                        s: dict(zip(("ok", "out_of_range"), self._counts(s, c, now_s), strict=True))
                        | {"degraded": self.degraded(s, c, now_s)}
                        for s in order
                    },
                }
        return out

    # -- clock
    def _jumped(self, src: str, t: int, recv_s: float) -> bool:
        """Count a jumped sample; True when a consistent run re-anchors the source's clock."""
        run = self._runs.get(src)
        if run is not None:
            last_t, last_recv, n = run
            ahead = last_t + max(recv_s - last_recv, 0.0) * 1000 + self.max_jump_ms
            if last_t - self.max_jump_ms <= t <= ahead:
                run[:] = [t, recv_s, n + 1]
                if n + 1 >= self._rebase_after:
                    del self._runs[src]
                    self._latest[src] = t
                    self._latest_recv[src] = recv_s
                    return True
                return False
        self._runs[src] = [t, recv_s, 1]
        return False

    def add(
        self,
        samples: Iterable[Sample],
        recv_s: float,
        wall_ms: int | None = None,
        outliers: Iterable[Outlier] = (),
    ) -> Counter[str]:
        """Take parsed samples received at monotonic time ``recv_s``; returns counts by outcome."""
        counts: Counter[str] = Counter()
        n_out = self.note_outliers(outliers, recv_s)
        if n_out:
            counts["outlier"] += n_out
        for s in samples:
            src, t = s.source, s.time_ms
            if self.max_future_ms is not None and wall_ms is not None and t > wall_ms + self.max_future_ms:
                counts["clock_jump"] += 1
                continue
            ref = self._latest.get(src)
            if ref is not None:
                ref_recv = self._latest_recv[src]
            elif self._latest:
                other = max(self._latest, key=self._latest.__getitem__)
                ref, ref_recv = self._latest[other], self._latest_recv[other]
            else:
                ref_recv = recv_s
            if ref is not None:
                allowed = ref + int(max(recv_s - ref_recv, 0.0) * 1000) + self.max_jump_ms
                if t > allowed or t < ref - self.max_jump_ms:
                    if not self._jumped(src, t, recv_s):
                        counts["clock_jump"] += 1
                        continue
                    counts["clock_rebased"] += 1
                else:
                    self._runs.pop(src, None)
            if self.released_ms is not None and t <= self.released_ms:
                counts["duplicate" if (src, t) in self._recent else "late"] += 1
                continue
            with self._qlock:
                chosen: dict[str, float] = {}
                for c, x in s.values.items():
                    self._tally(src, c, recv_s, 1, 0)
                    self._seen_channel(c, src, recv_s)
                    if self.active_source(c, recv_s) == src:
                        chosen[c] = x
                    else:
                        counts["standby"] += 1
            if not chosen:
                counts["standby_sample"] += 1
                continue
            row = self._pending.get(t)
            if row is None:
                row = self._pending[t] = _Row({}, [])
                heapq.heappush(self._heap, t)
            elif src in row.sources:
                counts["duplicate"] += 1
                continue
            row.sources.append(src)
            for c, x in chosen.items():
                if c in row.values:
                    counts["channel_conflict"] += 1
                else:
                    row.values[c] = x
            self.pending_count += 1
            counts["accepted"] += 1
            self._last_seen[src] = recv_s
            if ref is None or t > self._latest.get(src, -1):
                self._latest[src] = t
                self._latest_recv[src] = recv_s
        return counts

    def watermark(self, now_s: float) -> int | None:
        """Rows at or before this time can be released [epoch ms]; None = release everything.

        Only sources that fed rows recently hold the release back (a standby source never does).
        """
        active = [
            self._latest[s]
            for s, seen in self._last_seen.items()
            if s in self._latest and now_s - seen < self.source_idle_s
        ]
        if not active:
            return None
        return min(active) - self.reorder_ms

    def release(self, now_s: float, *, force: bool = False) -> list[tuple[int, dict[str, float]]]:
        """Pop rows that can no longer be overtaken, in time order (all pending rows if ``force``)."""
        wm = None if force else self.watermark(now_s)
        out: list[tuple[int, dict[str, float]]] = []
        heap = self._heap
        while heap and (wm is None or heap[0] <= wm):
            t = heapq.heappop(heap)
            row = self._pending.pop(t)
            out.append((t, row.values))
            self.pending_count -= len(row.sources)
            for src in row.sources:
                key = (src, t)
                self._recent.add(key)
                self._recent_order.append(key)
        while len(self._recent_order) > self._recent_max:
            self._recent.discard(self._recent_order.popleft())
        if out:
            self.released_ms = out[-1][0]
        return out


# --------------------------------------------------------------------------------------------- listener


def close_client_socket(client: mqtt.Client) -> None:
    """Close a paho client's socket once its network loop has stopped.

    ``disconnect()`` followed by ``loop_stop()`` leaves the socket open when the stop comes while the
    client is still connecting (the loop thread ends before it processes the disconnect); the socket is
    then only closed by the garbage collector. Closing it here makes a stop complete whatever the timing.
    """
    sock = client.socket()
    if sock is not None:
        try:
            sock.close()
        except OSError:  # already closed
            pass


@dataclass
class ListenerStats:
    """Counters (read with :meth:`Listener.stats`)."""

    messages: int = 0
    messages_ok: int = 0
    rejected: Counter[str] = field(default_factory=Counter)
    ingest: Counter[str] = field(default_factory=Counter)
    dropped_queue_full: int = 0
    outliers: int = 0
    callback_errors: int = 0
    writer_errors: int = 0
    log_errors: int = 0
    rows_released: int = 0
    connects: int = 0
    disconnects: int = 0
    last_message: dict[str, float] = field(default_factory=dict)  # topic → time.monotonic() of its last message
    last_problem: str = ""  # why the broker connection is not up (refused, unreachable, dropped)
    down_since: float | None = None  # time.monotonic() since the connection has not been up


class Listener:
    """MQTT sample listener with a writer thread (module docstring).

    Parameters
    ----------
    config : BrokerConfig or None
        Broker settings; None for a listener fed only in-process (:meth:`feed`).
    buffer : SampleBuffer
        Receives released rows.
    voyage_log : VoyageLogWriter, optional
        Receives released rows (the caller closes it).
    ingestor : Ingestor, optional
        Ingest rules; default ``Ingestor(start_after_ms=voyage_log.last_time_ms())``.
    queue_size : int
        Bound on queued messages (each is one parsed message).
    queue_put_timeout_s : float
        How long a full queue holds the callback (and so the ack) before dropping [s].
    max_payload_bytes, max_samples : int
        Payload limits passed to the parsers.
    wall_clock : callable or None
        Returns the wall time [s since epoch] for the future-time check; None disables it.
    writer_batch : int
        Most queued messages processed per writer step.
    own_contexts : sequence of str
        Signal K contexts taken as the own vessel (``vessels.self`` and the configured own id); deltas
        about any other vessel are rejected (``other_vessel``).
    """

    def __init__(
        self,
        config: BrokerConfig | None,
        *,
        buffer: SampleBuffer,
        voyage_log: VoyageLogWriter | None = None,
        ingestor: Ingestor | None = None,
        queue_size: int = 100_000,
        queue_put_timeout_s: float = 2.0,
        max_payload_bytes: int = MAX_PAYLOAD_BYTES,
        max_samples: int = MAX_SAMPLES_PER_MESSAGE,
        wall_clock: Callable[[], float] | None = time.time,
        writer_batch: int = 2000,
        own_contexts: Sequence[str] = (SELF_CONTEXT,),
    ):
        self.config = config
        self.vessel = config.vessel if config else "local"
        self.topics = topics(self.vessel)
        self.buffer = buffer
        self.voyage_log = voyage_log
        self.ingestor = ingestor or Ingestor(start_after_ms=voyage_log.last_time_ms() if voyage_log else None)
        self.max_payload_bytes = max_payload_bytes
        self.max_samples = max_samples
        self.wall_clock = wall_clock
        self.queue_put_timeout_s = queue_put_timeout_s
        self.writer_batch = writer_batch
        self._q: queue.Queue[Any] = queue.Queue(maxsize=queue_size)
        self._stats = ListenerStats()
        self._lock = threading.Lock()
        self.own_contexts = tuple(own_contexts)
        self._stop = threading.Event()
        self._stopping = False
        self._writer: threading.Thread | None = None
        self._connected = threading.Event()
        self.client: mqtt.Client | None = None
        self.session_present: bool | None = None
        if config is not None:
            self.client = self._make_client(config)

    # -- client
    def _make_client(self, cfg: BrokerConfig) -> mqtt.Client:
        c = mqtt.Client(CallbackAPIVersion.VERSION2, client_id=cfg.effective_client_id, clean_session=False)
        c.max_queued_messages_set(10_000)  # bounds our own outgoing queue (before connect)
        c.reconnect_delay_set(min_delay=cfg.reconnect_min_s, max_delay=cfg.reconnect_max_s)
        if cfg.username:
            c.username_pw_set(cfg.username, cfg.password)
        if cfg.tls:
            c.tls_set(
                ca_certs=cfg.ca_file,
                certfile=cfg.cert_file,
                keyfile=cfg.key_file,
                cert_reqs=ssl.CERT_REQUIRED,
            )
        c.will_set(self.topics["status"], "offline", qos=1, retain=True)
        c.on_connect = self._on_connect
        c.on_disconnect = self._on_disconnect
        c.on_connect_fail = self._on_connect_fail
        c.on_message = self._on_message
        c.suppress_exceptions = True  # belt and braces: the callbacks guard themselves
        c.enable_logger(log)
        return c

    def _on_connect(self, client: mqtt.Client, _u: Any, flags: Any, reason: Any, _p: Any) -> None:
        try:
            if reason.is_failure:
                log.error("broker refused the connection: %s", reason)
                with self._lock:
                    self._stats.last_problem = f"broker refused the connection: {reason}"
                return
            with self._lock:
                self._stats.connects += 1
                self._stats.last_problem = ""
                self._stats.down_since = None
            self.session_present = bool(getattr(flags, "session_present", False))
            client.subscribe([(self.topics["samples"], 1), (self.topics["signalk"], 1)])
            client.publish(self.topics["status"], "online", qos=1, retain=True)
            self._connected.set()
        except Exception:
            self._count_callback_error("on_connect")

    def _on_disconnect(self, _c: Any, _u: Any, _f: Any, reason: Any, _p: Any) -> None:
        try:
            self._connected.clear()
            with self._lock:
                self._stats.disconnects += 1
                self._stats.last_problem = f"connection lost: {reason}"
                if self._stats.down_since is None:
                    self._stats.down_since = time.monotonic()
            if self._stop.is_set() or self._stopping:
                log.info("disconnected from broker (%s) on stop", reason)
            else:
                log.warning("disconnected from broker (%s); reconnecting with backoff", reason)
        except Exception:
            self._count_callback_error("on_disconnect")

    def _on_connect_fail(self, _c: Any, _u: Any) -> None:
        try:
            with self._lock:
                self._stats.last_problem = "broker not reachable (no answer or connection refused)"
        except Exception:
            self._count_callback_error("on_connect_fail")

    def _on_message(self, _c: Any, _u: Any, msg: mqtt.MQTTMessage) -> None:
        try:
            self._handle(msg.topic, msg.payload)
        except Exception:
            self._count_callback_error("on_message")

    def _count_callback_error(self, where: str) -> None:
        try:
            with self._lock:
                self._stats.callback_errors += 1
            log.exception("error in %s (counted, listener continues)", where)
        except Exception:  # pragma: no cover - logging itself failed
            pass

    # -- parse and enqueue (network thread or feed)
    def _parse(self, topic: str, payload: bytes, outliers: list[Outlier] | None = None) -> list[Sample]:
        prefix = f"{TOPIC_ROOT}/{self.vessel}/"
        if topic == self.topics["signalk"]:
            return parse_signalk_delta(
                payload,
                max_bytes=self.max_payload_bytes,
                max_samples=self.max_samples,
                own_contexts=self.own_contexts,
                outliers=outliers,
            )
        if topic.startswith(prefix + "samples/"):
            source = topic[len(prefix) + len("samples/") :]
            return parse_batch(
                payload,
                topic_source=source,
                max_bytes=self.max_payload_bytes,
                max_samples=self.max_samples,
                outliers=outliers,
            )
        raise MessageRejected(Reason.UNKNOWN_TOPIC, f"topic {topic!r:.100} is not read by this listener")

    def _handle(self, topic: str, payload: bytes) -> bool:
        recv = time.monotonic()
        with self._lock:
            self._stats.messages += 1
            last = self._stats.last_message
            last[topic[:200]] = recv
            if len(last) > 64:  # bounded whatever topic names a publisher invents: forget the oldest
                del last[min(last, key=last.get)]
        outliers: list[Outlier] = []
        try:
            samples = self._parse(topic, payload, outliers)
        except MessageRejected as exc:
            with self._lock:
                self._stats.rejected[exc.reason.value] += 1
            log.debug("rejected message on %s: %s", topic, printable(str(exc)))
            return False
        if outliers:
            with self._lock:
                self._stats.outliers += len(outliers)
            log.debug("out-of-range values dropped on %s: %s", topic, printable(outliers[0].detail))
            if not samples:  # nothing usable left: the message counts as rejected
                self.ingestor.note_outliers(outliers, recv)
                with self._lock:
                    self._stats.rejected[Reason.OUT_OF_RANGE.value] += 1
                return False
        wall_ms = int(self.wall_clock() * 1000) if self.wall_clock else None
        try:
            self._q.put((samples, recv, wall_ms, outliers), timeout=self.queue_put_timeout_s)
        except queue.Full:
            with self._lock:
                self._stats.dropped_queue_full += 1
            return False
        with self._lock:
            self._stats.messages_ok += 1
        return True

    def feed(
        self, payload: bytes | str | Mapping[str, Any], *, topic: str | None = None, source: str | None = None
    ) -> bool:
        """Push one payload through parse → enqueue → writer without a broker.

        Parameters
        ----------
        payload : bytes, str or mapping
            A project batch or Signal K delta (a mapping is JSON-encoded first).
        topic : str, optional
            Full topic; default the samples topic of ``source`` (or the Signal K topic when the mapping
            has ``updates``).
        source : str, optional
            Source for the default samples topic (else the payload's ``source``).

        Returns
        -------
        bool
            True if the message was accepted onto the queue (rejections are counted in :meth:`stats`).
        """
        if isinstance(payload, Mapping):
            if topic is None and "updates" in payload:
                topic = self.topics["signalk"]
            source = source or payload.get("source")  # type: ignore[assignment]
            payload = json.dumps(payload)
        if isinstance(payload, str):
            payload = payload.encode()
        if topic is None:
            topic = samples_topic(self.vessel, source or "local")
        try:
            return self._handle(topic, payload)
        except Exception:
            self._count_callback_error("feed")
            return False

    # -- writer thread
    def _writer_loop(self) -> None:
        while True:
            try:
                first = self._q.get(timeout=0.05)
            except queue.Empty:
                first = None
                if self._stop.is_set():
                    break
            items = [] if first is None else [first]
            while len(items) < self.writer_batch:
                try:
                    items.append(self._q.get_nowait())
                except queue.Empty:
                    break
            try:
                self._process(items)
            except Exception:
                with self._lock:
                    self._stats.writer_errors += 1
                log.exception("writer step failed (counted, writer continues)")
            finally:
                for _ in items:
                    self._q.task_done()

    def _process(self, items: Sequence[Any]) -> None:
        force_events = []
        counts: Counter[str] = Counter()
        for item in items:
            if isinstance(item, threading.Event):
                force_events.append(item)
                continue
            samples, recv, wall_ms, outliers = item
            counts.update(self.ingestor.add(samples, recv, wall_ms, outliers))
        rows = self.ingestor.release(time.monotonic(), force=bool(force_events))
        with self._lock:
            self._stats.ingest.update(counts)
            self._stats.rows_released += len(rows)
        try:
            if rows:
                self._sink(rows)
        finally:
            for ev in force_events:
                ev.set()

    def _sink(self, rows: list[tuple[int, dict[str, float]]]) -> None:
        self.buffer.append_rows(rows)
        if self.voyage_log is not None:
            try:
                self.voyage_log.write_rows(rows)
            except Exception:
                with self._lock:
                    self._stats.log_errors += 1
                log.exception("voyage log write failed for %d rows (counted)", len(rows))

    # -- life cycle
    def start(self) -> None:
        """Start the writer thread and (with a broker) connect asynchronously."""
        if self._writer is not None:
            raise RuntimeError("listener already started")
        self._stop.clear()
        self._stopping = False
        self._writer = threading.Thread(target=self._writer_loop, name="hw-writer", daemon=True)
        self._writer.start()
        if self.client is not None and self.config is not None:
            with self._lock:
                self._stats.down_since = time.monotonic()
            self.client.connect_async(self.config.host, self.config.port, keepalive=self.config.keepalive_s)
            self.client.loop_start()

    def wait_connected(self, timeout: float = 10.0) -> bool:
        """Block until connected and subscribed (True) or until ``timeout`` [s] (False)."""
        return self._connected.wait(timeout)

    @property
    def connected(self) -> bool:
        return self._connected.is_set()

    def flush(self, timeout: float = 10.0) -> bool:
        """Process everything queued so far and release all held rows; True if done within ``timeout``."""
        if self._writer is None:
            raise RuntimeError("listener not started")
        ev = threading.Event()
        try:
            self._q.put(ev, timeout=timeout)
        except queue.Full:
            return False
        return ev.wait(timeout)

    def stop(self, timeout: float = 10.0) -> None:
        """Publish ``offline``, disconnect, drain the queue and stop the writer."""
        self._stopping = True
        if self.client is not None:
            try:
                if self.connected:
                    info = self.client.publish(self.topics["status"], "offline", qos=1, retain=True)
                    info.wait_for_publish(timeout=min(timeout, 2.0))
            except Exception:
                log.exception("could not publish offline status")
            self.client.disconnect()
            self.client.loop_stop()
            close_client_socket(self.client)
            self._connected.clear()
        if self._writer is not None:
            self.flush(timeout)
            self._stop.set()
            self._writer.join(timeout)
            self._writer = None

    # -- publishing
    def publish_json(self, kind: str, obj: Mapping[str, Any]) -> mqtt.MQTTMessageInfo:
        """Publish ``obj`` as retained JSON (QoS 1) on ``hw/{vessel}/{kind}``.

        Parameters
        ----------
        kind : {"seastate", "advice", "health"}
            Which retained topic.
        obj : mapping
            JSON-serialisable; NaN/Infinity are refused (not JSON, RFC 8259).

        Returns
        -------
        paho.mqtt.client.MQTTMessageInfo
            Queued by paho even while disconnected; sent after reconnect.
        """
        if kind not in PUBLISH_KINDS:
            raise ValueError(f"kind {kind!r}: expected one of {', '.join(PUBLISH_KINDS)}")
        if self.client is None:
            raise RuntimeError("listener has no broker configured; nothing to publish to")
        payload = json.dumps(obj, allow_nan=False, separators=(",", ":"))
        return self.client.publish(self.topics[kind], payload, qos=1, retain=True)

    # -- monitoring
    def stats(self) -> dict[str, Any]:
        """Snapshot of the counters, queue depth and connection state."""
        with self._lock:
            s = self._stats
            return {
                "connected": self.connected,
                "messages": s.messages,
                "messages_ok": s.messages_ok,
                "rejected": dict(s.rejected),
                "rejected_total": sum(s.rejected.values()),
                "ingest": dict(s.ingest),
                "dropped_queue_full": s.dropped_queue_full,
                "outliers": s.outliers,
                "callback_errors": s.callback_errors,
                "writer_errors": s.writer_errors,
                "log_errors": s.log_errors,
                "rows_released": s.rows_released,
                "connects": s.connects,
                "disconnects": s.disconnects,
                "queue_depth": self._q.qsize(),
                "pending_samples": self.ingestor.pending_count,
            }

    def link_health(self) -> dict[str, Any]:
        """The broker link for the bridge page: broker, connected or not (for how long and why), the age
        of the last message per topic [s] and the rejected messages by reason."""
        now = time.monotonic()
        with self._lock:
            s = self._stats
            cfg = self.config
            connected = self.connected
            return {
                "broker": None if cfg is None else f"{cfg.host}:{cfg.port}",
                "connected": connected,
                "down_for_s": None if connected or s.down_since is None else round(now - s.down_since, 1),
                "problem": "" if connected else s.last_problem,
                "topics": [
                    {"topic": topic, "age_s": round(now - t, 1)}
                    for topic, t in sorted(s.last_message.items(), key=lambda kv: -kv[1])[:12]
                ],
                "rejected": dict(s.rejected),
            }

    def recent_implausible(self, window_s: float | None = None) -> dict[str, int]:
        """Channels with no trustworthy source left -> their recent out-of-range values (sensor health).

        A channel is implausible only when every source heard for it recently is degraded
        (:class:`Ingestor`); one bad source with a healthy alternative, or a stray publisher on a source
        the channel does not use, is not. ``window_s`` is kept for callers; the window is the ingestor's.
        """
        return self.ingestor.implausible_channels(time.monotonic())

    def source_quality(self) -> dict[str, dict[str, Any]]:
        """Per channel: the active source and each candidate's recent counts (:meth:`Ingestor.quality`)."""
        return self.ingestor.quality(time.monotonic())

