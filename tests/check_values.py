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
