"""NMEA 0183 (IEC 61162-1) input: UDP (unicast or multicast) and serial lines, into the same samples as MQTT.

Many ships' gyros, logs, GNSS receivers and motion sensors speak NMEA 0183 on a serial line (IEC 61162-1,
4800 baud; IEC 61162-2, 38400 baud) or as UDP datagrams on the bridge network (IEC 61162-450 carries the
same sentences). Each configured input runs one reader thread; sentences are parsed with the maintained
library ``pynmeagps`` (never by hand), checked, turned into voyage-log values (docs/voyage-log.md) and fed to
the :class:`~onboard.live.listener.Listener` as the project's own ``hw-samples/1`` batches, so they go
through exactly the same validation, ordering, de-duplication, sample buffer and voyage log as MQTT.

Sentences used (field layouts per NMEA 0183 v4.11 / IEC 61162-1:2016, section 8.3; section number from
memory):

=========  ==========================================================  ==================================
sentence   fields read                                                 voyage-log column(s)
=========  ==========================================================  ==================================
``HDT``    heading, degrees true                                       ``heading_deg``
``THS``    true heading, mode (A autonomous, E estimated; others       ``heading_deg``
           M manual, S simulator, V not valid are refused)
``VHW``    speed through water, knots (km/h / 1.852 if knots blank)    ``stw_kn``
``VTG``    course over ground true, speed over ground knots, mode      ``cog_deg``, ``sog_kn``
           (N = not valid refused)
``RMC``    status (A valid, V refused), latitude, longitude, SOG, COG  ``lat_deg``, ``lon_deg``,
                                                                       ``sog_kn``, ``cog_deg``
``GGA``    latitude, longitude, fix quality (0 = no fix refused)       ``lat_deg``, ``lon_deg``
``XDR``    transducer groups (type, value, unit, name), mapped per     ``roll_deg``, ``pitch_deg``,
           input in the settings: name -> channel, sign, scale         ``heave_m``, ``acc_*_ms2``
=========  ==========================================================  ==================================

Other sentences that parse are counted as ``not_used`` (a bridge network carries many), not as errors.
The XDR transducer names and signs differ between makers, so every input maps them in the settings
(sign so that the voyage log gets roll + starboard down, pitch + bow up, heave + up, docs/conventions.md).
XDR angular displacement must come as type ``A`` in degrees (``D``), linear displacement as type ``D`` in
metres (``M``); accelerations take the unit the mapping names (default: any) times ``scale``.

Time: HDT, THS, VHW, VTG and XDR carry no time of their own, so every value is stamped with the time the
datagram or line was received (UTC, milliseconds). GGA/RMC times of fix are not used, so that all channels
share one clock; a source whose receive time repeats is moved on by one millisecond.

Bad input is never fatal: every refused sentence is counted by reason (``too_long``, ``bad_encoding``,
``malformed``, ``no_checksum``, ``bad_checksum``, ``unknown_sentence``, ``bad_field``, ``invalid_status``,
``out_of_range``, ``unmapped_transducer``, ``xdr_unit``, ``io_error``) and the first of each reason is
logged as one line naming the input, the reason and the sentence. Checksums are verified (IEC 61162-1
requires them on every sentence). A sentence longer than 82 characters is refused (the standard's
maximum, start delimiter to line end).

Settings (``[[nmea]]`` tables in the service TOML; see :func:`parse_nmea_settings`)::

    [[nmea]]
    name = "bridge"                 # prefix of the source ids (bridge.HEHDT, ...)
    udp = "0.0.0.0:10110"           # or a multicast group "239.192.0.1:60001"; or serial = "/dev/ttyUSB0"
    # interface = "192.168.1.20"    # multicast: local interface to join on (default any)
    # baud = 4800                   # serial only: 4800 (IEC 61162-1) or 38400 (IEC 61162-2)
    # sentences = ["HDT", "VHW", "XDR"]   # which to use (default all of the table above)
    [nmea.xdr]                      # transducer name -> channel, sign (+1/-1), scale
    ROLL = { channel = "roll_deg", sign = 1 }
    PITCH = { channel = "pitch_deg", sign = -1 }   # this sensor gives + bow down
    HEAVE = { channel = "heave_m" }
    "II:ROLL" = { channel = "roll_deg", sign = -1 } # talker:name, for one of two sensors on one input

References
----------
.. [1] IEC 61162-1:2016, *Maritime navigation and radiocommunication equipment and systems - Digital
   interfaces - Part 1: Single talker and multiple listeners* (sentence structure, checksum, 82-character
   limit, HDT, THS, VHW, VTG, RMC, GGA, XDR layouts).
.. [2] NMEA 0183 *Standard for Interfacing Marine Electronic Devices*, version 4.11 (2018), the same
   sentence layouts.
"""

