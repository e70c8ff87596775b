"""The bridge page itself (blueprint ``page``): one HTML document, one stylesheet, one script.

Everything the page needs is served from this app: no external fonts, scripts or styles, so it works
on a ship with no internet. The chart is hand-written SVG built by ``static/bridge.js``.
"""

from __future__ import annotations

from flask import Blueprint, current_app, render_template

from onboard.live.web.provider import ADVISORY_NOTICE

bp = Blueprint("page", __name__)


@bp.get("/")
def bridge():
    """The bridge page. Its data comes from /api/state and /api/history, fetched by the script."""
    cfg = current_app.config
    response = current_app.make_response(
        render_template(
            "bridge.html",
            notice=ADVISORY_NOTICE,
            poll_ms=int(cfg["BRIDGE_POLL_INTERVAL_MS"]),
            history_ms=int(cfg["BRIDGE_HISTORY_REFRESH_MS"]),
            history_hours=cfg["BRIDGE_HISTORY_HOURS"],
            lost_ms=int(cfg["BRIDGE_CONNECTION_LOST_AFTER_MS"]),
        )
    )
    # Only our own origin may supply anything to this page (offline by construction, checked by the browser).
    response.headers["Content-Security-Policy"] = (
        "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; "
        "connect-src 'self'; font-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'"
    )
    return response
