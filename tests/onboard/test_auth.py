"""Tests for onboard.admin.auth: roles, password hashing, login throttling, session epochs, audit of changes.

Sources: the werkzeug hash format ``method$salt$hash`` and scrypt parameters (werkzeug.security
documentation; RFC 7914 for N, r, p); NIST SP 800-63B §5.1.1.2 minimum length 8 (from memory); the
throttling schedule is the module's own documented rule (2, 4, 8, ... s after 3 free failures, capped).
"""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

import pytest
from admin_fixtures import BACKENDS, FAST_HASH, engine_fixture
from werkzeug.security import check_password_hash

from onboard.admin import audit
from onboard.admin.auth import FREE_FAILURES, MAX_LOCK_S, AuthError, User, Users, lock_seconds, role_allows

T0 = datetime(2026, 12, 1, 3, 0, tzinfo=UTC)
IP = "10.0.0.7"


@pytest.fixture(params=BACKENDS)
def engine(request, tmp_path):
    e = engine_fixture(request, tmp_path)
    audit.migrate_admin(e)
    yield e
    if request.param == "sqlite":
        e.dispose()


@pytest.fixture()
def users(engine):
    u = Users(engine, hash_method=FAST_HASH)
    u.add("chief", "correct horse 1", "admin", actor="cli:root")
    u.add("oow2", "second mate pw", "officer", actor="chief", client="10.0.0.1", reason="new second mate")
    return u


def test_default_hash_is_scrypt_32768_8_1(engine):
    from sqlalchemy.orm import Session

    Users(engine).add("master", "a long passphrase", "admin", actor="cli:root")
    with Session(engine) as s:
        stored = s.query(User).filter_by(username="master").one().password_hash
    # werkzeug format "scrypt:N:r:p$salt$hex" (werkzeug.security docs; RFC 7914 parameters)
    method, salt, digest = stored.split("$")
    assert method == "scrypt:32768:8:1" and len(salt) == 16 and len(digest) == 128
    assert check_password_hash(stored, "a long passphrase") and not check_password_hash(
        stored, "a long passphrasE"
    )
    assert "a long passphrase" not in stored


@pytest.mark.parametrize(
    ("role", "needed", "allowed"),
    [
        ("officer", "officer", True),
        ("officer", "editor", False),
        ("officer", "admin", False),
        ("editor", "officer", True),
        ("editor", "editor", True),
        ("editor", "admin", False),
        ("admin", "admin", True),
        ("admin", "officer", True),
        (None, "officer", False),
        ("viewer", "officer", False),
    ],
)
def test_roles_are_ordered(role, needed, allowed):
    assert role_allows(role, needed) is allowed


def test_role_allows_refuses_unknown_needed_role():
    with pytest.raises(AuthError, match="role 'captain': expected one of officer, editor, admin"):
        role_allows("admin", "captain")


@pytest.mark.parametrize(
    ("name", "password", "role", "match"),
    [
        ("bad name", "long enough", "officer", "user name 'bad name'"),
        ("", "long enough", "officer", "user name ''"),
        ("ok", "short", "officer", "password: 5 characters; allowed: 8 to 256"),
        ("ok", "x" * 257, "officer", "password: 257 characters"),
        ("ok", "long enough", "captain", "role 'captain'"),
        ("chief", "long enough", "officer", "user 'chief' already exists"),
    ],
)
def test_add_refuses_bad_input(users, name, password, role, match):
    with pytest.raises(AuthError, match=match):
        users.add(name, password, role, actor="chief")


def test_login_ok_wrong_and_unknown_give_the_same_answer(users):
    ok = users.authenticate("chief", "correct horse 1", IP, now=T0)
    assert ok.ok and ok.username == "chief" and ok.role == "admin" and ok.epoch == 0
    wrong = users.authenticate("chief", "wrong horse 1", IP, now=T0)
    unknown = users.authenticate("nobody", "wrong horse 1", IP, now=T0)
    assert (
        not wrong.ok and not unknown.ok and wrong.message == unknown.message == "wrong user name or password"
    )


def test_lock_schedule():
    # module rule: FREE_FAILURES free, then 2, 4, 8, ... s, never more than MAX_LOCK_S
    assert [lock_seconds(n) for n in range(1, 9)] == [0, 0, 0, 2, 4, 8, 16, 32]
    assert lock_seconds(40) == MAX_LOCK_S == 900


