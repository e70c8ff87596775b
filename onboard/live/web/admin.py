"""The administration page (blueprint ``admin``, under ``/admin``): loading conditions and their limit sets,
the active condition, the audit trail and the users.

Who may do what
---------------
Viewing conditions and limits needs no login. The audit trail and its exports (``/admin/audit``,
``.csv``, ``.json``) need a login (``officer`` or higher): they hold user names, client addresses and the
names typed at failed logins, which may be mistyped passwords. Writes need a login with a role
(:mod:`onboard.admin.auth`): switching the active condition and acknowledging alerts need ``officer``, changing
limits (edit, copy a condition, import a file) needs ``editor``, user management needs ``admin``.
When the administration database is configured, the bridge page's ``POST /api/alerts/<id>/acknowledge``
is guarded the same way (officer login and CSRF header; setting ``ADMIN_ACK_REQUIRES_LOGIN``) and each
acknowledgement is written to the audit trail with the logged-in user.

Every write (form POST, JSON PUT/POST) must carry the CSRF token of the session, as the form field
``csrf_token`` or the header ``X-CSRF-Token`` (``GET /admin/api/session`` gives it to scripts); without
it the request is refused with 400. Session cookies are HttpOnly and SameSite=Strict; a login lasts at
most ``ADMIN_SESSION_HOURS`` (12 h: one day's watches) and ends at once when the user's password or
role is changed or the user is disabled. Repeated failed logins are slowed down per user and client
address (answer 429 with ``Retry-After``).

Plain HTTP on the ship's LAN
----------------------------
The page is served by waitress over plain HTTP. On a plain-HTTP LAN the password typed at login and the
session cookie cross the network in clear: anyone on the same network segment can read them. Put TLS
in front before giving anyone a login:

* run a reverse proxy on the same computer that terminates TLS and forwards to the service on
  loopback, e.g. Caddy (``caddy reverse-proxy --from bridge-pc.ship.lan --to 127.0.0.1:8650``, with
  ``tls internal`` for a ship-internal certificate authority) or nginx (``listen 443 ssl;
  ssl_certificate ...; location / { proxy_pass http://127.0.0.1:8650; proxy_set_header
  X-Forwarded-For $remote_addr; proxy_set_header X-Forwarded-Proto https; }``);
* let the service listen on 127.0.0.1 only, so nobody can bypass the proxy;
* set ``SESSION_COOKIE_SECURE = True`` (cookie only sent over HTTPS) and ``ADMIN_TRUSTED_PROXIES = 1``
  (client addresses for throttling and the audit trail taken from ``X-Forwarded-For`` of that one
  proxy);
* install the proxy's CA certificate on the bridge and office computers.

Settings (Flask config)
-----------------------
``ADMIN_DB``
    Database URL or SQLAlchemy engine (the onboard store's database). Without it the page answers 503.
``ADMIN_VESSEL``
    Vessel TOML path or :class:`onboard.formats.vessel.Vessel` (validates points and base conditions).
``ADMIN_SESSION_HOURS``
    Longest login [h], default 12.
``ADMIN_ACK_REQUIRES_LOGIN``
    Guard the bridge page's acknowledge endpoint (default True when ``ADMIN_DB`` is set).
``ADMIN_PASSWORD_METHOD``
    werkzeug scrypt method for new passwords (default :data:`onboard.admin.auth.PASSWORD_METHOD`).
``ADMIN_TRUSTED_PROXIES``
    Number of reverse proxies in front (0 by default).
``SECRET_KEY``
    Signs the session cookie. If unset a random key is made at start (logins end at every restart);
    for a lasting key generate one at install time and keep it in a file readable only by the service.

Advisory only. The master decides. Limits set here do not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship; local regulations and licensed
practice come first.

References
----------
.. [1] OWASP Cross-Site Request Forgery Prevention Cheat Sheet, "Synchronizer token pattern"
   (common practice).
.. [2] RFC 6265bis (draft), "SameSite" cookie attribute; RFC 9110 §13.1.1 If-Match, §15.5.10 409
   Conflict; RFC 6585 §3 428 Precondition Required.
"""

from __future__ import annotations

