"""Command-line administration: loading conditions and limits, the active condition, users, audit trail.

Commands (each has ``--help``)::

    hwadvice limits list                       stored conditions and their limits
    hwadvice limits show NAME                  one condition's limits (versions, sources)
    hwadvice limits set NAME KEY --value 5.5 [--unit deg] [--exposure-h 3] [--point bow]
                       [--label ...] [--source ...] --reason WHY [--version N]
    hwadvice limits copy SOURCE NEW --reason WHY [--base VESSEL_CONDITION]
    hwadvice limits import FILE.toml --reason WHY [--condition NAME] [--base VESSEL_CONDITION]
    hwadvice limits export NAME [-o FILE.toml]
    hwadvice limits load-vessel                one stored condition per vessel loading condition
    hwadvice condition set NAME --reason WHY   make NAME the active condition (next cycle on)
    hwadvice condition show
    hwadvice users add NAME --role officer|editor|admin [--password-stdin]
    hwadvice users passwd NAME [--password-stdin]
    hwadvice users role NAME ROLE
    hwadvice users disable NAME / enable NAME
    hwadvice users list
    hwadvice audit show [--limit N]
    hwadvice audit export [--format csv|json] [-o FILE]
    hwadvice audit verify [--head SEQ:HASH]    exit status 1 when the chain is broken

Common options: ``--db URL`` (default ``$HW_DB_URL`` or ``sqlite:///onboard-data/onboard.sqlite``, the
service's default) and ``--vessel FILE`` (default ``$HW_VESSEL`` or ``config/demo_vessel.toml``);
``--by NAME`` records who you are in the audit trail (default: the operating-system user, as
``cli:<user>``). Whoever can run these commands against the database has every right (this is how the
first administrator is made: ``hwadvice users add NAME --role admin``, password asked twice at the
prompt, or one line from standard input with ``--password-stdin``).

Values are written in the units of the limit files (deg, rad, m/s2, g, probability, per_hour, m/s^1.5)
and validated by :func:`advisor.limits.parse_limit_set`; messages name the condition, the key path, the
value and what is allowed.

Advisory only: the master decides. Limits set here do not replace the ship's approved stability
information, loading computer, cargo securing manual or seamanship.
"""

from __future__ import annotations

import argparse
import getpass
import os
import sys
from pathlib import Path
from typing import Any

DEFAULT_DB_URL = "sqlite:///onboard-data/onboard.sqlite"
DEFAULT_VESSEL = Path(__file__).resolve().parents[2] / "config" / "demo_vessel.toml"


def _command_error():
    from onboard.errors import CommandError

    return CommandError


def _common(p: argparse.ArgumentParser, *, vessel: bool = True) -> None:
    p.add_argument("--db", default=None, help="database URL (default $HW_DB_URL or " + DEFAULT_DB_URL + ")")
    if vessel:
        p.add_argument(
            "--vessel", default=None, help="vessel TOML (default $HW_VESSEL or config/demo_vessel.toml)"
        )
    p.add_argument("--by", default=None, help="your name for the audit trail (default cli:<os user>)")


def _actor(args) -> str:
    if args.by:
        return args.by.strip()[:100]
    try:
        who = getpass.getuser()
    except Exception:  # no user name in this environment
        who = "unknown"
    return f"cli:{who}"


def _engine(args, *, create: bool = True):
    """The database engine of ``--db``; checked by connecting once, so that a server that is down, a
    database that does not exist or a missing driver end the command with one line naming the URL
    (password hidden). A SQLite file is created (with its folder) only by commands that write
    (``create``); reading commands refuse a file that does not exist instead of making an empty one."""
    from onboard.core.store import make_engine
    from onboard.errors import describe, safe_url

    url = args.db or os.environ.get("HW_DB_URL") or DEFAULT_DB_URL
    u = url.removeprefix("sqlite:///")
    if url.startswith("sqlite:///") and u and u != ":memory:":
        if not create and not Path(u).is_file():
            raise _command_error()(
                f"database {url}: no such file (nothing to read); check --db or HW_DB_URL"
            )
        try:
            Path(u).parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise _command_error()(f"database {url}: {describe(exc)}") from None
    try:
        engine = make_engine(url)
        with engine.connect():
            pass
    except ModuleNotFoundError as exc:
        raise _command_error()(
            f"database {safe_url(url)}: no driver for it ({exc.name}); supported: sqlite:///FILE and "
            "postgresql+psycopg2://USER@HOST/DB"
        ) from None
    except Exception as exc:
        line = describe(exc, db_url=url) or f"database {safe_url(url)}: {safe_url(exc)}"
        raise _command_error()(line) from None
    return engine


