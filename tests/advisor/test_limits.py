"""Tests of the limit-set schema (advisor.limits): parsing, SI conversion and rejected input."""

import copy
import math

import pytest

from advisor.limits import (
    LimitSetError,
    limit_set_to_mapping,
    parse_limit_set,
)
from estimator.constants import G


def _base():
    return {
        "schema_version": 1,
        "name": "test set",
        "margin": 0.9,
        "points": [{"name": "top_tier", "x_m": 60.0, "y_m": 0.0, "z_m": 28.0}],
        "limits": [
            {
                "criterion": "roll",
                "statistic": "rms",
                "value": 6.0,
                "unit": "deg",
                "source": "NORDFORSK 1987",
            },
            {
                "criterion": "lateral_acceleration",
                "statistic": "mpm",
                "value": 0.3,
                "unit": "g",
                "exposure_h": 3.0,
                "point": "top_tier",
                "source": "demo cargo securing manual value (common practice)",
            },
            {
                "criterion": "slamming",
                "statistic": "rate_per_hour",
                "value": 2.0,
                "unit": "per_hour",
                "point": "forefoot",
                "source": "Ochi 1964",
            },
            {
                "criterion": "motion_sickness",
                "statistic": "msdv",
                "value": 30.0,
                "unit": "m/s^1.5",
                "exposure_h": 2.0,
                "point": "bridge",
                "source": "ISO 2631-1 Annex D",
            },
        ],
        "zones": {"synchronous_roll_band": 0.1},
        "uncertainty": {"hs_k": 1.0},
        "advice": {"heading_weight_per_deg": 1.0, "speed_loss_weight_per_kn": 3.0},
    }


def test_parse_converts_to_si():
    ls = parse_limit_set(_base(), "test.toml")
    roll, lat, slam, msdv = ls.limits
    # unit conversions: 1° = π/180 rad (definition); g = 9.81 m/s² (estimator.constants, DNV-RP-C205)
    assert roll.value == pytest.approx(6.0 * math.pi / 180.0, rel=1e-15)
    assert roll.key == "roll_rms" and roll.point is None
    assert lat.value == pytest.approx(0.3 * G, rel=1e-15)
    assert lat.exposure == pytest.approx(3 * 3600.0)
    assert slam.value == pytest.approx(2.0 / 3600.0)  # per hour → per second
    assert msdv.value == 30.0 and msdv.exposure == 7200.0
    assert lat.key == "lateral_acceleration_mpm_top_tier"
    assert ls.margin == 0.9
    assert ls.advice.heading == pytest.approx(180.0 / math.pi)
    assert ls.label == "test.toml"


def test_round_trip_mapping():
    ls = parse_limit_set(_base(), "a.toml")
    again = parse_limit_set(limit_set_to_mapping(ls), "a.toml")
    assert again.limits == ls.limits
    assert again.zones == ls.zones and again.uncertainty == ls.uncertainty
    assert again.advice.heading == pytest.approx(ls.advice.heading)
    assert again.advice.speed_loss == pytest.approx(ls.advice.speed_loss)
    assert again.points == ls.points


def _with(path, value, delete=False):
    m = copy.deepcopy(_base())
    node = m
    for p in path[:-1]:
        node = node[p]
    if delete:
        del node[path[-1]]
    else:
        node[path[-1]] = value
    return m


