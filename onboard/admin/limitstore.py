"""Loading / cargo conditions and their limit sets, stored in the database and edited with versions.

A *stored condition* has a name, the vessel loading condition it is based on (``base_condition``: the
draft, GM, roll period and RAO table of the vessel file, :mod:`onboard.formats.vessel`), and a limit set in the
schema of :mod:`advisor.limits` (the same content as a ``config/limits/*.toml`` file). Limits are stored
one row each, so that two people editing different limits do not disturb each other.

Every change is validated by :func:`advisor.limits.parse_limit_set` (and, with a vessel, by
:meth:`advisor.limits.LimitSet.resolve_points`) before it is written, so a stored set is always one the
advisor accepts, and error messages are the parser's (condition, key path, value, what is allowed).
Every change is written together with its audit entry (:mod:`onboard.admin.audit`) in one transaction.

Optimistic concurrency
----------------------
Each limit row has a ``version`` that goes up by one on every change; each condition has a ``version``
that goes up on any change of its set. A change names the version it was made from; the database
update is ``UPDATE ... WHERE id = :id AND version = :version``, so of two editors who both started from
version 3 only the first one's change is written. The second gets :class:`VersionConflict` carrying the
current stored limit (HTTP 409 on the page) and nothing is lost silently.

The live service uses :meth:`LimitStore.active_limit_set` (the limit set of a condition, parsed to SI)
or :meth:`LimitStore.engine_for` (an :class:`onboard.core.engine.Engine` for the condition), so an edited
limit applies from the next analysis cycle on.

The active condition is recorded in ``onboard.core.store``'s condition history (model
:class:`onboard.core.store.ConditionChange`), in the same transaction as its audit entry.

Limits set here are operational choices for the advice; they do not replace the ship's approved
stability information, loading computer, cargo securing manual or seamanship. The master decides.

References
----------
.. [1] Kung, H. T. and Robinson, J. T. (1981). On optimistic methods for concurrency control.
   *ACM Transactions on Database Systems* 6(2), 213-226.
.. [2] RFC 9110 (2022). *HTTP Semantics*, §8.8.3 (ETag), §13.1.1 (If-Match), §15.5.10 (409 Conflict).
"""

from __future__ import annotations

import copy
import math
import tomllib
from collections.abc import Mapping
from datetime import UTC, datetime
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Engine
from sqlalchemy.orm import Session

from advisor.limits import LimitSet, LimitSetError, limit_set_to_mapping, parse_limit_set
from onboard.admin import audit
from onboard.admin.tables import StoredCondition, StoredLimit
from onboard.core.store import ConditionChange, Store
from onboard.formats.limitsfile import LimitsFileError, dumps_limit_set, loads_limit_set

__all__ = [
    "EDITABLE_FIELDS",
    "LimitSetError",
    "LimitStore",
    "LimitStoreError",
    "StoredCondition",
    "StoredLimit",
    "VersionConflict",
    "coerce_limit_fields",
]

EDITABLE_FIELDS = ("value", "unit", "exposure_h", "point", "label", "source")
"""Fields of one limit that can be edited (criterion and statistic define the limit and stay)."""

_LIMIT_FIELDS = ("key", "criterion", "statistic", "value", "unit", "exposure_h", "point", "label", "source")


class LimitStoreError(ValueError):
    """Bad request to the store (unknown condition or limit, duplicate name, missing reason)."""


class VersionConflict(Exception):
    """The limit (or condition) changed since the version the change was made from.

    Attributes
    ----------
    current : dict
        The stored limit (or condition summary) as it is now.
    expected_version : int
        The version the change was made from.
    """

    def __init__(self, what: str, expected_version: int, current: dict[str, Any]):
        self.current = current
        self.expected_version = expected_version
        super().__init__(
            f"{what} was changed by someone else (now version {current.get('version')}, "
            f"your change was made from version {expected_version}); "
            "nothing was written: look at the current value and make your change again"
        )


def _limit_dict(lim: StoredLimit) -> dict[str, Any]:
    return {
        "id": lim.id,
        "position": lim.position,
        **{k: getattr(lim, k) for k in _LIMIT_FIELDS},
        "version": lim.version,
    }


