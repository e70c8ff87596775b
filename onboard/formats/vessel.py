"""Read and validate the vessel file (TOML, docs/vessel.md) into frozen dataclasses in SI units.

Schema (every key below is allowed; any other key is rejected with the list of allowed keys):

.. code-block:: toml

    [vessel]
    name = "Example Trader"      # required, non-empty (invented in demo data)
    lpp_m = 180.0                # required, length between perpendiculars, 10..500 m
    beam_m = 30.0                # required, moulded breadth, 2..80 m, < lpp_m
    max_speed_kn = 16.0          # required, 0 < v <= 50 kn: top of the advised speed range
    depth_m = 16.0               # optional, moulded depth, 1..60 m
    description = "..."          # optional free text
    ship_type = "container"      # optional, "container" or "other" (speed loss in waves, Kwon 2008)
    points_draft_m = 10.0        # optional, the mean draft (even keel) at which the z_m of the points
                                 #   are given; each condition moves them to its own waterline
                                 #   (default: z_m is above each condition's mean waterline)
    midship_coefficient = 0.98   # optional, C_M, 0.5..1 (MSC.1/Circ.1627 parametric roll level 1)
    bilge_keel_area_m2 = 60.0    # optional, total projected bilge-keel area A_k, 0..2000 m2
    waterplane_draft_m = [6.0, 8.0, 10.0, 12.0]          # optional, both or neither: ascending
    waterplane_inertia_m4 = [2.1e5, 2.3e5, 2.6e5, 3.0e5] #   drafts and transverse waterplane
                                 #   moments of inertia about the centreline (even keel)
    calm_water_speed_kn = [10.0, 14.0, 18.0]        # optional, all five or none: calm-water resistance
    calm_water_resistance_kn = [300.0, 600.0, 1100.0] #   curve (speeds ascending, resistance in kN),
    available_power_kw = 20000.0                    #   available brake power, quasi-propulsive
    propulsive_efficiency = 0.65                    #   efficiency eta_D and L_BWL (bow on the waterline
    bow_length_m = 25.0                             #   to 95 % of the breadth): attainable speed in waves

    [motion_sensor]              # required: where roll/pitch/heave are measured, body axes [m]
    x_m = 0.0                    # forward of midship (Lpp/2), |x| <= 0.6 Lpp
    y_m = 0.0                    # to port, |y| <= 0.75 B
    z_m = 10.0                   # above the calm waterline, -30..80 m
    roll_sign = 1                # optional, +1 or -1: multiply the logged roll by this to get
    pitch_sign = 1               #   the sensor convention of docs/conventions.md (a sensor whose
    heave_sign = 1               #   signs differ is mapped here, not by editing logs)
    acc_x_sign = 1               # optional, same for the three accelerations
    acc_y_sign = 1
    acc_z_sign = 1
    acceleration_frame = "body"  # optional: "body" = specific force in hull-fixed axes, static gravity
                                 #   removed (a strapdown accelerometer); "earth" = attitude-compensated
                                 #   accelerations, gravity removed (estimator.sensorframe)
    mounting_yaw_deg = 0         # optional: the sensor's x axis this far clockwise from the bow, 0 to
                                 #   below 360 (most often 0, 90, 180 or 270; applied after the signs above)

    [[points]]                   # optional, named locations where limits may apply (unique names)
    name = "bridge"
    x_m = 60.0                   # same ranges as the motion sensor
    y_m = 0.0
    z_m = 25.0

    [[conditions]]               # required, one or more, unique names
    name = "full load"
    draft_m = 10.0               # required, mean draft, 0.5..30 m
    gm_m = 1.8                   # required, transverse GM (free-surface corrected), 0.05..15 m
    roll_period_s = 16.0         # required, natural roll period, 3..60 s
    rao_table = "raos/full.csv"  # optional, RAO table (docs/rao-csv.md), relative to this file;
                                 #   without it the RAOs are estimated from main particulars
    limits = "limits/full.toml"  # optional, limit set file, relative to this file
    block_coefficient = 0.75     # optional, C_B at this draft, 0.35..0.9
    kg_m = 9.5                   # optional, centre of gravity above keel, 0.5..40 m
    lwl_m = 182.0                # optional, waterline length, 10..550 m
    displacement_t = 38000.0     # optional, displacement [t], > 0
    trim_m = 0.5                 # optional, trim (+ by the stern), |trim| <= 10 m
    freeboard_bow_m = 8.0        # optional, freeboard at the forward perpendicular, 0..40 m
    roll_damping_ratio = 0.05    # optional, equivalent linear roll damping ratio, 0.005..0.5
    description = "..."          # optional free text

Ranges are plausibility checks for merchant ships (project choices) that catch unit slips
(feet for metres, knots for m/s, degrees for radians); they are not class or statutory limits.
The vessel file describes the ship for the advice only; it does not replace the ship's approved
stability information or loading computer.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

from onboard.formats.units import kn_to_ms

__all__ = [
    "VesselFileError",
    "NamedPoint",
    "MotionSensor",
    "LoadingCondition",
    "Vessel",
    "load_vessel",
    "load_condition_raos",
    "estimate_condition_raos",
]


class VesselFileError(ValueError):
    """The vessel file is malformed; the message names file, key, value and what is allowed."""


@dataclass(frozen=True)
class NamedPoint:
    """A named location in ITTC body axes (origin midship, centreline, calm waterline)."""

    name: str
    x: float
    """Forward of midship [m]."""
    y: float
    """To port [m]."""
    z: float
    """Above the calm waterline [m]."""

    @property
    def xyz(self) -> tuple[float, float, float]:
        """(x, y, z) [m]."""
        return (self.x, self.y, self.z)


@dataclass(frozen=True)
class MotionSensor:
    """Motion sensor position and the sign mapping of its channels."""

    x: float
    """Forward of midship [m]."""
    y: float
    """To port [m]."""
    z: float
    """Above the calm waterline [m]."""
    roll_sign: int = 1
    """Multiplier turning the logged roll into the sensor convention (docs/conventions.md)."""
    pitch_sign: int = 1
    """Multiplier turning the logged pitch into + bow up."""
    heave_sign: int = 1
    """Multiplier turning the logged heave into + up."""
    acc_x_sign: int = 1
    """Multiplier for acc_x (x forward)."""
    acc_y_sign: int = 1
    """Multiplier for acc_y (y starboard)."""
    acc_z_sign: int = 1
    """Multiplier for acc_z (z down)."""
    acceleration_frame: str = "body"
    """"body" (specific force in hull-fixed axes, static gravity removed) or "earth" (attitude-compensated
    accelerations, gravity removed); see :mod:`estimator.sensorframe`."""
    mounting_yaw: float = 0.0
    """Angle of the sensor's x axis clockwise from the bow [rad]: 0, π/2, π or 3π/2."""

    @property
    def xyz(self) -> tuple[float, float, float]:
        """(x, y, z) [m]."""
        return (self.x, self.y, self.z)

    @property
    def signs(self) -> dict[str, int]:
        """Sign multipliers per voyage-log channel name (``roll_deg``, ``pitch_deg``, ...)."""
        return {
            "roll_deg": self.roll_sign,
            "pitch_deg": self.pitch_sign,
            "heave_m": self.heave_sign,
            "acc_x_ms2": self.acc_x_sign,
            "acc_y_ms2": self.acc_y_sign,
            "acc_z_ms2": self.acc_z_sign,
        }


