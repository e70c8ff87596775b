"""Shared helpers for the advisor tests: a symmetric ship from main particulars, limit sets, seas.

Imported by tests/advisor/conftest.py (fixtures) and by the test modules (helpers).
"""

import math

import numpy as np
import pytest

from advisor.limits import parse_limit_set
from estimator.constants import KNOT
from estimator.hull import estimate_rao_table
from estimator.spectra import directional_spectrum, jonswap, spreading_cos2s

DEG = math.pi / 180.0
LPP = 200.0
T_ROLL = 18.6
VESSEL_POINTS = {
    "bridge": (-80.0, 0.0, 25.0),
    "fp": (100.0, 0.0, 10.0),
    "forefoot": (80.0, 0.0, -9.0),
    "bow_deck": (95.0, 0.0, 9.0),
    "wing_stbd": (-80.0, -14.0, 25.0),
}


def limit_mapping():
    """Eight criteria at several points (values in the NORDFORSK 1987 range, §3.1 of the references)."""
    return {
        "schema_version": 1,
        "name": "test limits",
        "points": [{"name": "top_tier", "x_m": 60.0, "y_m": -12.0, "z_m": 30.0}],
        "limits": [
            {
                "criterion": "roll",
                "statistic": "rms",
                "value": 6.0,
                "unit": "deg",
                "source": "NORDFORSK 1987",
            },
            {"criterion": "pitch", "statistic": "significant", "value": 6.0, "unit": "deg", "source": "test"},
            {
                "criterion": "vertical_acceleration",
                "statistic": "rms",
                "value": 0.1772,
                "unit": "g",
                "point": "fp",
                "source": "NORDFORSK 1987 at L = 200 m",
            },
            {
                "criterion": "lateral_acceleration",
                "statistic": "rms",
                "value": 0.12,
                "unit": "g",
                "point": "bridge",
                "source": "NORDFORSK 1987",
            },
            {
                "criterion": "lateral_acceleration",
                "statistic": "mpm",
                "value": 0.5,
                "unit": "g",
                "point": "top_tier",
                "exposure_h": 3.0,
                "source": "test",
            },
            {
                "criterion": "longitudinal_acceleration",
                "statistic": "mpm",
                "value": 3.0,
                "unit": "m/s2",
                "point": "top_tier",
                "exposure_h": 3.0,
                "source": "test",
            },
            {
                "criterion": "slamming",
                "statistic": "probability",
                "value": 0.02,
                "unit": "probability",
                "point": "forefoot",
                "source": "NORDFORSK 1987 at L = 200 m",
            },
            {
                "criterion": "deck_wetness",
                "statistic": "rate_per_hour",
                "value": 30.0,
                "unit": "per_hour",
                "point": "bow_deck",
                "source": "test",
            },
            {
                "criterion": "motion_sickness",
                "statistic": "msdv",
                "value": 30.0,
                "unit": "m/s^1.5",
                "point": "bridge",
                "exposure_h": 2.0,
                "source": "ISO 2631-1 Annex D (10 % vomiting, Km = 1/3)",
            },
        ],
    }


@pytest.fixture(scope="session")
def limit_set():
    return parse_limit_set(limit_mapping(), "test-limits.toml")


@pytest.fixture(scope="session")
def rao_table():
    # symmetric ship from main particulars (JMO heave/pitch, 1-DOF roll): headings 0..180° mirrored
    return estimate_rao_table(
        LPP,
        32.2,
        11.0,
        0.65,
        1.5,
        speeds=np.arange(0.0, 25.0, 4.0) * KNOT,
        headings=np.arange(0.0, 181.0, 15.0) * DEG,
        omegas=np.linspace(0.15, 2.2, 42),
        t_roll=T_ROLL,
        name="test",
    )


OMEGA = np.linspace(0.2, 2.0, 37)
THETA = np.arange(36) * 10.0 * DEG


def sea(hs=5.0, tp=10.0, theta_mean=0.0, s=10.0):
    return directional_spectrum(
        OMEGA, THETA, jonswap(OMEGA, hs, tp), lambda th: spreading_cos2s(th, theta_mean, s)
    )
