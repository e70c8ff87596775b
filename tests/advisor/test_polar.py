"""Tests of the polar evaluation (advisor.polar) and the criteria statistics (advisor.criteria)."""

import copy
import math

import numpy as np
import pytest
from advisor_fixtures import DEG, LPP, OMEGA, T_ROLL, VESSEL_POINTS, limit_mapping, sea
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from advisor import criteria
from advisor.limits import parse_limit_set
from advisor.polar import build_polar_model, evaluate_polar
from advisor.zones import ZONE_NAMES
from estimator import kinematics, responses
from estimator.constants import KNOT, G
from estimator.spectra import DirectionalSpectrum, directional_spectrum, jonswap, spreading_cos2s
from tests.check_values import ISO2631_MSDV_2H, NORDFORSK_200M, OCHI_SLAMMING_WETNESS, RAYLEIGH_MPM_3H


@pytest.fixture(scope="module")
def model(rao_table, limit_set):
    return build_polar_model(
        rao_table,
        limit_set,
        lpp=LPP,
        t_roll=T_ROLL,
        vessel_points=VESSEL_POINTS,
        omega=OMEGA,
        max_speed=24 * KNOT,
    )


def test_grid_shape(model):
    # the project's grid: 72 headings every 5°, speeds 0..24 kn every 1 kn
    assert model.headings.size == 72 and model.speeds.size == 25
    assert model.speeds[-1] == pytest.approx(24 * KNOT)
    r = evaluate_polar(model, sea())
    assert r.utilisation.shape == (9, 72, 25) and r.overall.shape == (72, 25)
    assert r.limiting.dtype.kind == "i"


def test_single_cell_equals_hand_computation(model, rao_table, limit_set):
    # Direct computation of one cell, loop written out: β = (π − (θ − ψ)) mod 2π (docs/conventions.md),
    # ω_e = ω − ω²U cos β / g, H from the RAO table and the rigid-body kinematics (Faltinsen 1990 §2.2),
    # m_n = Σ |H|²|ω_e|ⁿ S Δω Δθ (Faltinsen 1990 §2.4), then the statistics of Longuet-Higgins (1952) and
    # Ochi (1964).
    spec = sea(6.0, 11.0, 30.0 * DEG, s=8.0)
    r = evaluate_polar(model, spec)
    h_idx, s_idx = 13, 9  # ψ = 65°, U = 9 kn
    psi, speed = model.headings[h_idx], model.speeds[s_idx]
    pts = limit_set.resolve_points(VESSEL_POINTS)
    for c, lim in enumerate(limit_set.limits):
        m0 = m2 = 0.0
        p = pts.get(lim.point) if lim.point else None
        for k, om in enumerate(spec.omega):
            for l_, th in enumerate(spec.theta):
                beta = (math.pi - (th - psi)) % (2 * math.pi)
                om_e = om - om**2 * speed * math.cos(beta) / G
                rao6 = rao_table(om, beta, speed)
                if lim.criterion == "roll":
                    h = rao6[3]
                elif lim.criterion == "pitch":
                    h = rao6[4]
                elif lim.criterion == "vertical_acceleration":
                    h = -(om_e**2) * (rao6[2] + p.y * rao6[3] - p.x * rao6[4])
                elif lim.criterion == "lateral_acceleration":
                    s_y = rao6[1] + p.x * rao6[5] - p.z * rao6[3]
                    h = -(om_e**2) * s_y + G * rao6[3]
                elif lim.criterion == "longitudinal_acceleration":
                    s_x = rao6[0] - p.y * rao6[5] + p.z * rao6[4]
                    h = -(om_e**2) * s_x - G * rao6[4]
                elif lim.criterion in ("slamming", "deck_wetness"):
                    kw = om**2 / G
                    zeta = np.exp(-1j * kw * (p.x * math.cos(beta) + p.y * math.sin(beta)))
                    h = zeta - (rao6[2] + p.y * rao6[3] - p.x * rao6[4])
                else:  # motion sickness: ISO 2631-1 Wf-weighted vertical acceleration
                    h = -(om_e**2) * (rao6[2] + p.y * rao6[3] - p.x * rao6[4])
                    h = h * responses.iso2631_wf(abs(om_e) / (2 * math.pi))
                e = (
                    abs(complex(np.asarray(h).item())) ** 2
                    * spec.density[k, l_]
                    * spec.omega_weights[k]
                    * spec.theta_weights[l_]
                )
                m0 += e
                m2 += om_e**2 * e
        sigma, sigma_dot = math.sqrt(m0), math.sqrt(m2)
        if lim.statistic == "rms":
            expected = sigma
        elif lim.statistic == "significant":
            expected = 2 * sigma
        elif lim.statistic == "mpm":
            tz = 2 * math.pi * sigma / sigma_dot
            expected = sigma * math.sqrt(2 * math.log(lim.exposure / tz))
        elif lim.statistic == "msdv":
            expected = sigma * math.sqrt(lim.exposure)
        elif lim.criterion == "slamming":
            vth = 0.093 * math.sqrt(G * LPP)
            expected = math.exp(-(p.z**2) / (2 * m0) - vth**2 / (2 * m2))
        else:  # deck wetness per hour → per second: P_wet / Tz,r, relative motion × swell-up factor
            c_sw = criteria.BOW_SWELL_UP
            expected = (
                math.exp(-(p.z**2) / (2 * m0 * c_sw**2)) * sigma_dot / (2 * math.pi * sigma)
                if lim.statistic == "rate_per_hour"
                else None
            )
        assert r.predicted[c, h_idx, s_idx] == pytest.approx(expected, rel=1e-9), lim.key
        assert r.utilisation[c, h_idx, s_idx] == pytest.approx(expected / lim.value, rel=1e-9)


