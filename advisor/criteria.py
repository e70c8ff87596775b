"""Criteria: which linear response each limit looks at, and its statistic from spectral moments.

Every limit of a :class:`advisor.limits.LimitSet` is turned into

1. a *response*: a complex transfer function per unit wave amplitude, built from the six motion
   RAOs with the rigid-body kinematics of :mod:`estimator.kinematics` —

   ========================== ==============================================================
   criterion                  response (at the limit's point (x, y, z))
   ========================== ==============================================================
   roll, pitch                η4, η5 [rad/m]
   vertical_acceleration      −ω_e²·(η3 + y·η4 − x·η5) [m/s² per m]
   lateral_acceleration       lateral specific force −ω_e²·s_y + g·η4 (gravity component of roll
                              included, MSC.1/Circ.1627) [m/s² per m]
   longitudinal_acceleration  longitudinal specific force −ω_e²·s_x − g·η5 [m/s² per m]
   slamming, deck_wetness     relative vertical motion r = ζ(x, y) − s_z [m/m]; its m2 is the
                              variance of the relative velocity
   motion_sickness            vertical acceleration × ISO 2631-1 Wf(|ω_e|/2π) [m/s² per m]
   ========================== ==============================================================

2. a *statistic* of that response from its moments m0 and m2 (encounter domain), with
   :mod:`estimator.responses`: ``rms`` σ = √m0; ``significant`` 2σ; ``mpm`` σ·√(2 ln N),
   N = T/Tz (Tz held below T/e so that N ≥ e where the response barely oscillates); slamming
   ``probability`` per oscillation exp(−T_b²/2σ_r² − v_th²/2σ_ṙ²) with T_b the depth of the point
   below the waterline and v_th = 0.093·√(gL) (Ochi 1964); deck wetness ``probability``
   exp(−f²/2σ_r²) with f the height of the point and σ_r the relative motion raised by the bow
   swell-up factor :data:`BOW_SWELL_UP` (the incident wave alone under-predicts the water level at
   the stem); ``rate_per_hour`` = probability / Tz,r
   (converted to events per second inside); ``msdv`` = a_w,rms·√T (ISO 2631-1).

The utilisation of a limit is predicted statistic ÷ limit value (1 = at the limit).

The default (NORDFORSK 1987) merchant-ship values are produced by :func:`nordforsk_merchant`,
which interpolates linearly in ship length between the tabulated end points.

References
----------
.. [1] NORDFORSK (1987). *Assessment of Ship Performance in a Seaway*; as reproduced in Faltinsen, O. M.
   (1990), *Sea Loads on Ships and Offshore Structures*, Table 1.1 (merchant ships:
   vertical acceleration at FP 0.275 g RMS for L ≤ 100 m and 0.05 g for L ≥ 330 m; at the bridge
   0.15 g; lateral acceleration at the bridge 0.12 g; roll 6.0° RMS; slamming probability 0.03
   for L ≤ 100 m and 0.01 for L ≥ 300 m; deck wetness probability 0.05; linear interpolation in
   L between) (from memory).
.. [2] Ochi, M. K. (1964). Prediction of occurrence and severity of ship slamming at sea. *Proc.
   5th Symposium on Naval Hydrodynamics*, Bergen (from memory).
.. [3] ISO 2631-1:1997, Annex D (motion sickness dose value) (from memory).
.. [4] IMO MSC.1/Circ.1627 (2020), §3.2.1.2 (lateral acceleration including gravity from roll).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from advisor.limits import Limit, NamedPoint
from estimator import kinematics, responses
from estimator.constants import G

__all__ = [
    "BOW_SWELL_UP",
    "Response",
    "response_of",
    "transfer",
    "predicted_statistic",
    "nordforsk_merchant",
    "nordforsk_limit_mapping",
]

BOW_SWELL_UP = 1.2
"""Dynamic swell-up factor on the relative vertical motion at the bow for deck wetness [-].

Common practice (from memory: model tests show the water at the stem rising some 10–30 % above the
incident-wave-and-ship-motion prediction, the factor of the order 1.1–1.3); 1.2 is a project choice.
The bow wave's static rise (Tasaki 1963) is not added separately."""

RESPONSE_KINDS = (
    "roll",
    "pitch",
    "vertical_acceleration",
    "lateral_acceleration",
    "longitudinal_acceleration",
    "relative_motion",
    "weighted_vertical_acceleration",
)
"""The transfer functions the criteria need."""

_KIND_OF = {
    "roll": "roll",
    "pitch": "pitch",
    "vertical_acceleration": "vertical_acceleration",
    "lateral_acceleration": "lateral_acceleration",
    "longitudinal_acceleration": "longitudinal_acceleration",
    "slamming": "relative_motion",
    "deck_wetness": "relative_motion",
    "motion_sickness": "weighted_vertical_acceleration",
}


