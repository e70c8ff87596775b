"""Settings of the running onboard service: defaults, then a TOML file, then environment variables,
then command-line options (each later source overrides the earlier ones).

The TOML file has one table per part of the service (``config/service.toml`` is a commented example)::

    [vessel]    file, condition, id
    [mqtt]      url, username, password, tls, ca_file, cert_file, key_file, client_id, keepalive_s
    [database]  url, retention_days
    [voyage_log] dir, period, compress, fsync
    [analysis]  cycle_s, window_s, limits, course_deg
    [health]    interval_s, silent_after_s, store_every_s, required
    [ingest]    reorder_s, source_idle_s, max_jump_s, self_id, priority, implausible_rate
    [alerts]    caution, warning, hysteresis, sensor_clear_s
    [web]       host, port, threads
    [[nmea]]    name, udp | serial, interface, baud, sentences, [nmea.xdr] (NMEA 0183 inputs,
                :mod:`onboard.live.nmea`; optional, any number; not settable from the environment)

Every key can be overridden by an environment variable ``HW_<TABLE>_<KEY>`` in upper case (for example
``HW_ANALYSIS_CYCLE_S=300``, ``HW_WEB_PORT=8651``). Short aliases exist for the keys one sets most often:

==================  ==================
variable            key
==================  ==================
``HW_BROKER_URL``   ``mqtt.url``
``HW_DB_URL``       ``database.url``
``HW_VESSEL``       ``vessel.file``
``HW_CONDITION``    ``vessel.condition``
``HW_VESSEL_ID``    ``vessel.id``
``HW_MQTT_USER``    ``mqtt.username``
``HW_MQTT_PASSWORD`` ``mqtt.password``
==================  ==================

Any other ``HW_*`` variable is refused like an unknown key (a misspelt ``HW_ANALYSIS_CYCLES`` would
otherwise be silently ignored); only the test and benchmark variables ``HW_TEST_*`` and ``HW_BENCH_*``
are left alone.

Settings are also checked against each other: the ingest hold-back (``reorder_s + source_idle_s``, the
longest a released row can lag behind the newest sample when a source stops) must stay below
``health.silent_after_s``, or one stopped secondary source makes every channel look silent; and the
analysis window must hold the shortest record the estimator accepts plus that hold-back, or no window is
ever complete.

Relative paths in the TOML file are taken relative to the file; relative paths from the environment
or the command line relative to the working directory.

Every error (:class:`SettingsError`) names the source (file or variable), the key, the value and what
is allowed.
"""

from __future__ import annotations

import difflib
import math
import os
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, fields, replace
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
DEFAULT_VESSEL_FILE = ROOT / "config" / "demo_vessel.toml"

SECTIONS: dict[str, tuple[str, ...]] = {
    "vessel": ("file", "condition", "id"),
    "mqtt": (
        "url",
        "username",
        "password",
        "tls",
        "ca_file",
        "cert_file",
        "key_file",
        "client_id",
        "keepalive_s",
    ),
    "database": ("url", "retention_days"),
    "voyage_log": ("dir", "period", "compress", "fsync"),
    "analysis": ("cycle_s", "window_s", "limits", "course_deg"),
    "health": ("interval_s", "silent_after_s", "store_every_s", "required"),
    "ingest": ("reorder_s", "source_idle_s", "max_jump_s", "self_id", "priority", "implausible_rate"),
    "alerts": ("caution", "warning", "hysteresis", "sensor_clear_s"),
    "web": ("host", "port", "threads"),
}
"""The keys of each TOML table (and of the ``HW_<TABLE>_<KEY>`` variables)."""

ALIASES = {
    "HW_BROKER_URL": ("mqtt", "url"),
    "HW_DB_URL": ("database", "url"),
    "HW_VESSEL": ("vessel", "file"),
    "HW_CONDITION": ("vessel", "condition"),
    "HW_VESSEL_ID": ("vessel", "id"),
    "HW_MQTT_USER": ("mqtt", "username"),
    "HW_MQTT_PASSWORD": ("mqtt", "password"),
}
"""Short environment variables for the keys set most often."""

MOTION_CHANNELS = ("roll_deg", "pitch_deg", "heave_m")
NAV_CHANNELS = ("heading_deg", "stw_kn")


