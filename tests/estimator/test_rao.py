"""Tests for estimator.rao: the stored RAO table, its validation and its interpolation.

Sources of the expected values are named beside each check: analytical properties of linear
interpolation (exact for data that is linear in the interpolated variable), the port/starboard
symmetry of a ship (Faltinsen 1990, Sea Loads on Ships and Offshore Structures, ch. 2 and 7),
and the interpolation rules documented in estimator/rao.py.
"""

import numpy as np
import pytest

from estimator.rao import (
    HIGH_FREQUENCY_TAPER,
    MIRROR_SIGNS,
    RAOTable,
    RAOTableError,
    long_to_dense,
    mirror_half_circle,
)

DEG = np.pi / 180.0


def _random_table(ns=3, step_deg=30.0, nw=8, seed=1, half=False):
    rng = np.random.default_rng(seed)
    top = 180.0 if half else 360.0 - step_deg
    h = np.arange(0.0, top + 1e-9, step_deg) * DEG
    speeds = np.linspace(0.0, 8.0, ns)
    omegas = np.linspace(0.3, 1.7, nw)
    v = rng.normal(size=(6, ns, h.size, nw)) + 1j * rng.normal(size=(6, ns, h.size, nw))
    return speeds, h, omegas, v


def test_grid_nodes_are_reproduced_exactly():
    # Interpolation property: at the nodes every interpolant returns the tabulated value.
    s, h, w, v = _random_table()
    t = RAOTable(s, h, w, v)
    S, H, W = np.meshgrid(s, h, w, indexing="ij")
    np.testing.assert_allclose(t(W, H, S), v, rtol=1e-12, atol=1e-12)


def test_output_shape_broadcasts_omega_beta_speed_and_selects_dofs():
    s, h, w, v = _random_table()
    t = RAOTable(s, h, w, v)
    out = t(np.linspace(0.3, 1.5, 5)[:, None], np.linspace(0, 2 * np.pi, 4)[None, :], 2.0)
    assert out.shape == (6, 5, 4)
    sel = t(0.7, np.pi, 2.0, dofs=("heave", "roll"))
    assert sel.shape == (2,)
    np.testing.assert_allclose(sel, t(0.7, np.pi, 2.0)[[2, 3]], rtol=0, atol=0)
    np.testing.assert_allclose(t(0.7, np.pi, 2.0, dofs=[4]), t(0.7, np.pi, 2.0, dofs=["pitch"]))
    with pytest.raises(RAOTableError, match="unknown dof 'heel'"):
        t(0.7, np.pi, 2.0, dofs=["heel"])


def test_linear_in_speed_and_clamped_outside_the_table():
    # Speed is blended in amplitude and phase: an amplitude linear in speed at a fixed phase is
    # reproduced exactly (analytical: both linear blends are then exact).
    _, h, w, _ = _random_table()
    s = np.array([0.0, 4.0, 8.0])
    phase = np.exp(1j * 0.7)
    v = (1.0 + 0.25 * s[None, :, None, None]) * phase * np.ones((6, 1, h.size, w.size))
    t = RAOTable(s, h, w, v)
    np.testing.assert_allclose(t(w[2], h[3], 5.5), np.full(6, (1.0 + 0.25 * 5.5) * phase), rtol=1e-12)
    # clamped: below 0 m/s holds the 0 m/s value, above 8 m/s holds the 8 m/s value
    np.testing.assert_allclose(t(w[2], h[3], -3.0), v[:, 0, 3, 2], rtol=1e-12)
    np.testing.assert_allclose(t(w[2], h[3], 20.0), v[:, 2, 3, 2], rtol=1e-12)