from __future__ import annotations

import ipaddress
import logging
import re
import socket
import struct
import threading
import time
from collections import Counter
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from pynmeagps import NMEAMessageError, NMEAParseError, NMEAReader, NMEATypeError
from pynmeagps.nmeahelpers import calc_checksum

from onboard.formats.messages import BATCH_SCHEMA, MessageRejected, check_value, format_time_ms

log = logging.getLogger(__name__)

__all__ = [
    "MAX_SENTENCE_CHARS",
    "SENTENCES",
    "XDR_CHANNELS",
    "NmeaConfigError",
    "NmeaInputConfig",
    "XdrMapping",
    "NmeaDecoder",
    "NmeaInput",
    "parse_nmea_settings",
]

MAX_SENTENCE_CHARS = 82
"""Longest sentence, start delimiter to <CR><LF> included (IEC 61162-1 [1])."""

SENTENCES = ("HDT", "THS", "VHW", "VTG", "RMC", "GGA", "XDR")
"""Sentence formatters read (module docstring)."""

XDR_CHANNELS = {
    "roll_deg": ("A", "D"),
    "pitch_deg": ("A", "D"),
    "heave_m": ("D", "M"),
    "acc_x_ms2": (None, None),
    "acc_y_ms2": (None, None),
    "acc_z_ms2": (None, None),
}
"""Channels an XDR transducer may feed, with the XDR type and unit expected (None = any) [1]."""

_KNOTS_PER_KMH = 1.0 / 1.852  # 1 kn = 1.852 km/h exactly (definition of the nautical mile)
_SENTENCE_RE = re.compile(r"^[$!][A-Z0-9]{2,}[^*]*\*[0-9A-Fa-f]{2}$")


class NmeaConfigError(ValueError):
    """An ``[[nmea]]`` settings table is invalid (names the key, the value and what is allowed)."""


@dataclass(frozen=True)
class XdrMapping:
    """How one XDR transducer name becomes a voyage-log channel."""

    channel: str
    sign: int = 1
    scale: float = 1.0
    unit: str | None = None
    """XDR unit letter required (None = the default of the channel, :data:`XDR_CHANNELS`)."""


@dataclass(frozen=True)
class NmeaInputConfig:
    """One NMEA input (see the module docstring for the settings keys)."""

    name: str
    udp_host: str | None = None
    udp_port: int | None = None
    interface: str | None = None
    serial: str | None = None
    baud: int = 4800
    sentences: tuple[str, ...] = SENTENCES
    xdr: Mapping[str, XdrMapping] = field(default_factory=dict)

    @property
    def multicast(self) -> bool:
        return self.udp_host is not None and ipaddress.ip_address(self.udp_host).is_multicast

    @property
    def where(self) -> str:
        if self.serial is not None:
            return f"nmea input {self.name!r} (serial {self.serial})"
        return f"nmea input {self.name!r} (udp {self.udp_host}:{self.udp_port})"


def _fail(where: str, key: str, value: Any, allowed: str) -> NmeaConfigError:
    return NmeaConfigError(f"{where}: {key} = {value!r}; allowed: {allowed}")