import functools
import hmac
import logging
import secrets
import threading
from datetime import UTC, datetime, timedelta
from typing import Any

from flask import (
    Blueprint,
    Response,
    abort,
    current_app,
    flash,
    g,
    jsonify,
    redirect,
    render_template,
    request,
    session,
    url_for,
)

from advisor.limits import UNITS, LimitSetError
from onboard.admin import audit, observedsea
from onboard.admin.auth import PASSWORD_METHOD, ROLES, AuthError, Users, role_allows
from onboard.admin.limitstore import EDITABLE_FIELDS, LimitStore, LimitStoreError, VersionConflict
from onboard.formats.limitsfile import LimitsFileError
from onboard.live.web.provider import ADVISORY_NOTICE

__all__ = ["bp", "AdminContext", "admin_context"]

log = logging.getLogger(__name__)

bp = Blueprint("admin", __name__, url_prefix="/admin")

_UNSAFE = ("POST", "PUT", "PATCH", "DELETE")
_CSP = (
    "default-src 'self'; img-src 'self' data:; style-src 'self'; script-src 'self'; form-action 'self'; "
    "object-src 'none'; base-uri 'none'; frame-ancestors 'none'"
)
_lock = threading.Lock()


# ------------------------------------------------------------------------------------------- setup


@bp.record_once
def _configure(state) -> None:
    """Session cookie and key defaults (only where the app's config still has Flask's own defaults)."""
    app = state.app
    cfg = app.config
    cfg.setdefault("ADMIN_SESSION_HOURS", 12)
    hours = cfg["ADMIN_SESSION_HOURS"]
    if isinstance(hours, bool) or not isinstance(hours, int | float) or not 0.05 <= hours <= 24 * 7:
        raise ValueError(f"web config ADMIN_SESSION_HOURS: expected a number in [0.05, 168] h, got {hours!r}")
    if not cfg.get("SECRET_KEY"):
        cfg["SECRET_KEY"] = secrets.token_hex(32)
    cfg["SESSION_COOKIE_HTTPONLY"] = True
    if cfg.get("SESSION_COOKIE_SAMESITE") not in ("Lax", "Strict"):
        cfg["SESSION_COOKIE_SAMESITE"] = "Strict"
    cfg["PERMANENT_SESSION_LIFETIME"] = timedelta(hours=float(hours))
    if cfg.get("MAX_CONTENT_LENGTH") is None:
        cfg["MAX_CONTENT_LENGTH"] = MAX_REQUEST_BYTES
    proxies = int(cfg.get("ADMIN_TRUSTED_PROXIES", 0) or 0)
    if proxies > 0:
        from werkzeug.middleware.proxy_fix import ProxyFix

        app.wsgi_app = ProxyFix(app.wsgi_app, x_for=proxies, x_proto=proxies, x_host=proxies)


class AdminContext:
    """The administration objects of one app: database engine, vessel, users and stored limits."""

    def __init__(self, db: Any, vessel: Any = None, *, password_method: str = PASSWORD_METHOD):
        from onboard.core.store import make_engine

        self.engine = make_engine(db) if isinstance(db, str) else db
        if isinstance(vessel, str) or hasattr(vessel, "__fspath__"):
            from onboard.formats.vessel import load_vessel

            vessel = load_vessel(vessel)
        self.vessel = vessel
        self.limits = LimitStore(self.engine, vessel)  # migrates the store and the admin tables
        self.users = Users(self.engine, hash_method=password_method)


def admin_context(app=None) -> AdminContext | None:
    """The app's :class:`AdminContext`, built on first use; None when ``ADMIN_DB`` is not set."""
    app = app or current_app
    ctx = app.extensions.get("admin")
    if ctx is None:
        db = app.config.get("ADMIN_DB")
        if db is None:
            return None
        with _lock:
            ctx = app.extensions.get("admin")
            if ctx is None:
                ctx = AdminContext(
                    db,
                    app.config.get("ADMIN_VESSEL"),
                    password_method=app.config.get("ADMIN_PASSWORD_METHOD", PASSWORD_METHOD),
                )
                app.extensions["admin"] = ctx
    return ctx


