"""Tests for the administration commands (onboard/admin/commands.py) through the real entry point onboard.cli.main,
on a SQLite file and on PostgreSQL (a fresh schema named in the URL).

Sources of the checks: the messages and allowed ranges of advisor.limits (UNITS: deg in (0, 90]); the
config/limits files for the export/import round trip; the audit chain rule of onboard.admin.audit (sha256 over
the previous hash and the canonical row), broken on purpose by raw SQL with the trigger removed.
"""

from __future__ import annotations

import csv
import io
import json
import os
import uuid

import pytest
import sqlalchemy as sa
from admin_fixtures import LIMITS_DIR, VESSEL_FILE

from onboard.cli import main
from onboard.formats.limitsfile import read_limit_set
from onboard.core.store import make_engine
from onboard.formats.vessel import load_vessel

LIGHT = "light, high GM"
DEEP = "deep laden, low GM"


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def db_url(request, tmp_path):
    if request.param == "sqlite":
        yield f"sqlite:///{tmp_path / 'cli.db'}"
        return
    base = os.environ.get("HW_TEST_PG_URL", "postgresql+psycopg2://postgres@127.0.0.1:5432/test")
    schema = "hw_cli_" + uuid.uuid4().hex[:12]
    admin = sa.create_engine(base)
    try:
        with admin.begin() as c:
            c.execute(sa.text(f'CREATE SCHEMA "{schema}"'))
    except sa.exc.OperationalError as exc:
        admin.dispose()
        raise RuntimeError(f"PostgreSQL at {base} not reachable: {exc}") from None
    yield f"{base}?options=-csearch_path%3D{schema}"
    with admin.begin() as c:
        c.execute(sa.text(f'DROP SCHEMA "{schema}" CASCADE'))
    admin.dispose()


@pytest.fixture()
def run(db_url, capsys):
    def _run(*argv, stdin=None, monkeypatch=None):
        args = [argv[0], argv[1], *argv[2:], "--db", db_url]
        if argv[0] in ("limits", "condition"):
            args += ["--vessel", str(VESSEL_FILE)]
        if stdin is not None:
            monkeypatch.setattr("sys.stdin", io.StringIO(stdin))
        code = main(args)
        out = capsys.readouterr()
        return code, out.out, out.err

    return _run


@pytest.fixture()
def conditions_loaded(run):
    code, out, _ = run("limits", "load-vessel", "--by", "chief officer")
    assert code == 0 and out.strip() == f"created: {DEEP!r}, {LIGHT!r}"
    return run


def test_load_vessel_keeps_the_earlier_name_seed(run):
    code, out, _ = run("limits", "seed", "--by", "chief officer")
    assert code == 0 and out.strip() == f"created: {DEEP!r}, {LIGHT!r}"
    code, out, _ = run("limits", "load-vessel")
    assert code == 0 and "nothing (all conditions are stored)" in out


def test_list_and_show(conditions_loaded):
    code, out, _ = conditions_loaded("limits", "list")
    n_light = (LIMITS_DIR / "nordforsk_light.toml").read_text().count("[[limits]]")  # the file's own count
    assert code == 0 and f"{LIGHT}  (based on {LIGHT!r}, version 1, {n_light} limits)" in out
    assert (
        "    roll_rms: 6 deg" in out and "    roll_mpm: 20 deg" in out
    )  # 6.0 light / 20 deep (config files)
    code, out, _ = conditions_loaded("limits", "show", DEEP)
    assert code == 0 and "roll_mpm (v1): roll mpm <= 20 deg, exposure 3 h" in out
    assert "source: NORDFORSK (1987)" in out
    code, _, err = conditions_loaded("limits", "show", "ghost")
    assert code == 2 and "no stored condition 'ghost'" in err