def parse_nmea_settings(items: Any, where: str) -> tuple[NmeaInputConfig, ...]:
    """Validate the ``[[nmea]]`` tables of the service TOML.

    Parameters
    ----------
    items : list of mappings
        The parsed TOML array of tables.
    where : str
        Source named in errors (the settings file).

    Raises
    ------
    NmeaConfigError
        One line naming the source, ``nmea[i].key``, the value and what is allowed.
    """
    if isinstance(items, Mapping):
        items = [items]
    if not isinstance(items, list):
        raise _fail(where, "nmea", items, "[[nmea]] tables")
    allowed_keys = ("name", "udp", "interface", "serial", "baud", "sentences", "xdr")
    out: list[NmeaInputConfig] = []
    for i, t in enumerate(items):
        key = f"nmea[{i}]"
        if not isinstance(t, Mapping):
            raise _fail(where, key, t, "a table")
        unknown = sorted(set(t) - set(allowed_keys))
        if unknown:
            raise _fail(where, f"{key}.{unknown[0]}", t[unknown[0]], "keys " + ", ".join(allowed_keys))
        name = t.get("name")
        if not isinstance(name, str) or not re.fullmatch(r"[A-Za-z0-9_.-]{1,32}", name):
            raise _fail(where, f"{key}.name", name, "1-32 letters, digits, '_', '.', '-'")
        if any(c.name == name for c in out):
            raise _fail(where, f"{key}.name", name, "a name not used by another input")
        udp, serial = t.get("udp"), t.get("serial")
        if (udp is None) == (serial is None):
            raise _fail(where, key, {k: t.get(k) for k in ("udp", "serial")}, "exactly one of udp or serial")
        host = port = None
        if udp is not None:
            m = re.fullmatch(r"\s*([0-9.]+):(\d{1,5})\s*", udp) if isinstance(udp, str) else None
            try:
                ipaddress.IPv4Address(m.group(1)) if m else None
            except ValueError:
                m = None
            if not m or not 1 <= int(m.group(2)) <= 65535:
                raise _fail(where, f"{key}.udp", udp, "'address:port' with an IPv4 address and port 1-65535")
            host, port = m.group(1), int(m.group(2))
        elif not isinstance(serial, str) or not serial.strip():
            raise _fail(
                where, f"{key}.serial", serial, "a serial device such as /dev/ttyUSB0 (or a pyserial URL)"
            )
        interface = t.get("interface")
        if interface is not None:
            try:
                ipaddress.IPv4Address(interface)
            except (ValueError, TypeError):
                raise _fail(
                    where, f"{key}.interface", interface, "an IPv4 address of this computer"
                ) from None
        baud = t.get("baud", 4800)
        if isinstance(baud, bool) or baud not in (4800, 9600, 19200, 38400, 57600, 115200):
            raise _fail(where, f"{key}.baud", baud, "4800 (IEC 61162-1), 38400 (IEC 61162-2) or 9600..115200")
        sentences = t.get("sentences", list(SENTENCES))
        if not isinstance(sentences, list) or not sentences or any(s not in SENTENCES for s in sentences):
            raise _fail(where, f"{key}.sentences", sentences, "a list from " + ", ".join(SENTENCES))
        xdr_raw = t.get("xdr", {})
        if not isinstance(xdr_raw, Mapping):
            raise _fail(where, f"{key}.xdr", xdr_raw, "a table transducer name -> {channel, sign, scale}")
        xdr: dict[str, XdrMapping] = {}
        for tname, spec in xdr_raw.items():
            k2 = f"{key}.xdr.{tname}"
            if not re.fullmatch(r"([A-Z0-9]{2}:)?[A-Za-z0-9_.+-]{1,32}", str(tname)):
                raise _fail(where, k2, tname, "a transducer name, optionally after a talker id ('YX:ROLL')")
            if not isinstance(spec, Mapping) or set(spec) - {"channel", "sign", "scale", "unit"}:
                raise _fail(where, k2, spec, "{ channel = ..., sign = 1 or -1, scale = number, unit = 'X' }")
            ch = spec.get("channel")
            if ch not in XDR_CHANNELS:
                raise _fail(where, f"{k2}.channel", ch, ", ".join(XDR_CHANNELS))
            sign = spec.get("sign", 1)
            if isinstance(sign, bool) or sign not in (1, -1):
                raise _fail(where, f"{k2}.sign", sign, "1 or -1")
            scale = spec.get("scale", 1.0)
            if isinstance(scale, bool) or not isinstance(scale, int | float) or not 0 < scale < 1e6:
                raise _fail(where, f"{k2}.scale", scale, "a positive number")
            unit = spec.get("unit")
            if unit is not None and (not isinstance(unit, str) or len(unit) > 2):
                raise _fail(where, f"{k2}.unit", unit, "an XDR unit letter such as 'D', 'M' or 'G'")
            xdr[str(tname).upper()] = XdrMapping(ch, int(sign), float(scale), unit)
        if "XDR" in sentences and not xdr:
            sentences = [s for s in sentences if s != "XDR"]
        out.append(NmeaInputConfig(name, host, port, interface, serial, int(baud), tuple(sentences), xdr))
    return tuple(out)


