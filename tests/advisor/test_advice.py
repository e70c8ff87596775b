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
    from advisor.advice import MAX_SPEED_GAIN

    # the least bad among the speeds a new advice may ask for (at most MAX_SPEED_GAIN above the present)
    allowed = (r.speeds >= model.limit_set.advice.min_speed - 1e-9) & (r.speeds <= 12 * KNOT + MAX_SPEED_GAIN + 1e-9)
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


# ------------------------------------------------------------------------------------------------
# steadiness (project choices: advisor.advice UTILISATION_HYSTERESIS, ZONE_EXIT_BAND_SCALE,
# MIN_BENEFIT_HEADING; the measure: advisor.advice.steadiness_figures)


def _chain(model, seas, heading, speed, *, memory=True):
    out, prev = [], None
    for sp in seas:
        r = evaluate_polar(model, sp, sigma_hs_rel=0.1, sigma_dir=10 * DEG)
        a = advise(r, heading, speed, heading, model.limit_set.advice, previous=prev if memory else None)
        out.append(a)
        prev = a
    return out


def _figures(advices):
    from advisor.advice import steadiness_figures

    return steadiness_figures(
        heading=[a.heading_now for a in advices], speed=[a.speed_now for a in advices],
        advised_heading=[a.heading for a in advices], advised_speed=[a.speed for a in advices],
        utilisation=[a.utilisation_now for a in advices], changed=[a.status != "keep" for a in advices],
        in_zone=[bool(a.zones_now) for a in advices],
    )


def test_steady_on_a_synthetic_sequence(model):
    # invented sequence: the same sea estimated 12 times with the scatter of a real estimator
    # (Hs ±6 %, Tp ±5 %, direction ±8°, fixed seed) while the ship holds 090° at 15 kn
    rng = np.random.default_rng(13)
    seas = [
        sea(7.0 * (1 + 0.06 * rng.standard_normal()), 11.0 * (1 + 0.05 * rng.standard_normal()),
            8 * DEG * rng.standard_normal())
        for _ in range(12)
    ]
    steady = _figures(_chain(model, seas, 90 * DEG, 15 * KNOT))
    forgetful = _figures(_chain(model, seas, 90 * DEG, 15 * KNOT, memory=False))
    assert steady["windows"] == 12 and steady["changes"] >= 1  # the sea is rough enough to act on
    assert steady["flips"] <= 1
    # the same sequence without memory jumps about (2 with this seed since a new advice asks for at most
    # MAX_SPEED_GAIN more speed; 5 before)
    assert forgetful["flips"] >= 2


def test_hysteresis_on_utilisation(model):
    # find a sea where the present state sits between margin − hysteresis and the margin
    psi, u = 90 * DEG, 15 * KNOT
    for hs in np.arange(3.0, 9.0, 0.05):
        r = evaluate_polar(model, sea(hs, 7.0, 0.0))
        now = r.at(psi, u)
        if r.margin - UTILISATION_HYSTERESIS < now.overall <= r.margin and not now.zones:
            break
    else:
        pytest.fail("no sea puts the present state in the hysteresis band")
    fresh = advise(r, psi, u, psi, model.limit_set.advice)
    assert fresh.status == "keep" and fresh.reason == "within_limits"
    alerted = dataclasses.replace(fresh, status="change", heading=psi + 0.5, speed=10 * KNOT)
    held = advise(r, psi, u, psi, model.limit_set.advice, previous=alerted)
    assert held.status != "keep"  # not yet below the exit threshold margin − hysteresis


