"""Append-only, hash-chained audit trail of every change made through the page or the command line.

Each entry records who (``actor``), when (``time_utc``), what (``action`` on ``target``), the old and
the new value (``old_value`` → ``new_value``, canonical JSON) and why (``reason``), plus where from
(``client``: the IP address of a web request, ``cli`` for the command line).

Hash chain
----------
Entries are numbered ``seq`` = 1, 2, 3, ... without gaps. Each one stores the hash of its predecessor
(``prev_hash``; 64 zeros for the first) and its own hash::

    hash = sha256( prev_hash + canonical_json(entry without its hash) )

where ``canonical_json`` is JSON with sorted keys, no spaces, UTF-8 and times as ISO 8601 with
microseconds and ``Z``. Changing, removing or re-ordering any stored entry breaks the chain from that
entry on; :func:`verify_chain` recomputes it and reports the first broken entry. The chain cannot fork:
``prev_hash`` and ``seq`` are unique, so two writers racing for the same head collide and one of them
retries (:func:`run_in_transaction`).

What the chain does not show by itself: entries cut off at the END (the last entries deleted), or a
chain recomputed from scratch by someone with write access to the database and this code. Against both,
note the head (``hwadvice audit verify`` prints its ``seq`` and hash) in the log book or send it ashore
now and then; ``hwadvice audit verify --head SEQ:HASH`` later proves that the noted entry is still there
unchanged.

Length limits
-------------
Every text of an entry has a length limit (:data:`TEXT_LIMITS`: actor, action, target, reason, client;
every text inside the old and new values, e.g. a limit's label or source, at most
:data:`MAX_VALUE_TEXT` characters, and each value at most :data:`MAX_VALUE_JSON` characters as JSON).
An over-long text is refused with :class:`AuditError` naming the field, its length and the limit; as the
entry is written in the same transaction as the change, the change is refused with it. Limits are a
project choice (a reason is a sentence or two; a label a line).

Trail and live state
--------------------
:func:`limit_state_from_trail` rebuilds every stored condition's limits from the trail alone
(``condition.create``, ``condition.copy``, ``limits.import``, ``limit.set``) and
:func:`compare_limit_state` compares that with the limits in the database: a limit edited directly in the
database, around the application, shows up as a difference although the chain itself is intact
(``hwadvice audit verify`` runs both checks).

Append only
-----------
The application cannot change or delete an entry:

* an ORM guard (:func:`_guard_flush`, a ``before_flush`` listener on every SQLAlchemy session, and a
  ``do_orm_execute`` listener for bulk statements) refuses modified or deleted :class:`AuditEntry`
  objects and ``UPDATE``/``DELETE`` statements on the table;
* database triggers refuse ``UPDATE`` and ``DELETE`` (SQLite: ``RAISE(ABORT)`` triggers; PostgreSQL: a
  row trigger for ``UPDATE``/``DELETE`` and a statement trigger for ``TRUNCATE``), so raw SQL through the
  application's connection is refused too. Someone who drops the triggers can still change rows; the
  chain then shows it.

Schema of the administration tables
-----------------------------------
The audit trail, the users (:mod:`onboard.admin.auth`) and the stored conditions and limits
(:mod:`onboard.admin.limitstore`) live in the same database as :mod:`onboard.core.store`, but in their own
metadata (:class:`AdminBase`) with their own ordered migration steps (:data:`ADMIN_MIGRATIONS`,
recorded in the table ``admin_schema_version``): ``onboard.core.store.MIGRATIONS`` is a closed tuple with no
way to register extra steps from another module. Same rules as there: a released step is never edited,
a change of the models gets a new step. :func:`migrate_admin` applies pending steps; it is idempotent.

References
----------
.. [1] NIST FIPS 180-4 (2015). *Secure Hash Standard (SHS)* (SHA-256).
.. [2] RFC 8785 (2020). *JSON Canonicalization Scheme (JCS)* - the idea of hashing a canonical JSON
   form; this module uses the simpler sorted-keys form of Python's ``json`` (all numbers here are
   produced by Python, so their text form is stable).
.. [3] SQLite documentation, "CREATE TRIGGER" (``RAISE(ABORT, ...)``); PostgreSQL 15 documentation,
   "CREATE TRIGGER" and "PL/pgSQL - Errors and Messages".
"""

from __future__ import annotations

import csv
import hashlib
import io
import ast
import json
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from datetime import UTC, datetime
from typing import Any, TypeVar

