"""Plausibility checks of an RAO table: units, long-wave limits, sign and phase conventions, symmetry.

An RAO table imported from another hydrodynamic code can be wrong in ways that load without
complaint and silently corrupt the sea-state estimate: rotations in rad/m where deg/m are expected
(the estimate then inflates Hs by about 57), phases written as lags instead of leads (or the
exp(−iωt) time convention of many radiation-diffraction codes), pitch positive bow up, headings
measured with 0 = head seas, or response per wave height instead of per wave amplitude. This module
finds those slips from physics every correct table obeys, independent of the code that made it.

Checks, in the conventions of docs/conventions.md (ITTC axes x forward, y to port, z up; pitch + bow
down; roll + starboard down; β = π head seas, β = π/2 waves from starboard; phase lead; elevation at
a point exp(−i k (x cos β + y sin β)) relative to the origin):

1. **Bounds per dof** (errors). Translations: ``|H| <= TRANSLATION_MAX`` m/m. Rotations, scaled by
   the wave slope k = ω²/g: ``|H|/k <= ROTATION_SLOPE_MAX[dof]``.
2. **Long-wave limits** at the lowest tabulated frequency, where the wave is at least
   ``LONG_WAVE_LENGTHS`` ship lengths long (the ship then follows the wave surface; Newman 1977
   §6.17; Faltinsen 1990 ch. 2):

   * heave → 1 (in phase with the elevation);
   * pitch → i·k·cos β (the slope of the surface along x; −90° at head seas, +90° following);
   * roll → −i·k·sin β times a factor of order one (effective wave slope, sway coupling, dynamic
     amplification below the roll resonance), so only its sign and order of magnitude are checked;
   * surge → −i·cos β and sway → −i·sin β (the orbital displacement of the water particles), checked
     for sign where the table gives them at all.

   From the pattern of flipped signs the likely cause is named: all of pitch, roll, surge, sway
   flipped = phases given as lags (or exp(−iωt)); pitch and surge flipped = headings with 0 = head
   seas; roll and sway flipped = headings counted the other way round (or y to starboard); pitch
   alone = pitch + bow up; roll alone = roll + port down; heave near 0.5 = per wave height.
3. **Units of rotations**: where the long-wave pitch or roll is about 1/57.3 of the slope, the
   file gave rad/m for deg/m.
4. **Port/starboard symmetry** of full-circle tables: H_j(2π − β) = s_j H_j(β) with
   s = (+1, −1, +1, −1, +1, −1) (Faltinsen 1990 ch. 7). The antisymmetric dofs with the wrong sign
   on the mirrored side is an error; other asymmetry is a warning (a listed ship is legitimately
   asymmetric).

All thresholds are project choices (stated where set), wide enough that the tables of a
boundary-element code (capytaine) and of the closed-form estimates in :mod:`estimator.hull` pass.

References
----------
.. [1] Newman, J. N. (1977). *Marine Hydrodynamics*, §6.17 (long-wave limits: the body follows the
   wave surface; heave → 1, rotations → the wave slope).
.. [2] Faltinsen, O. M. (1990). *Sea Loads on Ships and Offshore Structures*, ch. 2 (linear wave
   kinematics: elevation, slope and orbital displacement) and ch. 7 (port/starboard symmetry).
.. [3] ITTC (2017). *ITTC Symbols and Terminology List*, "Seakeeping" (axes, motion signs, β).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from estimator.constants import DOFS, G
from estimator.rao import MIRROR_SIGNS, RAOTable

__all__ = [
    "RaoFinding",
    "RaoCheckReport",
    "check_rao_table",
    "TRANSLATION_MAX",
    "ROTATION_SLOPE_MAX",
    "LONG_WAVE_LENGTHS",
    "ASSUMED_LENGTH",
]

TRANSLATION_MAX = 5.0
"""Largest plausible surge/sway/heave RAO [m/m]. Project choice: wave radiation damps ship
translations strongly; boundary-element heave peaks are 1.0–1.5 m/m for barge, Wigley and
ellipsoid hulls (capytaine 3.0.0, Ancellet & Dias 2019, measured here)."""

ROTATION_SLOPE_MAX = {"roll": 60.0, "pitch": 10.0, "yaw": 10.0}
"""Largest plausible rotation RAO divided by the wave slope k = ω²/g [-]. Project choices: roll
may be amplified at resonance by 1/(2ζ), 50 for a potential-flow-only ζ of 0.01; pitch and yaw are
heavily damped (boundary-element pitch stays below 1.2 k with capytaine 3.0.0, measured here)."""

LONG_WAVE_LENGTHS = 5.0
"""The long-wave checks use the lowest tabulated frequency only if its wave length 2πg/ω² is at
least this many ship lengths [-] (project choice: at λ = 5 L boundary-element heave of a box is
within 10 % of 1; it is 0.86 at λ = 3.2 L; capytaine 3.0.0, measured here)."""

ASSUMED_LENGTH = 300.0
"""Ship length assumed when none is given [m] (project choice: long enough that the long-wave checks
are applied only where they hold for nearly every merchant ship)."""

HEAVE_TOLERANCE = 0.35
"""Largest |H_heave − 1| in long waves [-] (project choice, see LONG_WAVE_LENGTHS)."""

SLOPE_RATIO = (0.5, 2.0)
"""Allowed |pitch| / (k |cos β|) in long waves [-] (project choice; about 1 per [1])."""

ROLL_RATIO = (0.2, 10.0)
"""Allowed |roll| / (k |sin β|) in long waves [-] (project choice: the effective wave slope factor
is 0.5–1 and dynamic amplification below resonance up to a few)."""

SYMMETRY_RTOL = 0.1
"""Relative difference allowed between H(2π − β) and s·H(β) [-] (project choice)."""

DEG_PER_RAD = 180.0 / np.pi


@dataclass(frozen=True)
class RaoFinding:
    """One failed check at one table point (SI: speed m/s, heading rad, omega rad/s).

    ``value`` and ``expected`` are complex RAOs in the core's units (m/m, rad/m); ``expected`` is
    None where only a bound applies. ``cause`` is the likely reason in plain words.
    """

    severity: str
    """"error" (the table must not be used) or "warning"."""
    check: str
    """"bounds", "long-wave", "units" or "symmetry"."""
    dof: str
    speed: float
    """[m/s]"""
    heading: float
    """Relative wave heading β [rad]."""
    omega: float
    """[rad/s]"""
    value: complex
    expected: complex | None
    problem: str
    cause: str


@dataclass(frozen=True)
class RaoCheckReport:
    """All findings of :func:`check_rao_table` and the checks that could not be applied."""

    findings: tuple[RaoFinding, ...]
    skipped: tuple[str, ...] = field(default_factory=tuple)

    @property
    def errors(self) -> tuple[RaoFinding, ...]:
        return tuple(f for f in self.findings if f.severity == "error")

    @property
    def warnings(self) -> tuple[RaoFinding, ...]:
        return tuple(f for f in self.findings if f.severity == "warning")

    @property
    def ok(self) -> bool:
        return not self.errors


def _wrap(angle):
    return (np.asarray(angle) + np.pi) % (2.0 * np.pi) - np.pi


def check_rao_table(
    table: RAOTable, *, lpp: float | None = None, t_roll: float | None = None
) -> RaoCheckReport:
    """Check an RAO table for unit, sign, phase-convention and symmetry slips.

    Parameters
    ----------
    table : RAOTable
        The table (core units: m/m, rad/m; phase lead; ITTC axes and headings).
    lpp : float, optional
        Ship length [m]; decides whether the lowest tabulated frequency is a long wave
        (default :data:`ASSUMED_LENGTH`).
    t_roll : float, optional
        Natural roll period [s]; the long-wave roll sign is checked only well below the roll
        resonance (ω_min ≤ 0.7·2π/t_roll). Without it, only where |roll| still rises with ω.

    Returns
    -------
    RaoCheckReport
        Findings ordered: bounds, units and long-wave errors first, then symmetry; the first error
        carries the most likely cause for the whole table.

    References
    ----------
    Newman (1977) §6.17; Faltinsen (1990) ch. 2 and 7; ITTC (2017) (module docstring).
    """
    findings: list[RaoFinding] = []
    skipped: list[str] = []
    v = table.values
    speeds, headings, omegas = table.speeds, table.headings, table.omegas
    k = omegas**2 / G

    # 1. bounds per dof ---------------------------------------------------------------------
    for di, dof in enumerate(DOFS):
        amp = np.abs(v[di])
        if dof in ROTATION_SLOPE_MAX:
            ratio = amp / k[None, None, :]
            limit = ROTATION_SLOPE_MAX[dof]
            bad = ratio > limit
            problem = f"amplitude above {limit:g} times the wave slope k = omega^2/g"
            cause = "absurd value (rotations must be per metre of wave amplitude, in deg/m in the file)"
        else:
            bad = amp > TRANSLATION_MAX
            problem = f"amplitude above {TRANSLATION_MAX:g} m/m"
            cause = "absurd value (translations must be in metres per metre of wave amplitude)"
        if np.any(bad):
            s, h, w = (int(i) for i in np.argwhere(bad)[0])
            findings.append(
                RaoFinding(
                    "error",
                    "bounds",
                    dof,
                    speeds[s],
                    headings[h],
                    omegas[w],
                    complex(v[di, s, h, w]),
                    None,
                    problem + f" ({int(bad.sum())} such points)",
                    cause,
                )
            )

    # 2./3. long-wave limits --------------------------------------------------------------
    length = ASSUMED_LENGTH if lpp is None else float(lpp)
    w0 = omegas[0]
    lam = 2.0 * np.pi * G / w0**2
    if lam < LONG_WAVE_LENGTHS * length:
        skipped.append(
            f"long-wave checks: lowest omega {w0:.4g} rad/s is a wave of {lam:.0f} m, shorter than "
            f"{LONG_WAVE_LENGTHS:g} ship lengths ({LONG_WAVE_LENGTHS * length:.0f} m)"
        )
    else:
        findings.extend(_long_wave(table, k[0], t_roll, skipped))

    # 4. symmetry ---------------------------------------------------------------------------
    findings.extend(_symmetry(table))
    order = {"bounds": 0, "units": 1, "long-wave": 2, "symmetry": 3}
    findings.sort(key=lambda f: (f.severity != "error", order[f.check]))
    return RaoCheckReport(tuple(findings), tuple(skipped))


def _long_wave(table: RAOTable, k0: float, t_roll, skipped) -> list[RaoFinding]:
    """Long-wave checks at the lowest tabulated frequency, with a table-wide diagnosis."""
    v = table.values[..., 0]  # (6, NS, NH)
    speeds, headings, w0 = table.speeds, table.headings, table.omegas[0]
    cb, sb = np.cos(headings), np.sin(headings)
    # expected long-wave values per dof [1], [2]; None = not checked for sign
    expected = {
        "surge": -1j * cb,
        "sway": -1j * sb,
        "heave": np.ones_like(cb) + 0j,
        "roll": -1j * k0 * sb,
        "pitch": 1j * k0 * cb,
    }
    weight = {"surge": np.abs(cb), "sway": np.abs(sb), "roll": np.abs(sb), "pitch": np.abs(cb)}
    roll_ok_freq = True
    if t_roll is not None:
        roll_ok_freq = w0 <= 0.7 * 2.0 * np.pi / float(t_roll)
        if not roll_ok_freq:
            skipped.append(
                f"long-wave roll sign: lowest omega {w0:.4g} rad/s is not well below the roll resonance "
                f"(2*pi/{float(t_roll):.4g} s)"
            )

    flipped: dict[str, list[tuple[int, int]]] = {}
    tested: dict[str, int] = {}
    ratio_of: dict[str, list[tuple[float, int, int]]] = {}
    for dof in ("surge", "sway", "roll", "pitch"):
        di = DOFS.index(dof)
        flipped[dof], tested[dof], ratio_of[dof] = [], 0, []
        for s in range(speeds.size):
            for h in range(headings.size):
                if weight[dof][h] < 0.5:
                    continue
                if dof == "roll" and not roll_ok_freq:
                    continue
                if dof == "roll" and t_roll is None:
                    a = np.abs(table.values[di, s, h])
                    if a.size > 1 and a[1] < a[0]:
                        continue  # not below the resonance: phase may already be past 90 deg
                q = v[di, s, h] / expected[dof][h]
                if dof in ("surge", "sway") and abs(q) < 0.05:
                    continue  # not computed by the source code (zero); nothing to judge
                tested[dof] += 1
                ratio_of[dof].append((abs(q), s, h))
                if q.real < 0.0 and abs(np.angle(q)) > np.deg2rad(120.0):
                    flipped[dof].append((s, h))

    def frac(d):
        return len(flipped[d]) / tested[d] if tested[d] else 0.0

    f = {d: frac(d) > 0.5 for d in flipped}
    # roll and sway flipped on one side of the ship only: a half table mirrored without the sign
    # change of the antisymmetric dofs (or two runs with different conventions joined)
    one_side = False
    for d in ("roll", "sway"):
        sides = {bool(headings[h] > np.pi) for _, h in flipped[d]}
        if len(flipped[d]) and len(sides) == 1:
            side = sides.pop()
            n_side = sum(1 for _, s_, h in ratio_of[d] if bool(headings[h] > np.pi) == side)
            one_side = one_side or len(flipped[d]) == n_side
    if one_side:
        cause = (
            "sway and roll have the wrong sign on one side of the ship only: the headings "
            "180-360 deg were mirrored without changing the sign of sway, roll and yaw"
        )
        f["roll"] = f["roll"] or bool(flipped["roll"])
        f["sway"] = f["sway"] or bool(flipped["sway"])
    elif f["pitch"] and f["roll"] and (f["surge"] or f["sway"] or not (tested["surge"] or tested["sway"])):
        cause = (
            "phases given as lags, or the exp(-i omega t) time convention, instead of phase leads "
            "(negate phase_deg)"
        )
    elif f["pitch"] and f["surge"] and not f["roll"]:
        cause = "headings measured with 0 = head seas; ITTC needs 180 = head seas (heading_deg = 180 - yours)"
    elif f["roll"] and f["sway"] and not f["pitch"]:
        cause = (
            "headings counted the other way round (90 must be waves from starboard) or y to "
            "starboard (heading_deg = 360 - yours)"
        )
    elif f["pitch"] and not f["roll"]:
        cause = "pitch sign: the table gives + bow up; RAO tables need + bow down (negate pitch)"
    elif f["roll"] and not f["pitch"]:
        cause = "roll sign: the table gives + port side down; RAO tables need + starboard down"
    else:
        cause = "sign slip in this dof, or the phase referred to another point than the origin"

    out: list[RaoFinding] = []
    # units of rotations: amplitude about 1/57.3 of the slope
    for dof, (lo, hi) in (("pitch", SLOPE_RATIO), ("roll", ROLL_RATIO)):
        if not ratio_of[dof]:
            continue
        med = float(np.median([r for r, _, _ in ratio_of[dof]]))
        r, s, h = max(ratio_of[dof])

        def unit_finding(text: str, cause: str, dof=dof, s=s, h=h) -> RaoFinding:
            """An error finding on the unit or scale of ``dof``, at its worst speed and heading."""
            di = DOFS.index(dof)
            return RaoFinding(
                "error", "units", dof, speeds[s], headings[h], w0,
                complex(v[di, s, h]), complex(expected[dof][h]), text, cause,
            )

        if med < lo:
            radians = lo <= med * DEG_PER_RAD <= hi
            out.append(
                unit_finding(
                    f"long-wave amplitude is {med:.3g} times the wave slope (median over headings, "
                    f"speeds), expected {lo:g}..{hi:g}",
                    "rotations given in rad/m; the file needs deg/m (multiply amplitude by 57.2958)"
                    if radians
                    else "amplitude far too small (wrong unit or scale)",
                )
            )
            ratio_of[dof] = []
        elif med > hi:
            out.append(
                unit_finding(
                    f"long-wave amplitude is {med:.3g} times the wave slope, expected {lo:g}..{hi:g}",
                    "amplitude far too large (wrong unit or scale, e.g. per wave height in cm)",
                )
            )
    # signs
    for dof in ("pitch", "roll", "surge", "sway"):
        if flipped[dof] and f[dof]:
            s, h = flipped[dof][0]
            di = DOFS.index(dof)
            out.append(
                RaoFinding(
                    "error",
                    "long-wave",
                    dof,
                    speeds[s],
                    headings[h],
                    w0,
                    complex(v[di, s, h]),
                    complex(expected[dof][h]),
                    f"long-wave sign opposite to the wave surface at {len(flipped[dof])} of {tested[dof]} "
                    f"speed/heading pairs",
                    cause,
                )
            )
    # heave -> 1
    hv = v[DOFS.index("heave")]
    bad = np.abs(hv - 1.0) > HEAVE_TOLERANCE
    if np.any(bad):
        s, h = (int(i) for i in np.argwhere(bad)[0])
        x = complex(hv[s, h])
        if abs(abs(x) - 0.5) < 0.15 and abs(np.angle(x)) < np.deg2rad(30.0):
            hcause = "response per wave height instead of per wave amplitude (double the amplitudes)"
        elif abs(abs(x) - 1.0) < HEAVE_TOLERANCE and abs(np.angle(x)) > np.deg2rad(150.0):
            hcause = "heave sign: the table gives + down; RAO tables need + up"
        elif abs(abs(x) - 1.0) < HEAVE_TOLERANCE:
            hcause = "heave phase not referred to the wave elevation at the origin"
        else:
            hcause = "wrong unit or scale of heave (m/m per metre of wave amplitude expected)"
        out.append(
            RaoFinding(
                "error",
                "long-wave",
                "heave",
                speeds[s],
                headings[h],
                w0,
                x,
                1.0 + 0j,
                f"long-wave heave differs from 1 by more than {HEAVE_TOLERANCE:g} at {int(bad.sum())} "
                f"speed/heading pairs",
                hcause,
            )
        )
    return out


def _symmetry(table: RAOTable) -> list[RaoFinding]:
    """Port/starboard symmetry of the tabulated pairs (β, 2π − β) [2]."""
    h = table.headings
    out: list[RaoFinding] = []
    pairs = []
    for i, b in enumerate(h):
        if 1e-9 < b < np.pi - 1e-9:
            j = np.nonzero(np.isclose(h, 2.0 * np.pi - b, atol=1e-6))[0]
            if j.size:
                pairs.append((i, int(j[0])))
    if not pairs:
        return out
    ii = np.array([p[0] for p in pairs])
    jj = np.array([p[1] for p in pairs])
    for di, dof in enumerate(DOFS):
        a = table.values[di][:, ii]  # (NS, NP, NW)
        b = table.values[di][:, jj]
        scale = np.abs(table.values[di]).max(axis=(1, 2), keepdims=True)  # per speed
        atol = 0.02 * scale
        big = np.maximum(np.abs(a), np.abs(b))
        significant = big > atol
        if not np.any(significant):
            continue
        same = np.abs(b - MIRROR_SIGNS[di] * a) <= SYMMETRY_RTOL * big + atol
        opposite = np.abs(b + MIRROR_SIGNS[di] * a) <= SYMMETRY_RTOL * big + atol
        mism = significant & ~same
        if not np.any(mism):
            continue
        s, p, w = (int(x) for x in np.argwhere(mism)[0])
        flipped_share = np.sum(mism & opposite) / np.sum(significant)
        if flipped_share > 0.5:
            out.append(
                RaoFinding(
                    "error",
                    "symmetry",
                    dof,
                    table.speeds[s],
                    h[jj[p]],
                    table.omegas[w],
                    complex(b[s, p, w]),
                    complex(MIRROR_SIGNS[di] * a[s, p, w]),
                    f"value at the mirrored heading has the opposite sign to the port/starboard mirror image "
                    f"at {int(np.sum(mism))} points",
                    "the headings 180-360 deg were computed with the other sign convention for "
                    + ("sway, roll and yaw" if MIRROR_SIGNS[di] < 0 else "this dof"),
                )
            )
        else:
            out.append(
                RaoFinding(
                    "warning",
                    "symmetry",
                    dof,
                    table.speeds[s],
                    h[jj[p]],
                    table.omegas[w],
                    complex(b[s, p, w]),
                    complex(MIRROR_SIGNS[di] * a[s, p, w]),
                    f"not port/starboard symmetric at {int(np.sum(mism))} points (more than "
                    f"{SYMMETRY_RTOL:.0%} apart)",
                    "an asymmetric hull or loading (list), or values of different runs mixed",
                )
            )
    return out
