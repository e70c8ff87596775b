"""Storage of analysis results, alerts, events and sensor health (SQLAlchemy 2.x, typed declarative).

A SQLite file by default (WAL journal, busy timeout, one writer: the service), PostgreSQL by URL
(``postgresql+psycopg2://user@host/db``). Values are stored in edge units with the unit in the column
name (``hs_m``, ``heading_deg``, ``stw_kn``); times are stored as UTC and returned timezone-aware.

Schema versions
---------------
Migrations are a small ordered list of steps (:data:`MIGRATIONS`) recorded in a ``schema_version`` table,
applied in one transaction each by :meth:`Store.migrate`. Reason for not using Alembic: the schema is
small and owned by one process, the steps must run programmatically on first start of the service (no
separate command on board), and a list of functions adds no dependency while being testable on both
backends. Rules: a released step is never edited; a change of the models gets a new step; a test checks
that a freshly migrated database has exactly the columns of the models.

Retention: :meth:`Store.purge_older_than` deletes rows older than N days (cycles with their estimates
and advice, health snapshots, events, acknowledged alerts).

The repository API (:class:`Store`) is what the service and the web page use; they never touch
sessions or SQL themselves.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from datetime import UTC, datetime, timedelta
from typing import Any

import sqlalchemy as sa
from sqlalchemy import event
from sqlalchemy.engine import Connection, Engine
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship, sessionmaker

CYCLE_STATUSES = ("ok", "failed", "no_advice")
ALERT_LEVELS = ("alarm", "warning", "caution")


class StoreError(ValueError):
    """Bad input to the store (names the field, value and what is allowed)."""


class UTCDateTime(sa.types.TypeDecorator[datetime]):
    """Timezone-aware UTC datetimes on every backend (stored as naive UTC)."""

    impl = sa.DateTime(timezone=False)
    cache_ok = True

    def process_bind_param(self, value: datetime | None, dialect: Any) -> datetime | None:
        if value is None:
            return None
        if value.tzinfo is None:
            raise StoreError(f"datetime {value!r} has no time zone; pass an aware UTC datetime")
        return value.astimezone(UTC).replace(tzinfo=None)

    def process_result_value(self, value: datetime | None, dialect: Any) -> datetime | None:
        return None if value is None else value.replace(tzinfo=UTC)


class Base(DeclarativeBase):
    pass


class SchemaVersion(Base):
    __tablename__ = "schema_version"
    version: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(sa.String(200))
    applied_utc: Mapped[datetime] = mapped_column(UTCDateTime())


class AnalysisCycle(Base):
    """One analysis cycle: window, outcome and timings."""

    __tablename__ = "analysis_cycles"
    id: Mapped[int] = mapped_column(primary_key=True)
    started_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    finished_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    window_start_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())
    window_end_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())
    status: Mapped[str] = mapped_column(sa.String(16))
    reason: Mapped[str | None] = mapped_column(sa.Text())
    condition: Mapped[str | None] = mapped_column(sa.String(200))
    timings_s: Mapped[dict[str, float] | None] = mapped_column(sa.JSON())
    code_version: Mapped[str | None] = mapped_column(sa.String(100))
    config_digest: Mapped[str | None] = mapped_column(sa.String(100))
    sea_state: Mapped[SeaStateRecord | None] = relationship(
        back_populates="cycle", cascade="all, delete-orphan", uselist=False
    )
    advice: Mapped[AdviceRecord | None] = relationship(
        back_populates="cycle", cascade="all, delete-orphan", uselist=False
    )


class SeaStateRecord(Base):
    """Sea-state estimate of a cycle (edge units)."""

    __tablename__ = "sea_state_estimates"
    id: Mapped[int] = mapped_column(primary_key=True)
    cycle_id: Mapped[int] = mapped_column(
        sa.ForeignKey("analysis_cycles.id", ondelete="CASCADE"), unique=True
    )
    window_end_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())
    hs_m: Mapped[float | None] = mapped_column(sa.Float())
    tp_s: Mapped[float | None] = mapped_column(sa.Float())
    tm01_s: Mapped[float | None] = mapped_column(sa.Float())
    wave_from_deg: Mapped[float | None] = mapped_column(sa.Float())
    spread_deg: Mapped[float | None] = mapped_column(sa.Float())
    confidence: Mapped[float | None] = mapped_column(sa.Float())
    method: Mapped[str | None] = mapped_column(sa.String(100))
    reasons: Mapped[list[str] | None] = mapped_column(sa.JSON())
    systems: Mapped[list[dict[str, Any]] | None] = mapped_column(sa.JSON())
    cycle: Mapped[AnalysisCycle] = relationship(back_populates="sea_state")


class AdviceRecord(Base):
    """Advice of a cycle: actual heading/speed, utilisation, advised change and the polar grid."""

    __tablename__ = "advice"
    id: Mapped[int] = mapped_column(primary_key=True)
    cycle_id: Mapped[int] = mapped_column(
        sa.ForeignKey("analysis_cycles.id", ondelete="CASCADE"), unique=True
    )
    window_end_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())
    status: Mapped[str | None] = mapped_column(sa.String(32))
    heading_deg: Mapped[float | None] = mapped_column(sa.Float())
    stw_kn: Mapped[float | None] = mapped_column(sa.Float())
    utilisation: Mapped[float | None] = mapped_column(sa.Float())
    utilisation_nominal: Mapped[float | None] = mapped_column(sa.Float())
    limiting_criterion: Mapped[str | None] = mapped_column(sa.String(200))
    advised_heading_deg: Mapped[float | None] = mapped_column(sa.Float())
    advised_stw_kn: Mapped[float | None] = mapped_column(sa.Float())
    utilisation_advised: Mapped[float | None] = mapped_column(sa.Float())
    explanation: Mapped[str | None] = mapped_column(sa.Text())
    polar: Mapped[dict[str, Any] | None] = mapped_column(sa.JSON())
    cycle: Mapped[AnalysisCycle] = relationship(back_populates="advice")


class SensorHealthSnapshot(Base):
    """Per-channel sensor status at one time (the list from SampleBuffer.channel_health)."""

    __tablename__ = "sensor_health"
    id: Mapped[int] = mapped_column(primary_key=True)
    time_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    channels: Mapped[list[dict[str, Any]]] = mapped_column(sa.JSON())
    listener: Mapped[dict[str, Any] | None] = mapped_column(sa.JSON())


class EventRecord(Base):
    """Something that happened (service start, condition change, broker lost, ...)."""

    __tablename__ = "events"
    id: Mapped[int] = mapped_column(primary_key=True)
    time_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    kind: Mapped[str] = mapped_column(sa.String(64))
    text: Mapped[str] = mapped_column(sa.Text())
    data: Mapped[dict[str, Any] | None] = mapped_column(sa.JSON())


class AlertRecord(Base):
    """An alert raised for the bridge, with acknowledgement."""

    __tablename__ = "alerts"
    id: Mapped[int] = mapped_column(primary_key=True)
    level: Mapped[str] = mapped_column(sa.String(16))
    kind: Mapped[str] = mapped_column(sa.String(64))
    text: Mapped[str] = mapped_column(sa.Text())
    raised_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    acknowledged_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())
    acknowledged_by: Mapped[str | None] = mapped_column(sa.String(100))
    cleared_utc: Mapped[datetime | None] = mapped_column(UTCDateTime())


class ConditionChange(Base):
    """History of the active loading condition."""

    __tablename__ = "condition_history"
    id: Mapped[int] = mapped_column(primary_key=True)
    time_utc: Mapped[datetime] = mapped_column(UTCDateTime())
    condition: Mapped[str] = mapped_column(sa.String(200))
    set_by: Mapped[str | None] = mapped_column(sa.String(100))
    note: Mapped[str | None] = mapped_column(sa.Text())


# ------------------------------------------------------------------------------------------- migrations

_V1_TABLES = (
    "analysis_cycles",
    "sea_state_estimates",
    "advice",
    "sensor_health",
    "events",
    "alerts",
    "condition_history",
)


def _m1_initial(conn: Connection) -> None:
    Base.metadata.create_all(conn, tables=[Base.metadata.tables[n] for n in _V1_TABLES])


def _m2_time_indexes(conn: Connection) -> None:
    for name, table, col in (
        ("ix_cycles_finished", "analysis_cycles", "finished_utc"),
        ("ix_health_time", "sensor_health", "time_utc"),
        ("ix_events_time", "events", "time_utc"),
        ("ix_alerts_raised", "alerts", "raised_utc"),
        ("ix_condition_time", "condition_history", "time_utc"),
    ):
        # plain DDL text: a step must not attach objects to the models' metadata
        conn.execute(sa.text(f"CREATE INDEX {name} ON {table} ({col})"))


MIGRATIONS: tuple[tuple[int, str, Callable[[Connection], None]], ...] = (
    (1, "initial tables", _m1_initial),
    (2, "time indexes", _m2_time_indexes),
)
"""Ordered schema steps (version, name, function). Append only; never edit a released step."""


def _sqlite_pragmas(dbapi_conn: Any, _record: Any) -> None:
    cur = dbapi_conn.cursor()
    cur.execute("PRAGMA journal_mode=WAL")
    cur.execute("PRAGMA busy_timeout=10000")
    cur.execute("PRAGMA foreign_keys=ON")
    cur.execute("PRAGMA synchronous=NORMAL")
    cur.close()


def make_engine(url: str, **kw: Any) -> Engine:
    """Create an engine: SQLite with WAL, busy timeout and foreign keys; anything else as given.

    Parameters
    ----------
    url : str
        ``sqlite:///path/to/onboard.db`` or ``postgresql+psycopg2://user@host/db``.
    **kw
        Passed to :func:`sqlalchemy.create_engine`.
    """
    u = sa.engine.make_url(url)
    if u.get_backend_name() == "sqlite":
        if u.database in (None, "", ":memory:"):
            raise StoreError(
                "use a SQLite file (sqlite:///path/onboard.db); an in-memory database is per connection"
            )
        kw.setdefault("connect_args", {}).setdefault("check_same_thread", False)
        engine = sa.create_engine(url, **kw)
        event.listen(engine, "connect", _sqlite_pragmas)
        return engine
    kw.setdefault("pool_pre_ping", True)
    return sa.create_engine(url, **kw)


# ------------------------------------------------------------------------------------------- validation


def _num(field: str, value: Any, *, lo: float | None = None, hi: float | None = None) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, int | float):
        try:
            value = float(value)  # numpy scalars
        except (TypeError, ValueError):
            raise StoreError(f"{field}: expected a number or None, got {value!r:.60}") from None
    x = float(value)
    if math.isnan(x):
        return None
    if not math.isfinite(x) or (lo is not None and x < lo) or (hi is not None and x > hi):
        raise StoreError(f"{field}: {value!r} outside [{lo}, {hi}]")
    return x


def _aware(field: str, value: Any, *, required: bool = True) -> datetime | None:
    if value is None and not required:
        return None
    if not isinstance(value, datetime) or value.tzinfo is None:
        raise StoreError(f"{field}: expected a timezone-aware UTC datetime, got {value!r:.80}")
    return value


def _iso(dt: datetime | None) -> str | None:
    if dt is None:
        return None
    return dt.astimezone(UTC).isoformat(timespec="seconds").replace("+00:00", "Z")


_SEA_FIELDS = {
    "hs_m": (0.0, 40.0),
    "tp_s": (0.0, 60.0),
    "tm01_s": (0.0, 60.0),
    "wave_from_deg": (0.0, 360.0),
    "spread_deg": (0.0, 180.0),
    "confidence": (0.0, 1.0),
}
_ADVICE_NUM = {
    "heading_deg": (0.0, 360.0),
    "stw_kn": (-10.0, 60.0),
    "utilisation": (0.0, None),
    "utilisation_nominal": (0.0, None),
    "advised_heading_deg": (0.0, 360.0),
    "advised_stw_kn": (-10.0, 60.0),
    "utilisation_advised": (0.0, None),
}


# ------------------------------------------------------------------------------------------- repository


class Store:
    """Repository over the onboard database (module docstring).

    Parameters
    ----------
    url_or_engine : str or sqlalchemy.engine.Engine
        Database URL (see :func:`make_engine`) or a ready engine.
    migrate : bool
        Apply pending migrations at construction.
    """

    def __init__(self, url_or_engine: str | Engine, *, migrate: bool = True):
        self.engine = make_engine(url_or_engine) if isinstance(url_or_engine, str) else url_or_engine
        self._session = sessionmaker(self.engine, expire_on_commit=False)
        if migrate:
            self.migrate()

    @classmethod
    def sqlite(cls, path: str, **kw: Any) -> Store:
        """Store in a SQLite file at ``path``."""
        return cls(f"sqlite:///{path}", **kw)

    def close(self) -> None:
        self.engine.dispose()

    # -- schema
    def schema_version(self) -> int:
        """Highest applied migration (0 for an empty database)."""
        with self.engine.connect() as conn:
            if not sa.inspect(conn).has_table("schema_version"):
                return 0
            v = conn.execute(sa.select(sa.func.max(SchemaVersion.version))).scalar()
            return int(v or 0)

    def migrate(self, target: int | None = None) -> int:
        """Apply pending :data:`MIGRATIONS` up to ``target`` (default all); returns the new version."""
        SchemaVersion.__table__.create(self.engine, checkfirst=True)
        current = self.schema_version()
        for version, name, step in MIGRATIONS:
            if version <= current or (target is not None and version > target):
                continue
            with self.engine.begin() as conn:
                step(conn)
                conn.execute(
                    sa.insert(SchemaVersion).values(version=version, name=name, applied_utc=datetime.now(UTC))
                )
            current = version
        return current

    # -- cycles
    def add_cycle(
        self,
        *,
        started_utc: datetime,
        finished_utc: datetime,
        status: str,
        window_start_utc: datetime | None = None,
        window_end_utc: datetime | None = None,
        reason: str | None = None,
        condition: str | None = None,
        timings_s: Mapping[str, float] | None = None,
        code_version: str | None = None,
        config_digest: str | None = None,
        sea_state: Mapping[str, Any] | None = None,
        advice: Mapping[str, Any] | None = None,
    ) -> int:
        """Record one analysis cycle with its estimate and advice (one transaction); returns its id.

        Parameters
        ----------
        started_utc, finished_utc, window_start_utc, window_end_utc : datetime
            Timezone-aware UTC.
        status : {"ok", "failed", "no_advice"}
            Outcome; ``failed`` and ``no_advice`` need a ``reason`` (shown on the page instead of advice).
        sea_state : mapping, optional
            Keys ``hs_m`` [m], ``tp_s`` [s], ``tm01_s`` [s], ``wave_from_deg`` [deg, true, coming from],
            ``spread_deg`` [deg], ``confidence`` [0–1], ``method``, ``reasons`` (list of str), ``systems``
            (list of dicts, each ``label``, ``hs_m``, ``tp_s``, ``wave_from_deg``, ``spread_deg``).
        advice : mapping, optional
            Keys ``status``, ``heading_deg``, ``stw_kn``, ``utilisation``, ``utilisation_nominal``,
            ``limiting_criterion``, ``advised_heading_deg``, ``advised_stw_kn``, ``utilisation_advised``,
            ``explanation``, ``polar`` (JSON-serialisable grid, see the page's state contract).
        """
        if status not in CYCLE_STATUSES:
            raise StoreError(f"status {status!r}: expected one of {', '.join(CYCLE_STATUSES)}")
        if status != "ok" and not reason:
            raise StoreError(f"status {status!r} needs a reason (shown on the bridge page instead of advice)")
        cyc = AnalysisCycle(
            started_utc=_aware("started_utc", started_utc),
            finished_utc=_aware("finished_utc", finished_utc),
            window_start_utc=_aware("window_start_utc", window_start_utc, required=False),
            window_end_utc=_aware("window_end_utc", window_end_utc, required=False),
            status=status,
            reason=reason,
            condition=condition,
            timings_s={str(k): _num(f"timings_s.{k}", v, lo=0.0) for k, v in (timings_s or {}).items()}
            or None,
            code_version=code_version,
            config_digest=config_digest,
        )
        if sea_state is not None:
            unknown = set(sea_state) - set(_SEA_FIELDS) - {"method", "reasons", "systems", "window_end_utc"}
            if unknown:
                raise StoreError(f"sea_state: unknown key(s) {', '.join(sorted(unknown))}")
            vals = {
                k: _num(f"sea_state.{k}", sea_state.get(k), lo=lo, hi=hi)
                for k, (lo, hi) in _SEA_FIELDS.items()
            }
            cyc.sea_state = SeaStateRecord(
                window_end_utc=window_end_utc,
                method=sea_state.get("method"),
                reasons=list(sea_state.get("reasons") or []),
                systems=list(sea_state.get("systems") or []),
                **vals,
            )
        if advice is not None:
            known = set(_ADVICE_NUM) | {
                "status",
                "limiting_criterion",
                "explanation",
                "polar",
                "window_end_utc",
            }
            unknown = set(advice) - known
            if unknown:
                raise StoreError(f"advice: unknown key(s) {', '.join(sorted(unknown))}")
            nums = {
                k: _num(f"advice.{k}", advice.get(k), lo=lo, hi=hi) for k, (lo, hi) in _ADVICE_NUM.items()
            }
            cyc.advice = AdviceRecord(
                window_end_utc=window_end_utc,
                status=advice.get("status"),
                limiting_criterion=advice.get("limiting_criterion"),
                explanation=advice.get("explanation"),
                polar=advice.get("polar"),
                **nums,
            )
        with self._session.begin() as s:
            s.add(cyc)
            s.flush()
            return int(cyc.id)

    def latest_cycle(self) -> dict[str, Any] | None:
        """The newest cycle (by finish time) with its estimate and advice, as a dict; None if none."""
        with self._session() as s:
            cyc = s.scalars(
                sa.select(AnalysisCycle)
                .order_by(AnalysisCycle.finished_utc.desc(), AnalysisCycle.id.desc())
                .limit(1)
            ).first()
            return None if cyc is None else self._cycle_dict(cyc)

    def latest_ok_cycle(self) -> dict[str, Any] | None:
        """The newest cycle with status ``ok``."""
        with self._session() as s:
            cyc = s.scalars(
                sa.select(AnalysisCycle)
                .where(AnalysisCycle.status == "ok")
                .order_by(AnalysisCycle.finished_utc.desc(), AnalysisCycle.id.desc())
                .limit(1)
            ).first()
            return None if cyc is None else self._cycle_dict(cyc)

    @staticmethod
    def _cycle_dict(c: AnalysisCycle) -> dict[str, Any]:
        out: dict[str, Any] = {
            "id": c.id,
            "started_utc": c.started_utc,
            "finished_utc": c.finished_utc,
            "window_start_utc": c.window_start_utc,
            "window_end_utc": c.window_end_utc,
            "status": c.status,
            "reason": c.reason,
            "condition": c.condition,
            "timings_s": c.timings_s,
            "code_version": c.code_version,
            "config_digest": c.config_digest,
            "sea_state": None,
            "advice": None,
        }
        if c.sea_state is not None:
            ss = c.sea_state
            out["sea_state"] = {k: getattr(ss, k) for k in (*_SEA_FIELDS, "method", "reasons", "systems")}
        if c.advice is not None:
            a = c.advice
            out["advice"] = {
                k: getattr(a, k)
                for k in (*_ADVICE_NUM, "status", "limiting_criterion", "explanation", "polar")
            }
        return out

    def latest_state(self) -> dict[str, Any]:
        """What the page needs from storage: latest cycle, latest ok cycle, health, alerts, condition."""
        return {
            "cycle": self.latest_cycle(),
            "last_ok_cycle": self.latest_ok_cycle(),
            "sensor_health": self.latest_sensor_health(),
            "alerts": self.active_alerts(),
            "condition": self.active_condition(),
        }

    def history(self, hours: float, *, now: datetime | None = None) -> dict[str, list[Any]]:
        """Cycles of the last ``hours`` in time order, as parallel lists (the page's /api/history shape).

        Returns
        -------
        dict
            ``times_utc`` (ISO Z), ``status``, ``hs_m``, ``tp_s``, ``wave_from_deg``, ``confidence``,
            ``utilisation``, ``heading_deg``, ``stw_kn``, ``advised_heading_deg``, ``advised_stw_kn``; None
            where a cycle has no value.
        """
        if not (isinstance(hours, int | float) and 0 < hours <= 24 * 366):
            raise StoreError(f"hours must be in (0, 8784], got {hours!r}")
        now = _aware("now", now or datetime.now(UTC))
        assert now is not None
        since = now - timedelta(hours=hours)
        keys = (
            "times_utc",
            "status",
            "hs_m",
            "tp_s",
            "wave_from_deg",
            "confidence",
            "utilisation",
            "heading_deg",
            "stw_kn",
            "advised_heading_deg",
            "advised_stw_kn",
        )
        out: dict[str, list[Any]] = {k: [] for k in keys}
        with self._session() as s:
            q = (
                sa.select(AnalysisCycle, SeaStateRecord, AdviceRecord)
                .outerjoin(SeaStateRecord, SeaStateRecord.cycle_id == AnalysisCycle.id)
                .outerjoin(AdviceRecord, AdviceRecord.cycle_id == AnalysisCycle.id)
                .where(AnalysisCycle.finished_utc >= since, AnalysisCycle.finished_utc <= now)
                .order_by(AnalysisCycle.finished_utc, AnalysisCycle.id)
            )
            for cyc, ss, adv in s.execute(q):
                out["times_utc"].append(_iso(cyc.window_end_utc or cyc.finished_utc))
                out["status"].append(cyc.status)
                for k in ("hs_m", "tp_s", "wave_from_deg", "confidence"):
                    out[k].append(getattr(ss, k) if ss else None)
                for k in ("utilisation", "heading_deg", "stw_kn", "advised_heading_deg", "advised_stw_kn"):
                    out[k].append(getattr(adv, k) if adv else None)
        return out

    # -- sensor health
    def add_sensor_health(
        self,
        time_utc: datetime,
        channels: Sequence[Mapping[str, Any]],
        listener: Mapping[str, Any] | None = None,
    ) -> int:
        """Store a health snapshot (``SampleBuffer.channel_health`` list, listener counters)."""
        rec = SensorHealthSnapshot(
            time_utc=_aware("time_utc", time_utc),
            channels=[dict(c) for c in channels],
            listener=dict(listener) if listener else None,
        )
        with self._session.begin() as s:
            s.add(rec)
            s.flush()
            return int(rec.id)

    def latest_sensor_health(self) -> dict[str, Any] | None:
        with self._session() as s:
            r = s.scalars(
                sa.select(SensorHealthSnapshot)
                .order_by(SensorHealthSnapshot.time_utc.desc(), SensorHealthSnapshot.id.desc())
                .limit(1)
            ).first()
            return (
                None
                if r is None
                else {"time_utc": r.time_utc, "channels": r.channels, "listener": r.listener}
            )

    # -- events
    def add_event(
        self, kind: str, text: str, *, time_utc: datetime | None = None, data: Mapping[str, Any] | None = None
    ) -> int:
        """Record an event (service start/stop, broker lost, condition change, ...)."""
        if not kind or len(kind) > 64:
            raise StoreError(f"event kind {kind!r} must be 1-64 characters")
        rec = EventRecord(
            time_utc=_aware("time_utc", time_utc or datetime.now(UTC)),
            kind=kind,
            text=text,
            data=dict(data) if data else None,
        )
        with self._session.begin() as s:
            s.add(rec)
            s.flush()
            return int(rec.id)

    def events(
        self, *, since: datetime | None = None, kind: str | None = None, limit: int = 1000
    ) -> list[dict[str, Any]]:
        """Events newest first."""
        q = sa.select(EventRecord).order_by(EventRecord.time_utc.desc(), EventRecord.id.desc()).limit(limit)
        if since is not None:
            q = q.where(EventRecord.time_utc >= _aware("since", since))
        if kind is not None:
            q = q.where(EventRecord.kind == kind)
        with self._session() as s:
            return [
                {"id": e.id, "time_utc": e.time_utc, "kind": e.kind, "text": e.text, "data": e.data}
                for e in s.scalars(q)
            ]

    # -- alerts
    def raise_alert(self, level: str, kind: str, text: str, *, raised_utc: datetime | None = None) -> int:
        """Raise an alert unless an identical one (level, kind, text) is active; returns its id."""
        if level not in ALERT_LEVELS:
            raise StoreError(f"alert level {level!r}: expected one of {', '.join(ALERT_LEVELS)}")
        with self._session.begin() as s:
            existing = s.scalars(
                sa.select(AlertRecord).where(
                    AlertRecord.level == level,
                    AlertRecord.kind == kind,
                    AlertRecord.text == text,
                    AlertRecord.cleared_utc.is_(None),
                )
            ).first()
            if existing is not None:
                return int(existing.id)
            rec = AlertRecord(
                level=level,
                kind=kind,
                text=text,
                raised_utc=_aware("raised_utc", raised_utc or datetime.now(UTC)),
            )
            s.add(rec)
            s.flush()
            return int(rec.id)

    def acknowledge_alert(self, alert_id: int, user: str, *, when: datetime | None = None) -> str:
        """Acknowledge an alert; returns ``"ok"``, ``"unknown"`` or ``"already"`` (page contract)."""
        if not user or len(user) > 100:
            raise StoreError(f"user {user!r} must be 1-100 characters")
        with self._session.begin() as s:
            rec = s.get(AlertRecord, int(alert_id))
            if rec is None:
                return "unknown"
            if rec.acknowledged_utc is not None:
                return "already"
            rec.acknowledged_utc = _aware("when", when or datetime.now(UTC))
            rec.acknowledged_by = user
            return "ok"

    def clear_alert(self, alert_id: int, *, when: datetime | None = None) -> bool:
        """Mark the condition behind an alert as gone; returns False for an unknown id."""
        with self._session.begin() as s:
            rec = s.get(AlertRecord, int(alert_id))
            if rec is None:
                return False
            if rec.cleared_utc is None:
                rec.cleared_utc = _aware("when", when or datetime.now(UTC))
            return True

    def active_alerts(self) -> list[dict[str, Any]]:
        """Alerts not cleared, or cleared but not yet acknowledged, newest first."""
        q = (
            sa.select(AlertRecord)
            .where(sa.or_(AlertRecord.cleared_utc.is_(None), AlertRecord.acknowledged_utc.is_(None)))
            .order_by(AlertRecord.raised_utc.desc(), AlertRecord.id.desc())
        )
        with self._session() as s:
            return [
                {
                    "id": a.id,
                    "level": a.level,
                    "kind": a.kind,
                    "text": a.text,
                    "raised_utc": _iso(a.raised_utc),
                    "acknowledged": a.acknowledged_utc is not None,
                    "acknowledged_utc": _iso(a.acknowledged_utc),
                    "acknowledged_by": a.acknowledged_by,
                    "cleared_utc": _iso(a.cleared_utc),
                }
                for a in s.scalars(q)
            ]

    # -- loading condition
    def set_condition(
        self,
        condition: str,
        *,
        set_by: str | None = None,
        note: str | None = None,
        when: datetime | None = None,
    ) -> int:
        """Record that ``condition`` is now the active loading condition."""
        if not condition or len(condition) > 200:
            raise StoreError(f"condition name {condition!r} must be 1-200 characters")
        rec = ConditionChange(
            time_utc=_aware("when", when or datetime.now(UTC)), condition=condition, set_by=set_by, note=note
        )
        with self._session.begin() as s:
            s.add(rec)
            s.flush()
            return int(rec.id)

    def active_condition(self) -> dict[str, Any] | None:
        """The latest condition change, or None."""
        with self._session() as s:
            r = s.scalars(
                sa.select(ConditionChange)
                .order_by(ConditionChange.time_utc.desc(), ConditionChange.id.desc())
                .limit(1)
            ).first()
            return (
                None
                if r is None
                else {"condition": r.condition, "time_utc": r.time_utc, "set_by": r.set_by, "note": r.note}
            )

    def condition_history(self) -> list[dict[str, Any]]:
        with self._session() as s:
            return [
                {"condition": r.condition, "time_utc": r.time_utc, "set_by": r.set_by, "note": r.note}
                for r in s.scalars(
                    sa.select(ConditionChange).order_by(ConditionChange.time_utc, ConditionChange.id)
                )
            ]

    # -- retention
    def purge_older_than(self, days: float, *, now: datetime | None = None) -> dict[str, int]:
        """Delete rows older than ``days`` (cycles with their estimate and advice, health snapshots, events,
        acknowledged and cleared alerts; the condition history keeps its latest entry). Returns counts."""
        if not (isinstance(days, int | float) and days > 0):
            raise StoreError(f"days must be > 0, got {days!r}")
        now = _aware("now", now or datetime.now(UTC))
        assert now is not None
        cutoff = now - timedelta(days=days)
        out: dict[str, int] = {}
        with self._session.begin() as s:
            old_ids = sa.select(AnalysisCycle.id).where(AnalysisCycle.finished_utc < cutoff)
            out["sea_state_estimates"] = s.execute(
                sa.delete(SeaStateRecord).where(SeaStateRecord.cycle_id.in_(old_ids))
            ).rowcount
            out["advice"] = s.execute(
                sa.delete(AdviceRecord).where(AdviceRecord.cycle_id.in_(old_ids))
            ).rowcount
            out["analysis_cycles"] = s.execute(
                sa.delete(AnalysisCycle).where(AnalysisCycle.finished_utc < cutoff)
            ).rowcount
            out["sensor_health"] = s.execute(
                sa.delete(SensorHealthSnapshot).where(SensorHealthSnapshot.time_utc < cutoff)
            ).rowcount
            out["events"] = s.execute(sa.delete(EventRecord).where(EventRecord.time_utc < cutoff)).rowcount
            out["alerts"] = s.execute(
                sa.delete(AlertRecord).where(
                    AlertRecord.raised_utc < cutoff,
                    AlertRecord.cleared_utc.is_not(None),
                    AlertRecord.acknowledged_utc.is_not(None),
                )
            ).rowcount
            latest = s.scalars(
                sa.select(ConditionChange.id)
                .order_by(ConditionChange.time_utc.desc(), ConditionChange.id.desc())
                .limit(1)
            ).first()
            q = sa.delete(ConditionChange).where(ConditionChange.time_utc < cutoff)
            if latest is not None:
                q = q.where(ConditionChange.id != latest)
            out["condition_history"] = s.execute(q).rowcount
        return out