def test_set_limit_valid_invalid_and_stale(conditions_loaded):
    code, out, _ = conditions_loaded(
        "limits",
        "set",
        LIGHT,
        "roll_rms",
        "--value",
        "5.5",
        "--source",
        "office memo",
        "--reason",
        "reefers",
        "--by",
        "superintendent",
    )
    assert code == 0 and "roll_rms.value: 6 -> 5.5" in out and "now version 2" in out
    code, _, err = conditions_loaded("limits", "set", LIGHT, "roll_rms", "--value", "95", "--reason", "x")
    assert code == 2 and err.strip() == (
        "hwadvice limits: condition 'light, high GM': limits[0].value = 95.0: out of range; "
        "allowed: a number in (0, 90] deg"
    )
    code, _, err = conditions_loaded("limits", "set", LIGHT, "roll_rms", "--unit", "g", "--reason", "x")
    assert code == 2 and "limits[0].unit = 'g': unit not allowed; allowed: for roll rms: deg, rad" in err
    code, _, err = conditions_loaded(
        "limits", "set", LIGHT, "roll_rms", "--value", "5.0", "--version", "1", "--reason", "x"
    )
    assert code == 2 and "changed by someone else (now version 2, your change was made from version 1)" in err
    code, out, _ = conditions_loaded("audit", "show")
    assert "superintendent limit.set condition 'light, high GM' limit 'roll_rms'" in out
    assert (
        '{"source":"NORDFORSK (1987) merchant ships' in out
        and '"value":5.5' in out
        and "| reefers [cli]" in out
    )


def test_copy_export_import_round_trip(conditions_loaded, tmp_path):
    code, out, _ = conditions_loaded("limits", "copy", DEEP, "deep, reefers", "--reason", "stow plan")
    assert code == 0 and "made 'deep, reefers'" in out
    path = tmp_path / "out.toml"
    assert conditions_loaded("limits", "export", "deep, reefers", "-o", str(path))[0] == 0
    vessel = load_vessel(VESSEL_FILE)
    got = read_limit_set(path, vessel_points=vessel.points_mapping())
    ref = read_limit_set(LIMITS_DIR / "high_stack_deep_laden.toml", vessel_points=vessel.points_mapping())
    assert got.name == "deep, reefers"
    assert [(x.key, x.value, x.unit, x.exposure, x.point) for x in got.limits] == [
        (x.key, x.value, x.unit, x.exposure, x.point) for x in ref.limits
    ]
    code, out, _ = conditions_loaded(
        "limits",
        "import",
        str(LIMITS_DIR / "nordforsk_merchant.toml"),
        "--condition",
        "ballast",
        "--base",
        LIGHT,
        "--reason",
        "new condition",
    )
    assert code == 0 and "into 'ballast' (version 1, 7 limits)" in out
    code, _, err = conditions_loaded(
        "limits",
        "import",
        str(LIMITS_DIR / "nordforsk_merchant.toml"),
        "--condition",
        "other",
        "--reason",
        "x",
    )
    assert code == 2 and "give the vessel loading condition" in err
    bad = tmp_path / "bad.toml"
    bad.write_text("schema_version = 1\nname = \n")
    code, _, err = conditions_loaded("limits", "import", str(bad), "--condition", "ballast", "--reason", "x")
    assert code == 2 and f"{bad}: not valid TOML" in err


def test_condition_set_and_show(conditions_loaded):
    assert conditions_loaded("condition", "show")[1].strip() == "no active condition chosen yet"
    code, out, _ = conditions_loaded("condition", "set", DEEP, "--reason", "loading completed", "--by", "oow")
    assert code == 0 and f"active condition: {DEEP!r} (none was set before)" in out  # not '(was None)'
    code, out, _ = conditions_loaded("condition", "show")
    assert out.startswith(DEEP) and "by oow: loading completed" in out
    code, _, err = conditions_loaded("condition", "set", "ghost", "--reason", "x")
    assert code == 2 and "no stored condition 'ghost'" in err


def test_first_admin_and_user_commands(run, monkeypatch):
    assert run("users", "list")[1].strip().startswith("no users")
    code, out, _ = run(
        "users",
        "add",
        "master",
        "--role",
        "admin",
        "--password-stdin",
        stdin="a fine passphrase\n",
        monkeypatch=monkeypatch,
    )
    assert code == 0 and out.strip() == "user master added with role admin"
    code, _, err = run(
        "users", "add", "x", "--role", "officer", "--password-stdin", stdin="short\n", monkeypatch=monkeypatch
    )
    assert code == 2 and "password: 5 characters; allowed: 8 to 256 characters" in err
    # prompt path: two different entries change nothing
    answers = iter(["one passphrase", "another passphrase"])
    monkeypatch.setattr("getpass.getpass", lambda prompt="": next(answers))
    code, _, err = run("users", "add", "oow", "--role", "officer")
    assert code == 2 and "the two passwords differ" in err
    answers = iter(["officer pass 1", "officer pass 1"])
    assert run("users", "add", "oow", "--role", "officer")[0] == 0
    assert run("users", "role", "oow", "editor")[0] == 0
    assert run("users", "disable", "oow")[0] == 0
    assert (
        run("users", "passwd", "oow", "--password-stdin", stdin="new officer pw\n", monkeypatch=monkeypatch)[
            0
        ]
        == 0
    )
    code, out, _ = run("users", "list")
    assert out.splitlines() == ["master\tadmin\tactive", "oow\teditor\tdisabled"]
    code, out, _ = run("audit", "export", "--format", "json")
    actions = [r["action"] for r in json.loads(out)]
    assert actions == ["user.add", "user.add", "user.role", "user.disable", "user.password"]
    assert "passphrase" not in out and "officer pass" not in out and "scrypt" not in out


