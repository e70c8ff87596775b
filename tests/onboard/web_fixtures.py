"""TEST FIXTURE: a realistic, internally consistent bridge state for the web tests. Not product data.

Nothing here is a prediction of the product: the utilisation grid comes from a deliberately simple
formula written below, so the page has something plausible to draw (roll trouble in stern-quartering
seas, bow accelerations in head seas at speed, Circ.1228 zones where they belong) and the tests can
check the page against the API. The vessel, condition and times are invented.

The fixture formula (per wave system j, then combined as a root-sum-square because responses to
independent systems add in variance):

* relative wave heading (ITTC, docs/conventions.md): β = (180° − (θ_j − ψ)) mod 360°
* encounter frequency (deep water, docs/conventions.md): ω_e = ω_p − ω_p²·U·cos β / g, ω_p = 2π/Tp_j
* roll, significant amplitude [deg]: φ_j = C_ROLL·Hs_j·|sin β|·A(|ω_e|/ω_R), with the single-degree-of-
  freedom magnification A(r) = 1/√((1 − r²)² + (2ζr)²), ζ = 0.15, ω_R = 2π/T_R
* bow vertical acceleration, significant [m/s²]: a_j = C_ACC·Hs_j·ω_e²·(0.3 + 0.7·(1 − cos β)/2)
* nominal utilisation = max(φ/ROLL_LIMIT_DEG, a/ACC_LIMIT_MS2); conservative = nominal·(1 + 0.6·(1 − c)),
  c the confidence.

Zones follow the IMO MSC.1/Circ.1228 screening relations as recorded in
the Circ.1228 formulas of tests/check_values.py, CIRC1228_* (α = 180° − β, V in kn, L in m, TW = Tp of the
total sea):
TE = 3·TW²/(3·TW + V·cos α); surf-riding if 135° < α < 225° and V > 1.8·√L / cos(180° − α);
successive high waves if λ = 1.56·TW² > 0.8·L, Hs > 0.04·L and 1.8 ≤ TE/TW ≤ 3.0; synchronous roll if
|TE/T_R − 1| ≤ 0.1; parametric roll if |TE/(T_R/2) − 1| ≤ 0.1 and 0.8 ≤ λ/L ≤ 2.0 (the ±10 % bands and the
λ/L band are project screening choices, not Circ.1228 numbers).
"""

from __future__ import annotations

import math
from datetime import UTC, datetime, timedelta

import numpy as np

from onboard.live.web import ADVISORY_NOTICE, InMemoryStateProvider, format_utc

G = 9.80665  # [m/s²] standard gravity (ISO 80000-3)
KNOT = 1852.0 / 3600.0  # [m/s] per knot (definition)

NOW = datetime(2026, 12, 1, 3, 0, 0, tzinfo=UTC)  # 3 a.m. UTC, the fixture's present time
LPP_M = 120.0
ROLL_PERIOD_S = 14.4
C_ROLL = 1.2  # [deg/m] fixture coefficient
C_ACC = 0.6  # [s²·m/s² per m·(rad/s)²] fixture coefficient
DAMPING = 0.15
ROLL_LIMIT_DEG = 12.0
ACC_LIMIT_MS2 = 2.7
MARGIN = 0.9
HEADINGS_DEG = np.arange(0.0, 360.0, 5.0)  # 72 sectors
SPEEDS_KN = np.arange(0.0, 23.0, 1.0)  # 23 rings, 0..22 kn
OWN_HEADING_DEG = 255.0
OWN_STW_KN = 14.2
INTENDED_COURSE_DEG = 262.0

SYSTEMS = (
    {"label": "wind sea", "hs_m": 4.1, "tp_s": 9.0, "wave_from_deg": 35.0, "spread_deg": 30.0},
    {"label": "swell", "hs_m": 3.2, "tp_s": 13.0, "wave_from_deg": 75.0, "spread_deg": 20.0},
)
TOTAL = {"hs_m": 5.2, "tp_s": 11.3, "tm01_s": 9.1, "wave_from_deg": 50.0, "spread_deg": 28.0}
CRITERIA = [
    {
        "key": "roll_sig",
        "label": "Roll (significant amplitude)",
        "point": "ship",
        "limit": ROLL_LIMIT_DEG,
        "unit": "deg",
    },
    {
        "key": "acc_z_bow",
        "label": "Vertical acceleration at the bow (significant)",
        "point": "bow",
        "limit": ACC_LIMIT_MS2,
        "unit": "m/s2",
    },
]


