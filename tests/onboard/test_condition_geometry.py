"""A minimal vessel file replays; points, limits, intervals and checks per loading condition
(onboard.core.engine with advisor.geometry, advisor.zones, advisor.speedloss)."""

from __future__ import annotations

import math
import shutil
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from advisor.advice import STATUSES
from onboard.core.engine import Engine, confidence_widening, estimate_intervals, parametric_check_for
from onboard.ashore.replay import EngineSpec, replay_log
from onboard.formats.vessel import load_vessel

ROOT = Path(__file__).resolve().parents[2]
DEMO_LOG = ROOT / "replay_data" / "demo_voyage.csv.gz"
DEMO_VESSEL = ROOT / "config" / "demo_vessel.toml"

# docs/vessel.md: the keys a vessel file must accept, and nothing more (invented values)
MINIMAL = """
[vessel]
name = "Minimal Test Ship"
lpp_m = 200.0
beam_m = 32.2
max_speed_kn = 20.0

[motion_sensor]
x_m = -12.0
y_m = 0.0
z_m = 4.0
{points}
[[conditions]]
name = "only"
draft_m = 11.5
gm_m = 1.2
roll_period_s = 20.56
rao_table = "raos.csv"
"""

BRIDGE = """
[[points]]
name = "bridge"
x_m = -72.0
y_m = 0.0
z_m = 30.0
"""


@pytest.fixture(scope="module")
def slice_log(tmp_path_factory) -> Path:
    """The first 40 minutes of the bundled demo voyage (three 20-min windows every 10 min)."""
    frame = pd.read_csv(DEMO_LOG)
    t = pd.to_datetime(frame["time_utc"], utc=True)
    part = frame[t < t.iloc[0] + pd.Timedelta(minutes=40)]
    path = tmp_path_factory.mktemp("log") / "slice.csv"
    part.to_csv(path, index=False)
    return path


def _minimal(tmp_path: Path, points: str) -> Path:
    shutil.copy(ROOT / "config" / "raos" / "deep_laden_low_gm.csv", tmp_path / "raos.csv")
    path = tmp_path / "minimal.toml"
    path.write_text(MINIMAL.format(points=points))
    return path


@pytest.mark.parametrize("points", [BRIDGE, ""], ids=["bridge", "no-points"])
def test_minimal_vessel_file_replays(tmp_path, slice_log, points):
    vessel_file = _minimal(tmp_path, points)
    engine = Engine(load_vessel(vessel_file), "only")
    # the default limits are built for this ship: NORDFORSK at its Lpp, its own forefoot and FP;
    # what its file cannot support is listed, not fatal
    names = {p.name for p in engine.limit_set.points}
    assert {"forward_perpendicular", "forefoot"} <= names and "galley" not in names
    assert any("deck wetness" in s for s in engine.skipped_limits)
    assert any("bridge" in s for s in engine.skipped_limits) == (points == "")
    result = replay_log(slice_log, EngineSpec(str(vessel_file), "only"), workers=1)
    rows = [w.advice for w in result.windows]
    assert len(rows) == 3
    assert all(r["status"] in STATUSES for r in rows)
    assert all(math.isfinite(r["utilisation"]) for r in rows)
    assert all(math.isnan(r["speed_cap_kn"]) for r in rows)  # no C_B / displacement: no cap claimed
    assert any("deck wetness" in line for line in result.skipped_lines())  # listed in skipped.txt


def test_demo_points_move_with_the_condition_waterline():
    vessel = load_vessel(DEMO_VESSEL)
    assert vessel.points_draft == pytest.approx(11.5)
    light = Engine(vessel, "light, high GM")
    pts = {p.name: p for p in light.polar_model.points if p is not None}
    # bridge given at the deep draft (z = 30 m at x = −72 m): light draft 8.0 m, trim 1.5 m by the
    # stern → 30 + 3.5 − 1.5·72/200 = 32.96 m above this waterline (by hand)
    bridge = [p for p in pts.values() if p.name == "bridge"]
    if bridge:
        assert bridge[0].z == pytest.approx(30.0 + 3.5 - 1.5 * 72.0 / 200.0)
    assert light.waterline.height(-72.0, 30.0) == pytest.approx(32.96)


def test_parametric_check_per_condition():
    # demo vessel (invented waterplane table): MSC.1/Circ.1627 level 1 screens the deep-laden,
    # low-GM condition and clears the light, high-GM one
    vessel = load_vessel(DEMO_VESSEL)
    deep = parametric_check_for(vessel, vessel.condition("deep laden, low GM"))
    light = parametric_check_for(vessel, vessel.condition("light, high GM"))
    assert deep.applied == light.applied == "circ1627_level1"
    assert deep.vulnerable and not light.vulnerable
    assert "level 1" in deep.text and "not vulnerable" in light.text


def _est(confidence, **kw):
    return SimpleNamespace(hs=5.0, hs_sd=0.2, tp=10.0, confidence=confidence, **kw)


def test_intervals_from_the_estimate_and_fallback():
    # with the estimator's 90 % intervals (attributes hs_p95, tp_p05, tp_p95, SI)
    hs_up, (f_lo, f_hi) = estimate_intervals(_est(1.0, hs_p05=4.2, hs_p95=6.0, tp_p05=9.0, tp_p95=11.5))
    assert hs_up == pytest.approx(6.0) and (f_lo, f_hi) == pytest.approx((0.9, 1.15))
    # without them: Hs + k·σ_Hs and Tp ± 10 % (project choice)
    hs_up, (f_lo, f_hi) = estimate_intervals(_est(1.0), hs_k=1.0)
    assert hs_up == pytest.approx(5.2) and (f_lo, f_hi) == pytest.approx((0.9, 1.1))