@dataclass(frozen=True)
class Response:
    """A linear response at a point.

    Attributes
    ----------
    kind : str
        One of :data:`RESPONSE_KINDS`.
    point : NamedPoint or None
        Where (None for the rigid-body angles roll and pitch).
    """

    kind: str
    point: NamedPoint | None


def response_of(limit: Limit, points: dict[str, NamedPoint]) -> Response:
    """The response a limit looks at.

    Parameters
    ----------
    limit : Limit
        The limit.
    points : dict of str to NamedPoint
        Resolved points (:meth:`advisor.limits.LimitSet.resolve_points`).

    Returns
    -------
    Response
    """
    kind = _KIND_OF[limit.criterion]
    if kind in ("roll", "pitch"):
        return Response(kind, None)
    return Response(kind, points[limit.point])


def transfer(response: Response, rao6, omega, beta, omega_e) -> np.ndarray:
    """Complex transfer function of a response per unit wave amplitude.

    Parameters
    ----------
    response : Response
        Which response.
    rao6 : array_like, complex, shape (6, ...)
        Motion RAOs at the points (ω, β, U) [m/m, rad/m].
    omega : array_like
        Absolute wave frequency, broadcastable to ``rao6[0]`` [rad/s].
    beta : array_like
        Relative wave heading (ITTC, π = head seas), broadcastable [rad].
    omega_e : array_like
        Signed encounter frequency, broadcastable [rad/s].

    Returns
    -------
    numpy.ndarray, complex
        H [rad/m, m/s² per m or m/m], shape of ``rao6[0]``.

    References
    ----------
    Module references; kinematics from :mod:`estimator.kinematics`.
    """
    rao6 = np.asarray(rao6)
    kind = response.kind
    if kind == "roll":
        return rao6[3]
    if kind == "pitch":
        return rao6[4]
    p = response.point
    if kind == "vertical_acceleration":
        return kinematics.vertical_acceleration(rao6, omega_e, p.x, p.y)
    if kind == "lateral_acceleration":
        return kinematics.lateral_specific_force(rao6, omega_e, p.x, p.y, p.z)
    if kind == "longitudinal_acceleration":
        return kinematics.longitudinal_specific_force(rao6, omega_e, p.x, p.y, p.z)
    if kind == "relative_motion":
        return kinematics.relative_vertical_motion(rao6, omega, beta, p.x, p.y)
    if kind == "weighted_vertical_acceleration":
        wf = responses.iso2631_wf(np.abs(omega_e) / (2.0 * np.pi))
        return kinematics.vertical_acceleration(rao6, omega_e, p.x, p.y) * wf
    raise ValueError(f"unknown response kind {kind!r}; allowed: {', '.join(RESPONSE_KINDS)}")


def predicted_statistic(limit: Limit, m0, m2, *, point: NamedPoint | None, lpp: float) -> np.ndarray:
    """The statistic a limit constrains, from the moments of its response.

    Parameters
    ----------
    limit : Limit
        The limit (criterion, statistic, exposure).
    m0 : array_like
        Variance of the response [unit²].
    m2 : array_like
        Second moment in encounter frequency [unit²·(rad/s)²].
    point : NamedPoint or None
        The limit's point (needed for slamming: depth −z; deck wetness: height z).
    lpp : float
        Length between perpendiculars (Ochi's threshold velocity) [m].

    Returns
    -------
    numpy.ndarray
        In the SI unit of ``limit.value``: [rad], [m/s²], [-], [1/s] or [m/s^1.5].

    References
    ----------
    Module references [2]_ [3]_; short-term statistics from :mod:`estimator.responses`.
    """
    m0 = np.maximum(np.asarray(m0, dtype=float), 0.0)
    m2 = np.maximum(np.asarray(m2, dtype=float), 0.0)
    sigma = np.sqrt(m0)
    stat = limit.statistic
    if stat == "rms":
        return sigma
    if stat == "significant":
        return responses.significant_amplitude(m0)
    if stat == "mpm":
        duration = float(limit.exposure)
        with np.errstate(divide="ignore", invalid="ignore"):
            tz = responses.zero_crossing_period(m0, m2)
        tz = np.where(np.isfinite(tz) & (tz > 0), tz, np.inf)
        tz = np.minimum(tz, duration / math.e)  # N >= e: at least σ·√2 for a barely oscillating response
        return responses.most_probable_maximum(sigma, tz, duration)
    if stat == "msdv":
        return responses.msdv(sigma, float(limit.exposure))
    sigma_dot = np.sqrt(m2)
    if limit.criterion == "slamming":
        depth = -point.z
        vth = float(responses.ochi_threshold_velocity(lpp))
        if stat == "probability":
            return responses.slamming_probability(sigma, sigma_dot, depth, vth)
        return responses.slams_per_hour(sigma, sigma_dot, depth, vth) / 3600.0
    if limit.criterion == "deck_wetness":
        sigma, sigma_dot = sigma * BOW_SWELL_UP, sigma_dot * BOW_SWELL_UP
        if stat == "probability":
            return responses.deck_wetness_probability(sigma, point.z)
        return responses.deck_wetness_per_hour(sigma, sigma_dot, point.z) / 3600.0
    raise ValueError(f"statistic {stat!r} not defined for criterion {limit.criterion!r}")


