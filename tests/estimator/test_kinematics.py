"""Tests for estimator.kinematics: rigid-body transfer, relative motion and sensor channels.

Check values: ``tests/check_values.py`` POINT_MOTION and BOW_RELATIVE_MOTION (derived with the
small-angle formulas of Faltinsen 1990 §2.2 / PNA vol. III ch. 8, not published numbers); the sensor
channels are also checked against an independent first-principles time-domain computation with exact
rotation matrices.
"""

import numpy as np
import pytest

from estimator.constants import G
from estimator.kinematics import (
    SENSOR_CHANNELS,
    lateral_specific_force,
    longitudinal_specific_force,
    point_acceleration,
    point_displacement,
    point_velocity,
    relative_vertical_motion,
    relative_vertical_velocity,
    sensor_channels,
    vertical_acceleration,
    wave_elevation_at_point,
)
from tests.check_values import BOW_RELATIVE_MOTION, POINT_MOTION


def _polar(a, ph):
    return a * np.exp(1j * ph)


# the example of tests/check_values.py (kinematics): omega_e = 0.6 rad/s, motions per metre of wave amplitude
RAO_66 = np.array(
    [0.0, _polar(0.3, 0.5), _polar(0.5, -0.3), _polar(0.03, 1.0), _polar(0.015, 1.4), _polar(0.005, -0.2)]
)
WE_66 = 0.6


def test_point_motion_check_values_section_6_6():
    # derived, not published (POINT_MOTION.source): point (90, -10, 15)
    cv = POINT_MOTION.value
    s = point_displacement(RAO_66, 90.0, -10.0, 15.0)
    assert abs(s[2]) == pytest.approx(cv["heave_abs"], abs=5e-5)
    assert np.degrees(np.angle(s[2])) == pytest.approx(cv["heave_phase_deg"], abs=0.01)
    assert abs(s[1]) == pytest.approx(cv["sway_abs"], abs=5e-5)
    az = vertical_acceleration(RAO_66, WE_66, 90.0, -10.0)
    assert abs(az) == pytest.approx(cv["vertical_acc_abs"], abs=5e-5)
    acc = point_acceleration(RAO_66, WE_66, 90.0, -10.0, 15.0)
    assert abs(acc[1]) == pytest.approx(cv["lateral_acc_abs"], rel=1e-3)
    ay = lateral_specific_force(RAO_66, WE_66, 90.0, -10.0, 15.0)
    assert abs(ay) == pytest.approx(cv["lateral_specific_force_abs"], abs=5e-5)
    assert np.degrees(np.angle(ay)) == pytest.approx(cv["lateral_specific_force_phase_deg"], abs=0.01)


def test_relative_motion_at_bow_check_values_section_6_6():
    # derived, not published (BOW_RELATIVE_MOTION.source): bow (95, 0), head seas, omega 0.45, omega_e 0.6
    cv = BOW_RELATIVE_MOTION.value
    zeta = wave_elevation_at_point(0.45, np.pi, 95.0, 0.0)
    assert np.degrees(np.angle(zeta)) == pytest.approx(cv["zeta_phase_deg"], abs=0.01)
    assert abs(point_displacement(RAO_66, 95.0, 0.0, 0.0)[2]) == pytest.approx(cv["heave_abs"], abs=5e-5)
    r = relative_vertical_motion(RAO_66, 0.45, np.pi, 95.0, 0.0)
    assert abs(r) == pytest.approx(cv["relative_abs"], rel=1e-4)
    rdot = relative_vertical_velocity(RAO_66, 0.45, np.pi, WE_66, 95.0, 0.0)
    assert abs(rdot) == pytest.approx(cv["relative_velocity_abs"], abs=5e-5)


def test_elementary_rotations_follow_ittc_signs():
    # ITTC axes (x fwd, y port, z up): roll + starboard down, pitch + bow down, yaw + bow to port.
    roll = np.array([0, 0, 0, 0.1, 0, 0], dtype=complex)
    pitch = np.array([0, 0, 0, 0, 0.1, 0], dtype=complex)
    yaw = np.array([0, 0, 0, 0, 0, 0.1], dtype=complex)
    assert point_displacement(roll, 0.0, -10.0, 0.0)[2].real == pytest.approx(-1.0)  # starboard side down
    assert point_displacement(roll, 0.0, 0.0, 20.0)[1].real == pytest.approx(-2.0)  # mast head to starboard
    assert point_displacement(pitch, 100.0, 0.0, 0.0)[2].real == pytest.approx(-10.0)  # bow down
    assert point_displacement(pitch, 0.0, 0.0, 20.0)[0].real == pytest.approx(2.0)  # top goes forward
    assert point_displacement(yaw, 100.0, 0.0, 0.0)[1].real == pytest.approx(10.0)  # bow to port