import sqlalchemy as sa
from sqlalchemy import event
from sqlalchemy.engine import Engine
from sqlalchemy.orm import ORMExecuteState, Session, sessionmaker

from onboard.admin.tables import (
    ADMIN_MIGRATIONS,
    AUDIT_TABLE,
    AdminBase,
    AuditEntry,
    AuditError,
    admin_schema_version,
    iso_utc,
    migrate_admin,
)

__all__ = [
    "ADMIN_MIGRATIONS",
    "AdminBase",
    "AuditEntry",
    "AuditError",
    "ChainReport",
    "GENESIS_HASH",
    "admin_schema_version",
    "append",
    "canonical_json",
    "entries",
    "entry_hash",
    "export_csv",
    "export_json",
    "migrate_admin",
    "run_in_transaction",
    "verify_chain",
    "check_text_lengths",
    "limit_state_from_trail",
    "compare_limit_state",
]

GENESIS_HASH = "0" * 64

TEXT_LIMITS = {"actor": 100, "action": 64, "target": 400, "reason": 1000, "client": 100}
"""Most characters of each text field of an entry (module docstring)."""

MAX_VALUE_TEXT = 1000
"""Most characters of any text inside ``old`` / ``new`` (a limit's label or source, a name)."""

MAX_VALUE_JSON = 200_000
"""Most characters of ``old`` / ``new`` as canonical JSON (a whole limit set is a few kB)."""


def check_text_lengths(**fields: Any) -> None:
    """Refuse over-long texts (:data:`TEXT_LIMITS`; texts inside ``old`` / ``new``); raises AuditError."""
    for name, value in fields.items():
        if name in ("old", "new"):
            _check_value_texts(name, value)
            continue
        limit = TEXT_LIMITS[name]
        if isinstance(value, str) and len(value) > limit:
            raise AuditError(f"{name}: {len(value)} characters; allowed: at most {limit}")


def _check_value_texts(where: str, value: Any) -> None:
    if isinstance(value, str):
        if len(value) > MAX_VALUE_TEXT:
            raise AuditError(f"{where}: {len(value)} characters; allowed: at most {MAX_VALUE_TEXT}")
    elif isinstance(value, dict):
        for k, v in value.items():
            _check_value_texts(f"{where}.{k}", v)
    elif isinstance(value, list | tuple):
        for i, v in enumerate(value):
            _check_value_texts(f"{where}[{i}]", v)
"""``prev_hash`` of the first entry."""

_FIELDS = (
    "seq",
    "time_utc",
    "actor",
    "action",
    "target",
    "old_value",
    "new_value",
    "reason",
    "client",
    "prev_hash",
)


# ------------------------------------------------------------------------------------------- hashing


def canonical_json(value: Any) -> str:
    """Canonical JSON text: sorted keys, no spaces, non-ASCII kept, NaN/Infinity refused."""
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


def entry_hash(row: dict[str, Any]) -> str:
    """SHA-256 (hex) of ``prev_hash`` + canonical JSON of the entry's fields without ``hash``.

    Parameters
    ----------
    row : dict
        ``seq``, ``time_utc`` (aware datetime), ``actor``, ``action``, ``target``, ``old_value``,
        ``new_value`` (JSON text), ``reason``, ``client``, ``prev_hash``.

    References
    ----------
    NIST FIPS 180-4 (SHA-256), module docstring.
    """
    body = {k: row[k] for k in _FIELDS}
    body["time_utc"] = iso_utc(row["time_utc"])
    return hashlib.sha256((row["prev_hash"] + canonical_json(body)).encode("utf-8")).hexdigest()


# ------------------------------------------------------------------------------------------- guard


@event.listens_for(Session, "before_flush")
def _guard_flush(session: Session, _ctx: Any, _instances: Any) -> None:
    """Refuse changed or deleted audit entries in any ORM session."""
    for obj in session.deleted:
        if isinstance(obj, AuditEntry):
            raise AuditError(f"audit entry {obj.seq} cannot be deleted: the audit trail is append-only")
    for obj in session.dirty:
        if isinstance(obj, AuditEntry) and session.is_modified(obj):
            raise AuditError(f"audit entry {obj.seq} cannot be changed: the audit trail is append-only")


@event.listens_for(Session, "do_orm_execute")
def _guard_bulk(state: ORMExecuteState) -> None:
    """Refuse ORM-enabled bulk UPDATE/DELETE statements on the audit table."""
    if state.is_update or state.is_delete:
        table = getattr(state.statement, "table", None)
        if table is not None and getattr(table, "name", None) == AUDIT_TABLE:
            raise AuditError("UPDATE/DELETE on the audit trail refused: it is append-only")


