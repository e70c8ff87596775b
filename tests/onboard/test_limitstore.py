"""Tests for onboard.admin.limitstore: stored conditions and limits, validation, versions, import/export, active
condition, and that an edited limit changes the advice of the next cycle.

Sources of the checks: the config/limits TOML files themselves (round trip); the allowed ranges and units
of advisor.limits (UNITS: deg in (0, 90], per criterion deg/rad or m/s2/g), whose messages are expected
verbatim; utilisation = predicted / limit (advisor.polar.PolarResult, state contract), so halving a limit
doubles that limit's utilisation exactly while the prediction is unchanged (analytical).
"""

from __future__ import annotations

import threading

import numpy as np
import pytest
import sqlalchemy as sa
from admin_fixtures import BACKENDS, LIMITS_DIR, VESSEL_FILE, engine_fixture

from advisor.limits import LimitSetError
from advisor.polar import evaluate_polar
from estimator.spectra import directional_spectrum, jonswap, spreading_cos2s
from onboard.admin import audit
from onboard.formats.limitsfile import LimitsFileError, loads_limit_set, read_limit_set
from onboard.admin.limitstore import LimitStore, LimitStoreError, VersionConflict
from onboard.core.store import Store
from onboard.formats.vessel import load_vessel

DEEP = "deep laden, low GM"
LIGHT = "light, high GM"


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
def store(engine, vessel):
    s = LimitStore(engine, vessel)
    assert s.load_vessel_conditions(actor="cli:test") == [DEEP, LIGHT]
    return s


def same_limits(a, b):
    fields = (
        "key",
        "criterion",
        "statistic",
        "value",
        "unit",
        "value_in_unit",
        "exposure",
        "point",
        "label",
        "source",
    )
    return [[getattr(x, f) for f in fields] for x in a.limits] == [
        [getattr(x, f) for f in fields] for x in b.limits
    ]


def test_load_vessel_conditions_stores_the_vessel_files_limits(store, vessel):
    # deep laden names the high-stack file in the vessel file; light uses the default NORDFORSK set
    for name in (DEEP, LIGHT):
        path = vessel.condition(name).limits or LIMITS_DIR / "nordforsk_merchant.toml"
        original = read_limit_set(path, vessel_points=vessel.points_mapping())
        stored = store.limit_set(name)
        assert same_limits(stored, original)
        assert stored.margin == original.margin and stored.points == original.points
        assert stored.zones == original.zones and stored.advice == original.advice
    assert store.load_vessel_conditions() == []  # idempotent
    assert [c["name"] for c in store.conditions()] == [DEEP, LIGHT]


def test_export_import_round_trip_with_config_files(store, vessel, tmp_path):
    for f in sorted(LIMITS_DIR.glob("*.toml")):
        text = f.read_text()
        out = store.import_toml(
            text, f.name, actor="cli:test", reason="load file", condition="x " + f.stem, base_condition=LIGHT
        )
        assert out["base_condition"] == LIGHT
        exported = store.export_toml("x " + f.stem)
        again = loads_limit_set(exported, "exported", vessel_points=vessel.points_mapping())
        assert same_limits(again, read_limit_set(f, vessel_points=vessel.points_mapping())), f.name
        assert again.name == "x " + f.stem
        assert "the master" in exported  # advisory header of the written file


def test_edit_value_bumps_versions_and_audits(store, engine):
    before = store.condition(LIGHT)
    lim = store.limit(LIGHT, "roll_rms")
    assert lim["version"] == 1 and lim["value"] == 6.0
    after = store.set_limit(
        LIGHT,
        "roll_rms",
        {"value": "5.5", "source": "tightened by the office"},
        expected_version=1,
        actor="editor1",
        reason="reefers on deck",
        client="10.0.0.9",
    )
    assert after["value"] == 5.5 and after["version"] == 2 and after["source"] == "tightened by the office"
    assert store.condition(LIGHT)["version"] == before["version"] + 1
    assert store.limit_set(LIGHT).limits[0].value == pytest.approx(np.radians(5.5), rel=1e-15)
    last = audit.entries(engine, newest_first=True, limit=1)[0]
    assert (
        last["action"] == "limit.set" and last["actor"] == "editor1" and last["reason"] == "reefers on deck"
    )
    assert last["target"] == "condition 'light, high GM' limit 'roll_rms'"
    assert last["old"]["value"] == 6.0 and last["new"]["value"] == 5.5 and last["client"] == "10.0.0.9"
    assert audit.verify_chain(engine).ok


