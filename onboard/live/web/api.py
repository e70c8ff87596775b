"""The JSON API of the bridge page (blueprint ``api``). The contract is ``onboard/live/web/openapi.yaml``.

Why polling with a weak ETag (and not server-sent events)
---------------------------------------------------------
The page asks ``GET /api/state`` every ``BRIDGE_POLL_INTERVAL_MS`` (2 s by default) and sends the last
ETag in ``If-None-Match``; an unchanged state costs a ``304`` with no body. Polling holds a waitress worker
thread only for the milliseconds of a request, whereas every open event stream pins one thread for as long
as a display is open (measured here on waitress and gunicorn gthread: with 4 threads and 5 open streams a
plain GET waited about 3 s until a stream closed), it needs
no reconnection logic when the service restarts, and it is easy to test. A 2 s delay is small against a
state that changes every second (own ship) or every few minutes (sea state, polar, advice).

The ETag is *weak* and is computed over the state without its ``age_s`` fields: two states that differ
only in how old they are now are semantically the same. The page advances the ages itself from the
time of the last full answer, and the ``stale`` flags (which do change the ETag) are set by the provider.
"""

from __future__ import annotations

import hashlib
import json
import logging
import math
from importlib import resources
from typing import Any

from flask import Blueprint, Response, current_app, jsonify, request

log = logging.getLogger(__name__)

bp = Blueprint("api", __name__, url_prefix="/api")

#: Longest user name accepted with an acknowledgement [characters].
MAX_USER_CHARS = 64


def _provider():
    return current_app.extensions["bridge_provider"]


#: Fields that grow with time only (the page advances them itself between full answers).
_AGE_KEYS = ("age_s", "down_for_s")


def _without_ages(value: Any) -> Any:
    if isinstance(value, dict):
        return {k: _without_ages(v) for k, v in value.items() if k not in _AGE_KEYS}
    if isinstance(value, list):
        return [_without_ages(v) for v in value]
    return value


def state_etag(state: dict[str, Any]) -> str:
    """Opaque tag of a state, ignoring its ``age_s`` fields (see the module docstring)."""
    canonical = json.dumps(_without_ages(state), sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.blake2b(canonical.encode("utf-8"), digest_size=12).hexdigest()


def _error(status: int, message: str) -> tuple[Response, int]:
    return jsonify({"ok": False, "error": message}), status


@bp.get("/state")
def state():
    """The bridge state (contract: components/schemas/State in openapi.yaml)."""
    payload = _provider().current_state()
    tag = state_etag(payload)
    if request.if_none_match.contains_weak(tag):
        response = Response(status=304)
    else:
        response = jsonify(payload)
    response.set_etag(tag, weak=True)
    response.headers["Cache-Control"] = "no-cache"
    return response


@bp.get("/history")
def history():
    """Trend samples of the last ``hours`` (query parameter, default BRIDGE_HISTORY_HOURS)."""
    raw = request.args.get("hours", str(current_app.config["BRIDGE_HISTORY_HOURS"]))
    limit = current_app.config["BRIDGE_HISTORY_MAX_HOURS"]
    try:
        hours = float(raw)
    except ValueError:
        hours = math.nan
    if not (math.isfinite(hours) and 0 < hours <= limit):
        return _error(400, f"hours: expected a number of hours in (0, {limit:g}], got {raw!r}")
    response = jsonify(_provider().history(hours))
    response.headers["Cache-Control"] = "no-cache"
    return response


@bp.post("/alerts/<int:alert_id>/acknowledge")
def acknowledge(alert_id: int):
    """Acknowledge an alert on behalf of ``user`` (JSON body ``{"user": "..."}``)."""
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        return _error(400, 'body: expected a JSON object {"user": "<name of the person acknowledging>"}')
    user = body.get("user")
    if not isinstance(user, str) or not user.strip() or len(user.strip()) > MAX_USER_CHARS:
        return _error(400, f"user: expected a name of 1 to {MAX_USER_CHARS} characters, got {user!r}")
    if not user.strip().isprintable():
        return _error(400, f"user: control characters are not allowed, got {user!r}")
    outcome = _provider().acknowledge_alert(alert_id, user.strip())
    if outcome == "ok":
        return jsonify({"ok": True})
    if outcome == "unknown":
        return _error(404, f"alert {alert_id}: no such open alert")
    if outcome == "already":
        return _error(409, f"alert {alert_id}: already acknowledged")
    raise RuntimeError(
        f"provider.acknowledge_alert returned {outcome!r}; expected 'ok', 'unknown' or 'already'"
    )


@bp.get("/openapi.yaml")
def openapi():
    """The OpenAPI 3.1 description of this API, with the state contract."""
    text = resources.files("onboard.live.web").joinpath("openapi.yaml").read_text(encoding="utf-8")
    return Response(text, mimetype="application/yaml")