@pytest.mark.parametrize("with_intervals", [True, False])
def test_lower_confidence_widens_never_narrows(with_intervals):
    extra = dict(hs_p05=4.2, hs_p95=6.0, tp_p05=9.0, tp_p95=11.5) if with_intervals else {}
    last = None
    for c in (1.0, 0.9, 0.7, 0.5, 0.2, 0.0, float("nan")):
        hs_up, (f_lo, f_hi) = estimate_intervals(_est(c, **extra))
        assert hs_up >= 5.0 and f_lo <= 1.0 <= f_hi
        if last is not None:
            assert hs_up >= last[0] - 1e-12 and f_lo <= last[1] + 1e-12 and f_hi >= last[2] - 1e-12
        last = (hs_up, f_lo, f_hi)
    assert confidence_widening(1.0) == 1.0 and confidence_widening(0.0) == 2.0


def test_demo_engine_exposes_the_cap_and_the_turn(slice_log):
    engine = Engine(load_vessel(DEMO_VESSEL), "deep laden, low GM")
    frame = pd.read_csv(slice_log)
    result = engine.analyse(frame.iloc[: 2 * 1200])
    polar, adv = result.polar, result.advice
    assert polar.speed_cap is not None and "Kwon (2008)" in polar.speed_cap_method
    assert np.all(polar.speed_cap <= engine.vessel.max_speed + 1e-9)
    assert adv.speed_cap_now == pytest.approx(polar.cap_at(adv.heading_now))
    assert polar.parametric_check.applied == "circ1627_level1"
    row = result.advice_row()
    assert math.isfinite(row["speed_cap_kn"]) and "turn" in row


def test_limit_store_seeds_a_minimal_vessel_with_its_own_default(tmp_path):
    # the live service's limit store used to seed every condition without a limit file from the demo
    # ship's file (points such as 'galley'), which a user's own vessel file cannot satisfy
    from onboard.admin.limitstore import LimitStore
    from onboard.core.store import make_engine

    vessel = load_vessel(_minimal(tmp_path, BRIDGE))
    db = make_engine(f"sqlite:///{tmp_path / 'limits.db'}")
    try:
        store = LimitStore(db, vessel)
        assert store.load_vessel_conditions(actor="cli:test") == ["only"]
        ls = store.limit_set("only")
        assert "built for this vessel" in ls.description or "Lpp = 200 m" in ls.description
        assert {lim.point for lim in ls.limits} - {None} <= {"forward_perpendicular", "forefoot", "bridge"}
    finally:
        db.dispose()


def test_power_keys_give_the_power_limited_cap(tmp_path):
    text = MINIMAL.format(points=BRIDGE).replace(
        'max_speed_kn = 20.0\n',
        'max_speed_kn = 20.0\ncalm_water_speed_kn = [1.0, 20.0]\ncalm_water_resistance_kn = [50.0, 1000.0]\n'
        "available_power_kw = 10000.0\npropulsive_efficiency = 0.7\nbow_length_m = 25.0\n",
    )
    path = _minimal(tmp_path, BRIDGE)
    path.write_text(text)
    vessel = load_vessel(path)
    assert vessel.available_power == pytest.approx(10e6) and vessel.calm_water_resistance[1] == pytest.approx(1e6)
    engine = Engine(vessel, "only")
    est = SimpleNamespace(wave_from=0.0, hs=4.0)
    cap, method = engine.speed_cap(est)
    assert "STAWAVE-1" in method
    i_head = int(np.argmin(np.abs(engine.polar_model.headings - 0.0)))
    assert cap[i_head] / 0.514444 == pytest.approx(13.226, abs=0.06)  # as the hand case in the advisor tests
    # one of the five keys alone is a one-line error naming the missing key
    path.write_text(MINIMAL.format(points="").replace("max_speed_kn = 20.0\n", "max_speed_kn = 20.0\navailable_power_kw = 1.0\n"))
    from onboard.formats.vessel import VesselFileError

    with pytest.raises(VesselFileError, match=r"vessel\.calm_water_speed_kn: missing"):
        load_vessel(path)


def test_period_stretch_from_the_mean_period_interval():
    # a stretch of the whole spectrum moves every period alike: its bounds come from Tm01's 90 %
    # interval when the estimate has one (a Tp interval of 5-31 s from a peak jumping between systems
    # is no stretch of the spectrum); ratios checked by hand: 7.2/8 = 0.9, 9.2/8 = 1.15
    est = _est(1.0, hs_p05=4.2, hs_p95=6.0, tp_p05=5.0, tp_p95=31.0, tm01=8.0, tm01_p05=7.2, tm01_p95=9.2)
    _, (f_lo, f_hi) = estimate_intervals(est)
    assert (f_lo, f_hi) == pytest.approx((0.9, 1.15))
    # without a usable Tm01 interval the Tp interval is used
    est = _est(1.0, hs_p05=4.2, hs_p95=6.0, tp_p05=9.0, tp_p95=11.5, tm01=8.0,
               tm01_p05=float("nan"), tm01_p95=float("nan"))
    assert estimate_intervals(est)[1] == pytest.approx((0.9, 1.15))
