"""Alerts for the bridge: utilisation at the present heading and speed, and sensors that went out.

Priorities follow IMO MSC.302(87), Bridge Alert Management: the service raises only *warnings* and
*cautions* (no alarms: nothing here needs immediate action by itself; the master decides).

Utilisation alerts
    The conservative utilisation at the ship's present heading and speed (largest predicted response ÷
    limit over the criteria, at the upper estimate of the sea state) is compared with two levels,
    ``caution`` (default 0.9, the advice margin) and ``warning`` (default 1.0, a limit reached). An
    alert is raised when the utilisation reaches a level and is stepped down or cleared only when it has
    fallen ``hysteresis`` below that level (default 0.05), so a value hovering at a level does not make
    the alert come and go every cycle (the usual dead band of alarm management, common practice).
    Without a current analysis the utilisation is unknown and the alert is left as it is; the sensor
    alert and the page's "no advice" say why.

Sensor alerts
    A required channel that is silent, frozen, implausible or missing raises a caution; when too few
    healthy channels remain for any advice it is a warning. It clears after the channels have been
    healthy for ``sensor_clear_s`` (default 30 s).

Every alert is kept in the store (:meth:`onboard.core.store.Store.raise_alert`): raised time, text, level,
acknowledgement (time and user, through the page) and the time its condition cleared. One alert per
kind is open at a time; a change of level (or of the set of failed channels) clears the old alert and
raises a new one, so the text of an alert never changes after it was raised.

Alert states (what the page shows)
    :func:`present_alerts` gives each alert one of the states bridge alert management defines [1]_:
    ``active_unacknowledged``, ``active_acknowledged`` and ``rectified_unacknowledged`` (the condition
    has gone but nobody has acknowledged it yet; it stays on the page until acknowledged). A rectified
    alert says so and drops the part of its text that only holds while it is active (such as "No advice
    until they are back"). Identical alerts (same level, kind, state and text, times in the text
    ignored; rectified ones of one kind and level whatever their text) are aggregated into one row with
    a count, the first and the last time raised, the newest text, and all their ids (acknowledging the
    row acknowledges them all).

References
----------
.. [1] IMO Resolution MSC.302(87) (2010), Adoption of performance standards for bridge alert management
   (alert priorities emergency alarm, alarm, warning, caution; alert states active-unacknowledged,
   active-silenced, active-acknowledged, rectified-unacknowledged) (from memory).
"""

from __future__ import annotations

import logging
import re
import threading
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from datetime import UTC, datetime

log = logging.getLogger(__name__)

KINDS = ("utilisation", "sensors")

#: Sentence added to a sensor warning while no advice is possible; dropped once the alert is rectified.
NO_ADVICE_TAIL = " No advice until they are back."

#: The alert states of :func:`present_alerts` (IMO MSC.302(87) names; no alarms, so no silencing).
ALERT_STATES = ("active_unacknowledged", "active_acknowledged", "rectified_unacknowledged")


_SINCE = re.compile(r" since \d\d:\d\dZ")


def alert_state(alert: Mapping) -> str:
    """The state of one stored alert (``cleared_utc`` set = rectified); see the module docstring."""
    if alert.get("cleared_utc"):
        return "rectified_acknowledged" if alert.get("acknowledged") else "rectified_unacknowledged"
    return "active_acknowledged" if alert.get("acknowledged") else "active_unacknowledged"