# ---------------------------------------------------------------------------------------------- decoding


class _Refused(Exception):
    def __init__(self, reason: str, detail: str):
        super().__init__(detail)
        self.reason = reason
        self.detail = detail


def _num(msg: Any, attr: str, label: str) -> float | None:
    v = getattr(msg, attr, "")
    if v == "" or v is None:
        return None
    if isinstance(v, bool) or not isinstance(v, int | float):
        raise _Refused("bad_field", f"{label} {attr} = {v!r}")
    return float(v)


class NmeaDecoder:
    """Sentence → (source, values) with counters; no I/O, no threads (used by :class:`NmeaInput`).

    Parameters
    ----------
    config : NmeaInputConfig
    """

    def __init__(self, config: NmeaInputConfig):
        self.config = config
        self.counts: Counter[str] = Counter()
        self._logged: set[str] = set()
        self._lock = threading.Lock()

    def _refuse(self, reason: str, detail: str) -> None:
        with self._lock:
            self.counts[reason] += 1
            first = reason not in self._logged
            self._logged.add(reason)
        (log.warning if first else log.debug)("%s: %s: %s", self.config.where, reason, detail)

    def decode_line(self, raw: bytes) -> tuple[str, dict[str, float]] | None:
        """One sentence (bytes without or with <CR><LF>) → (source id, {column: value}) or None.

        Refusals are counted by reason in :attr:`counts` and never raised.
        """
        try:
            return self._decode(raw)
        except _Refused as exc:
            self._refuse(exc.reason, exc.detail)
            return None
        except Exception as exc:  # the library or a value did something unexpected: count, go on
            self._refuse("bad_field", f"{raw[:90]!r}: {type(exc).__name__}: {exc}")
            return None

    def _decode(self, raw: bytes) -> tuple[str, dict[str, float]] | None:
        line = raw.rstrip(b"\r\n")
        if not line.strip():
            return None
        if len(line) + 2 > MAX_SENTENCE_CHARS:
            raise _Refused(
                "too_long", f"{len(line) + 2} characters (at most {MAX_SENTENCE_CHARS}): {line[:90]!r}"
            )
        try:
            text = line.decode("ascii")
        except UnicodeDecodeError:
            raise _Refused("bad_encoding", f"not ASCII: {line!r}") from None
        if not text.isprintable() or text[0] not in "$!":
            raise _Refused("malformed", f"not a sentence ('$' or '!' ... '*hh'): {text!r}")
        if "*" not in text:
            raise _Refused("no_checksum", f"no '*hh' checksum: {text!r}")
        if not _SENTENCE_RE.match(text):
            raise _Refused("malformed", f"not a sentence ('$' or '!' ... '*hh'): {text!r}")
        body, given = text[1:].rsplit("*", 1)
        if calc_checksum(body) != given.upper():
            raise _Refused("bad_checksum", f"checksum {given} should be {calc_checksum(body)}: {text!r}")
        try:
            msg = NMEAReader.parse(line + b"\r\n", validate=3)  # VALCKSUM | VALMSGID
        except NMEATypeError as exc:
            raise _Refused("bad_field", f"{exc}: {text!r}") from None
        except (NMEAParseError, NMEAMessageError) as exc:
            raise _Refused("unknown_sentence", f"{exc}: {text!r}") from None
        if msg is None:
            raise _Refused("unknown_sentence", f"{text!r}")
        mid = msg.msgID
        if mid not in self.config.sentences:
            with self._lock:
                self.counts["not_used"] += 1
            return None
        values = getattr(self, f"_{mid.lower()}")(msg, text)
        if not values:
            return None
        source = f"{self.config.name}.{msg.talker}{mid}"
        checked: dict[str, float] = {}
        for col, x in values.items():
            try:
                y = check_value(col, x, where=f"{self.config.where} {mid}")
            except MessageRejected as exc:
                raise _Refused("out_of_range", f"{exc.detail}: {text!r}") from None
            if y is not None:
                checked[col] = y
        with self._lock:
            self.counts["sentences_ok"] += 1
        return source, checked

    # -- one method per sentence formatter (field names as pynmeagps gives them)
    def _hdt(self, m, text):
        return {"heading_deg": _num(m, "headingT", "HDT")}

    def _ths(self, m, text):
        mode = getattr(m, "mi", "")
        if mode not in ("A", "E"):
            raise _Refused("invalid_status", f"THS mode {mode!r} (A or E used; M, S, V not): {text!r}")
        return {"heading_deg": _num(m, "headt", "THS")}

    def _vhw(self, m, text):
        kn = _num(m, "spdN", "VHW")
        if kn is None:
            kmh = _num(m, "spdK", "VHW")
            kn = None if kmh is None else kmh * _KNOTS_PER_KMH
        return {"stw_kn": kn}

    def _vtg(self, m, text):
        if getattr(m, "posMode", "") == "N":
            raise _Refused("invalid_status", f"VTG mode N (not valid): {text!r}")
        return {"cog_deg": _num(m, "cogt", "VTG"), "sog_kn": _num(m, "sogn", "VTG")}

    def _rmc(self, m, text):
        if getattr(m, "status", "") != "A" or getattr(m, "posMode", "") == "N":
            raise _Refused("invalid_status", f"RMC status {getattr(m, 'status', '')!r} (A used): {text!r}")
        return {
            "lat_deg": _num(m, "lat", "RMC"),
            "lon_deg": _num(m, "lon", "RMC"),
            "sog_kn": _num(m, "spd", "RMC"),
            "cog_deg": _num(m, "cog", "RMC"),
        }

    def _gga(self, m, text):
        if getattr(m, "quality", 0) in (0, "", None):
            raise _Refused("invalid_status", f"GGA fix quality 0 (no fix): {text!r}")
        return {"lat_deg": _num(m, "lat", "GGA"), "lon_deg": _num(m, "lon", "GGA")}

    def _xdr(self, m, text):
        out: dict[str, float] = {}
        i = 1
        while hasattr(m, f"tdrid_{i:02d}"):
            name = str(getattr(m, f"tdrid_{i:02d}")).upper()
            typ = getattr(m, f"tdrtype_{i:02d}", "")
            unit = getattr(m, f"dataunit_{i:02d}", "")
            value = getattr(m, f"data_{i:02d}", "")
            i += 1
            # a mapping may name the talker too ("YX:ROLL"): two sensors with the same names on one input
            spec = self.config.xdr.get(f"{m.talker}:{name}") or self.config.xdr.get(name)
            if spec is None:
                self._refuse("unmapped_transducer", f"XDR transducer {name!r} not in the settings: {text!r}")
                continue
            want_type, want_unit = XDR_CHANNELS[spec.channel]
            want_unit = spec.unit or want_unit
            if (want_type is not None and typ != want_type) or (want_unit is not None and unit != want_unit):
                self._refuse(
                    "xdr_unit",
                    f"XDR {name!r} type {typ!r} unit {unit!r}; {spec.channel} needs type "
                    f"{want_type or 'any'} unit {want_unit or 'any'}: {text!r}",
                )
                continue
            if value == "" or isinstance(value, bool) or not isinstance(value, int | float):
                self._refuse("bad_field", f"XDR {name!r} value {value!r}: {text!r}")
                continue
            if spec.channel in out:
                self._refuse("bad_field", f"XDR {name!r} repeats channel {spec.channel}: {text!r}")
                continue
            out[spec.channel] = spec.sign * spec.scale * float(value)
        return out