@pytest.mark.parametrize(
    "path, value, pattern",
    [
        (
            ("limits", 0, "criterion"),
            "heave",
            r"limits\[0\]\.criterion = 'heave'.*unknown criterion.*allowed: one of roll",
        ),
        (
            ("limits", 0, "statistic"),
            "msdv",
            r"limits\[0\]\.statistic = 'msdv'.*allowed: for roll: rms, significant, mpm",
        ),
        (("limits", 0, "unit"), "g", r"limits\[0\]\.unit = 'g'.*allowed: for roll rms: deg, rad"),
        (
            ("limits", 0, "value"),
            95.0,
            r"limits\[0\]\.value = 95\.0: out of range; allowed: a number in \(0, 90\] deg",
        ),
        (("limits", 0, "value"), -1, r"limits\[0\]\.value = -1: out of range"),
        (("limits", 0, "value"), "6", r"limits\[0\]\.value = '6': not a number"),
        (("limits", 0, "value"), True, r"limits\[0\]\.value = True: not a number"),
        (
            ("limits", 0, "colour"),
            "red",
            r"limits\[0\]\.colour = 'red': unknown key; allowed: keys key, criterion",
        ),
        (
            ("limits", 1, "point"),
            None,
            r"limits\[1\]\.point = None: missing key \(needed for lateral_acceleration\)",
        ),
        (("margin",), 1.2, r"margin = 1\.2: out of range; allowed: a number in \(0, 1\]"),
        (("schema_version",), 2, r"schema_version = 2: unsupported schema version; allowed: 1"),
        (("zones", "synchronous_roll_band"), 0.9, r"zones\.synchronous_roll_band = 0\.9: out of range"),
        (("zones", "width"), 1, r"zones\.width = 1: unknown key"),
        (
            ("uncertainty", "hs_k"),
            -0.5,
            r"uncertainty\.hs_k = -0\.5: out of range; allowed: a number in \[0, 5\]",
        ),
        (("extra",), 1, r"extra = 1: unknown key"),
        (
            ("limits", 2, "statistic"),
            "mpm",
            r"limits\[2\]\.statistic = 'mpm'.*allowed: for slamming: probability, rate_per_hour",
        ),
        (("limits", 3, "value"), 0, r"limits\[3\]\.value = 0: out of range"),
        (
            ("points", 0, "x_m"),
            900.0,
            r"points\[0\]\.x_m = 900\.0: out of range; allowed: a number in \[-500, 500\] m",
        ),
    ],
)
def test_invalid_values_rejected(path, value, pattern):
    m = _with(path, value, delete=value is None)
    with pytest.raises(LimitSetError, match="^bad\\.toml: " + pattern):
        parse_limit_set(m, "bad.toml")


def test_missing_exposure_for_mpm():
    m = _with(("limits", 1, "exposure_h"), None, delete=True)
    with pytest.raises(
        LimitSetError, match=r"limits\[1\]\.exposure_h = None: missing key; allowed: .*needed for mpm"
    ):
        parse_limit_set(m, "x.toml")


def test_duplicate_key_rejected():
    m = _base()
    m["limits"].append(copy.deepcopy(m["limits"][0]))
    with pytest.raises(
        LimitSetError, match=r"limits\[4\]\.key = 'roll_rms': duplicate limit key; allowed: .*limits\[0\]"
    ):
        parse_limit_set(m, "x.toml")


def test_unknown_point_against_vessel():
    with pytest.raises(
        LimitSetError,
        match=r"limits\[2\]\.point = 'forefoot': unknown point; allowed: one of bridge, top_tier",
    ):
        parse_limit_set(_base(), "x.toml", vessel_points=["bridge"])
    ls = parse_limit_set(_base(), "x.toml", vessel_points=["bridge", "forefoot"])
    assert ls.limits[2].point == "forefoot"


def test_resolve_points_checks_waterline_side():
    ls = parse_limit_set(_base(), "x.toml")
    pts = ls.resolve_points({"bridge": (-80.0, 0.0, 25.0), "forefoot": (90.0, 0.0, -8.0)})
    assert pts["top_tier"].z == 28.0 and pts["forefoot"].z == -8.0
    with pytest.raises(
        LimitSetError,
        match=r"limits\[2\]\.point = 'forefoot'.*slamming point has z = 2\.0 m; allowed: a point below",
    ):
        ls.resolve_points({"bridge": (-80.0, 0.0, 25.0), "forefoot": (90.0, 0.0, 2.0)})
    with pytest.raises(LimitSetError, match=r"points\[0\]\.name = 'top_tier': duplicate point name"):
        ls.resolve_points({"bridge": (0, 0, 1), "forefoot": (90.0, 0.0, -8.0), "top_tier": (0, 0, 1)})


def test_empty_limits_rejected():
    with pytest.raises(LimitSetError, match=r"^e\.toml: limits = \[\]: empty or not an array"):
        parse_limit_set(_with(("limits",), []), "e.toml")


def test_defaults():
    m = _base()
    for k in ("zones", "uncertainty", "advice", "margin"):
        del m[k]
    ls = parse_limit_set(m)
    assert ls.margin == 0.9 and ls.zones.synchronous_roll_band == 0.1 and ls.uncertainty.hs_k == 1.0