def present_alerts(alerts: Iterable[Mapping]) -> list[dict]:
    """The alerts as the page shows them: state per alert, rectified texts, identical ones aggregated.

    Parameters
    ----------
    alerts : iterable of mapping
        Stored alerts with ``id``, ``level``, ``kind``, ``text``, ``raised_utc``, ``acknowledged``,
        ``acknowledged_utc``, ``acknowledged_by`` and optionally ``cleared_utc`` (ISO 8601 texts).

    Returns
    -------
    list of dict
        One row per group of identical alerts, newest first, each with the stored keys of its newest
        alert plus ``state``, ``count``, ``ids``, ``first_raised_utc`` and ``rectified_utc``. Rectified
        and acknowledged alerts are left out (nothing remains to be done about them).
    """
    groups: dict[tuple, dict] = {}
    for a in alerts:
        state = alert_state(a)
        if state == "rectified_acknowledged":
            continue
        text = a["text"]
        if state == "rectified_unacknowledged" and text.endswith(NO_ADVICE_TAIL):
            text = text[: -len(NO_ADVICE_TAIL)]
        # Identical: same level, kind and text (times inside the text ignored). Rectified alerts of one
        # kind and level are one row: the condition has gone, the row keeps the count and the times.
        key = (a["level"], a["kind"], state) if state == "rectified_unacknowledged" else (
            a["level"], a["kind"], _SINCE.sub("", text), state)
        row = groups.get(key)
        if row is None:
            row = groups[key] = {
                **{k: a.get(k) for k in ("id", "level", "kind", "raised_utc", "acknowledged",
                                         "acknowledged_utc", "acknowledged_by", "cleared_utc")},
                "text": text,
                "state": state,
                "count": 0,
                "ids": [],
                "first_raised_utc": a["raised_utc"],
                "rectified_utc": a.get("cleared_utc"),
            }
        row["count"] += 1
        row["ids"].append(a["id"])
        if a["raised_utc"] < row["first_raised_utc"]:
            row["first_raised_utc"] = a["raised_utc"]
        if a["raised_utc"] >= row["raised_utc"]:  # the newest alert of the group gives its id, text and times
            for k in ("id", "raised_utc", "acknowledged_utc", "acknowledged_by", "cleared_utc"):
                row[k] = a.get(k)
            row["text"] = text
            row["rectified_utc"] = a.get("cleared_utc")
    rows = list(groups.values())
    for row in rows:
        row["ids"].sort()
    rows.sort(key=lambda r: r["raised_utc"], reverse=True)
    return rows


def utilisation_level(
    u: float, current: str | None, *, caution: float, warning: float, hysteresis: float
) -> str | None:
    """Alert level for utilisation ``u`` given the level now open (hysteresis, module docstring).

    Parameters
    ----------
    u : float
        Conservative utilisation at the present heading and speed [-].
    current : {"warning", "caution", None}
        Level of the alert open now.
    caution, warning : float
        Levels [-], ``warning >= caution``.
    hysteresis : float
        Dead band below each level [-].

    Returns
    -------
    str or None
        ``"warning"``, ``"caution"`` or None (no alert).
    """
    if u >= warning or (current == "warning" and u >= warning - hysteresis):
        return "warning"
    if u >= caution or (current in ("warning", "caution") and u >= caution - hysteresis):
        return "caution"
    return None


@dataclass
class _Open:
    id: int
    level: str
    key: str  # what the alert is about (for sensors: the failed channels)