def _limit_mapping(lim: Mapping[str, Any]) -> dict[str, Any]:
    """One ``[[limits]]`` table as the parser wants it (absent optional keys left out)."""
    out = {k: lim[k] for k in ("key", "criterion", "statistic", "value", "unit")}
    if lim.get("exposure_h") is not None:
        out["exposure_h"] = lim["exposure_h"]
    if lim.get("point") is not None:
        out["point"] = lim["point"]
    out["label"] = lim.get("label") or ""
    out["source"] = lim.get("source") or ""
    return out


def coerce_limit_fields(changes: Mapping[str, Any], label: str, index: int) -> dict[str, Any]:
    """Turn edited fields (strings from a form, or JSON values) into the types of the limit schema.

    Empty ``exposure_h`` or ``point`` means "none". Numbers must be finite.

    Raises
    ------
    LimitSetError
        A field that is not editable, or a number that is not a number (key path ``limits[i].<field>``).
    """
    out: dict[str, Any] = {}
    for name, raw in changes.items():
        key = f"limits[{index}].{name}"
        if name not in EDITABLE_FIELDS:
            raise LimitSetError(
                label, key, raw, "one of " + ", ".join(EDITABLE_FIELDS), "not an editable field"
            )
        if name in ("value", "exposure_h"):
            if name == "exposure_h" and (raw is None or (isinstance(raw, str) and not raw.strip())):
                out[name] = None
                continue
            if isinstance(raw, bool):
                raise LimitSetError(label, key, raw, "a number", "not a number")
            try:
                x = float(raw.strip()) if isinstance(raw, str) else float(raw)
            except (TypeError, ValueError):
                raise LimitSetError(label, key, raw, "a number", "not a number") from None
            if not math.isfinite(x):
                raise LimitSetError(label, key, raw, "a finite number", "not a finite number")
            out[name] = x
        elif name == "point":
            out[name] = None if raw is None or not str(raw).strip() else str(raw).strip()
        else:
            out[name] = "" if raw is None else str(raw).strip()
    return out


