"""The mirror-invariant sub-problem: arrangements that equal their own mirror image.

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

from collections.abc import Callable

import numpy as np

from trayadvisor.ranking.tables import Tables
from trayadvisor.ranking.space import Group, Space


def mirror_subproblem(space: Space, tables: Tables
                      ) -> tuple[Space, Tables, Callable[[np.ndarray], np.ndarray]] | None:
    """(reduced space, reduced tables, expand) or None when no such sub-problem exists.

    ``expand(codes)`` maps (N, J') reduced arrangements to (N, J) full ones. Needs a mirror
    permutation; in each free cell the kinds with an odd count must fit the positions on
    the axis; groups must come in mirrored pairs (none on the axis) with every set type an
    even number of times.
    """
    mir = space.mirror
    if mir is None:
        return None
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
    red = object.__new__(Tables)
    red.V = np.ascontiguousarray(np.where(own[:, None, None, None], tables.V[rep],
                                          tables.V[rep] + tables.V[partner]))
    red.F = tables.F
    red.pts_m = tables.pts_m
    red._stage = None

    def expand(codes: np.ndarray) -> np.ndarray:
        codes = np.asarray(codes).reshape(-1, rep.size)
        out = np.empty((codes.shape[0], space.n_positions), dtype=np.int64)
        out[:, rep] = codes
        out[:, partner] = codes
        return out

    return sub, red, expand