@pytest.mark.parametrize(
    ("changes", "match"),
    [
        # advisor.limits UNITS: deg in (0, 90]
        (
            {"value": "95"},
            r"condition 'light, high GM': limits\[0\]\.value = 95\.0: out of range; "
            r"allowed: a number in \(0, 90\] deg",
        ),
        ({"value": "-1"}, r"limits\[0\]\.value = -1\.0: out of range"),
        ({"unit": "g"}, r"limits\[0\]\.unit = 'g': unit not allowed; allowed: for roll rms: deg, rad"),
        ({"value": "abc"}, r"limits\[0\]\.value = 'abc': not a number; allowed: a number"),
        ({"value": "nan"}, r"limits\[0\]\.value = 'nan': not a finite number"),
        ({"point": "crow_nest"}, r"limits\[0\]\.point = 'crow_nest': unknown point"),
        ({"criterion": "pitch"}, r"limits\[0\]\.criterion = 'pitch': not an editable field"),
        ({"source": ""}, r"limits\[0\]\.source"),
    ],
)
def test_invalid_edits_are_refused_with_the_parser_message(store, engine, changes, match):
    n = len(audit.entries(engine))
    with pytest.raises(LimitSetError, match=match):
        store.set_limit(LIGHT, "roll_rms", changes, expected_version=1, actor="editor1", reason="try")
    assert store.limit(LIGHT, "roll_rms")["version"] == 1 and store.limit(LIGHT, "roll_rms")["value"] == 6.0
    assert len(audit.entries(engine)) == n  # nothing written, nothing audited


def test_wrong_unit_for_acceleration_and_slamming_point_above_water(store):
    with pytest.raises(
        LimitSetError, match=r"limits\[1\]\.unit = 'deg': unit not allowed; allowed: .*m/s2, g"
    ):
        store.set_limit(
            LIGHT,
            "vertical_acceleration_rms_forward_perpendicular",
            {"unit": "deg"},
            expected_version=1,
            actor="e",
            reason="r",
        )
    # slamming is judged at a point below the waterline (advisor.limits.resolve_points)
    with pytest.raises(LimitSetError, match=r"limits\[4\]\.point = 'bow'"):
        store.set_limit(
            LIGHT,
            "slamming_probability_forefoot",
            {"point": "bow"},
            expected_version=1,
            actor="e",
            reason="r",
        )


def test_changes_need_a_reason_and_a_known_target(store):
    with pytest.raises(LimitStoreError, match="reason: say why"):
        store.set_limit(LIGHT, "roll_rms", {"value": 5}, expected_version=1, actor="e", reason="  ")
    with pytest.raises(LimitStoreError, match="no limit with key 'nope'"):
        store.set_limit(LIGHT, "nope", {"value": 5}, expected_version=1, actor="e", reason="r")
    with pytest.raises(
        LimitStoreError, match="no stored condition 'ghost'; known: 'deep laden, low GM', 'light"
    ):
        store.set_limit("ghost", "roll_rms", {"value": 5}, expected_version=1, actor="e", reason="r")
    with pytest.raises(LimitStoreError, match="equal the stored ones"):
        store.set_limit(LIGHT, "roll_rms", {"value": "6.0"}, expected_version=1, actor="e", reason="r")
    with pytest.raises(LimitStoreError, match="nothing to change"):
        store.set_limit(LIGHT, "roll_rms", {}, expected_version=1, actor="e", reason="r")