class LimitStore:
    """Stored conditions and limit sets (module docstring).

    Parameters
    ----------
    engine : Engine
        The onboard database (:func:`onboard.core.store.make_engine`).
    vessel : onboard.formats.vessel.Vessel, optional
        The vessel: its point names validate the limits' points and its loading conditions the
        ``base_condition`` of each stored condition. Without it those two checks are skipped.
    migrate : bool
        Apply pending store and administration migrations first.
    """

    def __init__(self, engine: Engine, vessel=None, *, migrate: bool = True):
        self.engine = engine
        self.vessel = vessel
        if migrate:
            Store(engine)  # the condition history lives in the store's tables
            audit.migrate_admin(engine)

    # ----------------------------------------------------------------------------- validation
    def _label(self, name: str) -> str:
        return f"condition {name!r}"

    def _vessel_points(self) -> list[str] | None:
        return None if self.vessel is None else list(self.vessel.points_mapping())

    def parse(self, mapping: Mapping[str, Any], name: str) -> LimitSet:
        """Validate a limit-set mapping for condition ``name`` (parser, then points against the vessel)."""
        ls = parse_limit_set(mapping, self._label(name), vessel_points=self._vessel_points())
        if self.vessel is not None:
            ls.resolve_points(self.vessel.points_mapping())
        return ls

    def _check_base(self, base_condition: str) -> None:
        if self.vessel is not None:
            known = [c.name for c in self.vessel.conditions]
            if base_condition not in known:
                raise LimitStoreError(
                    f"base condition {base_condition!r}: not a loading condition of the vessel "
                    f"{self.vessel.name!r}; known: {', '.join(map(repr, known))}"
                )

    @staticmethod
    def _need_reason(reason: str | None) -> str:
        if not reason or not reason.strip():
            raise LimitStoreError("reason: say why the change is made (it is kept in the audit trail)")
        return reason.strip()

    # ----------------------------------------------------------------------------- reading
    @staticmethod
    def _get_condition(s: Session, name: str) -> StoredCondition:
        c = s.scalars(sa.select(StoredCondition).where(StoredCondition.name == name)).first()
        if c is None:
            known = ", ".join(
                repr(n) for n in s.scalars(sa.select(StoredCondition.name).order_by(StoredCondition.name))
            )
            raise LimitStoreError(f"no stored condition {name!r}; known: {known or 'none'}")
        return c

    @staticmethod
    def _limits(s: Session, cond_id: int) -> list[StoredLimit]:
        return list(
            s.scalars(
                sa.select(StoredLimit)
                .where(StoredLimit.condition_id == cond_id)
                .order_by(StoredLimit.position)
            )
        )

    @staticmethod
    def _cond_dict(c: StoredCondition, limits: list[StoredLimit] | None = None) -> dict[str, Any]:
        out = {
            "id": c.id,
            "name": c.name,
            "base_condition": c.base_condition,
            "description": c.settings.get("description", ""),
            "version": c.version,
            "copied_from": c.copied_from,
            "created_utc": c.created_utc,
            "created_by": c.created_by,
            "updated_utc": c.updated_utc,
            "updated_by": c.updated_by,
            "settings": copy.deepcopy(c.settings),
        }
        if limits is not None:
            out["limits"] = [_limit_dict(x) for x in limits]
        return out

    def conditions(self) -> list[dict[str, Any]]:
        """All stored conditions with their limits, by name."""
        with Session(self.engine) as s:
            return [
                self._cond_dict(c, self._limits(s, c.id))
                for c in s.scalars(sa.select(StoredCondition).order_by(StoredCondition.name))
            ]

    def condition(self, name: str) -> dict[str, Any]:
        """One stored condition with its limits (``limits``: list of dicts with ``id`` and ``version``)."""
        with Session(self.engine) as s:
            c = self._get_condition(s, name)
            return self._cond_dict(c, self._limits(s, c.id))

    def limit(self, name: str, key: str) -> dict[str, Any]:
        """One stored limit of a condition (with its ``version``)."""
        for lim in self.condition(name)["limits"]:
            if lim["key"] == key:
                return lim
        raise LimitStoreError(f"condition {name!r}: no limit with key {key!r}")

    @staticmethod
    def _mapping_of(c: StoredCondition, limits: list[StoredLimit]) -> dict[str, Any]:
        m: dict[str, Any] = {"schema_version": 1, "name": c.name}
        m.update(copy.deepcopy(c.settings))
        m["limits"] = [_limit_mapping(_limit_dict(x)) for x in limits]
        return m

    def mapping(self, name: str) -> dict[str, Any]:
        """The condition's limit set as a mapping in the TOML schema (name = the condition's name)."""
        with Session(self.engine) as s:
            c = self._get_condition(s, name)
            return self._mapping_of(c, self._limits(s, c.id))

    def limit_set(self, name: str) -> LimitSet:
        """The condition's limit set, validated and in SI (:class:`advisor.limits.LimitSet`)."""
        return self.parse(self.mapping(name), name)

    def active_limit_set(self, condition: str) -> LimitSet:
        """The limit set the service uses for ``condition`` in its next cycle (same as :meth:`limit_set`)."""
        return self.limit_set(condition)

    def export_toml(self, name: str) -> str:
        """The condition's limit set as TOML text, readable by :func:`onboard.formats.limitsfile.read_limit_set`."""
        return dumps_limit_set(self.limit_set(name))

    def revision(self, name: str) -> int:
        """The condition's version (goes up on every change of its limit set): a cache key for engines."""
        with Session(self.engine) as s:
            return int(self._get_condition(s, name).version)

    def engine_inputs(self, name: str) -> tuple[str, LimitSet, int]:
        """``(base loading condition, limit set, version)`` of a stored condition, read in one go: what
        the service needs to build (or keep) its engine for the next cycle."""
        with Session(self.engine) as s:
            c = self._get_condition(s, name)
            mapping = self._mapping_of(c, self._limits(s, c.id))
            base, version = c.base_condition, int(c.version)
        return base, self.parse(mapping, name), version

    def engine_for(self, name: str, settings=None):
        """An :class:`onboard.core.engine.Engine` for the stored condition (its base loading condition and its
        current limit set). Needs the vessel."""
        from onboard.core.engine import Engine

        if self.vessel is None:
            raise LimitStoreError("engine_for needs the vessel (LimitStore(engine, vessel))")
        cond = self.condition(name)
        return Engine(self.vessel, cond["base_condition"], limit_set=self.limit_set(name), settings=settings)

    # ----------------------------------------------------------------------------- active condition
    def active_condition(self) -> dict[str, Any] | None:
        """The active condition from the store's condition history, or None."""
        return Store(self.engine, migrate=False).active_condition()

    def set_active(
        self, name: str, *, actor: str, reason: str, client: str = "cli", now: datetime | None = None
    ) -> dict[str, Any]:
        """Make a stored condition the active one (condition history + audit, one transaction)."""
        reason = self._need_reason(reason)
        when = now or datetime.now(UTC)

        def work(s: Session) -> dict[str, Any]:
            self._get_condition(s, name)
            last = s.scalars(
                sa.select(ConditionChange)
                .order_by(ConditionChange.time_utc.desc(), ConditionChange.id.desc())
                .limit(1)
            ).first()
            old = None if last is None else last.condition
            s.add(ConditionChange(time_utc=when, condition=name, set_by=actor[:100], note=reason))
            audit.append(
                s,
                actor=actor,
                action="condition.activate",
                target="active condition",
                old=old,
                new=name,
                reason=reason,
                client=client,
                now=when,
            )
            return {"condition": name, "previous": old, "time_utc": when, "set_by": actor}

        return audit.run_in_transaction(self.engine, work)

    # ----------------------------------------------------------------------------- changes
    def _insert(
        self,
        s: Session,
        name: str,
        base: str,
        ls_mapping: Mapping[str, Any],
        *,
        actor: str,
        copied_from: str | None,
        now: datetime,
    ) -> StoredCondition:
        if s.scalars(sa.select(StoredCondition).where(StoredCondition.name == name)).first() is not None:
            raise LimitStoreError(f"condition {name!r} already exists; choose another name")
        settings = {
            k: copy.deepcopy(v)
            for k, v in ls_mapping.items()
            if k not in ("schema_version", "name", "limits")
        }
        c = StoredCondition(
            name=name,
            base_condition=base,
            settings=settings,
            version=1,
            copied_from=copied_from,
            created_utc=now,
            created_by=actor[:100],
            updated_utc=now,
            updated_by=actor[:100],
        )
        s.add(c)
        s.flush()
        self._insert_limits(s, c, ls_mapping["limits"])
        return c

    @staticmethod
    def _insert_limits(s: Session, c: StoredCondition, limits: list[Mapping[str, Any]]) -> None:
        for i, lim in enumerate(limits):
            s.add(
                StoredLimit(
                    condition_id=c.id, position=i, version=1, **{k: lim.get(k) for k in _LIMIT_FIELDS}
                )
            )
        s.flush()

    def create(
        self,
        name: str,
        base_condition: str,
        limit_set: LimitSet | Mapping[str, Any],
        *,
        actor: str,
        reason: str,
        client: str = "cli",
    ) -> dict[str, Any]:
        """Create a condition from a limit set (a :class:`LimitSet` or a mapping in the TOML schema)."""
        reason = self._need_reason(reason)
        if not name or len(name) > 200 or not name.strip():
            raise LimitStoreError(f"condition name {name!r}: 1 to 200 characters")
        self._check_base(base_condition)
        ls = limit_set if isinstance(limit_set, LimitSet) else self.parse(limit_set, name)
        mapping = limit_set_to_mapping(ls)
        mapping["name"] = name
        self.parse(mapping, name)  # the stored form round-trips

        def work(s: Session) -> dict[str, Any]:
            now = datetime.now(UTC)
            c = self._insert(s, name, base_condition, mapping, actor=actor, copied_from=None, now=now)
            audit.append(
                s,
                actor=actor,
                action="condition.create",
                target=f"condition {name!r}",
                old=None,
                new={"base_condition": base_condition, "limit_set": mapping},
                reason=reason,
                client=client,
                now=now,
            )
            return self._cond_dict(c, self._limits(s, c.id))

        return audit.run_in_transaction(self.engine, work)

    def copy_condition(
        self,
        source: str,
        new_name: str,
        *,
        actor: str,
        reason: str,
        client: str = "cli",
        base_condition: str | None = None,
    ) -> dict[str, Any]:
        """Create ``new_name`` as a copy of ``source`` (its limits; its base condition unless given)."""
        reason = self._need_reason(reason)
        if not new_name or len(new_name) > 200 or not new_name.strip():
            raise LimitStoreError(f"condition name {new_name!r}: 1 to 200 characters")
        if base_condition is not None:
            self._check_base(base_condition)

        def work(s: Session) -> dict[str, Any]:
            src = self._get_condition(s, source)
            mapping = self._mapping_of(src, self._limits(s, src.id))
            mapping["name"] = new_name
            base = base_condition or src.base_condition
            now = datetime.now(UTC)
            c = self._insert(s, new_name, base, mapping, actor=actor, copied_from=source, now=now)
            audit.append(
                s,
                actor=actor,
                action="condition.copy",
                target=f"condition {new_name!r}",
                old=None,
                new={"copied_from": source, "base_condition": base},
                reason=reason,
                client=client,
                now=now,
            )
            return self._cond_dict(c, self._limits(s, c.id))

        return audit.run_in_transaction(self.engine, work)

    def set_limit(
        self,
        name: str,
        key: str,
        changes: Mapping[str, Any],
        *,
        expected_version: int,
        actor: str,
        reason: str,
        client: str = "cli",
    ) -> dict[str, Any]:
        """Change fields of one limit, made from ``expected_version`` of it.

        Parameters
        ----------
        name : str
            Stored condition.
        key : str
            Limit key.
        changes : mapping
            Any of :data:`EDITABLE_FIELDS`; strings are converted (:func:`coerce_limit_fields`).
        expected_version : int
            The limit's version the change was made from.
        actor, reason, client : str
            Who, why, where from (audit trail).

        Returns
        -------
        dict
            The stored limit after the change (with its new version).

        Raises
        ------
        VersionConflict
            The limit changed since ``expected_version`` (``.current`` holds it).
        advisor.limits.LimitSetError
            The changed set does not validate (parser message: condition, key path, value, allowed).
        LimitStoreError
            Unknown condition or limit, no reason, nothing to change.
        """
        reason = self._need_reason(reason)
        if not changes:
            raise LimitStoreError("nothing to change: give at least one of " + ", ".join(EDITABLE_FIELDS))

        def work(s: Session) -> dict[str, Any]:
            c = self._get_condition(s, name)
            limits = self._limits(s, c.id)
            idx = next((i for i, x in enumerate(limits) if x.key == key), None)
            if idx is None:
                raise LimitStoreError(f"condition {name!r}: no limit with key {key!r}")
            lim = limits[idx]
            if lim.version != expected_version:
                raise VersionConflict(f"condition {name!r} limit {key!r}", expected_version, _limit_dict(lim))
            fields = coerce_limit_fields(changes, self._label(name), idx)
            mapping = self._mapping_of(c, limits)
            mapping["limits"][idx] = _limit_mapping({**_limit_dict(lim), **fields})
            self.parse(mapping, name)  # raises LimitSetError with the parser's message
            fields = {k: v for k, v in fields.items() if getattr(lim, k) != v}  # only what really changes
            old = {k: getattr(lim, k) for k in fields}
            new = dict(fields)
            if not fields:
                raise LimitStoreError(
                    f"condition {name!r} limit {key!r}: the new values equal the stored ones"
                )
            res = s.execute(
                sa.update(StoredLimit)
                .where(StoredLimit.id == lim.id, StoredLimit.version == expected_version)
                .values(**fields, version=expected_version + 1)
                .execution_options(synchronize_session=False)
            )
            if res.rowcount != 1:  # a concurrent writer committed between our read and our update
                raise VersionConflict(
                    f"condition {name!r} limit {key!r}", expected_version, self.limit(name, key)
                )
            now = datetime.now(UTC)
            s.execute(
                sa.update(StoredCondition)
                .where(StoredCondition.id == c.id)
                .values(version=StoredCondition.version + 1, updated_utc=now, updated_by=actor[:100])
                .execution_options(synchronize_session=False)
            )
            audit.append(
                s,
                actor=actor,
                action="limit.set",
                target=f"condition {name!r} limit {key!r}",
                old=old,
                new=new,
                reason=reason,
                client=client,
                now=now,
            )
            s.expire_all()
            return _limit_dict(s.get(StoredLimit, lim.id))

        return audit.run_in_transaction(self.engine, work)

    def replace_limit_set(
        self,
        name: str,
        limit_set: LimitSet,
        *,
        actor: str,
        reason: str,
        client: str = "cli",
        expected_version: int | None = None,
        source_label: str = "",
    ) -> dict[str, Any]:
        """Replace the whole limit set of an existing condition (import), optionally from a known version."""
        reason = self._need_reason(reason)
        mapping = limit_set_to_mapping(limit_set)
        mapping["name"] = name
        self.parse(mapping, name)

        def work(s: Session) -> dict[str, Any]:
            c = self._get_condition(s, name)
            if expected_version is not None and c.version != expected_version:
                raise VersionConflict(f"condition {name!r}", expected_version, self._cond_dict(c))
            old_limits = self._limits(s, c.id)
            old = self._mapping_of(c, old_limits)
            res = s.execute(
                sa.update(StoredCondition)
                .where(StoredCondition.id == c.id, StoredCondition.version == c.version)
                .values(
                    version=c.version + 1,
                    updated_utc=datetime.now(UTC),
                    updated_by=actor[:100],
                    settings={
                        k: v for k, v in mapping.items() if k not in ("schema_version", "name", "limits")
                    },
                )
                .execution_options(synchronize_session=False)
            )
            if res.rowcount != 1:
                raise VersionConflict(f"condition {name!r}", c.version, self.condition(name))
            s.execute(
                sa.delete(StoredLimit)
                .where(StoredLimit.condition_id == c.id)
                .execution_options(synchronize_session=False)
            )
            s.expire_all()
            self._insert_limits(s, c, mapping["limits"])
            audit.append(
                s,
                actor=actor,
                action="limits.import",
                target=f"condition {name!r}",
                old=old,
                new=mapping,
                reason=reason + (f" (from {source_label})" if source_label else ""),
                client=client,
            )
            s.flush()
            s.expire_all()
            c2 = self._get_condition(s, name)
            return self._cond_dict(c2, self._limits(s, c2.id))

        return audit.run_in_transaction(self.engine, work)

    def import_toml(
        self,
        text: str,
        label: str,
        *,
        actor: str,
        reason: str,
        client: str = "cli",
        condition: str | None = None,
        base_condition: str | None = None,
        expected_version: int | None = None,
    ) -> dict[str, Any]:
        """Import limit-set TOML (a ``config/limits`` file) into a condition.

        Into an existing ``condition`` (default: the file's ``name``) the set is replaced; otherwise a
        new condition is made, which needs ``base_condition``.

        Raises
        ------
        onboard.formats.limitsfile.LimitsFileError
            Not TOML (file, line, column).
        advisor.limits.LimitSetError
            Invalid content (file, key path, value, allowed).
        """
        ls = loads_limit_set(text, label, vessel_points=self._vessel_points())
        if self.vessel is not None:
            ls.resolve_points(self.vessel.points_mapping())
        name = condition or ls.name
        with Session(self.engine) as s:
            exists = s.scalars(sa.select(StoredCondition.id).where(StoredCondition.name == name)).first()
        if exists is not None:
            return self.replace_limit_set(
                name,
                ls,
                actor=actor,
                reason=reason,
                client=client,
                expected_version=expected_version,
                source_label=label,
            )
        if base_condition is None:
            raise LimitStoreError(
                f"condition {name!r} does not exist yet: give the vessel loading condition "
                "it is based on (base condition)"
            )
        return self.create(
            name, base_condition, ls, actor=actor, reason=reason + f" (from {label})", client=client
        )

    def load_vessel_conditions(self, *, actor: str = "system", default_limits=None) -> list[str]:
        """Load the vessel's loading conditions: store every one not stored yet, from its own
        ``limits`` file, else ``default_limits`` when given, else the default set built for this vessel
        (:func:`onboard.core.engine.vessel_default_limits`). Returns the names created."""
        from onboard.core.engine import vessel_default_limits
        from onboard.formats.limitsfile import read_limit_set

        if self.vessel is None:
            raise LimitStoreError("load_vessel_conditions needs the vessel (LimitStore(engine, vessel))")
        have = {c["name"] for c in self.conditions()}
        made = []
        for vc in self.vessel.conditions:
            if vc.name in have:
                continue
            path = vc.limits or default_limits
            if path is None:
                ls, _skipped = vessel_default_limits(self.vessel, vc)
                source = "the default set built for this vessel"
            else:
                ls = read_limit_set(path, vessel_points=self.vessel.points_mapping().keys())
                source = path.name
            self.create(vc.name, vc.name, ls, actor=actor, reason=f"initial limits from {source}")
            made.append(vc.name)
        return made


def read_toml_name(text: str) -> str | None:
    """The ``name`` of a limit-set TOML text, or None (for messages before full validation)."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        return None
    name = data.get("name")
    return name if isinstance(name, str) else None


__all__ += ["LimitsFileError", "read_toml_name"]