def test_speed_blend_keeps_the_amplitude_across_a_phase_turn():
    # Two tabulated speeds with equal amplitude a and phases 0 and Δ (the phase turn of a response
    # whose resonance moves with the encounter frequency): halfway, the amplitude stays a and the
    # phase is Δ/2, where a complex linear blend would give a·cos(Δ/2) (analytical, |(1 + e^{iΔ})/2|).
    _, h, w, _ = _random_table()
    s = np.array([0.0, 6.0])
    a, delta = 0.03, np.radians(90.0)
    v = np.ones((6, 2, h.size, w.size), complex) * a
    v[:, 1] *= np.exp(1j * delta)
    t = RAOTable(s, h, w, v)
    mid = t(w[3], h[2], 3.0)
    np.testing.assert_allclose(np.abs(mid), a, rtol=1e-12)
    np.testing.assert_allclose(np.angle(mid), delta / 2, rtol=1e-12)
    assert abs(0.5 * (v[0, 0, 0, 0] + v[0, 1, 0, 0])) == pytest.approx(a * np.cos(delta / 2), rel=1e-12)


def test_heading_is_periodic_and_wraps_between_last_heading_and_360():
    s, h, w, v = _random_table(ns=1)
    t = RAOTable(s, h, w, v)
    # 345 deg lies halfway between the last heading 330 deg and 360 = 0 deg (complex linear blend)
    expect = 0.5 * (v[:, 0, -1, 4] + v[:, 0, 0, 4])
    np.testing.assert_allclose(t(w[4], 345 * DEG, 0.0), expect, rtol=1e-12)
    np.testing.assert_allclose(t(w[4], -15 * DEG, 0.0), expect, rtol=1e-12)
    np.testing.assert_allclose(t(w[4], 375 * DEG, 0.0), t(w[4], 15 * DEG, 0.0), rtol=1e-12)


def test_heading_grid_not_starting_at_zero_wraps_correctly():
    s, _, w, v = _random_table(ns=1)
    h = (np.arange(12) * 30.0 + 10.0) * DEG  # 10, 40, ..., 340 deg
    t = RAOTable(s, h, w, v)
    # 355 deg sits halfway between 340 and 370 (= 10) deg; 5 deg sits 5/6 of the way from 340 to 370.
    np.testing.assert_allclose(t(w[0], 355 * DEG, 0.0), 0.5 * (v[:, 0, -1, 0] + v[:, 0, 0, 0]), rtol=1e-12)
    np.testing.assert_allclose(t(w[0], 5 * DEG, 0.0), v[:, 0, -1, 0] / 6 + 5 * v[:, 0, 0, 0] / 6, rtol=1e-12)


def test_frequency_interpolation_keeps_amplitude_across_a_phase_jump():
    # Two nodes of unit amplitude with phases 0 and 170 deg: a plain complex blend gives
    # |0.5(1 + e^{i170deg})| = cos(85 deg) = 0.0872 halfway; amplitude/phasor interpolation keeps
    # amplitude 1 and phase 85 deg (analytical).
    h = np.arange(0, 360, 45.0) * DEG
    w = np.array([0.5, 0.7])
    v = np.ones((6, 1, h.size, 2), dtype=complex)
    v[..., 1] = np.exp(1j * 170 * DEG)
    t = RAOTable([0.0], h, w, v)
    mid = t(0.6, 0.0, 0.0)
    np.testing.assert_allclose(np.abs(mid), 1.0, rtol=1e-12)
    np.testing.assert_allclose(np.angle(mid), 85 * DEG, rtol=1e-12)
    # amplitude is linear in omega: 1 -> 3 gives 2.5 at three quarters
    v[..., 1] *= 3.0
    t = RAOTable([0.0], h, w, v)
    np.testing.assert_allclose(np.abs(t(0.65, 0.0, 0.0)), 2.5, rtol=1e-12)


def test_frequency_interpolation_opposite_phasors_fall_back_to_complex_blend():
    # Phasors exactly opposite cancel: the documented fallback is the complex linear blend (0 here).
    h = np.arange(0, 360, 45.0) * DEG
    v = np.ones((6, 1, h.size, 2), dtype=complex)
    v[..., 1] = -1.0
    t = RAOTable([0.0], h, [0.5, 0.7], v)
    np.testing.assert_allclose(t(0.6, 0.0, 0.0), 0.0, atol=1e-12)
    # elsewhere the amplitude (1) is kept and the phase is that of the nearer node
    np.testing.assert_allclose(t(0.55, 0.0, 0.0), 1.0, atol=1e-12)
    np.testing.assert_allclose(t(0.65, 0.0, 0.0), -1.0, atol=1e-12)


