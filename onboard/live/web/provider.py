"""Where the bridge page gets its data: the provider protocol and the in-memory provider.

The web layer never computes an estimate or an advice; it reads one provider object that the service
keeps up to date. :class:`StateProvider` is the protocol the web app needs; :class:`InMemoryStateProvider`
is the product implementation the running service feeds after every cycle (``set_state``), after every
history sample (``append_history``) and whenever it raises or clears an alert.

What the provider adds at read time, and why
--------------------------------------------
The state is produced every few minutes (sea state, polar, advice) and every second or so (own ship), but
it is read by the page every couple of seconds. A value stored with ``age_s = 2`` is not 2 s old an hour
later, so the provider recomputes ``ship.age_s`` from ``ship.time_utc`` and ``sea_state.age_s`` from
``sea_state.window_end_utc`` with its clock, and marks each part ``stale`` when the producer said so OR
its age exceeds the configured limit (``ship_stale_after_s``, ``sea_state_stale_after_s``, both echoed in
the state as the optional field ``stale_after_s`` so the page can apply the same rule between polls).
This keeps the rule "old data is shown as old, never as current" in one place on the server.

The advisory notice
-------------------
Advisory only. The master decides. The advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

import copy
import logging
import math
import threading
from collections import deque
from collections.abc import Callable, Mapping
from datetime import UTC, datetime, timedelta
from typing import Any, Protocol

from onboard.formats import units

__all__ = [
    "ADVISORY_NOTICE",
    "REQUIRED_STATE_KEYS",
    "InMemoryStateProvider",
    "StateProvider",
    "format_utc",
    "parse_utc",
    "check_state",
]

log = logging.getLogger(__name__)

#: The notice every screen carries (design.md: the tool is advisory, SOLAS V/34-1: the master decides).
ADVISORY_NOTICE = (
    "Advisory only. The master decides. This advice does not replace the ship's approved stability "
    "information, loading computer, cargo securing manual or seamanship; local regulations and licensed "
    "practice come first."
)

#: Top-level keys of the bridge state (the JSON contract served at GET /api/state).
REQUIRED_STATE_KEYS = (
    "generated_utc",
    "advisory_notice",
    "vessel",
    "condition",
    "ship",
    "sea_state",
    "polar",
    "advice",
    "sensors",
    "alerts",
    "status",
)

#: Keys of one history series (GET /api/history).
HISTORY_KEYS = ("times_utc", "hs_m", "utilisation", "heading_deg", "stw_kn", "confidence")

ACK_OK = "ok"
ACK_UNKNOWN = "unknown"
ACK_ALREADY = "already"


class StateProvider(Protocol):
    """What the web app reads. Implementations must be safe to call from several threads."""

    def current_state(self) -> dict[str, Any]:
        """The bridge state as in the contract (see ``onboard/live/web/openapi.yaml``)."""
        ...

    def history(self, hours: float) -> dict[str, list[Any]]:
        """Samples of the last ``hours`` [h], keyed as :data:`HISTORY_KEYS`, oldest first."""
        ...

    def acknowledge_alert(self, alert_id: int, user: str) -> str:
        """Acknowledge an alert: ``"ok"``, ``"unknown"`` (no such id) or ``"already"``."""
        ...


def parse_utc(text: str, *, field: str) -> datetime:
    """Parse an ISO 8601 UTC time ending in ``Z`` (docs/conventions.md).

    Parameters
    ----------
    text : str
        Time such as ``"2026-12-01T23:50:00Z"`` or ``"2026-12-01T23:50:00.250Z"``.
    field : str
        Name of the field, used in the error message.

    Returns
    -------
    datetime
        Timezone-aware (UTC).

    Raises
    ------
    ValueError
        When the text is not an ISO 8601 time with ``Z``.
    """
    if not isinstance(text, str) or not text.endswith("Z"):
        raise ValueError(f"{field}: expected an ISO 8601 UTC time ending in 'Z', got {text!r}")
    try:
        parsed = datetime.fromisoformat(text[:-1] + "+00:00")
    except ValueError:
        raise ValueError(f"{field}: expected an ISO 8601 UTC time ending in 'Z', got {text!r}") from None
    return parsed.astimezone(UTC)


def format_utc(moment: datetime) -> str:
    """Format a timezone-aware time as ISO 8601 UTC with ``Z`` (whole seconds unless there is a
    fraction, then milliseconds); the one formatter is :func:`onboard.formats.units.format_utc`."""
    return units.format_utc(moment, milliseconds=True)


def _require_mapping(value: Any, field: str) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        raise ValueError(f"{field}: expected an object, got {type(value).__name__}")
    return value


def check_state(state: Mapping[str, Any]) -> None:
    """Check the structure of a bridge state before it is served.

    Checks what would otherwise break the page silently: the top-level keys, the time formats of the
    parts that have an age, and that every polar grid has ``N_h`` rows of ``N_s`` values.

    Raises
    ------
    ValueError
        Naming the field, the value received and what is allowed.
    """
    _require_mapping(state, "state")
    missing = [k for k in REQUIRED_STATE_KEYS if k not in state]
    if missing:
        raise ValueError(f"state: missing keys {missing}; required keys are {list(REQUIRED_STATE_KEYS)}")
    parse_utc(state["generated_utc"], field="generated_utc")
    ship = _require_mapping(state["ship"], "ship")
    parse_utc(ship.get("time_utc"), field="ship.time_utc")
    if state["sea_state"] is not None:
        sea = _require_mapping(state["sea_state"], "sea_state")
        parse_utc(sea.get("window_end_utc"), field="sea_state.window_end_utc")
    polar = state["polar"]
    if polar is not None:
        polar = _require_mapping(polar, "polar")
        n_h = len(polar.get("headings_deg", ()))
        n_s = len(polar.get("speeds_kn", ()))
        if n_h == 0 or n_s == 0:
            raise ValueError(f"polar: headings_deg and speeds_kn must be non-empty, got {n_h} and {n_s}")
        grids = ["utilisation", "utilisation_nominal", "limiting"]
        grids += [f"zones.{name}" for name in _require_mapping(polar.get("zones", {}), "polar.zones")]
        for name in grids:
            grid = polar["zones"][name[6:]] if name.startswith("zones.") else polar.get(name)
            if not isinstance(grid, list) or len(grid) != n_h:
                got = len(grid) if isinstance(grid, list) else type(grid).__name__
                raise ValueError(f"polar.{name}: expected {n_h} rows (one per heading), got {got}")
            for i, row in enumerate(grid):
                if not isinstance(row, list) or len(row) != n_s:
                    got = len(row) if isinstance(row, list) else type(row).__name__
                    raise ValueError(f"polar.{name}[{i}]: expected {n_s} values (one per speed), got {got}")
    if not isinstance(state["alerts"], list) or not isinstance(state["sensors"], list):
        raise ValueError("state: 'alerts' and 'sensors' must be lists")


class InMemoryStateProvider:
    """The latest bridge state, its history and the open alerts, held in memory for the web page.

    Thread-safe: the service thread writes, the web server threads read. Reads return copies of the
    small parts; the polar grids are copied once on :meth:`set_state` and never mutated afterwards.

    Parameters
    ----------
    clock : callable, optional
        Returns the present time, timezone-aware UTC. Default: the system clock. Tests inject a fixed one.
    ship_stale_after_s : float
        Own-ship data (heading, STW) older than this is shown as stale [s]. Default 15 s: heading and
        speed arrive at about 1 Hz, so 15 missed samples mean the feed has stopped (common practice).
    sea_state_stale_after_s : float
        A sea-state estimate (and the polar and advice built on it) whose analysis window ended longer ago
        than this is shown as stale [s]. Default 1800 s: two missed cycles of a 20 min window updated every
        few minutes, our own choice.
    history_max_samples : int
        Samples kept for the trend (oldest dropped first). Default 4320 = 72 h at one per minute.
    max_alerts : int
        Alerts kept; the oldest acknowledged ones are dropped first. Default 200.
    """

    def __init__(
        self,
        *,
        clock: Callable[[], datetime] | None = None,
        ship_stale_after_s: float = 15.0,
        sea_state_stale_after_s: float = 1800.0,
        history_max_samples: int = 4320,
        max_alerts: int = 200,
    ) -> None:
        for name, value in (
            ("ship_stale_after_s", ship_stale_after_s),
            ("sea_state_stale_after_s", sea_state_stale_after_s),
        ):
            if not (isinstance(value, int | float) and math.isfinite(value) and value > 0):
                raise ValueError(f"{name}: expected a positive number of seconds, got {value!r}")
        if not (isinstance(history_max_samples, int) and history_max_samples > 0):
            raise ValueError(f"history_max_samples: expected a positive integer, got {history_max_samples!r}")
        if not (isinstance(max_alerts, int) and max_alerts > 0):
            raise ValueError(f"max_alerts: expected a positive integer, got {max_alerts!r}")
        self._clock = clock or (lambda: datetime.now(UTC))
        self.ship_stale_after_s = float(ship_stale_after_s)
        self.sea_state_stale_after_s = float(sea_state_stale_after_s)
        self._max_alerts = max_alerts
        self._lock = threading.Lock()
        self._state: dict[str, Any] | None = None
        self._history: deque[tuple[datetime, dict[str, Any]]] = deque(maxlen=history_max_samples)
        self._alerts: list[dict[str, Any]] = []
        self._next_alert_id = 1

    # ----------------------------------------------------------------------------------------- writing
    def set_state(self, state: Mapping[str, Any]) -> None:
        """Replace the current state (the contract of GET /api/state).

        The ``alerts`` key of ``state`` is ignored: the provider owns the alert list (see
        :meth:`raise_alert`), so acknowledgements are never lost when the next cycle's state arrives.

        Raises
        ------
        ValueError
            From :func:`check_state` when the state is malformed.
        """
        check_state(state)
        stored = copy.deepcopy(dict(state))
        stored["alerts"] = []
        with self._lock:
            self._state = stored

    def append_history(
        self,
        time_utc: datetime | str,
        *,
        hs_m: float | None,
        utilisation: float | None,
        heading_deg: float | None,
        stw_kn: float | None,
        confidence: float | None,
    ) -> None:
        """Append one trend sample (``None`` where the value was not available at that time).

        Samples must arrive in time order; an out-of-order sample raises ``ValueError``.
        """
        moment = parse_utc(time_utc, field="time_utc") if isinstance(time_utc, str) else time_utc
        if moment.tzinfo is None:
            raise ValueError(f"time_utc: must be timezone-aware (UTC), got naive {moment!r}")
        values = {
            "hs_m": hs_m,
            "utilisation": utilisation,
            "heading_deg": heading_deg,
            "stw_kn": stw_kn,
            "confidence": confidence,
        }
        for key, value in values.items():
            if value is not None and not (isinstance(value, int | float) and math.isfinite(value)):
                raise ValueError(f"history {key}: expected a finite number or None, got {value!r}")
        with self._lock:
            if self._history and moment < self._history[-1][0]:
                raise ValueError(
                    f"time_utc: samples must be in time order; {format_utc(moment)} is before "
                    f"{format_utc(self._history[-1][0])}"
                )
            self._history.append((moment.astimezone(UTC), values))

    def raise_alert(self, *, level: str, kind: str, text: str, raised_utc: datetime | None = None) -> int:
        """Open an alert and return its id.

        Parameters
        ----------
        level : {"warning", "caution"}
            Priority after IMO MSC.302(87) (bridge alert management); the service raises no alarms.
        kind : {"utilisation", "sensors"}
            What the alert is about.
        text : str
            One plain sentence for the officer of the watch.
        raised_utc : datetime, optional
            When it was raised; default the provider's clock.
        """
        if level not in ("warning", "caution"):
            raise ValueError(f"alert level: expected 'warning' or 'caution', got {level!r}")
        if kind not in ("utilisation", "sensors"):
            raise ValueError(f"alert kind: expected 'utilisation' or 'sensors', got {kind!r}")
        if not isinstance(text, str) or not text.strip():
            raise ValueError(f"alert text: expected a non-empty sentence, got {text!r}")
        with self._lock:
            alert_id = self._next_alert_id
            self._next_alert_id += 1
            self._alerts.append(
                {
                    "id": alert_id,
                    "level": level,
                    "kind": kind,
                    "text": text.strip(),
                    "raised_utc": format_utc(raised_utc or self._clock()),
                    "acknowledged": False,
                    "acknowledged_utc": None,
                    "acknowledged_by": None,
                }
            )
            self._trim_alerts()
        log.info("alert %d raised (%s, %s): %s", alert_id, level, kind, text)
        return alert_id

    def clear_alert(self, alert_id: int) -> bool:
        """Remove an alert whose condition has gone; returns False when the id is unknown."""
        with self._lock:
            before = len(self._alerts)
            self._alerts = [a for a in self._alerts if a["id"] != alert_id]
            return len(self._alerts) != before

    def _trim_alerts(self) -> None:
        while len(self._alerts) > self._max_alerts:
            acked = [i for i, a in enumerate(self._alerts) if a["acknowledged"]]
            self._alerts.pop(acked[0] if acked else 0)

    # ----------------------------------------------------------------------------------------- reading
    def acknowledge_alert(self, alert_id: int, user: str) -> str:
        """Acknowledge an alert, storing the time (provider clock) and the user (see StateProvider)."""
        if not isinstance(user, str) or not user.strip():
            raise ValueError(f"user: expected a non-empty name, got {user!r}")
        with self._lock:
            for alert in self._alerts:
                if alert["id"] == alert_id:
                    if alert["acknowledged"]:
                        return ACK_ALREADY
                    alert["acknowledged"] = True
                    alert["acknowledged_utc"] = format_utc(self._clock())
                    alert["acknowledged_by"] = user.strip()
                    log.info("alert %d acknowledged by %s", alert_id, user.strip())
                    return ACK_OK
        return ACK_UNKNOWN

    def alerts(self) -> list[dict[str, Any]]:
        """Copies of the open alerts, oldest first."""
        with self._lock:
            return [dict(a) for a in self._alerts]

    def current_state(self) -> dict[str, Any]:
        """The latest state with ages recomputed, stale flags applied and the open alerts merged in.

        Before the first :meth:`set_state` the state says plainly that nothing has been received yet.
        """
        now = self._clock()
        with self._lock:
            stored = self._state
            alerts = [dict(a) for a in self._alerts]
        if stored is None:
            return self._waiting_state(now, alerts)
        state = dict(stored)
        state["alerts"] = alerts
        ship = dict(stored["ship"])
        ship_age = (now - parse_utc(ship["time_utc"], field="ship.time_utc")).total_seconds()
        ship["age_s"] = round(max(ship_age, 0.0), 1)
        ship["stale_after_s"] = self.ship_stale_after_s
        ship["stale"] = bool(ship.get("stale")) or ship_age > self.ship_stale_after_s
        state["ship"] = ship
        if stored["sea_state"] is not None:
            sea = dict(stored["sea_state"])
            sea_age = (
                now - parse_utc(sea["window_end_utc"], field="sea_state.window_end_utc")
            ).total_seconds()
            sea["age_s"] = round(max(sea_age, 0.0), 1)
            sea["stale_after_s"] = self.sea_state_stale_after_s
            sea["stale"] = bool(sea.get("stale")) or sea_age > self.sea_state_stale_after_s
            state["sea_state"] = sea
        state["status"] = dict(stored["status"])
        return state

    def _waiting_state(self, now: datetime, alerts: list[dict[str, Any]]) -> dict[str, Any]:
        reason = "no data received from the service yet"
        return {
            "generated_utc": format_utc(now),
            "advisory_notice": ADVISORY_NOTICE,
            "vessel": {"name": ""},
            "condition": None,
            "ship": {
                "time_utc": None,
                "age_s": None,
                "stale": True,
                "stale_after_s": self.ship_stale_after_s,
                "heading_deg": None,
                "stw_kn": None,
                "intended_course_deg": None,
            },
            "sea_state": None,
            "polar": None,
            "advice": {
                "status": "unavailable",
                "sentence": f"No advice: {reason}.",
                "advised_heading_deg": None,
                "advised_stw_kn": None,
                "utilisation_now": None,
                "utilisation_advised": None,
                "binding_limit": None,
                "reason": reason,
            },
            "sensors": [],
            "alerts": alerts,
            "status": {"advice_available": False, "reason": reason},
        }

    def history(self, hours: float) -> dict[str, list[Any]]:
        """Samples whose time lies within ``hours`` [h] before the provider's present time, oldest first."""
        if not (isinstance(hours, int | float) and math.isfinite(hours) and hours > 0):
            raise ValueError(f"hours: expected a positive number of hours, got {hours!r}")
        since = self._clock() - timedelta(hours=hours)
        with self._lock:
            samples = [(t, v) for t, v in self._history if t >= since]
        out: dict[str, list[Any]] = {key: [] for key in HISTORY_KEYS}
        for moment, values in samples:
            out["times_utc"].append(format_utc(moment))
            for key in HISTORY_KEYS[1:]:
                out[key].append(values[key])
        return out
