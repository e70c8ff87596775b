"""Parse and validate live sensor messages into voyage-log samples.

Two payload kinds are accepted (docs/mqtt.md); nothing in a payload is trusted:

1. **The project's own JSON batch** (schema ``"hw-samples/1"``)::

       {"schema": "hw-samples/1", "source": "imu1",
        "samples": [{"time_utc": "2026-01-01T12:00:00.100Z", "roll_deg": 1.2, "pitch_deg": -0.4,
                     "heave_m": 0.31, "acc_x_ms2": null, ...}, ...]}

   Sample fields are exactly the voyage-log column names and units of docs/voyage-log.md (degrees, knots,
   metres, m/s²; roll + starboard side down, pitch + bow up, heave + up; accelerations x forward,
   y starboard, z down, gravity removed). ``null`` or an absent field means "not measured at this
   instant". Unknown sample fields are ignored (a newer sender may add optional fields); unknown
   top-level keys are ignored too.

2. **Signal K delta messages** (the open marine data standard; SI units)::

       {"context": "vessels.self", "updates": [{"$source": "imu1", "timestamp": "...Z",
         "values": [{"path": "navigation.attitude", "value": {"roll": 0.05, "pitch": -0.01, "yaw": null}}]}]}

   Paths read (all others are ignored, not rejected, because a Signal K server forwards many):

   ==================================  ======================================  =========================
   path                                value                                   column(s)
   ==================================  ======================================  =========================
   ``navigation.attitude``             ``{roll, pitch, yaw}`` [rad]            ``roll_deg``, ``pitch_deg``
   ``navigation.headingTrue``          [rad]                                   ``heading_deg``
   ``navigation.speedThroughWater``    [m/s]                                   ``stw_kn``
   ``navigation.speedOverGround``      [m/s]                                   ``sog_kn``
   ``navigation.courseOverGroundTrue`` [rad]                                   ``cog_deg``
   ``navigation.position``             ``{latitude, longitude}`` [deg]         ``lat_deg``, ``lon_deg``
   ``environment.heave``               [m], + up (the spec states no sign)     ``heave_m``
   ``hw.motion.acceleration``          ``{x, y, z}`` [m/s²], FRD, no gravity   ``acc_x_ms2`` ...
   ==================================  ======================================  =========================

   Attitude ``yaw`` is not used (the heading comes from ``navigation.headingTrue``).

   Signal K's attitude signs are the sensor practice the voyage log uses (Signal K
   ``groups/navigation.json``: roll "+ve is list to starboard", pitch "+ve is bow up"), so only the units
   change here: rad → deg and m/s → kn (through :mod:`onboard.formats.units`). Signal K has no path for linear
   accelerations; ours is the plain name ``hw.motion.acceleration`` (a value object with ``x``, ``y``,
   ``z``; gravity removed). Each update's ``timestamp`` is the sample time of all its values; an update
   without one is rejected, because a receive time is not a measurement time.

Output: a list of :class:`Sample` (source, time in integer milliseconds since the Unix epoch, UTC, and a
mapping of voyage-log column → float). Time resolution is 1 ms (motion sensors run at ≤ 100 Hz), so the
voyage log never holds two rows that print to the same instant.

Rejections raise :class:`MessageRejected` with a :class:`Reason` code and a detail naming the sample
index, field and value; the listener counts them by reason and drops the message. A structural fault
(not JSON, wrong type, bad time) drops the whole message. An out-of-range *value* is different: when the
caller passes an ``outliers`` list, only that value of that sample is dropped and recorded as an
:class:`Outlier` (source, channel, time, detail), and the rest of the message is kept. One spike from one
sensor must not cost the other channels or the other samples of the batch (issue 16: outliers are
rejected per sample, never per stream). Without an ``outliers`` list the old, whole-message rejection
applies (used where a single bad value must stop, e.g. strict checks).

Own ship only: a Signal K delta whose ``context`` is not ``vessels.self`` (or the configured own
context, e.g. ``vessels.urn:mrn:imo:mmsi:...``) is another vessel's data (AIS targets, a forwarded
server) and is rejected as ``other_vessel``. A delta without ``context`` is taken as own ship: the Signal K
delta specification says a missing context means ``vessels.self`` (from memory of the specification's
delta section).

Plausible ranges (:data:`PLAUSIBLE`) are generous physical bounds, not operating limits (common practice):
they only catch unit slips and garbage (e.g. roll 180°, speed 300 kn).

References
----------
.. [1] Signal K specification, ``schemas/delta.json`` and ``schemas/groups/navigation.json``,
   ``environment.json`` (signalk.org), units SI, angles in radians, position in degrees WGS 84.
.. [2] RFC 8259, The JavaScript Object Notation (JSON) Data Interchange Format (NaN and Infinity are not
   JSON; Python's ``json`` module accepts them unless told not to).
"""