def _symmetric_limits():
    m = limit_mapping()
    m["points"][0]["y_m"] = 0.0
    return parse_limit_set(m, "sym.toml")


def test_port_starboard_symmetry(rao_table):
    # a port/starboard symmetric ship (mirrored RAO table) in a sea symmetric about its track:
    # heading ψ and 2θ − ψ see mirror-image seas, so every criterion and zone is equal (ITTC mirror
    # relation of the motions, Faltinsen 1990 ch. 2; estimator.rao MIRROR_SIGNS)
    mdl = build_polar_model(
        rao_table,
        _symmetric_limits(),
        lpp=LPP,
        t_roll=T_ROLL,
        vessel_points=VESSEL_POINTS,
        omega=OMEGA,
        max_speed=24 * KNOT,
    )
    r = evaluate_polar(mdl, sea(6.0, 12.0, 0.0, s=6.0), sigma_hs_rel=0.1, sigma_dir=5 * DEG)
    mirror = (-np.arange(72)) % 72
    np.testing.assert_allclose(r.utilisation, r.utilisation[:, mirror], rtol=1e-9, atol=1e-15)
    np.testing.assert_allclose(
        r.utilisation_conservative, r.utilisation_conservative[:, mirror], rtol=1e-9, atol=1e-15
    )
    for name in ZONE_NAMES:
        assert np.array_equal(r.zones[name], r.zones[name][mirror])
    # and the sea matters: beam seas roll more than head seas (physics sanity, 1-DOF roll ∝ |sin β|)
    assert r.utilisation[0, 18, 10] > 3 * r.utilisation[0, 0, 10]


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    hs=st.floats(0.5, 9.0),
    factor=st.floats(1.0, 2.0),
    tp=st.floats(6.0, 16.0),
    direction=st.floats(0.0, 359.0),
    s=st.floats(1.0, 30.0),
)
def test_higher_hs_never_safer(model, hs, factor, tp, direction, s):
    # property (style.md H11): scaling the sea up never lowers any utilisation, nominal or
    # conservative, and never removes a zone (all statistics are increasing in the moments)
    low = sea(hs, tp, math.radians(direction), s)
    high = low.scaled(factor**2)
    a = evaluate_polar(model, low, sigma_hs_rel=0.1, sigma_dir=7 * DEG)
    b = evaluate_polar(model, high, sigma_hs_rel=0.1, sigma_dir=7 * DEG)
    assert np.all(b.utilisation >= a.utilisation * (1 - 1e-12))
    assert np.all(b.utilisation_conservative >= a.utilisation_conservative * (1 - 1e-12))
    for name in ZONE_NAMES:
        assert np.all(b.zones_conservative[name] >= a.zones_conservative[name])
    assert np.all(b.acceptable() <= a.acceptable())


