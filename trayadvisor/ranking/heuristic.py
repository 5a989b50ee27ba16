"""The heuristic: restricted sub-problems first (solved exactly when small), then the whole space.

Large spaces have many poor local optima for swap moves, but the good arrangements of
parallel sets share structure that common practice names: each set laid together (one
conductor of each phase in a block of neighbouring places), the sequence mirrored about
the tray's centre line, and neighbouring sets laid as point images of each other. Each
such restriction is a search space of its own, far smaller:

1. with bundles: neighbouring groups paired as point images (:mod:`trayadvisor.ranking.sets`);
2. sets kept together in blocks along each layer, and mirror-invariant (when the problem is
   mirror-symmetric) — usually small enough to enumerate exactly;
3. sets kept together in blocks along each layer, neighbouring blocks paired as point images
   of each other (each pair's dipole moment vanishes) — one sub-problem per pairing
   direction, usually enumerated exactly;
4. sets kept together in blocks along each layer;
5. mirror-invariant arrangements (:mod:`trayadvisor.ranking.symmetry`);
6. arrangements invariant under the half turn about the centre of the places (the dipole
   moment vanishes; with solved sharing, point-image sets share alike).

Their best arrangements enter the pool and start the unrestricted iterated local search
(:func:`trayadvisor.ranking.local_search.run_local`), which is free to leave every restriction.
"""

from __future__ import annotations

import time
from collections.abc import Callable

import numpy as np

from trayadvisor.model import Layout
from trayadvisor.ranking.build import build_space
from trayadvisor.ranking.errors import RankError
from trayadvisor.ranking.exhaustive import exhaustive
from trayadvisor.ranking.local_search import SearchStats, run_local
from trayadvisor.ranking.sets import paired_subproblems
from trayadvisor.ranking.space import Space
from trayadvisor.ranking.symmetry import (
    find_mirror,
    invariant_subproblem,
    mirror_subproblem,
    point_image,
)
from trayadvisor.ranking.tables import Pool, Tables

SEED_EXHAUSTIVE = 2_000_000  #: restricted spaces up to this size are enumerated exactly
_SEED_SHARE = 0.4  # share of the time budget the restricted searches may use
_SEED_POOL = 16
_HALF_TURN_SLOTS = 3  # time slots (and seeds) of the half-turn sub-problem when searched

Problem = tuple[Space, Tables, Callable[[np.ndarray], np.ndarray]]


def _block_space(layout: Layout, space: Space, tables: Tables, identity: bool
                 ) -> Problem | None:
    """The sets-in-layer-blocks space, with tables and the map to the main space's order."""
    if space.rule is not None or space.groups:
        return None
    try:
        blk = build_space(layout, bundles=True, identity=identity, rows=True)
    except RankError:
        return None
    if not blk.groups or blk.n_positions != space.n_positions or \
            len(blk.kinds) != len(space.kinds):
        return None
    where = {(round(x, 6), round(y, 6)): j for j, (x, y) in enumerate(space.positions_mm)}
    to_main = np.array([where.get((round(x, 6), round(y, 6)), -1)
                        for x, y in blk.positions_mm])
    if to_main.min() < 0:
        return None
    if space.mirror is not None and space.mirror_axis_mm is not None:
        blk.mirror = find_mirror(blk, layout, space.mirror_axis_mm, identity)

    def expand(codes: np.ndarray) -> np.ndarray:
        codes = np.asarray(codes).reshape(-1, blk.n_positions)
        out = np.empty_like(codes)
        out[:, to_main] = codes
        return out

    return blk, tables.reduced(tables.V[to_main], expand, blk), expand


def _compose(inner: Problem, outer: Callable[[np.ndarray], np.ndarray]) -> Problem:
    sub, red, expand = inner
    return sub, red, lambda c: outer(expand(c))


def _problems(layout: Layout, space: Space, tables: Tables, identity: bool) -> list[Problem]:
    out: list[Problem] = []
    if space.groups:  # bundles asked for: pair the groups of the space itself
        out.extend(paired_subproblems(space, tables))
    blk = _block_space(layout, space, tables, identity)
    if blk is not None:
        b_space, b_tables, b_expand = blk
        sym = mirror_subproblem(b_space, b_tables)
        if sym is not None:
            out.append(_compose(sym, b_expand))
        out.extend(_compose(p, b_expand) for p in paired_subproblems(b_space, b_tables))
        out.append(blk)
    turn = point_image(space)
    if turn is not None:
        half = invariant_subproblem(space, tables, turn)
        if half is not None:
            # searched twice (two seeds, two time slots) when too big to enumerate: the
            # best arrangements of parallel sets in two layers are of this kind
            out.extend([half] * (_HALF_TURN_SLOTS if half[0].distinct() > SEED_EXHAUSTIVE else 1))
    sym = mirror_subproblem(space, tables)
    if sym is not None:
        out.append(sym)
    return out


def run_heuristic(layout: Layout, space: Space, tables: Tables, pool: Pool, *, seed: int,
                  patience: int, identity: bool = False, deadline: float | None = None,
                  max_evaluations: int | None = None,
                  cancel: Callable[[], bool] | None = None,
                  tick: Callable[[SearchStats, float], None] | None = None) -> SearchStats:
    """Restricted sub-problems, then the whole space (see the module notes).

    Arguments as for :func:`trayadvisor.ranking.local_search.run_local`; ``identity`` as for
    :func:`trayadvisor.ranking.build.build_space`.
    """
    stats = SearchStats()
    starts: list[np.ndarray] = []
    problems = _problems(layout, space, tables, identity)
    now = time.perf_counter()
    span = None if deadline is None else max(0.0, deadline - now)
    # Relabelling kinds maps a restricted arrangement onto another one: the sub-problems
    # keep the main space's relabelling symmetries (an exact search then scores one twin).
    kmaps = [(None, k) for p, k in space.symmetries if p is None and k is not None]
    for n, (sub, red, expand) in enumerate(problems):
        sub.symmetries = list(kmaps)
        sub_pool = Pool(_SEED_POOL, sub.n_positions)
        end = None if span is None else now + _SEED_SHARE * span * (n + 1) / len(problems)
        if sub.distinct() <= SEED_EXHAUSTIVE:
            done, stop = exhaustive(sub, red, sub_pool, deadline=end, cancel=cancel)
            stats.screened += done
            stats.stopped = stop
        else:
            run_local(sub, red, sub_pool, seed=seed + 1000 * (n + 1),
                      patience=max(100, patience // 3),
                      deadline=end, max_evaluations=max_evaluations, cancel=cancel, tick=tick,
                      stats=stats)
        if len(sub_pool):
            codes = expand(sub_pool.codes.astype(np.int64))
            pool.add(codes, tables.values(codes))
            starts.extend(codes[:2])
        if stats.stopped == "cancelled":
            return stats
        stats.stopped = ""
    if space.baseline is not None:
        starts.append(space.baseline)
    return run_local(space, tables, pool, seed=seed, patience=patience, deadline=deadline,
                     max_evaluations=max_evaluations, cancel=cancel, tick=tick,
                     starts=starts, stats=stats)
