"""Tests for estimator.partition: watershed partitioning of a directional spectrum into wave systems.

Sources named beside each check:

* Hs = 4·sqrt(m0) and additivity of m0 over disjoint partitions (definition; docs/conventions.md), so the
  partition heights add in quadrature to the total (as for Ochi–Hubble systems, criteria §5.3);
* circular mean direction atan2(b1, a1) and spread sqrt(2(1 − r1)) (Kuik et al. 1988; brief §5 item 8); for
  cos-2s spreading r1 = s/(s+1), so the spread is sqrt(2/(s+1)) (criteria §5.4 [D]: s = 10 → 24.43°);
* the JONSWAP mean period T1/Tp = 0.7303 + 0.04936γ − 0.006556γ² + 0.0003610γ³ (DNV-RP-C205 fit,
  criteria §5.2: Hs 5, Tp 10, γ 3.3 → T1 = 8.344 s);
* watershed on a periodic direction axis (Gerling 1992; Hanson & Phillips 2001).
"""

import numpy as np
import pytest

from estimator.forward import SpectralGrid
from estimator.partition import partition, system_parameters, watershed
from estimator.spectra import jonswap, spreading_cos2s

DEG = np.pi / 180.0


def _grid(n_omega=40, n_beta=36, omega_min=0.2, omega_max=2.2):
    return SpectralGrid.default(n_omega=n_omega, omega_min=omega_min, omega_max=omega_max, n_beta=n_beta)


def _system(g, hs, tp, direction, s, gamma=3.3):
    return jonswap(g.omega, hs, tp, gamma)[:, None] * spreading_cos2s(g.beta, direction, s)[None, :]


def _hs(g, d):
    return 4 * np.sqrt((d * g.d_omega[:, None] * g.d_beta).sum())


def _circ_deg(a, b):
    return abs(np.degrees(np.angle(np.exp(1j * (a - b)))))


def test_system_parameters_of_one_jonswap_cos2s_sea():
    # Fine grid: 400 frequency cells over 0.05-6 rad/s and 360 directions.
    edges = np.linspace(0.05, 6.0, 401)
    g = SpectralGrid(0.5 * (edges[1:] + edges[:-1]), edges, np.arange(360) * DEG)
    d = _system(g, 5.0, 10.0, 250 * DEG, 10.0)
    p = system_parameters(d, g.omega, g.beta, g.d_omega, g.d_beta)
    assert p.hs == pytest.approx(_hs(g, d), rel=1e-12)  # 4·sqrt(m0), definition
    assert p.hs == pytest.approx(5.006, abs=0.01)  # criteria §5.2 [D]: Hm0 from m0 of JONSWAP(5, 10, 3.3)
    assert p.tp == pytest.approx(10.0, rel=0.01)  # peak cell (Δω ≈ 0.015 rad/s at ω_p = 0.628)
    assert p.tm01 == pytest.approx(8.344, rel=3e-3)  # criteria §5.2 [D] / DNV-RP-C205 T1 fit
    assert _circ_deg(p.direction, 250 * DEG) < 1e-6  # symmetric spreading: mean = mode
    assert np.degrees(p.spread) == pytest.approx(24.43, abs=0.02)  # criteria §5.4 [D], s = 10
    assert p.energy_share == 1.0


def test_system_parameters_of_an_empty_spectrum():
    g = _grid(8, 8)
    p = system_parameters(np.zeros(g.shape), g.omega, g.beta, g.d_omega, g.d_beta)
    assert p.hs == 0.0 and p.energy_share == 0.0 and np.isnan(p.tp)


def test_watershed_labels_peaks_and_wraps_in_direction():
    # Gerling (1992): every cell climbs to its highest neighbour; direction is periodic, frequency is not.
    k_n, l_n = 12, 16
    k = np.arange(k_n)[:, None]
    l_ = np.arange(l_n)[None, :]
    ldist = np.minimum(l_, l_n - l_)  # circular distance to direction 0
    one = np.exp(-((k - 5) ** 2) / 4.0 - ldist**2 / 4.0)  # a single peak sitting across 0/360
    lab = watershed(one)
    assert np.unique(lab).tolist() == [0]
    l8 = np.abs(l_ - 8)
    two = one + 0.5 * np.exp(-((k - 9) ** 2) / 2.0 - l8**2 / 2.0)
    lab2 = watershed(two)
    assert np.unique(lab2).tolist() == [0, 1]
    assert lab2[5, 0] == 0 and lab2[9, 8] == 1  # label 0 is the higher peak
    assert lab2[5, 15] == lab2[5, 1] == 0  # the first peak's cells on both sides of 0°