def test_limit_exactly_at_threshold(model, rao_table):
    # a limit equal to the predicted value gives utilisation exactly 1; with margin 1 the cell is
    # acceptable (≤), with the limit one ulp lower it is not
    spec = sea(5.0, 10.0, 90.0 * DEG)
    r = evaluate_polar(model, spec)
    target = float(r.predicted[0, 20, 12])  # roll RMS at ψ = 100°, 12 kn [rad]

    def one_limit(value):
        m = {
            "schema_version": 1,
            "name": "edge",
            "margin": 1.0,
            "zones": {"min_system_hs_m": 30.0},  # no roll-resonance screening in this test
            "limits": [
                {"criterion": "roll", "statistic": "rms", "value": value, "unit": "rad", "source": "test"}
            ],
        }
        ls = parse_limit_set(m, "edge.toml")
        mdl = build_polar_model(
            rao_table, ls, lpp=LPP, t_roll=T_ROLL, vessel_points={}, omega=OMEGA, max_speed=24 * KNOT
        )
        return evaluate_polar(mdl, spec)

    at = one_limit(target)
    assert at.utilisation[0, 20, 12] == 1.0
    assert at.acceptable()[20, 12]
    below = one_limit(np.nextafter(target, 0.0))
    assert below.utilisation[0, 20, 12] > 1.0
    assert not below.acceptable()[20, 12]


def test_conservative_equals_explicit_rotations_and_upper_hs(model, limit_set):
    # conservative = worst over the spectrum turned by −σ_dir..+σ_dir (whole heading steps) at the upper
    # Hs·(1 + kσ): checked against explicit DirectionalSpectrum.rotated / .scaled evaluations
    # on a 5° direction grid a turn by 5° is an exact roll of the density (DirectionalSpectrum.rotated)
    theta5 = np.arange(72) * 5.0 * DEG
    spec = directional_spectrum(
        OMEGA, theta5, jonswap(OMEGA, 5.0, 9.0), lambda th: spreading_cos2s(th, 40.0 * DEG, 5.0)
    )
    sig_hs, sig_dir = 0.15, 10.0 * DEG
    r = evaluate_polar(model, spec, sigma_hs_rel=sig_hs, sigma_dir=sig_dir)
    k = limit_set.uncertainty.hs_k
    up = spec.scaled((1 + k * sig_hs) ** 2)
    worst = np.max(
        [evaluate_polar(model, up.rotated(d * DEG)).utilisation for d in (-10, -5, 0, 5, 10)], axis=0
    )
    np.testing.assert_allclose(r.utilisation_conservative, worst, rtol=1e-9, atol=1e-15)
    assert np.all(r.utilisation_conservative >= r.utilisation)
    # σ = 0: conservative is nominal
    r0 = evaluate_polar(model, spec)
    np.testing.assert_array_equal(r0.utilisation_conservative, r0.utilisation)
    # direction uncertainty is rounded up to whole heading steps (never less conservative)
    assert evaluate_polar(model, spec, sigma_dir=6 * DEG).sigma_dir == pytest.approx(10 * DEG)


def test_bimodal_sea_is_scored_as_it_is(model):
    # linear superposition (Faltinsen 1990 §2.4): the variances of two wave systems add, so the RMS of a
    # combined sea is the root-sum-square of the parts — a bimodal sea is not reduced to a mean direction
    a = sea(4.0, 8.0, 60.0 * DEG, s=15.0)
    b = sea(3.0, 14.0, 250.0 * DEG, s=30.0)
    ra, rb, rab = (evaluate_polar(model, x) for x in (a, b, a + b))
    i = 0  # roll RMS
    np.testing.assert_allclose(rab.predicted[i] ** 2, ra.predicted[i] ** 2 + rb.predicted[i] ** 2, rtol=1e-9)
    assert len(rab.systems) == 2