# ------------------------------------------------------------------------------------------- writing


def _client_text(client: str | None) -> str:
    return (client or "unknown")[:100]


def append(
    session: Session,
    *,
    actor: str,
    action: str,
    target: str,
    old: Any = None,
    new: Any = None,
    reason: str = "",
    client: str | None = None,
    now: datetime | None = None,
) -> AuditEntry:
    """Append one entry to the chain inside the caller's transaction.

    Call it in the same transaction as the change it records, so that the change and its entry are
    committed together or not at all. Concurrent writers: PostgreSQL takes a table lock that
    serialises appenders; on SQLite a racing writer fails on the unique ``seq``/``prev_hash`` and
    :func:`run_in_transaction` retries the whole transaction.

    Parameters
    ----------
    session : sqlalchemy.orm.Session
        In a transaction.
    actor : str
        User name (``cli:<name>`` from the command line).
    action : str
        What was done, e.g. ``limit.set``, ``condition.activate``, ``user.add``.
    target : str
        What it was done to, e.g. ``condition 'light' limit roll_rms``.
    old, new : JSON-serialisable
        Value before and after (None when not applicable).
    reason : str
        Why (free text from the person making the change).
    client : str, optional
        Where from (IP address or ``cli``).
    now : datetime, optional
        Time of the entry (aware UTC); default now.

    Returns
    -------
    AuditEntry
    """
    if not actor or not action or not target:
        raise AuditError(f"audit entry needs actor, action and target; got {actor!r}, {action!r}, {target!r}")
    check_text_lengths(actor=actor, action=action, target=target, reason=reason, old=old, new=new)
    for name, value in (("old", old), ("new", new)):
        if len(canonical_json(value)) > MAX_VALUE_JSON:
            raise AuditError(f"{name}: value too large for the audit trail; allowed: {MAX_VALUE_JSON} characters")
    if session.get_bind().dialect.name == "postgresql":
        session.execute(sa.text(f"LOCK TABLE {AUDIT_TABLE} IN SHARE ROW EXCLUSIVE MODE"))
    head = session.execute(
        sa.select(AuditEntry.seq, AuditEntry.hash).order_by(AuditEntry.seq.desc()).limit(1)
    ).first()
    when = (now or datetime.now(UTC)).astimezone(UTC)
    row = {
        "seq": 1 if head is None else int(head.seq) + 1,
        "time_utc": when,
        "actor": actor[:100],
        "action": action[:64],
        "target": target[:400],
        "old_value": canonical_json(old),
        "new_value": canonical_json(new),
        "reason": reason or "",
        "client": _client_text(client),
        "prev_hash": GENESIS_HASH if head is None else head.hash,
    }
    entry = AuditEntry(**row, hash=entry_hash(row))
    session.add(entry)
    session.flush()
    return entry


T = TypeVar("T")


def _retryable(exc: Exception) -> bool:
    if isinstance(exc, sa.exc.IntegrityError):
        return True
    if isinstance(exc, sa.exc.OperationalError):
        text = str(exc.orig).lower()
        return "locked" in text or "busy" in text or "deadlock" in text or "could not serialize" in text
    return False


def run_in_transaction(engine: Engine, work: Callable[[Session], T], *, attempts: int = 6) -> T:
    """Run ``work(session)`` in one transaction; retry when a concurrent writer won the race.

    Retries (with a short growing pause) on unique-key collisions and "database is locked" errors,
    which is how two audit appends racing for the same chain head show up. ``work`` must therefore
    check its own preconditions inside the transaction (it may run more than once).

    Parameters
    ----------
    engine : Engine
    work : callable
        Receives a :class:`~sqlalchemy.orm.Session` inside ``begin()``; its return value is returned.
    attempts : int
        Tries before the last error is raised.
    """
    factory = sessionmaker(engine, expire_on_commit=False)
    for i in range(attempts):
        try:
            with factory.begin() as session:
                return work(session)
        except (sa.exc.IntegrityError, sa.exc.OperationalError) as exc:
            if i == attempts - 1 or not _retryable(exc):
                raise
            time.sleep(0.01 * (2**i))
    raise AssertionError("unreachable")  # pragma: no cover


def record(engine: Engine, **kw: Any) -> dict[str, Any]:
    """Append one entry in its own transaction (for events with no other change); returns it as a dict."""
    return run_in_transaction(engine, lambda s: append(s, **kw).as_dict())


