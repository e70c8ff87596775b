"""Ingest benchmark: MQTT broker → listener → buffer + voyage log, and memory over a long accelerated run.

Run: ``python benchmarks/bench_ingest.py`` (starts a private mosquitto on a free loopback port unless
``HW_BENCH_MQTT_URL=mqtt://host:port`` is set). Prints figures; it is not a test.

Parts
-----
1. Burst: publish ``--samples`` samples in batches of ``--batch`` (QoS 1) as fast as the publisher can,
   wait until every sample is in the buffer and the voyage log, report samples/s end to end and losses.
2. Paced: publish at ``--rate`` samples/s for ``--seconds``; report whether the listener kept up (queue
   depth, lag from publish to buffer) and losses.
3. Long run: feed ``--hours`` of 10 Hz samples (all 12 channels) in-process through the same
   parse → queue → writer path as fast as possible, with a 3 h buffer; report buffer bytes and process
   RSS per simulated hour (memory must stay flat once the buffer is full).
"""

from __future__ import annotations

import argparse
import json
import math
import os
import shutil
import socket
import subprocess
import sys
import tempfile
import threading
import time
import uuid
from pathlib import Path
from urllib.parse import urlsplit

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import paho.mqtt.client as mqtt  # noqa: E402
import psutil  # noqa: E402
from paho.mqtt.enums import CallbackAPIVersion  # noqa: E402

