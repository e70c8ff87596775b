"""Tests for estimator.hull: RAOs estimated from main particulars.

Sources of the expected values, named beside each check:

* ``tests/check_values.py`` JMO_*: derived with numpy from the closed-form expressions of Jensen,
  Mansour & Olsen (2004), not published numbers;
* ``tests/check_values.py`` ROLL_RAO_1DOF: derived from the single-degree-of-freedom roll equation;
* ``tests/check_values.py`` IS_CODE_ROLL_PERIOD: derived from the IMO IS Code 2008 Part A 2.3 roll period;
* analytical: long-wave (hydrostatic) limits, Airy deep-water wave kinematics, and the ITTC sign
  conventions of docs/conventions.md;
* scipy: scipy.integrate.solve_ivp as an independent time-domain solution of the roll equation.
"""

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from estimator.constants import DOFS, KNOT, RHO_SEAWATER, G
from estimator.hull import (
    DEFAULT_ZETA_ROLL,
    effective_wave_slope_coefficient,
    estimate_rao_table,
    gm_from_roll_period,
    horizontal_motions_froude_krylov,
    is_code_roll_coefficient,
    jmo_heave_pitch,
    roll_damping_coefficient,
    roll_period_is_code,
    roll_rao_1dof,
)
from estimator.rao import RAOTable
from tests.check_values import (
    IS_CODE_ROLL_PERIOD,
    JMO_HEAD_15KN,
    JMO_OBLIQUE,
    JMO_ZERO_SPEED,
    ROLL_RAO_1DOF,
)

# ship of the check values (tests/check_values.py, JMO_*)
SHIP = dict(lpp=200.0, beam=32.2, draft=11.0, cb=0.65)
U15 = 15.0 * KNOT


def _elevation(x, y, omega, beta):
    """Wave elevation per unit amplitude at (x, y) in body axes (DEVELOPERS.md conventions)."""
    k = omega**2 / G
    return np.exp(-1j * k * (x * np.cos(beta) + y * np.sin(beta)))


def _jmo_amplitudes(omega, beta, speed, lpp, beam, draft, cb):
    """JMO heave and pitch amplitudes written straight from Jensen, Mansour & Olsen (2004) (independent of
    the module)."""
    k = omega**2 / G
    fn = speed / np.sqrt(G * lpp)
    b = cb * beam
    alpha = 1.0 - fn * np.sqrt(k * lpp) * np.cos(beta)
    ke = np.abs(k * np.cos(beta))
    a = 2.0 * np.sin(0.5 * k * b * alpha**2) * np.exp(-k * draft * alpha**2)
    f = np.sqrt((1.0 - k * draft) ** 2 + (a**2 / (k * b * alpha**3)) ** 2)
    kappa = np.exp(-ke * draft)
    big_f = kappa * f * (2.0 / (ke * lpp)) * np.sin(ke * lpp / 2.0)
    big_g = (
        kappa
        * f
        * (24.0 / ((ke * lpp) ** 2 * lpp))
        * (np.sin(ke * lpp / 2.0) - (ke * lpp / 2.0) * np.cos(ke * lpp / 2.0))
    )
    eta = ((1.0 - 2.0 * k * draft * alpha**2) ** 2 + (a**2 / (k * b * alpha**2)) ** 2) ** -0.5
    return np.abs(eta * big_f), np.abs(eta * big_g)


# ---------------------------------------------------------------------------------------- JMO


@pytest.mark.parametrize(
    ("omega", "heave", "pitch", "pitch_over_k"),
    JMO_HEAD_15KN.value,  # derived from JMO (2004), not published: JMO_HEAD_15KN.source
)
def test_jmo_check_table_head_seas_15_kn(omega, heave, pitch, pitch_over_k):
    h, p = jmo_heave_pitch(omega, np.pi, U15, **SHIP)
    assert abs(h) == pytest.approx(heave, abs=0.5e-4)  # JMO_HEAD_15KN, 4 decimals given
    assert abs(p) == pytest.approx(pitch, abs=0.5e-6)  # JMO_HEAD_15KN, 6 decimals given
    assert abs(p) / (omega**2 / G) == pytest.approx(pitch_over_k, abs=0.5e-3)  # JMO_HEAD_15KN


