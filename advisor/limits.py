"""Limit sets per loading condition: schema, validation and conversion to SI.

A *limit set* says, for one loading condition (or cargo condition), how much motion the ship, its
cargo and its crew can take, and how the advisor turns predictions into advice. It is written by
people as a TOML file (read by ``onboard.formats.limitsfile``) and handed to :func:`parse_limit_set` as a
plain mapping; the result is an immutable :class:`LimitSet` in SI units.

Schema (TOML; every key below is allowed, any other key is rejected)
--------------------------------------------------------------------

.. code-block:: toml

    schema_version = 1                 # required, integer, only 1 exists
    name = "nordforsk-merchant"        # required, non-empty text
    description = "..."                # optional free text
    margin = 0.9                       # optional, (0, 1], default 0.9: advice keeps the
                                       # conservative utilisation at or below this

    [[points]]                         # optional: extra named points for this set (e.g. the top
    name = "top_tier_fwd"              # tier of a high container stack, which depends on the
    x_m = 70.0                         # cargo); body axes, origin midship on the centreline at
    y_m = 0.0                          # the calm waterline, x forward, y to port, z up [m].
    z_m = 30.0                         # Names must not repeat a vessel point.

    [[limits]]                         # one or more
    key = "roll_rms"                   # optional unique id (letters, digits, _), default
                                       # "<criterion>_<statistic>[_<point>]"
    criterion = "roll"                 # closed set, see CRITERIA
    statistic = "rms"                  # allowed per criterion, see CRITERIA
    value = 6.0                        # > 0, within the range allowed for the unit
    unit = "deg"                       # allowed per statistic, see UNITS; converted to SI
    exposure_h = 3.0                   # hours; required for "mpm" and "msdv", optional else
    point = "bridge"                   # named point (vessel [[points]] or this file's points);
                                       # required except for roll and pitch
    label = "Roll (RMS)"               # optional display text
    source = "NORDFORSK (1987) ..."    # required: where the number comes from

    [zones]                            # optional, MSC.1/Circ.1228 screening bands (project choices
    synchronous_roll_band = 0.1        #   where the circular gives no number): |TE/TR - 1| <= band
    parametric_roll_band = 0.1         #   |TE/(TR/2) - 1| <= band (and |TE/TR - 1| in following seas)
    parametric_roll_wavelength_min = 0.5   # lambda/L range in which parametric roll is screened
    parametric_roll_wavelength_max = 2.0
    min_system_hs_m = 1.0              # wave systems below this Hs [m] are not screened

    [uncertainty]                      # optional
    hs_k = 1.0                         # conservative Hs = Hs*(1 + hs_k*sigma_rel) when the estimate
                                       # gives no 90 % interval (it is used when it does); the
                                       # direction uncertainty +-sigma_dir comes with the estimate

    [advice]                           # optional, cost of a change (see advisor.advice)
    heading_weight_per_deg = 1.0       # per degree away from the intended course
    speed_loss_weight_per_kn = 3.0     # per knot below the present speed
    speed_gain_weight_per_kn = 1.0     # per knot above the present speed
    min_speed_kn = 3.0                 # never advise less (steerage way); [0, 10] kn

Criteria, statistics and units
------------------------------

========================== ======================================== =============================
criterion                  statistics                               point
========================== ======================================== =============================
roll, pitch                rms, significant (2σ), mpm               optional (rigid body)
vertical_acceleration      rms, significant, mpm                    required
lateral_acceleration       rms, significant, mpm (specific force:   required
                           includes g·roll)
longitudinal_acceleration  rms, significant, mpm (includes g·pitch) required
slamming                   probability (per oscillation),           required; below the
                           rate_per_hour                            waterline (z < 0): keel depth
deck_wetness               probability, rate_per_hour               required; above the
                                                                    waterline (z > 0): freeboard
motion_sickness            msdv (ISO 2631-1 Wf-weighted vertical)   required
========================== ======================================== =============================

Units (value as written → SI inside): angles ``deg`` or ``rad`` → rad; accelerations ``m/s2``
or ``g`` (× 9.81) → m/s²; ``probability`` → – ; ``per_hour`` → 1/s (÷ 3600); ``m/s^1.5`` →
m/s^1.5. ``exposure_h`` → s.

Errors are :class:`LimitSetError` with a message that names the file (the ``label`` passed in),
the key path (``limits[2].value``), the value received and what is allowed.

References
----------
.. [1] NORDFORSK (1987). *Assessment of Ship Performance in a Seaway* (general operability criteria for
   merchant ships; reproduced in Faltinsen, O. M. (1990), *Sea Loads on Ships and Offshore Structures*,
   ch. 1) (from memory).
.. [2] IMO MSC.1/Circ.1228 (2007). *Revised guidance to the master for avoiding dangerous
   situations in adverse weather and sea conditions*.
.. [3] ISO 2631-1:1997. *Mechanical vibration and shock — Evaluation of human exposure to
   whole-body vibration — Part 1: General requirements*, Annex D (motion sickness dose value).
.. [4] Ochi, M. K. (1964). Prediction of occurrence and severity of ship slamming at sea. *Proc.
   5th Symposium on Naval Hydrodynamics*, Bergen (slamming and deck wetness per oscillation).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field

from estimator.constants import KNOT, G

__all__ = [
    "CRITERIA",
    "STATISTICS",
    "UNITS",
    "LimitSetError",
    "NamedPoint",
    "Limit",
    "ZoneSettings",
    "UncertaintySettings",
    "AdviceWeights",
    "LimitSet",
    "parse_limit_set",
    "limit_set_to_mapping",
    "SCHEMA_VERSION",
]

SCHEMA_VERSION = 1
"""The only schema version of limit files so far."""

_MOTION_STATS = ("rms", "significant", "mpm")
_EVENT_STATS = ("probability", "rate_per_hour")

CRITERIA: dict[str, dict] = {
    "roll": {"statistics": _MOTION_STATS, "point": "optional", "label": "Roll"},
    "pitch": {"statistics": _MOTION_STATS, "point": "optional", "label": "Pitch"},
    "vertical_acceleration": {
        "statistics": _MOTION_STATS,
        "point": "required",
        "label": "Vertical acceleration",
    },
    "lateral_acceleration": {
        "statistics": _MOTION_STATS,
        "point": "required",
        "label": "Lateral acceleration",
    },
    "longitudinal_acceleration": {
        "statistics": _MOTION_STATS,
        "point": "required",
        "label": "Longitudinal acceleration",
    },
    "slamming": {"statistics": _EVENT_STATS, "point": "required", "label": "Slamming"},
    "deck_wetness": {"statistics": _EVENT_STATS, "point": "required", "label": "Deck wetness"},
    "motion_sickness": {"statistics": ("msdv",), "point": "required", "label": "Motion sickness dose"},
}
"""The closed set of criteria: allowed statistics, whether a point is required, display label."""

STATISTICS: dict[str, str] = {
    "rms": "RMS",
    "significant": "significant amplitude",
    "mpm": "most probable maximum",
    "probability": "probability per oscillation",
    "rate_per_hour": "rate per hour",
    "msdv": "MSDV",
}
"""The statistics and their display names."""

_ANGLE_UNITS = {"deg": math.pi / 180.0, "rad": 1.0}
_ACC_UNITS = {"m/s2": 1.0, "g": G}

UNITS: dict[str, tuple[float, float, float, str]] = {
    # unit: (factor to SI, smallest allowed value (exclusive), largest allowed value (inclusive), SI unit)
    "deg": (math.pi / 180.0, 0.0, 90.0, "rad"),
    "rad": (1.0, 0.0, math.pi / 2.0, "rad"),
    "m/s2": (1.0, 0.0, 3.0 * G, "m/s²"),
    "g": (G, 0.0, 3.0, "m/s²"),
    "probability": (1.0, 0.0, 1.0, "-"),
    "per_hour": (1.0 / 3600.0, 0.0, 3600.0, "1/s"),
    "m/s^1.5": (1.0, 0.0, 1000.0, "m/s^1.5"),
}
"""Units accepted in limit files: factor to SI, allowed open-closed range of the value as written,
and the SI unit used inside."""


def _units_for(criterion: str, statistic: str) -> tuple[str, ...]:
    if statistic == "probability":
        return ("probability",)
    if statistic == "rate_per_hour":
        return ("per_hour",)
    if statistic == "msdv":
        return ("m/s^1.5",)
    if criterion in ("roll", "pitch"):
        return tuple(_ANGLE_UNITS)
    return tuple(_ACC_UNITS)


_EXPOSURE_RANGE_H = (0.0, 720.0)
_NAME_RE = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
_POINT_RANGE_M = 500.0


class LimitSetError(ValueError):
    """A limit set is invalid. The message names file, key path, value and what is allowed.

    Attributes
    ----------
    label : str
        The file (or other source) the mapping came from.
    key : str
        Key path inside the file, e.g. ``limits[2].value``.
    value : object
        The offending value (``None`` if the key is missing).
    allowed : str
        What would have been accepted.
    """

    def __init__(self, label: str, key: str, value, allowed: str, problem: str = "invalid value"):
        self.label = label
        self.key = key
        self.value = value
        self.allowed = allowed
        super().__init__(f"{label}: {key} = {value!r}: {problem}; allowed: {allowed}")


@dataclass(frozen=True)
class NamedPoint:
    """A named location on the ship, body axes (x forward, y to port, z up, origin midship on the
    centreline at the calm waterline).

    Attributes
    ----------
    name : str
        Point name.
    x, y, z : float
        Coordinates [m].
    """

    name: str
    x: float
    y: float
    z: float


@dataclass(frozen=True)
class Limit:
    """One limit: a statistic of a criterion, at a point, must stay at or below a value.

    Attributes
    ----------
    key : str
        Unique id within the set.
    criterion : str
        One of :data:`CRITERIA`.
    statistic : str
        One of :data:`STATISTICS`.
    value : float
        The limit in SI: [rad] for angles, [m/s²] for accelerations, [-] for probabilities,
        [1/s] for rates, [m/s^1.5] for MSDV.
    unit : str
        Unit as written in the file (for display and round trips).
    value_in_unit : float
        The value as written, in ``unit``.
    exposure : float or None
        Exposure time [s] for ``mpm`` and ``msdv`` (None when not given).
    point : str or None
        Named point (None for rigid-body angles without a point).
    label : str
        Display text.
    source : str
        Published source of the number (free text).
    """

    key: str
    criterion: str
    statistic: str
    value: float
    unit: str
    value_in_unit: float
    exposure: float | None
    point: str | None
    label: str
    source: str


@dataclass(frozen=True)
class ZoneSettings:
    """Screening bands for the MSC.1/Circ.1228 dangerous zones (project choices where the circular
    gives no number; see :mod:`advisor.zones`).

    Attributes
    ----------
    synchronous_roll_band : float
        Synchronous roll when |TE/TR − 1| ≤ band [-].
    parametric_roll_band : float
        Parametric roll when |TE/(TR/2) − 1| ≤ band, or |TE/TR − 1| ≤ band in following or
        quartering seas [-].
    parametric_roll_wavelength_min, parametric_roll_wavelength_max : float
        Parametric roll is screened only for wave systems with λ/L in this range [-].
    min_system_hs : float
        Wave systems with a smaller significant height are not screened for synchronous or
        parametric roll or surf-riding [m]. (Successive high waves use the circular's own 0.04·L.)
    """

    synchronous_roll_band: float = 0.1
    parametric_roll_band: float = 0.1
    parametric_roll_wavelength_min: float = 0.5
    parametric_roll_wavelength_max: float = 2.0
    min_system_hs: float = 1.0


@dataclass(frozen=True)
class UncertaintySettings:
    """How the conservative utilisation is formed (see :mod:`advisor.polar`).

    Attributes
    ----------
    hs_k : float
        Conservative significant height Hs·(1 + hs_k·σ_rel) [-]. (The spectrum is also turned
        over ±σ_dir, the direction uncertainty of the estimate; see :mod:`advisor.polar`.)
    """

    hs_k: float = 1.0


@dataclass(frozen=True)
class AdviceWeights:
    """Cost weights of a change of heading or speed (see :mod:`advisor.advice`).

    Attributes
    ----------
    heading : float
        Cost per radian of heading away from the intended course [1/rad].
    speed_loss : float
        Cost per m/s below the present speed [s/m].
    speed_gain : float
        Cost per m/s above the present speed [s/m].
    min_speed : float
        Slowest speed the advice may propose (steerage way; common practice) [m/s].
    """

    heading: float = 180.0 / math.pi
    speed_loss: float = 3.0 / KNOT
    speed_gain: float = 1.0 / KNOT
    min_speed: float = 3.0 * KNOT


@dataclass(frozen=True)
class LimitSet:
    """A validated limit set in SI units (see the module docstring for the file schema).

    Attributes
    ----------
    name : str
        Name of the set.
    description : str
        Free text.
    limits : tuple of Limit
        The limits, in file order.
    margin : float
        Advice keeps the conservative utilisation at or below this [-].
    points : tuple of NamedPoint
        Extra points defined by the set.
    zones : ZoneSettings
    uncertainty : UncertaintySettings
    advice : AdviceWeights
    label : str
        Where the set was read from (file name), for messages.
    """

    name: str
    limits: tuple[Limit, ...]
    description: str = ""
    margin: float = 0.9
    points: tuple[NamedPoint, ...] = ()
    zones: ZoneSettings = field(default_factory=ZoneSettings)
    uncertainty: UncertaintySettings = field(default_factory=UncertaintySettings)
    advice: AdviceWeights = field(default_factory=AdviceWeights)
    label: str = ""

    def point_names(self) -> tuple[str | None, ...]:
        """Point of every limit, in order."""
        return tuple(lim.point for lim in self.limits)

    def resolve_points(
        self, vessel_points: Mapping[str, tuple[float, float, float]]
    ) -> dict[str, NamedPoint]:
        """All points the limits use, from the vessel's points plus this set's own.

        Parameters
        ----------
        vessel_points : mapping of str to (x, y, z)
            The vessel's named points [m].

        Returns
        -------
        dict of str to NamedPoint

        Raises
        ------
        LimitSetError
            If a limit names an unknown point, a set point repeats a vessel point, or a slamming /
            deck-wetness point lies on the wrong side of the waterline.
        """
        known: dict[str, NamedPoint] = {
            name: NamedPoint(name, float(p[0]), float(p[1]), float(p[2])) for name, p in vessel_points.items()
        }
        for i, p in enumerate(self.points):
            if p.name in known:
                raise LimitSetError(
                    self.label,
                    f"points[{i}].name",
                    p.name,
                    "a name not already used by the vessel's points",
                    "duplicate point name",
                )
            known[p.name] = p
        for i, lim in enumerate(self.limits):
            if lim.point is None:
                continue
            if lim.point not in known:
                raise LimitSetError(
                    self.label,
                    f"limits[{i}].point",
                    lim.point,
                    "one of " + ", ".join(sorted(known)),
                    "unknown point",
                )
            z = known[lim.point].z
            if lim.criterion == "slamming" and not z < 0:
                raise LimitSetError(
                    self.label,
                    f"limits[{i}].point",
                    lim.point,
                    "a point below the calm waterline (z_m < 0; its depth is the keel-emergence threshold)",
                    f"slamming point has z = {z} m",
                )
            if lim.criterion == "deck_wetness" and not z > 0:
                raise LimitSetError(
                    self.label,
                    f"limits[{i}].point",
                    lim.point,
                    "a point above the calm waterline (z_m > 0; its height is the effective freeboard)",
                    f"deck-wetness point has z = {z} m",
                )
        return known


# ---------------------------------------------------------------------------------------------
# parsing helpers
# ---------------------------------------------------------------------------------------------


def _check_keys(label: str, path: str, table: Mapping, allowed: tuple[str, ...]) -> None:
    if not isinstance(table, Mapping):
        raise LimitSetError(label, path or "<top>", table, "a table (mapping)", "not a table")
    for key in table:
        if key not in allowed:
            where = f"{path}.{key}" if path else str(key)
            raise LimitSetError(label, where, table[key], "keys " + ", ".join(allowed), "unknown key")


def _number(
    label: str, path: str, value, lo: float, hi: float, *, lo_open: bool = True, unit: str = ""
) -> float:
    u = f" {unit}" if unit else ""
    lo_b = "(" if lo_open else "["
    allowed = f"a number in {lo_b}{lo:g}, {hi:g}]{u}"
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise LimitSetError(label, path, value, allowed, "not a number")
    v = float(value)
    if not math.isfinite(v) or (v <= lo if lo_open else v < lo) or v > hi:
        raise LimitSetError(label, path, value, allowed, "out of range")
    return v


def _text(label: str, path: str, value, *, required: bool = True) -> str:
    if not isinstance(value, str) or (required and not value.strip()):
        raise LimitSetError(
            label, path, value, "non-empty text", "not text" if not isinstance(value, str) else "empty"
        )
    return value


def _require(label: str, path: str, table: Mapping, key: str, allowed: str):
    if key not in table:
        where = f"{path}.{key}" if path else key
        raise LimitSetError(label, where, None, allowed, "missing key")
    return table[key]


_LIMIT_KEYS = ("key", "criterion", "statistic", "value", "unit", "exposure_h", "point", "label", "source")
_POINT_KEYS = ("name", "x_m", "y_m", "z_m")
_ZONE_KEYS = (
    "synchronous_roll_band",
    "parametric_roll_band",
    "parametric_roll_wavelength_min",
    "parametric_roll_wavelength_max",
    "min_system_hs_m",
)
_UNC_KEYS = ("hs_k",)
_ADVICE_KEYS = (
    "heading_weight_per_deg",
    "speed_loss_weight_per_kn",
    "speed_gain_weight_per_kn",
    "min_speed_kn",
)
_TOP_KEYS = (
    "schema_version",
    "name",
    "description",
    "margin",
    "points",
    "limits",
    "zones",
    "uncertainty",
    "advice",
)


def _parse_limit(label: str, i: int, raw, point_names: set[str] | None) -> Limit:
    path = f"limits[{i}]"
    _check_keys(label, path, raw, _LIMIT_KEYS)
    criterion = _require(label, path, raw, "criterion", "one of " + ", ".join(CRITERIA))
    if criterion not in CRITERIA:
        raise LimitSetError(
            label, f"{path}.criterion", criterion, "one of " + ", ".join(CRITERIA), "unknown criterion"
        )
    spec = CRITERIA[criterion]
    stats = spec["statistics"]
    statistic = _require(label, path, raw, "statistic", f"for {criterion}: " + ", ".join(stats))
    if statistic not in stats:
        raise LimitSetError(
            label,
            f"{path}.statistic",
            statistic,
            f"for {criterion}: " + ", ".join(stats),
            "statistic not allowed",
        )
    units = _units_for(criterion, statistic)
    unit = _require(label, path, raw, "unit", f"for {criterion} {statistic}: " + ", ".join(units))
    if unit not in units:
        raise LimitSetError(
            label,
            f"{path}.unit",
            unit,
            f"for {criterion} {statistic}: " + ", ".join(units),
            "unit not allowed",
        )
    factor, lo, hi, _si = UNITS[unit]
    raw_value = _require(label, path, raw, "value", f"a number in ({lo:g}, {hi:g}] {unit}")
    value = _number(label, f"{path}.value", raw_value, lo, hi, unit=unit)
    exposure = None
    if "exposure_h" in raw:
        exposure = (
            _number(label, f"{path}.exposure_h", raw["exposure_h"], *_EXPOSURE_RANGE_H, unit="h") * 3600.0
        )
    elif statistic in ("mpm", "msdv"):
        raise LimitSetError(
            label,
            f"{path}.exposure_h",
            None,
            f"a number in ({_EXPOSURE_RANGE_H[0]:g}, {_EXPOSURE_RANGE_H[1]:g}] h (needed for {statistic})",
            "missing key",
        )
    point = raw.get("point")
    if point is None:
        if spec["point"] == "required":
            allowed = "a named point" + (": " + ", ".join(sorted(point_names)) if point_names else "")
            raise LimitSetError(
                label, f"{path}.point", None, allowed, f"missing key (needed for {criterion})"
            )
    else:
        point = _text(label, f"{path}.point", point)
        if point_names is not None and point not in point_names:
            raise LimitSetError(
                label, f"{path}.point", point, "one of " + ", ".join(sorted(point_names)), "unknown point"
            )
    source = _text(
        label, f"{path}.source", _require(label, path, raw, "source", "non-empty text naming the source")
    )
    default_key = f"{criterion}_{statistic}" + (f"_{point}" if point else "")
    key = raw.get("key", default_key)
    if not isinstance(key, str) or not _NAME_RE.match(key):
        raise LimitSetError(
            label, f"{path}.key", key, "letters, digits and _ starting with a letter", "bad key"
        )
    default_label = f"{spec['label']} ({STATISTICS[statistic]})" + (f" at {point}" if point else "")
    text_label = _text(label, f"{path}.label", raw.get("label", default_label))
    return Limit(
        key=key,
        criterion=criterion,
        statistic=statistic,
        value=value * factor,
        unit=unit,
        value_in_unit=value,
        exposure=exposure,
        point=point,
        label=text_label,
        source=source,
    )


def parse_limit_set(mapping: Mapping, label: str = "<limit set>", *, vessel_points=None) -> LimitSet:
    """Validate a limit-set mapping (as read from TOML) and convert it to SI.

    Parameters
    ----------
    mapping : mapping
        The parsed TOML document (see the module docstring for the schema).
    label : str
        Name of the file (or other source) for error messages.
    vessel_points : iterable of str, optional
        Names of the vessel's points; when given, every limit's point must be one of them or one
        of the set's own ``[[points]]``.

    Returns
    -------
    LimitSet

    Raises
    ------
    LimitSetError
        Naming the file, key path, value and what is allowed. Unknown keys are rejected.

    References
    ----------
    See the module references.
    """
    _check_keys(label, "", mapping, _TOP_KEYS)
    version = _require(label, "", mapping, "schema_version", f"{SCHEMA_VERSION}")
    if isinstance(version, bool) or version != SCHEMA_VERSION:
        raise LimitSetError(
            label, "schema_version", version, f"{SCHEMA_VERSION}", "unsupported schema version"
        )
    name = _text(label, "name", _require(label, "", mapping, "name", "non-empty text"))
    description = _text(label, "description", mapping.get("description", ""), required=False)
    margin = _number(label, "margin", mapping.get("margin", 0.9), 0.0, 1.0)

    points: list[NamedPoint] = []
    raw_points = mapping.get("points", [])
    if not isinstance(raw_points, list):
        raise LimitSetError(label, "points", raw_points, "an array of tables [[points]]", "not an array")
    seen_points: set[str] = set()
    for i, rp in enumerate(raw_points):
        path = f"points[{i}]"
        _check_keys(label, path, rp, _POINT_KEYS)
        pname = _text(label, f"{path}.name", _require(label, path, rp, "name", "non-empty text"))
        if not _NAME_RE.match(pname):
            raise LimitSetError(
                label, f"{path}.name", pname, "letters, digits and _ starting with a letter", "bad name"
            )
        if pname in seen_points:
            raise LimitSetError(
                label, f"{path}.name", pname, "a name not used before in this file", "duplicate point"
            )
        seen_points.add(pname)
        coords = [
            _number(
                label,
                f"{path}.{k}",
                _require(label, path, rp, k, f"a number in [-{_POINT_RANGE_M:g}, {_POINT_RANGE_M:g}] m"),
                -_POINT_RANGE_M,
                _POINT_RANGE_M,
                lo_open=False,
                unit="m",
            )
            for k in ("x_m", "y_m", "z_m")
        ]
        points.append(NamedPoint(pname, *coords))

    known = None
    if vessel_points is not None:
        known = set(vessel_points) | seen_points

    raw_limits = _require(
        label, "", mapping, "limits", "an array of tables [[limits]] with at least one entry"
    )
    if not isinstance(raw_limits, list) or not raw_limits:
        raise LimitSetError(
            label,
            "limits",
            raw_limits,
            "an array of tables [[limits]] with at least one entry",
            "empty or not an array",
        )
    limits = [_parse_limit(label, i, rl, known) for i, rl in enumerate(raw_limits)]
    keys: dict[str, int] = {}
    for i, lim in enumerate(limits):
        if lim.key in keys:
            raise LimitSetError(
                label,
                f"limits[{i}].key",
                lim.key,
                f"a key not used before (limits[{keys[lim.key]}] has it)",
                "duplicate limit key",
            )
        keys[lim.key] = i

    rz = mapping.get("zones", {})
    _check_keys(label, "zones", rz, _ZONE_KEYS)
    zones = ZoneSettings(
        synchronous_roll_band=_number(
            label, "zones.synchronous_roll_band", rz.get("synchronous_roll_band", 0.1), 0.0, 0.5
        ),
        parametric_roll_band=_number(
            label, "zones.parametric_roll_band", rz.get("parametric_roll_band", 0.1), 0.0, 0.5
        ),
        parametric_roll_wavelength_min=_number(
            label,
            "zones.parametric_roll_wavelength_min",
            rz.get("parametric_roll_wavelength_min", 0.5),
            0.0,
            10.0,
            lo_open=False,
        ),
        parametric_roll_wavelength_max=_number(
            label,
            "zones.parametric_roll_wavelength_max",
            rz.get("parametric_roll_wavelength_max", 2.0),
            0.0,
            10.0,
        ),
        min_system_hs=_number(
            label, "zones.min_system_hs_m", rz.get("min_system_hs_m", 1.0), 0.0, 30.0, lo_open=False, unit="m"
        ),
    )
    if zones.parametric_roll_wavelength_min >= zones.parametric_roll_wavelength_max:
        raise LimitSetError(
            label,
            "zones.parametric_roll_wavelength_max",
            zones.parametric_roll_wavelength_max,
            f"a number greater than parametric_roll_wavelength_min = "
            f"{zones.parametric_roll_wavelength_min:g}",
            "empty wavelength range",
        )

    ru = mapping.get("uncertainty", {})
    _check_keys(label, "uncertainty", ru, _UNC_KEYS)
    hs_k = _number(label, "uncertainty.hs_k", ru.get("hs_k", 1.0), 0.0, 5.0, lo_open=False)
    uncertainty = UncertaintySettings(hs_k=hs_k)

    ra = mapping.get("advice", {})
    _check_keys(label, "advice", ra, _ADVICE_KEYS)
    advice = AdviceWeights(
        heading=_number(
            label,
            "advice.heading_weight_per_deg",
            ra.get("heading_weight_per_deg", 1.0),
            0.0,
            1e3,
            lo_open=False,
        )
        * 180.0
        / math.pi,
        speed_loss=_number(
            label,
            "advice.speed_loss_weight_per_kn",
            ra.get("speed_loss_weight_per_kn", 3.0),
            0.0,
            1e3,
            lo_open=False,
        )
        / KNOT,
        speed_gain=_number(
            label,
            "advice.speed_gain_weight_per_kn",
            ra.get("speed_gain_weight_per_kn", 1.0),
            0.0,
            1e3,
            lo_open=False,
        )
        / KNOT,
        min_speed=_number(
            label, "advice.min_speed_kn", ra.get("min_speed_kn", 3.0), 0.0, 10.0, lo_open=False, unit="kn"
        )
        * KNOT,
    )
    return LimitSet(
        name=name,
        description=description,
        limits=tuple(limits),
        margin=margin,
        points=tuple(points),
        zones=zones,
        uncertainty=uncertainty,
        advice=advice,
        label=label,
    )


def limit_set_to_mapping(limit_set: LimitSet) -> dict:
    """The mapping that :func:`parse_limit_set` turns back into ``limit_set`` (for writing TOML).

    Values are written in the units they were given in; weights per degree and per knot.
    """
    out: dict = {"schema_version": SCHEMA_VERSION, "name": limit_set.name}
    if limit_set.description:
        out["description"] = limit_set.description
    out["margin"] = limit_set.margin
    if limit_set.points:
        out["points"] = [{"name": p.name, "x_m": p.x, "y_m": p.y, "z_m": p.z} for p in limit_set.points]
    limits = []
    for lim in limit_set.limits:
        d: dict = {
            "key": lim.key,
            "criterion": lim.criterion,
            "statistic": lim.statistic,
            "value": lim.value_in_unit,
            "unit": lim.unit,
        }
        if lim.exposure is not None:
            d["exposure_h"] = lim.exposure / 3600.0
        if lim.point is not None:
            d["point"] = lim.point
        d["label"] = lim.label
        d["source"] = lim.source
        limits.append(d)
    out["limits"] = limits
    z = limit_set.zones
    out["zones"] = {
        "synchronous_roll_band": z.synchronous_roll_band,
        "parametric_roll_band": z.parametric_roll_band,
        "parametric_roll_wavelength_min": z.parametric_roll_wavelength_min,
        "parametric_roll_wavelength_max": z.parametric_roll_wavelength_max,
        "min_system_hs_m": z.min_system_hs,
    }
    out["uncertainty"] = {"hs_k": limit_set.uncertainty.hs_k}
    a = limit_set.advice
    out["advice"] = {
        "heading_weight_per_deg": a.heading * math.pi / 180.0,
        "speed_loss_weight_per_kn": a.speed_loss * KNOT,
        "speed_gain_weight_per_kn": a.speed_gain * KNOT,
        "min_speed_kn": a.min_speed / KNOT,
    }
    return out