def _responses(heading_deg, speed_kn, hs_scale=1.0):
    """Fixture roll [deg] and bow acceleration [m/s²] for arrays of heading [deg] and speed [kn]."""
    psi = np.asarray(heading_deg, dtype=float)
    speed = np.asarray(speed_kn, dtype=float) * KNOT
    omega_r = 2 * math.pi / ROLL_PERIOD_S
    roll_var = np.zeros(np.broadcast(psi, speed).shape)
    acc_var = np.zeros_like(roll_var)
    for system in SYSTEMS:
        beta = np.radians((180.0 - (system["wave_from_deg"] - psi)) % 360.0)
        omega_p = 2 * math.pi / system["tp_s"]
        omega_e = omega_p - omega_p**2 * speed * np.cos(beta) / G
        r = np.abs(omega_e) / omega_r
        magnification = 1.0 / np.sqrt((1 - r**2) ** 2 + (2 * DAMPING * r) ** 2)
        hs = system["hs_m"] * hs_scale
        roll = C_ROLL * hs * np.abs(np.sin(beta)) * magnification
        acc = C_ACC * hs * omega_e**2 * (0.3 + 0.7 * (1 - np.cos(beta)) / 2)
        roll_var = roll_var + roll**2
        acc_var = acc_var + acc**2
    return np.sqrt(roll_var), np.sqrt(acc_var)


def utilisation_grids(confidence, hs_scale=1.0):
    """(conservative, nominal, limiting) grids of shape (72, 23) by the fixture formula."""
    psi, speed = np.meshgrid(HEADINGS_DEG, SPEEDS_KN, indexing="ij")
    roll, acc = _responses(psi, speed, hs_scale)
    ratios = np.stack([roll / ROLL_LIMIT_DEG, acc / ACC_LIMIT_MS2])
    nominal = ratios.max(axis=0)
    limiting = ratios.argmax(axis=0)
    conservative = nominal * (1 + 0.6 * (1 - confidence))
    return conservative, nominal, limiting


def zone_grids():
    """The four Circ.1228 zones on the grid (see the module docstring for the relations)."""
    psi, v = np.meshgrid(HEADINGS_DEG, SPEEDS_KN, indexing="ij")
    tw = TOTAL["tp_s"]
    beta = (180.0 - (TOTAL["wave_from_deg"] - psi)) % 360.0
    alpha = (180.0 - beta) % 360.0  # Circ.1228 angle of encounter, 0 = head seas
    cos_a = np.cos(np.radians(alpha))
    denominator = 3 * tw + v * cos_a
    with np.errstate(divide="ignore"):
        te = np.where(np.abs(denominator) > 1e-9, 3 * tw**2 / np.abs(denominator), np.inf)
    wavelength = 1.56 * tw**2
    following = (alpha > 135.0) & (alpha < 225.0)
    along = v * np.cos(np.radians(180.0 - alpha))  # speed component along the wave direction [kn]
    with np.errstate(divide="ignore", invalid="ignore"):
        surf_threshold = 1.8 * math.sqrt(LPP_M) / np.cos(np.radians(180.0 - alpha))
    surf = following & (v > surf_threshold)
    applies = wavelength > 0.8 * LPP_M and TOTAL["hs_m"] > 0.04 * LPP_M
    successive = applies & (te / tw >= 1.8) & (te / tw <= 3.0) & (along > 0)
    synchronous = np.abs(te / ROLL_PERIOD_S - 1) <= 0.1
    parametric = (np.abs(te / (ROLL_PERIOD_S / 2) - 1) <= 0.1) & (0.8 <= wavelength / LPP_M <= 2.0)
    return {
        "surf_riding": surf,
        "successive_waves": successive,
        "synchronous_roll": synchronous,
        "parametric_roll": parametric,
    }


def _cell(heading_deg, stw_kn):
    i = int(round((heading_deg % 360.0) / 5.0)) % len(HEADINGS_DEG)
    j = int(np.clip(round(stw_kn), 0, len(SPEEDS_KN) - 1))
    return i, j


