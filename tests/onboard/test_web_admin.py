"""Tests for the administration page (onboard/live/web/admin.py) through Flask's test client, on SQLite and
PostgreSQL: who may write what, CSRF, session cookie and expiry, login throttling, inline validation
messages, version conflicts (409 with the current value), import/export, active condition, the audit
trail view/export, and the guard on the bridge page's acknowledge endpoint.

Sources of the checks: expected messages are advisor.limits' own (allowed ranges and units of UNITS);
HTTP status meanings from RFC 9110 (401, 403, 409, 422) and RFC 6585 (428, 429); cookie attributes
from RFC 6265 (HttpOnly) and the SameSite draft (RFC 6265bis); the exported TOML is checked against
the config/limits file it came from (round trip).
"""

from __future__ import annotations

import csv
import html
import io
import json
import re
from datetime import UTC, datetime

import pytest
from admin_fixtures import BACKENDS, FAST_HASH, LIMITS_DIR, VESSEL_FILE, engine_fixture
from markupsafe import escape
from web_fixtures import make_provider

from onboard.admin import audit
from onboard.admin.auth import Users
from onboard.formats.limitsfile import loads_limit_set, read_limit_set
from onboard.admin.limitstore import LimitStore
from onboard.formats.vessel import load_vessel
from onboard.live.web import create_app

LIGHT = "light, high GM"
DEEP = "deep laden, low GM"
PASSWORDS = {
    "master": "master pass 1",
    "oow": "officer pass 1",
    "office": "editor pass 1",
    "office2": "editor pass 2",
}


@pytest.fixture(scope="module")
def vessel():
    return load_vessel(VESSEL_FILE)


@pytest.fixture(params=BACKENDS)
def engine(request, tmp_path):
    e = engine_fixture(request, tmp_path)
    yield e
    if request.param == "sqlite":
        e.dispose()


@pytest.fixture()
def app(engine, vessel):
    store = LimitStore(engine, vessel)
    store.load_vessel_conditions(actor="cli:test")
    users = Users(engine, hash_method=FAST_HASH)
    for name, role in (("master", "admin"), ("oow", "officer"), ("office", "editor"), ("office2", "editor")):
        users.add(name, PASSWORDS[name], role, actor="cli:test")
    return create_app(
        {"TESTING": True, "ADMIN_DB": engine, "ADMIN_VESSEL": vessel, "ADMIN_PASSWORD_METHOD": FAST_HASH},
        make_provider(),
    )


@pytest.fixture()
def client(app):
    return app.test_client()


def token(client) -> str:
    return client.get("/admin/api/session").get_json()["csrf_token"]


def login(client, name, password=None):
    tok = token(client)
    r = client.post(
        "/admin/login", data={"username": name, "password": password or PASSWORDS[name], "csrf_token": tok}
    )
    assert r.status_code == 303, r.get_data(as_text=True)
    return token(client)


def cid(client, name):
    return next(
        c["id"] for c in client.get("/admin/api/conditions").get_json()["conditions"] if c["name"] == name
    )


def shows(response, text) -> bool:
    """The text is in the body (as is in JSON, HTML-escaped in a page)."""
    body = response.get_data(as_text=True)
    return text in body or str(escape(text)) in body


def ctx(app):
    from onboard.live.web.admin import admin_context

    return admin_context(app)


# ------------------------------------------------------------------------------------------- viewing


def test_viewing_needs_no_login(client):
    r = client.get("/admin/")
    page = r.get_data(as_text=True)
    assert r.status_code == 200 and LIGHT in page and DEEP in page and "the master decides" in page
    assert "viewing without login" in page and 'id="active-form"' not in page  # no write forms for viewers
    assert "default-src 'self'" in r.headers["Content-Security-Policy"]
    r = client.get(f"/admin/conditions/{cid(client, LIGHT)}")
    assert (
        r.status_code == 200
        and "Roll (RMS)" in r.get_data(as_text=True)
        and "<form" not in r.get_data(as_text=True).split('id="notice"')[0].split("<main")[1]
    )
    assert client.get("/admin/conditions/9999").status_code == 404


def test_audit_trail_needs_a_login(client):
    """Issue 16: the trail holds user names, client addresses and names typed at failed logins."""
    for path in ("/admin/audit", "/admin/audit.csv", "/admin/audit.json"):
        r = client.get(path)
        assert r.status_code == 401 and "log in first" in r.get_data(as_text=True), path
    login(client, "oow")
    for path in ("/admin/audit", "/admin/audit.csv", "/admin/audit.json"):
        assert client.get(path).status_code == 200, path


