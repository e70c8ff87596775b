"""Users, roles, password hashing and login throttling for the administration page and commands.

Roles
-----
Three roles, each including the rights of the ones before it (:data:`ROLES`):

``officer``
    switch the active loading condition, acknowledge alerts;
``editor``
    also change limit sets (edit a limit, copy a condition, import a limit file);
``admin``
    also manage users (add, change password or role, disable).

Viewing the bridge page, the conditions and limits and the audit trail needs no login.

Passwords
---------
Stored only as salted hashes made by :func:`werkzeug.security.generate_password_hash` with scrypt
(``scrypt:32768:8:1``: N = 2^15, r = 8, p = 1, a 16-character salt) and checked with
:func:`werkzeug.security.check_password_hash`, which compares in constant time. A password has 8 to 256
characters (the minimum length of NIST SP 800-63B §5.1.1.2, from memory); no composition rules.

Login throttling
----------------
Failed logins are counted per (user name, client address) in the database, so the count survives a
restart and holds across worker threads. The first :data:`FREE_FAILURES` failures cost nothing; after
that each further failure locks that pair for 2, 4, 8, ... seconds, at most :data:`MAX_LOCK_S`
(15 min). While locked, a login is refused without looking at the password. A success clears the
count. Unknown user names are counted the same way and take the same hashing time as known ones, so
the answer does not tell which names exist.

The first administrator is made from the command line (``hwadvice users add NAME --role admin``);
whoever can run commands against the database can manage it anyway.

References
----------
.. [1] Percival, C. and Josefsson, S. (2016). RFC 7914, *The scrypt Password-Based Key Derivation
   Function*.
.. [2] NIST SP 800-63B (2017). *Digital Identity Guidelines: Authentication and Lifecycle Management*,
   §5.1.1.2 (memorised secrets: at least 8 characters, throttle online guessing) (from memory).
.. [3] OWASP Authentication Cheat Sheet, "Login Throttling" (common practice).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Engine
from sqlalchemy.orm import Session
from werkzeug.security import check_password_hash, generate_password_hash

from onboard.admin import audit
from onboard.admin.tables import LoginFailure, User

__all__ = [
    "FREE_FAILURES",
    "LoginResult",
    "MAX_LOCK_S",
    "PASSWORD_METHOD",
    "ROLES",
    "AuthError",
    "LoginFailure",
    "User",
    "Users",
    "role_allows",
]

ROLES = ("officer", "editor", "admin")
"""Roles from least to most rights; each includes the rights of the ones before it."""

PASSWORD_METHOD = "scrypt:32768:8:1"
"""werkzeug hashing method for stored passwords (RFC 7914 parameters N:r:p)."""

MIN_PASSWORD, MAX_PASSWORD = 8, 256
FREE_FAILURES = 3
"""Failed logins per (user, client) before the lock starts."""
FIRST_LOCK_S = 2.0
MAX_LOCK_S = 900.0
_NAME_RE = re.compile(r"^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$")


class AuthError(ValueError):
    """Bad user input (unknown user, bad name, weak password, unknown role)."""


def role_allows(role: str | None, needed: str) -> bool:
    """True when ``role`` has at least the rights of ``needed`` (see :data:`ROLES`)."""
    if needed not in ROLES:
        raise AuthError(f"role {needed!r}: expected one of {', '.join(ROLES)}")
    return role in ROLES and ROLES.index(role) >= ROLES.index(needed)


def lock_seconds(failures: int) -> float:
    """Lock after the ``failures``-th consecutive failure [s]: 0 up to FREE_FAILURES, then 2, 4, 8, ...
    capped at MAX_LOCK_S (module docstring)."""
    if failures <= FREE_FAILURES:
        return 0.0
    return min(FIRST_LOCK_S * 2.0 ** (failures - FREE_FAILURES - 1), MAX_LOCK_S)


@dataclass(frozen=True)
class LoginResult:
    """Outcome of :meth:`Users.authenticate`.

    Attributes
    ----------
    ok : bool
    username, role : str or None
        Set when ``ok``.
    epoch : int
        The user's session epoch (store it in the session; a change logs the session out).
    message : str
        Plain reason when refused (never says whether the name exists).
    retry_after_s : float
        Seconds until the next attempt is looked at (0 when not locked) [s].
    """

    ok: bool
    username: str | None = None
    role: str | None = None
    epoch: int = 0
    message: str = ""
    retry_after_s: float = 0.0


def _check_name(username: str) -> str:
    if not isinstance(username, str) or not _NAME_RE.match(username):
        raise AuthError(
            f"user name {username!r}: expected 1-64 letters, digits, '.', '_' or '-', "
            "starting with a letter or digit"
        )
    return username


def _check_password(password: str) -> str:
    if not isinstance(password, str) or not MIN_PASSWORD <= len(password) <= MAX_PASSWORD:
        n = len(password) if isinstance(password, str) else "no"
        raise AuthError(f"password: {n} characters; allowed: {MIN_PASSWORD} to {MAX_PASSWORD} characters")
    return password


def _check_role(role: str) -> str:
    if role not in ROLES:
        raise AuthError(f"role {role!r}: expected one of {', '.join(ROLES)}")
    return role


class Users:
    """User accounts and logins in the administration tables (module docstring).

    Parameters
    ----------
    engine : Engine
        The database (administration tables migrated by :func:`onboard.admin.audit.migrate_admin`).
    hash_method : str
        werkzeug hashing method; :data:`PASSWORD_METHOD` in service. Tests may pass a cheaper scrypt.
    """

    def __init__(self, engine: Engine, *, hash_method: str = PASSWORD_METHOD):
        if not hash_method.startswith("scrypt"):
            raise AuthError(f"hash_method {hash_method!r}: only scrypt methods are allowed")
        self.engine = engine
        self.hash_method = hash_method
        self._dummy_hash = generate_password_hash("not a password of anyone", method=hash_method)

    # -- reading
    def get(self, username: str) -> dict[str, Any] | None:
        """The user as a dict (no hash), or None."""
        with Session(self.engine) as s:
            u = s.scalars(sa.select(User).where(User.username == username)).first()
            return None if u is None else self._as_dict(u)

    def list(self) -> list[dict[str, Any]]:
        """All users, by name."""
        with Session(self.engine) as s:
            return [self._as_dict(u) for u in s.scalars(sa.select(User).order_by(User.username))]

    def count(self) -> int:
        with Session(self.engine) as s:
            return int(s.scalar(sa.select(sa.func.count()).select_from(User)) or 0)

    @staticmethod
    def _as_dict(u: User) -> dict[str, Any]:
        return {
            "username": u.username,
            "role": u.role,
            "disabled": bool(u.disabled),
            "session_epoch": int(u.session_epoch),
            "created_utc": u.created_utc,
            "updated_utc": u.updated_utc,
        }

    # -- changing (each audited in the same transaction)
    def add(
        self, username: str, password: str, role: str, *, actor: str, client: str = "cli", reason: str = ""
    ) -> dict[str, Any]:
        """Create a user. Raises AuthError if the name exists or the input is invalid."""
        _check_name(username)
        _check_password(password)
        _check_role(role)
        pw_hash = generate_password_hash(password, method=self.hash_method)

        def work(s: Session) -> dict[str, Any]:
            if s.scalars(sa.select(User).where(User.username == username)).first() is not None:
                raise AuthError(f"user {username!r} already exists")
            now = datetime.now(UTC)
            u = User(
                username=username,
                role=role,
                password_hash=pw_hash,
                disabled=False,
                session_epoch=0,
                created_utc=now,
                updated_utc=now,
            )
            s.add(u)
            s.flush()
            audit.append(
                s,
                actor=actor,
                action="user.add",
                target=f"user {username!r}",
                old=None,
                new={"role": role},
                reason=reason or "new user",
                client=client,
            )
            return self._as_dict(u)

        return audit.run_in_transaction(self.engine, work)

    def _change(
        self, username: str, *, actor: str, client: str, reason: str, action: str, apply: Any
    ) -> dict[str, Any]:
        def work(s: Session) -> dict[str, Any]:
            u = s.scalars(sa.select(User).where(User.username == username)).first()
            if u is None:
                raise AuthError(f"no user {username!r}")
            old, new = apply(u)
            u.session_epoch = int(u.session_epoch) + 1
            u.updated_utc = datetime.now(UTC)
            audit.append(
                s,
                actor=actor,
                action=action,
                target=f"user {username!r}",
                old=old,
                new=new,
                reason=reason,
                client=client,
            )
            return self._as_dict(u)

        return audit.run_in_transaction(self.engine, work)

    def set_password(
        self, username: str, password: str, *, actor: str, client: str = "cli", reason: str = ""
    ) -> dict[str, Any]:
        """Change a password (existing sessions of the user end). The audit entry holds no hash."""
        _check_password(password)
        pw_hash = generate_password_hash(password, method=self.hash_method)

        def apply(u: User):
            u.password_hash = pw_hash
            return "(hidden)", "(changed)"

        return self._change(
            username,
            actor=actor,
            client=client,
            reason=reason or "password changed",
            action="user.password",
            apply=apply,
        )

    def set_role(
        self, username: str, role: str, *, actor: str, client: str = "cli", reason: str = ""
    ) -> dict[str, Any]:
        """Change a role (existing sessions of the user end)."""
        _check_role(role)

        def apply(u: User):
            old, u.role = u.role, role
            return {"role": old}, {"role": role}

        return self._change(
            username,
            actor=actor,
            client=client,
            reason=reason or "role changed",
            action="user.role",
            apply=apply,
        )

    def set_disabled(
        self, username: str, disabled: bool, *, actor: str, client: str = "cli", reason: str = ""
    ) -> dict[str, Any]:
        """Disable or enable a user (a disabled user cannot log in; existing sessions end)."""

        def apply(u: User):
            old, u.disabled = bool(u.disabled), bool(disabled)
            return {"disabled": old}, {"disabled": bool(disabled)}

        return self._change(
            username,
            actor=actor,
            client=client,
            reason=reason or ("disabled" if disabled else "enabled"),
            action="user.disable" if disabled else "user.enable",
            apply=apply,
        )

    # -- login
    def authenticate(
        self, username: str, password: str, client: str, *, now: datetime | None = None
    ) -> LoginResult:
        """Check a login with throttling per (user, client); audits success, failure and lock.

        Parameters
        ----------
        username, password : str
        client : str
            Client address (the throttling key together with the name).
        now : datetime, optional
            Aware UTC time (tests); default now.
        """
        now = now or datetime.now(UTC)
        name = (username or "")[:64]
        client = (client or "unknown")[:100]
        with Session(self.engine) as s:
            fail = s.get(LoginFailure, (name, client))
            if fail is not None and fail.locked_until_utc is not None and fail.locked_until_utc > now:
                wait = (fail.locked_until_utc - now).total_seconds()
                return LoginResult(
                    False, message=f"too many failed logins; try again in {wait:.0f} s", retry_after_s=wait
                )
            u = s.scalars(sa.select(User).where(User.username == name)).first()
        # Always hash once, so that unknown names take as long as known ones.
        good = check_password_hash(u.password_hash if u is not None else self._dummy_hash, password or "")
        if u is not None and good and not u.disabled:

            def ok(s: Session) -> LoginResult:
                f = s.get(LoginFailure, (name, client))
                if f is not None:
                    s.delete(f)
                audit.append(
                    s,
                    actor=name,
                    action="user.login",
                    target=f"user {name!r}",
                    reason="login",
                    client=client,
                    now=now,
                )
                return LoginResult(True, username=u.username, role=u.role, epoch=int(u.session_epoch))

            return audit.run_in_transaction(self.engine, ok)

        def failed(s: Session) -> LoginResult:
            f = s.get(LoginFailure, (name, client))
            if f is None:
                f = LoginFailure(username=name, client=client, failures=0, last_utc=now)
                s.add(f)
            f.failures = int(f.failures) + 1
            f.last_utc = now
            lock = lock_seconds(f.failures)
            f.locked_until_utc = now + timedelta(seconds=lock) if lock > 0 else None
            audit.append(
                s,
                actor=name or "(empty)",
                action="user.login_failed",
                target=f"user {name!r}",
                new={"failures": f.failures, "locked_s": lock},
                reason="wrong name or password",
                client=client,
                now=now,
            )
            msg = "wrong user name or password"
            if lock > 0:
                msg += f"; further attempts refused for {lock:.0f} s"
            return LoginResult(False, message=msg, retry_after_s=lock)

        return audit.run_in_transaction(self.engine, failed)

    def session_valid(self, username: str, epoch: int) -> dict[str, Any] | None:
        """The user if a session made at ``epoch`` is still good (exists, enabled, same epoch), else None."""
        u = self.get(username)
        if u is None or u["disabled"] or u["session_epoch"] != epoch:
            return None
        return u
