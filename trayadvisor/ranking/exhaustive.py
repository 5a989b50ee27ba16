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

from trayadvisor.ranking.blocks import BlockScorer
from trayadvisor.ranking.enumeration import blocks
from trayadvisor.ranking.space import Space
from trayadvisor.ranking.tables import Pool, Tables

_FILTER_UNIFORM = 12  # evenly spread filter points
_FILTER_PEAKS = 4  # plus the peak points of the best arrangements found so far
_MAX_SUFFIX = 2048
_BLOCK_FLOATS = 1 << 21
_EPS = np.finfo(float).eps
_EXACT_PAIRS = 32768  # arrangements scored together by the exact (solved) search
_EXACT_SUFFIX = 2048  # largest suffix table of the exact search
_EXACT_UNIFORM = 2  # evenly spread filter points of the exact search (plus the peaks)


def filter_points(tables: Tables, pool: Pool, uniform: int = _FILTER_UNIFORM) -> np.ndarray:
    """Indices of the filter points: evenly spread ones plus the pool's peak points."""
    p = tables.V.shape[2]
    idx = set(np.linspace(0, p, uniform, endpoint=False).astype(int).tolist())
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


def canonical_prefixes(pre: np.ndarray, kmaps: list[np.ndarray]
                       ) -> tuple[np.ndarray, np.ndarray]:
    """Which prefixes can start the lexicographically smallest member of their class under
    the kind relabellings ``kmaps`` (a group), and for which relabelling a prefix is its own
    image (then the suffix decides): ``(keep (Np,), tied (Np, len(kmaps)))``."""
    keep = np.ones(pre.shape[0], dtype=bool)
    tied = np.zeros((pre.shape[0], len(kmaps)), dtype=bool)
    if pre.shape[1] == 0:  # an empty prefix is its own image: the suffix decides
        return keep, ~tied
    rows = np.arange(pre.shape[0])
    for i, kmap in enumerate(kmaps):
        t = kmap[pre]
        diff = t != pre
        some = diff.any(axis=1)
        first = np.argmax(diff, axis=1)
        keep &= ~(some & (t[rows, first] < pre[rows, first]))
        tied[:, i] = ~some
    return keep, tied


def _suffix_ok(suf: np.ndarray, kmaps: list[np.ndarray], tied: np.ndarray) -> np.ndarray:
    """(Ns,) suffixes with σ(suffix) ≥ suffix for every relabelling σ marked in ``tied``."""
    ok = np.ones(suf.shape[0], dtype=bool)
    if suf.shape[1] == 0:
        return ok
    rows = np.arange(suf.shape[0])
    for i in np.nonzero(tied)[0]:
        t = kmaps[i][suf]
        diff = t != suf
        first = np.argmax(diff, axis=1)
        ok &= ~(diff.any(axis=1) & (t[rows, first] < suf[rows, first]))
    return ok