def _ctx() -> AdminContext:
    ctx = admin_context()
    if ctx is None:
        # An HTML page in the display's palette (a plain-text answer would be a white screen at night).
        body, status = _render(
            "admin_message.html",
            503,
            title="Not configured",
            message="Administration is not configured on this service (no database: ADMIN_DB).",
        )
        abort(Response(body, status, mimetype="text/html"))
    return ctx


# ------------------------------------------------------------------------------------------- session


def csrf_token() -> str:
    """The session's CSRF token (made on first use)."""
    tok = session.get("csrf")
    if not tok:
        tok = secrets.token_urlsafe(32)
        session["csrf"] = tok
    return tok


def _csrf_ok() -> bool:
    sent = request.headers.get("X-CSRF-Token") or request.form.get("csrf_token") or ""
    tok = session.get("csrf") or ""
    return bool(tok) and hmac.compare_digest(sent.encode(), tok.encode())


def current_user() -> dict[str, Any] | None:
    """The logged-in user (current role from the database), or None when not logged in or expired."""
    if "admin_user" in g:
        return g.admin_user
    user = None
    name, epoch, since = session.get("user"), session.get("epoch"), session.get("login_utc")
    ctx = admin_context()
    if ctx is not None and name and isinstance(epoch, int) and isinstance(since, (int, float)):
        age_h = (datetime.now(UTC).timestamp() - since) / 3600.0
        if 0 <= age_h <= float(current_app.config["ADMIN_SESSION_HOURS"]):
            user = ctx.users.session_valid(name, epoch)
    g.admin_user = user
    return user


def _client() -> str:
    return (request.remote_addr or "unknown")[:100]


def _wants_json() -> bool:
    return request.path.startswith("/admin/api/") or request.is_json


def _refuse(status: int, message: str):
    if _wants_json():
        return jsonify({"ok": False, "error": message}), status
    return _render("admin_message.html", status=status, title="Not allowed", message=message)


MAX_REQUEST_BYTES = 1024 * 1024
"""Largest request body the app accepts (Flask ``MAX_CONTENT_LENGTH``; a limit-set file is a few kB);
larger requests are answered 413 before they are read (a project choice)."""


@bp.errorhandler(413)
def _too_large(_exc):
    return _refuse(413, f"The request is larger than the allowed {MAX_REQUEST_BYTES // 1024} kB.")


@bp.errorhandler(audit.AuditError)
def _audit_refused(exc):
    """A change whose texts exceed the audit trail's limits is refused whole (400, one line)."""
    return _refuse(400, f"Not saved: {exc}")


def requires(role: str):
    """View decorator: a logged-in user with at least ``role`` (401 / 403 otherwise)."""
    if role not in ROLES:
        raise ValueError(f"role {role!r}: expected one of {', '.join(ROLES)}")

    def deco(view):
        @functools.wraps(view)
        def wrapped(*a, **kw):
            _ctx()
            user = current_user()
            if user is None:
                return _refuse(401, f"This needs a login with the role '{role}' or higher: log in first.")
            if not role_allows(user["role"], role):
                return _refuse(
                    403,
                    f"This needs the role '{role}' or higher; you are logged in as "
                    f"'{user['username']}' ({user['role']}).",
                )
            return view(*a, **kw)

        return wrapped

    return deco


@bp.before_request
def _check_csrf():
    if request.method in _UNSAFE and not _csrf_ok():
        return _refuse(
            400,
            "Refused: the form's security token (CSRF) is missing or out of date. "
            "Reload the page and try again.",
        )
    return None


@bp.after_request
def _headers(resp: Response) -> Response:
    resp.headers.setdefault("Content-Security-Policy", _CSP)
    resp.headers.setdefault("Cache-Control", "no-store")
    resp.headers.setdefault("X-Content-Type-Options", "nosniff")
    return resp


@bp.app_context_processor
def _template_globals() -> dict[str, Any]:
    return {"admin_csrf_token": csrf_token}


def _render(template: str, status: int = 200, **kw: Any):
    user = current_user() if admin_context() is not None else None
    return render_template(template, notice=ADVISORY_NOTICE, user=user, roles=ROLES, **kw), status


# ------------------------------------------------------------------------------------------- bridge guard