def test_request_size_limit_and_text_length_limits(client, engine):
    tok = login(client, "office")
    c_light = cid(client, LIGHT)
    # a body above the limit is refused before it is read (Flask MAX_CONTENT_LENGTH)
    big = json.dumps({"value": 5.0, "version": 1, "reason": "r" * (2 * 1024 * 1024)})
    r = client.put(
        f"/admin/api/conditions/{c_light}/limits/roll_rms",
        data=big,
        content_type="application/json",
        headers={"X-CSRF-Token": tok},
    )
    assert r.status_code == 413 and "larger than the allowed 1024 kB" in r.get_json()["error"]
    # a label or reason of 500,000 characters is not stored (the audit trail's length limits)
    n0 = len(audit.entries(engine))
    for body, field in (
        ({"value": 5.0, "version": 1, "reason": "r" * 500_000}, "reason: 500000 characters"),
        ({"label": "l" * 500_000, "version": 1, "reason": "long label"}, "new.label: 500000 characters"),
    ):
        r = client.put(
            f"/admin/api/conditions/{c_light}/limits/roll_rms", json=body, headers={"X-CSRF-Token": tok}
        )
        assert r.status_code == 400 and field in r.get_json()["error"], r.get_data(as_text=True)
    assert len(audit.entries(engine)) == n0


def test_not_configured_answers_503_and_leaves_the_bridge_alone():
    app = create_app({"TESTING": True}, make_provider())
    c = app.test_client()
    assert c.get("/admin/").status_code == 503
    assert c.post("/api/alerts/1/acknowledge", json={"user": "OOW"}).status_code == 200  # unguarded


# ------------------------------------------------------------------------------------------- refusals


def write_requests(client, c_light):
    """Every write endpoint with a plausible body (no CSRF token added here)."""
    return [
        (
            "post",
            f"/admin/conditions/{c_light}/limits/roll_rms",
            {"data": {"value": "5", "version": "1", "reason": "r"}},
            "editor",
        ),
        ("post", f"/admin/conditions/{c_light}/copy", {"data": {"new_name": "n", "reason": "r"}}, "editor"),
        (
            "post",
            f"/admin/conditions/{c_light}/import",
            {"data": {"toml": "x", "version": "1", "reason": "r"}},
            "editor",
        ),
        (
            "put",
            f"/admin/api/conditions/{c_light}/limits/roll_rms",
            {"json": {"value": 5, "version": 1, "reason": "r"}},
            "editor",
        ),
        ("post", "/admin/active", {"data": {"condition": LIGHT, "reason": "r"}}, "officer"),
        ("post", "/admin/api/active", {"json": {"condition": LIGHT, "reason": "r"}}, "officer"),
        (
            "post",
            "/admin/users",
            {"data": {"username": "x1", "password": "long enough", "role": "officer"}},
            "admin",
        ),
        ("post", "/admin/users/oow", {"data": {"role": "admin"}}, "admin"),
        ("post", "/admin/alerts/1/acknowledge", {"data": {}}, "officer"),
    ]


def _with_token(kw, tok):
    kw = {k: dict(v) for k, v in kw.items()}
    if "data" in kw:
        kw["data"]["csrf_token"] = tok
    else:
        kw["headers"] = {"X-CSRF-Token": tok}
    return kw


def test_writes_without_login_are_refused_401(client, engine):
    n = len(audit.entries(engine))
    tok = token(client)
    for method, url, kw, _role in write_requests(client, cid(client, LIGHT)):
        r = getattr(client, method)(url, **_with_token(kw, tok))
        assert r.status_code == 401, (url, r.status_code)
        assert "log in" in r.get_data(as_text=True).lower()
    assert len(audit.entries(engine)) == n  # nothing changed


@pytest.mark.parametrize("who", ["oow", "office"])
def test_writes_with_a_too_small_role_are_refused_403(client, engine, who):
    tok = login(client, who)
    n = len(audit.entries(engine))
    rank = {"officer": 0, "editor": 1, "admin": 2}
    mine = {"oow": "officer", "office": "editor"}[who]
    refused = 0
    for method, url, kw, role in write_requests(client, cid(client, LIGHT)):
        if rank[role] <= rank[mine]:
            continue
        r = getattr(client, method)(url, **_with_token(kw, tok))
        assert r.status_code == 403, (url, r.status_code)
        assert shows(r, f"needs the role '{role}'")
        refused += 1
    assert refused == {"oow": 6, "office": 2}[who]
    assert len(audit.entries(engine)) == n