def _exhaustive_exact(space: Space, tables: Tables, pool: Pool, *,
                      deadline: float | None, cancel: Callable[[], bool] | None,
                      tick: Callable[[int], None] | None, clock: Callable[[], float]
                      ) -> tuple[int, str]:
    """:func:`exhaustive` with exact solved scores: the currents of every arrangement are
    its own, so the filter bound is the arrangement's exact field on the filter points (a
    lower bound of its maximum over all points), computed for every arrangement."""
    idx = filter_points(tables, pool)
    tf = tables.subset(idx)
    # Each arrangement's field costs a small solve, so the first filter is kept to a few
    # points (the best arrangements' peaks): most arrangements fail it already.
    fast = BlockScorer(tables, filter_points(tables, pool, _EXACT_UNIFORM)) \
        if tables.model.schur and tables.expand is None else None
    kmaps = [k for p, k in space.symmetries if p is None and k is not None]
    mirrored = any(p is not None and k is None for p, k in space.symmetries)
    done = 0
    for config in space.configurations():
        for pre_all, suf_all in blocks(space.cells(config), _EXACT_SUFFIX):
            ns_all = suf_all.shape[0]
            keep, tied = canonical_prefixes(pre_all, kmaps)
            for pattern in np.unique(tied[keep], axis=0):  # usually one: no ties
                pre = pre_all[keep & (tied == pattern).all(axis=1)]
                suf = suf_all[_suffix_ok(suf_all, kmaps, pattern)]
                if not pre.shape[0] or not suf.shape[0]:
                    continue
                keys = _mirror_keys(pre, suf, space.mirror if mirrored else None,
                                    space.n_kinds)
                if keys is not None:  # sorted by key: a chunk needs a tail of suffixes
                    kp, ks = keys
                    op, os_ = np.argsort(kp, kind="stable"), np.argsort(ks, kind="stable")
                    pre, kp, suf, ks = pre[op], kp[op], suf[os_], ks[os_]
                s = 0
                while s < pre.shape[0]:
                    start = 0 if keys is None else int(np.searchsorted(ks, kp[s]))
                    sub = suf[start:]
                    ns = sub.shape[0]
                    e = min(pre.shape[0], s + max(1, _EXACT_PAIRS // max(1, ns)))
                    if ns:
                        stop = _exact_chunk(tables, tf, fast, pool, pre[s:e], sub,
                                            None if keys is None else (kp[s:e], ks[start:]),
                                            cancel, deadline, clock)
                        if stop:
                            return done, stop
                    s = e
            # every arrangement of the block is covered: scored, or a relabelled twin of
            # one scored in another block
            done += pre_all.shape[0] * ns_all
            if tick is not None:
                tick(done)
    return done, ""


def _mirror_keys(pre: np.ndarray, suf: np.ndarray, mirror: np.ndarray | None, n_kinds: int
                 ) -> tuple[np.ndarray, np.ndarray] | None:
    """Keys that order an arrangement against its mirror image from the leading positions.

    When the first L positions of the prefix mirror onto suffix positions, comparing an
    arrangement with its mirror image over those positions is comparing two base-K numbers:
    the prefix's key and the suffix's key. An arrangement whose prefix key is larger has a
    strictly smaller mirror twin, scored in its place. None when no position qualifies.
    """
    if mirror is None:
        return None
    tp = pre.shape[1]
    lead = mirror[:tp] >= tp
    length = int(np.argmin(lead)) if not lead.all() else tp
    length = min(length, int(62 // max(1.0, np.log2(max(n_kinds, 2)))))
    if length == 0:
        return None
    w = n_kinds ** np.arange(length - 1, -1, -1, dtype=np.int64)
    return pre[:, :length] @ w, suf[:, mirror[:length] - tp] @ w


def _exact_chunk(tables: Tables, tf: Tables, fast: BlockScorer | None, pool: Pool,
                 pre: np.ndarray, suf: np.ndarray,
                 keys: tuple[np.ndarray, np.ndarray] | None,
                 cancel: Callable[[], bool] | None, deadline: float | None,
                 clock: Callable[[], float]) -> str:
    """Score the pairs of ``pre`` × ``suf`` into ``pool``; returns a stop reason or ""."""
    ns = suf.shape[0]
    codes = np.concatenate([np.repeat(pre, ns, axis=0), np.tile(suf, (pre.shape[0], 1))],
                           axis=1)
    # a pair whose mirror twin is strictly smaller is scored as that twin: skipped here
    mask = None if keys is None else keys[0][:, None] <= keys[1][None, :]
    if fast is not None:
        bound = fast.values(pre, suf, mask).ravel()
    else:
        bound = tf.values(codes)
        if mask is not None:
            bound = np.where(mask.ravel(), bound, np.inf)
    if not np.isfinite(pool.threshold()):  # fill the pool from the best bounds
        best = np.argsort(bound)[: 4 * pool.capacity]
        best = best[np.isfinite(bound[best])]
        pool.add(codes[best], tables.values(codes[best]))
    finite = bound[np.isfinite(bound)]
    tol = 64.0 * _EPS * float(finite.max(initial=0.0))
    ii = np.nonzero(bound < pool.threshold() + tol)[0]
    if ii.size and fast is not None:  # the full filter on the survivors
        ii = ii[tf.values(codes[ii]) < pool.threshold() + tol]
    if ii.size:
        rows, vals = tables.values_below(codes[ii], pool.threshold())
        pool.add(codes[ii[rows]], vals)
    if cancel is not None and cancel():
        return "cancelled"
    if deadline is not None and clock() >= deadline:
        return "budget"
    return ""