@bp.before_app_request
def _guard_acknowledge():
    """Officer login and CSRF header for the bridge page's acknowledge endpoint (module docstring)."""
    if request.endpoint != "api.acknowledge" or request.method != "POST":
        return None
    if admin_context() is None or not current_app.config.get("ADMIN_ACK_REQUIRES_LOGIN", True):
        return None
    user = current_user()
    if user is None:
        return jsonify(
            {"ok": False, "error": "acknowledging an alert needs an officer login: log in at /admin/login"}
        ), 401
    if not role_allows(user["role"], "officer"):
        return jsonify(
            {
                "ok": False,
                "error": f"acknowledging needs the role 'officer'; {user['username']} is {user['role']}",
            }
        ), 403
    if not _csrf_ok():
        return jsonify(
            {"ok": False, "error": "X-CSRF-Token header missing or wrong (get it from /admin/api/session)"}
        ), 400
    return None


@bp.after_app_request
def _audit_acknowledge(resp: Response) -> Response:
    if request.endpoint == "api.acknowledge" and request.method == "POST" and resp.status_code == 200:
        ctx = admin_context()
        if ctx is not None:
            user = current_user()
            body = request.get_json(silent=True) or {}
            try:
                audit.record(
                    ctx.engine,
                    actor=user["username"] if user else "(no login)",
                    action="alert.acknowledge",
                    target=f"alert {request.view_args.get('alert_id')}",
                    new={"as": body.get("user")},
                    reason="acknowledged on the bridge page",
                    client=_client(),
                )
            except Exception:  # the acknowledgement itself is stored (alerts table, with user and time)
                log.exception("acknowledgement of alert %s not written to the audit trail", request.view_args)
    return resp


# ------------------------------------------------------------------------------------------- login


def _safe_next(target: str | None) -> str:
    if target and target.startswith("/admin") and not target.startswith("//") and "\\" not in target:
        return target
    return url_for("admin.index")


@bp.get("/login")
def login_form():
    _ctx()
    csrf_token()
    return _render("admin_login.html", next=_safe_next(request.args.get("next")))


@bp.post("/login")
def login():
    ctx = _ctx()
    name = request.form.get("username", "").strip()
    password = request.form.get("password", "")
    result = ctx.users.authenticate(name, password, _client())
    if not result.ok:
        status = 429 if result.retry_after_s > 0 and "too many" in result.message else 401
        body, code = _render(
            "admin_login.html",
            status=status,
            error=result.message,
            next=_safe_next(request.form.get("next")),
            username=name,
        )
        resp = current_app.make_response((body, code))
        if result.retry_after_s > 0:
            resp.headers["Retry-After"] = str(max(1, round(result.retry_after_s)))
        return resp
    session.clear()  # no fixation: a new session (and a new CSRF token) for the logged-in user
    session.permanent = True
    session["user"] = result.username
    session["epoch"] = result.epoch
    session["login_utc"] = datetime.now(UTC).timestamp()
    csrf_token()
    g.pop("admin_user", None)
    flash(f"Logged in as {result.username} ({result.role}).")
    return redirect(_safe_next(request.form.get("next")), 303)


@bp.post("/logout")
def logout():
    user = current_user()
    session.clear()
    g.pop("admin_user", None)
    flash("Logged out." if user else "You were not logged in.")
    return redirect(url_for("admin.index"), 303)


# ------------------------------------------------------------------------------------------- pages


def _condition_name(ctx: AdminContext, cid: int) -> str:
    for c in ctx.limits.conditions():
        if c["id"] == cid:
            return c["name"]
    abort(404)


def _points(ctx: AdminContext, cond: dict[str, Any]) -> list[str]:
    names = [] if ctx.vessel is None else list(ctx.vessel.points_mapping())
    names += [p["name"] for p in cond["settings"].get("points", [])]
    return names


@bp.get("/")
def index():
    ctx = _ctx()
    return _render(
        "admin_index.html",
        conditions=ctx.limits.conditions(),
        active=ctx.limits.active_condition(),
        vessel=ctx.vessel,
    )