from __future__ import annotations

import enum
import json
import math
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any

from onboard.formats.units import ms_to_kn, rad_to_deg, wrap_deg

BATCH_SCHEMA = "hw-samples/1"
"""Schema identifier of the project's own sample batch (bump the number on a breaking change)."""

MAX_PAYLOAD_BYTES = 256 * 1024
"""Default payload size limit [bytes]; a 1 s batch at 100 Hz with all columns is about 25 kB."""

MAX_SAMPLES_PER_MESSAGE = 2000
"""Default limit on samples in one message (20 s at 100 Hz)."""

COLUMNS = (
    "time_utc",
    "roll_deg",
    "pitch_deg",
    "heave_m",
    "acc_x_ms2",
    "acc_y_ms2",
    "acc_z_ms2",
    "heading_deg",
    "stw_kn",
    "sog_kn",
    "cog_deg",
    "lat_deg",
    "lon_deg",
)
"""Voyage-log columns in file order (docs/voyage-log.md)."""

CHANNELS = COLUMNS[1:]
"""Measured channels (every column but ``time_utc``)."""

PLAUSIBLE: dict[str, tuple[float, float]] = {
    "roll_deg": (-90.0, 90.0),
    "pitch_deg": (-45.0, 45.0),
    "heave_m": (-30.0, 30.0),
    "acc_x_ms2": (-50.0, 50.0),
    "acc_y_ms2": (-50.0, 50.0),
    "acc_z_ms2": (-50.0, 50.0),
    "heading_deg": (0.0, 360.0),
    "stw_kn": (-10.0, 60.0),
    "sog_kn": (0.0, 80.0),
    "cog_deg": (0.0, 360.0),
    "lat_deg": (-90.0, 90.0),
    "lon_deg": (-180.0, 180.0),
}
"""Inclusive plausible range per channel in its edge unit (common practice; generous physical bounds).
Headings and courses of exactly 360 are folded to 0."""

_ANGLES_360 = frozenset({"heading_deg", "cog_deg"})

EARLIEST_MS = 946_684_800_000  # 2000-01-01T00:00:00Z
LATEST_MS = 4_102_444_800_000  # 2100-01-01T00:00:00Z


class Reason(enum.StrEnum):
    """Why a message was rejected (the listener counts rejections by these codes)."""

    OVERSIZED = "oversized"
    BAD_ENCODING = "bad_encoding"
    MALFORMED_JSON = "malformed_json"
    NOT_OBJECT = "not_object"
    UNKNOWN_SCHEMA = "unknown_schema"
    MISSING_FIELD = "missing_field"
    WRONG_TYPE = "wrong_type"
    BAD_TIME = "bad_time"
    OUT_OF_RANGE = "out_of_range"
    TOO_MANY_SAMPLES = "too_many_samples"
    EMPTY = "empty"
    SOURCE_MISMATCH = "source_mismatch"
    UNKNOWN_TOPIC = "unknown_topic"
    OTHER_VESSEL = "other_vessel"


SELF_CONTEXT = "vessels.self"
"""The Signal K context of the own vessel."""


@dataclass(frozen=True, slots=True)
class Outlier:
    """One out-of-range value dropped from a sample (the rest of the message was kept).

    Attributes
    ----------
    source : str
        Sender of the value.
    column : str
        Voyage-log column.
    time_ms : int or None
        Sample time [ms since epoch], None if the time itself was not yet read.
    detail : str
        Where and what: sample index, field, value and the plausible range.
    """

    source: str
    column: str
    time_ms: int | None
    detail: str


class MessageRejected(ValueError):
    """A payload failed validation.

    Attributes
    ----------
    reason : Reason
        Machine-readable code.
    detail : str
        What was wrong: sample index, field, value and what is allowed.
    field : str or None
        The voyage-log column concerned, where there is one (used for "implausible" sensor health).
    """

    def __init__(self, reason: Reason, detail: str, *, field: str | None = None):
        super().__init__(f"{reason.value}: {detail}")
        self.reason = reason
        self.detail = detail
        self.field = field


