"""Exact scores of arrangements with the currents each one really carries (solved sharing).

With solved sharing the currents of parallel conductors depend on where every conductor
lies, so an arrangement's field is no longer a sum of per-position tables. It is still cheap
to get exactly, because the candidate positions do not move:

- Every movable position and every fixed parallel conductor is a row s of one impedance
  matrix Z (self and mutual inductance, resistance at each component's own frequency). When
  the conductors that may share a position have one size (the usual case), Z does not depend
  on the arrangement, so Y = Z⁻¹ is computed once per frequency component.
- An arrangement assigns every row a *column*: its parallel group (one per circuit and
  phase), or a column of its own for a conductor whose current is known (a single
  conductor of a phase, an empty place: current 0). All rows of a column share one voltage
  drop U, and a column's currents sum to its total T. With the incidence matrix E (rows ×
  columns) the currents are I = Y (E U − c), c = Z I_k the voltage the fixed known currents
  induce, and U solves the small system (Eᵀ Y E) U = T + Eᵀ Y c.
- The field of the arrangement at a point is Σ_s I_s g_s(p) plus that of the fixed known
  currents.

A move of a local search changes a few rows of E, so Eᵀ Y E changes by a few outer products
and a move costs O(columns²) plus the field on the points it is screened on
(:class:`trayadvisor.ranking.moves.MoveState`). When the sizes differ, every arrangement is
solved in full with the layout's sharing plan (:mod:`trayadvisor.coupling.sharing`), exact
but slower. Whole enumeration blocks are scored by :mod:`trayadvisor.ranking.blocks`, the
small systems solved by :mod:`trayadvisor.ranking.smallsolve`.

The result is identical to :func:`trayadvisor.coupling.solved_sources` on the arrangement's
positions.

References
----------
F. W. Grover, *Inductance Calculations*, 1946 (self and mutual inductance per metre); the
reduction to the columns is a Schur complement of the bordered system (Golub and Van Loan,
*Matrix Computations*, from memory).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling import (
    SharingError,
    SharingPlan,
    log_distance_matrix,
    sharing_plan,
    solve_plan,
)
from trayadvisor.engine import SourceArrays, unit_fields
from trayadvisor.engine.units import K_LINE, MM
from trayadvisor.model import Layout
from trayadvisor.ranking.smallsolve import solve_small
from trayadvisor.ranking.space import TOL_MM, Space
from trayadvisor.ranking.tables import Tables

_STAGE_POINTS = 48  # points of the first pass of :meth:`SolvedTables.values_below`
_CHUNK = 2048  # arrangements per batched solve


def _channels(b: np.ndarray) -> np.ndarray:
    """(N, H, P, 2) complex → (N, P, 4H) real channels, per component [Re x, Re y, Im x, Im y]
    (the layout of :class:`trayadvisor.ranking.tables.Tables`)."""
    n, h, p, _ = b.shape
    out = np.concatenate([b.real, b.imag], axis=-1)  # (N, H, P, 4)
    return np.ascontiguousarray(out.transpose(0, 2, 1, 3)).reshape(n, p, 4 * h)


@dataclass
class _Model:
    """Everything of the solve that depends neither on the arrangement nor on the points."""

    plan: SharingPlan
    n_rows: int  # J movable rows, then the fixed parallel conductors
    fixed_free: np.ndarray  # conductor indices of fixed conductors in parallel groups
    fixed_known: np.ndarray  # conductor indices of the other fixed conductors
    kind_group: np.ndarray  # (K,) column of a free kind's group, -1 for known kinds
    known_kinds: np.ndarray  # kinds with a known current (empty places included)
    known_base: np.ndarray  # (K,) first column of a known kind's own columns
    n_cols: int
    col_total: np.ndarray  # (H, G) column totals
    ff_col: np.ndarray  # columns of the fixed parallel conductors
    schur: bool  # Y is arrangement-independent
    Y: np.ndarray | None  # (H, S, S)
    yc: np.ndarray | None  # (H, S) Y c
    xy_rows: np.ndarray  # (S, 2) m
    radius_rows: np.ndarray  # (S,) m
    kind_members: tuple[tuple[int, ...], ...]


def _model(space: Space, layout: Layout, temperature_c: float) -> _Model:
    plan = sharing_plan(layout, temperature_c)
    src = plan.sources
    group_of = {int(i): int(g) for i, g in zip(plan.free, plan.group_of_free, strict=True)}
    fixed = np.array(space.fixed, dtype=int)
    fixed_free = np.array([i for i in fixed if i in group_of], dtype=int)
    fixed_known = np.array([i for i in fixed if i not in group_of], dtype=int)
    k = space.n_kinds
    kind_group = np.full(k, -1, dtype=int)
    for q, kind in enumerate(space.kinds):
        gs = {group_of.get(i, -1) for i in kind.members}
        if len(gs) > 1:
            raise ValueError(f"kind {kind.label} mixes parallel and single conductors")
        kind_group[q] = gs.pop() if gs else -1
    known_kinds = np.nonzero(kind_group < 0)[0]
    known_base, n_cols, col_total = _known_columns(space, plan, kind_group)
    ff_col = np.array([group_of[int(i)] for i in fixed_free], dtype=int)
    j = space.n_positions
    xy_rows = np.concatenate([space.positions_mm * MM, src.xy_m[fixed_free]]).reshape(-1, 2)
    radius_rows = np.concatenate([0.5 * space.diameters_mm * MM, src.radius_m[fixed_free]])
    model = _Model(plan, j + fixed_free.size, fixed_free, fixed_known, kind_group, known_kinds,
                   known_base, n_cols, col_total, ff_col, False, None, None, xy_rows,
                   radius_rows, tuple(kd.members for kd in space.kinds))
    _impedance(model, space)
    return model


def _known_columns(space: Space, plan: SharingPlan, kind_group: np.ndarray
                   ) -> tuple[np.ndarray, int, np.ndarray]:
    """The columns: one per parallel group, then one per place holding a known current
    (each kind's places in order); returns (first column of each known kind, count,
    totals (H, G))."""
    k = space.n_kinds
    counts = np.bincount(space.reference(), minlength=k)  # places of each kind, any code
    known_base = np.full(k, -1, dtype=int)
    col = plan.starts.size
    for q in np.nonzero(kind_group < 0)[0]:
        known_base[q] = col
        col += int(counts[q])
    h = plan.orders.size
    col_total = np.zeros((h, col), dtype=complex)
    col_total[:, :plan.starts.size] = plan.totals
    for q in np.nonzero(kind_group < 0)[0]:
        cur = space.kinds[q].currents if not space.kinds[q].empty else np.zeros(h)
        col_total[:, known_base[q]:known_base[q] + counts[q]] = np.asarray(cur)[:, None]
    return known_base, col, col_total


def _aggregable(m: _Model, sub: Space, owner: np.ndarray) -> bool:
    """Whether every position of ``sub`` that stands for several places can only hold
    conductors of parallel groups (their places then share one column)."""
    many = np.bincount(owner, minlength=sub.n_positions) > 1
    if not many.any():
        return True
    known = m.kind_group < 0
    dk = np.array([kd.diameter_mm for kd in sub.kinds])
    for r in np.nonzero(many)[0]:
        fits = np.abs(dk - sub.diameters_mm[r]) <= TOL_MM
        if np.any(fits & known):
            return False
    return True


def _impedance(m: _Model, space: Space) -> None:
    """Y = Z⁻¹ over the rows when every free kind of a diameter has one impedance (and no
    screen is in the system: a screen moves with its core, so its row is not a place)."""
    plan = m.plan
    if plan.lam_fix is not None:
        return
    pos_free = {int(i): p for p, i in enumerate(plan.free)}
    r_of = {}  # row → (H,) resistance and gmr of its free occupants
    diam = space.diameters_mm
    for q, kind in enumerate(space.kinds):
        if m.kind_group[q] < 0:
            continue
        sig = [(tuple(np.round(plan.r_free[:, pos_free[i]], 15)),
                round(float(plan.gmr[i]), 15)) for i in kind.members]
        if len(set(sig)) > 1:
            return
        for jj in np.nonzero(np.abs(diam - kind.diameter_mm) <= TOL_MM)[0]:
            if int(jj) in r_of and r_of[int(jj)] != sig[0]:
                return  # two free kinds of different impedance may take this place
            r_of[int(jj)] = sig[0]
    h = plan.orders.size
    s = m.n_rows
    r = np.ones((h, s))
    gmr = np.array(m.radius_rows) * np.exp(-0.25)
    for row, (rr, g) in r_of.items():
        r[:, row] = rr
        gmr[row] = g
    j = space.n_positions
    for n, i in enumerate(m.fixed_free):
        r[:, j + n] = plan.r_free[:, pos_free[int(i)]]
        gmr[j + n] = plan.gmr[i]
    with np.errstate(all="ignore"):
        lam = log_distance_matrix(m.xy_rows, gmr)
        src = plan.sources
        kx = src.xy_m[m.fixed_known]
        dk = np.hypot(m.xy_rows[:, None, 0] - kx[None, :, 0],
                      m.xy_rows[:, None, 1] - kx[None, :, 1])
        lam_k = np.log(dk)
    if not (np.all(np.isfinite(lam)) and np.all(np.isfinite(lam_k))):
        return  # a candidate place on a fixed conductor: the full solve reports it
    y = np.empty((h, s, s), dtype=complex)
    yc = np.empty((h, s), dtype=complex)
    i_k = src.currents[:, m.fixed_known]
    # plates: their reaction potentials between the rows and from the known conductors
    p_rows = p_known = None
    if src.reaction is not None:
        p_rows = src.reaction.potentials(m.xy_rows, src.frequency_hz)  # (H, S, S)
        p_known = src.reaction.potentials(src.xy_m[m.fixed_known], src.frequency_hz,
                                          m.xy_rows)  # (H, S, k)
    for k in range(h):
        w = plan.omega[k]
        z = -1j * w * K_LINE * lam
        if p_rows is not None:
            z = z + 1j * w * p_rows[k]
        z[np.arange(s), np.arange(s)] += r[k]
        try:
            y[k] = np.linalg.inv(z)
        except np.linalg.LinAlgError:
            return
        c = (-1j * w * K_LINE * lam_k) @ i_k[k]
        if p_known is not None:
            c = c + 1j * w * (p_known[k] @ i_k[k])
        yc[k] = y[k] @ c
    m.Y, m.yc, m.schur = y, yc, True


class SolvedTables(Tables):
    """Exact field of arrangements with their own solved currents, on a set of points.

    Has the attributes of :class:`~trayadvisor.ranking.tables.Tables` (``V``, ``F`` hold
    the equal-share tables, all channels kept, for screening moves and building
    sub-problems) and overrides the scoring: :meth:`fields`, :meth:`values` and
    :meth:`values_below` are exact. ``expand`` maps the codes of a restricted sub-problem to
    the full space before solving.
    """

    linear = False

    def __init__(self, space: Space, src: SourceArrays, pts_m: np.ndarray, layout: Layout,
                 temperature_c: float, weights: np.ndarray | None = None) -> None:
        super().__init__(space, src, pts_m, keep_all=True, weights=weights)
        self.model = _model(space, layout, temperature_c)
        self.space = space
        self.expand: Callable[[np.ndarray], np.ndarray] | None = None
        self._points(np.asarray(pts_m, dtype=float).reshape(-1, 2), weights)

    def _points(self, pts: np.ndarray, weights: np.ndarray | None) -> None:
        """Field tables at the points; every component's field at every point scaled by
        ``weights`` (P, H) (see :class:`~trayadvisor.ranking.tables.Tables`)."""
        m = self.model
        self.pts_m = pts
        src = m.plan.sources
        # (S, P, 2) real, or (H, S, P, 2) complex with plates (a table per component)
        self.g_rows = unit_fields(m.xy_rows, m.radius_rows, pts, src.reaction,
                                  src.frequency_hz)
        h = m.plan.orders.size
        self.w_hp = (np.ones((h, pts.shape[0])) if weights is None
                     else np.asarray(weights, dtype=float).reshape(pts.shape[0], h).T.copy())
        g_k = unit_fields(src.xy_m[m.fixed_known], src.radius_m[m.fixed_known], pts,
                          src.reaction, src.frequency_hz)
        g_spec = "" if self.g_rows.ndim == 3 else "h"
        self.b_known = (np.einsum(f"hk,{g_spec}kpc->hpc", src.currents[:, m.fixed_known], g_k)
                        * self.w_hp[:, :, None])
        if m.schur:  # B = Σ_g U_g (Eᵀ ay)_g + b0 (module notes)
            self.ay = (np.einsum(f"hst,{g_spec}tpc->hspc", m.Y, self.g_rows, optimize=True)
                       * self.w_hp[:, None, :, None])
            self.b0 = self.b_known - (np.einsum(f"hs,{g_spec}spc->hpc", m.yc, self.g_rows)
                                      * self.w_hp[:, :, None])

    # -- derived tables ----------------------------------------------------------------------
    def subset(self, idx: np.ndarray) -> SolvedTables:
        t = self._copy(self.V[:, :, idx], self.F[idx], self.expand)
        t.pts_m = self.pts_m[idx]
        t.w_hp = np.ascontiguousarray(self.w_hp[:, idx])
        t.g_rows = None if self.g_rows is None else np.ascontiguousarray(self.g_rows[..., idx, :])
        t.b_known = np.ascontiguousarray(self.b_known[:, idx])
        if self.model.schur:
            t.ay = np.ascontiguousarray(self.ay[:, :, idx])
            t.b0 = np.ascontiguousarray(self.b0[:, idx])
        return t

    def reduced(self, v: np.ndarray, expand: Callable[[np.ndarray], np.ndarray],
                sub: Space) -> SolvedTables:
        """The tables of a restricted sub-problem ``sub``: screening tables ``v`` over its
        positions, exact scores of its codes (``expand`` maps them to this space).

        A position of ``sub`` stands for one or two places that hold the same kind. When
        those places can only hold parallel conductors, both join the same column, so the
        sub-problem is a column system of its own with Y summed over its places (Pᵀ Y P):
        moves and blocks are scored as fast as on a main space. Otherwise its codes are
        expanded and solved in full.
        """
        owner = np.asarray(expand(np.arange(sub.n_positions)[None]))[0]
        m = self.model
        if m.schur and self.expand is None and _aggregable(m, sub, owner):
            return self._aggregated(v, sub, owner)
        outer = self.expand
        t = self._copy(v, self.F, expand if outer is None else (lambda c: outer(expand(c))))
        t.pts_m, t.g_rows, t.b_known = self.pts_m, self.g_rows, self.b_known
        t.w_hp = self.w_hp
        if self.model.schur:
            t.ay, t.b0 = self.ay, self.b0
        return t

    def _aggregated(self, v: np.ndarray, sub: Space, owner: np.ndarray) -> SolvedTables:
        m = self.model
        j = self.space.n_positions
        n_ff = m.n_rows - j
        agg = np.zeros((m.n_rows, sub.n_positions + n_ff))
        agg[np.arange(j), owner] = 1.0
        agg[j + np.arange(n_ff), sub.n_positions + np.arange(n_ff)] = 1.0
        known_base, n_cols, col_total = _known_columns(sub, m.plan, m.kind_group)
        red = _Model(m.plan, agg.shape[1], m.fixed_free, m.fixed_known, m.kind_group,
                     m.known_kinds, known_base, n_cols, col_total, m.ff_col, True,
                     np.einsum("sr,hst,tq->hrq", agg, m.Y, agg), m.yc @ agg,
                     m.xy_rows, m.radius_rows, m.kind_members)
        t = self._copy(v, self.F, None)
        t.model, t.space = red, sub
        t.pts_m, t.b_known, t.g_rows = self.pts_m, self.b_known, None  # schur only
        t.w_hp = self.w_hp
        t.ay, t.b0 = np.einsum("sr,hspc->hrpc", agg, self.ay), self.b0
        return t

    def _copy(self, v: np.ndarray, f: np.ndarray,
              expand: Callable[[np.ndarray], np.ndarray] | None) -> SolvedTables:
        t = object.__new__(SolvedTables)
        t.V, t.F, t._stage = np.ascontiguousarray(v), np.ascontiguousarray(f), None
        t.model, t.space, t.expand = self.model, self.space, expand
        return t

    # -- scoring ---------------------------------------------------------------------------

    def columns(self, codes: np.ndarray) -> np.ndarray:
        """(N, S) column of every row (see the module notes)."""
        m = self.model
        col = m.kind_group[codes]
        for q in m.known_kinds:
            mask = codes == q
            col = np.where(mask, m.known_base[q] + np.cumsum(mask, axis=1) - 1, col)
        ff = np.broadcast_to(m.ff_col, (codes.shape[0], m.ff_col.size))
        return np.concatenate([col, ff], axis=1)

    def complex_fields(self, codes: np.ndarray) -> np.ndarray:
        """(N, H, P, 2) complex field of each arrangement at the points, T."""
        codes = np.asarray(codes, dtype=np.int64)
        if self.expand is not None:
            codes = self.expand(codes)
        codes = codes.reshape(-1, self.space.n_positions)
        out = np.empty((codes.shape[0], *self.b_known.shape), dtype=complex)
        for s in range(0, codes.shape[0], _CHUNK):
            part = codes[s:s + _CHUNK]
            if self.model.schur:
                out[s:s + _CHUNK] = _schur_fields(self.model, self.columns(part), self.ay,
                                                  self.b0)
            else:
                cur = _full_currents(self.model, self.space, part)  # (n, H, S)
                spec = "nhs,spc->nhpc" if self.g_rows.ndim == 3 else "nhs,hspc->nhpc"
                out[s:s + _CHUNK] = (np.einsum(spec, cur, self.g_rows,
                                               optimize=True) * self.w_hp[None, :, :, None]
                                     + self.b_known[None])
        return out

    def fields(self, codes: np.ndarray) -> np.ndarray:
        return _channels(self.complex_fields(codes))

    def values(self, codes: np.ndarray) -> np.ndarray:
        b = self.complex_fields(codes)
        return (b.real ** 2 + b.imag ** 2).sum(axis=(1, 3)).max(axis=1)

    def values_below(self, codes: np.ndarray, threshold: float
                     ) -> tuple[np.ndarray, np.ndarray]:
        codes = np.asarray(codes)
        p = self.pts_m.shape[0]
        keep = np.arange(codes.shape[0])
        if np.isfinite(threshold) and p > 2 * _STAGE_POINTS and codes.shape[0] > 8:
            if self._stage is None:
                self._stage = self.subset(np.linspace(0, p, _STAGE_POINTS, endpoint=False)
                                          .astype(int))
            keep = np.nonzero(self._stage.values(codes) < threshold)[0]
        v = self.values(codes[keep])
        ok = v < threshold
        return keep[ok], v[ok]


def _schur_fields(m: _Model, col: np.ndarray, ay: np.ndarray, b0: np.ndarray
                  ) -> np.ndarray:
    """(N, H, P, 2) field from the columns (N, S): U from the column system, then
    B = Σ_g U_g (Eᵀ ay)_g + b0."""
    n, s = col.shape
    e = np.zeros((n, s, m.n_cols))
    np.put_along_axis(e, col[:, :, None], 1.0, axis=2)
    et = np.swapaxes(e, 1, 2)
    h = m.Y.shape[0]
    out = np.empty((n, h, *b0.shape[1:]), dtype=complex)
    for k in range(h):
        mat = et @ (m.Y[k] @ e)  # (N, G, G)
        rhs = m.col_total[k][None, :] + et @ m.yc[k]
        u = solve_small(mat, rhs)
        ag = et @ ay[k].reshape(s, -1)  # (N, G, 2P)
        out[:, k] = (np.einsum("ng,ngq->nq", u, ag) + b0[k].reshape(1, -1)).reshape(
            n, *b0.shape[1:])
    if not np.all(np.isfinite(out)):
        raise SharingError("the current sharing of some arrangement has no solution")
    return out


def _full_currents(m: _Model, space: Space, codes: np.ndarray) -> np.ndarray:
    """(N, H, S) currents by the layout's full sharing solve (sizes differ by arrangement)."""
    plan = m.plan
    src = plan.sources
    n = codes.shape[0]
    xy = np.broadcast_to(src.xy_m, (n, *src.xy_m.shape)).copy()
    cond_at = np.full((n, space.n_positions), -1, dtype=int)
    for q, members in enumerate(m.kind_members):
        if not members:
            continue
        mask = codes == q
        rank = np.cumsum(mask, axis=1) - 1
        mem = np.asarray(members)
        cond_at = np.where(mask, mem[np.minimum(rank, mem.size - 1)], cond_at)
    rows, cols = np.nonzero(cond_at >= 0)
    xy[rows, cond_at[rows, cols]] = space.positions_mm[cols] * MM
    cur = solve_plan(plan, xy)  # (N, H, n)
    h = plan.orders.size
    out = np.zeros((n, h, m.n_rows), dtype=complex)
    out[rows, :, cols] = cur[rows, :, cond_at[rows, cols]]
    if m.fixed_free.size:
        out[:, :, space.n_positions:] = cur[:, :, m.fixed_free]
    return out