def test_spectrum_on_other_grid_is_resampled(model):
    omega2 = np.linspace(0.25, 1.9, 30)
    spec = sea(5.0, 10.0, 0.0)
    other = spec.resampled(omega2, spec.theta)
    r = evaluate_polar(model, other)
    assert r.hs == pytest.approx(other.hs(), rel=1e-9)  # m0 kept (resample_spectrum conserve_m0)


def test_cell_value_at_grid_point_equals_grid(model):
    r = evaluate_polar(model, sea(6.0, 11.0, 0.0), sigma_hs_rel=0.1)
    cv = r.at(r.headings[7], r.speeds[5])
    np.testing.assert_allclose(cv.utilisation, r.utilisation_conservative[:, 7, 5], rtol=1e-12)
    assert cv.overall == pytest.approx(r.overall_conservative[7, 5])
    # between cells: bilinear, so within the range of the four neighbours
    cv = r.at(r.headings[7] + 2.5 * DEG, r.speeds[5] + 0.5 * KNOT)
    block = r.utilisation_conservative[:, 7:9, 5:7]
    assert np.all(cv.utilisation <= block.max(axis=(1, 2)) + 1e-12)
    assert np.all(cv.utilisation >= block.min(axis=(1, 2)) - 1e-12)


def test_bad_inputs(model, rao_table, limit_set):
    with pytest.raises(ValueError, match=r"sigma_hs_rel must be a finite number >= 0, got -0\.1"):
        evaluate_polar(model, sea(), sigma_hs_rel=-0.1)
    with pytest.raises(ValueError, match=r"heading_step must divide 360 deg"):
        build_polar_model(
            rao_table,
            limit_set,
            lpp=LPP,
            t_roll=T_ROLL,
            vessel_points=VESSEL_POINTS,
            omega=OMEGA,
            max_speed=10.0,
            heading_step=7 * DEG,
        )
    with pytest.raises(ValueError, match=r"t_roll must be > 0 s, got 0\.0"):
        build_polar_model(
            rao_table,
            limit_set,
            lpp=LPP,
            t_roll=0.0,
            vessel_points=VESSEL_POINTS,
            omega=OMEGA,
            max_speed=10.0,
        )


# ------------------------------------------------------------------------------------------------
# criteria: statistics against the reference check values
# ------------------------------------------------------------------------------------------------


def _lim(criterion, statistic, unit, value, point=None, exposure_h=None):
    d = {"criterion": criterion, "statistic": statistic, "unit": unit, "value": value, "source": "test"}
    if point:
        d["point"] = point
    if exposure_h:
        d["exposure_h"] = exposure_h
    m = {"schema_version": 1, "name": "x", "limits": [d]}
    return parse_limit_set(m).limits[0]


def test_slamming_and_wetness_check_values(monkeypatch):
    # derived from Ochi (1964), not published numbers (OCHI_SLAMMING_WETNESS.source): σ_r = 2.5 m,
    # σ_ṙ = 2.0 m/s, T_b = 8 m, f = 10 m, L = 200 m → P_slam, slams/h, P_wet, wet/h
    cv = OCHI_SLAMMING_WETNESS.value
    m0, m2 = cv["sigma_r_m"] ** 2, cv["sigma_rdot_ms"] ** 2
    keel = criteria.NamedPoint("ff", 90.0, 0.0, -8.0)
    deck = criteria.NamedPoint("bd", 95.0, 0.0, 10.0)
    p = criteria.predicted_statistic(
        _lim("slamming", "probability", "probability", 0.02, "ff"), m0, m2, point=keel, lpp=200.0
    )
    assert float(p) == pytest.approx(cv["p_slam"], rel=1e-3)
    rate = criteria.predicted_statistic(
        _lim("slamming", "rate_per_hour", "per_hour", 1.0, "ff"), m0, m2, point=keel, lpp=200.0
    )
    assert float(rate) * 3600 == pytest.approx(cv["slams_per_hour"], rel=2e-3)
    wet = _lim("deck_wetness", "probability", "probability", 0.05, "bd")
    # with the bow swell-up factor (criteria.BOW_SWELL_UP, common practice) σ_r is raised by it:
    # exp(−10²/(2·(1.2·2.5)²)) = exp(−5.556) = 3.866e-3 (by hand)
    p = criteria.predicted_statistic(wet, m0, m2, point=deck, lpp=200.0)
    assert criteria.BOW_SWELL_UP == 1.2
    assert float(p) == pytest.approx(3.866e-3, rel=1e-3)
    # without it, the incident-wave relative motion of the derived check value
    monkeypatch.setattr(criteria, "BOW_SWELL_UP", 1.0)
    p = criteria.predicted_statistic(wet, m0, m2, point=deck, lpp=200.0)
    assert float(p) == pytest.approx(cv["p_wet"], rel=1e-3)
    rate = criteria.predicted_statistic(
        _lim("deck_wetness", "rate_per_hour", "per_hour", 1.0, "bd"), m0, m2, point=deck, lpp=200.0
    )
    assert float(rate) * 3600 == pytest.approx(cv["wet_per_hour"], rel=3e-3)