@dataclass(frozen=True, slots=True)
class Sample:
    """One normalised sample from one source.

    Attributes
    ----------
    source : str
        Sensor / sender identifier.
    time_ms : int
        Sample time, milliseconds since 1970-01-01T00:00:00Z [ms].
    values : Mapping[str, float]
        Voyage-log column → value in the column's unit (deg, kn, m, m/s²); only measured channels.
    """

    source: str
    time_ms: int
    values: Mapping[str, float]

    @property
    def time_utc(self) -> datetime:
        """Sample time as a timezone-aware UTC datetime."""
        return datetime.fromtimestamp(self.time_ms / 1000.0, tz=UTC)


def format_time_ms(time_ms: int) -> str:
    """Format epoch milliseconds as ISO 8601 UTC with ``Z`` and millisecond resolution."""
    seconds, ms = divmod(int(time_ms), 1000)
    return datetime.fromtimestamp(seconds, tz=UTC).strftime("%Y-%m-%dT%H:%M:%S") + f".{ms:03d}Z"


def parse_time_ms(text: object, *, where: str = "time") -> int:
    """Parse an ISO 8601 UTC timestamp into epoch milliseconds.

    Parameters
    ----------
    text : object
        Must be a string such as ``"2026-01-01T12:00:00.100Z"``; an explicit offset (``+00:00``,
        ``+02:00``) is accepted and converted to UTC; a time without zone is rejected (docs/conventions.md).
    where : str
        Location used in error messages.

    Returns
    -------
    int
        Milliseconds since the Unix epoch, rounded to the nearest millisecond [ms].

    Raises
    ------
    MessageRejected
        ``wrong_type`` if not a string, ``bad_time`` if unparsable, without zone, or outside 2000–2100.
    """
    if not isinstance(text, str):
        raise MessageRejected(Reason.WRONG_TYPE, f"{where}: expected an ISO 8601 string, got {text!r:.60}")
    if len(text) > 40 or "T" not in text:
        raise MessageRejected(
            Reason.BAD_TIME, f"{where}: {text!r:.60} is not ISO 8601 'YYYY-MM-DDTHH:MM:SSZ'"
        )
    try:
        dt = datetime.fromisoformat(text)
    except ValueError:
        raise MessageRejected(
            Reason.BAD_TIME, f"{where}: {text!r:.60} is not ISO 8601 'YYYY-MM-DDTHH:MM:SSZ'"
        ) from None
    if dt.tzinfo is None or dt.utcoffset() is None:
        raise MessageRejected(Reason.BAD_TIME, f"{where}: {text!r} has no time zone; times must be UTC ('Z')")
    try:
        ms = round(dt.timestamp() * 1000.0)
    except (OverflowError, ValueError, OSError):
        raise MessageRejected(Reason.BAD_TIME, f"{where}: {text!r:.60} is out of range") from None
    if not EARLIEST_MS <= ms < LATEST_MS:
        raise MessageRejected(Reason.BAD_TIME, f"{where}: {text!r} is outside 2000-01-01 .. 2100-01-01")
    return ms


def check_value(column: str, value: object, *, where: str) -> float | None:
    """Validate one channel value in its edge unit; returns a float, or None for ``null``.

    Booleans are rejected although Python treats them as ints; NaN/Infinity cannot arrive through
    :func:`loads` but are rejected here too. Headings/courses of exactly 360 are folded to 0.
    """
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise MessageRejected(
            Reason.WRONG_TYPE, f"{where}.{column}: expected a number or null, got {value!r:.60}", field=column
        )
    x = float(value)
    lo, hi = PLAUSIBLE[column]
    if not (math.isfinite(x) and lo <= x <= hi):
        raise MessageRejected(
            Reason.OUT_OF_RANGE,
            f"{where}.{column}: {value!r:.30} outside the plausible range [{lo:g}, {hi:g}]",
            field=column,
        )
    if column in _ANGLES_360 and x == 360.0:
        x = 0.0
    return x


def _checked(
    column: str, value: object, where: str, source: str, time_ms: int | None, outliers: list[Outlier] | None
) -> float | None:
    """:func:`check_value`, but an out-of-range value goes to ``outliers`` (if given) instead of raising."""
    try:
        return check_value(column, value, where=where)
    except MessageRejected as exc:
        if outliers is None or exc.reason is not Reason.OUT_OF_RANGE:
            raise
        outliers.append(Outlier(source, column, time_ms, exc.detail))
        return None