def _vessel(args):
    from onboard.formats.vessel import VesselFileError, load_vessel

    path = getattr(args, "vessel", None) or os.environ.get("HW_VESSEL") or DEFAULT_VESSEL
    try:
        return load_vessel(path)
    except (VesselFileError, OSError) as exc:
        raise _command_error()(str(exc)) from exc


def _limitstore(args, *, create: bool = True):
    from onboard.admin.limitstore import LimitStore

    return LimitStore(_engine(args, create=create), _vessel(args))


def _errors():
    from advisor.limits import LimitSetError
    from onboard.admin.auth import AuthError
    from onboard.admin.limitstore import LimitStoreError, VersionConflict
    from onboard.admin.tables import AuditError
    from onboard.formats.limitsfile import LimitsFileError

    return (LimitSetError, AuthError, LimitsFileError, LimitStoreError, VersionConflict, AuditError)


def _guarded(func):
    """Turn the modules' user-facing errors into one-line command errors."""

    def run(args):
        try:
            return func(args)
        except _errors() as exc:
            raise _command_error()(str(exc)) from exc

    return run


def _fmt(x: Any) -> str:
    return "-" if x is None else (f"{x:g}" if isinstance(x, float) else str(x))


# ------------------------------------------------------------------------------------------- limits


def _limits_list(args) -> int:
    store = _limitstore(args, create=False)
    active = store.active_condition()
    conds = store.conditions()
    if not conds:
        print("no stored conditions (hwadvice limits load-vessel, or hwadvice limits import FILE --base ...)")
    for c in conds:
        mark = "  [active]" if active and active["condition"] == c["name"] else ""
        print(
            f"{c['name']}{mark}  (based on {c['base_condition']!r}, version {c['version']}, "
            f"{len(c['limits'])} limits)"
        )
        for lim in c["limits"]:
            print(f"    {lim['key']}: {_fmt(lim['value'])} {lim['unit']}")
    return 0


def _limits_show(args) -> int:
    c = _limitstore(args, create=False).condition(args.name)
    print(
        f"{c['name']}: based on {c['base_condition']!r}, version {c['version']}, margin "
        f"{c['settings'].get('margin')}, last changed {c['updated_utc']:%Y-%m-%d %H:%MZ} by {c['updated_by']}"
    )
    for lim in c["limits"]:
        exp = f", exposure {_fmt(lim['exposure_h'])} h" if lim["exposure_h"] is not None else ""
        pt = f" at {lim['point']}" if lim["point"] else ""
        print(
            f"  {lim['key']} (v{lim['version']}): {lim['criterion']} {lim['statistic']}{pt} <= "
            f"{_fmt(lim['value'])} {lim['unit']}{exp}"
        )
        print(f"      {lim['label']} | source: {lim['source']}")
    return 0


_SET_FIELDS = {
    "value": "value",
    "unit": "unit",
    "exposure_h": "exposure_h",
    "point": "point",
    "label": "label",
    "source": "source",
}


def _limits_set(args) -> int:
    store = _limitstore(args)
    changes = {f: getattr(args, a) for a, f in _SET_FIELDS.items() if getattr(args, a) is not None}
    current = store.limit(args.name, args.key)
    version = args.version if args.version is not None else current["version"]
    new = store.set_limit(
        args.name,
        args.key,
        changes,
        expected_version=version,
        actor=_actor(args),
        reason=args.reason,
        client="cli",
    )
    for f in changes:
        print(f"{args.key}.{f}: {_fmt(current[f])} -> {_fmt(new[f])}")
    print(
        f"{args.name!r} limit {args.key} now version {new['version']}; applies from the next analysis cycle"
    )
    return 0


