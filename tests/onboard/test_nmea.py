"""NMEA 0183 input (onboard.live.nmea): real sentences over a real UDP socket and a real serial line.

Every sentence is written here from the field layouts of IEC 61162-1:2016 section 8.3 (= NMEA 0183
v4.11), named beside it; the checksum is the XOR of all characters between '$' and '*', two upper-case
hex digits (IEC 61162-1:2016 section 7.2.4), computed by the helper below independently of the library.
Section numbers are from memory; the layouts agree with the field lists pynmeagps documents.
Values are invented. Sign and unit conversions are checked against docs/conventions.md and docs/voyage-log.md (voyage-log columns:
roll + starboard down, pitch + bow up, heave + up; knots, degrees).
"""

import math
import os
import socket
import time

import pytest

from onboard.formats.voyagelog import VoyageLogWriter
from onboard.live.buffer import SampleBuffer
from onboard.live.listener import Listener
from onboard.live.nmea import NmeaConfigError, NmeaInput, NmeaInputConfig, XdrMapping, parse_nmea_settings
from onboard.live.settings import SettingsError, load_settings


def sentence(body: str) -> bytes:
    """'$' + body + '*hh' + CR LF, checksum per IEC 61162-1:2016 §7.2.4 (XOR between '$' and '*')."""
    c = 0
    for ch in body:
        c ^= ord(ch)
    return f"${body}*{c:02X}\r\n".encode("ascii")


# IEC 61162-1 §8.3 layouts:
#   HDT  $--HDT,x.x,T                      heading, degrees true
#   THS  $--THS,x.x,a                      true heading, mode indicator (A/E/M/S/V)
#   VHW  $--VHW,x.x,T,x.x,M,x.x,N,x.x,K    heading true, heading magnetic, speed knots, speed km/h
#   VTG  $--VTG,x.x,T,x.x,M,x.x,N,x.x,K,a  COG true, COG magnetic, SOG knots, SOG km/h, mode
#   RMC  $--RMC,hhmmss.ss,A,llll.ll,a,yyyyy.yy,a,x.x,x.x,xxxxxx,x.x,a,a,a  (v4.11 adds nav status)
#   GGA  $--GGA,hhmmss.ss,llll.ll,a,yyyyy.yy,a,x,xx,x.x,x.x,M,x.x,M,x.x,xxxx
#   XDR  $--XDR,a,x.x,a,c--c, ... (type, value, unit, transducer name) repeated
HDT = sentence("HEHDT,274.5,T")
THS = sentence("HETHS,274.6,A")
THS_INVALID = sentence("HETHS,274.6,V")
VHW = sentence("VWVHW,,T,,M,12.4,N,22.96,K")
VHW_KMH_ONLY = sentence("VWVHW,,T,,M,,N,18.52,K")
VTG = sentence("GPVTG,268.0,T,270.1,M,11.8,N,21.85,K,A")
RMC = sentence("GPRMC,120000.00,A,5430.000,N,00730.000,W,11.9,268.5,040126,,,A,S")
RMC_VOID = sentence("GPRMC,120000.00,V,,,,,,,040126,,,N,V")
GGA = sentence("GPGGA,120000.00,5430.000,N,00730.000,W,1,09,0.9,12.0,M,50.0,M,,")
XDR = sentence("YXXDR,A,-2.5,D,ROLL,A,1.5,D,PTCH,D,0.42,M,HEAVE")
XDR_UNMAPPED = sentence("YXXDR,C,12.5,C,AIRTEMP")
XDR_RADIANS = sentence("YXXDR,A,0.04,R,ROLL")

XDR_MAP = {
    "ROLL": XdrMapping("roll_deg", -1),  # this sensor gives + port down: mapped to + starboard down
    "PTCH": XdrMapping("pitch_deg", 1),
    "HEAVE": XdrMapping("heave_m", 1),
}


def wait_for(pred, what, timeout=20.0):
    # waits for an event, never asserts a duration (the suite runs on a busy 2-core machine)
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if pred():
            return
        time.sleep(0.02)
    raise AssertionError(f"timed out waiting for {what}")