def _condition_page(cid: int, status: int = 200, **kw: Any):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    cond = ctx.limits.condition(name)
    active = ctx.limits.active_condition()
    return _render(
        "admin_condition.html",
        status=status,
        cond=cond,
        units=list(UNITS),
        points=_points(ctx, cond),
        is_active=bool(active and active["condition"] == name),
        editable=EDITABLE_FIELDS,
        errors=kw.pop("errors", {}),
        form=kw.pop("form", {}),
        **kw,
    )


@bp.get("/conditions/<int:cid>")
def condition(cid: int):
    return _condition_page(cid)


def _field_of(err: LimitSetError) -> str:
    """``limits[2].value`` -> ``value`` (the form field the parser message belongs to)."""
    return err.key.rsplit(".", 1)[-1] if "." in err.key else err.key


@bp.post("/conditions/<int:cid>/limits/<key>")
@requires("editor")
def edit_limit(cid: int, key: str):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    form = {f: request.form.get(f, "") for f in EDITABLE_FIELDS if f in request.form}
    try:
        version = int(request.form.get("version", ""))
    except ValueError:
        return _condition_page(
            cid, 400, errors={key: {"_": "the form has no limit version: reload the page"}}
        )
    user = current_user()
    try:
        ctx.limits.set_limit(
            name,
            key,
            form,
            expected_version=version,
            actor=user["username"],
            reason=request.form.get("reason", ""),
            client=_client(),
        )
    except VersionConflict as exc:
        cur = exc.current
        msg = (
            f"Not saved: someone changed this limit while you were editing (now version {cur['version']}: "
            f"value {cur['value']:g} {cur['unit']}). Your values are kept below; check and save again."
        )
        return _condition_page(cid, 409, errors={key: {"_": msg}}, form={key: form}, conflict={key: cur})
    except LimitSetError as exc:
        return _condition_page(cid, 422, errors={key: {_field_of(exc): str(exc)}}, form={key: form})
    except LimitStoreError as exc:
        return _condition_page(cid, 400, errors={key: {"_": str(exc)}}, form={key: form})
    flash(f"Saved limit {key} of {name}.")
    return redirect(url_for("admin.condition", cid=cid) + f"#limit-{key}", 303)


@bp.post("/conditions/<int:cid>/copy")
@requires("editor")
def copy_condition(cid: int):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    new_name = request.form.get("new_name", "").strip()
    try:
        new = ctx.limits.copy_condition(
            name,
            new_name,
            actor=current_user()["username"],
            reason=request.form.get("reason", ""),
            client=_client(),
        )
    except LimitStoreError as exc:
        return _condition_page(cid, 400, copy_error=str(exc))
    flash(f"Made {new['name']!r} as a copy of {name!r}.")
    return redirect(url_for("admin.condition", cid=new["id"]), 303)


@bp.get("/conditions/<int:cid>/export.toml")
def export_toml(cid: int):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    safe = "".join(ch if ch.isalnum() or ch in "-_" else "_" for ch in name).strip("_") or "limits"
    return Response(
        ctx.limits.export_toml(name),
        mimetype="application/toml",
        headers={"Content-Disposition": f'attachment; filename="{safe}.toml"'},
    )


@bp.post("/conditions/<int:cid>/import")
@requires("editor")
def import_toml(cid: int):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    upload = request.files.get("file")
    if upload is not None and upload.filename:
        label = upload.filename
        raw = upload.read(1_000_001)
    else:
        label, raw = "pasted text", request.form.get("toml", "").encode()
    if len(raw) > 1_000_000:
        return _condition_page(cid, 413, import_error=f"{label}: larger than 1 MB; a limit file is a few kB")
    try:
        text = raw.decode("utf-8")
        version = int(request.form.get("version", ""))
    except UnicodeDecodeError as exc:
        return _condition_page(
            cid, 422, import_error=f"{label}: not UTF-8 text ({exc.reason} at byte {exc.start})"
        )
    except ValueError:
        return _condition_page(cid, 400, import_error="the form has no condition version: reload the page")
    try:
        ctx.limits.import_toml(
            text,
            label,
            actor=current_user()["username"],
            reason=request.form.get("reason", ""),
            client=_client(),
            condition=name,
            expected_version=version,
        )
    except VersionConflict as exc:
        return _condition_page(cid, 409, import_error=f"Not imported: {exc}")
    except (LimitSetError, LimitsFileError, LimitStoreError) as exc:
        return _condition_page(cid, 422, import_error=str(exc))
    flash(f"Imported {label} into {name!r}.")
    return redirect(url_for("admin.condition", cid=cid), 303)


