"""Tests for estimator.sensorframe: acceleration frames, mounting, and the frame check on data.

Independent path: the sensor's motion is computed exactly with rotation matrices (no small-angle
formula): a sensor at height z above a roll axis on the waterline, roll phi(t) a sum of sinusoids;
position p = (0, -z sin phi, z cos phi) in earth axes (x fwd, y port, z up); the body-frame specific
force is R(phi)^T (a - g_vec) (definition of specific force; Faltinsen 1990 §2.2 for the kinematics),
the earth-frame acceleration is a itself. Sensor axes: y starboard (docs/voyage-log.md).
"""

import numpy as np
import pytest
from sensor_motion import Z
from sensor_motion import roll_record as _record

from estimator.constants import G
from estimator.sensorframe import acceleration_frame_check, earth_to_body, rotate_mounting


def test_earth_to_body_matches_exact_rotation_to_first_order():
    t, phi, body, earth = _record()
    _, converted = earth_to_body(0.0, earth, phi, 0.0)
    # first order in phi (|phi| <= ~0.1 rad): error O(phi^2 g) against the signal O(g phi)
    err = np.max(np.abs(converted - body)) / np.max(np.abs(body))
    assert err < 0.05


def test_check_tells_body_from_earth_frame():
    t, phi, body, earth = _record()
    rb = acceleration_frame_check(t, phi, body, Z)
    re = acceleration_frame_check(t, phi, earth, Z)
    assert rb.frame == "body" and re.frame == "earth"
    w2z = rb.omega**2 * Z
    # analytic small-angle ratios (module docstring): g + w^2 z and w^2 z
    assert rb.ratio == pytest.approx(G + w2z, rel=0.03)
    assert re.ratio == pytest.approx(w2z, rel=0.05)
    assert 0.30 <= rb.omega <= 0.40


def test_check_gives_no_verdict_on_noise_and_none_on_short_records():
    t, phi, body, _ = _record()
    noise = np.random.default_rng(9).normal(size=t.size)
    assert acceleration_frame_check(t, phi, noise, Z).frame is None  # incoherent: no verdict
    assert acceleration_frame_check(t[:20], phi[:20], body[:20], Z) is None


def test_mounting_across_the_ship_relabels_axes():
    # sensor x to starboard (90 deg clockwise from the bow), its y (to its right) pointing aft:
    # ship roll phi (+ stbd down) is the sensor's pitch -phi (nose down), ship pitch theta (+ bow up)
    # the sensor's roll +theta; ship accelerations (fwd a_f, stbd a_s) read x_s = a_s, y_s = -a_f
    phi, theta, a_f, a_s = 0.1, -0.04, 0.3, -0.7
    assert np.allclose(rotate_mounting(theta, -phi, np.pi / 2), (phi, theta))
    assert np.allclose(rotate_mounting(a_s, -a_f, np.pi / 2), (a_f, a_s))
    # facing aft: every horizontal component changes sign
    assert np.allclose(rotate_mounting(-phi, -theta, np.pi), (phi, theta))
    assert np.allclose(rotate_mounting(phi, theta, 0.0), (phi, theta))