def test_audit_export_and_verify_detects_tampering(conditions_loaded, db_url, tmp_path):
    conditions_loaded("limits", "set", LIGHT, "roll_rms", "--value", "5.5", "--reason", "one")
    conditions_loaded("limits", "set", LIGHT, "roll_rms", "--value", "5.0", "--reason", "two")
    conditions_loaded("condition", "set", LIGHT, "--reason", "three")
    code, out, _ = conditions_loaded("audit", "verify")
    assert code == 0 and out.startswith("audit trail intact: 5 entries, head 5:")
    head = out.splitlines()[0].rsplit(" ", 1)[1]
    assert conditions_loaded("audit", "verify", "--head", head)[0] == 0
    code, out, _ = conditions_loaded("audit", "export", "--format", "csv", "-o", str(tmp_path / "a.csv"))
    with open(tmp_path / "a.csv", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    assert [r["seq"] for r in rows] == ["1", "2", "3", "4", "5"] and rows[3]["reason"] == "two"
    # behind the application's back: remove the protection and rewrite entry 3
    e = make_engine(db_url)
    with e.begin() as c:
        if e.dialect.name == "sqlite":
            c.execute(sa.text("DROP TRIGGER audit_log_no_update"))
        else:
            c.execute(sa.text("ALTER TABLE audit_log DISABLE TRIGGER audit_log_no_change"))
        c.execute(sa.text("UPDATE audit_log SET reason = 'nobody changed anything' WHERE seq = 3"))
    e.dispose()
    code, out, _ = conditions_loaded("audit", "verify")
    assert code == 1 and out.startswith("audit trail BROKEN at entry 3: content changed after it was written")
    code, _, err = conditions_loaded("audit", "verify", "--head", "5:xyz")
    assert code == 2 and "expected SEQ:HASH" in err


def test_audit_verify_compares_live_limits_with_the_trail(conditions_loaded, db_url):
    """Issue 16: a limit edited directly in the database passes the chain check but not the state check
    (the trail's own record of the limit is the reference: onboard.admin.audit.limit_state_from_trail)."""
    conditions_loaded("limits", "set", LIGHT, "roll_rms", "--value", "5.5", "--reason", "one")
    code, out, _ = conditions_loaded("audit", "verify")
    assert code == 0 and "live limits match the trail" in out
    e = make_engine(db_url)
    with e.begin() as c:
        c.execute(
            sa.text(
                "UPDATE admin_limits SET value = 45.0 WHERE key = 'roll_rms' AND condition_id = "
                "(SELECT id FROM admin_conditions WHERE name = :n)"
            ),
            {"n": LIGHT},
        )
    e.dispose()
    code, out, _ = conditions_loaded("audit", "verify")
    assert code == 1 and out.startswith("audit trail intact")  # the chain alone does not see it
    assert f"condition {LIGHT!r} limit 'roll_rms': value is 45.0 in the database but 5.5 in the trail" in out


def test_audit_text_fields_have_length_limits(conditions_loaded):
    code, _, err = conditions_loaded("limits", "set", LIGHT, "roll_rms", "--value", "5.5", "--reason", "x" * 500_000)
    assert code == 2 and "reason: 500000 characters; allowed: at most 1000" in err
    code, _, err = conditions_loaded(
        "limits", "set", LIGHT, "roll_rms", "--label", "y" * 500_000, "--reason", "long label"
    )
    assert code == 2 and "new.label: 500000 characters; allowed: at most 1000" in err
    code, out, _ = conditions_loaded("limits", "show", LIGHT)
    assert "y" * 1001 not in out
