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
}
_VESSEL_REQUIRED = ("name", "lpp_m", "beam_m", "max_speed_kn")
_SIGN_KEYS = ("roll_sign", "pitch_sign", "heave_sign", "acc_x_sign", "acc_y_sign", "acc_z_sign")
_SENSOR_KEYS = ("x_m", "y_m", "z_m", *_SIGN_KEYS)
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

    s = rd.table(doc["motion_sensor"], "motion_sensor", _SENSOR_KEYS, ("x_m", "y_m", "z_m"))
    sensor = MotionSensor(
        *rd.position(s, "motion_sensor", lpp, beam), *(rd.sign(s, "motion_sensor", k) for k in _SIGN_KEYS)
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
    )


def load_condition_raos(
    vessel: Vessel, condition: str | LoadingCondition, *, speeds=None, headings=None, omegas=None
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

    Returns
    -------
    estimator.rao.RAOTable

    Raises
    ------
    VesselFileError
        No table and no block coefficient, or no grid for the estimate.
    onboard.formats.raofile.RaoFileError
        The stored table is malformed.
    """
    from onboard.formats.raofile import read_rao_csv

    cond = vessel.condition(condition) if isinstance(condition, str) else condition
    if cond.rao_table is not None:
        return read_rao_csv(cond.rao_table, name=cond.name)
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
