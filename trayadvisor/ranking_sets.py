"""Set-level search: each bundled group of places is one unit with a handful of contents.

In a space with groups (:mod:`trayadvisor.ranking_space`) a group holds one parallel set, and
what matters is *which* arrangement of the set's kinds it holds (for a three-phase set one of
3! = 6 phase orders) and, between groups of one shape, which set type it holds. Every such
*option* of a group has a precomputed field ``U[o] = Σ_j V[start + j, content_o[j]]``, so the
arrangement's field is ``F' + Σ_g U[option_g]`` (``F'``: fixed conductors plus the free cells,
held constant here) and changing the options of one or two groups costs O(points).

The neighbourhood is every change of one group's option and every change of two groups'
options at once (a pair may also trade set types), e.g. 16 three-phase groups give
16 × 5 single and 120 × 25 pair moves. As in :mod:`trayadvisor.ranking_local`, each step
screens all moves on the few points where the field peaks and evaluates the most promising
ones on every point. Local optima are kicked by a few random group moves (iterated local
search); after a run of failures the search restarts from one of the best found.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence

import numpy as np

from trayadvisor.ranking_enum import cartesian, multiset_sequences
from trayadvisor.ranking_eval import Pool, Tables
from trayadvisor.ranking_local import SearchStats
from trayadvisor.ranking_space import Space

MAX_OPTIONS = 120  #: a group with more contents than this is not searched at set level
MAX_PAIRS = 400_000  #: beyond this many pair moves only single-group moves are used
_SCREEN_POINTS = 8
_BATCH = 24
_MAX_BATCHES = 4
_RESTART_AFTER = 24  # failed kicks before a restart from the elite (at least; or 2 G)


class SetMoves:
    """Options of every group, their fields, and the static move lists.

    Parameters
    ----------
    space : Space
        Must have groups.
    tables : Tables
    a0 : (J,) int
        An arrangement of ``space``; its free cells are held fixed.
    """

    def __init__(self, space: Space, tables: Tables, a0: np.ndarray) -> None:
        self.space, self.t = space, tables
        a0 = np.asarray(a0, dtype=np.int64)
        contents, group_of, type_of = [], [], []
        for g, grp in enumerate(space.groups):
            for t in range(len(space.type_counts)):
                if space.type_shape(t) != grp.shape:
                    continue
                parts = [multiset_sequences(c, e - s)[0] for s, e, c in space.group_cells(g, t)]
                rows = cartesian(parts)
                contents.extend(rows)
                group_of.extend([g] * rows.shape[0])
                type_of.extend([t] * rows.shape[0])
        self.contents = contents  # (O,) rows, each of its group's length
        self.group_of = np.array(group_of, dtype=np.int64)
        self.type_of = np.array(type_of, dtype=np.int64)
        n_opt = np.bincount(self.group_of, minlength=len(space.groups))
        self.ok = bool(len(space.groups)) and int(n_opt.max(initial=0)) <= MAX_OPTIONS
        if not self.ok:
            return
        v = tables.V
        u = np.empty((len(contents) + 1, v.shape[2], v.shape[3]))
        for o, row in enumerate(contents):
            grp = space.groups[int(self.group_of[o])]
            u[o] = v[np.arange(grp.start, grp.stop), row].sum(axis=0)
        u[-1] = 0.0  # the "no second group" option of single moves
        self.U = u
        self.none = len(contents)
        key = {(int(g), np.asarray(row).tobytes()): o
               for o, (g, row) in enumerate(zip(self.group_of, contents, strict=True))}
        self._key = key
        g_all = len(space.groups)
        # static move list: (o1, o2) with group(o1) < group(o2), plus singles (o, none)
        opts = [np.nonzero(self.group_of == g)[0] for g in range(g_all)]
        p1, p2 = [np.arange(self.none)], [np.full(self.none, self.none)]
        n_pairs = sum(opts[g].size * opts[h].size for g in range(g_all)
                      for h in range(g + 1, g_all))
        if n_pairs <= MAX_PAIRS:
            for g in range(g_all):
                for h in range(g + 1, g_all):
                    i, j = np.meshgrid(opts[g], opts[h], indexing="ij")
                    p1.append(i.ravel())
                    p2.append(j.ravel())
        self.m1 = np.concatenate(p1)
        self.m2 = np.concatenate(p2)
        self.free = a0.copy()
        self.options_of = opts

    # -- arrangements <-> options -------------------------------------------------------
    def state(self, a: np.ndarray) -> np.ndarray:
        """(G,) option index of every group in arrangement ``a``."""
        out = np.empty(len(self.space.groups), dtype=np.int64)
        for g, grp in enumerate(self.space.groups):
            out[g] = self._key[(g, np.ascontiguousarray(a[grp.start:grp.stop],
                                                        dtype=np.int64).tobytes())]
        return out

    def arrangement(self, cur: np.ndarray) -> np.ndarray:
        a = self.free.copy()
        for g, grp in enumerate(self.space.groups):
            a[grp.start:grp.stop] = self.contents[int(cur[g])]
        return a

    def field(self, cur: np.ndarray) -> np.ndarray:
        """(P, C) field of the arrangement with group options ``cur``."""
        return self.t.fields(self.arrangement(cur))[0]

    # -- moves ----------------------------------------------------------------------------
    def valid(self, cur: np.ndarray) -> np.ndarray:
        """Mask over the move list: moves that change something and keep every type count."""
        g1, g2 = self.group_of[self.m1], self.group_of[np.minimum(self.m2, self.none - 1)]
        t1, t2 = self.type_of[self.m1], self.type_of[np.minimum(self.m2, self.none - 1)]
        single = self.m2 == self.none
        c1, c2 = cur[g1], cur[g2]
        ct1, ct2 = self.type_of[c1], self.type_of[c2]
        keep = (t1 == ct1) & (single | (t2 == ct2))
        swap = ~single & (t1 == ct2) & (t2 == ct1) & (ct1 != ct2)
        changed = (self.m1 != c1) & (single | (self.m2 != c2))
        return (keep | swap) & changed

    def moved(self, cur: np.ndarray, k: int) -> np.ndarray:
        out = cur.copy()
        out[self.group_of[self.m1[k]]] = self.m1[k]
        if self.m2[k] != self.none:
            out[self.group_of[self.m2[k]]] = self.m2[k]
        return out

    def delta(self, cur: np.ndarray, ks: np.ndarray, q: np.ndarray | slice = slice(None)
              ) -> np.ndarray:
        """(N, P', C) change of the field of moves ``ks`` on points ``q``."""
        u = self.U[:, q]
        o1, o2 = self.m1[ks], self.m2[ks]
        d = u[o1] - u[cur[self.group_of[o1]]]
        two = o2 != self.none
        if two.any():
            d[two] += u[o2[two]] - u[cur[self.group_of[o2[two]]]]
        return d


class SetSearch:
    """Descents and kicks at set level (see the module notes)."""

    def __init__(self, moves: SetMoves, rng: np.random.Generator,
                 stats: SearchStats | None = None) -> None:
        self.mv, self.rng = moves, rng
        self.stats = stats if stats is not None else SearchStats()

    def descend(self, cur: np.ndarray, pool: Pool | None = None
                ) -> tuple[np.ndarray, np.ndarray, float]:
        """Improve ``cur`` until no single or pair move lowers the maximum."""
        mv = self.mv
        cur = cur.copy()
        s = mv.field(cur)
        while True:
            r2 = np.einsum("pc,pc->p", s, s)
            m = float(r2.max())
            q = np.argpartition(r2, -min(_SCREEN_POINTS, r2.size))[-_SCREEN_POINTS:]
            ks = np.nonzero(mv.valid(cur))[0]
            d = mv.delta(cur, ks, q) + s[q]
            b = np.einsum("npc,npc->np", d, d).max(axis=1)
            self.stats.screened += int(b.size)
            keep = b < m
            ks, b = ks[keep], b[keep]
            order = ks[np.argsort(b, kind="stable")]
            improved = False
            for k0 in range(0, min(order.size, _BATCH * _MAX_BATCHES), _BATCH):
                sel = order[k0:k0 + _BATCH]
                full = mv.delta(cur, sel) + s
                val = np.einsum("npc,npc->np", full, full).max(axis=1)
                self.stats.evaluated += int(sel.size)
                if pool is not None:
                    pool.add(np.stack([mv.arrangement(mv.moved(cur, int(k))) for k in sel]),
                             val)
                best = int(np.argmin(val))
                if val[best] < m * (1.0 - 1e-12):
                    s = full[best]
                    cur = mv.moved(cur, int(sel[best]))
                    improved = True
                    break
            if not improved:
                self.stats.descents += 1
                if pool is not None:
                    pool.add(mv.arrangement(cur)[None], np.array([m]))
                return cur, s, m

    def kick(self, cur: np.ndarray, n: int) -> np.ndarray:
        """``cur`` after ``n`` random valid moves."""
        for _ in range(n):
            ks = np.nonzero(self.mv.valid(cur))[0]
            if ks.size == 0:
                break
            cur = self.mv.moved(cur, int(ks[self.rng.integers(ks.size)]))
        return cur


def run_sets(space: Space, tables: Tables, pool: Pool, starts: Sequence[np.ndarray], *,
             seed: int, patience: int, deadline: float | None = None,
             max_evaluations: int | None = None, cancel: Callable[[], bool] | None = None,
             tick: Callable[[SearchStats, float], None] | None = None,
             stats: SearchStats | None = None) -> SearchStats | None:
    """Iterated local search at set level from ``starts`` (arrangements of ``space``).

    The free cells of the first start are held fixed. Stops like
    :func:`trayadvisor.ranking_local.run_local`. Returns None (nothing done) when the space
    has no groups or a group has too many contents.
    """
    if not space.groups or not starts:
        return None
    mv = SetMoves(space, tables, starts[0])
    if not mv.ok:
        return None
    ss = SetSearch(mv, np.random.default_rng(seed), stats)
    elite: list[tuple[float, np.ndarray]] = []

    def remember(cur: np.ndarray, m: float) -> None:
        if any(np.array_equal(cur, c) for _, c in elite):
            return
        elite.append((m, cur))
        elite.sort(key=lambda e: e[0])
        del elite[8:]

    found = []
    for a in starts:
        found.append(ss.descend(mv.state(np.asarray(a, dtype=np.int64)), pool))
        remember(found[-1][0], found[-1][2])
    inc, _, inc_m = min(found, key=lambda f: f[2])
    best, since, last, runs, fails = inc_m, 0, 0, 0, 0
    g = len(space.groups)
    restart_after = max(_RESTART_AFTER, 2 * g)
    kick_max = max(2, min(4, g // 3))
    while since < patience or since < last:
        if cancel is not None and cancel():
            ss.stats.stopped = "cancelled"
            break
        if deadline is not None and time.perf_counter() >= deadline:
            ss.stats.stopped = "budget"
            break
        if max_evaluations is not None and ss.stats.evaluated >= max_evaluations:
            ss.stats.stopped = "evaluations"
            break
        if fails >= restart_after:
            c0 = ss.kick(elite[int(ss.rng.integers(len(elite)))][1], 2 * kick_max)
            fails, inc_m = 0, np.inf
        else:
            c0 = ss.kick(inc, int(ss.rng.integers(2, kick_max + 1)))
        c1, _, m1 = ss.descend(c0, pool)
        remember(c1, m1)
        runs += 1
        if m1 < inc_m * (1.0 - 1e-12):
            inc, inc_m, fails = c1, m1, 0
        else:
            fails += 1
            if m1 <= inc_m:
                inc = c1
        if m1 < best * (1.0 - 1e-12):
            best, since, last = m1, 0, runs
        else:
            since += 1
        if tick is not None:
            tick(ss.stats, best)
    return ss.stats
