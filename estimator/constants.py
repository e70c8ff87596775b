"""Physical constants and unit factors used by the core (SI inside).

Values: g = 9.81 m/s² and ρ = 1025 kg/m³ are the values used in DNV-RP-C205 (from memory) and
in common practice; 1 international knot = 1852 m / 3600 s
(exact, by definition of the nautical mile).
"""

G = 9.81
"""Acceleration of gravity [m/s²] (DNV-RP-C205 uses 9.81; common practice)."""

RHO_SEAWATER = 1025.0
"""Density of sea water [kg/m³] (common practice)."""

KNOT = 1852.0 / 3600.0
"""One international knot [m/s] (exact)."""

DOFS = ("surge", "sway", "heave", "roll", "pitch", "yaw")
"""Order of the six rigid-body motions everywhere in the core (ITTC numbering 1..6)."""