def test_writes_without_csrf_token_are_refused_400(client, engine):
    good = login(client, "master")
    n = len(audit.entries(engine))
    for method, url, kw, _role in write_requests(client, cid(client, LIGHT)):
        for bad in (None, "forged" + good[6:]):
            kw2 = kw if bad is None else _with_token(kw, bad)
            r = getattr(client, method)(url, **kw2)
            assert r.status_code == 400 and "CSRF" in r.get_data(as_text=True), (url, bad)
    assert client.post("/admin/logout").status_code == 400  # logout is a write too
    assert (
        client.post("/admin/login", data={"username": "master", "password": PASSWORDS["master"]}).status_code
        == 400
    )
    assert len(audit.entries(engine)) == n


# ------------------------------------------------------------------------------------------- session


def test_session_cookie_flags_and_rotation(client, app):
    before = token(client)
    tok = login(client, "oow")
    assert tok != before  # new session at login (no fixation)
    cookies = [h for k, h in client.get("/admin/").headers.items() if k == "Set-Cookie"] or [
        h
        for k, h in client.post(
            "/admin/login", data={"username": "oow", "password": PASSWORDS["oow"], "csrf_token": tok}
        ).headers.items()
        if k == "Set-Cookie"
    ]
    cookie = cookies[0]
    assert "HttpOnly" in cookie and "SameSite=Strict" in cookie and "Expires=" in cookie
    assert app.config["PERMANENT_SESSION_LIFETIME"].total_seconds() == 12 * 3600
    info = client.get("/admin/api/session").get_json()
    assert info["user"] == "oow" and info["role"] == "officer"
    expires = datetime.fromisoformat(info["expires_utc"].replace("Z", "+00:00"))
    assert abs((expires - datetime.now(UTC)).total_seconds() - 12 * 3600) < 60


def test_session_expires_after_12_hours(client):
    tok = login(client, "oow")
    with client.session_transaction() as s:
        s["login_utc"] = s["login_utc"] - 12 * 3600 - 5
    r = client.post("/admin/active", data={"condition": LIGHT, "reason": "r", "csrf_token": tok})
    assert r.status_code == 401
    assert client.get("/admin/api/session").get_json()["user"] is None


def test_password_change_ends_other_sessions(app):
    a, b = app.test_client(), app.test_client()
    tok_b = login(b, "oow")
    tok_a = login(a, "master")
    r = a.post("/admin/users/oow", data={"password": "officer pass 2", "reason": "lost", "csrf_token": tok_a})
    assert r.status_code == 303
    assert (
        b.post("/admin/active", data={"condition": LIGHT, "reason": "r", "csrf_token": tok_b}).status_code
        == 401
    )
    login(b, "oow", "officer pass 2")


def test_failed_logins_are_slowed_down(client, engine):
    tok = token(client)
    codes = []
    for _ in range(5):
        r = client.post(
            "/admin/login", data={"username": "oow", "password": "guess guess", "csrf_token": tok}
        )
        codes.append((r.status_code, r.headers.get("Retry-After")))
    assert codes[:3] == [(401, None)] * 3
    assert codes[3] == (401, "2")  # the 4th failure starts a 2 s lock
    assert codes[4][0] == 429 and codes[4][1] in ("1", "2")
    r = client.post("/admin/login", data={"username": "oow", "password": PASSWORDS["oow"], "csrf_token": tok})
    assert r.status_code == 429 and "too many failed logins" in r.get_data(as_text=True)
    assert [e["action"] for e in audit.entries(engine)].count("user.login_failed") == 4


def test_login_redirect_stays_on_this_site(client):
    tok = token(client)
    r = client.post(
        "/admin/login",
        data={
            "username": "oow",
            "password": PASSWORDS["oow"],
            "csrf_token": tok,
            "next": "https://elsewhere.example/x",
        },
    )
    assert r.status_code == 303 and r.headers["Location"] == "/admin/"


# ------------------------------------------------------------------------------------------- editing


