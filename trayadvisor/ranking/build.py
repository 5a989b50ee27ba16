"""Building the ranking's search space from a layout (see :mod:`trayadvisor.ranking.space`)."""

from __future__ import annotations

from collections import Counter

import numpy as np

from trayadvisor.model import REQUIRED_PHASES, Layout
from trayadvisor.ranking.slots import SLOT_RULES, RankError, slot_grid
from trayadvisor.ranking.space import TOL_MM, Group, Kind, Space
from trayadvisor.engine.currents import sources


# -- building the space ---------------------------------------------------------------------
def _kinds_of(layout: Layout, movable: list[int], identity: bool
              ) -> tuple[list[Kind], dict[int, int]]:
    src = sources(layout)
    cur = src.currents  # (H, n)
    scale = max(float(np.abs(cur).max()) if cur.size else 0.0, 1e-30)
    groups: dict[tuple, list[int]] = {}
    for i in movable:
        c = layout.conductors[i]
        q = np.round(cur[:, i] / scale * 1e9)
        key: tuple = (round(c.diameter_mm / TOL_MM), tuple(q.real), tuple(q.imag))
        if identity:
            key += (c.circuit, c.phase, c.area_mm2, c.material)
        groups.setdefault(key, []).append(i)
    kinds, of = [], {}
    for members in groups.values():
        c0 = layout.conductors[members[0]]
        for i in members:
            of[i] = len(kinds)
        kinds.append(Kind(float(c0.diameter_mm), cur[:, members[0]].copy(), tuple(members),
                          f"{c0.circuit} {c0.phase}",
                          (c0.circuit, c0.area_mm2, c0.material) if identity else ()))
    return kinds, of


def _sets(layout: Layout, movable: list[int], notes: list[str]) -> list[list[int]]:
    """Complete parallel sets among the movable conductors (one conductor per phase label)."""
    cons = layout.conductors
    out: list[list[int]] = []
    for circ in layout.circuits:
        mine = [i for i in movable if cons[i].circuit == circ.name]
        if not mine:
            continue
        by: dict[str, list[int]] = {}
        for i in mine:
            by.setdefault(cons[i].phase, []).append(i)
        first = REQUIRED_PHASES.get(circ.system, (cons[mine[0]].phase,))[0]
        k = len(by.get(first, []))
        labels = [p for p, v in by.items() if len(v) == k]
        if k == 0 or any(p not in by or len(by[p]) != k
                         for p in REQUIRED_PHASES.get(circ.system, ())):
            notes.append(f"circuit {circ.name}: phases have unequal conductor counts, "
                         "so it is not bundled")
            continue
        out.extend([by[p][s] for p in labels] for s in range(k))
    return out


