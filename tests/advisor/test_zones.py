"""Tests of the MSC.1/Circ.1228 zones (advisor.zones).

Check values and their sources: ``tests/check_values.py`` (IMO MSC.1/Circ.1228 formulas quoted from
memory; the numbers are derived from those formulas, not published numbers).
"""

import math

import numpy as np
import pytest

from advisor.limits import ZoneSettings
from advisor.zones import (
    WaveSystem,
    encounter_period_circ1228,
    successive_wave_speed_band,
    surf_riding_speed,
    wave_systems,
    wavelength_circ1228,
    zone_masks,
)
from estimator.constants import KNOT
from estimator.spectra import DirectionalSpectrum, directional_spectrum, jonswap, spreading_cos2s
from tests.check_values import (
    CIRC1228_ROLL_RESONANCE_KN,
    CIRC1228_SUCCESSIVE_BAND_KN,
    CIRC1228_SURF_RIDING_KN,
    CIRC1228_TE_TABLE,
    CIRC1228_TW_200,
)

DEG = math.pi / 180.0
TW_200 = CIRC1228_TW_200.value  # source: CIRC1228_TW_200.source


def test_wavelength_relation():
    # Circ.1228 §1.5: λ = 1.56·TW² (from memory); TW = 0.8√λ is its inverse to 0.2 %
    assert wavelength_circ1228(TW_200) == pytest.approx(1.56 * 128.0, rel=1e-12)
    assert wavelength_circ1228(TW_200) == pytest.approx(200.0, rel=2.5e-3)


@pytest.mark.parametrize(
    "alpha_deg, te_s",
    CIRC1228_TE_TABLE.value,  # derived from Circ.1228 Fig. 1's TE formula: CIRC1228_TE_TABLE.source
)
def test_encounter_period_table(alpha_deg, te_s):
    te = encounter_period_circ1228(TW_200, 15.0 * KNOT, alpha_deg * DEG)
    assert float(te) == pytest.approx(te_s, rel=1e-3)


@pytest.mark.parametrize(
    "alpha_deg, v_kn",
    CIRC1228_SURF_RIDING_KN.value,  # derived from Circ.1228 §4.2.1: CIRC1228_SURF_RIDING_KN.source
)
def test_surf_riding_threshold(alpha_deg, v_kn):
    v = surf_riding_speed(200.0, alpha_deg * DEG) / KNOT
    assert float(v) == pytest.approx(v_kn, rel=1e-3)


def test_surf_riding_only_in_following_sector():
    # Circ.1228 §4.2.1: only for 135° < α < 225°
    v = surf_riding_speed(200.0, np.array([0.0, 90.0, 134.9, 135.0, 225.0, 270.0]) * DEG)
    assert np.all(np.isinf(v))
    # symmetric about α = 180° (port/starboard quartering seas)
    assert surf_riding_speed(200.0, 200.0 * DEG) == pytest.approx(surf_riding_speed(200.0, 160.0 * DEG))


def test_successive_wave_band():
    # derived from Circ.1228 §4.2.2.2, not published numbers: CIRC1228_SUCCESSIVE_BAND_KN.source
    band = CIRC1228_SUCCESSIVE_BAND_KN.value
    lo, hi = successive_wave_speed_band(TW_200)
    assert lo / KNOT == pytest.approx(band[11.314][0], abs=0.01)
    assert hi / KNOT == pytest.approx(band[11.314][1], abs=0.01)
    lo, hi = successive_wave_speed_band(12.0)
    assert (lo / KNOT, hi / KNOT) == pytest.approx(band[12.0], rel=1e-9)


def _single(hs, tp, theta):
    return [WaveSystem(hs=hs, tp=tp, theta=theta)]


def test_zone_masks_surf_riding_cells():
    # waves from north; heading south (ψ = 180°) puts them dead astern (α = 180°)
    psi = np.array([0.0, 90.0, 180.0]) * DEG
    speeds = np.array([25.0, 25.5, 30.0]) * KNOT
    z = zone_masks(psi, speeds, _single(3.0, 8.0, 0.0), 200.0, 30.0, ZoneSettings())
    # Circ.1228 §4.2.1 with L = 200 m: 25.456 kn threshold at α = 180°
    assert z["surf_riding"][2].tolist() == [False, True, True]
    assert not z["surf_riding"][:2].any()