@dataclass(frozen=True)
class LoadingCondition:
    """One loading / cargo condition, SI units."""

    name: str
    draft: float
    """Mean draft [m]."""
    gm: float
    """Transverse metacentric height, free-surface corrected [m]."""
    roll_period: float
    """Natural roll period [s]."""
    rao_table: Path | None = None
    """RAO table CSV, resolved relative to the vessel file; None = estimate from particulars."""
    limits: Path | None = None
    """Limit-set TOML, resolved relative to the vessel file; None = the service default."""
    cb: float | None = None
    """Block coefficient at this draft [-]."""
    kg: float | None = None
    """Centre of gravity above keel [m]."""
    lwl: float | None = None
    """Waterline length [m]."""
    displacement: float | None = None
    """Displacement [kg]."""
    trim: float | None = None
    """Trim, + by the stern [m]."""
    freeboard_bow: float | None = None
    """Freeboard at the forward perpendicular [m]."""
    zeta_roll: float | None = None
    """Equivalent linear roll damping ratio [-]."""
    description: str = ""


@dataclass(frozen=True)
class Vessel:
    """The ship: main particulars, motion sensor, named points and loading conditions (SI)."""

    name: str
    lpp: float
    """Length between perpendiculars [m]."""
    beam: float
    """Moulded breadth [m]."""
    max_speed: float
    """Top of the advised speed range [m/s]."""
    motion_sensor: MotionSensor
    points: tuple[NamedPoint, ...]
    conditions: tuple[LoadingCondition, ...]
    depth: float | None = None
    """Moulded depth [m]."""
    description: str = ""
    source: Path | None = None
    """The file this was read from."""
    ship_type: str = "other"
    """"container" or "other"."""
    points_draft: float | None = None
    """Mean draft at which the heights of the points are given [m] (None: each condition's own)."""
    midship_coefficient: float | None = None
    """Midship section coefficient C_M [-]."""
    bilge_keel_area: float = 0.0
    """Total projected bilge-keel area [m²]."""
    waterplane_draft: tuple[float, ...] = ()
    """Drafts of the waterplane-inertia table [m], ascending."""
    waterplane_inertia: tuple[float, ...] = ()
    """Transverse waterplane moments of inertia about the centreline at those drafts [m⁴]."""
    calm_water_speed: tuple[float, ...] = ()
    """Speeds of the calm-water resistance curve [m/s]."""
    calm_water_resistance: tuple[float, ...] = ()
    """Calm-water resistance at those speeds [N]."""
    available_power: float | None = None
    """Available brake power [W]."""
    propulsive_efficiency: float | None = None
    """Quasi-propulsive efficiency η_D [-]."""
    bow_length: float | None = None
    """L_BWL, bow on the waterline to 95 % of the breadth [m]."""

    def condition(self, name: str) -> LoadingCondition:
        """The loading condition called ``name``.

        Raises
        ------
        VesselFileError
            Unknown name; the message lists the known ones.
        """
        for c in self.conditions:
            if c.name == name:
                return c
        known = ", ".join(repr(c.name) for c in self.conditions)
        raise VesselFileError(f"{self.source or self.name}: no loading condition {name!r}; known: {known}")

    def point(self, name: str) -> NamedPoint:
        """The named point called ``name`` (raises VesselFileError listing the known names)."""
        for p in self.points:
            if p.name == name:
                return p
        known = ", ".join(repr(p.name) for p in self.points) or "none"
        raise VesselFileError(f"{self.source or self.name}: no point {name!r}; known: {known}")

    def points_mapping(self) -> dict[str, tuple[float, float, float]]:
        """Named points as {name: (x, y, z)} [m] (the form advisor.limits takes)."""
        return {p.name: p.xyz for p in self.points}