def test_editor_edits_a_limit_and_the_audit_trail_shows_it(client, engine, app):
    tok = login(client, "office")
    c = cid(client, LIGHT)
    r = client.post(
        f"/admin/conditions/{c}/limits/roll_rms",
        data={
            "value": "5.5",
            "unit": "deg",
            "exposure_h": "",
            "point": "",
            "label": "Roll (RMS)",
            "source": "office instruction 2026-12",
            "version": "1",
            "reason": "reefers",
            "csrf_token": tok,
        },
    )
    assert r.status_code == 303
    assert ctx(app).limits.limit(LIGHT, "roll_rms")["value"] == 5.5
    last = audit.entries(engine)[-1]
    assert (last["actor"], last["action"], last["reason"]) == ("office", "limit.set", "reefers")
    assert last["old"]["value"] == 6.0 and last["new"]["value"] == 5.5
    assert last["new"]["source"] == "office instruction 2026-12"
    page = client.get("/admin/audit").get_data(as_text=True)  # logged in as office above
    assert "audit trail intact" in page and "reefers" in page and "limit.set" in page


@pytest.mark.parametrize(
    ("field", "value", "message"),
    [
        (
            "value",
            "95",
            "condition 'light, high GM': limits[0].value = 95.0: out of range; "
            "allowed: a number in (0, 90] deg",
        ),
        ("value", "abc", "limits[0].value = 'abc': not a number; allowed: a number"),
        ("unit", "g", "limits[0].unit = 'g': unit not allowed; allowed: for roll rms: deg, rad"),
        ("point", "crow_nest", "limits[0].point = 'crow_nest': unknown point"),
    ],
)
def test_invalid_values_show_the_parser_message_inline(client, app, field, value, message):
    tok = login(client, "office")
    c = cid(client, LIGHT)
    data = {
        "value": "6",
        "unit": "deg",
        "exposure_h": "",
        "point": "",
        "label": "Roll (RMS)",
        "source": "s",
        "version": "1",
        "reason": "try",
        "csrf_token": tok,
    }
    data[field] = value
    r = client.post(f"/admin/conditions/{c}/limits/roll_rms", data=data)
    page = r.get_data(as_text=True)
    assert r.status_code == 422
    block = page.split('id="limit-roll_rms"')[1].split("</article>")[0]
    shown = re.search(f'data-error="{field}">(.*?)</p>', block, re.S)  # inline, beside its limit and field
    assert shown and str(escape(message)) in shown.group(1)
    assert html.unescape(shown.group(1)).startswith("condition 'light, high GM': limits[0].")
    assert f'value="{escape(value)}"' in block or f"<option selected>{value}</option>" in block  # input kept
    assert ctx(app).limits.limit(LIGHT, "roll_rms")["version"] == 1


def test_json_edit_wrong_unit_422_with_field(client):
    tok = login(client, "office")
    c = cid(client, LIGHT)
    r = client.put(
        f"/admin/api/conditions/{c}/limits/vertical_acceleration_rms_forward_perpendicular",
        json={"unit": "deg", "version": 1, "reason": "r"},
        headers={"X-CSRF-Token": tok},
    )
    body = r.get_json()
    assert r.status_code == 422 and body["field"] == "unit"
    assert "unit = 'deg': unit not allowed; allowed: for vertical_acceleration rms: m/s2, g" in body["error"]


def test_two_editors_second_gets_409_with_current_value(app):
    alice, bob = app.test_client(), app.test_client()
    ta, tb = login(alice, "office"), login(bob, "office2")
    c = cid(alice, LIGHT)
    url = f"/admin/api/conditions/{c}/limits/roll_rms"
    ga, gb = alice.get(url), bob.get(url)
    assert ga.headers["ETag"] == gb.headers["ETag"] and ga.get_json()["value"] == 6.0
    ra = alice.put(
        url,
        json={"value": 5.0, "reason": "alice"},
        headers={"X-CSRF-Token": ta, "If-Match": ga.headers["ETag"]},
    )
    assert ra.status_code == 200 and ra.headers["ETag"] != ga.headers["ETag"]
    rb = bob.put(
        url,
        json={"value": 7.0, "reason": "bob"},
        headers={"X-CSRF-Token": tb, "If-Match": gb.headers["ETag"]},
    )
    body = rb.get_json()
    assert rb.status_code == 409 and body["current"]["value"] == 5.0 and body["current"]["version"] == 2
    assert rb.headers["ETag"] == ra.headers["ETag"]
    assert ctx(app).limits.limit(LIGHT, "roll_rms")["value"] == 5.0  # alice's change kept
    # without a version at all: 428
    r = bob.put(url, json={"value": 7.0, "reason": "bob"}, headers={"X-CSRF-Token": tb})
    assert r.status_code == 428 and r.get_json()["current"]["version"] == 2
    # bob retries from the current version: written
    r = bob.put(
        url,
        json={"value": 7.0, "reason": "bob again"},
        headers={"X-CSRF-Token": tb, "If-Match": rb.headers["ETag"]},
    )
    assert r.status_code == 200 and r.get_json()["limit"]["value"] == 7.0