class AlertManager:
    """Raises and clears the service's alerts in the store (module docstring).

    Parameters
    ----------
    store : onboard.core.store.Store
    caution, warning, hysteresis : float
        Utilisation levels and dead band [-].
    sensor_clear_s : float
        Healthy time before a sensor alert clears [s].
    clock : callable
        Present time, aware UTC (the service clock).
    """

    def __init__(
        self,
        store,
        *,
        caution: float = 0.9,
        warning: float = 1.0,
        hysteresis: float = 0.05,
        sensor_clear_s: float = 30.0,
        clock: Callable[[], datetime] | None = None,
    ):
        if warning < caution:
            raise ValueError(f"alert levels: warning ({warning}) must be >= caution ({caution})")
        if not 0 <= hysteresis < caution:
            raise ValueError(f"alert hysteresis {hysteresis} must be in [0, caution={caution})")
        self.store = store
        self.caution = float(caution)
        self.warning = float(warning)
        self.hysteresis = float(hysteresis)
        self.sensor_clear_s = float(sensor_clear_s)
        self.clock = clock or (lambda: datetime.now(UTC))
        self._lock = threading.Lock()
        self._open: dict[str, _Open] = {}
        self._healthy_since: datetime | None = None
        self._recover()

    def _recover(self) -> None:
        """Pick up alerts left open by a previous run (newest per kind; older duplicates are cleared)."""
        for a in self.store.active_alerts():  # newest first
            if a["kind"] in KINDS and a.get("cleared_utc") is None:
                if a["kind"] in self._open:
                    self.store.clear_alert(a["id"], when=self.clock())
                else:
                    key = a["level"] if a["kind"] == "utilisation" else "(from a previous run)"
                    self._open[a["kind"]] = _Open(a["id"], a["level"], key)

    def open_level(self, kind: str) -> str | None:
        """Level of the open alert of ``kind`` (None if none)."""
        o = self._open.get(kind)
        return o.level if o else None

    def _set(self, kind: str, level: str | None, key: str, text: str, now: datetime) -> None:
        cur = self._open.get(kind)
        if cur is not None and level == cur.level and key == cur.key:
            return
        if cur is not None:
            self.store.clear_alert(cur.id, when=now)
            del self._open[kind]
            log.info("alert %d (%s, %s) cleared", cur.id, cur.level, kind)
        if level is not None:
            aid = self.store.raise_alert(level, kind, text, raised_utc=now)
            self._open[kind] = _Open(aid, level, key)
            log.info("alert %d raised (%s, %s): %s", aid, level, kind, text)

    def update_utilisation(
        self,
        utilisation: float | None,
        *,
        binding: str | None = None,
        heading_deg: float | None = None,
        stw_kn: float | None = None,
        now: datetime | None = None,
    ) -> str | None:
        """Update the utilisation alert after a cycle; returns the level now open.

        Parameters
        ----------
        utilisation : float or None
            Conservative utilisation at the present heading and speed [-]; None = unknown (no current
            analysis): the alert is left as it is.
        binding : str, optional
            Label of the limit that binds (for the text).
        heading_deg, stw_kn : float, optional
            Present heading [deg] and speed [kn] (for the text).
        """
        now = now or self.clock()
        with self._lock:
            cur = self._open.get("utilisation")
            if utilisation is None:
                return cur.level if cur else None
            level = utilisation_level(
                float(utilisation),
                cur.level if cur else None,
                caution=self.caution,
                warning=self.warning,
                hysteresis=self.hysteresis,
            )
            if level is None:
                self._set("utilisation", None, "", "", now)
                return None
            threshold = self.warning if level == "warning" else self.caution
            where = ""
            if heading_deg is not None and stw_kn is not None:
                where = f" at the present heading {heading_deg:03.0f}° and {stw_kn:.1f} kn"
            limit = f"; binding: {binding}" if binding else ""
            text = (
                f"{level.capitalize()}: predicted motions{where} reach {utilisation:.2f} of the limits "
                f"(level {threshold:.2f}){limit}. See the advice; the master decides."
            )
            self._set("utilisation", level, level, text, now)
            return level

    def update_sensors(
        self,
        problems: Mapping[str, str],
        *,
        advice_possible: bool,
        summary: str = "",
        now: datetime | None = None,
    ) -> str | None:
        """Update the sensor alert after a health check; returns the level now open.

        Parameters
        ----------
        problems : mapping
            Required channels that are not ok: channel -> status.
        advice_possible : bool
            Whether enough healthy channels remain for advice.
        summary : str
            Plain description of the problems (for the text).
        """
        now = now or self.clock()
        with self._lock:
            if not problems:
                if self._healthy_since is None:
                    self._healthy_since = now
                cur = self._open.get("sensors")
                if cur is not None and (now - self._healthy_since).total_seconds() >= self.sensor_clear_s:
                    self._set("sensors", None, "", "", now)
                cur = self._open.get("sensors")
                return cur.level if cur else None
            self._healthy_since = None
            level = "caution" if advice_possible else "warning"
            key = ",".join(f"{c}={s}" for c, s in sorted(problems.items()))
            tail = "" if advice_possible else NO_ADVICE_TAIL
            text = f"{level.capitalize()}: sensors {summary or ', '.join(sorted(problems))}.{tail}"
            self._set("sensors", level, key, text, now)
            return level