def advise(utilisation, heading_deg, stw_kn):
    """Fixture advice: the cheapest cell within the margin, cost = |Δheading|/10° + |Δspeed|/2 kn."""
    i0, j0 = _cell(heading_deg, stw_kn)
    now = float(utilisation[i0, j0])
    if now <= MARGIN:
        return "keep", i0, j0
    psi, v = np.meshgrid(HEADINGS_DEG, SPEEDS_KN, indexing="ij")
    turn = np.abs((psi - heading_deg + 180.0) % 360.0 - 180.0)
    cost = np.where(utilisation <= MARGIN, turn / 10.0 + np.abs(v - stw_kn) / 2.0, np.inf)
    if not np.isfinite(cost).any():
        return "none_acceptable", i0, j0
    i, j = np.unravel_index(np.argmin(cost), cost.shape)
    return "change", int(i), int(j)


def build_state(now=NOW, *, scenario="normal"):
    """The fixture bridge state.

    scenario: ``"normal"`` (fresh data, advice to change), ``"stale"`` (sea-state window 50 min old,
    own-ship data 2 min old) or ``"no_advice"`` (motion sensors silent: no sea state, no polar, no advice).
    """
    if scenario not in ("normal", "stale", "no_advice"):
        raise ValueError(f"scenario: expected 'normal', 'stale' or 'no_advice', got {scenario!r}")
    confidence = 0.82
    conservative, nominal, limiting = utilisation_grids(confidence)
    zones = zone_grids()
    status, i, j = advise(conservative, OWN_HEADING_DEG, OWN_STW_KN)
    i0, j0 = _cell(OWN_HEADING_DEG, OWN_STW_KN)
    u_now, u_adv = float(conservative[i0, j0]), float(conservative[i, j])
    binding = CRITERIA[int(limiting[i0, j0])]["label"]
    adv_h, adv_v = float(HEADINGS_DEG[i]), float(SPEEDS_KN[j])
    if status == "change":
        turn = "Alter to" if adv_h != OWN_HEADING_DEG else "Keep"
        if abs(adv_v - OWN_STW_KN) < 0.5:
            speed_part = f"keep about {adv_v:.0f} kn"
        else:
            speed_part = f"{'reduce' if adv_v < OWN_STW_KN else 'increase'} to {adv_v:.1f} kn"
        sentence = (
            f"{turn} {adv_h:03.0f}° and {speed_part}: {binding.lower()} binds ({u_now:.2f} -> {u_adv:.2f})."
        )
    else:
        sentence = f"Keep {OWN_HEADING_DEG:03.0f}° and {OWN_STW_KN:.1f} kn: inside the margin ({u_now:.2f})."
    ship_age = {"normal": 1.0, "stale": 120.0, "no_advice": 1.0}[scenario]
    sea_age = {"normal": 240.0, "stale": 3000.0, "no_advice": 240.0}[scenario]
    state = {
        "generated_utc": format_utc(now),
        "advisory_notice": ADVISORY_NOTICE,
        "vessel": {"name": "Fixture Vessel (test data)"},
        "condition": {
            "name": "Fixture: full load, deck cargo",
            "draft_m": 7.5,
            "gm_m": 1.1,
            "roll_period_s": ROLL_PERIOD_S,
        },
        "ship": {
            "time_utc": format_utc(now - timedelta(seconds=ship_age)),
            "age_s": ship_age,
            "stale": False,
            "heading_deg": OWN_HEADING_DEG,
            "stw_kn": OWN_STW_KN,
            "intended_course_deg": INTENDED_COURSE_DEG,
        },
        "sea_state": {
            "window_end_utc": format_utc(now - timedelta(seconds=sea_age)),
            "age_s": sea_age,
            "stale": False,
            **TOTAL,
            "confidence": confidence,
            "confidence_level": "high",
            "confidence_reasons": [
                "stationary window",
                "three motion channels agree with the fitted spectrum",
            ],
            "systems": [dict(s) for s in SYSTEMS],
            # invented demo values: the measured roll 10 % shorter than the condition's, so the implied GM
            # (GM ∝ T⁻², IMO IS Code 2008 roll-period formula) is 1/0.81 of 1.1 m, beyond the 20 % warning
            "roll": {
                "period_measured_s": round(0.9 * ROLL_PERIOD_S, 1),
                "period_condition_s": ROLL_PERIOD_S,
                "damping": 0.06,
                "implied_gm_m": round(1.1 / 0.81, 2),
                "gm_warning": True,
            },
        },
        "polar": {
            "headings_deg": HEADINGS_DEG.tolist(),
            "speeds_kn": SPEEDS_KN.tolist(),
            "utilisation": np.round(conservative, 3).tolist(),
            "utilisation_nominal": np.round(nominal, 3).tolist(),
            "limiting": limiting.astype(int).tolist(),
            "criteria": [dict(c) for c in CRITERIA],
            "zones": {k: v.tolist() for k, v in zones.items()},
            "margin": MARGIN,
        },
        "advice": {
            "status": status,
            "sentence": sentence,
            "advised_heading_deg": adv_h,
            "advised_stw_kn": adv_v,
            "utilisation_now": round(u_now, 3),
            "utilisation_advised": round(u_adv, 3),
            "binding_limit": binding,
            "reason": None,
        },
        "sensors": [
            {"channel": ch, "status": "ok", "last_utc": format_utc(now - timedelta(seconds=1)), "detail": ""}
            for ch in ("roll_deg", "pitch_deg", "heave_m", "acc_z_ms2", "heading_deg", "stw_kn")
        ]
        + [
            {
                "channel": "acc_x_ms2",
                "status": "missing",
                "last_utc": None,
                "detail": "not fitted on this vessel",
            }
        ],
        "alerts": [],
        "status": {"advice_available": True, "reason": None},
    }
    if scenario == "no_advice":
        reason = "sensors silent: roll_deg, pitch_deg since 02:41Z"
        state["sea_state"] = None
        state["polar"] = None
        state["advice"] = {
            "status": "unavailable",
            "sentence": f"No advice: {reason}.",
            "advised_heading_deg": None,
            "advised_stw_kn": None,
            "utilisation_now": None,
            "utilisation_advised": None,
            "binding_limit": None,
            "reason": reason,
        }
        state["status"] = {"advice_available": False, "reason": reason}
        for sensor in state["sensors"]:
            if sensor["channel"] in ("roll_deg", "pitch_deg"):
                sensor.update(
                    status="silent", last_utc="2026-12-01T02:41:00Z", detail="no samples for 19 min"
                )
    return state