def test_velocity_and_acceleration_are_time_derivatives():
    # x(t) = Re[H e^{i w t}] -> dx/dt = Re[i w H e^{i w t}], d2x/dt2 = Re[-w^2 H e^{i w t}] (analytical)
    s = point_displacement(RAO_66, 40.0, 5.0, 10.0)
    np.testing.assert_allclose(point_velocity(RAO_66, WE_66, 40.0, 5.0, 10.0), 1j * WE_66 * s)
    np.testing.assert_allclose(point_acceleration(RAO_66, WE_66, 40.0, 5.0, 10.0), -(WE_66**2) * s)
    # signed omega_e: the acceleration is even in omega_e, the velocity odd
    np.testing.assert_allclose(point_acceleration(RAO_66, -WE_66, 40.0, 5.0, 10.0), -(WE_66**2) * s)
    np.testing.assert_allclose(point_velocity(RAO_66, -WE_66, 40.0, 5.0, 10.0), -1j * WE_66 * s)


def test_pure_roll_lateral_force_is_g_plus_omega2_z():
    # analytical (Faltinsen 1990 §2.2): for pure roll about the axis a_y,tot = (g + w_e^2 z) eta4
    roll = np.array([0, 0, 0, 0.05, 0, 0], dtype=complex)
    np.testing.assert_allclose(lateral_specific_force(roll, 0.5, 0.0, 0.0, 12.0), (G + 0.25 * 12.0) * 0.05)
    # longitudinal analogue with bow-down pitch: -w^2 z eta5 - g eta5 (analytical, same formula)
    pitch = np.array([0, 0, 0, 0, 0.02, 0], dtype=complex)
    np.testing.assert_allclose(
        longitudinal_specific_force(pitch, 0.5, 0.0, 0.0, 12.0), (-0.25 * 12.0 - G) * 0.02
    )


def test_vectorised_over_frequency_grids():
    rng = np.random.default_rng(0)
    r = rng.normal(size=(6, 4, 5)) + 1j * rng.normal(size=(6, 4, 5))
    we = np.linspace(0.2, 1.0, 5)
    assert point_displacement(r, 1.0, 2.0, 3.0).shape == (3, 4, 5)
    assert lateral_specific_force(r, we, 1.0, 2.0, 3.0).shape == (4, 5)
    assert sensor_channels(r, (1.0, 2.0, 3.0), we).shape == (6, 4, 5)
    with pytest.raises(ValueError, match=r"rao6 must have the six motions .* got shape \(5, 4, 5\)"):
        point_displacement(r[:5], 0.0, 0.0, 0.0)


def test_sensor_channel_signs():
    # docs/conventions.md: sensor pitch + bow UP is minus ITTC pitch; heave + up at the sensor;
    # accelerations x fwd, y starboard, z down.
    pitch = np.array([0, 0, 0, 0, 0.01, 0], dtype=complex)  # ITTC: bow down
    ch = sensor_channels(pitch, (50.0, 0.0, 0.0), 0.7)
    assert ch[1].real == pytest.approx(-0.01)  # sensor reads bow down as negative pitch
    assert ch[2].real == pytest.approx(-0.5)  # sensor 50 m forward goes down
    assert ch[5].real == pytest.approx(0.49 * -0.5)  # moving down with -w^2 s_z < 0 -> z-down acc < 0
    roll = np.array([0, 0, 0, 0.02, 0, 0], dtype=complex)  # starboard down
    ch = sensor_channels(roll, (0.0, 0.0, 0.0), 0.7, channels=("roll", "acc_y"))
    assert ch[0].real == pytest.approx(0.02)
    # gravity leakage: heeled starboard down, the specific force (opposite to gravity) has a
    # component g*phi toward the raised port side; in FRD axes (y starboard) that reads -g*phi.
    assert ch[1].real == pytest.approx(-G * 0.02)
    with pytest.raises(ValueError, match=r"unknown sensor channel\(s\) \['yaw_rate'\]"):
        sensor_channels(roll, (0, 0, 0), 0.7, channels=("yaw_rate",))


