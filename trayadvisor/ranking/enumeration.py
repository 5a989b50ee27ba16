"""Enumeration of distinct arrangements in blocks: prefixes × suffix tables.

Every cell's kinds are laid out as multiset permutations (each distinct sequence once). The
position sequence is split at ``t``: the suffix (the last positions) is enumerated as a table
per multiset of remaining kinds, at most ``max_suffix`` rows; the prefixes are grouped by the
kinds they leave for the suffix. Every (prefix, suffix row) pair of one group is then one
distinct arrangement, and the field of the pair is the prefix's partial sum plus the suffix's,
so a block of ``Np × Ns`` arrangements costs ``Np + Ns`` partial sums and one broadcast.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence

import numpy as np

Cell = tuple[int, int, np.ndarray]  # (start, stop, counts over all kinds)


def multiset_sequences(counts: np.ndarray, length: int) -> tuple[np.ndarray, np.ndarray]:
    """All distinct sequences of ``length`` items drawn from a multiset.

    Parameters
    ----------
    counts : (K,) int
        How many of each kind are available.
    length : int
        Sequence length (at most ``counts.sum()``).

    Returns
    -------
    rows : (N, length) int
        Each distinct sequence once (N = multinomial count when ``length == counts.sum()``).
    remaining : (N, K) int
        Kinds left over after each sequence.

    Notes
    -----
    Breadth-first over the sequence positions, vectorised over all partial sequences.
    """
    counts = np.asarray(counts, dtype=np.int64)
    rows = np.zeros((1, 0), dtype=np.int64)
    rem = counts[None, :].copy()
    for _ in range(length):
        parts, rems = [], []
        for k in np.nonzero(counts)[0]:
            m = rem[:, k] > 0
            if not m.any():
                continue
            sub = rows[m]
            parts.append(np.concatenate([sub, np.full((sub.shape[0], 1), k)], axis=1))
            r = rem[m]
            r[:, k] -= 1
            rems.append(r)
        rows = np.concatenate(parts)
        rem = np.concatenate(rems)
    return rows, rem


def cartesian(blocks: Sequence[np.ndarray]) -> np.ndarray:
    """Row-wise Cartesian product: (Π N_i, Σ L_i) from blocks of shape (N_i, L_i)."""
    out = np.zeros((1, 0), dtype=np.int64)
    for b in blocks:
        n = b.shape[0]
        out = np.concatenate([np.repeat(out, n, axis=0), np.tile(b, (out.shape[0], 1))],
                             axis=1)
    return out


def multinomial(counts: np.ndarray) -> int:
    """n! / Π k_i! for the counts (exact integer)."""
    total, out = 0, 1
    for c in (int(v) for v in np.asarray(counts).ravel()):
        total += c
        out *= math.comb(total, c)
    return out


def blocks(cells: Sequence[Cell], max_suffix: int = 2048
           ) -> Iterator[tuple[np.ndarray, np.ndarray]]:
    """Yield ``(prefix_rows, suffix_rows)``; every pair is one distinct arrangement.

    ``cells`` must cover positions ``0..J`` in order. ``prefix_rows`` is (Np, t) and
    ``suffix_rows`` is (Ns, J − t); arrangement = ``concatenate(prefix_rows[i],
    suffix_rows[k])``. Over all yielded blocks each distinct arrangement appears once.
    """
    cells = sorted(cells, key=lambda c: c[0])
    sizes = [multinomial(c[2]) for c in cells]
    m = len(cells)
    prod = 1
    while m > 0 and prod * sizes[m - 1] <= max_suffix:
        prod *= sizes[m - 1]
        m -= 1
    tail = [multiset_sequences(c[2], c[1] - c[0])[0] for c in cells[m:]]
    if m == 0:
        yield np.zeros((1, 0), dtype=np.int64), cartesian(tail)
        return
    s, e, counts = cells[m - 1]
    length = e - s
    head = cartesian([multiset_sequences(c[2], c[1] - c[0])[0] for c in cells[:m - 1]])
    for keep in range(length - 1, -1, -1):  # positions of the split cell in the suffix
        pre, rem = multiset_sequences(counts, length - keep)
        uniq, inv = np.unique(rem, axis=0, return_inverse=True)
        if keep == 0 or max(multinomial(r) for r in uniq) * prod <= max_suffix:
            break
    inv = inv.reshape(-1)
    for u, r in enumerate(uniq):
        part = pre[inv == u]
        suffix = cartesian([multiset_sequences(r, keep)[0]] + tail)
        yield cartesian([head, part]), suffix