def _reject_constant(name: str) -> float:
    raise ValueError(f"{name} is not valid JSON")


def loads(payload: bytes | bytearray | str, *, max_bytes: int = MAX_PAYLOAD_BYTES) -> object:
    """Decode a JSON payload strictly: size limit, UTF-8, no NaN/Infinity (RFC 8259).

    Raises
    ------
    MessageRejected
        ``oversized``, ``bad_encoding``, ``malformed_json``.
    """
    if len(payload) > max_bytes:
        raise MessageRejected(
            Reason.OVERSIZED, f"payload of {len(payload)} bytes exceeds the limit {max_bytes}"
        )
    if isinstance(payload, bytes | bytearray):
        try:
            text = bytes(payload).decode("utf-8")
        except UnicodeDecodeError as exc:
            raise MessageRejected(
                Reason.BAD_ENCODING, f"payload is not UTF-8 ({exc.reason} at {exc.start})"
            ) from None
    else:
        text = payload
    try:
        return json.loads(text, parse_constant=_reject_constant)
    except RecursionError:
        raise MessageRejected(Reason.MALFORMED_JSON, "JSON nested too deeply") from None
    except ValueError as exc:
        raise MessageRejected(Reason.MALFORMED_JSON, f"not valid JSON: {str(exc):.120}") from None


def _check_source(value: object, where: str) -> str:
    if not isinstance(value, str):
        raise MessageRejected(Reason.WRONG_TYPE, f"{where}: source must be a string, got {value!r:.60}")
    if not 1 <= len(value) <= 64 or not value.isprintable() or "/" in value:
        raise MessageRejected(
            Reason.WRONG_TYPE, f"{where}: source {value!r:.70} must be 1-64 printable characters without '/'"
        )
    return value



def _bounded_list(
    doc: Mapping[str, Any], key: str, noun: str, limit: int, missing: Reason, missing_text: str
) -> list:
    """``doc[key]`` as a non-empty list of at most ``limit`` items, else :class:`MessageRejected`."""
    items = doc.get(key)
    if items is None:
        raise MessageRejected(missing, missing_text)
    if not isinstance(items, list):
        raise MessageRejected(Reason.WRONG_TYPE, f"'{key}' must be a list, got {type(items).__name__}")
    if not items:
        raise MessageRejected(Reason.EMPTY, f"'{key}' is empty")
    if len(items) > limit:
        raise MessageRejected(Reason.TOO_MANY_SAMPLES, f"{len(items)} {noun} exceed the limit {limit}")
    return items


def parse_batch(
    payload: bytes | bytearray | str,
    *,
    topic_source: str | None = None,
    max_bytes: int = MAX_PAYLOAD_BYTES,
    max_samples: int = MAX_SAMPLES_PER_MESSAGE,
    outliers: list[Outlier] | None = None,
) -> list[Sample]:
    """Parse the project's own JSON batch (schema ``hw-samples/1``, module docstring).

    Parameters
    ----------
    payload : bytes or str
        Raw message payload.
    topic_source : str, optional
        Source named by the topic (``hw/{vessel}/samples/{source}``). When given, the payload's
        ``source`` must be absent or equal to it.
    max_bytes : int
        Payload size limit [bytes].
    max_samples : int
        Limit on the number of samples in one message.
    outliers : list, optional
        When given, an out-of-range value drops only that value (appended here as an :class:`Outlier`);
        otherwise it rejects the message.

    Returns
    -------
    list of Sample
        In payload order (possibly empty of values: a sample with only ``null`` channels is dropped).

    Raises
    ------
    MessageRejected
        With the reason code and a detail naming the sample index, field and value.
    """
    doc = loads(payload, max_bytes=max_bytes)
    if not isinstance(doc, dict):
        raise MessageRejected(Reason.NOT_OBJECT, f"top level must be a JSON object, got {type(doc).__name__}")
    schema = doc.get("schema")
    if schema != BATCH_SCHEMA:
        raise MessageRejected(
            Reason.UNKNOWN_SCHEMA, f"schema {schema!r:.60}; this listener reads {BATCH_SCHEMA!r}"
        )
    if "source" in doc:
        source = _check_source(doc["source"], "batch")
        if topic_source is not None and source != topic_source:
            raise MessageRejected(
                Reason.SOURCE_MISMATCH,
                f"payload source {source!r} differs from topic source {topic_source!r}",
            )
    elif topic_source is not None:
        source = _check_source(topic_source, "topic")
    else:
        raise MessageRejected(Reason.MISSING_FIELD, "batch has no 'source'")
    samples = _bounded_list(
        doc, "samples", "samples", max_samples, Reason.MISSING_FIELD, "batch has no 'samples' list"
    )
    out: list[Sample] = []
    for i, raw in enumerate(samples):
        where = f"samples[{i}]"
        if not isinstance(raw, dict):
            raise MessageRejected(Reason.WRONG_TYPE, f"{where} must be an object, got {type(raw).__name__}")
        if "time_utc" not in raw:
            raise MessageRejected(Reason.MISSING_FIELD, f"{where} has no 'time_utc'")
        t = parse_time_ms(raw["time_utc"], where=f"{where}.time_utc")
        values: dict[str, float] = {}
        for column in CHANNELS:
            if column in raw:
                x = _checked(column, raw[column], where, source, t, outliers)
                if x is not None:
                    values[column] = x
        if values:
            out.append(Sample(source, t, values))
    return out


