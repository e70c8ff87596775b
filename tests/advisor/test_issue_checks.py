"""Check values for the screening, geometry and speed-loss models (advisor.zones, advisor.geometry,
advisor.speedloss, advisor.criteria), each with its source beside it."""

import math

import numpy as np
import pytest

from advisor import criteria
from advisor.geometry import Waterline, default_limit_mapping
from advisor.limits import Limit, ZoneSettings, parse_limit_set
from advisor.speedloss import attainable_speed, beaufort_from_hs, kwon_speed_loss
from advisor.zones import WaveSystem, parametric_roll_level1, parametric_roll_r_pr, zone_masks
from estimator.constants import KNOT

DEG = math.pi / 180.0
L = 200.0


# ------------------------------------------------------------------------------------------------
# MSC.1/Circ.1228 §4.2.2 with TW from the Tm01–Tp band and Hs of the whole sea


def _following(systems, hs_total=None):
    speeds = np.arange(0.0, 26.0) * KNOT
    # ship heading 180° with waves from 000°: α = 180°, following seas
    z = zone_masks([math.pi], speeds, systems, L, 25.0, ZoneSettings(), hs_total=hs_total)
    return z["successive_waves"][0]


def test_successive_waves_uses_tw_band_and_whole_sea_hs():
    # Circ.1228 §4.2.2 (from memory): λ > 0.8 L, Hs > 0.04 L and 1.8 <= TE/TW <= 3.0. In following
    # seas TE = 3TW²/(3TW − V) (Fig. 1 closed form), so the band is V in [3TW(1 − 1/1.8), 2TW] kn =
    # [1.333 TW, 2 TW] kn (by hand). TW over Tm01 = 10.5 s .. Tp = 12 s (λ = 172 m .. 225 m > 160 m):
    # the union is V in [14.0, 24.0] kn.
    swell = WaveSystem(hs=6.0, tp=12.0, theta=0.0, label="a", tm01=10.5)
    other = WaveSystem(hs=6.0, tp=12.0, theta=0.0, label="b", tm01=10.5)
    inside = _following([swell, other])  # whole sea Hs = sqrt(36 + 36) = 8.49 m > 0.04 L = 8 m
    kn = np.arange(26)
    assert inside[(kn >= 15) & (kn <= 23)].all()
    assert not inside[kn <= 13].any() and not inside[kn >= 25].any()
    # each system alone is below 0.04 L: the circular's test is on the sea, not on a partition
    assert not _following([swell], hs_total=6.0).any()
    assert _following([swell], hs_total=8.49).any()
    # at TW = Tp alone (the band's upper end) 14-15 kn would be outside: 1.333·12 = 16.0 kn (by hand)
    tp_only = WaveSystem(hs=9.0, tp=12.0, theta=0.0, label="c")
    z = _following([tp_only])
    assert not z[15] and z[16] and z[24]


# ------------------------------------------------------------------------------------------------
# MSC.1/Circ.1627 level-1 parametric roll


def test_parametric_roll_level1_worked_case():
    # MSC.1/Circ.1627 level 1 (formulas from memory), worked by hand for L = 200 m, B = 32.2 m,
    # D = 18.8 m, d = d_full = 11.5 m, ∇ = 48,878.05 m³, C_M = 0.98, A_k = 90 m², and a waterplane
    # inertia growing linearly I(d) = 2.0e5 + 1.0e4·d m⁴:
    #   L·SW/2 = 200·0.0167/2 = 1.67 m; d_H = 11.5 + min(7.3, 1.67) = 13.17 m;
    #   d_L = 11.5 − min(11.5 − 2.875, 1.67) = 9.83 m; I_H − I_L = 1.0e4·3.34 = 33,400 m⁴;
    #   ΔGM1 = 33,400 / (2·48,878.05) = 0.34167 m;
    #   100·A_k/(L·B) = 9000/6440 = 1.39752; R_PR = 0.17 + 0.425·1.39752 = 0.76395.
    kw = dict(lpp=L, beam=32.2, depth=18.8, draft=11.5, draft_full=11.5, volume=48878.05,
              wp_draft=[4.0, 16.0], wp_inertia=[2.4e5, 3.6e5], cm=0.98, bilge_keel_area=90.0)
    stiff = parametric_roll_level1(gm=1.2, **kw)
    assert stiff.dgm == pytest.approx(0.34167, rel=1e-4)
    assert stiff.ratio == pytest.approx(0.28473, rel=1e-4)  # 0.34167 / 1.2
    assert stiff.r_pr == pytest.approx(0.76395, rel=1e-4)
    assert not stiff.vulnerable and stiff.min_system_hs == math.inf
    assert "not vulnerable" in stiff.text and "Circ.1627 level 1" in stiff.text
    tender = parametric_roll_level1(gm=0.4, **kw)  # ΔGM1/GM = 0.85417 > 0.76395
    assert tender.vulnerable and tender.ratio == pytest.approx(0.85417, rel=1e-4)
    # smallest screened system: SW·L·R_PR/(ΔGM1/GM) = 3.34·0.76395/0.85417 = 2.987 m (project choice)
    assert tender.min_system_hs == pytest.approx(2.987, rel=1e-3)


