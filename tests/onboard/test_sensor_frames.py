"""The motion sensor's acceleration frame and mounting in the engine (vessel file -> record).

Data are the exact rigid-body path of tests/estimator/test_sensorframe.py (rotation matrices, no
small-angle formula); the engine must flag a frame that the data contradict and hand the estimator the
body-frame specific force it models (estimator.kinematics.sensor_channels).
"""

import importlib.util
from pathlib import Path

import numpy as np
import pytest

_spec = importlib.util.spec_from_file_location(
    "sensor_motion", Path(__file__).parents[1] / "estimator" / "sensor_motion.py"
)
_motion = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_motion)
Z, _record = _motion.Z, _motion.roll_record


def _frame(acc_y, phi, t):
    import pandas as pd

    return pd.DataFrame(
        {
            "time_utc": pd.Timestamp("2026-01-01", tz="UTC") + pd.to_timedelta(t, unit="s"),
            "roll_deg": np.degrees(phi),
            "pitch_deg": 0.2 * np.degrees(phi),
            "heave_m": 0.5 * phi,
            "acc_x_ms2": 0.1 * acc_y,
            "acc_y_ms2": acc_y,
            "heading_deg": 90.0,
            "stw_kn": 10.0,
        }
    )


@pytest.fixture(scope="module")
def demo_engine():
    from onboard.core.engine import Engine
    from onboard.formats.vessel import load_vessel

    vessel = load_vessel(Path(__file__).parents[2] / "config" / "demo_vessel.toml")
    return Engine(vessel, vessel.conditions[0].name)


@pytest.mark.parametrize("configured", ["body", "earth"])
def test_engine_flags_a_frame_mismatch_and_leaves_the_accelerations_out(demo_engine, configured):
    import dataclasses

    eng = demo_engine
    sensor = dataclasses.replace(eng.vessel.motion_sensor, z=Z, acceleration_frame=configured)
    eng.vessel = dataclasses.replace(eng.vessel, motion_sensor=sensor)
    t, phi, body, earth = _record()
    right, wrong = (body, earth) if configured == "body" else (earth, body)
    rec = eng.frame_to_record(_frame(wrong, phi, t))
    assert "acc_y" not in rec.channels and "acc_x" not in rec.channels
    assert len(eng.frame_notes) == 1 and f"acceleration_frame = '{configured}'" in eng.frame_notes[0]
    rec = eng.frame_to_record(_frame(right, phi, t))
    assert eng.frame_notes == () and "acc_y" in rec.channels
    # what the estimator gets is the body-frame specific force in both cases (exact path above)
    assert np.max(np.abs(rec.channels["acc_y"] - body)) < 0.05 * np.max(np.abs(body))


def test_engine_turns_a_sensor_mounted_facing_aft(demo_engine):
    # a sensor facing aft (mounting_yaw_deg = 180) reads every horizontal component with the opposite
    # sign (axes geometry); the engine must give the estimator the same record as a forward-facing one
    import dataclasses

    eng = demo_engine
    t, phi, body, _ = _record()
    fwd = dataclasses.replace(eng.vessel.motion_sensor, z=Z, acceleration_frame="body", mounting_yaw=0.0)
    eng.vessel = dataclasses.replace(eng.vessel, motion_sensor=fwd)
    ref = eng.frame_to_record(_frame(body, phi, t))
    aft = dataclasses.replace(fwd, mounting_yaw=np.pi)
    eng.vessel = dataclasses.replace(eng.vessel, motion_sensor=aft)
    frame = _frame(body, phi, t)
    for col in ("roll_deg", "pitch_deg", "acc_x_ms2", "acc_y_ms2"):
        frame[col] = -frame[col]
    rec = eng.frame_to_record(frame)
    for ch in ("roll", "pitch", "acc_x", "acc_y", "heave"):
        np.testing.assert_allclose(rec.channels[ch], ref.channels[ch], atol=1e-12)


def test_engine_turns_an_obliquely_mounted_sensor(demo_engine):
    # a sensor whose x axis points 30 deg clockwise from the bow reads the ship-axis vector v as
    # R(-30 deg)·v (plane rotation, estimator.sensorframe module docstring): the engine must turn it back
    import dataclasses

    eng = demo_engine
    t, phi, body, _ = _record()
    fwd = dataclasses.replace(eng.vessel.motion_sensor, z=Z, acceleration_frame="body", mounting_yaw=0.0)
    eng.vessel = dataclasses.replace(eng.vessel, motion_sensor=fwd)
    ref_frame = _frame(body, phi, t)
    ref = eng.frame_to_record(ref_frame)
    mu = np.radians(30.0)
    eng.vessel = dataclasses.replace(eng.vessel, motion_sensor=dataclasses.replace(fwd, mounting_yaw=mu))
    frame = ref_frame.copy()
    c, s = np.cos(mu), np.sin(mu)
    for a, b in (("roll_deg", "pitch_deg"), ("acc_x_ms2", "acc_y_ms2")):
        x, y = ref_frame[a].to_numpy(float), ref_frame[b].to_numpy(float)
        frame[a], frame[b] = c * x + s * y, -s * x + c * y  # R(-mu)
    rec = eng.frame_to_record(frame)
    for ch in ("roll", "pitch", "acc_x", "acc_y", "heave"):
        np.testing.assert_allclose(rec.channels[ch], ref.channels[ch], atol=1e-9)
