"""TEST FIXTURE helpers for the administration tests (audit, users, stored limits, admin page, commands).

Not product data: the user names and passwords below are invented for the tests.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from onboard.core.store import make_engine

ROOT = Path(__file__).resolve().parents[2]
VESSEL_FILE = ROOT / "config" / "demo_vessel.toml"
LIMITS_DIR = ROOT / "config" / "limits"

#: A cheaper scrypt than the service's (N = 2^10 instead of 2^15) so that the many logins of the tests
#: stay fast; the service's method is checked on its own in test_auth.py.
FAST_HASH = "scrypt:1024:8:1"


def engine_fixture(request, tmp_path):
    """SQLite file or PostgreSQL schema engine, by ``request.param``."""
    if request.param == "sqlite":
        e = make_engine(f"sqlite:///{tmp_path / 'onboard.db'}")
        return e
    return request.getfixturevalue("pg_engine")


BACKENDS = ["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)]
