"""NMEA 0183 input benchmark: sentence decoding rate, and UDP → listener → buffer end to end.

Run: ``python benchmarks/bench_nmea.py [--seconds 5] [--rate 200]``. Prints figures; it is not a test.

Parts
-----
1. Decode: a mixed stream (HDT, VHW, VTG, GGA, XDR with three transducers, one bad checksum in ten)
   through :class:`onboard.live.nmea.NmeaDecoder` alone; sentences per second on one core.
2. UDP paced: one datagram of XDR + HDT every 1/``--rate`` s to a real socket on 127.0.0.1 for
   ``--seconds``; reports datagrams sent, sentences decoded, samples in the buffer, losses.
   (A gyro sends HDT at 10-20 Hz and a motion sensor XDR at 10-50 Hz: 200/s is several ships' worth.)
"""

from __future__ import annotations

import argparse
import socket
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from onboard.live.buffer import SampleBuffer  # noqa: E402
from onboard.live.listener import Listener  # noqa: E402
from onboard.live.nmea import NmeaDecoder, NmeaInput, NmeaInputConfig, XdrMapping  # noqa: E402


def sentence(body: str) -> bytes:
    c = 0
    for ch in body:
        c ^= ord(ch)
    return f"${body}*{c:02X}\r\n".encode()


XDR_MAP = {"ROLL": XdrMapping("roll_deg"), "PTCH": XdrMapping("pitch_deg"), "HEAVE": XdrMapping("heave_m")}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seconds", type=float, default=5.0)
    ap.add_argument("--rate", type=float, default=200.0, help="datagrams per second")
    ap.add_argument("--sentences", type=int, default=50_000)
    args = ap.parse_args()

    stream = [
        sentence("HEHDT,274.5,T"),
        sentence("VWVHW,,T,,M,12.4,N,22.96,K"),
        sentence("GPVTG,268.0,T,270.1,M,11.8,N,21.85,K,A"),
        sentence("GPGGA,120000.00,5430.000,N,00730.000,W,1,09,0.9,12.0,M,50.0,M,,"),
        sentence("YXXDR,A,-2.5,D,ROLL,A,1.5,D,PTCH,D,0.42,M,HEAVE"),
    ] * 2
    stream[3] = stream[3].replace(b"120000", b"120001")  # checksum no longer matches: counted, dropped
    dec = NmeaDecoder(NmeaInputConfig("bench", udp_host="127.0.0.1", udp_port=0, xdr=XDR_MAP))
    t0 = time.perf_counter()
    for i in range(args.sentences):
        dec.decode_line(stream[i % len(stream)])
    dt = time.perf_counter() - t0
    print(f"decode: {args.sentences / dt:,.0f} sentences/s on one core; counts {dict(dec.counts)}")

    buf = SampleBuffer()
    lst = Listener(None, buffer=buf)
    lst.start()
    inp = NmeaInput(NmeaInputConfig("bench", udp_host="127.0.0.1", udp_port=0, xdr=XDR_MAP), lst)
    inp.start()
    datagram = stream[4] + stream[0]
    n = int(args.seconds * args.rate)
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as s:
        start = time.perf_counter()
        for k in range(n):
            s.sendto(datagram, ("127.0.0.1", inp.bound_port))
            target = start + (k + 1) / args.rate
            while time.perf_counter() < target:
                time.sleep(min(0.001, max(0.0, target - time.perf_counter())))
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline and inp.stats()["sentences"].get("sentences_ok", 0) < 2 * n:
        time.sleep(0.05)
    lst.flush(30)
    inp.stop()
    lst.stop()
    ok = inp.stats()["sentences"].get("sentences_ok", 0)
    counts = buf.sample_counts()
    print(
        f"udp paced at {args.rate:g} datagrams/s for {args.seconds:g} s: {n} datagrams, {ok} of {2 * n} "
        f"sentences decoded, roll samples in buffer {counts.get('roll_deg', 0)}, heading "
        f"{counts.get('heading_deg', 0)}, listener {lst.stats()['ingest']}"
    )


if __name__ == "__main__":
    main()