def _limits_copy(args) -> int:
    c = _limitstore(args).copy_condition(
        args.source, args.new, actor=_actor(args), reason=args.reason, client="cli", base_condition=args.base
    )
    print(f"made {c['name']!r} (based on {c['base_condition']!r}) as a copy of {args.source!r}")
    return 0


def _limits_import(args) -> int:
    path = Path(args.file)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise _command_error()(f"{path}: cannot read: {exc}") from exc
    store = _limitstore(args)
    try:
        c = store.import_toml(
            text,
            str(path),
            actor=_actor(args),
            reason=args.reason,
            client="cli",
            condition=args.condition,
            base_condition=args.base,
        )
    except _errors() as exc:
        if args.base is None and "base condition" in str(exc):
            names = ", ".join(repr(cond.name) for cond in store.vessel.conditions)
            raise _command_error()(
                f"{exc}; give it with --base (one of the vessel's conditions: {names})"
            ) from None
        raise
    print(f"imported {path} into {c['name']!r} (version {c['version']}, {len(c['limits'])} limits)")
    return 0


def _limits_export(args) -> int:
    from onboard.errors import check_output_file
    from onboard.formats.text import write_text_atomic

    if args.output:
        check_output_file(args.output)
    text = _limitstore(args, create=False).export_toml(args.name)
    if args.output:
        write_text_atomic(args.output, text)
        print(f"wrote {args.output}")
    else:
        sys.stdout.write(text)
    return 0


def _limits_load_vessel(args) -> int:
    made = _limitstore(args).load_vessel_conditions(actor=_actor(args))
    print("created: " + (", ".join(repr(m) for m in made) if made else "nothing (all conditions are stored)"))
    return 0


# ------------------------------------------------------------------------------------------- condition


def _condition_set(args) -> int:
    out = _limitstore(args).set_active(args.name, actor=_actor(args), reason=args.reason, client="cli")
    before = f"was {out['previous']!r}" if out["previous"] is not None else "none was set before"
    print(f"active condition: {out['condition']!r} ({before}); applies from the next analysis cycle")
    return 0


def _condition_show(args) -> int:
    a = _limitstore(args, create=False).active_condition()
    if a is None:
        print("no active condition chosen yet")
    else:
        print(f"{a['condition']} (set {a['time_utc']:%Y-%m-%d %H:%MZ} by {a['set_by']}: {a['note'] or ''})")
    return 0


# ------------------------------------------------------------------------------------------- users


def _users(args, *, create: bool = True):
    from onboard.admin import audit
    from onboard.admin.auth import Users

    engine = _engine(args, create=create)
    audit.migrate_admin(engine)
    return Users(engine)


def _read_password(args) -> str:
    if args.password_stdin:
        line = sys.stdin.readline()
        if not line:
            raise _command_error()("--password-stdin: standard input is empty; nothing changed")
        return line.rstrip("\r\n")
    import warnings

    try:
        with warnings.catch_warnings():
            # without a terminal getpass warns and would echo the password: refuse instead
            warnings.simplefilter("error", getpass.GetPassWarning)
            first = getpass.getpass("Password: ")
            again = getpass.getpass("Again: ")
    except getpass.GetPassWarning:
        raise _command_error()(
            "no terminal to ask for the password; pipe it in with --password-stdin; nothing changed"
        ) from None
    except EOFError:
        raise _command_error()("password prompt ended (Ctrl-D or no input); nothing changed") from None
    if again != first:
        raise _command_error()("the two passwords differ; nothing changed")
    return first


def _users_add(args) -> int:
    users = _users(args)
    users.add(
        args.name, _read_password(args), args.role, actor=_actor(args), client="cli", reason=args.reason or ""
    )
    print(f"user {args.name} added with role {args.role}")
    return 0


def _users_passwd(args) -> int:
    _users(args).set_password(args.name, _read_password(args), actor=_actor(args), client="cli")
    print(f"password of {args.name} changed; their open sessions have ended")
    return 0


def _users_role(args) -> int:
    _users(args).set_role(args.name, args.role, actor=_actor(args), client="cli")
    print(f"{args.name} is now {args.role}")
    return 0


