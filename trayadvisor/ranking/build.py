"""Building the ranking's search space from a layout (see :mod:`trayadvisor.ranking.space`)."""

from __future__ import annotations

from collections import Counter

import numpy as np

from trayadvisor.engine import layout_sources
from trayadvisor.model import REQUIRED_PHASES, Layout
from trayadvisor.ranking.errors import RankError
from trayadvisor.ranking.slots import SLOT_RULES, slot_grid
from trayadvisor.ranking.space import TOL_MM, Group, Kind, Space


# -- building the space ---------------------------------------------------------------------
def _kinds_of(layout: Layout, movable: list[int], identity: bool
              ) -> tuple[list[Kind], dict[int, int]]:
    src = layout_sources(layout)
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
        raise RankError(f"unknown laying rule; use one of {', '.join(SLOT_RULES)}",
                        "slots", slots)
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
                raise RankError("with bundles, every movable conductor must belong to a "
                                "complete parallel set, all sets of one size; rank without "
                                "bundles or mark the others fixed = true", "slots", slots)
            group_size = sizes.pop()
            if slots == "trefoil" and group_size != 3:
                raise RankError(f"with bundles: a trefoil holds 3 conductors but the sets "
                                f"have {group_size}; use the touching rule", "slots", slots)
        grid, slot_groups = slot_grid(layout, slots, movable, group_size)
        if bundles:
            if len(sets) > len(slot_groups):
                raise RankError(f"only {len(slot_groups)} group(s) fit for {len(sets)} "
                                "set(s); use a wider tray or another rule", "slots", slots)
            free_pos, free_d = [], []
            groups_xy = [[(float(grid[j, 0]), float(grid[j, 1])) for j in g]
                         for g in slot_groups]
            set_members = sets
            spare_groups = len(slot_groups) - len(sets)
        else:
            if len(grid) < len(movable):
                raise RankError(f"the slot grid holds {len(grid)} positions for "
                                f"{len(movable)} movable conductors; use a wider tray or a "
                                "denser rule", "slots", slots)
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