class SettingsError(ValueError):
    """A setting is missing or invalid (names the source, key, value and what is allowed)."""


@dataclass(frozen=True)
class ServiceSettings:
    """All settings of the running service (edge units, names carry their unit).

    Attributes
    ----------
    vessel_file : Path
        Vessel TOML (docs/vessel.md).
    condition : str or None
        Loading condition to start with; None = the one last set in the store, else the first in the file.
    vessel_id : str
        Vessel id used in the MQTT topics ``hw/{vessel_id}/...``.
    broker_url : str or None
        ``mqtt://[user[:password]@]host[:port]`` or ``mqtts://...``; None runs without a broker (samples
        only through :meth:`onboard.live.listener.Listener.feed`, nothing published).
    mqtt_username, mqtt_password : str or None
        Broker credentials (override those in the URL).
    mqtt_tls : bool
        Use TLS (also implied by ``mqtts://``).
    mqtt_ca_file, mqtt_cert_file, mqtt_key_file : str or None
        TLS trust store and client certificate.
    mqtt_client_id : str or None
        Stable client id (default ``hw-onboard-{vessel_id}``).
    mqtt_keepalive_s : int
        MQTT keepalive [s].
    db_url : str
        SQLAlchemy URL of the store (SQLite file or PostgreSQL).
    retention_days : float
        Rows older than this are purged once a day [d].
    voyage_log_dir : Path
        Folder of the rolling voyage log (docs/voyage-log.md).
    voyage_log_period : str
        ``"hour"`` or ``"day"``: one file per UTC hour/day.
    voyage_log_compress : bool
        Write ``.csv.gz``.
    voyage_log_fsync : bool
        fsync after every batch (durability against power loss).
    cycle_s : float
        Time between analysis cycles [s].
    window_s : float
        Analysis window length [s].
    limits_file : Path or None
        Limit set TOML; None = the condition's own or the default set.
    course_deg : float or None
        Intended course, true [deg]; None = the mean heading of each window.
    health_interval_s : float
        Sensor-health check interval [s].
    silent_after_s : float
        A channel with no sample for this long is "silent" [s].
    health_store_every_s : float
        A health snapshot is stored at least this often, and whenever a status changes [s].
    required_channels : tuple of str
        Channels whose health is checked and which the advice needs (voyage-log column names).
    alert_caution, alert_warning : float
        Conservative utilisation at the present heading and speed that raises a caution / warning [-].
    alert_hysteresis : float
        An alert clears (or steps down) only when the utilisation falls this far below its level [-].
    sensor_clear_s : float
        A sensor alert clears after the channels have been healthy this long [s].
    web_host : str
        Address the page is served on (loopback by default).
    web_port : int
        TCP port of the page.
    web_threads : int
        waitress worker threads.
    nmea_inputs : tuple of onboard.live.nmea.NmeaInputConfig
        NMEA 0183 inputs (UDP or serial), none by default.
    reorder_s : float
        Out-of-order samples are held this long before release [s].
    source_idle_s : float
        A source silent this long stops holding back the release and hands its channels to the next
        source in ``source_priority`` [s].
    max_jump_s : float
        Clock-jump threshold of a source's sample times [s].
    self_id : str or None
        The own vessel's Signal K id (e.g. ``urn:mrn:imo:mmsi:...``); deltas with context
        ``vessels.<self_id>`` are accepted besides ``vessels.self``.
    source_priority : tuple of (channel, tuple of source)
        Preferred sources per channel, first = primary; others are standby (failover, never merged).
    implausible_rate : float
        Share of out-of-range values (in 5 min) at which a source is degraded for a channel [-].
    """

    vessel_file: Path = DEFAULT_VESSEL_FILE
    condition: str | None = None
    vessel_id: str = "demo"
    broker_url: str | None = "mqtt://127.0.0.1:1883"
    mqtt_username: str | None = None
    mqtt_password: str | None = None
    mqtt_tls: bool = False
    mqtt_ca_file: str | None = None
    mqtt_cert_file: str | None = None
    mqtt_key_file: str | None = None
    mqtt_client_id: str | None = None
    mqtt_keepalive_s: int = 30
    db_url: str = "sqlite:///onboard-data/onboard.sqlite"
    retention_days: float = 90.0
    voyage_log_dir: Path = Path("onboard-data/voyage-log")
    voyage_log_period: str = "hour"
    voyage_log_compress: bool = True
    voyage_log_fsync: bool = True
    cycle_s: float = 600.0
    window_s: float = 1200.0
    limits_file: Path | None = None
    course_deg: float | None = None
    health_interval_s: float = 5.0
    silent_after_s: float = 15.0
    health_store_every_s: float = 60.0
    required_channels: tuple[str, ...] = MOTION_CHANNELS + NAV_CHANNELS
    alert_caution: float = 0.9
    alert_warning: float = 1.0
    alert_hysteresis: float = 0.05
    sensor_clear_s: float = 30.0
    web_host: str = "127.0.0.1"
    web_port: int = 8650
    web_threads: int = 8
    nmea_inputs: tuple = ()
    reorder_s: float = 2.0
    source_idle_s: float = 5.0
    max_jump_s: float = 600.0
    self_id: str | None = None
    source_priority: tuple[tuple[str, tuple[str, ...]], ...] = ()
    implausible_rate: float = 0.05

    def __post_init__(self) -> None:
        check(self, "settings")

    @property
    def stale_after_s(self) -> float:
        """Advice whose window ended longer ago than this is stale: two cycles [s]."""
        return 2.0 * self.cycle_s

    @property
    def hold_back_s(self) -> float:
        """Longest lag of released rows behind the newest sample when a source stops [s]."""
        return self.reorder_s + self.source_idle_s

    @property
    def own_contexts(self) -> tuple[str, ...]:
        """Signal K contexts taken as the own vessel."""
        return ("vessels.self",) + ((f"vessels.{self.self_id}",) if self.self_id else ())