@pytest.mark.parametrize(("omega", "heave", "pitch"), JMO_ZERO_SPEED.value)  # derived, JMO_ZERO_SPEED.source
def test_jmo_check_values_zero_speed(omega, heave, pitch):
    h, p = jmo_heave_pitch(omega, np.pi, 0.0, **SHIP)
    assert abs(h) == pytest.approx(heave, abs=0.5e-4)  # JMO_ZERO_SPEED
    assert abs(p) == pytest.approx(pitch, abs=0.5e-6)  # JMO_ZERO_SPEED


def test_jmo_smith_factor_uses_the_longitudinal_wave_number():
    # derived, not published (JMO_OBLIQUE.source): at beta = 135 deg, omega 0.5, 15 kn heave is 1.0018
    # with kappa = exp(-k_e T) (0.9228 with exp(-k T))
    cv = JMO_OBLIQUE.value
    h, _ = jmo_heave_pitch(cv["omega"], np.radians(cv["beta_deg"]), U15, **SHIP)
    assert abs(h) == pytest.approx(cv["heave"], abs=0.5e-4)


def test_jmo_amplitudes_equal_the_published_formulas_on_a_grid_including_overtaking_waves():
    # JMO (2004) formulas transcribed independently above; the grid includes following seas at
    # 20 kn where omega_e changes sign (alpha < 0) and oblique headings.
    omega = np.linspace(0.2, 1.8, 33)[:, None, None]
    beta = np.radians([0.0, 30.0, 60.0, 120.0, 150.0, 180.0])[None, :, None]
    speed = np.array([0.0, 6.0, 10.3])[None, None, :]
    h, p = jmo_heave_pitch(omega, beta, speed, **SHIP)
    he, pe = _jmo_amplitudes(omega, beta, speed, **SHIP)
    assert np.any(omega - omega**2 * speed * np.cos(beta) / G < 0)  # the overtaking branch is covered
    np.testing.assert_allclose(np.abs(h), he, rtol=1e-10, atol=1e-14)
    np.testing.assert_allclose(np.abs(p), pe, rtol=1e-10, atol=1e-14)


@pytest.mark.parametrize("beta_deg", [180.0, 150.0, 0.0, 30.0])
def test_jmo_long_wave_limits_follow_the_wave_surface(beta_deg):
    # Analytical long-wave (hydrostatic) limit: the ship follows the surface, heave -> zeta at the
    # origin (1, in phase) and pitch (+ bow down) -> -d zeta/dx, the slope of the wave profile
    # exp(-i k x cos(beta)) [DEVELOPERS.md conventions]; |pitch|/k -> 1 in head seas
    # (capytaine, the reference library of test_hull_capytaine.py, agrees within 1 %).
    beta = np.radians(beta_deg)
    omega = 0.02
    h, p = jmo_heave_pitch(omega, beta, 5.0, **SHIP)
    dx = 1e-3
    slope = (_elevation(dx, 0.0, omega, beta) - _elevation(-dx, 0.0, omega, beta)) / (2 * dx)
    assert h == pytest.approx(1.0, abs=2e-3)
    assert p == pytest.approx(-slope, rel=2e-3)
    if beta_deg == 180.0:
        assert p.imag < 0  # head seas: -i k, bow up a quarter period before the crest reaches midship
        assert abs(p) / (omega**2 / G) == pytest.approx(1.0, abs=2e-3)


def test_jmo_beam_seas_have_no_pitch_and_finite_heave():
    # Analytical: beam seas have no longitudinal wave slope (k_e = 0), so pitch is zero and the
    # heave has no length reduction; the k_e -> 0 limits must be finite (no 0/0).
    h, p = jmo_heave_pitch(np.array([0.3, 0.8]), np.pi / 2, 0.0, **SHIP)
    assert np.all(np.isfinite(h))
    np.testing.assert_allclose(p, 0.0, atol=1e-15)


