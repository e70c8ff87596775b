"""Tables of the administration database and their migrations.

The audit trail (:mod:`.audit`), the users (:mod:`.auth`) and the stored conditions and limits
(:mod:`.limitstore`) share one SQLAlchemy metadata (:class:`AdminBase`) with its own ordered migration
steps (:data:`ADMIN_MIGRATIONS`, recorded in ``admin_schema_version``). The models live here, in one
module that imports none of the three, so that the three modules depend on this one and not on each
other (no import cycle). Rules: a released step is never edited; a change of the models gets a new step.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from datetime import UTC, datetime
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection, Engine
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column

from onboard.core.store import UTCDateTime

__all__ = [
    "ADMIN_MIGRATIONS",
    "AUDIT_TABLE",
    "AdminBase",
    "AdminSchemaVersion",
    "AuditEntry",
    "AuditError",
    "LoginFailure",
    "StoredCondition",
    "StoredLimit",
    "User",
    "admin_schema_version",
    "iso_utc",
    "migrate_admin",
]

AUDIT_TABLE = "audit_log"


def iso_utc(dt: datetime) -> str:
    return dt.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%S.%fZ")


class AuditError(RuntimeError):
    """An attempt to change or delete an audit entry, or an unusable audit entry."""


class AdminBase(DeclarativeBase):
    """Metadata of the administration tables (audit, users, stored limits); see the module docstring."""


class AdminSchemaVersion(AdminBase):
    __tablename__ = "admin_schema_version"
    version: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(sa.String(200))
    applied_utc: Mapped[datetime] = mapped_column(UTCDateTime())


class AuditEntry(AdminBase):
    """One audit entry (append-only; see the module docstring)."""

    __tablename__ = AUDIT_TABLE
    seq: Mapped[int] = mapped_column(sa.Integer, primary_key=True, autoincrement=False)
    time_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    actor: Mapped[str] = mapped_column(sa.String(100))
    action: Mapped[str] = mapped_column(sa.String(64))
    target: Mapped[str] = mapped_column(sa.String(400))
    old_value: Mapped[str] = mapped_column(sa.Text())
    new_value: Mapped[str] = mapped_column(sa.Text())
    reason: Mapped[str] = mapped_column(sa.Text())
    client: Mapped[str] = mapped_column(sa.String(100))
    prev_hash: Mapped[str] = mapped_column(sa.String(64), unique=True)
    hash: Mapped[str] = mapped_column(sa.String(64), unique=True)

    def as_dict(self) -> dict[str, Any]:
        """The entry with ``old``/``new`` decoded from JSON and the time as ISO text."""
        return {
            "seq": self.seq,
            "time_utc": iso_utc(self.time_utc),
            "actor": self.actor,
            "action": self.action,
            "target": self.target,
            "old": json.loads(self.old_value),
            "new": json.loads(self.new_value),
            "reason": self.reason,
            "client": self.client,
            "prev_hash": self.prev_hash,
            "hash": self.hash,
        }


class User(AdminBase):
    __tablename__ = "admin_users"
    id: Mapped[int] = mapped_column(primary_key=True)
    username: Mapped[str] = mapped_column(sa.String(64), unique=True)
    role: Mapped[str] = mapped_column(sa.String(16))
    password_hash: Mapped[str] = mapped_column(sa.String(300))
    disabled: Mapped[bool] = mapped_column(sa.Boolean(), default=False)
    session_epoch: Mapped[int] = mapped_column(sa.Integer(), default=0)
    """Raised on password/role change or disabling: older sessions stop working."""
    created_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    updated_utc: Mapped[datetime] = mapped_column(UTCDateTime())


class LoginFailure(AdminBase):
    __tablename__ = "admin_login_failures"
    username: Mapped[str] = mapped_column(sa.String(64), primary_key=True)
    client: Mapped[str] = mapped_column(sa.String(100), primary_key=True)
    failures: Mapped[int] = mapped_column(sa.Integer())
    last_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    locked_until_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())


class StoredCondition(AdminBase):
    __tablename__ = "admin_conditions"
    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(sa.String(200), unique=True)
    base_condition: Mapped[str] = mapped_column(sa.String(200))
    settings: Mapped[dict[str, Any]] = mapped_column(sa.JSON())
    """The limit set without its limits and name: description, margin, points, zones, uncertainty, advice."""
    version: Mapped[int] = mapped_column(sa.Integer())
    copied_from: Mapped[str | None] = mapped_column(sa.String(200))
    created_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    created_by: Mapped[str] = mapped_column(sa.String(100))
    updated_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    updated_by: Mapped[str] = mapped_column(sa.String(100))


class StoredLimit(AdminBase):
    __tablename__ = "admin_limits"
    __table_args__ = (sa.UniqueConstraint("condition_id", "key"),)
    id: Mapped[int] = mapped_column(primary_key=True)
    condition_id: Mapped[int] = mapped_column(sa.ForeignKey("admin_conditions.id"))
    position: Mapped[int] = mapped_column(sa.Integer())
    key: Mapped[str] = mapped_column(sa.String(64))
    criterion: Mapped[str] = mapped_column(sa.String(64))
    statistic: Mapped[str] = mapped_column(sa.String(32))
    value: Mapped[float] = mapped_column(sa.Float())
    unit: Mapped[str] = mapped_column(sa.String(16))
    exposure_h: Mapped[float | None] = mapped_column(sa.Float())
    point: Mapped[str | None] = mapped_column(sa.String(64))
    label: Mapped[str] = mapped_column(sa.Text())
    source: Mapped[str] = mapped_column(sa.Text())
    version: Mapped[int] = mapped_column(sa.Integer())


# ------------------------------------------------------------------------------------------- migrations


def _m1_audit(conn: Connection) -> None:
    AdminBase.metadata.create_all(conn, tables=[AuditEntry.__table__])
    if conn.dialect.name == "sqlite":
        for op in ("UPDATE", "DELETE"):
            conn.execute(
                sa.text(
                    f"CREATE TRIGGER {AUDIT_TABLE}_no_{op.lower()} BEFORE {op} ON {AUDIT_TABLE} "
                    f"BEGIN SELECT RAISE(ABORT, '{AUDIT_TABLE} is append-only: {op} refused'); END"
                )
            )
    elif conn.dialect.name == "postgresql":
        conn.execute(
            sa.text(
                f"CREATE FUNCTION {AUDIT_TABLE}_refuse() RETURNS trigger LANGUAGE plpgsql AS $$ "
                f"BEGIN RAISE EXCEPTION '{AUDIT_TABLE} is append-only: % refused', TG_OP; END $$"
            )
        )
        conn.execute(
            sa.text(
                f"CREATE TRIGGER {AUDIT_TABLE}_no_change BEFORE UPDATE OR DELETE ON {AUDIT_TABLE} "
                f"FOR EACH ROW EXECUTE FUNCTION {AUDIT_TABLE}_refuse()"
            )
        )
        conn.execute(
            sa.text(
                f"CREATE TRIGGER {AUDIT_TABLE}_no_truncate BEFORE TRUNCATE ON {AUDIT_TABLE} "
                f"FOR EACH STATEMENT EXECUTE FUNCTION {AUDIT_TABLE}_refuse()"
            )
        )
    else:  # pragma: no cover - only SQLite and PostgreSQL are supported
        raise AuditError(
            f"database {conn.dialect.name!r}: append-only triggers exist for sqlite and postgresql"
        )


def _m2_users(conn: Connection) -> None:
    AdminBase.metadata.create_all(conn, tables=[User.__table__, LoginFailure.__table__])


def _m3_limits(conn: Connection) -> None:
    AdminBase.metadata.create_all(
        conn, tables=[StoredCondition.__table__, StoredLimit.__table__]
    )


ADMIN_MIGRATIONS: tuple[tuple[int, str, Callable[[Connection], None]], ...] = (
    (1, "audit trail with append-only triggers", _m1_audit),
    (2, "users and login failures", _m2_users),
    (3, "stored conditions and limits", _m3_limits),
)
"""Ordered schema steps of the administration tables. Append only; never edit a released step."""


def admin_schema_version(engine: Engine) -> int:
    """Highest applied administration migration (0 when none)."""
    with engine.connect() as conn:
        if not sa.inspect(conn).has_table(AdminSchemaVersion.__tablename__):
            return 0
        return int(conn.execute(sa.select(sa.func.max(AdminSchemaVersion.version))).scalar() or 0)


def migrate_admin(engine: Engine, target: int | None = None) -> int:
    """Apply pending :data:`ADMIN_MIGRATIONS` (each in one transaction); returns the new version."""
    AdminSchemaVersion.__table__.create(engine, checkfirst=True)
    current = admin_schema_version(engine)
    for version, name, step in ADMIN_MIGRATIONS:
        if version <= current or (target is not None and version > target):
            continue
        with engine.begin() as conn:
            step(conn)
            conn.execute(
                sa.insert(AdminSchemaVersion).values(
                    version=version, name=name, applied_utc=datetime.now(UTC)
                )
            )
        current = version
    return current