@pytest.fixture
def listener(tmp_path):
    buf = SampleBuffer()
    log = VoyageLogWriter(tmp_path / "log", fsync=False)
    lst = Listener(None, buffer=buf, voyage_log=log)
    lst.start()
    yield lst, buf, log
    lst.stop()
    log.close()


def _udp_input(listener, **kw):
    cfg = NmeaInputConfig("bridge", udp_host="127.0.0.1", udp_port=0, xdr=XDR_MAP, **kw)
    inp = NmeaInput(cfg, listener)
    inp.start()
    assert inp.bound_port
    return inp


def _send(port, datagrams):
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as s:
        for d in datagrams:
            s.sendto(d, ("127.0.0.1", port))


def _total(inp):
    c = inp.stats()["sentences"]
    return sum(c.values())


def test_udp_sentences_become_voyage_log_values(listener):
    lst, buf, _ = listener
    inp = _udp_input(lst)
    try:
        t0 = int(time.time() * 1000) - 1000
        _send(inp.bound_port, [HDT, VHW + VTG, GGA, XDR])
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 5, "five good sentences")
        assert lst.flush(20.0)
        df = buf.window(t0, int(time.time() * 1000) + 1000)
    finally:
        inp.stop()

    def last(col):
        return df[col].dropna().iloc[-1]

    assert last("heading_deg") == pytest.approx(274.5)  # HDT field 1
    assert last("stw_kn") == pytest.approx(12.4)  # VHW field 5, knots
    assert last("sog_kn") == pytest.approx(11.8) and last("cog_deg") == pytest.approx(268.0)  # VTG
    # GGA 5430.000 N = 54.5 deg; 00730.000 W = -7.5 deg (ddmm.mmm, sign from the hemisphere letter)
    assert last("lat_deg") == pytest.approx(54.5) and last("lon_deg") == pytest.approx(-7.5)
    assert last("roll_deg") == pytest.approx(2.5)  # XDR ROLL -2.5 (+ port down) mapped with sign -1
    assert last("pitch_deg") == pytest.approx(1.5) and last("heave_m") == pytest.approx(0.42)
    assert inp.stats()["feed_refused"] == 0


def test_speed_from_kmh_when_knots_blank_and_ths(listener):
    lst, buf, _ = listener
    inp = _udp_input(lst)
    try:
        t0 = int(time.time() * 1000) - 1000
        _send(inp.bound_port, [VHW_KMH_ONLY, THS])
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 2, "two good sentences")
        assert lst.flush(20.0)
        df = buf.window(t0, int(time.time() * 1000) + 1000)
    finally:
        inp.stop()
    assert df["stw_kn"].dropna().iloc[-1] == pytest.approx(10.0)  # 18.52 km/h / 1.852 (exact definition)
    assert df["heading_deg"].dropna().iloc[-1] == pytest.approx(274.6)


def test_bad_sentences_are_counted_by_reason_and_never_fatal(listener):
    lst, buf, _ = listener
    inp = _udp_input(lst)
    bad_checksum = HDT.replace(b"274.5", b"275.5")  # same checksum, other content
    bad = [
        bad_checksum,  # bad_checksum
        b"$HEHDT,274.5,T\r\n",  # no_checksum
        b"hello world\r\n",  # malformed
        b"\xff\xfe$HEHDT\r\n",  # bad_encoding
        sentence("HEHDT,abc,T"),  # bad_field
        sentence("HEHDT,400.0,T"),  # out_of_range (heading 0..360)
        THS_INVALID,  # invalid_status (mode V)
        RMC_VOID,  # invalid_status (status V)
        sentence("GPZZZ,1,2,3"),  # unknown_sentence
        sentence("GPGSA,A,3,,,,,,,,,,,,,1.0,0.9,0.5,1"),  # parses, not used
        XDR_UNMAPPED,  # unmapped_transducer
        XDR_RADIANS,  # xdr_unit (roll must be type A in degrees 'D')
        b"$" + b"A" * 100 + b"*00\r\n",  # too_long (82 characters at most)
    ]
    try:
        _send(inp.bound_port, bad)
        wait_for(lambda: _total(inp) >= len(bad), "all bad sentences counted")
        _send(inp.bound_port, [HDT])  # the input still works after all that
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) >= 1, "a good sentence")
    finally:
        inp.stop()
    c = inp.stats()["sentences"]
    for reason in (
        "bad_checksum",
        "no_checksum",
        "malformed",
        "bad_encoding",
        "bad_field",
        "out_of_range",
        "unknown_sentence",
        "not_used",
        "unmapped_transducer",
        "xdr_unit",
        "too_long",
    ):
        assert c.get(reason, 0) >= 1, (reason, c)
    assert c["invalid_status"] == 2
    assert c["sentences_ok"] == 1