@bp.post("/active")
@requires("officer")
def set_active():
    ctx = _ctx()
    name = request.form.get("condition", "")
    try:
        ctx.limits.set_active(
            name, actor=current_user()["username"], reason=request.form.get("reason", ""), client=_client()
        )
    except LimitStoreError as exc:
        return _render(
            "admin_index.html",
            status=400,
            conditions=ctx.limits.conditions(),
            active=ctx.limits.active_condition(),
            vessel=ctx.vessel,
            active_error=str(exc),
        )
    flash(f"Active condition is now {name!r}; it applies from the next analysis cycle.")
    return redirect(url_for("admin.index"), 303)


@bp.post("/alerts/<int:alert_id>/acknowledge")
@requires("officer")
def acknowledge(alert_id: int):
    """Acknowledge an alert as the logged-in officer (same outcome codes as the bridge API)."""
    ctx = _ctx()
    provider = current_app.extensions["bridge_provider"]
    user = current_user()
    outcome = provider.acknowledge_alert(alert_id, user["username"])
    if outcome == "ok":
        audit.record(
            ctx.engine,
            actor=user["username"],
            action="alert.acknowledge",
            target=f"alert {alert_id}",
            new={"as": user["username"]},
            reason="acknowledged on the administration page",
            client=_client(),
        )
        return jsonify({"ok": True})
    if outcome == "unknown":
        return jsonify({"ok": False, "error": f"alert {alert_id}: no such open alert"}), 404
    return jsonify({"ok": False, "error": f"alert {alert_id}: already acknowledged"}), 409


# -- the watch's visual sea-state estimate (onboard.admin.observedsea)
def _service_now() -> datetime:
    """The bridge page's clock (the service clock; the replay clock in the demo), else the wall clock."""
    clock = getattr(current_app.extensions.get("bridge_provider"), "clock", None)
    try:
        return clock() if callable(clock) else datetime.now(UTC)
    except Exception:
        return datetime.now(UTC)


def _observed_page(status: int = 200, **kw: Any):
    ctx = _ctx()
    now = _service_now()
    entries = audit.entries(ctx.engine, newest_first=True, limit=500)
    recent = [e for e in entries if e["action"] == observedsea.ACTION]
    return _render(
        "admin_observed_sea.html",
        status=status,
        current=observedsea.latest_observation(ctx.engine, now),
        recent=recent[:10],
        labels=observedsea.LABELS,
        max_age_h=observedsea.MAX_AGE_S / 3600.0,
        form=kw.pop("form", {}),
        **kw,
    )


@bp.get("/observed-sea")
def observed_sea():
    return _observed_page()


@bp.post("/observed-sea")
@requires("officer")
def observed_sea_enter():
    ctx = _ctx()
    try:
        systems, note = observedsea.parse_observation(request.form)
    except observedsea.ObservationError as exc:
        return _observed_page(400, form=request.form, observed_error=str(exc))
    user = current_user()
    observedsea.record_observation(
        ctx.engine, systems=systems, note=note, actor=user["username"], client=_client(), when=_service_now()
    )
    flash("Sea-state estimate recorded. It is shown with the estimate from the motions and used when the "
          "motions cannot be used.")
    return redirect(url_for("admin.observed_sea"), 303)


# -- audit
@bp.get("/audit")
@requires("officer")
def audit_page():
    ctx = _ctx()
    try:
        limit = min(max(int(request.args.get("limit", 200)), 1), 5000)
    except ValueError:
        limit = 200
    return _render(
        "admin_audit.html",
        rows=audit.entries(ctx.engine, newest_first=True, limit=limit),
        report=audit.verify_chain(ctx.engine),
        limit=limit,
    )


@bp.get("/audit.csv")
@requires("officer")
def audit_csv():
    ctx = _ctx()
    return Response(
        audit.export_csv(audit.entries(ctx.engine)),
        mimetype="text/csv",
        headers={"Content-Disposition": 'attachment; filename="audit.csv"'},
    )