def test_jmo_is_continuous_through_zero_encounter_frequency():
    # docs/conventions.md: with signed omega_e the table is continuous through omega_e = 0.
    speed = 8.0
    w0 = G / speed  # following seas: omega_e = omega (1 - omega U / g) = 0 here
    h0, p0 = jmo_heave_pitch(w0, 0.0, speed, **SHIP)
    assert np.isfinite(h0) and np.isfinite(p0)
    jumps = []
    for eps in (1e-4, 1e-6):
        h1, p1 = jmo_heave_pitch(w0 * (1 - eps), 0.0, speed, **SHIP)
        h2, p2 = jmo_heave_pitch(w0 * (1 + eps), 0.0, speed, **SHIP)
        jumps.append((abs(h1 - h2), abs(p1 - p2)))
    # a continuous function: the difference across omega_e = 0 shrinks with the step (100x here);
    # a jump (e.g. a sign error on the overtaking branch) would not shrink
    assert jumps[1][0] < 0.02 * jumps[0][0] + 1e-15
    assert jumps[1][1] < 0.02 * jumps[0][1] + 1e-15


def test_jmo_heave_resonance_phase_lags_a_quarter_period():
    # Analytical property of a lightly damped oscillator: at the undamped natural frequency of the
    # JMO heave equation (1 - 2 k T alpha^2 = 0, zero speed: k = 1/(2T)) the response lags the
    # excitation by 90 deg; the excitation phase here is arg(f_c) (long ship in beam seas, no
    # length reduction), so heave / excitation is -i times a positive number.
    omega = np.sqrt(G / (2 * SHIP["draft"]))
    h, _ = jmo_heave_pitch(omega, np.pi / 2, 0.0, **SHIP)
    k = omega**2 / G
    b = SHIP["cb"] * SHIP["beam"]
    a = 2 * np.sin(0.5 * k * b) * np.exp(-k * SHIP["draft"])
    f_c = (1 - k * SHIP["draft"]) + 1j * a**2 / (k * b)
    ratio = h / f_c
    assert abs(ratio.real) < 1e-12 * abs(ratio)
    assert ratio.imag < 0


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (dict(lpp=-1.0), "lpp must be a positive finite number"),
        (dict(beam=0.0), "beam must be a positive finite number"),
        (dict(draft=float("nan")), "draft must be a positive finite number"),
        (dict(cb=1.2), r"cb \(block coefficient\) must be in \(0, 1\], got 1.2"),
        (dict(omega=0.0), r"omega must be > 0 \[rad/s\]"),
        (dict(speed=-1.0), r"speed must be >= 0 \[m/s\]"),
        (dict(beta=np.inf), r"beta must be finite \[rad\]"),
    ],
)
def test_jmo_rejects_bad_input(kwargs, match):
    args = dict(omega=0.5, beta=np.pi, speed=0.0, **SHIP)
    args.update(kwargs)
    with pytest.raises(ValueError, match=match):
        jmo_heave_pitch(**args)


# ---------------------------------------------------------------------------------------- roll period


def test_is_code_roll_period_check_value():
    # derived from the IS Code 2008 Part A 2.3, not published (IS_CODE_ROLL_PERIOD.source)
    cv = IS_CODE_ROLL_PERIOD.value
    assert is_code_roll_coefficient(32.2, 11.0, 200.0) == pytest.approx(cv["c"], abs=0.5e-5)
    assert roll_period_is_code(32.2, 11.0, 200.0, 1.5) == pytest.approx(cv["t_roll_s"], abs=0.005)


def test_gm_from_roll_period_inverts_the_is_code_formula():
    # IS_CODE_ROLL_PERIOD: the check ship's 18.63 s period means GM = 1.5 m (T given to 2 decimals)
    assert gm_from_roll_period(32.2, 11.0, 200.0, 18.63) == pytest.approx(1.5, rel=1e-3)
    # analytical: exact inverse
    for gm in (0.4, 1.5, 6.0):
        t = roll_period_is_code(40.0, 13.0, 280.0, gm)
        assert gm_from_roll_period(40.0, 13.0, 280.0, t) == pytest.approx(gm, rel=1e-12)


def test_roll_period_rejects_non_positive_gm():
    with pytest.raises(ValueError, match=r"gm must be a positive finite number \[m\], got -0.2"):
        roll_period_is_code(32.2, 11.0, 200.0, -0.2)
    with pytest.raises(ValueError, match=r"t_roll must be a positive finite number \[s\], got 0"):
        gm_from_roll_period(32.2, 11.0, 200.0, 0)