# (section, key) -> (attribute, kind, bounds)
_KEYS: dict[tuple[str, str], tuple[str, str, tuple[float, float] | None]] = {
    ("vessel", "file"): ("vessel_file", "path", None),
    ("vessel", "condition"): ("condition", "str?", None),
    ("vessel", "id"): ("vessel_id", "str", None),
    ("mqtt", "url"): ("broker_url", "str?", None),
    ("mqtt", "username"): ("mqtt_username", "str?", None),
    ("mqtt", "password"): ("mqtt_password", "str?", None),
    ("mqtt", "tls"): ("mqtt_tls", "bool", None),
    ("mqtt", "ca_file"): ("mqtt_ca_file", "file?", None),
    ("mqtt", "cert_file"): ("mqtt_cert_file", "file?", None),
    ("mqtt", "key_file"): ("mqtt_key_file", "file?", None),
    ("mqtt", "client_id"): ("mqtt_client_id", "str?", None),
    ("mqtt", "keepalive_s"): ("mqtt_keepalive_s", "int", (5, 600)),
    ("database", "url"): ("db_url", "str", None),
    ("database", "retention_days"): ("retention_days", "float", (1.0, 36600.0)),
    ("voyage_log", "dir"): ("voyage_log_dir", "path", None),
    ("voyage_log", "period"): ("voyage_log_period", "str", None),
    ("voyage_log", "compress"): ("voyage_log_compress", "bool", None),
    ("voyage_log", "fsync"): ("voyage_log_fsync", "bool", None),
    ("analysis", "cycle_s"): ("cycle_s", "float", (1.0, 7200.0)),
    ("analysis", "window_s"): ("window_s", "float", (60.0, 7200.0)),
    ("analysis", "limits"): ("limits_file", "path?", None),
    ("analysis", "course_deg"): ("course_deg", "float?", (0.0, 360.0)),
    ("health", "interval_s"): ("health_interval_s", "float", (0.1, 600.0)),
    ("health", "silent_after_s"): ("silent_after_s", "float", (1.0, 3600.0)),
    ("health", "store_every_s"): ("health_store_every_s", "float", (1.0, 86400.0)),
    ("health", "required"): ("required_channels", "channels", None),
    ("alerts", "caution"): ("alert_caution", "float", (0.1, 10.0)),
    ("alerts", "warning"): ("alert_warning", "float", (0.1, 10.0)),
    ("alerts", "hysteresis"): ("alert_hysteresis", "float", (0.0, 1.0)),
    ("alerts", "sensor_clear_s"): ("sensor_clear_s", "float", (0.0, 3600.0)),
    ("web", "host"): ("web_host", "str", None),
    ("web", "port"): ("web_port", "int", (0, 65535)),
    ("web", "threads"): ("web_threads", "int", (1, 256)),
    ("ingest", "reorder_s"): ("reorder_s", "float", (0.0, 60.0)),
    ("ingest", "source_idle_s"): ("source_idle_s", "float", (0.5, 600.0)),
    ("ingest", "max_jump_s"): ("max_jump_s", "float", (60.0, 86400.0)),
    ("ingest", "self_id"): ("self_id", "str?", None),
    ("ingest", "priority"): ("source_priority", "priority", None),
    ("ingest", "implausible_rate"): ("implausible_rate", "float", (0.001, 1.0)),
}

