"""The paired-sets sub-problem: neighbouring parallel sets laid as point images of each other.

Two groups of places ``g`` and ``h`` whose union is symmetric about its centre ``c`` (every
place ``p`` of ``g`` has the place ``2c − p`` in ``h``, of the same diameter) can hold the
same set type with the kinds at point-reflected places equal. The pair then carries every
current twice, at ``p`` and ``2c − p``, so its dipole moment about ``c`` vanishes, and with it
every odd multipole term of the pair: the field falls off at least one order faster. Laying
a set beside its point image is common practice for parallel sets ("L1 L2 L3 | L3 L2 L1"
in a row is the point image about the gap; for stacked layers, the set below holds the
sequence reversed).

The pairs come from one *direction*: all pairs of groups whose centres differ by the same
vector (up to sign), matched greedily along that vector, so every pair is laid the same way.
The restricted space keeps one representative group per pair (its table row is the sum of
the pair's rows, so the field is unchanged), the unmatched groups and the free cells; it is
far smaller than the bundled space (6⁸ instead of 6¹⁶ for 16 three-phase sets) and usually
enumerated exactly.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from trayadvisor.ranking.space import TOL_MM, Group, Space
from trayadvisor.ranking.tables import Tables

MAX_GROUPS = 256  #: larger spaces are not paired (the pair search is quadratic in groups)
MAX_DIRECTIONS = 2  #: pairing directions tried, shortest first
_MIN_COVER = 0.9  # a direction is used when its pairs cover at least this share of groups

Problem = tuple[Space, Tables, Callable[[np.ndarray], np.ndarray]]


def _key(x: float, y: float, d: float) -> tuple[int, int, int]:
    q = 10 * TOL_MM
    return (round(x / q), round(y / q), round(d / q))


def _image(space: Space, g: int, h: int, where: dict[tuple[int, int, int], int]
           ) -> np.ndarray | None:
    """Places of ``h`` that are the point images of ``g``'s places through the pair centre."""
    gg, hh = space.groups[g], space.groups[h]
    if gg.shape != hh.shape:
        return None
    pos, dia = space.positions_mm, space.diameters_mm
    c = 0.5 * (pos[gg.start:gg.stop].mean(axis=0) + pos[hh.start:hh.stop].mean(axis=0))
    out = np.empty(gg.stop - gg.start, dtype=np.int64)
    for n, j in enumerate(range(gg.start, gg.stop)):
        k = where.get(_key(2 * c[0] - pos[j, 0], 2 * c[1] - pos[j, 1], dia[j]), -1)
        if not hh.start <= k < hh.stop:
            return None
        out[n] = k
    return out


def pairings(space: Space) -> list[list[tuple[int, int, np.ndarray]]]:
    """Matchings of groups into point-image pairs, one per direction, shortest first.

    Each matching is a list of ``(g, h, image)`` with ``image[n]`` the place of ``h`` that
    mirrors place ``start_g + n`` through the pair's centre.
    """
    groups = space.groups
    n = len(groups)
    if n < 2 or n > MAX_GROUPS:
        return []
    pos = space.positions_mm
    where = {_key(x, y, d): j for j, ((x, y), d) in enumerate(zip(pos, space.diameters_mm,
                                                                  strict=True))}
    cen = np.array([pos[g.start:g.stop].mean(axis=0) for g in groups])
    by_dir: dict[tuple[int, int], list[tuple[int, int, np.ndarray]]] = {}
    for g in range(n):
        for h in range(g + 1, n):
            img = _image(space, g, h, where)
            if img is None:
                continue
            d = cen[h] - cen[g]
            if d[0] < -TOL_MM or (abs(d[0]) <= TOL_MM and d[1] < 0):
                d = -d
            q = 1e3 * TOL_MM
            by_dir.setdefault((round(d[0] / q), round(d[1] / q)), []).append((g, h, img))
    out = []
    for dkey in sorted(by_dir, key=lambda k: (k[0] ** 2 + k[1] ** 2, k)):
        d = np.array(dkey, dtype=float)
        cands = sorted(by_dir[dkey], key=lambda p: (float(cen[p[0]] @ d) + float(cen[p[1]] @ d),
                                                    tuple(cen[p[0]])))
        used: set[int] = set()
        chosen = []
        for g, h, img in cands:
            if g in used or h in used:
                continue
            used.update((g, h))
            chosen.append((g, h, img))
        if 2 * len(chosen) >= _MIN_COVER * n:
            out.append(chosen)
        if len(out) >= MAX_DIRECTIONS:
            break
    return out


def paired_subproblem(space: Space, tables: Tables,
                      pairs: list[tuple[int, int, np.ndarray]]) -> Problem | None:
    """(reduced space, reduced tables, expand) for one matching, or None if it cannot hold.

    Paired groups hold two sets of one type, so every set type of a shape whose groups are
    all paired must occur an even number of times; a shape with unpaired groups must have
    one set type only (any group may then take any set).
    """
    if not pairs:
        return None
    partner_of = {g: (h, img) for g, h, img in pairs}
    paired = set(partner_of) | {h for _, h, _ in pairs}
    unpaired = [g for g in range(len(space.groups)) if g not in paired]
    counts = space.type_counts.copy()
    for members in space.shape_classes():
        shape = space.groups[int(members[0])].shape
        types = [t for t in range(counts.size) if space.type_shape(t) == shape]
        loose = sum(int(g) in unpaired for g in members)
        if loose == 0:
            if any(counts[t] % 2 for t in types):
                return None
            for t in types:
                counts[t] //= 2
        elif len(types) == 1 and counts[types[0]] == members.size:
            counts[types[0]] = members.size - (members.size - loose) // 2
        else:
            return None
    reps: list[np.ndarray] = []
    images: list[np.ndarray] = []
    cells, groups, start = [], [], 0
    for s, e, c in space.free_cells:
        reps.append(np.arange(s, e))
        images.append(np.arange(s, e))
        cells.append((start, start + e - s, c))
        start += e - s
    for g in sorted(set(partner_of) | set(unpaired)):
        grp = space.groups[g]
        idx = np.arange(grp.start, grp.stop)
        reps.append(idx)
        images.append(partner_of[g][1] if g in partner_of else idx)
        shift = start - grp.start
        groups.append(Group(grp.start + shift, grp.stop + shift,
                            tuple((a + shift, b + shift) for a, b in grp.subcells), grp.shape))
        start += grp.stop - grp.start
    rep, img = np.concatenate(reps), np.concatenate(images)
    own = img == rep
    sub = Space(space.positions_mm[rep], space.diameters_mm[rep], space.kinds, tuple(cells),
                tuple(groups), space.set_types, counts, space.fixed, None, space.rule)
    n_full = space.n_positions

    def expand(codes: np.ndarray) -> np.ndarray:
        codes = np.asarray(codes).reshape(-1, rep.size)
        out = np.empty((codes.shape[0], n_full), dtype=np.int64)
        out[:, rep] = codes
        out[:, img] = codes
        return out

    red = tables.reduced(np.where(own[:, None, None, None], tables.V[rep],
                                  tables.V[rep] + tables.V[img]), expand, sub)
    return sub, red, expand


def paired_subproblems(space: Space, tables: Tables) -> list[Problem]:
    """The paired-sets sub-problems of ``space``, one per pairing direction."""
    out = []
    for pairs in pairings(space):
        p = paired_subproblem(space, tables, pairs)
        if p is not None:
            out.append(p)
    return out
