"""Roll RAOs interpolated through a one-degree-of-freedom resonance model.

Near the roll resonance the roll RAO peaks at a fixed *encounter* frequency ω_e = ω₀, which moves in
absolute frequency ω with speed and heading (ω_e = ω − ω²U cos β/g). A table interpolated linearly in
speed and heading between grid points 6 kn and 15° apart blends two peaks at different ω and keeps
neither (the peak is lowered and widened). Dividing the tabulated roll by the linear 1-DOF response
factor 1/D(ω_e), D = 1 − (ω_e/ω₀)² + 2iζ·ω_e/ω₀, leaves the roll excitation per unit wave amplitude,
which is smooth in ω, β and U; that is what is interpolated, and D at the exact ω_e of the query is put
back. The same factorisation lets measured roll parameters replace the stored ones: the excitation is
kept and the denominator is taken with the identified natural period and damping.

Above the highest tabulated frequency the excitation is unknown (the table only tapers its last values),
and on the branch where the ship overtakes the waves (ω_e < 0) the resonance is met by short waves whose
roll excitation a wave-slope model overstates (no beam averaging); there the table's own values are kept
(with the stored/identified denominator ratio), because an excitation multiplied by the resonance factor
of overtaken short waves invented large roll responses to waves the hull barely feels (seen on both
benchmarks, issue 12: following-sea estimates with Tp 3.4 s).

References
----------
.. [1] Lewis, E.V. (ed.) (1989). Principles of Naval Architecture, 2nd ed., Vol. III, ch. 8 (linear
   single-degree-of-freedom roll: excitation moment over (C − ω_e²I + iω_e B)).
.. [2] IMO (2008). International Code on Intact Stability (2008 IS Code), Part A, 2.3.4 (roll period).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from estimator.constants import G
from estimator.rao import RAOTable

ROLL = 3  # index of roll in DOFS


def roll_denominator(omega_e, t_roll: float, zeta: float) -> np.ndarray:
    """D(ω_e) = 1 − r² + 2iζr, r = ω_e·T/(2π), for the signed encounter frequency ω_e [rad/s] [-].

    The 1-DOF roll response is the excitation divided by C·D (Lewis 1989): x = Re[H e^{iω_e t}],
    (C − ω_e² I + i ω_e B) H = M with ω₀² = C/I and 2ζω₀ = B/I.
    """
    r = np.asarray(omega_e, float) * t_roll / (2 * np.pi)
    return 1.0 - r**2 + 2j * zeta * r


@dataclass(frozen=True, eq=False)
class ResonanceTable:
    """An :class:`~estimator.rao.RAOTable` whose roll is interpolated through its resonance model.

    Parameters
    ----------
    smooth : RAOTable
        The table with roll multiplied by D(ω_e) of the stored condition (the smooth excitation part).
    t_roll, zeta : float
        Natural roll period [s] and damping ratio [-] used at the query.
    plain : RAOTable
        The stored table itself (used above its highest frequency).
    t_stored, zeta_stored : float
        The stored condition's natural roll period [s] and damping ratio [-].
    """

    smooth: RAOTable
    t_roll: float
    zeta: float
    plain: RAOTable
    t_stored: float
    zeta_stored: float

    @classmethod
    def from_table(cls, table: RAOTable, t_roll: float, zeta: float) -> ResonanceTable:
        """Factor the stored roll of ``table`` (condition's natural period ``t_roll`` [s], damping ratio
        ``zeta`` [-]) into excitation × 1/D."""
        s, b, w = np.meshgrid(table.speeds, table.headings, table.omegas, indexing="ij")
        we = w - w**2 * s * np.cos(b) / G
        values = table.values.copy()
        values[ROLL] = values[ROLL] * roll_denominator(we, t_roll, zeta)
        smooth = RAOTable(speeds=table.speeds, headings=table.headings, omegas=table.omegas, values=values,
                          name=table.name, source=table.source)
        return cls(smooth=smooth, t_roll=float(t_roll), zeta=float(zeta), plain=table,
                   t_stored=float(t_roll), zeta_stored=float(zeta))

    def with_roll(self, t_roll: float, zeta: float) -> ResonanceTable:
        """The same excitation with another natural period [s] and damping ratio [-] (identified roll)."""
        return ResonanceTable(self.smooth, float(t_roll), float(zeta), self.plain, self.t_stored,
                              self.zeta_stored)

    @property
    def speeds(self) -> np.ndarray:
        return self.smooth.speeds

    def __call__(self, omega, beta, speed, dofs=None) -> np.ndarray:
        """Complex RAOs (6 or len(dofs), ...) at (ω, β, U), as :meth:`RAOTable.__call__`."""
        out = self.smooth(omega, beta, speed)
        om, be, sp = np.broadcast_arrays(np.asarray(omega, float), np.asarray(beta, float),
                                         np.asarray(speed, float))
        we = om - om**2 * sp * np.cos(be) / G
        out[ROLL] = out[ROLL] / roll_denominator(we, self.t_roll, self.zeta)
        # above the table, and on the branch where the ship overtakes the waves (ω_e < 0: short waves
        # from astern whose |ω_e| can meet the resonance), the table's own values are kept
        above = (om > self.plain.omegas[-1]) | (we < 0)
        if above.any():
            ratio = (roll_denominator(we[above], self.t_stored, self.zeta_stored)
                     / roll_denominator(we[above], self.t_roll, self.zeta))
            out[ROLL][above] = self.plain(om[above], be[above], sp[above], dofs=("roll",))[0] * ratio
        if dofs is None:
            return out
        from estimator.rao import dof_indices

        return out[dof_indices(dofs)]
