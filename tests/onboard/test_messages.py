"""Tests for onboard.formats.messages: project batches and Signal K deltas, normalisation and rejection codes."""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from onboard.formats.messages import (
    BATCH_SCHEMA,
    COLUMNS,
    MessageRejected,
    Reason,
    Sample,
    format_time_ms,
    parse_batch,
    parse_signalk_delta,
    parse_time_ms,
)

T0 = "2026-03-01T12:00:00.000Z"
T0_MS = 1_772_366_400_000  # 2026-03-01T12:00:00Z: 20513 days × 86400 s + 12 h (analytical)


def batch(samples, **top):
    doc = {"schema": BATCH_SCHEMA, "source": "imu1", "samples": samples}
    doc.update(top)
    return json.dumps(doc).encode()


def test_columns_are_the_voyage_log_columns():
    # docs/voyage-log.md, column names exactly and in table order
    assert COLUMNS == (
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


def test_time_parsing_and_formatting_round_trip():
    # Unix epoch arithmetic (analytical): 2026-03-01 is day 20513 since 1970-01-01
    assert parse_time_ms(T0) == T0_MS
    assert parse_time_ms("2026-03-01T12:00:00.1234Z") == T0_MS + 123  # rounded to 1 ms
    assert parse_time_ms("2026-03-01T14:00:00+02:00") == T0_MS  # offset converted to UTC
    assert format_time_ms(T0_MS + 5) == "2026-03-01T12:00:00.005Z"
    assert parse_time_ms(format_time_ms(T0_MS + 999)) == T0_MS + 999


@pytest.mark.parametrize(
    "text, reason, match",
    [
        ("2026-03-01T12:00:00", Reason.BAD_TIME, "no time zone"),
        ("yesterday", Reason.BAD_TIME, "not ISO 8601"),
        ("2026-13-01T12:00:00Z", Reason.BAD_TIME, "not ISO 8601"),
        ("1990-01-01T00:00:00Z", Reason.BAD_TIME, "outside 2000-01-01"),
        (1772366400, Reason.WRONG_TYPE, "expected an ISO 8601 string"),
    ],
)
def test_bad_times_rejected(text, reason, match):
    with pytest.raises(MessageRejected, match=match) as exc:
        parse_time_ms(text)
    assert exc.value.reason is reason


def test_batch_parses_to_voyage_log_columns():
    out = parse_batch(
        batch(
            [
                {
                    "time_utc": T0,
                    "roll_deg": 2.5,
                    "pitch_deg": -1.0,
                    "heave_m": 0.4,
                    "heading_deg": 360.0,
                    "stw_kn": 12.3,
                    "lat_deg": 55.5,
                    "lon_deg": -20.25,
                    "acc_z_ms2": None,
                    "extra_field": "ignored",
                },
                {"time_utc": "2026-03-01T12:00:00.100Z", "roll_deg": 2.6},
                {"time_utc": "2026-03-01T12:00:00.200Z", "roll_deg": None},  # nothing measured: dropped
            ]
        )
    )
    assert out == [
        Sample(
            "imu1",
            T0_MS,
            {
                "roll_deg": 2.5,
                "pitch_deg": -1.0,
                "heave_m": 0.4,
                "heading_deg": 0.0,
                "stw_kn": 12.3,
                "lat_deg": 55.5,
                "lon_deg": -20.25,
            },
        ),
        Sample("imu1", T0_MS + 100, {"roll_deg": 2.6}),
    ]  # heading 360° folded to 0° (docs/conventions.md: [0, 360))


def test_batch_source_from_topic():
    doc = {"schema": BATCH_SCHEMA, "samples": [{"time_utc": T0, "roll_deg": 1.0}]}
    assert parse_batch(json.dumps(doc), topic_source="mru")[0].source == "mru"
    with pytest.raises(MessageRejected, match="differs from topic source") as exc:
        parse_batch(batch([{"time_utc": T0, "roll_deg": 1.0}]), topic_source="mru")
    assert exc.value.reason is Reason.SOURCE_MISMATCH
    with pytest.raises(MessageRejected, match="no 'source'"):
        parse_batch(json.dumps(doc))


@pytest.mark.parametrize(
    "payload, reason, match",
    [
        (b"x" * 300_000, Reason.OVERSIZED, "exceeds the limit"),
        (b"\xff\xfe{}", Reason.BAD_ENCODING, "not UTF-8"),
        (b'{"schema": "hw-samples/1", "samples": [', Reason.MALFORMED_JSON, "not valid JSON"),
        (
            b'{"schema": "hw-samples/1", "source": "a", "samples": [{"time_utc": "'
            + T0.encode()
            + b'", "roll_deg": NaN}]}',
            Reason.MALFORMED_JSON,
            "NaN is not valid JSON",
        ),
        (b"[1, 2]", Reason.NOT_OBJECT, "must be a JSON object, got list"),
        (b'{"schema": "hw-samples/2", "source": "a", "samples": []}', Reason.UNKNOWN_SCHEMA, "hw-samples/2"),
        (b'{"source": "a", "samples": []}', Reason.UNKNOWN_SCHEMA, "schema None"),
        (batch(None), Reason.MISSING_FIELD, "no 'samples'"),
        (batch({"a": 1}), Reason.WRONG_TYPE, "'samples' must be a list"),
        (batch([]), Reason.EMPTY, "'samples' is empty"),
        (batch([{"time_utc": T0}] * 2001), Reason.TOO_MANY_SAMPLES, "2001 samples exceed the limit 2000"),
        (batch([5]), Reason.WRONG_TYPE, r"samples\[0\] must be an object"),
        (batch([{"roll_deg": 1.0}]), Reason.MISSING_FIELD, r"samples\[0\] has no 'time_utc'"),
        (
            batch([{"time_utc": T0, "roll_deg": "1.0"}]),
            Reason.WRONG_TYPE,
            r"samples\[0\]\.roll_deg: expected a number",
        ),
        (
            batch([{"time_utc": T0, "roll_deg": True}]),
            Reason.WRONG_TYPE,
            "expected a number or null, got True",
        ),
        (
            batch([{"time_utc": T0, "roll_deg": 95.0}]),
            Reason.OUT_OF_RANGE,
            r"roll_deg: 95.0 outside .*\[-90, 90\]",
        ),
        (batch([{"time_utc": T0, "heading_deg": -0.5}]), Reason.OUT_OF_RANGE, "heading_deg"),
        (
            batch([{"time_utc": T0, "stw_kn": 1e308 * 10}]),
            Reason.MALFORMED_JSON,
            "Infinity is not valid JSON",
        ),
        (batch([{"time_utc": T0, "roll_deg": 1}], source=7), Reason.WRONG_TYPE, "source must be a string"),
        (batch([{"time_utc": T0, "roll_deg": 1}], source="a/b"), Reason.WRONG_TYPE, "without '/'"),
        (b"[" * 100_000 + b"]" * 100_000, Reason.MALFORMED_JSON, "nested too deeply|not valid JSON"),
    ],
)
def test_batch_rejections(payload, reason, match):
    with pytest.raises(MessageRejected, match=match) as exc:
        parse_batch(payload)
    assert exc.value.reason is reason


def test_out_of_range_names_the_field():
    with pytest.raises(MessageRejected, match="pitch_deg") as exc:
        parse_batch(batch([{"time_utc": T0, "pitch_deg": -60.0}]))
    assert exc.value.field == "pitch_deg"


# ------------------------------------------------------------------------------------------------ Signal K


def delta(values, *, ts=T0, source="imu1", extra=None):
    upd = {"$source": source, "timestamp": ts, "values": values}
    if extra:
        upd.update(extra)
    return json.dumps({"context": "vessels.self", "updates": [upd]})


def test_signalk_units_converted_to_edge_units():
    out = parse_signalk_delta(
        delta(
            [
                {"path": "navigation.attitude", "value": {"roll": 0.052, "pitch": -0.011, "yaw": None}},
                {"path": "navigation.headingTrue", "value": 0.8203},
                {"path": "navigation.speedThroughWater", "value": 5.0},
                {"path": "navigation.speedOverGround", "value": 5.5},
                {"path": "navigation.courseOverGroundTrue", "value": 6.2},
                {"path": "navigation.position", "value": {"latitude": 48.1, "longitude": -5.2}},
                {"path": "environment.heave", "value": -0.7},
                {"path": "hw.motion.acceleration", "value": {"x": 0.1, "y": -0.2, "z": 0.3}},
                {"path": "environment.wind.speedApparent", "value": 12.0},  # unknown path: ignored
            ]
        )
    )
    assert len(out) == 1
    s = out[0]
    assert (s.source, s.time_ms) == ("imu1", T0_MS)
    v = s.values
    # Signal K units are SI/radians (signalk.org schemas); 1 kn = 1852/3600 m/s exactly (definition)
    assert v["roll_deg"] == pytest.approx(0.052 * 180 / math.pi, rel=1e-12)  # + starboard down kept
    assert v["pitch_deg"] == pytest.approx(-0.011 * 180 / math.pi, rel=1e-12)  # + bow up kept
    assert v["heading_deg"] == pytest.approx(0.8203 * 180 / math.pi, rel=1e-12)
    assert v["stw_kn"] == pytest.approx(5.0 * 3600 / 1852, rel=1e-12)
    assert v["sog_kn"] == pytest.approx(5.5 * 3600 / 1852, rel=1e-12)
    assert v["cog_deg"] == pytest.approx(6.2 * 180 / math.pi, rel=1e-12)
    assert (v["lat_deg"], v["lon_deg"], v["heave_m"]) == (48.1, -5.2, -0.7)
    assert (v["acc_x_ms2"], v["acc_y_ms2"], v["acc_z_ms2"]) == (0.1, -0.2, 0.3)
    assert set(v) <= set(COLUMNS)


def test_signalk_heading_slightly_negative_wraps():
    out = parse_signalk_delta(delta([{"path": "navigation.headingTrue", "value": -0.01}]))
    assert out[0].values["heading_deg"] == pytest.approx(360 - 0.01 * 180 / math.pi)


def test_signalk_source_label_and_default_and_merge():
    doc = {
        "updates": [
            {
                "source": {"label": "gps"},
                "timestamp": T0,
                "values": [{"path": "navigation.speedOverGround", "value": 1.0}],
            },
            {
                "source": {"label": "gps"},
                "timestamp": T0,
                "values": [{"path": "navigation.courseOverGroundTrue", "value": 1.0}],
            },
            {"timestamp": T0, "values": [{"path": "environment.heave", "value": 0.1}]},
            {
                "timestamp": T0,
                "values": [{"path": "environment.depth.belowKeel", "value": 3.0}],
            },  # nothing we read
            {"meta": [{"path": "navigation.attitude", "value": {"units": "rad"}}]},  # meta-only update
        ]
    }
    out = parse_signalk_delta(json.dumps(doc), default_source="sk")
    assert {(s.source, tuple(sorted(s.values))) for s in out} == {
        ("gps", ("cog_deg", "sog_kn")),
        ("sk", ("heave_m",)),
    }


@pytest.mark.parametrize(
    "payload, reason, match",
    [
        (json.dumps({"context": "x"}), Reason.UNKNOWN_SCHEMA, "no 'updates'"),
        (json.dumps({"updates": {}}), Reason.WRONG_TYPE, "'updates' must be a list"),
        (json.dumps({"updates": []}), Reason.EMPTY, "'updates' is empty"),
        (json.dumps({"updates": [3]}), Reason.WRONG_TYPE, r"updates\[0\] must be an object"),
        (
            json.dumps({"updates": [{"values": [{"path": "environment.heave", "value": 1.0}]}]}),
            Reason.MISSING_FIELD,
            "no 'timestamp'",
        ),
        (
            delta([{"path": "environment.heave", "value": 1.0}], ts="2026-03-01 12:00"),
            Reason.BAD_TIME,
            "not ISO 8601",
        ),
        (
            delta([{"path": "navigation.attitude", "value": 0.3}]),
            Reason.WRONG_TYPE,
            "attitude must be an object",
        ),
        (
            delta([{"path": "navigation.attitude", "value": {"roll": "x"}}]),
            Reason.WRONG_TYPE,
            r"\.roll: expected a number",
        ),
        (delta([{"path": "navigation.attitude", "value": {"roll": 3.0}}]), Reason.OUT_OF_RANGE, "roll_deg"),
        (
            delta([{"path": "navigation.headingTrue", "value": 40.0}]),
            Reason.OUT_OF_RANGE,
            r"not an angle in \[0, 2π\)",
        ),
        (delta([{"path": "navigation.speedThroughWater", "value": 50.0}]), Reason.OUT_OF_RANGE, "stw_kn"),
        (
            delta([{"path": "navigation.position", "value": {"latitude": 95, "longitude": 0}}]),
            Reason.OUT_OF_RANGE,
            "lat_deg",
        ),
        (delta([{"path": 5, "value": 1}]), Reason.WRONG_TYPE, "path must be a string"),
        (delta([{"path": "environment.heave"}]), Reason.MISSING_FIELD, "has no 'value'"),
        (
            delta([{"path": "environment.heave", "value": 1.0}], source=""),
            Reason.WRONG_TYPE,
            "1-64 printable",
        ),
    ],
)
def test_signalk_rejections(payload, reason, match):
    with pytest.raises(MessageRejected, match=match) as exc:
        parse_signalk_delta(payload)
    assert exc.value.reason is reason


# ------------------------------------------------------------------------------------------------ fuzzing

json_leaf = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**20), 10**20),
    st.floats(allow_nan=False, allow_infinity=False),
    st.text(max_size=30),
)
json_value = st.recursive(
    json_leaf,
    lambda inner: st.lists(inner, max_size=5) | st.dictionaries(st.text(max_size=12), inner, max_size=5),
    max_leaves=30,
)
sample_like = st.dictionaries(
    st.sampled_from([*COLUMNS, "junk"]),
    st.one_of(json_leaf, st.just(T0), st.floats(-400, 400)),
    max_size=14,
)


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    st.one_of(
        st.binary(max_size=400),
        json_value.map(lambda v: json.dumps(v).encode()),
        st.lists(sample_like, max_size=6).map(lambda s: batch(s)),
    )
)
def test_fuzz_parsers_only_ever_return_samples_or_reject(payload):
    # property: whatever arrives, the result is validated samples or a MessageRejected with a reason code
    for parse in (parse_batch, parse_signalk_delta):
        try:
            out = parse(payload)
        except MessageRejected as exc:
            assert isinstance(exc.reason, Reason)
            continue
        for s in out:
            assert isinstance(s, Sample) and isinstance(s.time_ms, int)
            for c, x in s.values.items():
                assert c in COLUMNS and isinstance(x, float) and math.isfinite(x)
