"""The watch's visual sea-state estimate: validation, recording with who entered it, and the latest one.

An officer logged in on the administration page enters one or two wave systems (wind sea, swell): the
significant height [m], the period [s] and the true direction the waves come from [deg], with an
optional note. Each entry is appended to the hash-chained audit trail (action ``observed_sea.enter``,
actor = the logged-in user, the client address), so it is kept with who entered it and when, and can
never be edited. The latest entry younger than :data:`MAX_AGE_S` is the current observation: shown in
the page state (``observed_sea``) and used by the service as the fallback sea state when the motions
cannot be used (:func:`estimator.observed.observed_spectrum`), and, while at most
``EngineSettings.prior_max_age_s`` old and entered under the active loading condition, as the
estimator's prior (:class:`estimator.seastate.SeaPrior`; the page then says who entered it and when).

Ranges are plausibility bounds (project choices) that catch a slip (feet, a period typed as height),
not limits of the sea.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from datetime import datetime
from typing import Any

import sqlalchemy as sa
from sqlalchemy.orm import Session

from onboard.admin import audit
from onboard.admin.tables import AuditEntry

__all__ = [
    "ACTION",
    "MAX_AGE_S",
    "ObservationError",
    "latest_observation",
    "parse_observation",
    "record_observation",
]

ACTION = "observed_sea.enter"
MAX_AGE_S = 6 * 3600.0
"""An observation older than this is no longer current [s] (project choice: one and a half 4-h watches)."""

LABELS = ("wind sea", "swell")
RANGES = {"hs_m": (0.1, 25.0), "period_s": (2.0, 25.0), "wave_from_deg": (0.0, 360.0)}
NOTE_MAX = 500


class ObservationError(ValueError):
    """A field of the observation form is invalid (names the field, the value and what is allowed)."""


def _number(form: Mapping[str, Any], name: str, key: str) -> float | None:
    raw = form.get(name)
    text = "" if raw is None else str(raw).strip()
    if not text:
        return None
    lo, hi = RANGES[key]
    try:
        x = float(text)
    except ValueError:
        raise ObservationError(f"{name} = {text[:40]!r}: not a number; allowed: {lo:g} to {hi:g}") from None
    if not (math.isfinite(x) and lo <= x <= hi):
        raise ObservationError(f"{name} = {text[:40]!r}: out of range; allowed: {lo:g} to {hi:g}")
    return x


def parse_observation(form: Mapping[str, Any]) -> tuple[list[dict[str, Any]], str]:
    """Systems and note from the form fields ``label1, hs1_m, period1_s, from1_deg`` (and ``...2``), ``note``.

    A system is given when any of its numbers is; then all three are required. One or two systems; two
    must not both be the same label.

    Raises
    ------
    ObservationError
        One line naming the field, the value and what is allowed.
    """
    systems = []
    for i in (1, 2):
        vals = {
            "hs_m": _number(form, f"hs{i}_m", "hs_m"),
            "period_s": _number(form, f"period{i}_s", "period_s"),
            "wave_from_deg": _number(form, f"from{i}_deg", "wave_from_deg"),
        }
        if all(v is None for v in vals.values()):
            continue
        missing = [k for k, v in vals.items() if v is None]
        if missing:
            raise ObservationError(f"system {i}: {missing[0]} missing; allowed: height, period and direction")
        label = str(form.get(f"label{i}", "wind sea" if i == 1 else "swell")).strip()
        if label not in LABELS:
            raise ObservationError(f"label{i} = {label[:40]!r}: unknown; allowed: {', '.join(LABELS)}")
        vals["wave_from_deg"] %= 360.0
        systems.append({"label": label, **vals})
    if not systems:
        raise ObservationError("no wave system given; allowed: height, period and direction of one or two")
    if len(systems) == 2 and systems[0]["label"] == systems[1]["label"]:
        raise ObservationError(
            f"two systems both labelled {systems[0]['label']!r}; allowed: one wind sea, one swell"
        )
    note = str(form.get("note", "") or "").strip()
    if len(note) > NOTE_MAX or not all(ch.isprintable() for ch in note):
        raise ObservationError(
            f"note: {len(note)} characters or control characters; allowed: {NOTE_MAX} printable"
        )
    return systems, note


def record_observation(engine, *, systems, note: str, actor: str, client: str | None, when: datetime) -> dict:
    """Append the observation to the audit trail (who, when, from where); returns the entry."""
    return audit.record(
        engine,
        actor=actor,
        action=ACTION,
        target="sea state",
        new={"systems": systems, "note": note},
        reason=note or "visual estimate of the watch",
        client=client,
        now=when,
    )


def latest_observation(engine, now: datetime, *, max_age_s: float = MAX_AGE_S) -> dict[str, Any] | None:
    """The newest observation not older than ``max_age_s`` at ``now``, or None.

    Returns
    -------
    dict or None
        ``{"entered_utc": datetime, "entered_by": str, "age_s": float, "systems": [...], "note": str}``.
    """
    q = sa.select(AuditEntry).where(AuditEntry.action == ACTION).order_by(AuditEntry.seq.desc()).limit(1)
    with Session(engine) as s:
        row = s.execute(q).scalar_one_or_none()
        if row is None:
            return None
        entry, when = row.as_dict(), row.time_utc
    age = (now - when).total_seconds()
    if age > max_age_s or age < -60.0:
        return None
    new = entry.get("new") or {}
    return {
        "entered_utc": when,
        "entered_by": entry["actor"],
        "age_s": max(age, 0.0),
        "systems": list(new.get("systems") or []),
        "note": new.get("note") or "",
    }