def test_mpm_and_msdv_check_values():
    # derived from Longuet-Higgins (1952), not a published number (RAYLEIGH_MPM_3H.source)
    mpm = RAYLEIGH_MPM_3H.value
    m0 = mpm["sigma"] ** 2
    m2 = m0 * (2 * math.pi / mpm["tz_s"]) ** 2
    v = criteria.predicted_statistic(
        _lim("roll", "mpm", "deg", 10.0, exposure_h=3.0), m0, m2, point=None, lpp=200.0
    )
    assert float(v) == pytest.approx(mpm["mpm"], rel=1e-3)
    # derived from ISO 2631-1:1997 Annex D, not a published number (ISO2631_MSDV_2H.source)
    v = criteria.predicted_statistic(
        _lim("motion_sickness", "msdv", "m/s^1.5", 30.0, "b", 2.0), 0.25, 1.0, point=None, lpp=200.0
    )
    assert float(v) == pytest.approx(ISO2631_MSDV_2H.value["msdv"], rel=1e-3)
    # a response that barely oscillates: N is held at e, giving σ·√2 rather than an error
    v = criteria.predicted_statistic(
        _lim("roll", "mpm", "deg", 10.0, exposure_h=3.0), 1.0, 0.0, point=None, lpp=200.0
    )
    assert float(v) == pytest.approx(math.sqrt(2.0))


def test_nordforsk_interpolation():
    # NORDFORSK (1987) end points, from memory; the L = 200 m values interpolated (NORDFORSK_200M.source);
    # end points held outside
    cv = NORDFORSK_200M.value
    v = criteria.nordforsk_merchant(200.0)
    a_fp = v["vertical_acceleration_fp_rms"]
    assert a_fp / G == pytest.approx(cv["vertical_acceleration_fp_rms_g"], abs=5e-5)
    assert a_fp == pytest.approx(cv["vertical_acceleration_fp_rms_ms2"], abs=1e-3)
    assert v["slamming_probability"] == pytest.approx(cv["p_slam"], abs=1e-12)
    assert criteria.nordforsk_merchant(80.0)["vertical_acceleration_fp_rms"] == pytest.approx(0.275 * G)
    assert criteria.nordforsk_merchant(400.0)["vertical_acceleration_fp_rms"] == pytest.approx(0.050 * G)
    assert criteria.nordforsk_merchant(350.0)["slamming_probability"] == pytest.approx(0.01)
    assert criteria.nordforsk_merchant(150.0)["roll_rms"] == pytest.approx(math.radians(6.0))
    with pytest.raises(ValueError, match=r"lpp must be a finite length > 0 m, got -5\.0"):
        criteria.nordforsk_merchant(-5.0)


def test_nordforsk_mapping_parses():
    m = criteria.nordforsk_limit_mapping(
        200.0, fp="fp", bridge="bridge", forefoot="forefoot", bow_deck="bow_deck", name="n"
    )
    ls = parse_limit_set(copy.deepcopy(m), "n.toml", vessel_points=VESSEL_POINTS)
    assert [lim.key for lim in ls.limits][:2] == ["roll_rms", "vertical_acceleration_rms_fp"]
    assert ls.limits[1].value == pytest.approx(0.1772 * G)