def test_form_conflict_shows_current_value_and_keeps_input(app):
    alice, bob = app.test_client(), app.test_client()
    ta, tb = login(alice, "office"), login(bob, "office2")
    c = cid(alice, LIGHT)
    base = {
        "unit": "deg",
        "exposure_h": "",
        "point": "",
        "label": "Roll (RMS)",
        "source": "s",
        "version": "1",
    }
    assert (
        alice.post(
            f"/admin/conditions/{c}/limits/roll_rms",
            data={**base, "value": "5.0", "reason": "a", "csrf_token": ta},
        ).status_code
        == 303
    )
    r = bob.post(
        f"/admin/conditions/{c}/limits/roll_rms",
        data={**base, "value": "7.25", "reason": "b", "csrf_token": tb},
    )
    page = r.get_data(as_text=True)
    block = page.split('id="limit-roll_rms"')[1].split("</article>")[0]
    assert r.status_code == 409 and "now version 2: value 5 deg" in block
    assert 'value="7.25"' in block and 'name="version" value="2"' in block


def test_copy_import_export_through_the_page(client, app, vessel):
    tok = login(client, "office")
    c = cid(client, DEEP)
    r = client.post(
        f"/admin/conditions/{c}/copy",
        data={"new_name": "deep, reefers", "reason": "stow plan 12", "csrf_token": tok},
    )
    assert r.status_code == 303
    new = cid(client, "deep, reefers")
    src = LIMITS_DIR / "nordforsk_light.toml"
    r = client.post(
        f"/admin/conditions/{new}/import",
        content_type="multipart/form-data",
        data={
            "file": (io.BytesIO(src.read_bytes()), "nordforsk_light.toml"),
            "reason": "test file",
            "version": str(ctx(app).limits.condition("deep, reefers")["version"]),
            "csrf_token": tok,
        },
    )
    assert r.status_code == 303, r.get_data(as_text=True)
    r = client.get(f"/admin/conditions/{new}/export.toml")
    assert (
        r.status_code == 200
        and r.headers["Content-Disposition"] == 'attachment; filename="deep__reefers.toml"'
    )
    got = loads_limit_set(r.get_data(as_text=True), "export", vessel_points=vessel.points_mapping())
    ref = read_limit_set(src, vessel_points=vessel.points_mapping())
    assert [(x.key, x.value, x.unit, x.point, x.source) for x in got.limits] == [
        (x.key, x.value, x.unit, x.point, x.source) for x in ref.limits
    ]
    # a bad file is refused with the file-named message
    bad = src.read_text().replace("value = 6.0", "value = 600.0", 1)
    r = client.post(
        f"/admin/conditions/{new}/import",
        content_type="multipart/form-data",
        data={
            "file": (io.BytesIO(bad.encode()), "mine.toml"),
            "reason": "x",
            "version": str(ctx(app).limits.condition("deep, reefers")["version"]),
            "csrf_token": tok,
        },
    )
    assert r.status_code == 422 and escape("mine.toml: limits[0].value = 600.0: out of range") in r.get_data(
        as_text=True
    )


def test_officer_switches_the_active_condition(client, app, engine):
    tok = login(client, "oow")
    r = client.post(
        "/admin/active", data={"condition": DEEP, "reason": "loading completed", "csrf_token": tok}
    )
    assert r.status_code == 303
    assert ctx(app).limits.active_condition()["condition"] == DEEP
    assert client.get("/admin/api/active").get_json()["set_by"] == "oow"
    r = client.post(
        "/admin/api/active", json={"condition": "ghost", "reason": "x"}, headers={"X-CSRF-Token": tok}
    )
    assert r.status_code == 400 and "no stored condition 'ghost'" in r.get_json()["error"]
    r = client.post("/admin/active", data={"condition": LIGHT, "reason": "", "csrf_token": tok})
    assert r.status_code == 400 and "say why" in r.get_data(as_text=True)
    assert audit.entries(engine)[-1]["action"] == "condition.activate"