def test_throttling_per_user_and_client(users):
    t = T0
    for _ in range(FREE_FAILURES):
        r = users.authenticate("chief", "guess", IP, now=t)
        assert not r.ok and r.retry_after_s == 0
    r = users.authenticate("chief", "guess", IP, now=t)
    assert r.retry_after_s == 2 and "refused for 2 s" in r.message
    # while locked even the right password is not looked at
    r = users.authenticate("chief", "correct horse 1", IP, now=t + timedelta(seconds=1))
    assert not r.ok and "too many failed logins; try again in 1 s" == r.message
    # another client address is not locked
    assert users.authenticate("chief", "correct horse 1", "10.0.0.8", now=t + timedelta(seconds=1)).ok
    # the lock doubles with each further failure
    r = users.authenticate("chief", "guess", IP, now=t + timedelta(seconds=2.5))
    assert r.retry_after_s == 4
    assert not users.authenticate("chief", "correct horse 1", IP, now=t + timedelta(seconds=6)).ok
    # after the lock a right password works and clears the count
    assert users.authenticate("chief", "correct horse 1", IP, now=t + timedelta(seconds=7)).ok
    assert users.authenticate("chief", "guess", IP, now=t + timedelta(seconds=8)).retry_after_s == 0


def test_unknown_names_are_throttled_too(users):
    for _ in range(FREE_FAILURES):
        users.authenticate("ghost", "guess", IP, now=T0)
    assert users.authenticate("ghost", "guess", IP, now=T0).retry_after_s == 2


def test_disabled_user_cannot_log_in_and_sessions_end(users):
    assert users.session_valid("oow2", 0) is not None
    users.set_disabled("oow2", True, actor="chief", client=IP)
    assert not users.authenticate("oow2", "second mate pw", IP, now=T0).ok
    assert users.session_valid("oow2", 0) is None and users.session_valid("oow2", 1) is None
    users.set_disabled("oow2", False, actor="chief")
    r = users.authenticate("oow2", "second mate pw", IP, now=T0)
    assert r.ok and r.epoch == 2 and users.session_valid("oow2", 2) is not None


def test_password_change_ends_old_sessions(users):
    users.set_password("oow2", "new second pw", actor="oow2", client=IP)
    assert users.session_valid("oow2", 0) is None
    assert not users.authenticate("oow2", "second mate pw", IP, now=T0).ok
    assert users.authenticate("oow2", "new second pw", IP, now=T0).ok
    with pytest.raises(AuthError, match="no user 'nobody'"):
        users.set_password("nobody", "new second pw", actor="chief")
    with pytest.raises(AuthError, match="password: 3 characters"):
        users.set_password("oow2", "abc", actor="chief")


def test_role_change_and_list(users):
    users.set_role("oow2", "editor", actor="chief", reason="also edits limits")
    assert [(u["username"], u["role"]) for u in users.list()] == [("chief", "admin"), ("oow2", "editor")]
    assert users.count() == 2
    with pytest.raises(AuthError, match="role 'boss'"):
        users.set_role("oow2", "boss", actor="chief")


def test_every_user_change_is_audited_without_secrets(users, engine):
    users.set_password("oow2", "new second pw", actor="chief", client=IP)
    users.set_role("oow2", "editor", actor="chief", client=IP, reason="promoted")
    users.authenticate("oow2", "bad password", IP, now=T0)
    rows = audit.entries(engine)
    assert [r["action"] for r in rows] == [
        "user.add",
        "user.add",
        "user.password",
        "user.role",
        "user.login_failed",
    ]
    assert (
        rows[1]["actor"] == "chief"
        and rows[1]["reason"] == "new second mate"
        and rows[1]["client"] == "10.0.0.1"
    )
    assert rows[3]["old"] == {"role": "officer"} and rows[3]["new"] == {"role": "editor"}
    text = audit.export_json(rows)
    assert "new second pw" not in text and "scrypt" not in text and "correct horse" not in text
    assert audit.verify_chain(engine).ok


def test_only_scrypt_methods(engine):
    with pytest.raises(AuthError, match="only scrypt methods are allowed"):
        Users(engine, hash_method="pbkdf2:sha256")