def test_previous_advice_kept_while_acceptable(model):
    r = evaluate_polar(model, sea(7.0, 11.0, 0.0), sigma_hs_rel=0.1, sigma_dir=10 * DEG)
    w = model.limit_set.advice
    first = advise(r, 90 * DEG, 15 * KNOT, 90 * DEG, w)
    assert first.status == "change"
    # another acceptable cell a little dearer than the best: once advised, it is kept
    ok = (r.overall_conservative <= r.margin) & ~r.in_zone_conservative & (r.speeds >= w.min_speed)[None, :]
    i, j = np.argwhere(ok)[len(np.argwhere(ok)) // 2]
    other = dataclasses.replace(first, heading=float(r.headings[i]), speed=float(r.speeds[j]))
    again = advise(r, 90 * DEG, 15 * KNOT, 90 * DEG, w, previous=other)
    cost_other = _cost(w, other.heading, other.speed, 90 * DEG, 15 * KNOT)
    if cost_other - first.cost <= w.heading * math.radians(30.0):
        assert (again.heading, again.speed) == (other.heading, other.speed)
        assert again.reason == "previous_still_acceptable"
    else:
        assert again.cost <= cost_other


def test_previous_advice_kept_when_no_new_cell_is_acceptable(model):
    # Rule 4 also holds when no other cell is acceptable: the envelope's zones (set by hand here to cover
    # the whole chart, as the wide period intervals of a doubtful window do) do not move an advice that is
    # within the margin and outside the nominal zones (narrowed bands) to a least-bad cell elsewhere.
    r = evaluate_polar(model, sea(7.0, 11.0, 0.0), sigma_hs_rel=0.1, sigma_dir=10 * DEG)
    w = model.limit_set.advice
    first = advise(r, 90 * DEG, 15 * KNOT, 90 * DEG, w)
    assert first.status == "change"
    everywhere = np.ones_like(r.in_zone_conservative)
    covered = dataclasses.replace(r, zones_conservative={"parametric_roll": everywhere})
    assert not covered.at(first.heading, first.speed, nominal_zones=True, band_scale=1 / 3).zones
    alone = advise(covered, 90 * DEG, 15 * KNOT, 90 * DEG, w)
    assert alone.status == "none_acceptable"
    again = advise(covered, 90 * DEG, 15 * KNOT, 90 * DEG, w, previous=first)
    assert again.status == "change" and again.reason == "previous_still_acceptable"
    assert (again.heading, again.speed) == (first.heading, first.speed)


# ------------------------------------------------------------------------------------------------
# the turn


def _with_beam_band(r, over_from=80, over_to=100, slow_ok_below=None):
    """A copy of ``r`` whose conservative utilisation is 1.5 on headings over_from..over_to (deg) and
    0.3 elsewhere, no zones (a synthetic chart to test the arc logic by hand)."""
    hd = np.degrees(r.headings)[:, None] + 0 * r.speeds[None, :]
    over = (hd >= over_from) & (hd <= over_to)
    if slow_ok_below is not None:
        over &= r.speeds[None, :] >= slow_ok_below
    util = np.where(over, 1.5, 0.3)
    zones = {k: np.zeros_like(v) for k, v in r.zones_conservative.items()}
    return dataclasses.replace(r, overall_conservative=util, zones_conservative=zones)


def test_turn_avoids_the_side_over_the_limit(model):
    from advisor.advice import _turn

    r = _with_beam_band(evaluate_polar(model, sea(2.0, 8.0, 0.0)))
    w = model.limit_set.advice
    # 060° → 150°: the short way (starboard, 90°) passes 080–100° over the limit; port (270°) does not
    t = _turn(r, 60 * DEG, 10 * KNOT, 150 * DEG, 10 * KNOT, w)
    assert t.direction == "port" and not t.over_limit and not t.reduce_speed_first
    assert t.angle == pytest.approx(270 * DEG) and t.other_side_utilisation == pytest.approx(1.5)
    # 150° → 120°: the short way (port, 30°) is clear
    t = _turn(r, 150 * DEG, 10 * KNOT, 120 * DEG, 10 * KNOT, w)
    assert t.direction == "port" and t.angle == pytest.approx(30 * DEG) and t.arc_utilisation == pytest.approx(0.3)


def test_turn_reduces_speed_first_when_both_sides_are_over(model):
    from advisor.advice import _turn

    r = evaluate_polar(model, sea(2.0, 8.0, 0.0))
    # over the limit on 080–100° and on 280–300° at 8 kn and faster: reduce first, then turn
    a = _with_beam_band(r, 80, 100, slow_ok_below=8 * KNOT)
    b = _with_beam_band(r, 280, 300, slow_ok_below=8 * KNOT)
    both = dataclasses.replace(a, overall_conservative=np.maximum(a.overall_conservative, b.overall_conservative))
    t = _turn(both, 60 * DEG, 14 * KNOT, 150 * DEG, 14 * KNOT, model.limit_set.advice)
    assert t.reduce_speed_first and not t.over_limit and t.speed == pytest.approx(7 * KNOT)
    assert t.direction == "starboard"  # the shorter arc, once slow enough


def test_advice_states_the_turn(model):
    r = evaluate_polar(model, sea(7.0, 11.0, 0.0), sigma_hs_rel=0.1, sigma_dir=10 * DEG)
    a = advise(r, 90 * DEG, 15 * KNOT, 90 * DEG, model.limit_set.advice)
    if abs(a.heading - a.heading_now) > 1 * DEG:
        assert a.turn.direction in ("port", "starboard")
        assert f"turning to {a.turn.direction}" in a.sentence
        assert math.isfinite(a.turn.arc_utilisation)
    assert a.sentence.startswith("Suggest ")


def test_a_screening_zone_alone_never_sends_the_ship_over_a_limit(model):
    # The present cell is inside a screened zone (a real following sea, as above) and within the margin,
    # and the chart is set by hand so that every cell outside the zones is over a limit. Leaving a
    # screening band (project-chosen widths) for a predicted exceedance is no improvement: no change is
    # suggested and the sentence says why.
    r = evaluate_polar(model, sea(3.0, 11.0, 0.0))
    zone = r.in_zone_conservative
    ok_zone = np.flatnonzero(r.zones_conservative["synchronous_roll"][36])
    assert ok_zone.size, "test sea should put some following-sea speeds in the synchronous roll zone"
    util = np.where(zone, 0.35, 1.4)
    uc = np.broadcast_to(util, r.utilisation_conservative.shape).copy()
    r = dataclasses.replace(r, overall_conservative=util, utilisation_conservative=uc)
    u_now = float(r.speeds[ok_zone[0]])
    a = advise(r, 180 * DEG, u_now, 180 * DEG, model.limit_set.advice)
    assert a.status == "none_acceptable" and "synchronous_roll" in a.zones_now
    assert a.heading == pytest.approx(180 * DEG) and a.speed == pytest.approx(u_now)
    assert "no change is suggested" in a.sentence and "screening only" in a.sentence


def test_zone_entry_needs_two_windows_unless_clearly_inside(model):
    from advisor.advice import ZONE_ENTRY_BAND_SCALE

    r = evaluate_polar(model, sea(3.0, 11.0, 0.0))
    w = model.limit_set.advice
    edge = None
    for j, u in enumerate(r.speeds):
        cv = r.at(180 * DEG, float(u))
        if (
            "synchronous_roll" in cv.zones
            and cv.overall <= r.margin - 0.1
            and "synchronous_roll" not in r.at(180 * DEG, float(u), band_scale=ZONE_ENTRY_BAND_SCALE).zones
        ):
            edge = float(u)
            break
    assert edge is not None, "test sea should put a following-sea speed at the edge of the synchronous roll zone"
    calm = advise(evaluate_polar(model, sea(1.0, 7.0, 0.0)), 180 * DEG, edge, 180 * DEG, w)
    assert calm.status == "keep" and calm.zones_seen == ()
    first = advise(r, 180 * DEG, edge, 180 * DEG, w, previous=calm)
    assert first.status == "keep" and "synchronous_roll" in first.zones_seen  # seen once, at the edge
    second = advise(r, 180 * DEG, edge, 180 * DEG, w, previous=first)
    assert second.status == "change" and "synchronous_roll" in second.zones_now  # seen twice running


# ------------------------------------------------------------------------------------------------
# steadiness in a building sea (issue on steady advice, last goal)


def _building(rng, n=12):
    """Invented sequence: a sea building from 5 to 8 m while a doubtful estimator scatters the
    direction by ±15° and Tp by ±6 % (fixed seed); the ship holds 030° at 14 kn in bow seas."""
    return [
        sea((5.0 + 3.0 * k / (n - 1)) * (1 + 0.05 * rng.standard_normal()),
            11.0 * (1 + 0.06 * rng.standard_normal()), 15 * DEG * rng.standard_normal())
        for k in range(n)
    ]


def _building_chain(model, memory):
    out, prev = [], None
    for sp in _building(np.random.default_rng(7)):
        # the envelope as the engine widens it for a doubtful estimate: Hs +25 %, direction ±25°
        r = evaluate_polar(model, sp, sigma_hs_rel=0.125, sigma_dir=25 * DEG)
        a = advise(r, 30 * DEG, 14 * KNOT, 30 * DEG, model.limit_set.advice, previous=prev if memory else None)
        out.append(a)
        prev = a
    return out


def test_steady_while_the_sea_builds(model):
    from advisor.advice import MAX_SPEED_GAIN

    steady = _building_chain(model, True)
    f = _figures(steady)
    forgetful = _figures(_building_chain(model, False))
    assert f["changes"] >= 6  # rough enough to act on
    # the flip measure's thresholds (10°/2 kn held, 30°/5 kn moved) are the project choices;
    # one flip is left with this seed: the advice leaving bow seas once the sea passes ~7 m
    assert f["flips"] <= 1
    assert forgetful["flips"] >= 3  # the same windows without memory (3 with this seed)
    # no advice asks for more than MAX_SPEED_GAIN (2 kn, project choice) above the present 14 kn
    assert max(a.speed for a in steady) <= 14 * KNOT + MAX_SPEED_GAIN + 1e-9


def test_new_advice_asks_for_little_more_speed(model):
    from advisor.advice import MAX_SPEED_GAIN

    # a ship that must not turn, slow in head seas inside a zone: the cheapest way out would be a large
    # speed increase; a new advice asks for at most MAX_SPEED_GAIN (2 kn, project choice) more
    w = AdviceWeights(heading=1e6, speed_loss=3.0 / KNOT, speed_gain=1.0 / KNOT, min_speed=0.0)
    r = evaluate_polar(model, sea(4.0, 10.0, 0.0), sigma_hs_rel=0.1, sigma_dir=10 * DEG)
    for u_now in r.speeds[:10]:
        a = advise(r, 0.0, float(u_now), 0.0, w)
        assert a.speed <= float(u_now) + MAX_SPEED_GAIN + 1e-9


def test_least_bad_prefers_cells_outside_the_nominal_zones(model):
    # the envelope's zones (set by hand over the whole chart, as a doubtful window's intervals do) no
    # longer tell cells apart; the least bad is then sought outside the zones of the nominal estimate
    r = evaluate_polar(model, sea(18.0, 11.0, 0.0), sigma_hs_rel=0.2)
    assert not r.acceptable().any()
    covered = dataclasses.replace(r, zones_conservative={"parametric_roll": np.ones_like(r.in_zone_conservative)})
    nominal = r.in_zone_grid(nominal=True)
    assert nominal.any() and not nominal.all()
    a = advise(covered, 90 * DEG, 12 * KNOT, 90 * DEG, model.limit_set.advice)
    assert a.status == "none_acceptable"
    assert not covered.at(a.heading, a.speed, nominal_zones=True).zones


def test_the_sentence_never_reads_clear_of_a_zone_the_advised_cell_is_near(model):
    # A corrected step of an advice given may lie in a zone once the estimate's uncertainty is allowed for
    # (the conservative bands): the sentence then says so, and never claims to leave a zone the advised
    # cell is still in (advisor.advice._sentence).
    from advisor.zones import ZONE_LABELS

    seen = 0
    for a in _building_chain(model, True):
        if a.status != "change":
            continue
        for z in a.zones_advised:
            seen += 1
            assert "still near the" in a.sentence and ZONE_LABELS[z] in a.sentence.split("still near the", 1)[1]
            assert f"this leaves the {ZONE_LABELS[z]}" not in a.sentence
    assert all("still near" not in a.sentence for a in _building_chain(model, True) if not a.zones_advised)
    # the invented building sea gives such a case (otherwise the check above proves nothing)
    assert seen >= 1
