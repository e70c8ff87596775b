"""Tests for onboard.admin.audit: hash chain, append-only guards (ORM and triggers), verification, export.

Sources of the checks: SHA-256 from Python's hashlib (FIPS 180-4 implementation) recomputed by hand in
the test; append-only behaviour against the SQLite and PostgreSQL trigger documentation (RAISE(ABORT),
RAISE EXCEPTION); CSV read back with Python's csv module (RFC 4180).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import threading
from datetime import UTC, datetime

import pytest
import sqlalchemy as sa
from admin_fixtures import BACKENDS, engine_fixture
from sqlalchemy.orm import Session

from onboard.admin import audit
from onboard.admin.audit import AuditEntry, AuditError

NOW = datetime(2026, 12, 1, 3, 0, 0, 123456, tzinfo=UTC)


@pytest.fixture(params=BACKENDS)
def engine(request, tmp_path):
    e = engine_fixture(request, tmp_path)
    audit.migrate_admin(e)
    yield e
    if request.param == "sqlite":
        e.dispose()


def add(engine, n=1, **kw):
    out = []
    for i in range(n):
        args = dict(
            actor="officer1",
            action="limit.set",
            target=f"condition 'x' limit k{i}",
            old={"value": 6.0},
            new={"value": 5.0 + i},
            reason="tighter for high stow",
            client="10.0.0.5",
        )
        args.update(kw)
        out.append(audit.record(engine, **args))
    return out


def test_migrations_versioned_and_idempotent(engine):
    assert audit.admin_schema_version(engine) == len(audit.ADMIN_MIGRATIONS)
    assert audit.migrate_admin(engine) == len(audit.ADMIN_MIGRATIONS)  # second start applies nothing
    insp = sa.inspect(engine)
    # drift check: every administration table has exactly its model's columns
    for name, table in audit.AdminBase.metadata.tables.items():
        assert {c["name"] for c in insp.get_columns(name)} == {c.name for c in table.columns}, name


def test_first_entry_hash_is_sha256_of_genesis_plus_canonical_json(engine):
    (e,) = add(engine, now=NOW)
    assert e["seq"] == 1 and e["prev_hash"] == "0" * 64
    # Recomputed here by hand (hashlib = FIPS 180-4 SHA-256) from the documented canonical form.
    body = {
        "seq": 1,
        "time_utc": "2026-12-01T03:00:00.123456Z",
        "actor": "officer1",
        "action": "limit.set",
        "target": "condition 'x' limit k0",
        "old_value": '{"value":6.0}',
        "new_value": '{"value":5.0}',
        "reason": "tighter for high stow",
        "client": "10.0.0.5",
        "prev_hash": "0" * 64,
    }
    text = json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    assert e["hash"] == hashlib.sha256(("0" * 64 + text).encode()).hexdigest()
    assert e["old"] == {"value": 6.0} and e["new"] == {"value": 5.0}


def test_chain_links_and_verifies(engine):
    rows = add(engine, 4)
    assert [r["seq"] for r in rows] == [1, 2, 3, 4]
    for a, b in zip(rows, rows[1:], strict=False):
        assert b["prev_hash"] == a["hash"]
    rep = audit.verify_chain(engine)
    assert rep.ok and rep.count == 4 and rep.head_seq == 4 and rep.head_hash == rows[-1]["hash"]
    assert "intact: 4 entries" in rep.text()
    assert audit.verify_chain(engine, expect_head=(2, rows[1]["hash"])).ok


def test_empty_chain_verifies(engine):
    rep = audit.verify_chain(engine)
    assert rep.ok and rep.count == 0 and rep.head_hash == audit.GENESIS_HASH
    assert rep.text().startswith("audit trail intact: 0 entries")


def test_orm_cannot_change_or_delete_entries(engine):
    add(engine, 2)
    with Session(engine) as s:
        e = s.get(AuditEntry, 1)
        e.reason = "rewritten"
        with pytest.raises(AuditError, match="cannot be changed"):
            s.flush()
        s.rollback()
        s.delete(s.get(AuditEntry, 2))
        with pytest.raises(AuditError, match="cannot be deleted"):
            s.flush()
        s.rollback()
        with pytest.raises(AuditError, match="append-only"):
            s.execute(sa.update(AuditEntry).where(AuditEntry.seq == 1).values(reason="x"))
        s.rollback()
        with pytest.raises(AuditError, match="append-only"):
            s.execute(sa.delete(AuditEntry))
    assert audit.verify_chain(engine).ok


def test_triggers_refuse_raw_update_delete(engine):
    add(engine, 2)
    for stmt in ("UPDATE audit_log SET reason = 'x' WHERE seq = 1", "DELETE FROM audit_log WHERE seq = 2"):
        with pytest.raises(sa.exc.DatabaseError, match="append-only"):
            with engine.begin() as c:
                c.execute(sa.text(stmt))
    if engine.dialect.name == "postgresql":
        with pytest.raises(sa.exc.DatabaseError, match="append-only"):
            with engine.begin() as c:
                c.execute(sa.text("TRUNCATE audit_log"))
    assert audit.verify_chain(engine).ok and audit.verify_chain(engine).count == 2


def _bypass(engine, stmt):
    """Change rows behind the application's back: drop/disable the trigger, run raw SQL."""
    with engine.begin() as c:
        if engine.dialect.name == "sqlite":
            c.execute(sa.text("DROP TRIGGER audit_log_no_update"))
            c.execute(sa.text("DROP TRIGGER audit_log_no_delete"))
        else:
            c.execute(sa.text("SET LOCAL session_replication_role = replica"))  # triggers do not fire
        c.execute(sa.text(stmt))


