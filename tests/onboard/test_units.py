"""Tests for onboard.formats.units: the edge conversions (docs/conventions.md).

Sources: docs/conventions.md (β = (180° − (θ − ψ)) mod 360°; 180° head, 0° following, 90° from
starboard, 270° from port; sensor pitch + bow up vs ITTC + bow down; FRD vs ITTC axes); the
definition of the international knot (1852 m per hour, exact); ISO 8601 (UTC designator Z).
"""

from datetime import UTC, datetime, timedelta, timezone

import numpy as np
import pytest

from onboard.formats.units import (
    UnitsError,
    acc_frd_to_ittc,
    acc_ittc_to_frd,
    deg_to_rad,
    format_utc,
    kn_to_ms,
    ms_to_kn,
    parse_utc,
    pitch_ittc_to_sensor,
    pitch_sensor_to_ittc,
    rad_to_deg,
    relative_heading_deg,
    relative_heading_rad,
    roll_ittc_to_sensor,
    roll_sensor_to_ittc,
    wave_from_deg,
    wrap_deg,
)


def test_degrees_and_knots():
    assert deg_to_rad(180.0) == pytest.approx(np.pi)
    assert rad_to_deg(np.pi / 2) == pytest.approx(90.0)
    assert kn_to_ms(1.0) == pytest.approx(1852.0 / 3600.0, rel=1e-15)  # definition of the knot
    assert kn_to_ms(15.0) == pytest.approx(7.716667, rel=1e-6)
    np.testing.assert_allclose(ms_to_kn(kn_to_ms(np.array([0.0, 12.5, 30.0]))), [0.0, 12.5, 30.0])


@pytest.mark.parametrize(
    ("wave_from", "heading", "beta", "meaning"),
    [
        (0.0, 0.0, 180.0, "head seas: waves from ahead"),
        (90.0, 270.0, 0.0, "following seas: ship steams away from the waves"),
        (135.0, 45.0, 90.0, "waves from starboard (beam)"),
        (315.0, 45.0, 270.0, "waves from port (beam)"),
        (30.0, 0.0, 150.0, "bow seas from starboard"),
        (350.0, 10.0, 200.0, "bow seas from port across north"),
    ],
)
def test_relative_heading_head_following_beam(wave_from, heading, beta, meaning):
    # docs/conventions.md: beta = (180 - (theta - psi)) mod 360; 180 head, 0 following, 90 stbd, 270 port
    assert relative_heading_deg(wave_from, heading) == pytest.approx(beta), meaning
    assert wave_from_deg(beta, heading) == pytest.approx(wave_from % 360.0), meaning
    assert relative_heading_rad(np.deg2rad(wave_from), np.deg2rad(heading)) == pytest.approx(np.deg2rad(beta))


def test_relative_heading_is_vectorised_and_wraps_into_0_360():
    b = relative_heading_deg(np.array([0.0, 180.0, 359.0]), 180.0)
    np.testing.assert_allclose(b, [0.0, 180.0, 1.0])
    assert wrap_deg(-1e-20) == 0.0  # np.mod would give 360.0 for a tiny negative angle
    assert wrap_deg(720.0) == 0.0
    np.testing.assert_allclose(wrap_deg(np.array([-90.0, 370.0])), [270.0, 10.0])


def test_attitude_sign_conversions():
    # docs/conventions.md: sensor roll + starboard down = ITTC roll; sensor pitch + bow UP = -ITTC pitch
    assert roll_sensor_to_ittc(5.0) == pytest.approx(np.deg2rad(5.0))
    assert pitch_sensor_to_ittc(2.0) == pytest.approx(-np.deg2rad(2.0))  # bow up -> negative ITTC
    assert pitch_ittc_to_sensor(np.deg2rad(-2.0)) == pytest.approx(2.0)
    assert roll_ittc_to_sensor(roll_sensor_to_ittc(-3.5)) == pytest.approx(-3.5)


def test_acceleration_frames():
    # FRD (x fwd, y starboard, z down) vs ITTC (x fwd, y port, z up): y and z change sign
    ax, ay, az = acc_frd_to_ittc(0.1, 0.2, -0.3)
    assert (ax, ay, az) == pytest.approx((0.1, -0.2, 0.3))
    back = acc_ittc_to_frd(ax, ay, az)
    assert back == pytest.approx((0.1, 0.2, -0.3))


def test_utc_formatting_and_parsing():
    t = datetime(2026, 1, 31, 12, 0, 0, tzinfo=UTC)
    assert format_utc(t) == "2026-01-31T12:00:00Z"  # ISO 8601 with the UTC designator
    assert format_utc(t + timedelta(microseconds=250000)) == "2026-01-31T12:00:00.250000Z"
    plus1 = datetime(2026, 1, 31, 13, 0, 0, tzinfo=timezone(timedelta(hours=1)))
    assert format_utc(plus1) == "2026-01-31T12:00:00Z"
    assert parse_utc("2026-01-31T12:00:00Z") == t
    assert parse_utc("2026-01-31T12:00:00.25Z") == t + timedelta(microseconds=250000)
    assert parse_utc("2026-01-31T13:00:00+01:00") == t
    assert parse_utc("2026-01-31T12:00:00Z").tzinfo is UTC
    assert parse_utc(format_utc(t)) == t


def test_utc_errors():
    with pytest.raises(UnitsError, match="has no timezone"):
        parse_utc("2026-01-31T12:00:00")
    with pytest.raises(UnitsError, match=r"'31/01/2026 12:00' is not ISO 8601"):
        parse_utc("31/01/2026 12:00")
    with pytest.raises(UnitsError, match="has no timezone"):
        format_utc(datetime(2026, 1, 31, 12, 0, 0))