ENV_PASSTHROUGH = ("HW_TEST_", "HW_BENCH_")
"""Prefixes of ``HW_*`` variables that belong to the test suite and benchmarks, not to the service."""


def check(s: ServiceSettings, source: str) -> None:
    """Cross-field checks (each field is checked on the way in by :func:`_convert`)."""
    if s.voyage_log_period not in ("hour", "day"):
        raise SettingsError(
            f"{source}: voyage_log.period = {s.voyage_log_period!r}; allowed: 'hour' or 'day'"
        )
    if s.alert_warning < s.alert_caution:
        raise SettingsError(
            f"{source}: alerts.warning = {s.alert_warning!r} is below alerts.caution = {s.alert_caution!r}; "
            "allowed: warning >= caution"
        )
    if s.alert_hysteresis >= s.alert_caution:
        raise SettingsError(
            f"{source}: alerts.hysteresis = {s.alert_hysteresis!r} must be below "
            f"alerts.caution = {s.alert_caution!r}"
        )
    if s.window_s < s.cycle_s:
        raise SettingsError(
            f"{source}: analysis.window_s = {s.window_s!r} is shorter than analysis.cycle_s = {s.cycle_s!r}; "
            "allowed: window_s >= cycle_s (windows overlap or touch, no data is left unanalysed)"
        )
    motion = [c for c in s.required_channels if c in MOTION_CHANNELS]
    if len(motion) < 2 or not set(NAV_CHANNELS) <= set(s.required_channels):
        raise SettingsError(
            f"{source}: health.required = {list(s.required_channels)!r}; allowed: at least two of "
            f"{', '.join(MOTION_CHANNELS)} and both {', '.join(NAV_CHANNELS)} (docs/voyage-log.md)"
        )
    if s.hold_back_s >= s.silent_after_s:
        raise SettingsError(
            f"{source}: ingest.reorder_s + ingest.source_idle_s = {s.reorder_s:g} + {s.source_idle_s:g} s "
            f"is not below health.silent_after_s = {s.silent_after_s:g} s; allowed: a hold-back shorter "
            "than the silent threshold (else one stopped source makes every channel look silent)"
        )
    need = min_record_s() + s.hold_back_s
    if s.window_s < need:
        raise SettingsError(
            f"{source}: analysis.window_s = {s.window_s!r} cannot hold the shortest record the estimator "
            f"accepts ({min_record_s():g} s) plus the ingest hold-back ({s.hold_back_s:g} s); "
            f"allowed: window_s >= {need:g}"
        )
    if s.broker_url is not None and not s.broker_url.startswith(("mqtt://", "mqtts://")):
        raise SettingsError(
            f"{source}: mqtt.url = {s.broker_url!r}; allowed: mqtt://host[:port] or mqtts://..."
        )


def min_record_s() -> float:
    """Shortest gap-free record the estimator analyses (``estimator.prep.PrepSettings.min_duration_s``) [s]."""
    from estimator.prep import PrepSettings

    return float(PrepSettings().min_duration_s)