# ---------------------------------------------------------------------------------------------
# NORDFORSK (1987) merchant-ship criteria
# ---------------------------------------------------------------------------------------------


def _interp_length(lpp: float, l0: float, v0: float, l1: float, v1: float) -> float:
    return float(np.interp(lpp, [l0, l1], [v0, v1]))


def nordforsk_merchant(lpp: float) -> dict[str, float]:
    """NORDFORSK (1987) general operability criteria for merchant ships, in SI.

    Parameters
    ----------
    lpp : float
        Ship length [m] (> 0).

    Returns
    -------
    dict
        ``vertical_acceleration_fp_rms`` [m/s²] (0.275 g at L ≤ 100 m → 0.050 g at L ≥ 330 m,
        linear in L), ``vertical_acceleration_bridge_rms`` 0.15 g, ``lateral_acceleration_bridge_rms``
        0.12 g [m/s²], ``roll_rms`` 6.0° [rad], ``slamming_probability`` (0.03 at L ≤ 100 m → 0.01 at
        L ≥ 300 m) [-], ``deck_wetness_probability`` 0.05 [-].

    References
    ----------
    .. [1] NORDFORSK (1987), as reproduced in Faltinsen (1990), Table 1.1 (from memory); see the
       module references.
    """
    lpp = float(lpp)
    if not (math.isfinite(lpp) and lpp > 0):
        raise ValueError(f"lpp must be a finite length > 0 m, got {lpp!r}")
    return {
        "vertical_acceleration_fp_rms": _interp_length(lpp, 100.0, 0.275, 330.0, 0.050) * G,
        "vertical_acceleration_bridge_rms": 0.15 * G,
        "lateral_acceleration_bridge_rms": 0.12 * G,
        "roll_rms": math.radians(6.0),
        "slamming_probability": _interp_length(lpp, 100.0, 0.03, 300.0, 0.01),
        "deck_wetness_probability": 0.05,
    }


_NORDFORSK_SOURCE = (
    "NORDFORSK (1987) general operability criteria, merchant ships, as reproduced in Faltinsen (1990) "
    "Sea Loads on Ships and Offshore Structures, Table 1.1 (from memory)"
)


def nordforsk_limit_mapping(
    lpp: float, *, fp: str, bridge: str, forefoot: str, bow_deck: str, name: str
) -> dict:
    """A limit-set mapping (schema of :mod:`advisor.limits`) holding the NORDFORSK merchant-ship
    criteria for a ship of length ``lpp``, with values rounded as written to a file.

    Parameters
    ----------
    lpp : float
        Ship length [m].
    fp, bridge, forefoot, bow_deck : str
        Names of the vessel's points at the forward perpendicular (vertical acceleration), the
        bridge, the keel near the FP (slamming; below the waterline) and the deck edge at the bow
        (deck wetness; above the waterline).
    name : str
        Name of the set.

    Returns
    -------
    dict
        Mapping accepted by :func:`advisor.limits.parse_limit_set`.
    """
    v = nordforsk_merchant(lpp)
    src = f"{_NORDFORSK_SOURCE}; interpolated in L = {lpp:g} m"
    return {
        "schema_version": 1,
        "name": name,
        "limits": [
            {
                "criterion": "roll",
                "statistic": "rms",
                "value": 6.0,
                "unit": "deg",
                "source": _NORDFORSK_SOURCE,
            },
            {
                "criterion": "vertical_acceleration",
                "statistic": "rms",
                "point": fp,
                "unit": "g",
                "value": round(v["vertical_acceleration_fp_rms"] / G, 4),
                "source": src,
            },
            {
                "criterion": "vertical_acceleration",
                "statistic": "rms",
                "point": bridge,
                "unit": "g",
                "value": 0.15,
                "source": _NORDFORSK_SOURCE,
            },
            {
                "criterion": "lateral_acceleration",
                "statistic": "rms",
                "point": bridge,
                "unit": "g",
                "value": 0.12,
                "source": _NORDFORSK_SOURCE,
            },
            {
                "criterion": "slamming",
                "statistic": "probability",
                "point": forefoot,
                "unit": "probability",
                "value": round(v["slamming_probability"], 4),
                "source": src,
            },
            {
                "criterion": "deck_wetness",
                "statistic": "probability",
                "point": bow_deck,
                "unit": "probability",
                "value": 0.05,
                "source": _NORDFORSK_SOURCE,
            },
        ],
    }