def test_verify_finds_row_changed_behind_the_back(engine):
    add(engine, 5)
    _bypass(engine, "UPDATE audit_log SET new_value = replace(new_value, '7.0', '9.0') WHERE seq = 3")
    rep = audit.verify_chain(engine)
    assert not rep.ok and rep.first_broken_seq == 3 and rep.count == 2
    assert "content changed" in rep.problem
    assert rep.text().startswith("audit trail BROKEN at entry 3")


def test_verify_finds_rehashed_row_by_the_next_link(engine):
    rows = add(engine, 4)
    # Someone changes entry 2 AND recomputes its hash: entry 3 no longer points at it.
    row = dict(rows[1])
    row["reason"] = "innocent"
    row["old_value"], row["new_value"] = (
        json.dumps(row["old"], separators=(",", ":")),
        json.dumps(row["new"], separators=(",", ":")),
    )
    row["time_utc"] = datetime.fromisoformat(row["time_utc"].replace("Z", "+00:00"))
    h = audit.entry_hash(row)
    _bypass(engine, f"UPDATE audit_log SET reason = 'innocent', hash = '{h}' WHERE seq = 2")
    rep = audit.verify_chain(engine)
    assert not rep.ok and rep.first_broken_seq == 3 and "does not match the hash of entry 2" in rep.problem


def test_verify_finds_deleted_rows(engine):
    rows = add(engine, 5)
    _bypass(engine, "DELETE FROM audit_log WHERE seq = 2")
    rep = audit.verify_chain(engine)
    assert not rep.ok and rep.first_broken_seq == 3 and "2..2 are missing" in rep.problem
    assert rows[0]["seq"] == 1


def test_verify_finds_truncated_end_against_noted_head(engine):
    rows = add(engine, 4)
    _bypass(engine, "DELETE FROM audit_log WHERE seq = 4")
    assert audit.verify_chain(engine).ok  # the chain alone cannot see a cut at the end (documented)
    rep = audit.verify_chain(engine, expect_head=(4, rows[3]["hash"]))
    assert not rep.ok and rep.first_broken_seq == 4 and "is gone" in rep.problem
    rep = audit.verify_chain(engine, expect_head=(2, "f" * 64))
    assert not rep.ok and "was rebuilt" in rep.problem


def test_concurrent_appends_never_fork_the_chain(engine):
    errors = []

    def worker(k):
        try:
            add(engine, 5, actor=f"user{k}")
        except Exception as exc:  # collected and asserted below
            errors.append(exc)

    threads = [threading.Thread(target=worker, args=(k,)) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    rep = audit.verify_chain(engine)
    assert rep.ok and rep.count == 20


def test_export_csv_and_json_round_trip(engine):
    add(engine, 3, reason='quoted "why", with comma')
    rows = audit.entries(engine)
    back = list(csv.DictReader(io.StringIO(audit.export_csv(rows))))  # RFC 4180 reader
    assert [int(r["seq"]) for r in back] == [1, 2, 3]
    assert back[0]["reason"] == 'quoted "why", with comma'
    assert json.loads(back[2]["new"]) == {"value": 7.0}
    assert back[2]["hash"] == rows[2]["hash"]
    assert json.loads(audit.export_json(rows)) == rows
    assert [r["seq"] for r in audit.entries(engine, newest_first=True, limit=2)] == [3, 2]


def test_append_refuses_missing_fields(engine):
    with pytest.raises(AuditError, match="needs actor, action and target"):
        audit.record(engine, actor="", action="x", target="y")
    with pytest.raises(ValueError, match="Out of range float values are not JSON compliant"):
        audit.record(engine, actor="a", action="x", target="y", new={"value": float("nan")})