def test_effective_wave_slope_coefficient_is_code_formula():
    # IMO IS Code 2008 Part A 2.3.4: r = 0.73 + 0.6 OG/d, OG = KG - d (hand-computed values)
    assert effective_wave_slope_coefficient(11.0, 11.0) == pytest.approx(0.73)
    assert effective_wave_slope_coefficient(14.3, 11.0) == pytest.approx(0.73 + 0.6 * 3.3 / 11.0)
    assert effective_wave_slope_coefficient(5.5, 11.0) == pytest.approx(0.43)
    with pytest.raises(ValueError, match=r"kg must be a positive finite number \[m\], got -2"):
        effective_wave_slope_coefficient(-2, 4.0)


def test_roll_damping_coefficient_gives_the_damping_ratio_back():
    # Analytical (linear oscillator, Lewis 1989 PNA III ch. 8): zeta = B44 / (2 sqrt((I44 + A44) C44)) with
    # I44 + A44 = C44 (T/2 pi)^2 and C44 = rho g V GM.
    zeta, t, gm, vol = 0.07, 16.0, 1.2, 4.0e4
    b44 = roll_damping_coefficient(zeta, t, gm, vol)
    c44 = RHO_SEAWATER * G * vol * gm
    inertia = c44 * (t / (2 * np.pi)) ** 2
    assert b44 / (2 * np.sqrt(inertia * c44)) == pytest.approx(zeta, rel=1e-12)
    with pytest.raises(ValueError, match=r"zeta must be a positive finite number \[-\], got 0"):
        roll_damping_coefficient(0, t, gm, vol)


# ---------------------------------------------------------------------------------------- roll RAO

T_CHECK = ROLL_RAO_1DOF.value["t_roll_s"]  # roll period of the check ship (ROLL_RAO_1DOF.source)
W_PHI = 2 * np.pi / T_CHECK


@pytest.mark.parametrize(
    ("zeta", "lam", "expected"),
    ROLL_RAO_1DOF.value["beam_seas"],  # derived, not published: ROLL_RAO_1DOF.source
)
def test_roll_rao_check_values_beam_seas(zeta, lam, expected):
    # phi_a / (k zeta_a) for r = 0.75, beam seas, zero speed (omega_e = omega)
    omega = lam * W_PHI
    phi = roll_rao_1dof(omega, np.pi / 2, 0.0, T_CHECK, zeta, 0.75)
    digits = {7.50: 0.005, 3.75: 0.005, 0.998: 0.0005, 0.2494: 0.00005}[expected]
    assert abs(phi) / (omega**2 / G) == pytest.approx(expected, abs=digits)


def test_roll_rao_at_resonance_in_degrees_per_metre():
    # derived, not published (ROLL_RAO_1DOF.source): at resonance k = 0.011595 rad/m, 4.98 deg per m
    cv = ROLL_RAO_1DOF.value
    phi = roll_rao_1dof(W_PHI, np.pi / 2, 0.0, T_CHECK, 0.05, 0.75)
    assert W_PHI**2 / G == pytest.approx(cv["k_resonance"], abs=0.5e-6)
    assert np.degrees(abs(phi)) == pytest.approx(cv["deg_per_m_resonance"], abs=0.005)


@pytest.mark.parametrize(("beta_deg", "sign"), [(90.0, -1.0), (270.0, 1.0), (60.0, -1.0), (300.0, 1.0)])
def test_roll_sign_follows_the_transverse_wave_slope(beta_deg, sign):
    # Analytical + docs/conventions.md (roll + starboard side down; y to port; beta = 90 deg
    # waves from starboard): in long waves the ship heels with the surface, roll = r d zeta/dy at
    # the origin. Waves from starboard give -i k r sin(beta) (starboard down a quarter period after
    # the crest passes midship); from port the sign flips.
    omega, r = 0.03, 0.9
    beta = np.radians(beta_deg)
    phi = roll_rao_1dof(omega, beta, 0.0, 20.0, 1e-4, r)  # nearly undamped: quasi-static phase
    dy = 1e-3
    slope_y = (_elevation(0.0, dy, omega, beta) - _elevation(0.0, -dy, omega, beta)) / (2 * dy)
    assert phi == pytest.approx(r * slope_y / (1 - (omega * 20.0 / (2 * np.pi)) ** 2), rel=1e-3)
    assert np.sign(phi.imag) == sign


