"""Precomputed field tables of the candidate positions, batch scoring, and the pool of best.

For every candidate position ``j``, kind ``k`` and objective point ``p`` the tables hold the
real field channels the kind's currents make there,
``V[j, k, p, c]`` with ``c`` running over (Re Bx, Re By, Im Bx, Im By) of every frequency
component (channels that are zero for every kind and fixed conductor are dropped). Fixed
conductors give ``F[p, c]``. An arrangement ``a`` then has the field
``F + Σ_j V[j, a_j]`` and the squared resultant ``Σ_c (…)²`` at each point, so scoring many
arrangements is one matrix product of their one-hot codes with ``V`` (BLAS).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from trayadvisor.engine import SourceArrays, unit_fields
from trayadvisor.engine.units import MM
from trayadvisor.ranking.space import Space

_CHUNK_FLOATS = 1 << 22  # floats in one temporary (32 MB)
_STAGE_POINTS = 48  # points of the first pass of :meth:`Tables.values_below`


def _channels(g: np.ndarray, currents: np.ndarray) -> np.ndarray:
    """Unit fields × (H, n) phasors → (n, P, 4H) real channels per source.

    ``g`` is (n, P, 2) real (free space) or (H, n, P, 2) complex (plates: one table per
    component); the channels of component h are (Re Bx, Re By, Im Bx, Im By)."""
    if g.ndim == 3:
        re = currents.real.T[:, None, :, None] * g[:, :, None, :]  # (n, P, H, 2)
        im = currents.imag.T[:, None, :, None] * g[:, :, None, :]
        out = np.concatenate([re, im], axis=-1)  # (n, P, H, 4)
        return out.reshape(g.shape[0], g.shape[1], -1)
    b = currents[:, :, None, None] * g  # (H, n, P, 2) complex
    out = np.concatenate([b.real, b.imag], axis=-1)  # (H, n, P, 4)
    return np.ascontiguousarray(out.transpose(1, 2, 0, 3)).reshape(g.shape[1], g.shape[2], -1)


class Tables:
    """Field of every kind at every candidate position on a set of points (see module notes).

    Parameters
    ----------
    space : Space
    src : SourceArrays
        The layout's sources (currents and radii of the fixed conductors).
    pts_m : (P, 2) float
        Objective points, m.
    keep_all : bool
        Keep every channel, also those zero for every kind (the exact solved scores of
        :class:`~trayadvisor.ranking.solved.SolvedTables` have all of them).
    weights : (P, H) float, optional
        Factor on each frequency component's field at each point (the objective's weights,
        :class:`~trayadvisor.ranking.objective.Objective`: 0 drops a component, 1/level
        turns a field into a limit's index); default 1 everywhere.
    """

    #: Scores are sums of the tables (equal shares); False for the solved tables.
    linear = True

    def __init__(self, space: Space, src: SourceArrays, pts_m: np.ndarray,
                 keep_all: bool = False, weights: np.ndarray | None = None) -> None:
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        pos = space.positions_mm * MM
        # (J, P, 2), or (H, J, P, 2) complex with plates
        g = unit_fields(pos, 0.5 * space.diameters_mm * MM, pts, src.reaction, src.frequency_hz)
        cur = space.kind_currents()  # (H, K)
        j, k = space.n_positions, space.n_kinds
        per_kind = [_channels(g, np.repeat(cur[:, [q]], j, axis=1)) for q in range(k)]
        v = np.stack(per_kind, axis=1) if per_kind else np.zeros((j, 0, pts.shape[0], 0))
        fixed = list(space.fixed)
        if fixed:
            gf = unit_fields(src.xy_m[fixed], src.radius_m[fixed], pts, src.reaction,
                             src.frequency_hz)
            f = _channels(gf, src.currents[:, fixed]).sum(axis=0)
        else:
            f = np.zeros((pts.shape[0], v.shape[-1] if v.size else 4 * cur.shape[0]))
        if v.shape[-1] != f.shape[-1]:
            v = np.zeros((j, k, pts.shape[0], f.shape[-1]))
        if weights is not None:  # channel h·4 + c carries component h
            wc = np.repeat(np.asarray(weights, dtype=float).reshape(pts.shape[0], -1), 4, axis=1)
            v = v * wc[None, None]
            f = f * wc
        live = (np.abs(v).reshape(-1, v.shape[-1]).max(axis=0, initial=0.0) > 0) | \
            (np.abs(f).max(axis=0, initial=0.0) > 0)
        if keep_all:
            live[:] = True
        elif not live.any():
            live[0] = True
        self.V = np.ascontiguousarray(v[..., live])
        self.F = np.ascontiguousarray(f[:, live])
        self.pts_m = pts
        self._stage: Tables | None = None

    @property
    def shape(self) -> tuple[int, int, int, int]:
        return self.V.shape  # type: ignore[return-value]

    def subset(self, idx: np.ndarray) -> Tables:
        """The same tables on a subset of the points."""
        t = object.__new__(Tables)
        t.V = np.ascontiguousarray(self.V[:, :, idx])
        t.F = np.ascontiguousarray(self.F[idx])
        t.pts_m = self.pts_m[idx]
        t._stage = None
        return t

    def reduced(self, v: np.ndarray, expand: Callable[[np.ndarray], np.ndarray],
                sub: Space) -> Tables:
        """The tables of a restricted sub-problem whose per-position tables are ``v``
        (``expand`` maps its codes to this space; sums of tables need no expansion)."""
        t = object.__new__(Tables)
        t.V, t.F, t.pts_m, t._stage = np.ascontiguousarray(v), self.F, self.pts_m, None
        return t

    def fields(self, codes: np.ndarray) -> np.ndarray:
        """(N, P, C) field channels of arrangements ``codes`` (N, J) — one matrix product."""
        codes = np.asarray(codes).reshape(-1, self.V.shape[0])
        j, k, p, c = self.V.shape
        flat = self.V.reshape(j * k, p * c)
        if codes.shape[0] <= 4:  # a gather is cheaper than waking the BLAS threads
            out = flat[codes + np.arange(j) * k].sum(axis=1)
            out += self.F.reshape(1, -1)
            return out.reshape(-1, p, c)
        onehot = np.zeros((codes.shape[0], j * k))
        np.put_along_axis(onehot, codes + np.arange(j) * k, 1.0, axis=1)
        out = onehot @ flat
        out += self.F.reshape(1, -1)
        return out.reshape(-1, p, c)

    def values_below(self, codes: np.ndarray, threshold: float
                     ) -> tuple[np.ndarray, np.ndarray]:
        """Rows whose value is below ``threshold`` (T²) and their values.

        A first pass on a few evenly spread points (a lower bound of the full maximum)
        drops most rows before the full evaluation.
        """
        codes = np.asarray(codes).reshape(-1, self.V.shape[0])
        p = self.V.shape[2]
        if np.isfinite(threshold) and p > 2 * _STAGE_POINTS and codes.shape[0] > 8:
            if self._stage is None:
                self._stage = self.subset(np.linspace(0, p, _STAGE_POINTS, endpoint=False)
                                          .astype(int))
            keep = np.nonzero(self._stage.values(codes) < threshold)[0]
            codes = codes[keep]
        else:
            keep = np.arange(codes.shape[0])
        v = self.values(codes)
        ok = v < threshold
        return keep[ok], v[ok]

    def values(self, codes: np.ndarray) -> np.ndarray:
        """(N,) largest squared resultant over the points, T², of each arrangement."""
        codes = np.asarray(codes).reshape(-1, self.V.shape[0])
        n = codes.shape[0]
        step = max(1, _CHUNK_FLOATS // max(1, self.V.shape[2] * self.V.shape[3]))
        out = np.empty(n)
        for s in range(0, n, step):
            b = self.fields(codes[s:s + step])
            out[s:s + step] = np.einsum("npc,npc->np", b, b).max(axis=1)
        return out


class Pool:
    """The best distinct arrangements seen so far (squared values, ascending).

    Rows are stored in canonical form (``canon``: mirror twins merged), one per class, with the
    smallest value seen. :meth:`threshold` is the value an arrangement must beat to enter.
    """

    def __init__(self, capacity: int, n_positions: int,
                 canon: Callable[[np.ndarray], np.ndarray] | None = None) -> None:
        self.capacity = int(capacity)
        self.codes = np.zeros((0, n_positions), dtype=np.int16)
        self.values = np.zeros(0)
        self._canon = canon

    def __len__(self) -> int:
        return self.values.size

    def threshold(self) -> float:
        """Squared value of the worst kept row when full, else +inf."""
        return float(self.values[-1]) if self.values.size >= self.capacity else np.inf

    def add(self, codes: np.ndarray, values: np.ndarray) -> None:
        values = np.asarray(values, dtype=float).reshape(-1)
        codes = np.asarray(codes).reshape(values.size, self.codes.shape[1])
        if values.size == 0:
            return
        keep = values < self.threshold()
        if not keep.any():
            return
        codes, values = codes[keep], values[keep]
        if self._canon is not None:
            codes = self._canon(codes)
        if codes.shape[1] == 0:  # nothing to arrange: one arrangement
            self.codes, self.values = codes[:1].astype(np.int16), values[:1]
            return
        allc = np.concatenate([self.codes, codes.astype(np.int16)])
        allv = np.concatenate([self.values, values])
        order = np.argsort(allv, kind="stable")
        allc, allv = allc[order], allv[order]
        key = np.ascontiguousarray(allc).view(np.dtype((np.void, allc.shape[1] * 2)))
        _, first = np.unique(key.reshape(-1), return_index=True)
        first = np.sort(first)[: self.capacity]
        self.codes, self.values = allc[first], allv[first]