def build_space(layout: Layout, *, slots: str | None = None, bundles: bool = False,
                identity: bool = False, rows: bool = False) -> Space:
    """The search space of ``layout`` (see the module notes).

    Parameters
    ----------
    layout : Layout
    slots : {"touching", "spaced", "trefoil"} or None
        Candidate positions: None = the places the movable conductors occupy now; otherwise a
        slot grid generated in the trays that hold movable conductors by this laying rule.
    bundles : bool
        Keep each parallel set together in one group of positions.
    identity : bool
        Distinguish conductors of different circuit, phase, area or material even when their
        currents are equal (needed by constraints on coupling and current sharing).
    rows : bool
        With bundles on the current places: chunk each circuit's places into groups along
        the layers (y, then x) instead of across them (x, then y, which keeps trefoils).
    """
    if slots is not None and slots not in SLOT_RULES:
        raise RankError(f"--slots {slots}: unknown laying rule; use one of "
                        f"{', '.join(SLOT_RULES)}")
    cons = layout.conductors
    movable = [i for i, c in enumerate(cons) if not c.fixed]
    fixed = tuple(i for i, c in enumerate(cons) if c.fixed)
    notes: list[str] = []
    kinds, kind_of = _kinds_of(layout, movable, identity)
    sets = _sets(layout, movable, notes) if bundles else []
    in_set = {i for s in sets for i in s}
    free = [i for i in movable if i not in in_set]

    if slots is None:
        place = {i: (cons[i].x_mm, cons[i].y_mm) for i in movable}
        group_pos = _groups_from_layout(layout, sets, notes, rows)
        for s, ok in list(zip(sets, group_pos, strict=True)):
            if ok is None:
                free.extend(s)
        kept = [(s, gp) for s, gp in zip(sets, group_pos, strict=True) if gp is not None]
        free_pos = [place[i] for i in free]
        free_d = [cons[i].diameter_mm for i in free]
        groups_xy = [gp for _, gp in kept]
        set_members = [s for s, _ in kept]
        spare_groups = 0
    else:
        group_size = None
        if bundles:
            sizes = {len(s) for s in sets}
            if free or len(sizes) != 1:
                raise RankError(f"--slots {slots} --bundles: every movable conductor must "
                                "belong to a complete parallel set, all sets of one size; "
                                "drop --bundles or mark the others fixed = true")
            group_size = sizes.pop()
            if slots == "trefoil" and group_size != 3:
                raise RankError(f"--slots trefoil --bundles: a trefoil holds 3 conductors "
                                f"but the sets have {group_size}; use --slots touching")
        grid, slot_groups = slot_grid(layout, slots, movable, group_size)
        if bundles:
            if len(sets) > len(slot_groups):
                raise RankError(f"--slots {slots}: only {len(slot_groups)} group(s) fit for "
                                f"{len(sets)} set(s); use a wider tray or another rule")
            free_pos, free_d = [], []
            groups_xy = [[(float(grid[j, 0]), float(grid[j, 1])) for j in g]
                         for g in slot_groups]
            set_members = sets
            spare_groups = len(slot_groups) - len(sets)
        else:
            if len(grid) < len(movable):
                raise RankError(f"--slots {slots}: the slot grid holds {len(grid)} "
                                f"positions for {len(movable)} movable conductors; use a "
                                "wider tray or a denser rule")
            free_pos = [(float(x), float(y)) for x, y in grid]
            free_d = [cons[movable[0]].diameter_mm] * len(grid)
            groups_xy, set_members, spare_groups = [], [], 0
        if len(free_pos) > len(free) or spare_groups:
            d0 = cons[movable[0]].diameter_mm
            kinds.append(Kind(float(d0), np.zeros_like(kinds[0].currents), (), "empty"))

    k_all = len(kinds)
    # free cells: one per diameter
    positions, diams, free_cells = [], [], []
    for d in sorted({round(v / TOL_MM) * TOL_MM for v in free_d}):
        idx = [n for n, v in enumerate(free_d) if abs(v - d) <= 2 * TOL_MM]
        counts = np.zeros(k_all, dtype=np.int64)
        for i in free:
            if abs(cons[i].diameter_mm - d) <= 2 * TOL_MM:
                counts[kind_of[i]] += 1
        if counts.sum() < len(idx):
            counts[k_all - 1] += len(idx) - counts.sum()
        start = len(positions)
        positions.extend(free_pos[n] for n in idx)
        diams.extend(free_d[n] for n in idx)
        free_cells.append((start, len(positions), counts))
    # groups and set types
    groups = []
    for gxy in groups_xy:
        d_of = [_diameter_at(layout, xy, slots, movable) for xy in gxy]
        order = np.argsort(d_of, kind="stable")
        start = len(positions)
        sub, cur_d, s0 = [], None, start
        for o in order:
            if cur_d is not None and abs(d_of[o] - cur_d) > 2 * TOL_MM:
                sub.append((s0, len(positions)))
                s0 = len(positions)
            cur_d = d_of[o]
            positions.append(gxy[o])
            diams.append(d_of[o])
        sub.append((s0, len(positions)))
        groups.append(Group(start, len(positions), tuple(sub),
                            tuple(sorted(float(v) for v in d_of))))
    type_rows: dict[tuple[int, ...], int] = Counter()
    for s in set_members:
        c = np.zeros(k_all, dtype=np.int64)
        for i in s:
            c[kind_of[i]] += 1
        type_rows[tuple(int(v) for v in c)] += 1
    if spare_groups:
        empty_type = [0] * k_all
        empty_type[k_all - 1] = len(groups_xy[0])
        type_rows[tuple(empty_type)] += spare_groups
    set_types = np.array(list(type_rows), dtype=np.int64).reshape(len(type_rows), k_all)
    type_counts = np.array(list(type_rows.values()), dtype=np.int64)

    pos = np.array(positions, dtype=float).reshape(-1, 2)
    space = Space(pos, np.array(diams, dtype=float), tuple(kinds), tuple(free_cells),
                  tuple(groups), set_types, type_counts, fixed, None, slots, notes)
    if slots is None:
        space.baseline = _baseline(space, layout, kind_of, movable)
    return space