def test_admin_manages_users(client, app, engine):
    tok = login(client, "master")
    assert client.get("/admin/users").status_code == 200
    r = client.post(
        "/admin/users",
        data={
            "username": "third",
            "password": "third mate pw",
            "role": "officer",
            "reason": "joined",
            "csrf_token": tok,
        },
    )
    assert r.status_code == 303 and ctx(app).users.get("third")["role"] == "officer"
    r = client.post(
        "/admin/users", data={"username": "fourth", "password": "short", "role": "officer", "csrf_token": tok}
    )
    assert r.status_code == 400 and "password: 5 characters" in r.get_data(as_text=True)
    client.post("/admin/users/third", data={"disabled": "yes", "reason": "signed off", "csrf_token": tok})
    assert ctx(app).users.get("third")["disabled"] is True
    assert [e["action"] for e in audit.entries(engine)][-2:] == ["user.add", "user.disable"]


# ------------------------------------------------------------------------------------------- bridge ack guard


def test_bridge_acknowledge_needs_an_officer_login_and_csrf_and_is_audited(app, engine):
    c = app.test_client()
    r = c.post("/api/alerts/1/acknowledge", json={"user": "OOW"})
    assert r.status_code == 401 and "officer login" in r.get_json()["error"]
    tok = login(c, "oow")
    r = c.post("/api/alerts/1/acknowledge", json={"user": "OOW"})
    assert r.status_code == 400 and "X-CSRF-Token" in r.get_json()["error"]
    r = c.post("/api/alerts/1/acknowledge", json={"user": "Second Officer"}, headers={"X-CSRF-Token": tok})
    assert r.status_code == 200
    last = audit.entries(engine)[-1]
    assert (last["actor"], last["action"], last["target"], last["new"]) == (
        "oow",
        "alert.acknowledge",
        "alert 1",
        {"as": "Second Officer"},
    )
    # the admin page's own endpoint acknowledges as the logged-in user
    state = app.extensions["bridge_provider"].current_state()
    other = next(a["id"] for a in state["alerts"] if not a["acknowledged"])
    r = c.post(f"/admin/alerts/{other}/acknowledge", data={"csrf_token": tok})
    assert r.status_code == 200
    assert c.post(f"/admin/alerts/{other}/acknowledge", data={"csrf_token": tok}).status_code == 409


# ------------------------------------------------------------------------------------------- audit export


def test_audit_exports_and_verification_on_the_page(client, engine):
    tok = login(client, "office")
    client.put(
        f"/admin/api/conditions/{cid(client, LIGHT)}/limits/roll_rms",
        json={"value": 5.0, "version": 1, "reason": 'why, with "quotes"'},
        headers={"X-CSRF-Token": tok},
    )
    rows = list(csv.DictReader(io.StringIO(client.get("/admin/audit.csv").get_data(as_text=True))))
    data = json.loads(client.get("/admin/audit.json").get_data(as_text=True))
    assert len(rows) == len(data) == len(audit.entries(engine))
    assert rows[-1]["reason"] == 'why, with "quotes"' and data[-1]["new"] == {"value": 5.0}
    assert rows[-1]["hash"] == data[-1]["hash"]
    page = client.get("/admin/audit").get_data(as_text=True)
    assert re.search(r'id="chain-status" class="adm-ok">audit trail intact: \d+ entries', page)


def test_saving_the_form_unchanged_keeps_values_exact_and_audits_only_changes(client, app, engine):
    ctx(app).limits.set_limit(
        LIGHT, "roll_rms", {"value": 5.123456789}, expected_version=1, actor="e", reason="r"
    )
    tok = login(client, "office")
    c = cid(client, LIGHT)
    page = client.get(f"/admin/conditions/{c}").get_data(as_text=True)
    block = page.split('id="limit-roll_rms"')[1].split("</article>")[0]
    fields = dict(re.findall(r'<input name="(\w+)"[^>]*value="([^"]*)"', block))
    fields["unit"], fields["point"] = "deg", ""
    fields.update(source="office memo 7", reason="source named", version="2", csrf_token=tok)
    assert client.post(f"/admin/conditions/{c}/limits/roll_rms", data=fields).status_code == 303
    assert ctx(app).limits.limit(LIGHT, "roll_rms")["value"] == 5.123456789  # not rounded by the page
    last = audit.entries(engine)[-1]
    assert last["old"] == {"source": "NORDFORSK (1987) merchant ships, roll 6.0 deg RMS (from memory)"}
    assert last["new"] == {"source": "office memo 7"}