def test_lateral_includes_gravity_from_roll():
    # pure roll about the origin: lateral specific force = (g + ω_e² z)·η4 (Faltinsen 1990 §2.2, small angles)
    rao6 = np.zeros(6, complex)
    rao6[3] = 0.02
    p = criteria.NamedPoint("p", 0.0, 0.0, 20.0)
    h = criteria.transfer(criteria.Response("lateral_acceleration", p), rao6, 0.5, math.pi / 2, 0.5)
    assert complex(h) == pytest.approx((G + 0.25 * 20.0) * 0.02)
    assert complex(h) == pytest.approx(complex(kinematics.lateral_specific_force(rao6, 0.5, 0.0, 0.0, 20.0)))


def test_calm_sea(model):
    # no energy: every statistic is zero (σ = 0 gives zero RMS, MPM, MSDV and zero event probabilities,
    # Rayleigh/Ochi formulas in their limit), no zone, every cell acceptable — and no warnings
    calm = DirectionalSpectrum(OMEGA, np.arange(24) * 15.0 * DEG, np.zeros((OMEGA.size, 24)))
    r = evaluate_polar(model, calm, sigma_hs_rel=0.2, sigma_dir=10 * DEG)
    assert np.all(r.utilisation_conservative == 0.0)
    assert r.systems == () and r.acceptable().all()


def test_period_stretch_keeps_energy_and_moves_the_peak():
    # S'(ω) = f·S(f·ω) (change of variable ω → f·ω): m0 is kept and Tp becomes f·Tp (analytic); the
    # JONSWAP of Tp = 10 s stretched by 1.15 equals the JONSWAP of Tp = 11.5 s with the same Hs
    from advisor.polar import period_stretched

    omega = np.linspace(0.1, 3.0, 400)
    base = sea(5.0, 10.0, 0.0)
    base = directional_spectrum(omega, base.theta, jonswap(omega, 5.0, 10.0), lambda th: spreading_cos2s(th, 0.0, 10.0))
    st = period_stretched(base, 1.15)
    assert st.hs() == pytest.approx(base.hs(), rel=2e-3)
    assert st.tp() == pytest.approx(11.5, rel=0.02)
    ref = directional_spectrum(omega, base.theta, jonswap(omega, 5.0, 11.5), lambda th: spreading_cos2s(th, 0.0, 10.0))
    np.testing.assert_allclose(st.density, ref.density, rtol=0.02, atol=1e-3 * ref.density.max())


def test_envelope_over_intervals_never_below_nominal(model):
    # the conservative utilisation is the largest over upper Hs, both Tp ends and ±σ_dir: never below
    # the nominal, and growing with each interval (monotone by construction, checked here)
    spec = sea(5.0, 11.0, 0.0)
    nominal = evaluate_polar(model, spec)
    wide_hs = evaluate_polar(model, spec, hs_upper=6.0)
    wide_tp = evaluate_polar(model, spec, hs_upper=6.0, tp_factors=(0.85, 1.2))
    wider = evaluate_polar(model, spec, hs_upper=6.0, tp_factors=(0.85, 1.2), sigma_dir=10 * DEG)
    assert np.all(nominal.utilisation_conservative >= nominal.utilisation - 1e-12)
    for a, b in ((nominal, wide_hs), (wide_hs, wide_tp), (wide_tp, wider)):
        assert np.all(b.utilisation_conservative >= a.utilisation_conservative * (1 - 1e-6) - 1e-12)
        np.testing.assert_allclose(b.utilisation, nominal.utilisation, rtol=1e-12)  # nominal kept
    # upper Hs alone scales the RMS statistics by Hs_up/Hs exactly (moments ∝ Hs²; Hs of the grid)
    c = list(model.keys).index("roll_rms")
    np.testing.assert_allclose(wide_hs.predicted_conservative[c], nominal.predicted[c] * 6.0 / nominal.hs, rtol=1e-9)
    assert wider.hs_upper == pytest.approx(6.0) and wider.tp_factors == (0.85, 1.2)
    with pytest.raises(ValueError, match="tp_factors must satisfy"):
        evaluate_polar(model, spec, tp_factors=(1.1, 1.2))
