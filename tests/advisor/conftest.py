"""Fixtures of the advisor tests (helpers live in advisor_fixtures.py)."""

from advisor_fixtures import limit_set, rao_table  # noqa: F401