def _rot(phi, theta, psi):
    """Exact rotation body -> earth, ITTC axes, R = Rz(psi) Ry(theta) Rx(phi) (right-handed)."""
    cx, sx = np.cos(phi), np.sin(phi)
    cy, sy = np.cos(theta), np.sin(theta)
    cz, sz = np.cos(psi), np.sin(psi)
    rx = np.array([[1, 0, 0], [0, cx, -sx], [0, sx, cx]])
    ry = np.array([[cy, 0, sy], [0, 1, 0], [-sy, 0, cy]])
    rz = np.array([[cz, -sz, 0], [sz, cz, 0], [0, 0, 1]])
    return rz @ ry @ rx


def test_sensor_channels_match_exact_rigid_body_time_simulation():
    # Independent first-principles check (analytical rigid-body mechanics): move the ship with
    # small harmonic motions, place the sensor with exact rotation matrices, differentiate its
    # earth position twice, form the specific force a - g_vec, rotate it into body axes, remove
    # the static g, convert to FRD and extract the complex amplitude at omega_e.
    eps = 1e-4  # small wave amplitude so that the linearisation error is O(eps)
    we = 0.8
    xyz = np.array([60.0, -8.0, 18.0])
    n = 4000
    t = np.linspace(0.0, 2 * np.pi / we * 4, n, endpoint=False)
    eta = np.real(eps * RAO_66[:, None] * np.exp(1j * we * t)[None, :])
    pos = np.empty((3, n))
    attitude = []
    for i in range(n):
        rm = _rot(eta[3, i], eta[4, i], eta[5, i])
        attitude.append(rm)
        pos[:, i] = eta[:3, i] + rm @ xyz
    dt = t[1] - t[0]
    acc = (np.roll(pos, -1, axis=1) - 2 * pos + np.roll(pos, 1, axis=1)) / dt**2  # periodic record
    f_body = np.empty((3, n))
    for i in range(n):
        f_earth = acc[:, i] + np.array([0.0, 0.0, G])  # specific force a - g_vec, z up
        f_body[:, i] = attitude[i].T @ f_earth
    f_body[2] -= G  # static gravity removed
    frd = np.vstack([f_body[0], -f_body[1], -f_body[2]])
    heave = pos[2] - xyz[2]
    pitch_up = -eta[4]

    def amp(x):
        return 2.0 * np.mean(x * np.exp(-1j * we * t)) / eps

    expected = sensor_channels(RAO_66, xyz, we)
    got = np.array([amp(eta[3]), amp(pitch_up), amp(heave), amp(frd[0]), amp(frd[1]), amp(frd[2])])
    assert SENSOR_CHANNELS == ("roll", "pitch", "heave", "acc_x", "acc_y", "acc_z")
    np.testing.assert_allclose(got, expected, rtol=2e-3, atol=1e-5)


@pytest.mark.parametrize(
    ("beta_deg", "channel", "phase_deg"),
    [
        (180.0, "pitch", 90.0),  # head seas: bow up a quarter period before the crest at midship
        (0.0, "pitch", -90.0),  # following seas: bow up a quarter period after it
        (90.0, "roll", -90.0),  # waves from starboard: starboard down a quarter period after the crest
        (270.0, "roll", 90.0),  # waves from port: starboard down a quarter period before
    ],
)
def test_long_wave_contouring_gives_head_following_beam_signs(beta_deg, channel, phase_deg):
    # Long-wave limit (Newman 1977, Marine Hydrodynamics §6.17): the ship follows the surface,
    # s_z(x, y) = zeta(x, y) = exp(-ik(x cos b + y sin b)) to first order in k, so eta3 = 1,
    # eta5 = ik cos b, eta4 = -ik sin b (ITTC). A sign slip in heading or pitch flips these phases.
    omega = 0.1
    k = omega**2 / G
    b = np.deg2rad(beta_deg)
    rao = np.array([0, 0, 1.0, -1j * k * np.sin(b), 1j * k * np.cos(b), 0], dtype=complex)
    # the contouring ship has no relative motion to first order in kL
    r = relative_vertical_motion(rao, omega, b, 90.0, 12.0)
    assert abs(r) < (k * 91.0) ** 2
    ch = sensor_channels(rao, (0.0, 0.0, 0.0), omega, channels=(channel,))[0]
    assert abs(ch) == pytest.approx(k, rel=1e-12)
    assert np.degrees(np.angle(ch)) == pytest.approx(phase_deg, abs=1e-9)