def _get_number(value: object, where: str) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise MessageRejected(Reason.WRONG_TYPE, f"{where}: expected a number or null, got {value!r:.60}")
    x = float(value)
    if not math.isfinite(x):
        raise MessageRejected(Reason.OUT_OF_RANGE, f"{where}: {value!r} is not finite")
    return x


def _wrap_rad_to_deg(x: float, where: str, column: str) -> float:
    # Signal K angles 0..2π; a value a little outside (e.g. -0.001 or 6.2833) is folded, larger is an error.
    if not -2.0 * math.pi <= x <= 4.0 * math.pi:
        raise MessageRejected(
            Reason.OUT_OF_RANGE, f"{where}: {x!r} rad is not an angle in [0, 2π)", field=column
        )
    return float(wrap_deg(float(rad_to_deg(x))))


def _signalk_values(path: str, value: object, where: str) -> dict[str, float | None]:
    """Map one Signal K path/value pair to voyage-log columns (None = not measured)."""
    if path == "navigation.attitude":
        if not isinstance(value, dict):
            raise MessageRejected(
                Reason.WRONG_TYPE, f"{where}: attitude must be an object {{roll, pitch, yaw}}"
            )
        roll = _get_number(value.get("roll"), f"{where}.roll")
        pitch = _get_number(value.get("pitch"), f"{where}.pitch")
        return {
            "roll_deg": None if roll is None else float(rad_to_deg(roll)),
            "pitch_deg": None if pitch is None else float(rad_to_deg(pitch)),
        }
    if path in ("navigation.headingTrue", "navigation.courseOverGroundTrue"):
        column = "heading_deg" if path == "navigation.headingTrue" else "cog_deg"
        x = _get_number(value, where)
        return {column: None if x is None else _wrap_rad_to_deg(x, where, column)}
    if path in ("navigation.speedThroughWater", "navigation.speedOverGround"):
        column = "stw_kn" if path == "navigation.speedThroughWater" else "sog_kn"
        x = _get_number(value, where)
        return {column: None if x is None else float(ms_to_kn(x))}
    if path == "navigation.position":
        if not isinstance(value, dict):
            raise MessageRejected(
                Reason.WRONG_TYPE, f"{where}: position must be an object {{latitude, longitude}}"
            )
        return {
            "lat_deg": _get_number(value.get("latitude"), f"{where}.latitude"),
            "lon_deg": _get_number(value.get("longitude"), f"{where}.longitude"),
        }
    if path == "environment.heave":
        return {"heave_m": _get_number(value, where)}
    if path == "hw.motion.acceleration":
        if not isinstance(value, dict):
            raise MessageRejected(Reason.WRONG_TYPE, f"{where}: acceleration must be an object {{x, y, z}}")
        return {
            "acc_x_ms2": _get_number(value.get("x"), f"{where}.x"),
            "acc_y_ms2": _get_number(value.get("y"), f"{where}.y"),
            "acc_z_ms2": _get_number(value.get("z"), f"{where}.z"),
        }
    return {}


SIGNALK_PATHS = (
    "navigation.attitude",
    "navigation.headingTrue",
    "navigation.speedThroughWater",
    "navigation.speedOverGround",
    "navigation.courseOverGroundTrue",
    "navigation.position",
    "environment.heave",
    "hw.motion.acceleration",
)
"""Signal K paths read by :func:`parse_signalk_delta` (others are ignored)."""