def test_roll_rao_has_no_roll_in_head_or_following_seas():
    # Analytical: no transverse slope when the waves travel along the ship (sin(beta) = 0).
    phi = roll_rao_1dof(np.array([0.3, 0.5]), np.array([[0.0], [np.pi]]), 5.0, 15.0, 0.05)
    np.testing.assert_allclose(phi, 0.0, atol=1e-15)


@pytest.mark.parametrize(
    ("omega", "speed", "beta_deg"), [(0.45, 0.0, 90.0), (1.5, 9.0, 20.0), (1.6, 10.0, 45.0)]
)
def test_roll_rao_matches_a_time_domain_solution_including_negative_encounter_frequency(
    omega, speed, beta_deg
):
    # scipy.integrate.solve_ivp: phi'' + 2 zeta w_phi phi' + w_phi^2 phi = w_phi^2 r s(t) with the
    # wave slope at the origin s(t) = Re[-i k sin(beta) exp(i omega_e t)] = k sin(beta) sin(omega_e t)
    # (signed omega_e; the last two cases have omega_e < 0, the ship overtaking the waves).
    # The steady state must equal Re[H exp(i omega_e t)] (docs/conventions.md).
    beta = np.radians(beta_deg)
    t_roll, zeta, r = 14.0, 0.08, 0.85
    w_phi = 2 * np.pi / t_roll
    k = omega**2 / G
    omega_e = omega - k * speed * np.cos(beta)
    if speed > 0:
        assert omega_e < 0
    h = roll_rao_1dof(omega, beta, speed, t_roll, zeta, r)

    def rhs(t, y):
        forcing = w_phi**2 * r * k * np.sin(beta) * np.sin(omega_e * t)
        return [y[1], forcing - 2 * zeta * w_phi * y[1] - w_phi**2 * y[0]]

    t_end = 40 * t_roll
    t_eval = np.linspace(t_end - 3 * t_roll, t_end, 400)
    sol = solve_ivp(rhs, (0, t_end), [0.0, 0.0], t_eval=t_eval, rtol=1e-9, atol=1e-12)
    expected = np.real(h * np.exp(1j * omega_e * sol.t))
    np.testing.assert_allclose(sol.y[0], expected, atol=2e-4 * np.max(np.abs(expected)))


def test_roll_rao_rejects_bad_damping():
    with pytest.raises(ValueError, match=r"zeta must be a positive finite number \[-\], got 0.0"):
        roll_rao_1dof(0.5, np.pi / 2, 0.0, 15.0, 0.0)
    with pytest.raises(ValueError, match=r"r must be a positive finite number \[-\], got -1"):
        roll_rao_1dof(0.5, np.pi / 2, 0.0, 15.0, 0.05, -1)


# ---------------------------------------------------------------------------------------- surge, sway, yaw


@pytest.mark.parametrize("beta_deg", [0.0, 45.0, 90.0, 135.0, 180.0, 250.0])
def test_horizontal_motions_long_wave_limit_is_the_orbital_displacement(beta_deg):
    # Airy deep-water theory (analytical): for zeta = Re[exp(i(omega t - k.x))] the surface water
    # moves horizontally by Re[-i exp(i(omega t - k.x))] along the travel direction
    # (cos beta, sin beta); the yaw of a body following it is d(sway)/dx = -k sin(beta) cos(beta).
    beta = np.radians(beta_deg)
    omega = 0.02
    s1, s2, s6 = horizontal_motions_froude_krylov(omega, beta, **SHIP)
    assert s1 == pytest.approx(-1j * np.cos(beta), abs=1e-3)
    assert s2 == pytest.approx(-1j * np.sin(beta), abs=1e-3)
    k = omega**2 / G
    assert s6 == pytest.approx(-k * np.sin(beta) * np.cos(beta), abs=1e-3 * k)