def _priority(where: str, value: Any) -> tuple[tuple[str, tuple[str, ...]], ...]:
    """``{channel = [source, ...]}`` (TOML) or ``channel:src,src;channel:src`` (text) -> sorted tuples."""
    from onboard.formats.messages import CHANNELS

    allowed = (
        f"allowed: a table {{channel = [source, ...]}} (TOML) or 'channel:source,source;...' (text), "
        f"channels: {', '.join(CHANNELS)}"
    )
    if isinstance(value, str):
        table: dict[str, Any] = {}
        for part in filter(None, (p.strip() for p in value.split(";"))):
            channel, sep, names = part.partition(":")
            if not sep:
                raise SettingsError(f"{where} = {value!r}; {allowed}")
            table[channel.strip()] = [n.strip() for n in names.split(",") if n.strip()]
        value = table
    if not isinstance(value, dict):
        raise SettingsError(f"{where} = {value!r}; {allowed}")
    out = []
    for channel, sources in value.items():
        if channel not in CHANNELS or not isinstance(sources, list) or not sources:
            raise SettingsError(f"{where}.{channel} = {sources!r}; {allowed}")
        for src in sources:
            if not isinstance(src, str) or not 1 <= len(src) <= 64 or not src.isprintable() or "/" in src:
                raise SettingsError(
                    f"{where}.{channel}: source {src!r:.70}; allowed: 1-64 printable characters without '/'"
                )
        if len(set(sources)) != len(sources):
            raise SettingsError(f"{where}.{channel} = {sources!r} names a source twice")
        out.append((channel, tuple(sources)))
    return tuple(sorted(out))


def _convert(where: str, kind: str, bounds, value: Any, base: Path | None) -> Any:
    """Check and convert one value from TOML (typed) or the environment / command line (text)."""
    from_text = isinstance(value, str) and kind not in ("str", "str?", "path", "path?", "file?")
    if kind.endswith("?") and (
        value is None or (isinstance(value, str) and value.strip().lower() in ("", "none"))
    ):
        return None
    k = kind.rstrip("?")
    if k == "priority":
        return _priority(where, value)
    if k == "str":
        if not isinstance(value, str) or not value.strip():
            raise SettingsError(f"{where} = {value!r}; allowed: a non-empty text")
        return value.strip()
    if k in ("path", "file"):
        if not isinstance(value, str | Path) or not str(value).strip():
            raise SettingsError(f"{where} = {value!r}; allowed: a file or folder path")
        p = Path(str(value)).expanduser()
        if not p.is_absolute() and base is not None:
            p = base / p
        return str(p) if k == "file" else p
    if k == "bool":
        if isinstance(value, bool):
            return value
        if from_text and value.strip().lower() in ("1", "true", "yes", "on"):
            return True
        if from_text and value.strip().lower() in ("0", "false", "no", "off"):
            return False
        raise SettingsError(f"{where} = {value!r}; allowed: true or false")
    if k == "channels":
        items = [c.strip() for c in value.split(",")] if isinstance(value, str) else value
        from onboard.formats.messages import CHANNELS

        if not isinstance(items, list | tuple) or not all(
            isinstance(c, str) and c in CHANNELS for c in items
        ):
            raise SettingsError(
                f"{where} = {value!r}; allowed: a list of voyage-log channels ({', '.join(CHANNELS)})"
            )
        return tuple(items)
    if k in ("int", "float"):
        x = value
        if from_text:
            try:
                x = float(value.strip())
            except ValueError:
                raise SettingsError(f"{where} = {value!r}; allowed: a number") from None
        if isinstance(x, bool) or not isinstance(x, int | float) or not math.isfinite(x):
            raise SettingsError(f"{where} = {value!r}; allowed: a number")
        if k == "int":
            if float(x) != int(x):
                raise SettingsError(f"{where} = {value!r}; allowed: a whole number")
            x = int(x)
        else:
            x = float(x)
        lo, hi = bounds
        if not lo <= x <= hi:
            raise SettingsError(f"{where} = {value!r}; allowed: {lo:g} to {hi:g}")
        return x
    raise AssertionError(kind)  # pragma: no cover


def _apply(values: dict[str, Any], section: str, key: str, value: Any, where: str, base: Path | None) -> None:
    attr, kind, bounds = _KEYS[(section, key)]
    values[attr] = _convert(where, kind, bounds, value, base)


