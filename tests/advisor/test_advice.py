"""Tests of the advice search (advisor.advice)."""

import dataclasses
import math

import numpy as np
import pytest
from advisor_fixtures import DEG, LPP, OMEGA, T_ROLL, VESSEL_POINTS, limit_mapping, sea

from advisor.advice import ADVISORY_NOTICE, UTILISATION_HYSTERESIS, advise
from advisor.limits import AdviceWeights, parse_limit_set
from advisor.polar import build_polar_model, evaluate_polar
from estimator.constants import KNOT


@pytest.fixture(scope="module")
def model(rao_table):
    m = limit_mapping()
    m["limits"] = m["limits"][:-1]  # without motion sickness, so that moderate seas leave room
    ls = parse_limit_set(m, "advice-test.toml")
    return build_polar_model(
        rao_table, ls, lpp=LPP, t_roll=T_ROLL, vessel_points=VESSEL_POINTS, omega=OMEGA, max_speed=24 * KNOT
    )


def _cost(w, psi, u, course, u_now):
    d = abs((psi - course + math.pi) % (2 * math.pi) - math.pi)
    return w.heading * d + w.speed_loss * max(0.0, u_now - u) + w.speed_gain * max(0.0, u - u_now)


def test_calm_sea_keeps(model):
    r = evaluate_polar(model, sea(1.0, 7.0, 0.0))
    a = advise(r, 250 * DEG, 14 * KNOT, 250 * DEG, model.limit_set.advice)
    assert a.status == "keep"
    assert (a.heading, a.speed) == pytest.approx((250 * DEG, 14 * KNOT))
    assert a.sentence.startswith("Suggest keeping 250° at 14 kn: every limit is met")
    assert a.reason == "within_limits" and a.turn.direction == ""
    assert a.utilisation_now <= r.margin


def test_change_is_the_cheapest_acceptable_cell(model):
    # brute force over the grid, written out: no cell that buys a clear margin (≤ margin − the
    # hysteresis, outside the zones, not slower than steerage way) has a lower cost than the advised one
    w = model.limit_set.advice
    r = evaluate_polar(model, sea(7.0, 11.0, 0.0), sigma_hs_rel=0.1, sigma_dir=10 * DEG)
    psi_now, u_now, course = 90 * DEG, 15 * KNOT, 90 * DEG
    a = advise(r, psi_now, u_now, course, w)
    assert a.status == "change"
    assert a.utilisation_now > r.margin
    assert a.utilisation_advised <= r.margin and not a.zones_advised
    best = math.inf
    for i, psi in enumerate(r.headings):
        for j, u in enumerate(r.speeds):
            if (
                r.overall_conservative[i, j] <= r.margin - UTILISATION_HYSTERESIS
                and not r.in_zone_conservative[i, j]
                and u >= w.min_speed - 1e-9
            ):
                best = min(best, _cost(w, psi, u, course, u_now))
    assert a.cost == pytest.approx(best)
    assert a.binding_now_label.lower() in a.sentence.lower()
    assert a.sentence.endswith(".") and ". " not in a.sentence  # one sentence
    assert f"{a.utilisation_now:.2f} -> {a.utilisation_advised:.2f}" in a.sentence


def test_weights_steer_the_choice(model):
    # head seas (waves from 000°, heading 000°) too rough at 15 kn; slowing down to a crawl helps
    # there (below the speeds that the parametric roll zone covers over the Tm01–Tp band)
    r = evaluate_polar(model, sea(6.0, 13.0, 0.0), sigma_hs_rel=0.2)
    assert r.overall_conservative[0, 15] > r.margin
    assert r.acceptable()[0, :15].any()
    args = (r, 0.0, 15 * KNOT, 0.0)
    no_turning = advise(*args, AdviceWeights(heading=1e6, speed_loss=1.0, speed_gain=1.0, min_speed=0.0))
    no_slowing = advise(*args, AdviceWeights(heading=1.0, speed_loss=1e6, speed_gain=1e6, min_speed=0.0))
    # a ship that must not turn only slows down; one that must keep its speed changes it less and turns more
    assert no_turning.heading == pytest.approx(0.0) and no_turning.speed < 15 * KNOT
    assert no_turning.sentence.startswith("Suggest reducing to ")
    dh = [min(a.heading, 2 * math.pi - a.heading) for a in (no_turning, no_slowing)]
    du = [abs(a.speed - 15 * KNOT) for a in (no_turning, no_slowing)]
    assert dh[1] > dh[0] and du[1] < du[0]
    assert no_slowing.sentence.startswith("Suggest ") and "altering to" in no_slowing.sentence


def test_zone_alone_triggers_a_change(model):
    # following seas at a speed inside the synchronous / parametric roll zone: the utilisation may be
    # fine, but Circ.1228 §4.2.3 says keep out of the zone
    r = evaluate_polar(model, sea(3.0, 11.0, 0.0))
    ok_zone = np.flatnonzero(
        r.zones_conservative["synchronous_roll"][36] & (r.overall_conservative[36] <= r.margin)
    )
    assert ok_zone.size, "test sea should put some following-sea speeds in the synchronous roll zone"
    u_now = float(r.speeds[ok_zone[0]])
    a = advise(r, 180 * DEG, u_now, 180 * DEG, model.limit_set.advice)
    assert a.status == "change"
    assert "synchronous_roll" in a.zones_now
    assert not a.zones_advised
    assert "leaves the synchronous roll zone" in a.sentence


def test_none_acceptable_gives_least_bad(model):
    r = evaluate_polar(model, sea(18.0, 11.0, 0.0), sigma_hs_rel=0.2)
    assert not r.acceptable().any()
    a = advise(r, 90 * DEG, 12 * KNOT, 90 * DEG, model.limit_set.advice)
    assert a.status == "none_acceptable"
    assert a.sentence.startswith(
        "No heading and speed keeps every limit within the margin 0.90; least bad is"
    )
    allowed = r.speeds >= model.limit_set.advice.min_speed - 1e-9
    assert a.utilisation_advised <= a.utilisation_now + 1e-12
    assert a.utilisation_advised == pytest.approx(r.overall_conservative[:, allowed].min(), rel=0.05)


def test_min_speed_respected(model):
    r = evaluate_polar(model, sea(9.0, 10.0, 0.0))
    a = advise(r, 0.0, 15 * KNOT, 0.0, model.limit_set.advice)
    assert a.speed >= model.limit_set.advice.min_speed - 1e-9


def test_result_frozen_and_advisory(model):
    r = evaluate_polar(model, sea(2.0, 8.0, 0.0))
    a = advise(r, 0.0, 10 * KNOT, 0.0, model.limit_set.advice)
    with pytest.raises(dataclasses.FrozenInstanceError):
        a.status = "change"
    assert a.notice == ADVISORY_NOTICE and "the master decides" in a.notice
    assert "cargo securing manual" in a.notice


def test_bad_present_state(model):
    r = evaluate_polar(model, sea(2.0, 8.0, 0.0))
    with pytest.raises(ValueError, match=r"speed_now must be >= 0 m/s, got -1\.0"):
        advise(r, 0.0, -1.0, 0.0, model.limit_set.advice)
    with pytest.raises(ValueError, match=r"heading_now must be finite, got nan"):
        advise(r, float("nan"), 1.0, 0.0, model.limit_set.advice)