def test_below_lowest_frequency_holds_and_above_highest_tapers_to_zero():
    s, h, w, v = _random_table(ns=1)
    t = RAOTable(s, h, w, v)
    np.testing.assert_allclose(t(0.05, h[2], 0.0), v[:, 0, 2, 0], rtol=1e-12)
    wmax = w[-1]
    # Documented taper: linear in amplitude to zero at wmax*(1 + HIGH_FREQUENCY_TAPER), phase held.
    half = wmax * (1 + 0.5 * HIGH_FREQUENCY_TAPER)
    np.testing.assert_allclose(t(half, h[2], 0.0), 0.5 * v[:, 0, 2, -1], rtol=1e-12)
    np.testing.assert_allclose(t(wmax * (1 + HIGH_FREQUENCY_TAPER), h[2], 0.0), 0.0, atol=0)
    np.testing.assert_allclose(t(10 * wmax, h[2], 0.0), 0.0, atol=0)


def test_mirrored_table_obeys_port_starboard_symmetry():
    # Faltinsen (1990) ch. 7: for a ship symmetric about its centre plane, surge, heave, pitch are
    # even and sway, roll, yaw odd in the heading about beta = 0/180 deg: H(2pi - beta) = +-H(beta).
    s, h, w, v = _random_table(half=True)
    # symmetry demands zero sway, roll, yaw in exactly head and following seas
    v[[1, 3, 5], :, 0] = 0.0
    v[[1, 3, 5], :, -1] = 0.0
    t = RAOTable.mirrored(s, h, w, v)
    assert t.headings.size == 12  # 0..180 every 30 deg -> 0..330
    for b_deg in (30.0, 60.0, 150.0):
        j = int(round(b_deg / 30))
        jm = int(round((360 - b_deg) / 30))
        np.testing.assert_allclose(t.values[:, :, jm], MIRROR_SIGNS[:, None, None] * v[:, :, j], rtol=0)
    # off-grid: interpolated values keep the relation
    for b in (20 * DEG, 100 * DEG, 171 * DEG):
        np.testing.assert_allclose(
            t(0.77, 2 * np.pi - b, 3.1), MIRROR_SIGNS * t(0.77, b, 3.1), rtol=1e-12, atol=1e-15
        )


def test_is_symmetric_detects_symmetry():
    s, h, w, v = _random_table(half=True)
    # zero antisymmetric motions at 0 and 180 deg, as symmetry demands
    v[[1, 3, 5], :, 0] = 0.0
    v[[1, 3, 5], :, -1] = 0.0
    assert RAOTable.mirrored(s, h, w, v).is_symmetric()
    s, h, w, v = _random_table()
    assert not RAOTable(s, h, w, v).is_symmetric()


def test_mirror_rejects_headings_beyond_180():
    s, h, w, v = _random_table()
    with pytest.raises(RAOTableError, match="within 0..180 deg"):
        mirror_half_circle(h, v)