def test_parametric_roll_r_pr_branches():
    # MSC.1/Circ.1627 R_PR (from memory), by hand with 100·A_k/(L·B) = 1.39752:
    assert parametric_roll_r_pr(0.95, 90.0, L, 32.2) == pytest.approx(0.17 + 0.31875 * 1.39752, rel=1e-5)
    assert parametric_roll_r_pr(0.90, 90.0, L, 32.2) == pytest.approx(0.17)
    assert parametric_roll_r_pr(0.99, 1e4, L, 32.2) == pytest.approx(0.17 + 0.425 * 4.0)  # capped at 4
    assert parametric_roll_r_pr(0.99, 90.0, L, 32.2, sharp_bilge=True) == pytest.approx(1.87)


def test_not_vulnerable_condition_gets_no_parametric_zone():
    sea = [WaveSystem(hs=5.0, tp=11.0, theta=0.0, label="s", tm01=9.5)]
    psi = np.arange(72) * 5 * DEG
    u = np.arange(0, 21) * KNOT
    screened = zone_masks(psi, u, sea, L, 20.0, ZoneSettings(), parametric_min_hs=0.0)
    assert screened["parametric_roll"].any()
    cleared = zone_masks(psi, u, sea, L, 20.0, ZoneSettings(), parametric_min_hs=math.inf)
    assert not cleared["parametric_roll"].any()
    assert np.array_equal(cleared["synchronous_roll"], screened["synchronous_roll"])


# ------------------------------------------------------------------------------------------------
# geometry per loading condition: slamming at two drafts vs Ochi (1964) by hand


def _slam_limit(point):
    return Limit("slam", "slamming", "probability", 0.02, "probability", 0.02, None, point, "s", "test")


def test_slamming_at_two_drafts_by_hand():
    # The forefoot (keel at x = 80 m) given at the deep draft 11.5 m (z = −11.5 m). In ballast, mean
    # draft 8.0 m and trim 1.5 m by the stern: d(80) = 8.0 − 1.5·80/200 = 7.4 m (by hand).
    deep = Waterline(L, 11.5, 0.0, reference_draft=11.5)
    ballast = Waterline(L, 8.0, 1.5, reference_draft=11.5)
    assert deep.height(80.0, -11.5) == pytest.approx(-11.5)
    assert ballast.height(80.0, -11.5) == pytest.approx(-7.4)
    # Ochi (1964): P = exp(−T²/(2σ_r²) − v_th²/(2σ_ṙ²)), v_th = 0.093·√(gL) = 4.11939 m/s (from
    # memory). With σ_r = 2.5 m, σ_ṙ = 2.0 m/s, by hand:
    #   deep:    exp(−132.25/12.5 − 16.9693/8) = exp(−10.580 − 2.1212) = exp(−12.701) = 3.048e-6
    #   ballast: exp(−54.76/12.5 − 2.1212)     = exp(−4.3808 − 2.1212) = exp(−6.5020) = 1.500e-3
    m0, m2 = 2.5**2, 2.0**2
    p = {}
    for name, wl in (("deep", deep), ("ballast", ballast)):
        pt = criteria.NamedPoint("forefoot", 80.0, 0.0, wl.height(80.0, -11.5))
        p[name] = float(criteria.predicted_statistic(_slam_limit("forefoot"), m0, m2, point=pt, lpp=L))
    assert p["deep"] == pytest.approx(3.048e-6, rel=2e-3)
    assert p["ballast"] == pytest.approx(1.500e-3, rel=2e-3)
    assert p["ballast"] / p["deep"] > 400  # orders of magnitude: why the draft must be used


def test_points_follow_the_condition_waterline():
    # z_c = z + (d_ref − d) + t·x/L (small trim, rigid hull; by hand): bow at (97, 9.5) given at 11.5 m
    wl = Waterline(L, 8.0, 1.5, reference_draft=11.5)
    assert wl.height(97.0, 9.5) == pytest.approx(9.5 + 3.5 + 1.5 * 97 / 200)
    assert wl.draft_at(100.0) == pytest.approx(7.25) and wl.draft_at(-100.0) == pytest.approx(8.75)
    # without a reference draft the heights are above each condition's mean waterline: trim only
    assert Waterline(L, 8.0, 1.5).height(-72.0, 30.0) == pytest.approx(30.0 - 1.5 * 72 / 200)