# ---------------------------------------------------------------------------------------- reading

_VESSEL_KEYS = {
    "name": ("text", None),
    "lpp_m": ("float", (10.0, 500.0)),
    "beam_m": ("float", (2.0, 80.0)),
    "max_speed_kn": ("float", (0.0, 50.0)),
    "depth_m": ("float", (1.0, 60.0)),
    "description": ("text", None),
    "ship_type": ("text", None),
    "points_draft_m": ("float", (0.5, 30.0)),
    "midship_coefficient": ("float", (0.5, 1.0)),
    "bilge_keel_area_m2": ("float", (0.0, 2000.0)),
    "waterplane_draft_m": ("array", None),
    "waterplane_inertia_m4": ("array", None),
    "calm_water_speed_kn": ("array", None),
    "calm_water_resistance_kn": ("array", None),
    "available_power_kw": ("float", (1.0, 200000.0)),
    "propulsive_efficiency": ("float", (0.2, 0.9)),
    "bow_length_m": ("float", (1.0, 200.0)),
}
_POWER_KEYS = ("calm_water_speed_kn", "calm_water_resistance_kn", "available_power_kw", "propulsive_efficiency",
               "bow_length_m")
_VESSEL_REQUIRED = ("name", "lpp_m", "beam_m", "max_speed_kn")
_SIGN_KEYS = ("roll_sign", "pitch_sign", "heave_sign", "acc_x_sign", "acc_y_sign", "acc_z_sign")
_SENSOR_KEYS = ("x_m", "y_m", "z_m", *_SIGN_KEYS, "acceleration_frame", "mounting_yaw_deg")
_POINT_KEYS = ("name", "x_m", "y_m", "z_m")
_CONDITION_KEYS = {
    "name": ("text", None),
    "draft_m": ("float", (0.5, 30.0)),
    "gm_m": ("float", (0.05, 15.0)),
    "roll_period_s": ("float", (3.0, 60.0)),
    "rao_table": ("path", None),
    "limits": ("path", None),
    "block_coefficient": ("float", (0.35, 0.9)),
    "kg_m": ("float", (0.5, 40.0)),
    "lwl_m": ("float", (10.0, 550.0)),
    "displacement_t": ("float", (1.0, 1.0e6)),
    "trim_m": ("float", (-10.0, 10.0)),
    "freeboard_bow_m": ("float", (0.0, 40.0)),
    "roll_damping_ratio": ("float", (0.005, 0.5)),
    "description": ("text", None),
}
_CONDITION_REQUIRED = ("name", "draft_m", "gm_m", "roll_period_s")
_TOP_KEYS = ("vessel", "motion_sensor", "points", "conditions")


