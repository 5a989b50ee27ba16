"""Symmetries of a ranking problem, and the mirror-invariant sub-problem.

Transformations that leave the objective unchanged — a mirror about a vertical axis
(:func:`find_mirror`) and relabellings of the phases (:func:`phase_symmetries`) — make twins
of every arrangement; the ranking merges them (:func:`symmetry_group`).

The mirror-invariant sub-problem: arrangements that equal their own mirror image.

When the candidate positions, the fixed conductors and the objective are symmetric about a
vertical axis, an arrangement with the same kind at every pair of mirrored positions makes
equal currents at ±x about the axis, which cancels the odd multipole terms of the field
across the axis. Such arrangements are excellent starting points (common practice: mirror
the phase sequence of parallel sets). They form a space of half the size: one position per
mirrored pair (its table row is the sum of the pair's rows, so the field is unchanged) plus
the positions on the axis. The local search solves this smaller problem first and then
continues, unrestricted, from its best arrangements.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable

import numpy as np

from trayadvisor.engine import layout_sources
from trayadvisor.model import Layout
from trayadvisor.ranking.space import TOL_MM, Group, Space
from trayadvisor.ranking.tables import Tables

#: Twin circuits permuted among themselves up to this many (5! = 120 relabellings).
_MAX_TWIN_CIRCUITS = 5


def mirror_subproblem(space: Space, tables: Tables
                      ) -> tuple[Space, Tables, Callable[[np.ndarray], np.ndarray]] | None:
    """(reduced space, reduced tables, expand) or None when no such sub-problem exists.

    ``expand(codes)`` maps (N, J') reduced arrangements to (N, J) full ones. Needs a mirror
    permutation; in each free cell the kinds with an odd count must fit the positions on
    the axis; groups must come in mirrored pairs (none on the axis) with every set type an
    even number of times.
    """
    if space.mirror is None:
        return None
    return invariant_subproblem(space, tables, space.mirror)


def point_image(space: Space) -> np.ndarray | None:
    """Position permutation of the half turn about the centre of the candidate positions.

    Arrangements that equal their own half-turn image carry equal currents at ±r about the
    centre: their dipole moment vanishes, and with solved sharing the sets pair up into
    equal sharing (the long searches' best arrangements of two-layer parallel sets are of
    this kind). Needs every position's image to be a position of the same free cell;
    groups are not supported. A restriction of the search only — no symmetry of the
    objective is assumed.
    """
    pos, dia = space.positions_mm, space.diameters_mm
    if space.groups or pos.shape[0] < 2:
        return None
    c = 0.5 * (pos.min(axis=0) + pos.max(axis=0))
    keys = {(_q(x), _q(y), _q(d)): j for j, ((x, y), d) in enumerate(zip(pos, dia, strict=True))}
    img = np.array([keys.get((_q(2 * c[0] - x), _q(2 * c[1] - y), _q(d)), -1)
                    for (x, y), d in zip(pos, dia, strict=True)], dtype=np.int64)
    if img.min() < 0:
        return None
    for s, e, _ in space.free_cells:
        if set(img[s:e].tolist()) != set(range(s, e)):
            return None
    return img


def invariant_subproblem(space: Space, tables: Tables, mir: np.ndarray
                         ) -> tuple[Space, Tables, Callable[[np.ndarray], np.ndarray]] | None:
    """The arrangements equal to their image under the involution ``mir`` of positions (a
    mirror or a half turn): one position per pair plus the fixed points of ``mir``; see
    :func:`mirror_subproblem` for the conditions."""
    sub_cells: list[tuple[np.ndarray, np.ndarray]] = []
    for s, e, counts in space.free_cells:
        idx = np.arange(s, e)
        pairs = idx[idx < mir[idx]]
        axis = idx[idx == mir[idx]]
        odd = counts % 2
        extra = axis.size - int(odd.sum())
        if extra < 0 or extra % 2:
            return None
        on_axis = odd.copy()
        if extra:  # fill the rest of the axis with pairs of the most plentiful kind
            k = int(np.argmax(counts - odd))
            if counts[k] - odd[k] < extra:
                return None
            on_axis[k] += extra
        sub_cells.append((pairs, (counts - on_axis) // 2))
        if axis.size:
            sub_cells.append((axis, on_axis))
    owner = np.full(space.n_positions, -1)
    for g, grp in enumerate(space.groups):
        owner[grp.start:grp.stop] = g
    kept = []
    for g, grp in enumerate(space.groups):
        other = int(owner[mir[grp.start]])
        if other == g or np.any(space.type_counts % 2):
            return None
        if g < other:
            kept.append(grp)
    reps, cells, groups, start = [], [], [], 0
    for idx, counts in sub_cells:
        reps.append(idx)
        cells.append((start, start + idx.size, counts))
        start += idx.size
    for grp in kept:
        shift = start - grp.start
        reps.append(np.arange(grp.start, grp.stop))
        groups.append(Group(grp.start + shift, grp.stop + shift,
                            tuple((a + shift, b + shift) for a, b in grp.subcells), grp.shape))
        start += grp.stop - grp.start
    rep = np.concatenate(reps) if reps else np.zeros(0, dtype=np.int64)
    if rep.size == 0 or rep.size == space.n_positions:
        return None
    partner = mir[rep]
    own = partner == rep
    sub = Space(space.positions_mm[rep], space.diameters_mm[rep], space.kinds, tuple(cells),
                tuple(groups), space.set_types, space.type_counts // 2, space.fixed, None,
                space.rule)
    def expand(codes: np.ndarray) -> np.ndarray:
        codes = np.asarray(codes).reshape(-1, rep.size)
        out = np.empty((codes.shape[0], space.n_positions), dtype=np.int64)
        out[:, rep] = codes
        out[:, partner] = codes
        return out

    red = tables.reduced(np.where(own[:, None, None, None], tables.V[rep],
                                  tables.V[rep] + tables.V[partner]), expand, sub)
    return sub, red, expand


def _q(v: float) -> int:
    return round(float(v) / (10 * TOL_MM))


def find_mirror(space: Space, layout: Layout, axis_x_mm: float, identity: bool = False
                ) -> np.ndarray | None:
    """Position permutation reflecting about x = ``axis_x_mm``, if the problem allows it.

    The reflection must map candidate positions onto positions of the same diameter, every
    free cell onto itself, every group onto a group of the same shape, and every fixed
    conductor onto a fixed conductor of the same diameter and currents. (The objective's
    own symmetry is the caller's check.) Returns None when any of these fails.
    """
    pos, dia = space.positions_mm, space.diameters_mm
    keys = {(_q(x), _q(y), _q(d)): j for j, ((x, y), d) in enumerate(zip(pos, dia, strict=True))}
    mir = np.array([keys.get((_q(2 * axis_x_mm - x), _q(y), _q(d)), -1)
                    for (x, y), d in zip(pos, dia, strict=True)], dtype=np.int64)
    if mir.size and mir.min() < 0:
        return None
    owner = np.full(space.n_positions, -1)
    for g, grp in enumerate(space.groups):
        owner[grp.start:grp.stop] = g
    for s, e, _ in space.free_cells:
        if set(mir[s:e].tolist()) != set(range(s, e)):
            return None
    for grp in space.groups:
        targets = set(owner[mir[grp.start:grp.stop]].tolist())
        if len(targets) != 1 or -1 in targets or \
                space.groups[targets.pop()].shape != grp.shape:
            return None
    cons = layout.conductors
    cur = layout_sources(layout).currents
    scale = max(float(np.abs(cur).max()) if cur.size else 0.0, 1e-30)
    fixed = {}
    for i in space.fixed:
        c = cons[i]
        q = np.round(cur[:, i] / scale * 1e9)
        fixed[(_q(c.x_mm), _q(c.y_mm))] = (_q(c.diameter_mm), tuple(q.real), tuple(q.imag),
                                           c.circuit if identity else "")
    for i in space.fixed:
        c = cons[i]
        if fixed.get((_q(2 * axis_x_mm - c.x_mm), _q(c.y_mm))) != \
                fixed[(_q(c.x_mm), _q(c.y_mm))]:
            return None
    return mir


def phase_symmetries(space: Space, layout: Layout, conjugate: bool = True
                     ) -> list[np.ndarray]:
    """Kind relabellings that leave every resultant unchanged.

    Candidates multiply the current of frequency component h by ``s·ω^(h r)`` (ω = e^(−j2π/3):
    phase rotation L1→L2→L3 for r = 1, 2; s = −1: reversed polarity) and optionally conjugate
    it (swaps L2 and L3). Such a global factor per component leaves |B_h| — hence the
    resultant, and any induced voltage — unchanged. A candidate is kept when it maps every
    kind onto a kind (same diameter and identity), keeps every cell's and set type's counts,
    and leaves the fixed conductors' currents as they are.

    Returns
    -------
    list of (K,) int kind maps (identity excluded).
    """
    src = layout_sources(layout)
    orders = src.orders.astype(float)
    cur = space.kind_currents()  # (H, K)
    scale = max(float(np.abs(src.currents).max()) if src.currents.size else 0.0, 1e-30)
    tol = 1e-7 * scale
    kinds = space.kinds
    same = np.array([[_q(a.diameter_mm) == _q(b.diameter_mm) and a.identity == b.identity
                      and a.empty == b.empty for b in kinds] for a in kinds])
    fixed = src.currents[:, list(space.fixed)]
    omega = np.exp(-2j * np.pi / 3)
    out: list[np.ndarray] = []
    combos = [(r, conj, ac, dc) for r in (0, 1, 2) for conj in
              ((False, True) if conjugate else (False,)) for ac in (1.0, -1.0)
              for dc in (1.0, -1.0)]
    for r, conj, ac, dc in combos[1:]:
        fac = np.where(orders == 0, dc, ac * omega ** (orders * r))[:, None]
        t = fac * (np.conj(cur) if conj else cur)
        dist = np.abs(t[:, :, None] - cur[:, None, :]).max(axis=0)  # (K from, K to)
        match = (dist <= tol) & same
        if not match.any(axis=1).all():
            continue
        kmap = np.argmax(match, axis=1)
        if len(set(kmap.tolist())) != kmap.size:
            continue
        if fixed.size:
            tf = fac * (np.conj(fixed) if conj else fixed)
            if np.abs(tf - fixed).max() > tol:
                continue
        if _keeps_counts(space, kmap) and not np.array_equal(kmap, np.arange(kmap.size)) \
                and not any(np.array_equal(kmap, m) for m in out):
            out.append(kmap)
    return out


def _keeps_counts(space: Space, kmap: np.ndarray) -> bool:
    for _, _, counts in space.free_cells:
        moved = np.zeros_like(counts)
        moved[kmap] = counts
        if not np.array_equal(moved, counts):
            return False
    types = {tuple(row.tolist()): int(n) for row, n in zip(space.set_types, space.type_counts,
                                                           strict=True)}
    for row, n in zip(space.set_types, space.type_counts, strict=True):
        moved = np.zeros_like(row)
        moved[kmap] = row
        if types.get(tuple(moved.tolist())) != int(n):
            return False
    return True


def circuit_permutations(space: Space, layout: Layout) -> list[np.ndarray]:
    """Kind relabellings that exchange whole circuits alike in every respect.

    When kinds tell circuits apart (solved sharing joins the parallel conductors of one
    circuit's phase, not of another's), two circuits with the same system, currents and
    harmonics whose conductors match phase by phase (diameter, area, material, count) and are
    all movable can trade labels: every conductor keeps its place and current, so every field
    and figure is unchanged. Returns every such non-identity kind map, for the circuits of
    each class of twins permuted among themselves.
    """
    kinds = space.kinds
    if not kinds or not any(k.identity for k in kinds):
        return []
    cons = layout.conductors
    movable = {i for k in kinds for i in k.members}
    circuits = {c.name: c for c in layout.circuits}
    per: dict[str, dict[tuple, int]] = {}
    for j, k in enumerate(kinds):
        if k.empty:
            continue
        c0 = cons[k.members[0]]
        key = (c0.phase, _q(k.diameter_mm), c0.area_mm2, c0.material, len(k.members),
               tuple(np.round(k.currents, 9).tolist()))
        per.setdefault(c0.circuit, {})[key] = j
    whole = {name for name in per
             if all(i in movable for i, c in enumerate(cons) if c.circuit == name)}
    classes: dict[tuple, list[str]] = {}
    for name in sorted(whole):
        circ = circuits.get(name)
        if circ is None or circ.system == "signal":
            continue
        sig = (circ.system, circ.current_a, circ.angle_deg, circ.harmonics,
               tuple(sorted(per[name], key=repr)))
        classes.setdefault(sig, []).append(name)
    base = np.arange(len(kinds))
    maps = [base]
    for names in classes.values():
        if len(names) < 2 or len(names) > _MAX_TWIN_CIRCUITS:
            continue
        grown = []
        for perm in itertools.permutations(names):
            step = base.copy()
            for a, b in zip(names, perm, strict=True):
                for key, j in per[a].items():
                    step[j] = per[b][key]
            grown.extend(m[step] for m in maps)
        maps = grown
    return [m for m in maps if not np.array_equal(m, base) and _keeps_counts(space, m)]


def compose(first: list[np.ndarray], then: list[np.ndarray]) -> list[np.ndarray]:
    """Every non-identity product of one map of each list (identity included in both)."""
    if not first or not then:
        return list(first or then)
    n = (first or then)[0].size
    base = np.arange(n)
    out: list[np.ndarray] = []
    for a in [base, *first]:
        for b in [base, *then]:
            m = b[a]
            if not np.array_equal(m, base) and not any(np.array_equal(m, o) for o in out):
                out.append(m)
    return out


def symmetry_group(mirror: np.ndarray | None, kmaps: list[np.ndarray]
                   ) -> list[tuple[np.ndarray | None, np.ndarray | None]]:
    """Every non-identity combination of the mirror and the kind relabellings."""
    perms = [None] + ([mirror] if mirror is not None else [])
    maps: list[np.ndarray | None] = [None, *kmaps]
    return [(p, m) for p in perms for m in maps if p is not None or m is not None]
