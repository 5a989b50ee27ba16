"""Exhaustive scoring of every distinct arrangement, in blocks, with an exact filter.

Each block of :func:`trayadvisor.ranking.enumeration.blocks` pairs ``Np`` prefixes with ``Ns``
suffixes. On a few *filter points* the squared resultant of every pair is

    |P + S|² = |P|² + |S|² + 2 P·S,

where the cross terms of all pairs at one point are one small matrix product (BLAS), so a
block costs O(Np·Ns·points) with a tiny constant. The maximum over the filter points is a
lower bound of the maximum over all search points; only pairs whose bound is below the
pool's threshold (plus a rounding allowance) are scored in full and offered to the pool.
No arrangement that could enter the pool is skipped, so the pool ends up exactly as if every
arrangement had been scored on every point.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from trayadvisor.ranking.enumeration import blocks
from trayadvisor.ranking.space import Space
from trayadvisor.ranking.tables import Pool, Tables

_FILTER_UNIFORM = 12  # evenly spread filter points
_FILTER_PEAKS = 4  # plus the peak points of the best arrangements found so far
_MAX_SUFFIX = 2048
_BLOCK_FLOATS = 1 << 21
_EPS = np.finfo(float).eps
_EXACT_PAIRS = 4096  # arrangements scored together by the exact (solved) search


def filter_points(tables: Tables, pool: Pool) -> np.ndarray:
    """Indices of the filter points: evenly spread ones plus the pool's peak points."""
    p = tables.V.shape[2]
    idx = set(np.linspace(0, p, _FILTER_UNIFORM, endpoint=False).astype(int).tolist())
    if len(pool):
        b = tables.fields(pool.codes[:_FILTER_PEAKS].astype(np.int64))
        idx.update(np.argmax(np.einsum("npc,npc->np", b, b), axis=1).tolist())
    return np.array(sorted(idx), dtype=np.int64)


def _partial(v: np.ndarray, rows: np.ndarray, offset: int) -> np.ndarray:
    """Σ_j V[offset + j, rows[:, j]] for every row: (N, P, C), one matrix product."""
    n, t = rows.shape
    _, k, p, c = v.shape
    if t == 0:
        return np.zeros((n, p, c))
    onehot = np.zeros((n, t * k))
    np.put_along_axis(onehot, rows + np.arange(t) * k, 1.0, axis=1)
    return (onehot @ v[offset:offset + t].reshape(t * k, p * c)).reshape(n, p, c)


def exhaustive(space: Space, tables: Tables, pool: Pool, *,
               deadline: float | None = None,
               cancel: Callable[[], bool] | None = None,
               tick: Callable[[int], None] | None = None,
               clock: Callable[[], float] | None = None) -> tuple[int, str]:
    """Score every distinct arrangement into ``pool``; returns (arrangements done, stop reason).

    The stop reason is "" when every arrangement was covered, else "budget" or "cancelled".
    """
    import time

    clock = clock or time.perf_counter
    if not tables.linear:
        return _exhaustive_exact(space, tables, pool, deadline=deadline, cancel=cancel,
                                 tick=tick, clock=clock)
    tf = tables.subset(filter_points(tables, pool))
    done = 0
    for config in space.configurations():
        for pre, suf in blocks(space.cells(config), _MAX_SUFFIX):
            t = pre.shape[1]
            pre_f = _partial(tf.V, pre, 0) + tf.F
            suf_f = _partial(tf.V, suf, t)
            a = np.einsum("npc,npc->pn", pre_f, pre_f)  # (Pf, Np)
            c = np.einsum("npc,npc->pn", suf_f, suf_f)  # (Pf, Ns)
            st = np.ascontiguousarray(suf_f.transpose(1, 2, 0))  # (Pf, C, Ns)
            pt = np.ascontiguousarray(pre_f.transpose(1, 0, 2))  # (Pf, Np, C)
            tol = 64.0 * _EPS * (float(a.max(initial=0.0)) + float(c.max(initial=0.0)))
            ns = suf.shape[0]
            step = max(1, _BLOCK_FLOATS // max(1, ns * a.shape[0]))
            for s in range(0, pre.shape[0], step):
                e = min(pre.shape[0], s + step)
                cross = np.matmul(pt[:, s:e], st)  # (Pf, B, Ns)
                cross *= 2.0
                cross += a[:, s:e, None]
                cross += c[:, None, :]
                bound = cross.max(axis=0)
                if not np.isfinite(pool.threshold()):  # fill the pool from the best bounds
                    flat = np.argsort(bound, axis=None)[: 4 * pool.capacity]
                    i0, k0 = np.unravel_index(flat, bound.shape)
                    codes = np.concatenate([pre[s + i0], suf[k0]], axis=1)
                    pool.add(codes, tables.values(codes))
                ii, kk = np.nonzero(bound < pool.threshold() + tol)
                if ii.size:
                    codes = np.concatenate([pre[s + ii], suf[kk]], axis=1)
                    rows, vals = tables.values_below(codes, pool.threshold())
                    pool.add(codes[rows], vals)
                done += (e - s) * ns
                if tick is not None:
                    tick(done)
                if cancel is not None and cancel():
                    return done, "cancelled"
                if deadline is not None and clock() >= deadline:
                    return done, "budget"
    return done, ""


def _exhaustive_exact(space: Space, tables: Tables, pool: Pool, *,
                      deadline: float | None, cancel: Callable[[], bool] | None,
                      tick: Callable[[int], None] | None, clock: Callable[[], float]
                      ) -> tuple[int, str]:
    """:func:`exhaustive` with exact solved scores: the currents of every arrangement are
    its own, so the filter bound is the arrangement's exact field on the filter points (a
    lower bound of its maximum over all points), computed for every arrangement."""
    tf = tables.subset(filter_points(tables, pool))
    done = 0
    for config in space.configurations():
        for pre, suf in blocks(space.cells(config), _MAX_SUFFIX):
            ns = suf.shape[0]
            step = max(1, _EXACT_PAIRS // max(1, ns))
            for s in range(0, pre.shape[0], step):
                e = min(pre.shape[0], s + step)
                codes = np.concatenate([np.repeat(pre[s:e], ns, axis=0),
                                        np.tile(suf, (e - s, 1))], axis=1)
                bound = tf.values(codes)
                if not np.isfinite(pool.threshold()):  # fill the pool from the best bounds
                    best = np.argsort(bound)[: 4 * pool.capacity]
                    pool.add(codes[best], tables.values(codes[best]))
                tol = 64.0 * _EPS * float(bound.max(initial=0.0))
                ii = np.nonzero(bound < pool.threshold() + tol)[0]
                if ii.size:
                    rows, vals = tables.values_below(codes[ii], pool.threshold())
                    pool.add(codes[ii[rows]], vals)
                done += (e - s) * ns
                if tick is not None:
                    tick(done)
                if cancel is not None and cancel():
                    return done, "cancelled"
                if deadline is not None and clock() >= deadline:
                    return done, "budget"
    return done, ""
