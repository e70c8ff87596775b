"""The bridge page itself (blueprint ``page``): one HTML document, one stylesheet, one script.

Everything the page needs is served from this app: no external fonts, scripts or styles, so it works
on a ship with no internet. The chart is hand-written SVG built by ``static/bridge.js``.
"""

from __future__ import annotations

from pathlib import Path

from flask import Blueprint, abort, current_app, render_template, send_file

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
            report_url="/report" if _report_file() is not None else None,
            demo_login=cfg.get("DEMO_LOGIN"),
        )
    )
    # Only our own origin may supply anything to this page (offline by construction, checked by the browser).
    response.headers["Content-Security-Policy"] = (
        "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; "
        "connect-src 'self'; font-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'"
    )
    return response


def _report_file() -> Path | None:
    """The replay report named by ``BRIDGE_REPORT_FILE`` (the demo voyage's), if it exists now."""
    name = current_app.config.get("BRIDGE_REPORT_FILE")
    if not name:
        return None
    path = Path(name)
    return path if path.is_file() else None


@bp.get("/report")
def report():
    """The replay report of the demo voyage (``hwadvice replay ... --report``), when one exists."""
    path = _report_file()
    if path is None:
        abort(404)
    return send_file(path, mimetype="text/html", max_age=0)