class _Reader:
    def __init__(self, path: Path):
        self.path = path

    def fail(self, key: str, value, problem: str, allowed: str) -> VesselFileError:
        val = "" if value is _MISSING else f" = {value!r}"
        return VesselFileError(f"{self.path}: {key}{val}: {problem}; allowed: {allowed}")

    def table(self, data, key: str, allowed_keys, required) -> dict:
        if not isinstance(data, dict):
            raise self.fail(key, data, "must be a table", f"a TOML table [{key}]")
        unknown = sorted(set(data) - set(allowed_keys))
        if unknown:
            raise self.fail(f"{key}.{unknown[0]}", data[unknown[0]], "unknown key", ", ".join(allowed_keys))
        for r in required:
            if r not in data:
                raise self.fail(
                    f"{key}.{r}", _MISSING, "missing required key", ", ".join(required) + " required"
                )
        return data

    def number(self, data, key: str, name: str, lo: float, hi: float, *, lo_open=False) -> float:
        v = data[name]
        full = f"{key}.{name}"
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            raise self.fail(full, v, "must be a number", f"a number in [{lo:g}, {hi:g}]")
        v = float(v)
        if not math.isfinite(v) or v < lo or v > hi or (lo_open and v == lo):
            bracket = "(" if lo_open else "["
            raise self.fail(full, v, "out of range", f"{bracket}{lo:g}, {hi:g}]")
        return v

    def text(self, data, key: str, name: str, *, nonempty=True) -> str:
        v = data[name]
        if not isinstance(v, str) or (nonempty and not v.strip()):
            raise self.fail(f"{key}.{name}", v, "must be non-empty text", "a quoted string")
        return v.strip()

    def sign(self, data, key: str, name: str) -> int:
        v = data.get(name, 1)
        if isinstance(v, bool) or v not in (1, -1):
            raise self.fail(f"{key}.{name}", v, "must be +1 or -1", "1 or -1")
        return int(v)

    def position(self, data, key: str, lpp: float, beam: float) -> tuple[float, float, float]:
        x = self.number(data, key, "x_m", -0.6 * lpp, 0.6 * lpp)
        y = self.number(data, key, "y_m", -0.75 * beam, 0.75 * beam)
        z = self.number(data, key, "z_m", -30.0, 80.0)
        return x, y, z


class _Missing:
    def __repr__(self):
        return "<missing>"


_MISSING = _Missing()