# ------------------------------------------------------------------------------------------- reading


def entries(
    engine: Engine, *, since_seq: int = 0, limit: int | None = None, newest_first: bool = False
) -> list[dict[str, Any]]:
    """Audit entries as dicts (see :meth:`AuditEntry.as_dict`)."""
    q = sa.select(AuditEntry).where(AuditEntry.seq > since_seq)
    q = q.order_by(AuditEntry.seq.desc() if newest_first else AuditEntry.seq)
    if limit is not None:
        q = q.limit(limit)
    with Session(engine) as s:
        return [e.as_dict() for e in s.scalars(q)]


@dataclass(frozen=True)
class ChainReport:
    """Result of :func:`verify_chain`.

    Attributes
    ----------
    ok : bool
        The whole chain is intact (and the expected head, if given, was found unchanged).
    count : int
        Entries checked.
    head_seq : int
        ``seq`` of the last entry (0 when empty).
    head_hash : str
        Hash of the last entry (:data:`GENESIS_HASH` when empty).
    first_broken_seq : int or None
        The first entry that does not verify.
    problem : str or None
        What is wrong with it, in plain words.
    """

    ok: bool
    count: int
    head_seq: int
    head_hash: str
    first_broken_seq: int | None = None
    problem: str | None = None

    def text(self) -> str:
        if self.ok:
            return f"audit trail intact: {self.count} entries, head {self.head_seq}:{self.head_hash}"
        return f"audit trail BROKEN at entry {self.first_broken_seq}: {self.problem}"


def verify_chain(engine: Engine, *, expect_head: tuple[int, str] | None = None) -> ChainReport:
    """Recompute the hash chain and report the first entry that does not verify.

    Checks per entry, in ``seq`` order: ``seq`` follows its predecessor without a gap, ``prev_hash``
    equals the predecessor's stored hash, and the stored hash equals the recomputed one.

    Parameters
    ----------
    engine : Engine
    expect_head : (int, str), optional
        A ``(seq, hash)`` noted earlier: it must still be in the chain with that hash (detects entries
        cut off at the end, or a chain rebuilt from scratch).

    Returns
    -------
    ChainReport
    """
    prev_hash = GENESIS_HASH
    prev_seq = 0
    count = 0
    found_expected = expect_head is None
    with engine.connect() as conn:
        t = AuditEntry.__table__
        for r in conn.execute(sa.select(t).order_by(t.c.seq)).mappings():
            row = dict(r)
            seq = int(row["seq"])
            time_utc = row["time_utc"]
            if isinstance(time_utc, datetime) and time_utc.tzinfo is None:
                time_utc = time_utc.replace(tzinfo=UTC)
            row["time_utc"] = time_utc
            problem = None
            if seq != prev_seq + 1:
                problem = (
                    f"entry {seq} follows entry {prev_seq}: entries {prev_seq + 1}..{seq - 1} are missing"
                )
            elif row["prev_hash"] != prev_hash:
                problem = (
                    f"prev_hash {row['prev_hash'][:16]}... does not match the hash of entry {prev_seq} "
                    f"({prev_hash[:16]}...)"
                )
            else:
                recomputed = entry_hash(row)
                if recomputed != row["hash"]:
                    problem = (
                        f"content changed after it was written (stored hash {row['hash'][:16]}..., "
                        f"recomputed {recomputed[:16]}...)"
                    )
            if problem is not None:
                return ChainReport(False, count, prev_seq, prev_hash, seq, problem)
            if expect_head is not None and seq == expect_head[0]:
                if row["hash"] != expect_head[1]:
                    return ChainReport(
                        False,
                        count,
                        prev_seq,
                        prev_hash,
                        seq,
                        f"the noted head {expect_head[0]}:{expect_head[1][:16]}... now has hash "
                        f"{row['hash'][:16]}...: the chain was rebuilt",
                    )
                found_expected = True
            prev_hash, prev_seq = row["hash"], seq
            count += 1
    if not found_expected:
        assert expect_head is not None
        return ChainReport(
            False,
            count,
            prev_seq,
            prev_hash,
            expect_head[0],
            f"the noted head entry {expect_head[0]} is gone (the chain ends at {prev_seq}): "
            "entries were removed from the end",
        )
    return ChainReport(True, count, prev_seq, prev_hash)


_EXPORT_COLUMNS = (
    "seq",
    "time_utc",
    "actor",
    "action",
    "target",
    "old",
    "new",
    "reason",
    "client",
    "prev_hash",
    "hash",
)