def _diameter_at(layout: Layout, xy: tuple[float, float], slots: str | None,
                 movable: list[int]) -> float:
    if slots is not None:
        return float(layout.conductors[movable[0]].diameter_mm)
    for i in movable:
        c = layout.conductors[i]
        if abs(c.x_mm - xy[0]) <= TOL_MM and abs(c.y_mm - xy[1]) <= TOL_MM:
            return float(c.diameter_mm)
    raise AssertionError("group position without a conductor")


def _groups_from_layout(layout: Layout, sets: list[list[int]], notes: list[str],
                        rows: bool = False
                        ) -> list[list[tuple[float, float]] | None]:
    """Groups of positions for the sets: each circuit's places in x-then-y order, chunked."""
    cons = layout.conductors
    out: list[list[tuple[float, float]] | None] = []
    by_circ: dict[str, list[list[int]]] = {}
    for s in sets:
        by_circ.setdefault(cons[s[0]].circuit, []).append(s)
    for circ, its in by_circ.items():
        members = sorted((i for s in its for i in s),
                         key=lambda i: (round(cons[i].y_mm, 6), round(cons[i].x_mm, 6))
                         if rows else (round(cons[i].x_mm, 6), round(cons[i].y_mm, 6)))
        size = len(its[0])
        ok = True
        chunks = [members[n * size:(n + 1) * size] for n in range(len(its))]
        want = sorted(round(cons[i].diameter_mm, 6) for i in its[0])
        for ch in chunks:
            if sorted(round(cons[i].diameter_mm, 6) for i in ch) != want:
                ok = False
        if not ok:
            notes.append(f"circuit {circ}: its places do not split into groups that fit one "
                         "set each, so it is not bundled")
        for ch in chunks:
            out.append([(cons[i].x_mm, cons[i].y_mm) for i in ch] if ok else None)
    # keep the order of ``sets``
    order = [s for its in by_circ.values() for s in its]
    index = {id(s): n for n, s in enumerate(order)}
    return [out[index[id(s)]] for s in sets]


def _baseline(space: Space, layout: Layout, kind_of: dict[int, int],
              movable: list[int]) -> np.ndarray:
    a = np.full(space.n_positions, -1, dtype=np.int64)
    keys = {Space._place(x, y): j for j, (x, y) in enumerate(space.positions_mm)}
    for i in movable:
        c = layout.conductors[i]
        a[keys[Space._place(c.x_mm, c.y_mm)]] = kind_of[i]
    return a


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
    cur = sources(layout).currents
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
    src = sources(layout)
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


def symmetry_group(mirror: np.ndarray | None, kmaps: list[np.ndarray]
                   ) -> list[tuple[np.ndarray | None, np.ndarray | None]]:
    """Every non-identity combination of the mirror and the kind relabellings."""
    perms = [None] + ([mirror] if mirror is not None else [])
    maps: list[np.ndarray | None] = [None, *kmaps]
    return [(p, m) for p in perms for m in maps if p is not None or m is not None]