def test_default_limit_set_is_built_for_the_vessel():
    # NORDFORSK (1987) interpolated at the vessel's Lpp (from memory): FP vertical acceleration
    # 0.275 g (L <= 100 m) → 0.05 g (L >= 330 m): at L = 150 m 0.275 − 0.225·50/230 = 0.22609 g;
    # slamming 0.03 (L <= 100 m) → 0.01 (L >= 300 m): at 150 m 0.025 (by hand)
    wl = Waterline(150.0, 6.0, 1.0)
    m, skipped = default_limit_mapping(lpp=150.0, waterline=wl, freeboard_bow=None, depth=None,
                                       vessel_points={}, name="t")
    ls = parse_limit_set(m, "default", vessel_points=[])
    crit = {lim.criterion: lim for lim in ls.limits}
    assert set(crit) == {"roll", "vertical_acceleration", "slamming"}
    assert crit["vertical_acceleration"].value_in_unit == pytest.approx(0.2261, abs=1e-4)
    assert crit["slamming"].value_in_unit == pytest.approx(0.025)
    pts = {p.name: p for p in ls.points}
    # forefoot 0.1 L aft of the FP (x = 60 m) at the keel: d(60) = 6.0 − 1.0·60/150 = 5.6 m
    assert pts["forefoot"].x == pytest.approx(60.0) and pts["forefoot"].z == pytest.approx(-5.6)
    assert any("bridge" in s for s in skipped) and any("deck wetness" in s for s in skipped)
    # with a bridge point and the depth, nothing is skipped; the bow freeboard is depth − d(FP)
    m, skipped = default_limit_mapping(lpp=150.0, waterline=wl, freeboard_bow=None, depth=12.0,
                                       vessel_points={"bridge": (-60.0, 0.0, 20.0)}, name="t")
    assert skipped == ()
    bow = {p["name"]: p for p in m["points"]}["bow_deck"]
    assert bow["z_m"] == pytest.approx(12.0 - (6.0 - 0.5))


# ------------------------------------------------------------------------------------------------
# Kwon (2008) speed loss


def test_kwon_worked_case_by_hand():
    # Kwon (2008) (formulas from memory), container ship L = 200 m, C_B = 0.66, V1 = 22 kn,
    # ∇ = 48,878 m³, Hs = 7.0 m → BN = 9 (WMO probable wave height table, from memory). By hand:
    #   Fn = 22·0.514444/√(9.81·200) = 11.31778/44.29447 = 0.255512
    #   C_U(0.65) = 2.6 − 3.7·Fn − 11.6·Fn² = 0.897283; C_U(0.70) = 3.1 − 5.3·Fn − 12.4·Fn² = 0.936246
    #   C_U(0.66) = 0.897283 + 0.2·0.038963 = 0.905076
    #   C_Form = 0.7·9 + 9^6.5/(22·∇^(2/3)) = 6.3 + 1,594,323/(22·1336.93) = 6.3 + 54.206 = 60.506
    #   head seas C_β = 1: ΔV/V1 = 0.905076·60.506 % = 54.76 %; V = 22·(1 − 0.5476) = 9.95 kn
    #   beam seas 2C_β = 0.9 − 0.06·(9 − 6)² = 0.36: ΔV/V1 = 0.18·54.76 = 9.857 %
    assert float(beaufort_from_hs(7.0)) == pytest.approx(9.0)
    kw = dict(speed=22 * KNOT, lpp=L, cb=0.66, volume=48878.0, container=True)
    assert float(kwon_speed_loss(0.0, 7.0, **kw)) == pytest.approx(0.5476, abs=2e-4)
    assert float(kwon_speed_loss(math.pi / 2, 7.0, **kw)) == pytest.approx(0.09857, abs=2e-4)
    cap = attainable_speed([0.0, math.pi], 0.0, 7.0, max_speed=22 * KNOT, lpp=L, cb=0.66, volume=48878.0,
                           container=True)
    assert cap[0] / KNOT == pytest.approx(9.95, abs=0.01)  # heading 000° into waves from 000°
    assert cap[1] > cap[0]  # following seas cost less speed
    # calm water: no loss
    assert float(kwon_speed_loss(0.0, 0.0, **kw)) == 0.0


def test_stawave1_and_power_limited_speed_by_hand():
    # STAWAVE-1 (ITTC 7.5-04-01-01.1 2014 / ISO 15016:2015, from memory): R_AW = ρ g Hs² B √(B/L_BWL)/16.
    # Hs = 4 m, B = 32.2 m, L_BWL = 25 m: 1025·9.81·16·32.2·√1.288/16 = 367,457 N (by hand)
    from advisor.speedloss import attainable_speed_power, stawave1_added_resistance

    assert float(stawave1_added_resistance(4.0, 32.2, 25.0, 0.0)) == pytest.approx(367457.1, rel=1e-6)
    assert float(stawave1_added_resistance(4.0, 32.2, 25.0, math.radians(60.0))) == 0.0  # outside ±45°
    # calm-water resistance R = 50 kN per knot, η_D·P = 0.7·10 MW = 7 MW. Calm water: 25.7222·V² = 7000
    # → V = 16.497 kn; head seas: 25.7222·V² + 189.036·V − 7000 = 0 → V = 13.226 kn (by hand)
    kw = dict(max_speed=22 * KNOT, beam=32.2, bow_length=25.0, calm_speed=[1 * KNOT, 20 * KNOT],
              calm_resistance=[50e3, 1000e3], power=10e6, efficiency=0.7)
    cap = attainable_speed_power([0.0, math.pi], 0.0, 4.0, **kw) / KNOT  # heading into / away from the waves
    assert cap[0] == pytest.approx(13.226, abs=0.06) and cap[0] <= 13.226
    assert cap[1] == pytest.approx(16.497, abs=0.06) and cap[1] <= 16.497
