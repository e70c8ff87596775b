"""Check values of the tests, in one place, each with where it comes from.

Every entry says what kind of number it is:

* ``derived``: computed from the published formula named in ``source`` (with numpy), not a published
  number: the check tests the implementation against the formula, not the formula against the world;
* ``published``: a number printed in the named source;
* ``from memory``: recalled, not checked against the source text;
* ``common practice``: a fact of the trade with no single source.

Tests import the values from here and cite ``source`` beside the check. Files not yet moved here keep
their sources in comments beside each check.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

KN = 1852.0 / 3600.0  # knot [m/s], by definition
G = 9.81  # [m/s²], the value the derivations use


@dataclass(frozen=True)
class Check:
    """A check value: ``value`` (number, tuple or table), ``source`` and ``kind`` (module docstring)."""

    value: object
    source: str
    kind: str

    def __post_init__(self) -> None:
        assert self.kind in ("derived", "published", "from memory", "common practice"), self.kind
        assert self.source.strip(), "every check value names its source"


# --------------------------------------------------------------------- MSC.1/Circ.1228 (advisor.zones)
# Formulas of IMO MSC.1/Circ.1228 (2007), "Revised guidance to the master for avoiding dangerous situations
# in adverse weather and sea conditions", quoted from memory; numbers derived from them. L = λ = 200 m.

CIRC1228_TW_200 = Check(
    0.8 * math.sqrt(200.0),
    "derived from MSC.1/Circ.1228 (2007) §1.5, TW = 0.8·√λ (λ = 200 m → 11.314 s), formula from memory",
    "derived",
)
CIRC1228_TE_TABLE = Check(
    ((0.0, 7.846), (45.0, 8.620), (90.0, 11.314), (135.0, 16.456), (180.0, 20.273)),
    "derived from MSC.1/Circ.1228 (2007) Fig. 1, TE = 3·TW²/(3·TW + V·cos α), TW = 11.314 s, V = 15 kn "
    "(formula from memory); (α [deg], TE [s]), not a published number",
    "derived",
)
CIRC1228_SURF_RIDING_KN = Check(
    ((180.0, 25.456), (165.0, 26.354), (150.0, 29.394), (135.0001, 36.000)),
    "derived from MSC.1/Circ.1228 (2007) §4.2.1, V = 1.8·√L / cos(180° − α) kn, L = 200 m (formula from "
    "memory); (α [deg], V [kn]), not a published number",
    "derived",
)
CIRC1228_SUCCESSIVE_BAND_KN = Check(
    {11.314: (15.08, 22.63), 12.0: (16.0, 24.0)},
    "derived from MSC.1/Circ.1228 (2007) §4.2.2.2, TE/TW in [1.8, 3.0] with Fig. 1's TE: "
    "V·cos(180° − α) in [1.333·TW, 2·TW] kn (formula from memory); TW [s] → band [kn]",
    "derived",
)
CIRC1228_ROLL_RESONANCE_KN = Check(
    {"following_te_equals_tr": 14.74, "head_te_equals_half_tr": 4.46},
    "derived from MSC.1/Circ.1228 (2007) §4.2.3 with Fig. 1's TE, TW = 11.314 s, TR = 20 s: following seas "
    "TE = TR, head seas TE = TR/2 (formula from memory); speeds [kn], not published numbers",
    "derived",
)

# ------------------------------------------------------------- criteria statistics (advisor.criteria)

OCHI_SLAMMING_WETNESS = Check(
    {
        "sigma_r_m": 2.5,
        "sigma_rdot_ms": 2.0,
        "keel_depth_m": 8.0,
        "freeboard_m": 10.0,
        "lpp_m": 200.0,
        "threshold_velocity_ms": 4.119,
        "p_slam": 7.165e-4,
        "slams_per_hour": 0.328,
        "p_wet": 3.355e-4,
        "wet_per_hour": 0.154,
    },
    "derived from Ochi, M. K. (1964), 'Prediction of occurrence and severity of ship slamming at sea': "
    "P = exp(−T²/2σ_r² − v_th²/2σ_ṙ²), v_th = 0.093·√(gL); wetness P = exp(−f²/2σ_r²); rates = P × "
    "upcrossing frequency σ_ṙ/(2πσ_r) (formulas from memory); not published numbers",
    "derived",
)
RAYLEIGH_MPM_3H = Check(
    {"sigma": 1.25, "tz_s": 7.7845, "hours": 3.0, "mpm": 4.755},
    "derived from Longuet-Higgins (1952), 'On the statistical distribution of the heights of sea waves': "
    "most probable largest of N Rayleigh maxima σ·√(2 ln N), N = 3 h / Tz; not a published number",
    "derived",
)
ISO2631_MSDV_2H = Check(
    {"a_w_rms_ms2": 0.5, "hours": 2.0, "msdv": 42.43},
    "derived from ISO 2631-1:1997 Annex D, MSDV = a_w,rms·√T (0.5 m/s², 7200 s); not a published number",
    "derived",
)
NORDFORSK_200M = Check(
    {"vertical_acceleration_fp_rms_g": 0.1772, "vertical_acceleration_fp_rms_ms2": 1.738, "p_slam": 0.020},
    "NORDFORSK (1987), 'Assessment of ship performance in a seaway', merchant ships (as reproduced in "
    "Faltinsen 1990, Table 1.1; from memory): 0.275 g at L ≤ 100 m, 0.05 g at L ≥ 330 m, slamming 0.03 "
    "at L ≤ 100 m, 0.01 at L ≥ 300 m; the L = 200 m values are linear interpolation, derived",
    "from memory",
)

# ------------------------------------------------------------------- encounter (estimator.encounter)
# ω_e = ω − ω²·U·cos β / g (Lewis (ed.) 1989, Principles of Naval Architecture Vol. III, ch. 8) and the
# energy balance S_e dω_e = S dω; U = 15 kn = 15·1852/3600 m/s, g = 9.81 m/s².

ENCOUNTER_TABLE_T10_15KN = Check(
    (
        (180, 0.93886, 6.692),
        (135, 0.84790, 7.410),
        (90, 0.62832, 10.0),
        (45, 0.40873, 15.372),
        (0, 0.31778, 19.772),
    ),
    "derived from ω_e = ω − ω²U cos β/g (Lewis 1989, PNA Vol. III), ω = 2π/10 rad/s, U = 15 kn; "
    "(β [deg], ω_e [rad/s], T_e [s]), not published numbers",
    "derived",
)
ENCOUNTER_CRITICAL_10MS = Check(
    {"omega_e_crit": 0.24525, "omega_crit": 0.4905},
    "derived from dω_e/dω = 0 in ω_e = ω − ω²U/g (following seas, U = 10 m/s): ω = g/(2U), "
    "ω_e = g/(4U); not published numbers",
    "derived",
)
ENCOUNTER_ROOTS_15KN = Check(
    {"abs_omega_e": 0.25, "omega": (0.34201, 0.92926, 1.48526), "omega_e_crit": 0.31782},
    "derived from ω − ω²U/g = ±|ω_e| (following seas, U = 15 kn): the three roots of the two quadratics, "
    "and ω_e,crit = g/(4U); not published numbers",
    "derived",
)
ENCOUNTER_HEAD_SEA_JONSWAP = Check(
    {"jacobian": 1.98849, "omega_e": 0.93886, "s_e": 3.8862, "tz_e_s": 4.025},
    "derived from S_e = S(ω)/|dω_e/dω| with JONSWAP (Hs 5 m, Tp 10 s, γ 3.3; DNV-RP-C205 §3.5.5 form), "
    "head seas at 15 kn, ω = 2π/10; Tz,e by integration over ω ∈ [0.05, 6] rad/s; not published numbers",
    "derived",
)

# -------------------------------------------------------------------------- spectra (estimator.spectra)
# Hs = 5 m, Tp = 10 s; moments integrated with numpy over ω ∈ [0.001, 12] rad/s.

PM_5_10 = Check(
    {"s_peak": 3.5624, "tz_s": 7.116, "t1_s": 7.719},
    "derived from the Pierson-Moskowitz form of DNV-RP-C205 (2010) §3.5.5, S(ωp) = (5/16)Hs² e^-1.25/ωp, "
    "moments by numerical integration; not published numbers",
    "derived",
)
PM_WORKED_EXAMPLE = Check(
    {"hs_m": 12.0, "tp_s": 14.0776, "omega": 0.5, "s": 25.840},
    "worked example of the DNV-RP-C205 Pierson-Moskowitz spectrum: Hs 12 m, Tz 10 s → Tp 14.077 s, "
    "S(0.5 rad/s) = 25.84 m²s (from memory)",
    "from memory",
)
JONSWAP_TABLE = Check(
    (  # gamma, S(ωp), Hm0, Tz, T1
        (1.0, 3.5624, 5.000, 7.116, 7.719),
        (2.0, 5.7074, 4.995, 7.476, 8.064),
        (3.3, 7.7277, 5.006, 7.785, 8.344),
        (5.0, 9.5845, 5.000, 8.063, 8.584),
    ),
    "derived from the JONSWAP form of DNV-RP-C205 (2010) §3.5.5 (A_γ = 1 − 0.287 ln γ, σ 0.07/0.09), "
    "moments by numerical integration; not published numbers",
    "derived",
)
JONSWAP_GAMMA_DNV = Check(
    ((5, 10, 1.835), (5, 9, 3.069), (9, 12, 3.158), (5, 7, 5.0), (4, 12, 1.0)),
    "derived from DNV-RP-C205 (2010) §3.5.5.5, γ from Tp/√Hs; (Hs [m], Tp [s], γ), not published numbers",
    "derived",
)
OCHI_HUBBLE = Check(
    {"args": (3.0, 0.5, 3.0, 4.0, 0.9, 2.0), "hm0": 5.000, "s": (2.9949, 2.3987), "omega": (0.5, 0.9)},
    "derived from Ochi & Hubble (1976), 'Six-parameter wave spectra' (Hs1, ωm1, λ1, Hs2, ωm2, λ2); "
    "not published numbers",
    "derived",
)
COS2S_TABLE = Check(
    (  # s, C(s) = D(0), D(30°), σθ [deg]
        (1, 0.31831, 0.29699, 57.30),
        (2, 0.42441, 0.36946, 46.78),
        (5, 0.64672, 0.45725, 33.08),
        (10, 0.90328, 0.45154, 24.43),
        (15, 1.10169, 0.38938, 20.26),
        (25, 1.41754, 0.25045, 15.89),
    ),
    "derived from Longuet-Higgins, Cartwright & Smith (1963), cos-2s spreading with "
    "C(s) = Γ(s+1)/(2√π Γ(s+½)), and Kuik et al. (1988), σθ = √(2/(s+1)); not published numbers",
    "derived",
)
COSN_TABLE = Check(
    (  # n, C(n), D(30°), σθ [deg]
        (2, 0.63662, 0.47746, 31.50),
        (4, 0.84883, 0.47746, 24.92),
        (6, 1.01859, 0.42972, 21.24),
        (10, 1.29345, 0.30694, 17.07),
    ),
    "derived from the cos^n spreading of DNV-RP-C205 (2010) §3.5.8 and Kuik et al. (1988) for σθ; "
    "not published numbers",
    "derived",
)

# ---------------------------------------------------------------------- responses (estimator.responses)
# A Gaussian narrow-band response with σ = 1.25 m (Hs = 5 m) and Tz = 7.7845 s (JONSWAP γ 3.3, Tp 10 s).

RAYLEIGH_STATS = Check(
    {
        "sigma": 1.25,
        "tz_s": 7.7845,
        "mpm_1h": 4.379,
        "mpm_3h": 4.755,
        "n_1h": 462.5,
        "n_3h": 1387.4,
        "expected_max_3h": 4.945,
        "p90_max_3h": 5.444,
        "p_exceed_3m": 0.05613,
        "upcrossings_3m_per_h": 25.96,
    },
    "derived from Longuet-Higgins (1952), 'On the statistical distribution of the heights of sea waves' "
    "(Rayleigh maxima, MPM σ√(2 ln N)), Cartwright & Longuet-Higgins (1956), 'The statistical distribution "
    "of the maxima of a random function' (expected largest maximum) and Rice's upcrossing rate; not "
    "published numbers",
    "derived",
)
ISO2631_WF_TABLE = Check(
    (
        (0.08, 0.4607),
        (0.1, 0.6951),
        (0.125, 0.8951),
        (0.16, 1.0060),
        (0.2, 0.9920),
        (0.25, 0.8543),
        (0.315, 0.6191),
        (0.4, 0.3843),
        (0.5, 0.2239),
        (0.63, 0.1163),
        (0.8, 0.0530),
    ),
    "derived from the Wf frequency weighting of ISO 2631-1:1997 Annex A (product of its high-pass, "
    "low-pass, acceleration-velocity and upward-step filters); (f [Hz], |Wf|), not published numbers",
    "derived",
)
ISO2631_VOMITING_2H = Check(
    {"a_w_rms_ms2": 0.5, "hours": 2.0, "msdv": 42.43, "percent": 14.14},
    "derived from ISO 2631-1:1997 Annex D: MSDV = a_w,rms·√T, vomiting incidence = Km·MSDV/3 with "
    "Km = 1/3; not published numbers",
    "derived",
)
MSI_TABLE = Check(
    ((0.1, 0.2, 36.97, 30.52), (0.05, 0.16, 17.99, 11.41), (0.2, 0.3, 46.98, 44.45)),
    "derived from the motion sickness incidence fit of O'Hanlon & McCauley (1974), 'Motion sickness "
    "incidence as a function of the frequency and acceleration of vertical sinusoidal motion', and its "
    "form in Lloyd (1989), 'Seakeeping: ship behaviour in rough weather' (ω_e in rad/s); "
    "(a [g], f [Hz], MSI O'Hanlon-McCauley [%], MSI Lloyd [%]), not published numbers",
    "derived",
)

# ---------------------------------------------------------------------------- hull RAOs (estimator.hull)
# Check ship: Lpp 200 m, B 32.2 m, T 11 m, CB 0.65.

_JMO = (
    "Jensen, Mansour & Olsen (2004), 'Estimation of ship motions using closed-form expressions', "
    "heave and pitch amplitudes"
)
JMO_HEAD_15KN = Check(
    (  # ω [rad/s], |heave| [m/m], |pitch| [rad/m], |pitch|/k [-]
        (0.3, 0.9895, 0.009632, 1.050),
        (0.4, 0.8924, 0.018027, 1.105),
        (0.5, 0.3785, 0.021297, 0.836),
        (0.6, 0.0721, 0.003120, 0.085),
        (0.8, 0.0018, 0.000211, 0.003),
    ),
    f"derived from {_JMO}, head seas at 15 kn; not published numbers",
    "derived",
)
JMO_ZERO_SPEED = Check(
    ((0.4, 0.6392, 0.012913), (0.6, 0.1646, 0.007117)),
    f"derived from {_JMO}, head seas at zero speed; (ω, |heave|, |pitch|), not published numbers",
    "derived",
)
JMO_OBLIQUE = Check(
    {"beta_deg": 135.0, "omega": 0.5, "heave": 1.0018, "heave_with_exp_minus_kT": 0.9228},
    f"derived from {_JMO} with the Smith factor exp(−k_e T) (k_e = |k cos β|) at 15 kn; the "
    "exp(−k T) variant gives 0.9228; not published numbers",
    "derived",
)
IS_CODE_ROLL_PERIOD = Check(
    {"beam_m": 32.2, "draft_m": 11.0, "lwl_m": 200.0, "gm_m": 1.5, "c": 0.35433, "t_roll_s": 18.63},
    "derived from the IMO IS Code 2008 (MSC.267(85)) Part A 2.3, T = 2·C·B/√GM, "
    "C = 0.373 + 0.023·B/d − 0.043·Lwl/100; not published numbers",
    "derived",
)
ROLL_RAO_1DOF = Check(
    {
        "t_roll_s": 18.63,
        "r": 0.75,
        "beam_seas": ((0.05, 1.0, 7.50), (0.10, 1.0, 3.75), (0.05, 0.5, 0.998), (0.05, 2.0, 0.2494)),
        "k_resonance": 0.011595,
        "deg_per_m_resonance": 4.98,
    },
    "derived from the one-degree-of-freedom roll equation with wave-slope excitation r·k·ζ "
    "(Lewis (ed.) 1989, PNA Vol. III, ch. 8): φ_a/(k ζ_a) = r/√((1 − λ²)² + (2ζλ)²); "
    "(ζ, λ = ω/ω_φ, φ_a/(k ζ_a)), not published numbers",
    "derived",
)

# ------------------------------------------------------------------------ kinematics (estimator.kinematics)
# Rigid-body transfer to a point with the small-angle formulas s = η + ω × r (Faltinsen 1990 §2.2; Lewis
# (ed.) 1989, PNA Vol. III ch. 8). Motions per metre of wave amplitude at ω_e = 0.6 rad/s:
# surge 0, sway 0.3∠0.5, heave 0.5∠−0.3 (m/m), roll 0.03∠1.0, pitch 0.015∠1.4, yaw 0.005∠−0.2 (rad/m).

POINT_MOTION = Check(
    {
        "point": (90.0, -10.0, 15.0),
        "heave_abs": 1.7327,
        "heave_phase_deg": -87.15,
        "sway_abs": 0.5637,
        "vertical_acc_abs": 0.6238,
        "lateral_acc_abs": 0.2029,
        "lateral_specific_force_abs": 0.3644,
        "lateral_specific_force_phase_deg": 91.10,
    },
    "derived from s = η + ω × r and a_y,tot = −ω_e² s_y + g η4 (Faltinsen 1990 §2.2) at the point "
    "(90, −10, 15) m; not published numbers",
    "derived",
)
BOW_RELATIVE_MOTION = Check(
    {
        "point": (95.0, 0.0),
        "omega": 0.45,
        "zeta_phase_deg": 112.36,
        "heave_abs": 1.5698,
        "relative_abs": 2.5523,
        "relative_velocity_abs": 1.5314,
    },
    "derived from the relative vertical motion r = s_z − ζ at the bow (Lewis (ed.) 1989, PNA Vol. III "
    "ch. 8), head seas, ω = 0.45 rad/s, ω_e = 0.6 rad/s; not published numbers",
    "derived",
)
