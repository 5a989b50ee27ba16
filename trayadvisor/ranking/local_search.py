"""Iterated local search over arrangements with incrementally evaluated swap moves.

A move permutes the kinds at a few positions: a *swap* exchanges two positions of one cell,
a *group swap* exchanges the contents of two groups of one shape (bundles). Moving kinds
changes the field by ``Δ = Σ_w V[pos_w, new_w] − V[pos_w, old_w]``, so a move costs O(points)
whatever the number of conductors. Every step screens all moves at once on the few points
where the field now peaks (a move that does not lower the field there cannot lower the
maximum), then evaluates the most promising ones on every point and takes the best
improvement. Descents restart from perturbed local optima (a few random swaps) and, after a
run of failures, from a random arrangement.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from trayadvisor.ranking.moves import move_state
from trayadvisor.ranking.space import Space
from trayadvisor.ranking.tables import Pool, Tables

_SCREEN_POINTS = 8  # peak points used to screen moves
_BATCH = 24  # moves evaluated on every point per batch
_MAX_BATCHES = 4  # batches tried before a state is declared a local optimum
_RESTART_AFTER = 30  # failed perturbations before a restart (at least; or J)
_SLACK = 0.01  # a perturbed descent within this share of the walk's best replaces it
_KICK_DIV = 10  # a perturbation makes up to n_positions / _KICK_DIV random moves
_RANDOM_RESTART = 0.1  # share of restarts from a random arrangement (else from the elite)


@dataclass
class SearchStats:
    evaluated: int = 0  # arrangements scored on every search point
    screened: int = 0  # arrangements scored on the peak points only
    descents: int = 0
    stopped: str = ""  # "", "budget", "evaluations", "cancelled"


def _families(space: Space) -> list[tuple[np.ndarray, np.ndarray]]:
    """Static move families as (pos, src) arrays: after the move ``a[pos] = a_old[src]``."""
    cells = list(space.free_cells)
    for grp in space.groups:
        cells.extend((s, e, None) for s, e in grp.subcells)
    pi, pj = [], []
    for s, e, _ in cells:
        i, j = np.triu_indices(e - s, k=1)
        pi.append(i + s)
        pj.append(j + s)
    out = []
    if pi:
        i, j = np.concatenate(pi), np.concatenate(pj)
        if i.size:
            out.append((np.stack([i, j], axis=1), np.stack([j, i], axis=1)))
    for members in space.shape_classes():
        if members.size < 2:
            continue
        gi, gj = np.triu_indices(members.size, k=1)
        span = [np.arange(space.groups[int(g)].start, space.groups[int(g)].stop)
                for g in members]
        a = np.stack([span[g] for g in gi])
        b = np.stack([span[g] for g in gj])
        out.append((np.concatenate([a, b], axis=1), np.concatenate([b, a], axis=1)))
    return out


class LinearState:
    """One arrangement and its field, for tables that add up (equal shares): a move changes
    the field by ``Δ = Σ_w V[pos_w, new_w] − V[pos_w, old_w]``, O(points) per move. The
    interface of :class:`trayadvisor.ranking.moves.MoveState`."""

    def __init__(self, tables: Tables, a: np.ndarray) -> None:
        self.v = tables.V  # (positions, kinds, points, channels)
        self.a = np.asarray(a, dtype=np.int64).copy()
        self.s = tables.fields(self.a)[0]  # (points, channels)
        self._refresh()

    def _refresh(self) -> None:
        self.r2 = np.einsum("pc,pc->p", self.s, self.s)
        self.value = float(self.r2.max())

    def peaks(self, n: int) -> np.ndarray:
        return np.argpartition(self.r2, -min(n, self.r2.size))[-n:]

    def _delta(self, v: np.ndarray, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        return (v[pos, self.a[src]] - v[pos, self.a[pos]]).sum(axis=-3)

    def screen(self, pos: np.ndarray, src: np.ndarray, points: np.ndarray) -> np.ndarray:
        d = self._delta(self.v[:, :, points], pos, src) + self.s[points]
        return np.einsum("npc,npc->np", d, d).max(axis=1)

    def evaluate(self, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        d = self._delta(self.v, pos, src) + self.s
        return np.einsum("npc,npc->np", d, d).max(axis=1)

    def apply(self, pos: np.ndarray, src: np.ndarray) -> None:
        self.s = self.s + self._delta(self.v, pos, src)
        self.a[pos] = self.a[src]
        self._refresh()


class LocalSearch:
    """Descents on one space and one set of tables (see the module notes)."""

    def __init__(self, space: Space, tables: Tables, rng: np.random.Generator) -> None:
        self.space, self.t, self.rng = space, tables, rng
        self.families = _families(space)
        self.stats = SearchStats()

    def random(self) -> np.ndarray:
        """A uniformly shuffled arrangement: groups trade sets, then each cell shuffles."""
        a = self.space.reference()
        for members in self.space.shape_classes():
            perm = self.rng.permutation(members)
            spans = [a[self.space.groups[int(g)].start:self.space.groups[int(g)].stop].copy()
                     for g in perm]
            for g, content in zip(members, spans, strict=True):
                grp = self.space.groups[int(g)]
                a[grp.start:grp.stop] = content
        for s, e in self._cells():
            a[s:e] = self.rng.permutation(a[s:e])
        return a

    def _cells(self) -> list[tuple[int, int]]:
        out = [(s, e) for s, e, _ in self.space.free_cells]
        for grp in self.space.groups:
            out.extend(grp.subcells)
        return out

    def perturb(self, a: np.ndarray, n: int) -> np.ndarray:
        """``a`` after ``n`` random effective moves."""
        a = a.copy()
        for _ in range(n):
            fam = self.families[int(self.rng.integers(len(self.families)))]
            pos, src = fam
            ok = np.nonzero((a[pos] != a[src]).any(axis=1))[0]
            if ok.size == 0:
                continue
            m = int(ok[self.rng.integers(ok.size)])
            a[pos[m]] = a[src[m]]
        return a

    def descend(self, a: np.ndarray, pool: Pool | None = None
                ) -> tuple[np.ndarray, np.ndarray | None, float]:
        """Improve ``a`` until no move lowers the maximum; returns (a, field, max r²).

        Every move is scored on the few points where the field now peaks — a lower bound of
        its value, so a move that does not lower the field there cannot lower the maximum —
        and the most promising ones on every point. With field tables that add up the
        state is :class:`LinearState` (the field is returned too); with solved currents a
        :func:`trayadvisor.ranking.moves.move_state` (exact; the field is None).
        """
        state = LinearState(self.t, a) if self.t.linear else \
            move_state(self.t, a)  # type: ignore[arg-type]
        while True:
            m = state.value
            q = state.peaks(_SCREEN_POINTS)
            cand: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
            cur = state.a
            for pos, src in self.families:
                ok = (cur[pos] != cur[src]).any(axis=1)
                p, r = pos[ok], src[ok]
                if p.size == 0:
                    continue
                b = state.screen(p, r, q)
                self.stats.screened += int(b.size)
                keep = b < m
                cand.append((p[keep], r[keep], b[keep]))
            if not self._improve(state, cand, m, pool):
                self.stats.descents += 1
                if pool is not None:
                    pool.add(state.a[None], np.array([m]))
                return state.a.copy(), getattr(state, "s", None), m

    def _improve(self, state, cand: list[tuple[np.ndarray, np.ndarray, np.ndarray]],  # noqa: ANN001
                 m: float, pool: Pool | None) -> bool:
        """Evaluate the screened moves, most promising first, in batches on every point;
        make the best of the first batch that lowers the maximum. False: none does."""
        for p, r, b in cand:
            order = np.argsort(b, kind="stable")
            for k in range(0, min(order.size, _BATCH * _MAX_BATCHES), _BATCH):
                sel = order[k:k + _BATCH]
                ps, rs = p[sel], r[sel]
                val = state.evaluate(ps, rs)
                self.stats.evaluated += int(sel.size)
                if pool is not None:
                    pool.add(self._moved(state.a, ps, rs), val)
                best = int(np.argmin(val))
                if val[best] < m * (1.0 - 1e-12):
                    state.apply(ps[best], rs[best])
                    return True
        return False

    @staticmethod
    def _moved(a: np.ndarray, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        out = np.repeat(a[None], pos.shape[0], axis=0)
        np.put_along_axis(out, pos, a[src], axis=1)
        return out


def run_local(space: Space, tables: Tables, pool: Pool, *, seed: int, patience: int,
              deadline: float | None = None, max_evaluations: int | None = None,
              cancel: Callable[[], bool] | None = None,
              tick: Callable[[SearchStats, float], None] | None = None,
              starts: Sequence[np.ndarray] = (),
              stats: SearchStats | None = None) -> SearchStats:
    """Iterated local search; every local optimum and scored neighbour goes into ``pool``.

    Descends from each of ``starts`` (else from the baseline, else a random arrangement),
    then from perturbed incumbents; after a run of failures it restarts, mostly from one of
    the pool's best kicked harder, sometimes from a random arrangement. Stops once
    ``patience`` descents in a row found no new best *and* the search has run at least
    twice as many descents as it needed for its best (hard problems keep going), at
    ``deadline`` (``time.perf_counter()``), after ``max_evaluations`` scored
    arrangements, or when ``cancel()`` is true.
    """
    ls = LocalSearch(space, tables, np.random.default_rng(seed))
    if stats is not None:
        ls.stats = stats
    if not ls.families:
        a = space.reference()
        pool.add(a[None], tables.values(a[None]))
        ls.stats.evaluated += 1
        return ls.stats
    first = list(starts) or [space.baseline if space.baseline is not None else ls.random()]
    found = [ls.descend(a, pool) for a in first]
    inc_a, _, inc_m = min(found, key=lambda f: f[2])
    best, since, last = inc_m, 0, 0
    fails = 0
    restart_after = max(_RESTART_AFTER, space.n_positions)
    kick = max(2, space.n_positions // _KICK_DIV)
    runs = 0
    while since < patience or since < last:
        if cancel is not None and cancel():
            ls.stats.stopped = "cancelled"
            break
        if deadline is not None and time.perf_counter() >= deadline:
            ls.stats.stopped = "budget"
            break
        if max_evaluations is not None and ls.stats.evaluated >= max_evaluations:
            ls.stats.stopped = "evaluations"
            break
        if fails >= restart_after:
            if ls.rng.random() < _RANDOM_RESTART:
                a0 = ls.random()
            else:
                elite = pool.codes[int(ls.rng.integers(min(len(pool), 8)))].astype(np.int64)
                a0 = ls.perturb(elite, 2 * kick)
            fails, inc_m = 0, np.inf
        else:
            a0 = ls.perturb(inc_a, int(ls.rng.integers(2, kick + 1)))
        a1, _, m1 = ls.descend(a0, pool)
        runs += 1
        if m1 < inc_m * (1.0 - 1e-12):
            inc_a, inc_m, fails = a1, m1, 0
        else:
            fails += 1
            if m1 <= inc_m * (1.0 + _SLACK):
                inc_a = a1
        if m1 < best * (1.0 - 1e-12):
            best, since, last = m1, 0, runs
        else:
            since += 1
        if tick is not None:
            tick(ls.stats, best)
    return ls.stats