def test_horizontal_motions_vanish_in_short_waves_and_are_mirror_odd():
    # Analytical: the volume average of exp(-i k.x) over a long box tends to 0 as k L grows
    # (|sinc| <= 1/u); port/starboard symmetry: sway and yaw change sign with beta -> 2 pi - beta,
    # surge does not (Faltinsen 1990 ch. 2, estimator.rao.MIRROR_SIGNS).
    s1, s2, s6 = horizontal_motions_froude_krylov(2.0, np.radians(40.0), **SHIP)
    assert abs(s1) < 0.02 and abs(s2) < 0.02
    a = horizontal_motions_froude_krylov(0.6, np.radians(70.0), **SHIP)
    b = horizontal_motions_froude_krylov(0.6, np.radians(290.0), **SHIP)
    assert b[0] == pytest.approx(a[0], rel=1e-12)
    assert b[1] == pytest.approx(-a[1], rel=1e-12)
    assert b[2] == pytest.approx(-a[2], rel=1e-12)


# ---------------------------------------------------------------------------------------- whole table


def _table(**kw):
    args = dict(
        gm=1.5,
        speeds=np.array([0.0, 5.0, 10.0]),
        headings=np.radians(np.arange(0.0, 181.0, 15.0)),
        omegas=np.linspace(0.2, 2.0, 19),
        **SHIP,
    )
    args.update(kw)
    return estimate_rao_table(**args)


def test_estimate_rao_table_assembles_the_component_models():
    # The table must hold exactly the component functions at its nodes (same module, assembled in
    # DOFS order) and be completed to the full circle by port/starboard symmetry (Faltinsen 1990).
    t = _table(kg=13.0, name="deep")
    assert isinstance(t, RAOTable)
    assert t.shape == (3, 24, 19)
    assert t.is_symmetric()
    assert t.name == "deep"
    s, b, w = 5.0, np.radians(135.0), t.omegas
    ib = int(np.argmin(np.abs(t.headings - b)))
    h, p = jmo_heave_pitch(w, b, s, **SHIP)
    r = effective_wave_slope_coefficient(13.0, SHIP["draft"])
    t_roll = roll_period_is_code(SHIP["beam"], SHIP["draft"], SHIP["lpp"], 1.5)
    roll = roll_rao_1dof(w, b, s, t_roll, DEFAULT_ZETA_ROLL, r)
    s1, s2, s6 = horizontal_motions_froude_krylov(w, b, **SHIP)
    for name, expected in zip(DOFS, (s1, s2, h, roll, p, s6), strict=True):
        np.testing.assert_allclose(t.values[DOFS.index(name), 1, ib], expected, rtol=1e-12, atol=1e-15)
    assert "T_roll=18.63 s" in t.source and "r=0.8391" in t.source


def test_estimate_rao_table_given_roll_period_and_full_circle_headings():
    # A full-circle heading list gives the same table as the mirrored half circle (the model is
    # port/starboard symmetric by construction); a given roll period overrides the IS Code one.
    half = _table(t_roll=12.0, zeta_roll=0.08)
    full = _table(t_roll=12.0, zeta_roll=0.08, headings=np.radians(np.arange(0.0, 360.0, 15.0)))
    np.testing.assert_allclose(full.headings, half.headings, atol=1e-12)
    np.testing.assert_allclose(full.values, half.values, rtol=1e-9, atol=1e-12)
    roll = full.values[3, 0, 6]  # beta = 90 deg, zero speed
    np.testing.assert_allclose(roll, roll_rao_1dof(full.omegas, np.pi / 2, 0.0, 12.0, 0.08, 1.0), rtol=1e-12)
    # beam seas at resonance: the larger of the two damping ratios gives the smaller peak
    assert np.max(np.abs(roll)) > np.max(np.abs(_table(t_roll=12.0, zeta_roll=0.2).values[3, 0, 6]))


def test_estimate_rao_table_rejects_bad_axes():
    with pytest.raises(ValueError, match="omegas must be a strictly ascending 1-D array"):
        _table(omegas=np.array([0.5, 0.4, 0.6]))
    with pytest.raises(ValueError, match=r"speeds must be >= 0 \[m/s\], got minimum -1.0"):
        _table(speeds=np.array([-1.0, 2.0]))
    with pytest.raises(ValueError, match=r"gm must be a positive finite number \[m\], got 0"):
        _table(gm=0)
