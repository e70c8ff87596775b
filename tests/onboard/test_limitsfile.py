"""Tests of the limit-set TOML reader/writer (onboard.formats.limitsfile) and the limit files in config/limits/."""

import math
import pathlib

import pytest

from advisor.criteria import nordforsk_merchant
from advisor.limits import LimitSetError
from estimator.constants import G
from onboard.formats.limitsfile import (
    LimitsFileError,
    dumps_limit_set,
    loads_limit_set,
    read_limit_set,
    write_limit_set,
)
from onboard.formats.vessel import load_vessel

ROOT = pathlib.Path(__file__).resolve().parents[2]
CONFIG = ROOT / "config"
LIMIT_FILES = sorted((CONFIG / "limits").glob("*.toml"))


@pytest.fixture(scope="module")
def vessel():
    return load_vessel(CONFIG / "demo_vessel.toml")


def test_config_has_default_and_cargo_sets():
    names = {p.name for p in LIMIT_FILES}
    assert {"nordforsk_merchant.toml", "high_stack_deep_laden.toml"} <= names


@pytest.mark.parametrize("path", LIMIT_FILES, ids=lambda p: p.name)
def test_config_limit_files_valid(path, vessel):
    ls = read_limit_set(path, vessel_points=vessel.points_mapping())
    pts = ls.resolve_points(vessel.points_mapping())  # also checks slamming/wetness point sides
    assert all(lim.point is None or lim.point in pts for lim in ls.limits)
    assert all(lim.source.strip() for lim in ls.limits)
    assert ls.label == str(path)


def test_default_set_matches_nordforsk_interpolation(vessel):
    # the numbers written in the default file are NORDFORSK (1987) merchant-ship values (from memory)
    # interpolated at the demo ship's Lpp (NORDFORSK_200M of tests/check_values.py: 0.1772 g and 0.020 at L =
    # 200 m)
    ls = read_limit_set(CONFIG / "limits" / "nordforsk_merchant.toml")
    ref = nordforsk_merchant(vessel.lpp)
    by = {(lim.criterion, lim.point): lim for lim in ls.limits}
    assert by[("roll", None)].value == pytest.approx(ref["roll_rms"])
    assert by[("vertical_acceleration", "forward_perpendicular")].value == pytest.approx(
        ref["vertical_acceleration_fp_rms"], abs=0.0001 * G
    )
    assert by[("vertical_acceleration", "bridge")].value == pytest.approx(
        ref["vertical_acceleration_bridge_rms"]
    )
    assert by[("lateral_acceleration", "bridge")].value == pytest.approx(
        ref["lateral_acceleration_bridge_rms"]
    )
    assert by[("slamming", "forefoot")].value == pytest.approx(ref["slamming_probability"])
    assert by[("deck_wetness", "bow")].value == pytest.approx(ref["deck_wetness_probability"])


def test_cargo_set_is_tighter_on_roll_and_has_top_tier_limits():
    default = read_limit_set(CONFIG / "limits" / "nordforsk_merchant.toml")
    cargo = read_limit_set(CONFIG / "limits" / "high_stack_deep_laden.toml")
    roll_d = next(lim for lim in default.limits if lim.key == "roll_rms")
    roll_c = next(lim for lim in cargo.limits if lim.key == "roll_rms")
    assert roll_c.value < roll_d.value
    lat = [
        lim
        for lim in cargo.limits
        if lim.criterion == "lateral_acceleration" and "top_tier" in (lim.point or "")
    ]
    assert len(lat) == 2 and all(lim.statistic == "mpm" and lim.exposure == 3 * 3600.0 for lim in lat)
    assert lat[0].value == pytest.approx(0.45 * G)
    assert math.degrees(next(lim for lim in cargo.limits if lim.key == "roll_mpm").value) == pytest.approx(
        20.0
    )


def test_round_trip(tmp_path):
    src = read_limit_set(CONFIG / "limits" / "high_stack_deep_laden.toml")
    out = tmp_path / "copy.toml"
    write_limit_set(src, out)
    again = read_limit_set(out)
    assert again.limits == src.limits and again.points == src.points and again.zones == src.zones
    assert again.margin == src.margin
    assert "the master" in dumps_limit_set(src)


MINIMAL = """
schema_version = 1
name = "t"
[[limits]]
criterion = "roll"
statistic = "rms"
value = 6.0
unit = "deg"
source = "NORDFORSK 1987"
"""


@pytest.mark.parametrize(
    "edit, error, pattern",
    [
        (
            ("value = 6.0", "value = 6.0\ncolour = 'red'"),
            LimitSetError,
            r"^bad\.toml: limits\[0\]\.colour = 'red': unknown key; allowed: keys key, criterion",
        ),
        (
            ('unit = "deg"', 'unit = "degrees"'),
            LimitSetError,
            r"^bad\.toml: limits\[0\]\.unit = 'degrees': unit not allowed; allowed: for roll rms: deg, rad",
        ),
        (
            ("value = 6.0", "value = 600.0"),
            LimitSetError,
            r"^bad\.toml: limits\[0\]\.value = 600\.0: out of range; allowed: a number in \(0, 90\] deg",
        ),
        (
            ('criterion = "roll"', 'criterion = "yaw"'),
            LimitSetError,
            r"^bad\.toml: limits\[0\]\.criterion = 'yaw': unknown criterion; allowed: one of roll, pitch",
        ),
        (
            ('source = "NORDFORSK 1987"', ""),
            LimitSetError,
            r"^bad\.toml: limits\[0\]\.source = None: missing key",
        ),
        (
            ("value = 6.0", "value = 6.0 deg"),
            LimitsFileError,
            r"^bad\.toml: not valid TOML: .*at line 7, column 13",
        ),
        (
            ("schema_version = 1", "schema_version = 1\nmargins = 0.9"),
            LimitSetError,
            r"^bad\.toml: margins = 0\.9: unknown key; allowed: keys schema_version, name",
        ),
    ],
)
def test_invalid_files_rejected(tmp_path, edit, error, pattern):
    path = tmp_path / "bad.toml"
    path.write_text(MINIMAL.replace(*edit), encoding="utf-8")
    with pytest.raises(error, match=pattern.replace("bad\\.toml", str(path).replace(".", "\\."))):
        read_limit_set(path)
    with pytest.raises(error, match=pattern):
        loads_limit_set(MINIMAL.replace(*edit), "bad.toml")


def test_unknown_point_against_the_vessel(vessel):
    text = (
        MINIMAL.replace('criterion = "roll"', 'criterion = "lateral_acceleration"')
        .replace('unit = "deg"', 'unit = "g"\npoint = "crow_nest"')
        .replace("value = 6.0", "value = 0.12")
    )
    with pytest.raises(
        LimitSetError,
        match=r"^v\.toml: limits\[0\]\.point = 'crow_nest': unknown point; "
        r"allowed: one of aft_top_tier, bow, bridge",
    ):
        loads_limit_set(text, "v.toml", vessel_points=vessel.points_mapping())


def test_missing_file(tmp_path):
    with pytest.raises(LimitsFileError, match=r"nothere\.toml: limit file not found"):
        read_limit_set(tmp_path / "nothere.toml")


def test_not_utf8(tmp_path):
    p = tmp_path / "latin.toml"
    p.write_bytes(MINIMAL.replace("NORDFORSK", "NORDFORSK \xe9").encode("latin-1"))
    with pytest.raises(LimitsFileError, match=r"latin\.toml: not UTF-8 text"):
        read_limit_set(p)
