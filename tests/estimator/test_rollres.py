"""estimator.rollres: roll RAOs interpolated through the 1-DOF resonance model.

Check values: the exact single-degree-of-freedom roll RAO (estimator.hull.roll_rao_1dof, the IS Code 2008
Part A 2.3 / Lewis 1989 PNA III ch. 8 model; an analytic expression) evaluated at the query point is the
truth; the table is the same expression tabulated on the coarse grid hydrodynamic codes usually deliver
(0.05 rad/s, 15°, 0/6/12/18 kn).
"""

import numpy as np
import pytest

from estimator.constants import KNOT
from estimator.hull import roll_rao_1dof
from estimator.rao import RAOTable
from estimator.rollres import ResonanceTable, roll_denominator

T_ROLL, ZETA = 16.0, 0.05
SPEEDS = np.array([0.0, 6.0, 12.0, 18.0]) * KNOT
HEADINGS = np.radians(np.arange(0.0, 360.0, 15.0))
OMEGAS = np.round(np.arange(0.20, 1.601, 0.05), 10)


@pytest.fixture(scope="module")
def table():
    s, b, w = np.meshgrid(SPEEDS, HEADINGS, OMEGAS, indexing="ij")
    values = np.zeros((6,) + s.shape, complex)
    values[2] = 1.0  # heave: any smooth motion, unchanged by the roll factorisation
    values[3] = roll_rao_1dof(w, b, s, T_ROLL, ZETA)
    return RAOTable(speeds=SPEEDS, headings=HEADINGS, omegas=OMEGAS, values=values)


@pytest.mark.parametrize("beta_deg, speed_kn", [(60.0, 9.0), (112.0, 3.0), (250.0, 15.0), (37.0, 14.0)])
def test_resonance_interpolation_keeps_the_roll_peak(table, beta_deg, speed_kn):
    beta, speed = np.radians(beta_deg), speed_kn * KNOT
    w = np.linspace(0.2, 1.0, 2001)
    exact = np.abs(roll_rao_1dof(w, beta, speed, T_ROLL, ZETA))
    res = np.abs(ResonanceTable.from_table(table, T_ROLL, ZETA)(w, beta, speed)[3])
    plain = np.abs(table(w, beta, speed)[3])
    # analytic 1-DOF peak kept within 1 % (the excitation -i k r sin(beta) is smooth; only its
    # interpolation error remains)
    assert res.max() == pytest.approx(exact.max(), rel=0.01)
    np.testing.assert_allclose(res, exact, rtol=0.02, atol=0.01 * exact.max())
    # the plain complex-linear table interpolation does worse at the peak (the reason for the model)
    assert abs(plain.max() / exact.max() - 1) > abs(res.max() / exact.max() - 1)


def test_other_motions_unchanged_and_roll_update(table):
    rt = ResonanceTable.from_table(table, T_ROLL, ZETA)
    w = np.linspace(0.2, 1.5, 50)
    np.testing.assert_allclose(rt(w, 1.0, 3.0)[2], table(w, 1.0, 3.0)[2])
    # another natural period and damping: the analytic 1-DOF RAO with those parameters (same excitation)
    new = rt.with_roll(18.0, 0.08)(w, np.radians(90.0), 0.0)[3]
    np.testing.assert_allclose(new, roll_rao_1dof(w, np.radians(90.0), 0.0, 18.0, 0.08), rtol=0.02, atol=1e-4)
    # |D| = 2 zeta at resonance (definition)
    assert abs(roll_denominator(2 * np.pi / T_ROLL, T_ROLL, ZETA)) == pytest.approx(2 * ZETA)


def test_above_the_table_the_plain_extrapolation_is_kept(table):
    # Above the highest tabulated frequency the excitation is unknown: the table's own (tapered)
    # extrapolation is used, so short overtaken waves with |omega_e| near the roll resonance get no
    # invented resonance amplification (module docstring; common practice: no extrapolation of
    # hydrodynamic data beyond the computed range)
    rt = ResonanceTable.from_table(table, T_ROLL, ZETA)
    w = np.linspace(1.61, 2.1, 30)
    np.testing.assert_allclose(rt(w, np.radians(30.0), 7.3)[3], table(w, np.radians(30.0), 7.3)[3])