def test_zone_masks_successive_waves_band():
    # L = 200, λ = 200 (> 160 m), Hs 8.5 m (> 8.0 m): following seas band [15.08, 22.63] kn, derived
    # from Circ.1228 §4.2.2 (CIRC1228_SUCCESSIVE_BAND_KN.source)
    speeds = np.array([15.0, 15.2, 22.5, 22.8]) * KNOT
    z = zone_masks([180.0 * DEG], speeds, _single(8.5, TW_200, 0.0), 200.0, 40.0, ZoneSettings())
    assert z["successive_waves"][0].tolist() == [False, True, True, False]
    # Hs not above 0.04 L = 8.0 m → no zone (§4.2.2.1)
    z = zone_masks([180.0 * DEG], speeds, _single(7.9, TW_200, 0.0), 200.0, 40.0, ZoneSettings())
    assert not z["successive_waves"].any()
    # λ = 1.56·10² = 156 m < 0.8 L = 160 m → no zone
    z = zone_masks([180.0 * DEG], speeds, _single(9.0, 10.0, 0.0), 200.0, 40.0, ZoneSettings())
    assert not z["successive_waves"].any()


def test_zone_masks_synchronous_and_parametric():
    # derived from Circ.1228 §4.2.3 (CIRC1228_ROLL_RESONANCE_KN.source): TW = 11.314 s, TR = 20 s:
    # following seas TE = TR at 14.74 kn; head seas TE = TR/2 at 4.46 kn.
    res = CIRC1228_ROLL_RESONANCE_KN.value
    settings = ZoneSettings(synchronous_roll_band=0.02, parametric_roll_band=0.02)
    sys_ = _single(4.0, TW_200, 0.0)
    # heading 180° = following, heading 0° = head seas
    speeds = np.array([res["head_te_equals_half_tr"], res["following_te_equals_tr"]]) * KNOT
    z = zone_masks([180.0 * DEG, 0.0], speeds, sys_, 200.0, 20.0, settings)
    assert z["synchronous_roll"][0, 1] and not z["synchronous_roll"][0, 0]
    assert z["parametric_roll"][0, 1]  # TE ≈ TR in following seas (§4.2.3.2)
    assert z["parametric_roll"][1, 0]  # TE ≈ TR/2 in head seas
    assert not z["synchronous_roll"][1, 0]


def test_zone_threshold_exactly_at_band_edge():
    # at rest: TE = 3TW²/(3TW + 0) = TW exactly (Circ.1228 Fig. 1 formula); TW = 10 s, TR = 8 s gives
    # |TE/TR − 1| = 0.25 exactly: on the band edge the cell is inside (≤), just beyond it outside
    sys_ = _single(3.0, 10.0, 0.0)
    assert float(encounter_period_circ1228(10.0, 0.0, 270.0 * DEG)) == 10.0
    inside = zone_masks([90.0 * DEG], [0.0], sys_, 200.0, 8.0, ZoneSettings(synchronous_roll_band=0.25))
    outside = zone_masks([90.0 * DEG], [0.0], sys_, 200.0, 8.0, ZoneSettings(synchronous_roll_band=0.2499))
    assert inside["synchronous_roll"][0, 0]
    assert not outside["synchronous_roll"][0, 0]


def test_small_systems_not_screened():
    z = zone_masks(
        [180.0 * DEG], [30.0 * KNOT], _single(0.5, 8.0, 0.0), 200.0, 8.0, ZoneSettings(min_system_hs=1.0)
    )
    assert not any(m.any() for m in z.values())


def _bimodal():
    omega = np.linspace(0.2, 2.0, 46)
    theta = np.arange(36) * 10.0 * DEG
    s1 = directional_spectrum(
        omega, theta, jonswap(omega, 4.0, 8.0), lambda th: spreading_cos2s(th, 60.0 * DEG, 15.0)
    )
    s2 = directional_spectrum(
        omega, theta, jonswap(omega, 3.0, 14.0), lambda th: spreading_cos2s(th, 250.0 * DEG, 30.0)
    )
    return s1, s2


def test_wave_systems_bimodal():
    s1, s2 = _bimodal()
    systems = wave_systems(s1 + s2, min_hs=0.5)
    assert len(systems) == 2
    # the partitions recover the two generating systems (JONSWAP Hs, Tp and cos-2s mean direction)
    # within the grid resolution; the energies add (Hs² of the parts sums to the total)
    a, b = systems
    assert a.hs == pytest.approx(4.0, rel=0.06) and b.hs == pytest.approx(3.0, rel=0.08)
    assert a.tp == pytest.approx(8.0, rel=0.06) and b.tp == pytest.approx(14.0, rel=0.06)
    assert a.theta == pytest.approx(60.0 * DEG, abs=3 * DEG)
    assert b.theta == pytest.approx(250.0 * DEG, abs=3 * DEG)
    assert a.hs**2 + b.hs**2 == pytest.approx((s1 + s2).hs() ** 2, rel=1e-9)


def test_wave_systems_empty():
    omega = np.linspace(0.2, 2.0, 10)
    theta = np.arange(8) * 45.0 * DEG
    assert wave_systems(DirectionalSpectrum(omega, theta, np.zeros((10, 8)))) == []