# ------------------------------------------------------------------------------------------------- input


class NmeaInput:
    """One reader thread for one configured NMEA input, feeding a listener.

    Parameters
    ----------
    config : NmeaInputConfig
    listener : object with ``feed(mapping) -> bool``
        Normally :class:`onboard.live.listener.Listener` (same path as MQTT batches).
    wall_clock : callable
        Seconds since the epoch (receive time stamps).
    """

    def __init__(self, config: NmeaInputConfig, listener, *, wall_clock: Callable[[], float] = time.time):
        self.config = config
        self.listener = listener
        self.decoder = NmeaDecoder(config)
        self.wall_clock = wall_clock
        self._last_ms: dict[str, int] = {}
        self._stop = threading.Event()
        self._thread: threading.Thread | None = None
        self._ready = threading.Event()
        self.bound_port: int | None = None
        self.fed = 0
        self.feed_refused = 0

    # -- the shared step: one datagram or a chunk of lines
    def handle(self, data: bytes) -> int:
        """Decode every sentence in ``data`` and feed the values; returns the samples fed."""
        now_ms = int(self.wall_clock() * 1000)
        per_source: dict[str, list[dict[str, Any]]] = {}
        for raw in data.replace(b"\r", b"\n").split(b"\n"):
            res = self.decoder.decode_line(raw)
            if res is None or not res[1]:
                continue
            source, values = res
            t = max(now_ms, self._last_ms.get(source, -1) + 1)
            self._last_ms[source] = t
            per_source.setdefault(source, []).append({"time_utc": format_time_ms(t), **values})
        n = 0
        for source, samples in per_source.items():
            ok = self.listener.feed({"schema": BATCH_SCHEMA, "source": source, "samples": samples})
            if ok:
                n += len(samples)
            else:
                self.feed_refused += len(samples)
        self.fed += n
        return n

    def stats(self) -> dict[str, Any]:
        """Counters: sentences by outcome/reason, samples fed and refused by the listener."""
        with self.decoder._lock:
            counts = dict(self.decoder.counts)
        return {
            "input": self.config.name,
            "sentences": counts,
            "fed": self.fed,
            "feed_refused": self.feed_refused,
        }

    # -- life cycle
    def start(self, timeout: float = 5.0) -> None:
        """Open the socket or serial line and start the reader thread (waits until it is open)."""
        if self._thread is not None:
            raise RuntimeError(f"{self.config.where} already started")
        self._stop.clear()
        target = self._udp_loop if self.config.serial is None else self._serial_loop
        self._thread = threading.Thread(target=target, name=f"hw-nmea-{self.config.name}", daemon=True)
        self._thread.start()
        self._ready.wait(timeout)

    def stop(self, timeout: float = 5.0) -> None:
        self._stop.set()
        if self._thread is not None:
            self._thread.join(timeout)
        self._thread = None

    def _io_error(self, exc: BaseException) -> None:
        self.decoder._refuse("io_error", f"{type(exc).__name__}: {exc}")

    def _udp_socket(self) -> socket.socket:
        cfg = self.config
        sock = socket.socket(socket.AF_INET, socket.SOCK_DGRAM, socket.IPPROTO_UDP)
        sock.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        if cfg.multicast:
            sock.bind(("", cfg.udp_port))
            iface = socket.inet_aton(cfg.interface or "0.0.0.0")
            mreq = struct.pack("4s4s", socket.inet_aton(cfg.udp_host), iface)
            sock.setsockopt(socket.IPPROTO_IP, socket.IP_ADD_MEMBERSHIP, mreq)
        else:
            sock.bind((cfg.udp_host, cfg.udp_port))
        sock.settimeout(0.2)
        self.bound_port = sock.getsockname()[1]
        return sock

    def _udp_loop(self) -> None:
        while not self._stop.is_set():
            try:
                sock = self._udp_socket()
            except OSError as exc:
                self._io_error(exc)
                self._ready.set()
                self._stop.wait(2.0)
                continue
            self._ready.set()
            with sock:
                while not self._stop.is_set():
                    try:
                        data = sock.recv(65535)
                    except TimeoutError:
                        continue
                    except OSError as exc:
                        self._io_error(exc)
                        break
                    try:
                        self.handle(data)
                    except Exception as exc:  # never let the reader thread die
                        self._io_error(exc)

    def _serial_loop(self) -> None:
        import serial  # pyserial; imported here so that UDP-only ships need no serial stack loaded

        while not self._stop.is_set():
            try:
                port = serial.serial_for_url(self.config.serial, baudrate=self.config.baud, timeout=0.2)
            except (serial.SerialException, OSError, ValueError) as exc:
                self._io_error(exc)
                self._ready.set()
                self._stop.wait(2.0)
                continue
            self._ready.set()
            pending = b""  # a line cut by the read timeout waits for its end
            with port:
                while not self._stop.is_set():
                    try:
                        pending += port.read_until(b"\n", 256)
                    except (serial.SerialException, OSError) as exc:
                        self._io_error(exc)
                        break
                    if not pending.endswith(b"\n") and len(pending) <= 4 * MAX_SENTENCE_CHARS:
                        continue
                    line, pending = pending, b""
                    try:
                        self.handle(line)
                    except Exception as exc:
                        self._io_error(exc)
