"""Partitioning a directional spectrum into wave systems (wind sea, swell) and their parameters.

Watershed partitioning: every grid cell climbs to its highest neighbour (8-neighbourhood, periodic in
direction) until a local maximum is reached; cells that reach the same maximum form one partition
(Gerling 1992; Hanson & Phillips 2001). Partitions holding less than ``min_share`` of the total energy are
merged into the partition of their highest neighbouring cell, and two partitions whose peaks are close
in frequency and direction are merged (Hanson & Phillips 2001 merge the peaks that are not separated
by a significant trough; the thresholds here are project choices, stated in the arguments).

References
----------
.. [1] Gerling, T.W. (1992). Partitioning sequences and arrays of directional ocean wave spectra into
   component wave systems. J. Atmos. Oceanic Technol. 9:444-458.
.. [2] Hanson, J.L., Phillips, O.M. (2001). Automated analysis of ocean surface directional wave
   spectra. J. Atmos. Oceanic Technol. 18:277-293.
.. [3] Kuik, A.J., van Vledder, G.Ph., Holthuijsen, L.H. (1988). A method for the routine analysis of
   pitch-and-roll buoy wave data. J. Phys. Oceanogr. 18:1020-1034 (mean direction and spread).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class WaveSystem:
    """Integrated parameters of one wave system.

    Attributes
    ----------
    hs : float
        Significant wave height 4·sqrt(m0) of the system [m].
    tp : float
        Peak period 2π/ω_p [s].
    tm01 : float
        Mean period 2π·m0/m1 [s].
    direction : float
        Mean direction (circular mean of energy) in the grid's angle convention [rad].
    spread : float
        Directional spread sqrt(2(1 − r1)) [rad] (Kuik et al. 1988).
    energy_share : float
        Share of the total m0 [-].
    """

    hs: float
    tp: float
    tm01: float
    direction: float
    spread: float
    energy_share: float


def system_parameters(
    density: np.ndarray,
    omega: np.ndarray,
    angle: np.ndarray,
    d_omega: np.ndarray,
    d_angle: float,
    total_m0: float | None = None,
) -> WaveSystem:
    """Parameters of the spectrum ``density`` (K, L) on cells of widths ``d_omega`` (K,) × ``d_angle``."""
    e = density * d_omega[:, None] * d_angle
    m0 = float(e.sum())
    if m0 <= 0:
        return WaveSystem(0.0, float("nan"), float("nan"), float("nan"), float("nan"), 0.0)
    ef = e.sum(axis=1)
    m1 = float((ef * omega).sum())
    ed = e.sum(axis=0)
    a1 = float((ed * np.cos(angle)).sum()) / m0
    b1 = float((ed * np.sin(angle)).sum()) / m0
    r1 = min(np.hypot(a1, b1), 1.0)
    k_peak = int(np.argmax(ef / d_omega))
    return WaveSystem(
        hs=4.0 * np.sqrt(m0),
        tp=float(2 * np.pi / omega[k_peak]),
        tm01=float(2 * np.pi * m0 / m1),
        direction=float(np.mod(np.arctan2(b1, a1), 2 * np.pi)),
        spread=float(np.sqrt(2.0 * (1.0 - r1))),
        energy_share=m0 / total_m0 if total_m0 else 1.0,
    )


def watershed(density: np.ndarray) -> np.ndarray:
    """Label each cell of ``density`` (K, L) with the index of the local maximum it climbs to.

    Direction (axis 1) is periodic; frequency (axis 0) is not. Returns int labels (K, L), 0..n−1,
    ordered by decreasing peak value.
    """
    k_n, l_n = density.shape
    flat = density.reshape(-1)
    idx = np.arange(flat.size).reshape(k_n, l_n)
    best = idx.copy()
    best_val = density.copy()
    for dk in (-1, 0, 1):
        for dl in (-1, 0, 1):
            if dk == 0 and dl == 0:
                continue
            kk = np.arange(k_n) + dk
            valid_k = (kk >= 0) & (kk < k_n)
            kk = np.clip(kk, 0, k_n - 1)
            ll = (np.arange(l_n) + dl) % l_n
            nb_idx = idx[np.ix_(kk, ll)]
            nb_val = density[np.ix_(kk, ll)]
            better = (nb_val > best_val) & valid_k[:, None]
            best = np.where(better, nb_idx, best)
            best_val = np.where(better, nb_val, best_val)
    pointer = best.reshape(-1)
    # Follow pointers to the fixed points (local maxima).
    for _ in range(k_n + l_n + 2):
        nxt = pointer[pointer]
        if np.array_equal(nxt, pointer):
            break
        pointer = nxt
    peaks = np.unique(pointer)
    order = peaks[np.argsort(-flat[peaks])]
    remap = {int(p): i for i, p in enumerate(order)}
    return np.vectorize(remap.__getitem__)(pointer).reshape(k_n, l_n)


def partition(
    density: np.ndarray,
    omega: np.ndarray,
    angle: np.ndarray,
    d_omega: np.ndarray,
    d_angle: float,
    *,
    min_share: float = 0.08,
    merge_dir: float = np.radians(40.0),
    merge_freq_ratio: float = 1.25,
    max_systems: int = 3,
) -> tuple[np.ndarray, list[WaveSystem]]:
    """Watershed partitions merged into at most ``max_systems`` wave systems.

    Returns the labels (K, L) and the systems ordered by decreasing energy.
    """
    labels = watershed(density)
    e = density * d_omega[:, None] * d_angle
    total = float(e.sum())
    if total <= 0:
        return labels, []

    def params(lbl: int) -> WaveSystem:
        return system_parameters(np.where(labels == lbl, density, 0.0), omega, angle, d_omega, d_angle, total)

    changed = True
    while changed:
        changed = False
        ids = np.unique(labels)
        if ids.size <= 1:
            break
        energies = {int(i): float(e[labels == i].sum()) for i in ids}
        systems = {i: params(i) for i in energies}
        # 1) merge the weakest partition if it is too small, 2) merge close peaks, 3) cap the count.
        weakest = min(energies, key=energies.get)
        target = None
        if energies[weakest] / total < min_share or len(energies) > max_systems:
            target = weakest
        else:
            for i in energies:
                for j in energies:
                    if i >= j:
                        continue
                    si, sj = systems[i], systems[j]
                    ddir = abs(np.angle(np.exp(1j * (si.direction - sj.direction))))
                    ratio = max(si.tp, sj.tp) / min(si.tp, sj.tp)
                    if ddir < merge_dir and ratio < merge_freq_ratio:
                        target = i if energies[i] < energies[j] else j
                        break
                if target is not None:
                    break
        if target is None:
            break
        # Merge ``target`` into the neighbouring partition it shares the highest boundary cell with,
        # or into the most energetic other partition when it has no neighbour.
        mask = labels == target
        k_n, l_n = density.shape
        best_lbl, best_val = None, -np.inf
        ks, ls = np.nonzero(mask)
        for k, l_ in zip(ks, ls, strict=True):
            for dk, dl in ((-1, 0), (1, 0), (0, -1), (0, 1)):
                kk, ll = k + dk, (l_ + dl) % l_n
                if 0 <= kk < k_n and labels[kk, ll] != target:
                    v = min(density[k, l_], density[kk, ll])
                    if v > best_val:
                        best_val, best_lbl = v, int(labels[kk, ll])
        if best_lbl is None:
            others = [i for i in energies if i != target]
            best_lbl = max(others, key=energies.get)
        labels = np.where(mask, best_lbl, labels)
        changed = True
    ids = sorted(np.unique(labels), key=lambda i: -float(e[labels == i].sum()))
    remap = np.zeros(int(labels.max()) + 1, dtype=int)
    for new, old in enumerate(ids):
        remap[old] = new
    labels = remap[labels]
    return labels, [
        system_parameters(np.where(labels == i, density, 0.0), omega, angle, d_omega, d_angle, total)
        for i in range(len(ids))
    ]