@pytest.fixture(scope="module")
def two_systems():
    g = _grid()
    swell = _system(g, 2.5, 14.0, 30 * DEG, 15.0, gamma=3.0)
    wind = _system(g, 3.0, 7.0, 200 * DEG, 5.0, gamma=3.3)
    return g, swell, wind


def test_two_separated_systems_give_two_partitions(two_systems):
    g, swell, wind = two_systems
    total = swell + wind
    labels, systems = partition(total, g.omega, g.beta, g.d_omega, g.d_beta)
    assert len(systems) == 2
    assert labels.shape == g.shape and set(np.unique(labels)) == {0, 1}
    hs_tot = _hs(g, total)
    # m0 is additive over disjoint partitions (definition), so the heights add in quadrature exactly
    assert np.sqrt(sum(s.hs**2 for s in systems)) == pytest.approx(hs_tot, rel=1e-12)
    assert sum(s.energy_share for s in systems) == pytest.approx(1.0, rel=1e-12)
    assert systems[0].energy_share >= systems[1].energy_share  # ordered by energy
    by_tp = sorted(systems, key=lambda s: -s.tp)
    for got, ref, tp, direction in ((by_tp[0], swell, 14.0, 30), (by_tp[1], wind, 7.0, 200)):
        assert got.hs == pytest.approx(_hs(g, ref), rel=0.05)  # the tails of the other system leak in
        assert got.tp == pytest.approx(tp, rel=0.06)  # one cell of the geometric grid is 5.6 % wide
        assert _circ_deg(got.direction, direction * DEG) < 5.0


def test_single_system_gives_one_partition(two_systems):
    g, swell, wind = two_systems
    for sea, tp, direction in ((swell, 14.0, 30), (wind, 7.0, 200)):
        _, systems = partition(sea, g.omega, g.beta, g.d_omega, g.d_beta)
        assert len(systems) == 1
        assert systems[0].hs == pytest.approx(_hs(g, sea), rel=1e-12)
        assert systems[0].tp == pytest.approx(tp, rel=0.06)
        assert _circ_deg(systems[0].direction, direction * DEG) < 1.0


def test_close_peaks_are_merged_and_the_count_is_capped():
    g = _grid()
    # Two peaks 20° and 10 % in period apart are one wave system (Hanson & Phillips 2001 merge peaks that
    # are not separated by a significant trough); defaults merge within 40° and a period ratio of 1.25.
    a = _system(g, 3.0, 10.0, 100 * DEG, 40.0)
    b = _system(g, 2.0, 11.0, 120 * DEG, 40.0)
    _, systems = partition(a + b, g.omega, g.beta, g.d_omega, g.d_beta)
    assert len(systems) == 1
    assert systems[0].hs == pytest.approx(_hs(g, a + b), rel=1e-12)
    # three well-separated systems, capped at two
    c = _system(g, 2.5, 6.0, 280 * DEG, 10.0)
    d = _system(g, 2.0, 15.0, 190 * DEG, 20.0)
    sea = a + c + d
    _, three = partition(sea, g.omega, g.beta, g.d_omega, g.d_beta)
    assert len(three) == 3
    _, capped = partition(sea, g.omega, g.beta, g.d_omega, g.d_beta, max_systems=2)
    assert len(capped) == 2
    assert np.sqrt(sum(s.hs**2 for s in capped)) == pytest.approx(_hs(g, sea), rel=1e-12)


def test_small_partition_is_merged():
    # A system holding less than min_share of the energy is not reported on its own.
    g = _grid()
    big = _system(g, 4.0, 10.0, 0.0, 10.0)
    tiny = _system(g, 0.8, 6.0, 180 * DEG, 10.0)  # (0.8/4)² = 4 % of m0
    _, systems = partition(big + tiny, g.omega, g.beta, g.d_omega, g.d_beta, min_share=0.08)
    assert len(systems) == 1
    _, systems = partition(big + tiny, g.omega, g.beta, g.d_omega, g.d_beta, min_share=0.01)
    assert len(systems) == 2


def test_empty_spectrum_has_no_system():
    g = _grid(8, 8)
    labels, systems = partition(np.zeros(g.shape), g.omega, g.beta, g.d_omega, g.d_beta)
    assert systems == [] and labels.shape == g.shape