from onboard.live.buffer import SampleBuffer  # noqa: E402
from onboard.live.listener import BrokerConfig, Ingestor, Listener, samples_topic  # noqa: E402
from onboard.formats.messages import BATCH_SCHEMA, format_time_ms  # noqa: E402
from onboard.formats.voyagelog import VoyageLogWriter, read_voyage_log  # noqa: E402


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def start_mosquitto(workdir: Path) -> tuple[subprocess.Popen[bytes], str, int]:
    port = free_port()
    conf = workdir / "mosquitto.conf"
    lines = [
        f"listener {port} 127.0.0.1",
        "allow_anonymous true",
        "persistence true",
        f"persistence_location {workdir}/",
        "max_queued_messages 1000000",
        "max_inflight_messages 100",
        "set_tcp_nodelay true",
        f"log_dest file {workdir}/mosquitto.log",
    ]
    if os.geteuid() == 0:
        lines.append("user root")
    conf.write_text("\n".join(lines) + "\n")
    exe = shutil.which("mosquitto") or "/usr/sbin/mosquitto"
    proc = subprocess.Popen([exe, "-c", str(conf)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    end = time.monotonic() + 15
    while time.monotonic() < end:
        try:
            socket.create_connection(("127.0.0.1", port), 0.2).close()
            return proc, "127.0.0.1", port
        except OSError:
            time.sleep(0.05)
    proc.kill()
    raise SystemExit("mosquitto did not start")


def broker(workdir: Path) -> tuple[subprocess.Popen[bytes] | None, str, int]:
    """``HW_BENCH_MQTT_URL`` if set (no process), else a private mosquitto started in ``workdir``."""
    url = os.environ.get("HW_BENCH_MQTT_URL")
    if url:
        parts = urlsplit(url)
        return None, parts.hostname or "127.0.0.1", parts.port or 1883
    return start_mosquitto(workdir)


def make_batch(source: str, start_ms: int, n: int, dt_ms: int) -> bytes:
    samples = []
    for i in range(n):
        t = start_ms + i * dt_ms
        x = t / 1000.0
        samples.append(
            {
                "time_utc": format_time_ms(t),
                "roll_deg": round(6 * math.sin(0.6 * x), 5),
                "pitch_deg": round(2 * math.sin(0.9 * x), 5),
                "heave_m": round(1.5 * math.sin(0.7 * x), 4),
                "acc_x_ms2": round(0.2 * math.sin(x), 4),
                "acc_y_ms2": round(0.5 * math.sin(0.6 * x), 4),
                "acc_z_ms2": round(1.0 * math.sin(0.7 * x), 4),
                "heading_deg": 245.0,
                "stw_kn": 12.5,
                "sog_kn": 12.1,
                "cog_deg": 247.0,
                "lat_deg": 47.5,
                "lon_deg": -12.25,
            }
        )
    return json.dumps({"schema": BATCH_SCHEMA, "source": source, "samples": samples}).encode()


class Pub:
    def __init__(self, host: str, port: int):
        self.c = mqtt.Client(
            CallbackAPIVersion.VERSION2, client_id="bench-pub-" + uuid.uuid4().hex[:6], clean_session=False
        )
        self.c.max_inflight_messages_set(100)
        self.acked = 0
        self.lock = threading.Lock()
        ev = threading.Event()
        self.c.on_connect = lambda *a: ev.set()
        self.c.on_publish = self._acked
        self.c.connect(host, port, keepalive=60)
        self.c.loop_start()
        if not ev.wait(10):
            raise SystemExit("publisher could not connect")

    def _acked(self, *a: object) -> None:
        with self.lock:
            self.acked += 1

    def close(self) -> None:
        self.c.disconnect()
        self.c.loop_stop()


def wait_until(cond, timeout: float) -> bool:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if cond():
            return True
        time.sleep(0.01)
    return cond()


def run_broker_part(
    host: str,
    port: int,
    *,
    samples: int,
    batch: int,
    rate: float | None,
    seconds: float,
    fsync: bool,
    label: str,
) -> None:
    vessel = "bench" + uuid.uuid4().hex[:6]
    tmp = Path(tempfile.mkdtemp(prefix="hw-bench-log-"))
    buf = SampleBuffer(retention_s=6 * 3600.0, max_samples_per_channel=2_000_000)
    log = VoyageLogWriter(tmp, fsync=fsync)
    lst = Listener(
        BrokerConfig(host=host, port=port, vessel=vessel),
        buffer=buf,
        voyage_log=log,
        ingestor=Ingestor(reorder_s=2.0, source_idle_s=2.0),
    )
    lst.start()
    if not lst.wait_connected(10):
        raise SystemExit("listener could not connect")
    pub = Pub(host, port)
    topic = samples_topic(vessel, "imu1")
    dt_ms = 10  # 100 Hz sample spacing
    n_msgs = samples // batch if rate is None else int(rate * seconds / batch)
    total = n_msgs * batch
    start_ms = int(time.time() * 1000) - total * dt_ms - 60_000  # all in the past (wall-clock check on)
    payloads = [make_batch("imu1", start_ms + k * batch * dt_ms, batch, dt_ms) for k in range(n_msgs)]
    max_depth = 0
    t0 = time.perf_counter()
    for k, p in enumerate(payloads):
        pub.c.publish(topic, p, qos=1)
        if rate is not None:
            target = t0 + (k + 1) * batch / rate
            while (now := time.perf_counter()) < target:
                time.sleep(min(target - now, 0.005))
            max_depth = max(max_depth, lst.stats()["queue_depth"])
    t_pub = time.perf_counter() - t0

    def accepted() -> int:
        return lst.stats()["ingest"].get("accepted", 0)

    ok = wait_until(lambda: accepted() >= total, timeout=120)
    t_recv = time.perf_counter() - t0
    lst.flush(60)
    t_all = time.perf_counter() - t0
    st = lst.stats()
    lst.stop()
    log.close()
    pub.close()
    in_buffer = buf.sample_counts()["roll_deg"]
    in_log = sum(len(c) for c in read_voyage_log(tmp, check_units=False))
    shutil.rmtree(tmp, ignore_errors=True)
    print(
        f"[{label}] {n_msgs} messages × {batch} samples = {total} samples, fsync={'on' if fsync else 'off'}"
    )
    print(
        f"    publish {t_pub:.2f} s; all accepted by the writer {t_recv:.2f} s; "
        f"released to buffer+log {t_all:.2f} s"
    )
    print(
        f"    end-to-end rate {total / t_all:,.0f} samples/s ({n_msgs / t_all:,.0f} msg/s)"
        + (f"; offered {rate:,.0f} samples/s, max queue depth {max_depth}" if rate else "")
    )
    print(
        f"    in buffer {in_buffer}, in voyage log {in_log}, lost {total - min(in_buffer, in_log)}; "
        f"rejected {st['rejected_total']}, queue-full drops {st['dropped_queue_full']}, "
        f"callback errors {st['callback_errors']}, all received: {ok}"
    )


def run_long(hours: float, fsync: bool) -> None:
    tmp = Path(tempfile.mkdtemp(prefix="hw-bench-long-"))
    buf = SampleBuffer(retention_s=3 * 3600.0)
    log = VoyageLogWriter(tmp, fsync=fsync, compress=True)
    lst = Listener(
        None, buffer=buf, voyage_log=log, wall_clock=None, ingestor=Ingestor(reorder_s=2.0, max_future_s=None)
    )
    lst.start()
    proc = psutil.Process()
    start_ms = 1_772_366_400_000  # 2026-03-01T12:00:00Z, invented voyage
    rate_hz, batch_s = 10, 10
    per_batch = rate_hz * batch_s
    batches_per_hour = 3600 // batch_s
    print(f"[long run] {hours:g} simulated hours at {rate_hz} Hz, 12 channels, 3 h buffer, gzip voyage log")
    print("    hour  buffer_MB  rss_MB  samples/s")
    t_start = time.perf_counter()
    for h in range(int(hours)):
        th = time.perf_counter()
        for b in range(batches_per_hour):
            t = start_ms + (h * 3600 + b * batch_s) * 1000
            lst.feed(make_batch("imu1", t, per_batch, 1000 // rate_hz), source="imu1")
        lst.flush(60)
        rate = batches_per_hour * per_batch / (time.perf_counter() - th)
        print(f"    {h + 1:4d}  {buf.nbytes() / 1e6:9.1f}  {proc.memory_info().rss / 1e6:6.0f}  {rate:9,.0f}")
    total = int(hours) * batches_per_hour * per_batch
    lst.stop()
    log.close()
    logged = sum(len(c) for c in read_voyage_log(tmp, check_units=False))
    print(
        f"    {total} samples in {time.perf_counter() - t_start:.1f} s; voyage log rows {logged} "
        f"({sum(p.stat().st_size for p in tmp.iterdir()) / 1e6:.1f} MB gzip), lost {total - logged}"
    )
    shutil.rmtree(tmp, ignore_errors=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--samples", type=int, default=200_000)
    ap.add_argument("--batch", type=int, default=50)
    ap.add_argument("--rate", type=float, default=5000.0)
    ap.add_argument("--seconds", type=float, default=20.0)
    ap.add_argument("--hours", type=float, default=12.0)
    ap.add_argument("--no-fsync", action="store_true")
    args = ap.parse_args()
    fsync = not args.no_fsync
    url = os.environ.get("HW_BENCH_MQTT_URL")
    proc = None
    workdir = Path(tempfile.mkdtemp(prefix="hw-bench-mosq-"))
    try:
        proc, host, port = broker(workdir)
        from importlib.metadata import version

        print(
            f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs, paho-mqtt {version('paho-mqtt')}, "
            f"mosquitto {'external' if url else 'private'}"
        )
        run_broker_part(
            host,
            port,
            samples=args.samples,
            batch=args.batch,
            rate=None,
            seconds=0,
            fsync=fsync,
            label="burst",
        )
        run_broker_part(
            host,
            port,
            samples=0,
            batch=args.batch,
            rate=args.rate,
            seconds=args.seconds,
            fsync=fsync,
            label="paced",
        )
        if args.hours > 0:
            run_long(args.hours, fsync)
    finally:
        if proc is not None:
            proc.terminate()
            proc.wait(10)
        shutil.rmtree(workdir, ignore_errors=True)


if __name__ == "__main__":
    main()