def test_talker_specific_mapping_wins(listener):
    # two sensors on one input: II gives roll + port down, YX + starboard down (invented layouts)
    lst, buf, _ = listener
    cfg = NmeaInputConfig(
        "bridge",
        udp_host="127.0.0.1",
        udp_port=0,
        xdr={"ROLL": XdrMapping("roll_deg", 1), "II:ROLL": XdrMapping("roll_deg", -1)},
    )
    inp = NmeaInput(cfg, lst)
    inp.start()
    try:
        t0 = int(time.time() * 1000) - 1000
        _send(inp.bound_port, [sentence("IIXDR,A,3.0,D,ROLL")])
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 1, "one sentence")
        assert lst.flush(20.0)
        df = buf.window(t0, int(time.time() * 1000) + 1000)
    finally:
        inp.stop()
    assert df["roll_deg"].dropna().iloc[-1] == pytest.approx(-3.0)


def test_multicast_group_input(listener):
    lst, buf, _ = listener
    group = "239.255.42.99"
    port = _free_udp_port()
    cfg = NmeaInputConfig("lan", udp_host=group, udp_port=port, interface="127.0.0.1", xdr=XDR_MAP)
    inp = NmeaInput(cfg, lst)
    inp.start()
    try:
        with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as s:
            s.setsockopt(socket.IPPROTO_IP, socket.IP_MULTICAST_IF, socket.inet_aton("127.0.0.1"))
            s.setsockopt(socket.IPPROTO_IP, socket.IP_MULTICAST_LOOP, 1)
            s.sendto(HDT, (group, port))
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 1, "a multicast sentence")
    finally:
        inp.stop()
    assert "io_error" not in inp.stats()["sentences"]


def _free_udp_port():
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def test_serial_line_through_a_pseudo_terminal(listener):
    # a real tty pair: pyserial opens the slave side as it would /dev/ttyUSB0
    lst, buf, _ = listener
    master, slave = os.openpty()
    cfg = NmeaInputConfig("gyro", serial=os.ttyname(slave), baud=4800)
    inp = NmeaInput(cfg, lst)
    inp.start()
    try:
        t0 = int(time.time() * 1000) - 1000
        os.write(master, HDT[:7])  # a sentence split across two writes arrives whole
        os.write(master, HDT[7:] + VHW)
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 2, "two serial sentences")
        assert lst.flush(20.0)
        df = buf.window(t0, int(time.time() * 1000) + 1000)
    finally:
        inp.stop()
        os.close(master)
        os.close(slave)
    assert df["heading_deg"].dropna().iloc[-1] == pytest.approx(274.5)
    assert not math.isnan(df["stw_kn"].dropna().iloc[-1])
    assert inp.stats()["sentences"].get("malformed", 0) == 0


def test_missing_serial_device_is_counted_not_fatal(listener):
    lst, _, _ = listener
    inp = NmeaInput(NmeaInputConfig("log", serial="/dev/does-not-exist-hw"), lst)
    inp.start()
    try:
        wait_for(lambda: inp.stats()["sentences"].get("io_error", 0) >= 1, "an io_error count")
    finally:
        inp.stop()