@bp.get("/audit.json")
@requires("officer")
def audit_json():
    ctx = _ctx()
    return Response(
        audit.export_json(audit.entries(ctx.engine)),
        mimetype="application/json",
        headers={"Content-Disposition": 'attachment; filename="audit.json"'},
    )


# -- users
@bp.get("/users")
@requires("admin")
def users_page():
    return _render("admin_users.html", users=_ctx().users.list())


@bp.post("/users")
@requires("admin")
def users_add():
    ctx = _ctx()
    f = request.form
    try:
        ctx.users.add(
            f.get("username", "").strip(),
            f.get("password", ""),
            f.get("role", ""),
            actor=current_user()["username"],
            client=_client(),
            reason=f.get("reason", ""),
        )
    except AuthError as exc:
        return _render("admin_users.html", status=400, users=ctx.users.list(), error=str(exc))
    flash(f"User {f.get('username')} added.")
    return redirect(url_for("admin.users_page"), 303)


@bp.post("/users/<username>")
@requires("admin")
def users_change(username: str):
    ctx = _ctx()
    f = request.form
    actor, client = current_user()["username"], _client()
    try:
        if f.get("password"):
            ctx.users.set_password(
                username, f["password"], actor=actor, client=client, reason=f.get("reason", "")
            )
        if f.get("role"):
            ctx.users.set_role(username, f["role"], actor=actor, client=client, reason=f.get("reason", ""))
        if f.get("disabled") in ("yes", "no"):
            ctx.users.set_disabled(
                username, f["disabled"] == "yes", actor=actor, client=client, reason=f.get("reason", "")
            )
    except AuthError as exc:
        return _render("admin_users.html", status=400, users=ctx.users.list(), error=str(exc))
    flash(f"User {username} changed.")
    return redirect(url_for("admin.users_page"), 303)


@bp.post("/password")
@requires("officer")
def own_password():
    """Any logged-in user changes their own password (needs the current one)."""
    ctx = _ctx()
    user = current_user()
    f = request.form
    check = ctx.users.authenticate(user["username"], f.get("current", ""), _client())
    if not check.ok:
        return _refuse(403, "The current password is wrong: " + check.message)
    try:
        u = ctx.users.set_password(
            user["username"],
            f.get("password", ""),
            actor=user["username"],
            client=_client(),
            reason="own password changed",
        )
    except AuthError as exc:
        return _refuse(400, str(exc))
    session["epoch"] = u["session_epoch"]  # stay logged in here; other sessions of this user end
    g.pop("admin_user", None)
    flash("Password changed.")
    return redirect(url_for("admin.index"), 303)


# ------------------------------------------------------------------------------------------- JSON API


@bp.get("/api/session")
def api_session():
    _ctx()
    user = current_user()
    expires = None
    if user is not None:
        expires = datetime.fromtimestamp(session["login_utc"], UTC) + current_app.permanent_session_lifetime
    return jsonify(
        {
            "user": user["username"] if user else None,
            "role": user["role"] if user else None,
            "csrf_token": csrf_token(),
            "expires_utc": expires.isoformat(timespec="seconds").replace("+00:00", "Z") if expires else None,
        }
    )


def _json_limit(lim: dict[str, Any]) -> dict[str, Any]:
    return {k: lim[k] for k in ("key", "criterion", "statistic", *EDITABLE_FIELDS, "version")}


def _limit_etag(cid: int, lim: dict[str, Any]) -> str:
    return f"{cid}-{lim['id']}-{lim['version']}"


@bp.get("/api/conditions")
def api_conditions():
    ctx = _ctx()
    active = ctx.limits.active_condition()
    return jsonify(
        {
            "active": active["condition"] if active else None,
            "conditions": [
                {
                    "id": c["id"],
                    "name": c["name"],
                    "base_condition": c["base_condition"],
                    "version": c["version"],
                    "limits": [_json_limit(x) for x in c["limits"]],
                }
                for c in ctx.limits.conditions()
            ],
            "advisory_notice": ADVISORY_NOTICE,
        }
    )