def test_on_grid_equals_pointwise_interpolation():
    s, h, w, v = _random_table(ns=4, step_deg=15.0, nw=12)
    t = RAOTable(s, h, w, v)
    om = np.linspace(0.1, 2.4, 11)
    be = np.arange(0, 360, 5.0) * DEG
    sp = np.array([0.0, 1.3, 4.4, 9.0])
    g = t.on_grid(om, be, sp)
    assert g.shape == (6, 4, 72, 11)
    S, B, W = np.meshgrid(sp, be, om, indexing="ij")
    np.testing.assert_allclose(g, t(W, B, S), rtol=1e-12, atol=1e-14)
    g2 = t.on_grid(om, be, sp, dofs=["roll"])
    np.testing.assert_allclose(g2[0], g[3], rtol=0, atol=0)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"speeds": [0.0, -1.0]}, "speeds must be strictly ascending"),
        ({"speeds": [-1.0, 0.0]}, r"speeds must be >= 0 m/s, got -1.0"),
        ({"omegas": [0.0, 0.5]}, r"omegas must be > 0, got 0.0"),
        ({"omegas": [0.5]}, "at least two frequencies"),
        ({"omegas": [0.5, np.nan]}, "non-finite value"),
        (
            {"headings": np.arange(0, 360, 60.0) * DEG},
            r"gap of 60 deg between .* largest allowed gap is 45 deg",
        ),
        ({"headings": np.arange(0, 181, 30.0) * DEG}, r"gap of 180 deg between 180 and 360 deg"),
        ({"headings": np.arange(30, 390, 30.0) * DEG}, r"headings must lie in \[0, 2\*pi\)"),
    ],
)
def test_construction_rejects_bad_axes(kwargs, match):
    s, h, w, v = _random_table(ns=2, nw=2)
    args = {"speeds": s, "headings": h, "omegas": w}
    args.update(kwargs)
    shape = (6, len(args["speeds"]), len(args["headings"]), len(args["omegas"]))
    with pytest.raises(RAOTableError, match=match):
        RAOTable(values=np.ones(shape, dtype=complex), **args)


def test_construction_rejects_bad_values():
    s, h, w, v = _random_table()
    with pytest.raises(RAOTableError, match=r"values must have shape \(6, NS, NH, NW\) = \(6, 3, 12, 8\)"):
        RAOTable(s, h, w, v[:5])
    v = v.copy()
    v[3, 1, 2, 4] = np.nan
    with pytest.raises(RAOTableError, match="non-finite entry at dof roll, speed 4.0 m/s, heading 60 deg"):
        RAOTable(s, h, w, v)


def test_table_is_immutable():
    s, h, w, v = _random_table()
    t = RAOTable(s, h, w, v)
    with pytest.raises(AttributeError):
        t.speeds = s  # frozen dataclass
    with pytest.raises(ValueError, match="read-only"):
        t.values[0, 0, 0, 0] = 1.0
    v[0, 0, 0, 0] = 99.0  # the table holds its own copy
    assert t.values[0, 0, 0, 0] != 99.0


def test_long_arrays_round_trip_and_errors():
    s, h, w, v = _random_table(ns=2, nw=3)
    D, S, H, W = np.meshgrid(np.arange(6), s, h, w, indexing="ij")
    order = np.random.default_rng(3).permutation(D.size)  # any record order
    args = [x.ravel()[order] for x in (S, H, W, D)] + [v.ravel()[order]]
    t = RAOTable.from_long_arrays(*args)
    np.testing.assert_array_equal(t.values, v)
    # duplicates name both records
    dup = [np.append(a, a[:1]) for a in args]
    with pytest.raises(RAOTableError, match=r"duplicate record: rows \d+ and \d+") as err:
        long_to_dense(*dup)
    assert set(err.value.rows) == {0, D.size}
    # a missing record names the incomplete block
    short = [a[1:] for a in args]
    with pytest.raises(RAOTableError, match=r"incomplete grid: 1 of 432 records missing, e.g. dof"):
        long_to_dense(*short)


def test_long_arrays_half_circle_is_mirrored_automatically():
    s, h, w, v = _random_table(ns=1, nw=2, half=True)
    D, S, H, W = np.meshgrid(np.arange(6), s, h, w, indexing="ij")
    names = np.array(["surge", "sway", "heave", "roll", "pitch", "yaw"])[D.ravel()]
    t = RAOTable.from_long_arrays(S.ravel(), H.ravel(), W.ravel(), names, v.ravel())
    assert t.headings.size == 12
    np.testing.assert_allclose(t(w[0], 300 * DEG, 0.0), MIRROR_SIGNS * v[:, 0, 2, 0], rtol=1e-12)