def test_second_editor_gets_a_conflict_with_the_current_value(store, engine):
    store.set_limit(LIGHT, "roll_rms", {"value": 5.0}, expected_version=1, actor="alice", reason="first")
    with pytest.raises(VersionConflict, match="now version 2, your change was made from version 1") as err:
        store.set_limit(LIGHT, "roll_rms", {"value": 7.0}, expected_version=1, actor="bob", reason="second")
    assert err.value.current["value"] == 5.0 and err.value.current["version"] == 2
    assert store.limit(LIGHT, "roll_rms")["value"] == 5.0
    # bob repeats from the current version and is written
    assert (
        store.set_limit(
            LIGHT, "roll_rms", {"value": 7.0}, expected_version=2, actor="bob", reason="second, redone"
        )["version"]
        == 3
    )


def test_racing_editors_exactly_one_wins(store, engine):
    results = []
    barrier = threading.Barrier(4)

    def edit(k):
        barrier.wait()
        try:
            store.set_limit(
                LIGHT, "roll_rms", {"value": 3.0 + 0.5 * k}, expected_version=1, actor=f"ed{k}", reason="race"
            )
            results.append(("ok", k))
        except VersionConflict as exc:
            results.append(("conflict", exc.current["version"]))

    threads = [threading.Thread(target=edit, args=(k,)) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    wins = [r for r in results if r[0] == "ok"]
    assert len(wins) == 1 and len(results) == 4
    assert all(r == ("conflict", 2) for r in results if r[0] == "conflict")
    assert store.limit(LIGHT, "roll_rms")["value"] == 3.0 + 0.5 * wins[0][1]
    assert [e["action"] for e in audit.entries(engine)].count("limit.set") == 1
    assert audit.verify_chain(engine).ok


def test_copy_condition(store, engine):
    c = store.copy_condition(DEEP, "deep laden, reefers aft", actor="editor1", reason="voyage 12 stow plan")
    assert c["copied_from"] == DEEP and c["base_condition"] == DEEP
    assert same_limits(store.limit_set("deep laden, reefers aft"), store.limit_set(DEEP))
    # the copy is independent of its source
    store.set_limit(
        "deep laden, reefers aft", "roll_rms", {"value": 4.5}, expected_version=1, actor="e", reason="r"
    )
    assert store.limit(DEEP, "roll_rms")["value"] == 5.0
    with pytest.raises(LimitStoreError, match="already exists"):
        store.copy_condition(LIGHT, DEEP, actor="e", reason="r")
    with pytest.raises(LimitStoreError, match="base condition 'ballast': not a loading condition"):
        store.copy_condition(LIGHT, "new", actor="e", reason="r", base_condition="ballast")
    assert audit.entries(engine)[-2]["new"] == {"copied_from": DEEP, "base_condition": DEEP}


def test_import_replaces_with_version_check_and_names_file_errors(store, engine):
    text = (LIMITS_DIR / "nordforsk_light.toml").read_text()
    v = store.condition(DEEP)["version"]
    out = store.import_toml(
        text, "nordforsk_light.toml", actor="e", reason="new stow", condition=DEEP, expected_version=v
    )
    assert out["version"] == v + 1 and all(x["version"] == 1 for x in out["limits"])
    with pytest.raises(VersionConflict, match=f"now version {v + 1}"):
        store.import_toml(
            text, "nordforsk_light.toml", actor="e", reason="again", condition=DEEP, expected_version=v
        )
    with pytest.raises(LimitsFileError, match="bad.toml: not valid TOML"):
        store.import_toml("name = ", "bad.toml", actor="e", reason="r", condition=DEEP)
    bad = text.replace("value = 6.0", "value = 600.0", 1)
    with pytest.raises(LimitSetError, match=r"bad2.toml: limits\[0\]\.value = 600\.0: out of range"):
        store.import_toml(bad, "bad2.toml", actor="e", reason="r", condition=DEEP)
    with pytest.raises(LimitStoreError, match="give the vessel loading condition"):
        store.import_toml(text, "f.toml", actor="e", reason="r", condition="brand new")
    last = audit.entries(engine)[-1]
    assert last["action"] == "limits.import" and last["reason"] == "new stow (from nordforsk_light.toml)"


def test_active_condition_in_store_history_and_audit(store, engine):
    assert store.active_condition() is None
    store.set_active(LIGHT, actor="oow1", reason="departure, light", client="10.0.0.3")
    store.set_active(DEEP, actor="oow2", reason="loaded")
    st = Store(engine, migrate=False)
    assert st.active_condition()["condition"] == DEEP and st.active_condition()["set_by"] == "oow2"
    assert [c["condition"] for c in st.condition_history()] == [LIGHT, DEEP]
    rows = [r for r in audit.entries(engine) if r["action"] == "condition.activate"]
    assert [(r["old"], r["new"]) for r in rows] == [(None, LIGHT), (LIGHT, DEEP)]
    with pytest.raises(LimitStoreError, match="no stored condition 'ghost'"):
        store.set_active("ghost", actor="oow1", reason="x")
    with pytest.raises(LimitStoreError, match="reason"):
        store.set_active(LIGHT, actor="oow1", reason="")


def test_stored_tables_refuse_audit_bypass_via_store(store, engine):
    # the limits tables are ordinary (updatable) tables, the audit table is not
    with pytest.raises(sa.exc.DatabaseError, match="append-only"):
        with engine.begin() as c:
            c.execute(sa.text("DELETE FROM audit_log"))


def test_edited_limit_changes_next_cycle_utilisation(store):
    """Halving the roll RMS limit doubles the roll-RMS utilisation in every cell of the next cycle."""
    sea_cache = {}

    def cycle():
        eng = store.engine_for(LIGHT)
        om = eng.polar_model.omega
        th = np.radians(np.arange(0.0, 360.0, 10.0))
        if "s" not in sea_cache:  # beam-ish sea from 280 deg, Hs 5 m, Tp 11 s (JONSWAP, cos-2s, s = 10)
            sea_cache["s"] = directional_spectrum(
                om, th, jonswap(om, 5.0, 11.0), lambda x: spreading_cos2s(x, np.radians(280.0), 10.0)
            )
        return eng, evaluate_polar(eng.polar_model, sea_cache["s"])

    eng1, p1 = cycle()
    i = p1.keys.index("roll_rms")
    store.set_limit(LIGHT, "roll_rms", {"value": 3.0}, expected_version=1, actor="e", reason="halve")
    eng2, p2 = cycle()
    assert eng2.limit_set.limits[i].value == pytest.approx(np.radians(3.0), rel=1e-15)
    np.testing.assert_allclose(
        p2.predicted[i], p1.predicted[i], rtol=1e-12
    )  # the sea and ship did not change
    np.testing.assert_allclose(p2.utilisation[i], 2.0 * p1.utilisation[i], rtol=1e-12)  # predicted / limit
    assert p2.overall.max() > p1.overall.max()
    changed = np.mean(p2.overall != p1.overall)
    assert changed > 0.05  # the roll limit now binds in part of the polar that other limits bound before


def test_engine_inputs_follow_edits_for_the_service(store):
    base, ls, v1 = store.engine_inputs(LIGHT)
    assert base == LIGHT and v1 == store.revision(LIGHT) == 1
    assert ls.limits[0].value == pytest.approx(np.radians(6.0), rel=1e-15)  # nordforsk_light.toml: 6.0 deg
    store.set_limit(LIGHT, "roll_rms", {"value": 4.0}, expected_version=1, actor="e", reason="r")
    base, ls, v2 = store.engine_inputs(LIGHT)
    assert v2 == 2 and ls.limits[0].value == pytest.approx(np.radians(4.0), rel=1e-15)
    store.copy_condition(LIGHT, "light, deck cargo", actor="e", reason="r")
    assert store.engine_inputs("light, deck cargo")[0] == LIGHT  # a copy keeps the base loading condition
    with pytest.raises(LimitStoreError, match="no stored condition 'ghost'"):
        store.revision("ghost")