def parse_signalk_delta(
    payload: bytes | bytearray | str,
    *,
    default_source: str = "signalk",
    max_bytes: int = MAX_PAYLOAD_BYTES,
    max_samples: int = MAX_SAMPLES_PER_MESSAGE,
    own_contexts: tuple[str, ...] = (SELF_CONTEXT,),
    outliers: list[Outlier] | None = None,
) -> list[Sample]:
    """Parse a Signal K delta message into samples (one per update with a known path).

    Parameters
    ----------
    payload : bytes or str
        Raw message payload.
    default_source : str
        Source used when an update carries neither ``$source`` nor ``source.label``.
    max_bytes : int
        Payload size limit [bytes].
    max_samples : int
        Limit on the number of updates in one message.
    own_contexts : tuple of str
        Contexts that mean the own vessel (``vessels.self`` and, if configured, the own id such as
        ``vessels.urn:mrn:imo:mmsi:...``); any other context is rejected as ``other_vessel``.
    outliers : list, optional
        As in :func:`parse_batch`: out-of-range values dropped one by one and recorded here.

    Returns
    -------
    list of Sample
        One per update that carries at least one known path with a non-null value; updates with only
        unknown paths are skipped. Updates sharing source and timestamp are merged.

    Raises
    ------
    MessageRejected
        With the reason code and a detail naming the update/value index and path.
    """
    doc = loads(payload, max_bytes=max_bytes)
    if not isinstance(doc, dict):
        raise MessageRejected(Reason.NOT_OBJECT, f"top level must be a JSON object, got {type(doc).__name__}")
    updates = _bounded_list(
        doc, "updates", "updates", max_samples, Reason.UNKNOWN_SCHEMA, "not a Signal K delta: no 'updates' list"
    )
    context = doc.get("context", SELF_CONTEXT)
    if context not in own_contexts:
        raise MessageRejected(
            Reason.OTHER_VESSEL,
            f"context {context!r:.80} is not the own vessel; accepted: {', '.join(own_contexts)}",
        )
    merged: dict[tuple[str, int], dict[str, float]] = {}
    for i, upd in enumerate(updates):
        where = f"updates[{i}]"
        if not isinstance(upd, dict):
            raise MessageRejected(Reason.WRONG_TYPE, f"{where} must be an object, got {type(upd).__name__}")
        values = upd.get("values")
        if values is None:
            continue  # a meta-only update
        if not isinstance(values, list):
            raise MessageRejected(
                Reason.WRONG_TYPE, f"{where}.values must be a list, got {type(values).__name__}"
            )
        if len(values) > max_samples:
            raise MessageRejected(
                Reason.TOO_MANY_SAMPLES, f"{where}.values: {len(values)} exceed {max_samples}"
            )
        if "$source" in upd:
            source = _check_source(upd["$source"], f"{where}.$source")
        elif isinstance(upd.get("source"), dict) and "label" in upd["source"]:
            source = _check_source(upd["source"]["label"], f"{where}.source.label")
        else:
            source = default_source
        collected: dict[str, float] = {}
        for j, item in enumerate(values):
            w = f"{where}.values[{j}]"
            if not isinstance(item, dict):
                raise MessageRejected(Reason.WRONG_TYPE, f"{w} must be an object, got {type(item).__name__}")
            path = item.get("path")
            if not isinstance(path, str):
                raise MessageRejected(Reason.WRONG_TYPE, f"{w}.path must be a string, got {path!r:.60}")
            if "value" not in item:
                raise MessageRejected(Reason.MISSING_FIELD, f"{w} ({path}) has no 'value'")
            try:
                mapped = _signalk_values(path, item["value"], f"{w} ({path})")
            except MessageRejected as exc:
                if outliers is None or exc.reason is not Reason.OUT_OF_RANGE or exc.field is None:
                    raise
                outliers.append(Outlier(source, exc.field, None, exc.detail))
                continue
            for column, x in mapped.items():
                checked = _checked(column, x, f"{w} ({path})", source, None, outliers)
                if checked is not None:
                    collected[column] = checked
        if not collected:
            continue
        if "timestamp" not in upd:
            raise MessageRejected(Reason.MISSING_FIELD, f"{where} has values but no 'timestamp'")
        t = parse_time_ms(upd["timestamp"], where=f"{where}.timestamp")
        merged.setdefault((source, t), {}).update(collected)
    return [Sample(src, t, vals) for (src, t), vals in merged.items()]