@bp.get("/api/conditions/<int:cid>/limits/<key>")
def api_limit(cid: int, key: str):
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    try:
        lim = ctx.limits.limit(name, key)
    except LimitStoreError as exc:
        return jsonify({"ok": False, "error": str(exc)}), 404
    resp = jsonify(_json_limit(lim))
    resp.set_etag(_limit_etag(cid, lim))
    return resp


@bp.put("/api/conditions/<int:cid>/limits/<key>")
@requires("editor")
def api_put_limit(cid: int, key: str):
    """Change a limit: JSON ``{"value": .., "unit": .., ..., "reason": "..", "version": n}`` or the version in
    ``If-Match`` (the ETag of the GET). 200 with the new limit and ETag; 409 with ``current``; 422 with the
    parser's message and ``field``; 428 when no version is given."""
    ctx = _ctx()
    name = _condition_name(ctx, cid)
    body = request.get_json(silent=True)
    if not isinstance(body, dict):
        return jsonify({"ok": False, "error": "body: expected a JSON object"}), 400
    try:
        current = ctx.limits.limit(name, key)
    except LimitStoreError as exc:
        return jsonify({"ok": False, "error": str(exc)}), 404
    version = body.get("version")
    if version is None and request.if_match and not request.if_match.star_tag:
        for tag in request.if_match.as_set():
            parts = tag.split("-")
            if len(parts) == 3 and parts[:2] == [str(cid), str(current["id"])] and parts[2].isdigit():
                version = int(parts[2])
            else:
                version = -1  # a tag of another limit or an older row: never matches
    if isinstance(version, bool) or not isinstance(version, int):
        return jsonify(
            {
                "ok": False,
                "error": 'give the version you edited: "version" in the body or the ETag in If-Match',
                "current": _json_limit(current),
            }
        ), 428
    changes = {k: v for k, v in body.items() if k not in ("version", "reason")}
    try:
        lim = ctx.limits.set_limit(
            name,
            key,
            changes,
            expected_version=version,
            actor=current_user()["username"],
            reason=body.get("reason") or "",
            client=_client(),
        )
    except VersionConflict as exc:
        resp = jsonify({"ok": False, "error": str(exc), "current": _json_limit(exc.current)})
        resp.set_etag(_limit_etag(cid, exc.current))
        return resp, 409
    except LimitSetError as exc:
        return jsonify({"ok": False, "error": str(exc), "field": _field_of(exc), "key": exc.key}), 422
    except LimitStoreError as exc:
        return jsonify({"ok": False, "error": str(exc)}), 400
    resp = jsonify({"ok": True, "limit": _json_limit(lim)})
    resp.set_etag(_limit_etag(cid, lim))
    return resp


@bp.get("/api/active")
def api_active():
    active = _ctx().limits.active_condition()
    if active is None:
        return jsonify({"condition": None})
    return jsonify(
        {
            "condition": active["condition"],
            "set_by": active["set_by"],
            "note": active["note"],
            "time_utc": active["time_utc"].isoformat(timespec="seconds").replace("+00:00", "Z"),
        }
    )


@bp.post("/api/active")
@requires("officer")
def api_set_active():
    ctx = _ctx()
    body = request.get_json(silent=True)
    if not isinstance(body, dict) or not isinstance(body.get("condition"), str):
        return jsonify(
            {"ok": False, "error": 'body: expected {"condition": "<name>", "reason": "<why>"}'}
        ), 400
    try:
        out = ctx.limits.set_active(
            body["condition"],
            actor=current_user()["username"],
            reason=body.get("reason") or "",
            client=_client(),
        )
    except LimitStoreError as exc:
        return jsonify({"ok": False, "error": str(exc)}), 400
    return jsonify({"ok": True, "condition": out["condition"], "previous": out["previous"]})


def _describe(value: Any) -> str:
    """Short text of an audit old/new value for the table."""
    if value is None:
        return ""
    if isinstance(value, dict) and "limits" in value:
        return f"limit set ({len(value['limits'])} limits)"
    if isinstance(value, dict) and "limit_set" in value:
        return f"base {value.get('base_condition')!r}, limit set ({len(value['limit_set']['limits'])} limits)"
    return audit.canonical_json(value)


bp.add_app_template_filter(_describe, "audit_describe")