def _users_disable(args) -> int:
    disable = args.users_command == "disable"
    _users(args).set_disabled(args.name, disable, actor=_actor(args), client="cli")
    print(f"{args.name} {'disabled' if disable else 'enabled'}")
    return 0


def _users_list(args) -> int:
    rows = _users(args).list()
    if not rows:
        print("no users (the first administrator: hwadvice users add NAME --role admin)")
    for u in rows:
        print(f"{u['username']}\t{u['role']}\t{'disabled' if u['disabled'] else 'active'}")
    return 0


# ------------------------------------------------------------------------------------------- audit


def _audit_engine(args):
    from onboard.admin import audit

    engine = _engine(args, create=False)
    audit.migrate_admin(engine)
    return engine


def _audit_show(args) -> int:
    from onboard.admin import audit

    rows = audit.entries(_audit_engine(args), newest_first=True, limit=args.limit)
    for r in reversed(rows):
        old, new = audit.canonical_json(r["old"]), audit.canonical_json(r["new"])
        if len(old) > 80:
            old = old[:77] + "..."
        if len(new) > 80:
            new = new[:77] + "..."
        print(
            f"{r['seq']:>5} {r['time_utc'][:19]}Z {r['actor']} {r['action']} {r['target']}: {old} -> {new}"
            f" | {r['reason']} [{r['client']}]"
        )
    return 0


def _audit_export(args) -> int:
    from onboard.admin import audit
    from onboard.errors import check_output_file
    from onboard.formats.text import write_text_atomic

    if args.output:
        check_output_file(args.output)
    rows = audit.entries(_audit_engine(args))
    text = audit.export_csv(rows) if args.format == "csv" else audit.export_json(rows)
    if args.output:
        write_text_atomic(args.output, text)
        print(f"wrote {len(rows)} entries to {args.output}")
    else:
        sys.stdout.write(text)
    return 0


def _audit_verify(args) -> int:
    from onboard.admin import audit

    head = None
    if args.head:
        seq, _, digest = args.head.partition(":")
        if not seq.isdigit() or len(digest) != 64:
            raise _command_error()(
                f"--head {args.head!r}: expected SEQ:HASH as printed by 'hwadvice audit verify'"
            )
        head = (int(seq), digest.lower())
    engine = _audit_engine(args)
    rep = audit.verify_chain(engine, expect_head=head)
    print(rep.text())
    diffs = _live_limits_differ(engine)
    if diffs:
        print(f"live limits differ from the trail ({len(diffs)}):")
        for line in diffs[:50]:
            print(f"  {line}")
        if len(diffs) > 50:
            print(f"  ... {len(diffs) - 50} more")
    else:
        print("live limits match the trail")
    return 0 if rep.ok and not diffs else 1


def _live_limits_differ(engine) -> list[str]:
    """The trail's limit state against the stored limits (:func:`onboard.admin.audit.compare_limit_state`)."""
    from onboard.admin import audit
    from onboard.admin.limitstore import LimitStore

    store = LimitStore(engine, None, migrate=False)
    live = {c["name"]: store.mapping(c["name"])["limits"] for c in store.conditions()}
    trail, problems = audit.limit_state_from_trail(audit.entries(engine))
    return problems + audit.compare_limit_state(trail, live)


# ------------------------------------------------------------------------------------------- parser