def load_vessel(path) -> Vessel:
    """Read and validate a vessel TOML file (docs/vessel.md; schema in the module docstring).

    Parameters
    ----------
    path : str or os.PathLike
        The TOML file. Relative ``rao_table`` and ``limits`` paths are resolved against its folder.
        The RAO tables are NOT read here (see :func:`load_condition_raos`); only their existence
        is checked.

    Returns
    -------
    Vessel
        Frozen, SI units (m, m/s, s, kg).

    Raises
    ------
    VesselFileError
        Naming the file, the key (e.g. ``conditions[1].gm_m``), the value and what is allowed:
        unreadable file or TOML syntax, missing or unknown keys, wrong types, values out of range,
        repeated names, missing RAO table files.
    """
    path = Path(path)
    rd = _Reader(path)
    try:
        with open(path, "rb") as fh:
            doc = tomllib.load(fh)
    except OSError as exc:
        raise VesselFileError(f"{path}: cannot open vessel file: {exc.strerror or exc}") from exc
    except tomllib.TOMLDecodeError as exc:
        raise VesselFileError(f"{path}: not valid TOML: {exc}") from exc

    unknown = sorted(set(doc) - set(_TOP_KEYS))
    if unknown:
        raise rd.fail(unknown[0], doc[unknown[0]], "unknown top-level key", ", ".join(_TOP_KEYS))
    for k in ("vessel", "motion_sensor", "conditions"):
        if k not in doc:
            raise rd.fail(
                k, _MISSING, "missing required section", "[vessel], [motion_sensor], [[conditions]]"
            )

    v = rd.table(doc["vessel"], "vessel", tuple(_VESSEL_KEYS), _VESSEL_REQUIRED)
    name = rd.text(v, "vessel", "name")
    lpp = rd.number(v, "vessel", "lpp_m", *_VESSEL_KEYS["lpp_m"][1])
    beam = rd.number(v, "vessel", "beam_m", *_VESSEL_KEYS["beam_m"][1])
    if beam >= lpp:
        raise rd.fail("vessel.beam_m", beam, f"must be smaller than lpp_m = {lpp:g}", "beam_m < lpp_m")
    max_speed_kn = rd.number(v, "vessel", "max_speed_kn", *_VESSEL_KEYS["max_speed_kn"][1], lo_open=True)
    depth = rd.number(v, "vessel", "depth_m", *_VESSEL_KEYS["depth_m"][1]) if "depth_m" in v else None
    description = rd.text(v, "vessel", "description", nonempty=False) if "description" in v else ""
    extra = {}
    if "ship_type" in v:
        extra["ship_type"] = rd.text(v, "vessel", "ship_type")
        if extra["ship_type"] not in ("container", "other"):
            raise rd.fail("vessel.ship_type", extra["ship_type"], "unknown ship type", '"container" or "other"')
    for k, field_name in (("points_draft_m", "points_draft"), ("midship_coefficient", "midship_coefficient"),
                          ("bilge_keel_area_m2", "bilge_keel_area")):
        if k in v:
            extra[field_name] = rd.number(v, "vessel", k, *_VESSEL_KEYS[k][1])
    def table(xk: str, yk: str, unit: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
        xs, ys = v[xk], v[yk]
        ok = all(isinstance(a, list) and len(a) >= 2 and all(isinstance(x, (int, float)) and not isinstance(x, bool)
                                                               and math.isfinite(x) and x > 0 for x in a) for a in (xs, ys))
        if not ok or len(xs) != len(ys) or any(b <= a for a, b in zip(xs, xs[1:])):
            raise rd.fail(f"vessel.{xk}", xs, "not a usable table",
                          f"{xk} and {yk}: two arrays of the same length >= 2 of positive numbers, "
                          f"the first strictly ascending [{unit}]")
        return tuple(float(x) for x in xs), tuple(float(y) for y in ys)

    if ("waterplane_draft_m" in v) != ("waterplane_inertia_m4" in v):
        k = "waterplane_draft_m" if "waterplane_draft_m" in v else "waterplane_inertia_m4"
        raise rd.fail(f"vessel.{k}", v[k], "given without its pair", "both waterplane_draft_m and waterplane_inertia_m4, or neither")
    if "waterplane_draft_m" in v:
        extra["waterplane_draft"], extra["waterplane_inertia"] = table("waterplane_draft_m", "waterplane_inertia_m4", "m, m4")
    given = [k for k in _POWER_KEYS if k in v]
    if given and len(given) != len(_POWER_KEYS):
        missing = [k for k in _POWER_KEYS if k not in v]
        raise rd.fail(f"vessel.{missing[0]}", _MISSING, "missing: the power keys come all together", ", ".join(_POWER_KEYS))
    if given:
        spd, res = table("calm_water_speed_kn", "calm_water_resistance_kn", "kn, kN")
        extra["calm_water_speed"] = tuple(float(kn_to_ms(x)) for x in spd)
        extra["calm_water_resistance"] = tuple(x * 1000.0 for x in res)
        extra["available_power"] = rd.number(v, "vessel", "available_power_kw", *_VESSEL_KEYS["available_power_kw"][1]) * 1000.0
        extra["propulsive_efficiency"] = rd.number(v, "vessel", "propulsive_efficiency", *_VESSEL_KEYS["propulsive_efficiency"][1])
        extra["bow_length"] = rd.number(v, "vessel", "bow_length_m", *_VESSEL_KEYS["bow_length_m"][1])

    s = rd.table(doc["motion_sensor"], "motion_sensor", _SENSOR_KEYS, ("x_m", "y_m", "z_m"))
    frame = s.get("acceleration_frame", "body")
    if frame not in ("body", "earth"):
        raise rd.fail("motion_sensor.acceleration_frame", frame, "unknown frame", "'body' or 'earth'")
    mounting = s.get("mounting_yaw_deg", 0)
    if (isinstance(mounting, bool) or not isinstance(mounting, (int, float)) or not math.isfinite(mounting)
            or not 0 <= mounting < 360):
        raise rd.fail(
            "motion_sensor.mounting_yaw_deg", mounting, "not a mounting angle",
            "degrees clockwise from the bow, 0 to below 360 (0, 90, 180 or 270 for most sensors)"
        )
    sensor = MotionSensor(
        *rd.position(s, "motion_sensor", lpp, beam),
        *(rd.sign(s, "motion_sensor", k) for k in _SIGN_KEYS),
        acceleration_frame=frame,
        mounting_yaw=math.radians(mounting),
    )

    raw_points = doc.get("points", [])
    if not isinstance(raw_points, list):
        raise rd.fail("points", raw_points, "must be an array of tables", "[[points]] entries")
    points = []
    for i, p in enumerate(raw_points):
        key = f"points[{i}]"
        p = rd.table(p, key, _POINT_KEYS, _POINT_KEYS)
        pname = rd.text(p, key, "name")
        if any(q.name == pname for q in points):
            raise rd.fail(f"{key}.name", pname, "repeats an earlier point name", "unique point names")
        points.append(NamedPoint(pname, *rd.position(p, key, lpp, beam)))

    raw_conditions = doc["conditions"]
    if not isinstance(raw_conditions, list) or not raw_conditions:
        raise rd.fail(
            "conditions", raw_conditions, "must be a non-empty array of tables", "one or more [[conditions]]"
        )
    conditions = []
    for i, c in enumerate(raw_conditions):
        key = f"conditions[{i}]"
        c = rd.table(c, key, tuple(_CONDITION_KEYS), _CONDITION_REQUIRED)
        cname = rd.text(c, key, "name")
        if any(q.name == cname for q in conditions):
            raise rd.fail(f"{key}.name", cname, "repeats an earlier condition name", "unique condition names")
        num = {}
        for k, (kind, rng) in _CONDITION_KEYS.items():
            if kind == "float" and k in c:
                num[k] = rd.number(c, key, k, *rng)
        files = {}
        for k in ("rao_table", "limits"):
            if k in c:
                rel = rd.text(c, key, k)
                target = (path.parent / rel).resolve()
                if not target.is_file():
                    raise rd.fail(
                        f"{key}.{k}",
                        rel,
                        f"file not found (looked for {target})",
                        "a path to an existing file, relative to the vessel file",
                    )
                files[k] = target
        if num["draft_m"] >= (depth if depth is not None else math.inf):
            raise rd.fail(
                f"{key}.draft_m", num["draft_m"], f"not below depth_m = {depth:g}", "draft_m < depth_m"
            )
        if "lwl_m" in num and not 0.8 * lpp <= num["lwl_m"] <= 1.2 * lpp:
            raise rd.fail(
                f"{key}.lwl_m", num["lwl_m"], f"far from lpp_m = {lpp:g}", f"[{0.8 * lpp:g}, {1.2 * lpp:g}]"
            )
        conditions.append(
            LoadingCondition(
                name=cname,
                draft=num["draft_m"],
                gm=num["gm_m"],
                roll_period=num["roll_period_s"],
                rao_table=files.get("rao_table"),
                limits=files.get("limits"),
                cb=num.get("block_coefficient"),
                kg=num.get("kg_m"),
                lwl=num.get("lwl_m"),
                displacement=num["displacement_t"] * 1000.0 if "displacement_t" in num else None,
                trim=num.get("trim_m"),
                freeboard_bow=num.get("freeboard_bow_m"),
                zeta_roll=num.get("roll_damping_ratio"),
                description=rd.text(c, key, "description", nonempty=False) if "description" in c else "",
            )
        )
    return Vessel(
        name=name,
        lpp=lpp,
        beam=beam,
        max_speed=float(kn_to_ms(max_speed_kn)),
        motion_sensor=sensor,
        points=tuple(points),
        conditions=tuple(conditions),
        depth=depth,
        description=description,
        source=path,
        **extra,
    )


def load_condition_raos(
    vessel: Vessel, condition: str | LoadingCondition, *, speeds=None, headings=None, omegas=None,
    check: bool = True,
):
    """The RAO table of a loading condition: the stored CSV if the condition names one, otherwise
    an estimate from main particulars (:func:`estimator.hull.estimate_rao_table`).

    Parameters
    ----------
    vessel : Vessel
        The vessel.
    condition : str or LoadingCondition
        The condition (or its name).
    speeds, headings, omegas : array_like, optional
        Grid for the estimate [m/s, rad, rad/s]; required only when the condition has no table.
    check : bool
        Check a stored table for plausibility (default; ``False`` only for synthetic test tables).

    Returns
    -------
    estimator.rao.RAOTable

    Raises
    ------
    VesselFileError
        No table and no block coefficient, or no grid for the estimate.
    onboard.formats.raofile.RaoFileError
        The stored table is malformed or fails the plausibility checks
        (:func:`estimator.raocheck.check_rao_table`: units, long-wave limits, signs, symmetry).
    """
    from onboard.formats.raofile import read_rao_csv

    cond = vessel.condition(condition) if isinstance(condition, str) else condition
    if cond.rao_table is not None:
        return read_rao_csv(
            cond.rao_table, name=cond.name, check=check, lpp=vessel.lpp, t_roll=cond.roll_period
        )
    return estimate_condition_raos(vessel, cond, speeds, headings, omegas)


def estimate_condition_raos(vessel: Vessel, cond: LoadingCondition, speeds, headings, omegas):
    """RAO table of a condition estimated from main particulars (:func:`estimator.hull.estimate_rao_table`).

    Raises
    ------
    VesselFileError
        No block coefficient, or no grid.
    """
    where = vessel.source or vessel.name
    if cond.cb is None:
        raise VesselFileError(
            f"{where}: condition {cond.name!r} has no rao_table and no block_coefficient; allowed: give "
            f'rao_table = "path.csv" or block_coefficient (0.35..0.9) to estimate the RAOs'
        )
    if speeds is None or headings is None or omegas is None:
        raise VesselFileError(
            f"{where}: condition {cond.name!r} has no rao_table; "
            "pass speeds, headings and omegas to estimate one"
        )
    from estimator.hull import estimate_rao_table

    kwargs = {"t_roll": cond.roll_period, "kg": cond.kg, "lwl": cond.lwl, "name": cond.name}
    if cond.zeta_roll is not None:
        kwargs["zeta_roll"] = cond.zeta_roll
    return estimate_rao_table(
        vessel.lpp,
        vessel.beam,
        cond.draft,
        cond.cb,
        cond.gm,
        speeds=speeds,
        headings=headings,
        omegas=omegas,
        **kwargs,
    )
