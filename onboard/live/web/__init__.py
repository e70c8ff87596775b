"""The bridge page: a Flask app serving the live polar chart of safe heading and speed.

``create_app(config=None, provider=None)`` builds the app (nothing happens at import time);
``serve(app, host, port, threads)`` runs it under waitress, the pure-Python multi-threaded WSGI server.

Blueprints
----------
``api``  (``onboard/live/web/api.py``): ``GET /api/state``, ``GET /api/history?hours=6``,
         ``POST /api/alerts/<id>/acknowledge``, ``GET /api/openapi.yaml``.
``page`` (``onboard/live/web/page.py``): ``GET /``, the page itself (template ``templates/bridge.html``,
         static ``static/bridge.css`` and ``static/bridge.js``; fully offline, no external resources).

The data contract served at ``GET /api/state`` is written out in ``onboard/live/web/openapi.yaml`` (with the
contract text in its description). The views render what the provider holds; they never compute an
estimate or an advice.

Configuration
-------------
Defaults (:data:`DEFAULTS`) then the ``config`` mapping. Keys:

``BRIDGE_POLL_INTERVAL_MS``
    How often the page asks for ``/api/state`` [ms]; default 2000 (the brief allows 1-2 s).
``BRIDGE_HISTORY_REFRESH_MS``
    How often the page reloads the trend [ms]; default 60000.
``BRIDGE_HISTORY_HOURS``
    Hours of trend the page shows [h]; default 6.
``BRIDGE_HISTORY_MAX_HOURS``
    Largest ``hours`` accepted by ``/api/history`` [h]; default 72.
``BRIDGE_CONNECTION_LOST_AFTER_MS``
    With no answer from the service for this long the page says "NO CONNECTION" [ms]; default 6000.

Advisory only. The master decides. The advice does not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from onboard.live.web.provider import (
    ADVISORY_NOTICE,
    InMemoryStateProvider,
    StateProvider,
    check_state,
    format_utc,
    parse_utc,
)

__all__ = [
    "ADVISORY_NOTICE",
    "DEFAULTS",
    "InMemoryStateProvider",
    "StateProvider",
    "check_state",
    "create_app",
    "format_utc",
    "parse_utc",
    "serve",
]

#: Default configuration of the bridge page (see the module docstring for the meaning of each key).
DEFAULTS: dict[str, Any] = {
    "BRIDGE_POLL_INTERVAL_MS": 2000,
    "BRIDGE_HISTORY_REFRESH_MS": 60000,
    "BRIDGE_HISTORY_HOURS": 6,
    "BRIDGE_HISTORY_MAX_HOURS": 72,
    "BRIDGE_CONNECTION_LOST_AFTER_MS": 6000,
}

#: Allowed range of each numeric setting (inclusive).
_RANGES: dict[str, tuple[float, float]] = {
    "BRIDGE_POLL_INTERVAL_MS": (250, 10000),
    "BRIDGE_HISTORY_REFRESH_MS": (1000, 3600000),
    "BRIDGE_HISTORY_HOURS": (0.5, 72),
    "BRIDGE_HISTORY_MAX_HOURS": (1, 720),
    "BRIDGE_CONNECTION_LOST_AFTER_MS": (1000, 120000),
}


def _check_config(config: Mapping[str, Any]) -> None:
    for key, (low, high) in _RANGES.items():
        value = config[key]
        if isinstance(value, bool) or not isinstance(value, int | float) or not low <= value <= high:
            raise ValueError(f"web config {key}: expected a number in [{low:g}, {high:g}], got {value!r}")
    if config["BRIDGE_HISTORY_HOURS"] > config["BRIDGE_HISTORY_MAX_HOURS"]:
        raise ValueError(
            f"web config BRIDGE_HISTORY_HOURS ({config['BRIDGE_HISTORY_HOURS']!r}) must not exceed "
            f"BRIDGE_HISTORY_MAX_HOURS ({config['BRIDGE_HISTORY_MAX_HOURS']!r})"
        )
    if config["BRIDGE_CONNECTION_LOST_AFTER_MS"] < 2 * config["BRIDGE_POLL_INTERVAL_MS"]:
        raise ValueError(
            "web config BRIDGE_CONNECTION_LOST_AFTER_MS "
            f"({config['BRIDGE_CONNECTION_LOST_AFTER_MS']!r}) must be at least twice "
            f"BRIDGE_POLL_INTERVAL_MS ({config['BRIDGE_POLL_INTERVAL_MS']!r})"
        )


def create_app(config: Mapping[str, Any] | None = None, provider: StateProvider | None = None):
    """Build the bridge web app.

    Parameters
    ----------
    config : mapping, optional
        Settings applied over :data:`DEFAULTS` (and any Flask setting such as ``TESTING``).
    provider : StateProvider, optional
        Where the state, history and alerts come from. Default: a new, empty
        :class:`InMemoryStateProvider` (the page then says that no data has been received yet); the
        service passes the provider it feeds. Reachable afterwards as ``app.extensions["bridge_provider"]``.

    Returns
    -------
    flask.Flask

    Raises
    ------
    ValueError
        When a setting is out of its range (the message names the key, the value and the range).
    """
    from flask import Flask

    from onboard.live.web.admin import bp as admin_bp
    from onboard.live.web.api import bp as api_bp
    from onboard.live.web.page import bp as page_bp

    app = Flask(__name__, static_folder="static", template_folder="templates")
    app.config.from_mapping(DEFAULTS)
    if config is not None:
        app.config.from_mapping(config)
    _check_config(app.config)
    app.json.sort_keys = False  # keep the contract's key order in the served JSON
    app.extensions["bridge_provider"] = provider if provider is not None else InMemoryStateProvider()
    app.register_blueprint(api_bp)
    app.register_blueprint(page_bp)
    app.register_blueprint(admin_bp)  # /admin (onboard/live/web/admin.py sets the session cookie defaults)
    return app


def serve(app, host: str = "127.0.0.1", port: int = 8650, threads: int = 8) -> None:
    """Serve the app with waitress until interrupted (blocks).

    Parameters
    ----------
    app : flask.Flask
        From :func:`create_app`.
    host : str
        Address to listen on; loopback by default, the ship's LAN address to reach other displays.
    port : int
        TCP port.
    threads : int
        Worker threads: the number of bridge displays expected plus headroom. The page polls, so a
        display holds a thread only for the few milliseconds of a request.
    """
    if not (isinstance(threads, int) and threads > 0):
        raise ValueError(f"threads: expected a positive integer, got {threads!r}")
    if not (isinstance(port, int) and 0 <= port <= 65535):
        raise ValueError(f"port: expected an integer in [0, 65535], got {port!r}")
    from waitress import serve as waitress_serve

    waitress_serve(app, host=host, port=port, threads=threads, ident="bridge")