SERVICE_TOML = """
[[nmea]]
name = "bridge"
udp = "0.0.0.0:10110"
sentences = ["HDT", "VHW", "XDR"]
[nmea.xdr]
ROLL = { channel = "roll_deg", sign = -1 }
HEAVE = { channel = "heave_m", scale = 0.01, unit = "M" }

[[nmea]]
name = "gps"
serial = "/dev/ttyUSB0"
baud = 38400
"""


def test_settings_section(tmp_path):
    p = tmp_path / "service.toml"
    p.write_text(SERVICE_TOML)
    s = load_settings(p, environ={})
    a, b = s.nmea_inputs
    assert (a.udp_host, a.udp_port, a.sentences) == ("0.0.0.0", 10110, ("HDT", "VHW", "XDR"))
    assert a.xdr["ROLL"] == XdrMapping("roll_deg", -1) and a.xdr["HEAVE"].scale == 0.01
    assert (b.serial, b.baud, "XDR" in b.sentences) == ("/dev/ttyUSB0", 38400, False)  # XDR needs a mapping


@pytest.mark.parametrize(
    ("old", "new", "match"),
    [
        ('udp = "0.0.0.0:10110"', 'udp = "0.0.0.0:70000"', r"nmea\[0\]\.udp = '0\.0\.0\.0:70000'"),
        ('udp = "0.0.0.0:10110"', 'udp = "bridge:10110"', r"nmea\[0\]\.udp = 'bridge:10110'; allowed"),
        ('sentences = ["HDT", "VHW", "XDR"]', 'sentences = ["HDG"]', r"nmea\[0\]\.sentences = \['HDG'\]"),
        ("sign = -1", "sign = 2", r"nmea\[0\]\.xdr\.ROLL\.sign = 2; allowed: 1 or -1"),
        ('channel = "roll_deg"', 'channel = "roll"', r"xdr\.ROLL\.channel = 'roll'; allowed: roll_deg"),
        ("baud = 38400", "baud = 1234", r"nmea\[1\]\.baud = 1234"),
        ('name = "gps"', 'name = "bridge"', r"nmea\[1\]\.name = 'bridge'; allowed: a name not used"),
        (
            'serial = "/dev/ttyUSB0"',
            'serial = "/dev/ttyUSB0"\nudp = "1.2.3.4:5"',
            "exactly one of udp or serial",
        ),
    ],
)
def test_settings_errors_name_file_key_value(tmp_path, old, new, match):
    p = tmp_path / "service.toml"
    assert old in SERVICE_TOML
    p.write_text(SERVICE_TOML.replace(old, new, 1))
    with pytest.raises(SettingsError, match=match) as ei:
        load_settings(p, environ={})
    assert str(p) in str(ei.value) and "\n" not in str(ei.value)


def test_parser_rejects_non_table():
    with pytest.raises(NmeaConfigError, match="nmea = 3"):
        parse_nmea_settings(3, "x.toml")


def test_service_starts_and_stops_the_configured_inputs(tmp_path):
    # the composition root builds one reader per [[nmea]] table; the voyage log gets the rows
    from pathlib import Path

    from onboard.live import service as svc
    from onboard.live.settings import ServiceSettings

    port = _free_udp_port()
    cfg = NmeaInputConfig("bridge", udp_host="127.0.0.1", udp_port=port, xdr=XDR_MAP)
    s = ServiceSettings(
        vessel_file=Path(__file__).parents[2] / "config" / "demo_vessel.toml",
        broker_url=None,
        db_url=f"sqlite:///{tmp_path / 'service.sqlite'}",
        voyage_log_dir=tmp_path / "log",
        voyage_log_fsync=False,
        nmea_inputs=(cfg,),
    )
    service = svc.build_service(s)
    service.start(threads=False)
    try:
        (inp,) = service.nmea_inputs
        _send(port, [HDT + VHW + XDR])
        wait_for(lambda: inp.stats()["sentences"].get("sentences_ok", 0) == 3, "three sentences")
        assert service.listener.flush(20.0)
        assert service.buffer.latest_times()["heading_deg"] is not None
        assert service.buffer.latest_times()["roll_deg"] is not None
    finally:
        service.stop()
        service.store.close()
    assert inp._thread is None