def read_toml(path: str | Path) -> dict[str, Any]:
    """Read a service TOML file into ``{attribute: value}`` (only the keys it sets)."""
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise SettingsError(f"{path}: settings file not found") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise SettingsError(f"{path}: not valid TOML ({exc})") from None
    out: dict[str, Any] = {}
    base = path.resolve().parent
    for section, table in data.items():
        if section == "nmea":
            from onboard.live.nmea import NmeaConfigError, parse_nmea_settings

            try:
                out["nmea_inputs"] = parse_nmea_settings(table, str(path))
            except NmeaConfigError as exc:
                raise SettingsError(str(exc)) from None
            continue
        if section not in SECTIONS:
            raise SettingsError(
                f"{path}: unknown table [{section}]; allowed: {', '.join(SECTIONS)}, [[nmea]]"
            )
        if not isinstance(table, dict):
            raise SettingsError(f"{path}: {section} must be a table [{section}]")
        for key, value in table.items():
            if key not in SECTIONS[section]:
                raise SettingsError(
                    f"{path}: unknown key {section}.{key}; "
                    f"allowed in [{section}]: {', '.join(SECTIONS[section])}"
                )
            _apply(out, section, key, value, f"{path}: {section}.{key}", base)
    return out


def read_environment(environ: Mapping[str, str] | None = None) -> dict[str, Any]:
    """Overrides from ``HW_<TABLE>_<KEY>`` and the aliases (module docstring)."""
    env = os.environ if environ is None else environ
    known = {f"HW_{section}_{key}".upper() for section, key in _KEYS} | set(ALIASES)
    for name in sorted(env):
        if name.startswith("HW_") and name not in known and not name.startswith(ENV_PASSTHROUGH):
            close = difflib.get_close_matches(name, known, n=1)
            raise SettingsError(
                f"environment {name}: unknown setting"
                + (f" (did you mean {close[0]}?)" if close else "")
                + "; allowed: HW_<TABLE>_<KEY> for the keys of config/service.toml, or "
                + ", ".join(ALIASES)
            )
    out: dict[str, Any] = {}
    for section, key in _KEYS:
        name = f"HW_{section}_{key}".upper()
        if name in env:
            _apply(out, section, key, env[name], f"environment {name}", None)
    for name, (section, key) in ALIASES.items():
        if name in env:
            _apply(out, section, key, env[name], f"environment {name}", None)
    return out


def load_settings(
    config_file: str | Path | None = None,
    *,
    environ: Mapping[str, str] | None = None,
    overrides: Mapping[str, Any] | None = None,
    base: ServiceSettings | None = None,
) -> ServiceSettings:
    """Settings from defaults (or ``base``), then ``config_file``, then the environment, then ``overrides``.

    Parameters
    ----------
    config_file : path, optional
        Service TOML (see ``config/service.toml``).
    environ : mapping, optional
        Environment to read (default ``os.environ``).
    overrides : mapping, optional
        ``{(section, key): value}`` or ``{attribute: value}`` from the command line; None values are ignored.
    base : ServiceSettings, optional
        Defaults to start from (``hwadvice demo`` starts from its own).

    Raises
    ------
    SettingsError
        Naming the source, the key, the value and what is allowed.
    """
    values: dict[str, Any] = {}
    if config_file is not None:
        values.update(read_toml(config_file))
    values.update(read_environment(environ))
    attrs = {f.name for f in fields(ServiceSettings)}
    by_attr = {attr: (section, key) for (section, key), (attr, _, _) in _KEYS.items()}
    for k, v in (overrides or {}).items():
        if v is None:
            continue
        if isinstance(k, tuple) and k in _KEYS:
            section, key = k
        elif isinstance(k, str) and k in attrs and k in by_attr:
            section, key = by_attr[k]
        else:
            raise SettingsError(f"command line: unknown setting {k!r}")
        _apply(values, section, key, v, f"command line {section}.{key}", None)
    start = base or ServiceSettings()
    try:
        return replace(start, **values)
    except SettingsError as exc:
        where = str(config_file) if config_file else "settings"
        raise SettingsError(str(exc).replace("settings:", f"{where}:", 1)) from None
