"""Geometry of a loading condition: points relative to its waterline, and the default limit set
built for the vessel in hand.

Heights. Body axes have their origin at the calm waterline (docs/conventions.md), and the waterline
moves with the loading condition. A vessel file gives the heights of its points at one mean draft
d_ref on even keel (``points_draft_m``; without it, at each condition's own mean draft). For a
condition of mean draft d and trim t (+ by the stern) the draft at x is d(x) = d − t·x/Lpp and a
point's height above that condition's waterline is

    z_c = z + (d_ref − d) + t·x/Lpp

(small trim angles; rigid hull). So the forefoot's depth (slamming: keel emergence) and the bow's
freeboard (deck wetness) follow the draft and trim of the condition: in ballast with trim by the
stern the forefoot is shallower and slamming far more likely (Ochi 1964).

The default limit set (:func:`default_limit_mapping`) holds the NORDFORSK (1987) merchant-ship
criteria with the length-dependent values interpolated at the vessel's Lpp, at points made from
the vessel's own particulars in this condition: the forward perpendicular (x = Lpp/2), the forefoot
(keel at 0.1·Lpp aft of the FP, the station of Ochi's slamming analysis; common practice), the bow
deck edge at the FP (height = the condition's bow freeboard, else depth − draft at the FP) and the
vessel's point named ``bridge``. A criterion whose point cannot be made is skipped and listed, not
fatal.

References
----------
.. [1] NORDFORSK (1987). *Assessment of Ship Performance in a Seaway*; as reproduced in Faltinsen,
   O. M. (1990), *Sea Loads on Ships and Offshore Structures*, Table 1.1 (from memory).
.. [2] Ochi, M. K. (1964). Prediction of occurrence and severity of ship slamming at sea. *Proc.
   5th Symposium on Naval Hydrodynamics*, Bergen (slamming at the forefoot, 0.1·L aft of the FP)
   (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

from advisor.criteria import nordforsk_limit_mapping

__all__ = ["Waterline", "default_limit_mapping", "FOREFOOT_FRACTION"]

FOREFOOT_FRACTION = 0.1
"""Forefoot station aft of the FP as a fraction of Lpp (Ochi 1964 analysis station; common practice)."""


@dataclass(frozen=True)
class Waterline:
    """The calm waterline of a loading condition.

    Attributes
    ----------
    lpp : float
        Length between perpendiculars [m].
    draft : float
        Mean draft (at midship) [m].
    trim : float
        Trim, + by the stern [m].
    reference_draft : float or None
        Mean draft (even keel) at which point heights are given [m]; None: at this condition's.
    """

    lpp: float
    draft: float
    trim: float = 0.0
    reference_draft: float | None = None

    def draft_at(self, x: float) -> float:
        """Draft at x (forward of midship) [m]."""
        return self.draft - self.trim * x / self.lpp

    def height(self, x: float, z: float) -> float:
        """Height above this waterline of a point given at (x, z) in the reference frame [m]."""
        ref = self.draft if self.reference_draft is None else self.reference_draft
        return z + (ref - self.draft) + self.trim * x / self.lpp

    def points(self, points: dict) -> dict:
        """``{name: (x, y, z)}`` moved to this waterline."""
        return {n: (float(x), float(y), self.height(x, z)) for n, (x, y, z) in points.items()}


def _free(name: str, taken) -> str:
    while name in taken:
        name += "_default"
    return name


def default_limit_mapping(
    *, lpp: float, waterline: Waterline, freeboard_bow: float | None, depth: float | None, vessel_points: dict,
    name: str,
) -> tuple[dict, tuple[str, ...]]:
    """The NORDFORSK (1987) default limit set for this vessel and condition, and what was skipped.

    Parameters
    ----------
    lpp : float
        Length between perpendiculars [m].
    waterline : Waterline
        The condition's waterline.
    freeboard_bow : float or None
        Freeboard at the FP in this condition [m].
    depth : float or None
        Moulded depth [m].
    vessel_points : dict of str to (x, y, z)
        The vessel's points, already moved to this waterline [m].
    name : str
        Name of the set.

    Returns
    -------
    (dict, tuple of str)
        Mapping for :func:`advisor.limits.parse_limit_set` (points in the condition's frame), and one
        plain sentence per skipped criterion.

    References
    ----------
    Module references.
    """
    taken = set(vessel_points)
    fp = _free("forward_perpendicular", taken)
    ff = _free("forefoot", taken | {fp})
    bow = _free("bow_deck", taken | {fp, ff})
    x_fp = lpp / 2.0
    x_ff = lpp / 2.0 - FOREFOOT_FRACTION * lpp
    fb = freeboard_bow
    if fb is None and depth is not None:
        fb = depth - waterline.draft_at(x_fp)
    bridge = "bridge" if "bridge" in vessel_points else None
    m = nordforsk_limit_mapping(lpp, fp=fp, bridge=bridge or "bridge", forefoot=ff, bow_deck=bow, name=name)
    points = [
        {"name": fp, "x_m": x_fp, "y_m": 0.0, "z_m": max(fb or 0.0, 0.0)},
        {"name": ff, "x_m": x_ff, "y_m": 0.0, "z_m": -waterline.draft_at(x_ff)},
    ]
    skipped = []
    keep = []
    labels = {
        fp: "at the forward perpendicular",
        ff: f"at the forefoot ({FOREFOOT_FRACTION:g} Lpp aft of the FP, keel)",
        bow: "at the bow deck edge (FP)",
        "bridge": "on the bridge",
    }
    for lim in m["limits"]:
        p = lim.get("point")
        if p == "bridge" and bridge is None:
            skipped.append(f"{lim['criterion'].replace('_', ' ')} on the bridge: the vessel file has no point named 'bridge'")
            continue
        if p == bow and not (fb is not None and fb > 0):
            skipped.append("deck wetness at the bow: the vessel file gives neither freeboard_bow_m nor depth_m")
            continue
        if p is not None:
            lim["label"] = f"{lim['criterion'].replace('_', ' ').capitalize()} {labels[p]} ({lim['statistic']})"
        keep.append(lim)
    if fb is not None and fb > 0:
        points.append({"name": bow, "x_m": x_fp, "y_m": 0.0, "z_m": fb})
    m["limits"] = keep
    m["points"] = points
    m["description"] = (
        "Built for this vessel and condition: NORDFORSK (1987) merchant-ship criteria interpolated at "
        f"Lpp = {lpp:g} m, points from its draft, trim and freeboard."
        + (" Skipped: " + "; ".join(skipped) + "." if skipped else "")
    )
    return m, tuple(skipped)