def add_commands(subparsers) -> None:
    """Add ``limits``, ``condition``, ``users`` and ``audit`` to the ``hwadvice`` command line."""
    from onboard.admin.auth import ROLES

    lim = subparsers.add_parser(
        "limits",
        help="loading conditions and their limit sets",
        description="Stored loading conditions and their limits. Advisory only: the master decides.",
    )
    ls = lim.add_subparsers(dest="limits_command", metavar="ACTION")
    ls.required = True

    p = ls.add_parser("list", help="stored conditions and their limits")
    _common(p)
    p.set_defaults(func=_guarded(_limits_list))

    p = ls.add_parser("show", help="one condition's limits")
    p.add_argument("name")
    _common(p)
    p.set_defaults(func=_guarded(_limits_show))

    p = ls.add_parser("set", help="change one limit")
    p.add_argument("name", help="stored condition")
    p.add_argument("key", help="limit key (see 'hwadvice limits show')")
    p.add_argument("--value")
    p.add_argument("--unit")
    p.add_argument("--exposure-h", dest="exposure_h", help="exposure [h]; '' for none")
    p.add_argument("--point", help="named point; '' for none")
    p.add_argument("--label")
    p.add_argument("--source", help="where the number comes from")
    p.add_argument("--reason", required=True, help="why (kept in the audit trail)")
    p.add_argument("--version", type=int, help="the limit version you are changing (refused if it changed)")
    _common(p)
    p.set_defaults(func=_guarded(_limits_set))

    p = ls.add_parser("copy", help="new condition as a copy of another")
    p.add_argument("source")
    p.add_argument("new")
    p.add_argument("--base", help="vessel loading condition of the copy (default: the source's)")
    p.add_argument("--reason", required=True)
    _common(p)
    p.set_defaults(func=_guarded(_limits_copy))

    p = ls.add_parser("import", help="load a limit-set TOML file into a condition")
    p.add_argument("file")
    p.add_argument("--condition", help="stored condition (default: the file's name)")
    p.add_argument("--base", help="vessel loading condition, when the condition is new")
    p.add_argument("--reason", required=True)
    _common(p)
    p.set_defaults(func=_guarded(_limits_import))

    p = ls.add_parser("export", help="write a condition's limit set as TOML")
    p.add_argument("name")
    p.add_argument("-o", "--output", help="file (default: standard output)")
    _common(p)
    p.set_defaults(func=_guarded(_limits_export))

    p = ls.add_parser(
        "load-vessel",
        aliases=["seed"],  # the earlier name, kept so that existing scripts keep working
        help="store every loading condition of the vessel file not stored yet, with its limit file",
    )
    _common(p)
    p.set_defaults(func=_guarded(_limits_load_vessel))

    cond = subparsers.add_parser("condition", help="the active loading condition")
    cs = cond.add_subparsers(dest="condition_command", metavar="ACTION")
    cs.required = True
    p = cs.add_parser("set", help="make a stored condition the active one")
    p.add_argument("name")
    p.add_argument("--reason", required=True)
    _common(p)
    p.set_defaults(func=_guarded(_condition_set))
    p = cs.add_parser("show", help="the active condition")
    _common(p)
    p.set_defaults(func=_guarded(_condition_show))

    usr = subparsers.add_parser("users", help="logins for the administration page")
    us = usr.add_subparsers(dest="users_command", metavar="ACTION")
    us.required = True
    p = us.add_parser("add", help="add a user (the first admin is made this way)")
    p.add_argument("name")
    p.add_argument("--role", required=True, choices=ROLES)
    p.add_argument("--password-stdin", action="store_true", help="read the password as one line from stdin")
    p.add_argument("--reason")
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_users_add))
    p = us.add_parser("passwd", help="set a user's password")
    p.add_argument("name")
    p.add_argument("--password-stdin", action="store_true")
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_users_passwd))
    p = us.add_parser("role", help="change a user's role")
    p.add_argument("name")
    p.add_argument("role", choices=ROLES)
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_users_role))
    for action in ("disable", "enable"):
        p = us.add_parser(action, help=f"{action} a user")
        p.add_argument("name")
        _common(p, vessel=False)
        p.set_defaults(func=_guarded(_users_disable))
    p = us.add_parser("list", help="list users")
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_users_list))

    aud = subparsers.add_parser("audit", help="the record of changes")
    as_ = aud.add_subparsers(dest="audit_command", metavar="ACTION")
    as_.required = True
    p = as_.add_parser("show", help="latest entries")
    p.add_argument("--limit", type=int, default=50)
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_audit_show))
    p = as_.add_parser("export", help="all entries as CSV or JSON")
    p.add_argument("--format", choices=("csv", "json"), default="csv")
    p.add_argument("-o", "--output")
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_audit_export))
    p = as_.add_parser("verify", help="check the hash chain; exit status 1 when broken")
    p.add_argument("--head", help="SEQ:HASH noted earlier that must still be in the chain")
    _common(p, vessel=False)
    p.set_defaults(func=_guarded(_audit_verify))