def export_json(rows: Iterable[dict[str, Any]]) -> str:
    """Entries as a JSON array (one object per entry, ``old``/``new`` as JSON values)."""
    return json.dumps(list(rows), ensure_ascii=False, indent=1, allow_nan=False) + "\n"


def export_csv(rows: Iterable[dict[str, Any]]) -> str:
    """Entries as CSV (``old``/``new`` as canonical JSON text in their cells)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(_EXPORT_COLUMNS)
    for r in rows:
        w.writerow([canonical_json(r[c]) if c in ("old", "new") else r[c] for c in _EXPORT_COLUMNS])
    return buf.getvalue()




# ------------------------------------------------------------------------------------------- trail vs live

def _target(text: str) -> tuple[str | None, str | None]:
    """``condition 'NAME'`` or ``condition 'NAME' limit 'KEY'`` (names as Python reprs) -> (name, key)."""
    if not text.startswith("condition "):
        return None, None
    body, key = text[len("condition ") :], None
    if " limit " in body:
        head, _, tail = body.rpartition(" limit ")
        try:
            key = ast.literal_eval(tail)
            body = head
        except (ValueError, SyntaxError):
            key = None
    try:
        name = ast.literal_eval(body)
    except (ValueError, SyntaxError):
        return None, None
    return (name, key) if isinstance(name, str) else (None, None)

_LIMIT_KEYS = ("key", "criterion", "statistic", "value", "unit", "exposure_h", "point", "label", "source")


def _normal_limit(lim: dict[str, Any]) -> dict[str, Any]:
    out = {k: lim.get(k) for k in _LIMIT_KEYS}
    out["label"] = out["label"] or ""
    out["source"] = out["source"] or ""
    if isinstance(out["value"], int) and not isinstance(out["value"], bool):
        out["value"] = float(out["value"])
    return out


def limit_state_from_trail(rows: Iterable[dict[str, Any]]) -> tuple[dict[str, dict[str, dict]], list[str]]:
    """Each stored condition's limits (key -> fields) as the trail says they are now.

    Returns the state and a list of entries that could not be applied (e.g. a copy of a condition the
    trail never created), each as one line.
    """
    state: dict[str, dict[str, dict]] = {}
    problems: list[str] = []

    def limits_of(mapping: Any) -> dict[str, dict]:
        lims = mapping.get("limits", []) if isinstance(mapping, dict) else []
        return {str(x.get("key")): _normal_limit(x) for x in lims if isinstance(x, dict)}

    for r in rows:
        action, target, new = r.get("action"), str(r.get("target", "")), r.get("new")
        name, key = _target(target)
        if name is None:
            continue
        if action == "condition.create" and key is None and isinstance(new, dict):
            state[name] = limits_of(new.get("limit_set"))
        elif action == "condition.copy" and key is None and isinstance(new, dict):
            src = new.get("copied_from")
            if src in state:
                state[name] = {k: dict(v) for k, v in state[src].items()}
            else:
                problems.append(f"entry {r.get('seq')}: copy of {src!r}, which the trail never created")
        elif action == "limits.import" and key is None:
            state[name] = limits_of(new)
        elif action == "limit.set" and key is not None:
            if name not in state or key not in state[name]:
                problems.append(f"entry {r.get('seq')}: change of {target}, which the trail never created")
            elif isinstance(new, dict):
                state[name][key] = _normal_limit({**state[name][key], **new})
    return state, problems


def compare_limit_state(trail: dict[str, dict[str, dict]], live: dict[str, list[dict]]) -> list[str]:
    """Differences between the limits the trail records and those in the database, one line each."""
    out: list[str] = []
    for name in sorted(set(trail) | set(live)):
        if name not in trail:
            out.append(f"condition {name!r} is in the database but the trail never created it")
            continue
        if name not in live:
            out.append(f"condition {name!r} is in the trail but not in the database")
            continue
        have = {str(x.get("key")): _normal_limit(x) for x in live[name]}
        want = trail[name]
        for key in sorted(set(want) | set(have)):
            if key not in have:
                out.append(f"condition {name!r} limit {key!r}: in the trail, missing in the database")
            elif key not in want:
                out.append(f"condition {name!r} limit {key!r}: in the database, not in the trail")
            else:
                for f in _LIMIT_KEYS:
                    if have[key][f] != want[key][f]:
                        out.append(
                            f"condition {name!r} limit {key!r}: {f} is {have[key][f]!r} in the database "
                            f"but {want[key][f]!r} in the trail (changed around the application)"
                        )
    return out