def fill_history(provider, now=NOW, hours=6.0, step_min=10):
    """Trend samples: Hs rising linearly to the present 5.2 m, own heading and speed constant,
    utilisation at own heading/speed by the fixture formula (which is linear in Hs)."""
    n = int(hours * 60 / step_min)
    for k in range(n + 1):
        frac = k / n
        scale = 0.6 + 0.4 * frac  # Hs from 60 % to 100 % of the present
        confidence = 0.70 + 0.12 * frac
        conservative, _, _ = utilisation_grids(confidence, hs_scale=scale)
        i0, j0 = _cell(OWN_HEADING_DEG, OWN_STW_KN)
        provider.append_history(
            now - timedelta(minutes=step_min * (n - k)),
            hs_m=round(TOTAL["hs_m"] * scale, 2),
            utilisation=round(float(conservative[i0, j0]), 3),
            heading_deg=OWN_HEADING_DEG,
            stw_kn=OWN_STW_KN,
            confidence=round(confidence, 3),
        )


def make_provider(now=NOW, *, scenario="normal", clock=None, **provider_options):
    """An InMemoryStateProvider fed with the fixture state, history and two open alerts."""
    provider = InMemoryStateProvider(clock=clock or (lambda: now), **provider_options)
    state = build_state(now, scenario=scenario)
    provider.set_state(state)
    fill_history(provider, now)
    if state["advice"]["utilisation_now"] is not None and state["advice"]["utilisation_now"] > MARGIN:
        provider.raise_alert(
            level="warning",
            kind="utilisation",
            raised_utc=now - timedelta(minutes=6),
            text=(
                f"Utilisation at the present heading and speed is {state['advice']['utilisation_now']:.2f}, "
                f"above the {MARGIN:.2f} margin; {state['advice']['binding_limit'].lower()} binds."
            ),
        )
    provider.raise_alert(
        level="caution",
        kind="sensors",
        raised_utc=now - timedelta(minutes=42),
        text="acc_x_ms2 missing: longitudinal acceleration is not measured.",
    )
    return provider
