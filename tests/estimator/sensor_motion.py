"""Exact rigid-body motion of a roll-only sensor (rotation matrices, no small-angle formula).

A sensor at height Z above a roll axis on the waterline, roll phi(t) a narrow-band sum of sinusoids;
position p = (0, -z sin phi, z cos phi) in earth axes (x fwd, y port, z up); the body-frame specific
force is R(phi)^T (a - g_vec) (definition of specific force; Faltinsen 1990 §2.2 for the kinematics),
the earth-frame acceleration is a itself. Sensor axes: y starboard (docs/voyage-log.md). Shared by
tests/estimator/test_sensorframe.py and tests/onboard/test_sensor_frames.py.
"""

import numpy as np

from estimator.constants import G

Z = 14.0  # sensor height above the roll axis [m]


def roll_record(amplitude=0.03, seed=3, n=6000, dt=0.5):
    rng = np.random.default_rng(seed)
    t = np.arange(n) * dt
    w = np.linspace(0.30, 0.40, 25)  # narrow band around a roll period of about 18 s
    a = amplitude / np.sqrt(w.size) * np.ones_like(w)
    ph = rng.uniform(0, 2 * np.pi, w.size)
    arg = w[None, :] * t[:, None] + ph
    phi = (a * np.sin(arg)).sum(1)
    dphi = (a * w * np.cos(arg)).sum(1)
    ddphi = (-a * w * w * np.sin(arg)).sum(1)
    # exact kinematics of p = (0, -z sin phi, z cos phi)
    ay = -Z * (np.cos(phi) * ddphi - np.sin(phi) * dphi**2)
    az = -Z * (np.sin(phi) * ddphi + np.cos(phi) * dphi**2)
    # body specific force: R^T (a - g_vec), R = rotation about x by phi, g_vec = (0, 0, -g)
    c, s = np.cos(phi), np.sin(phi)
    fy_body = c * ay + s * (az + G)
    acc_y_body = -fy_body  # sensor y to starboard
    acc_y_earth = -ay
    return t, phi, acc_y_body, acc_y_earth
