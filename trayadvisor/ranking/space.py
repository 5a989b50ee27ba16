"""The search space of the ranking: candidate positions, interchangeable kinds, cells, bundles.

An *arrangement* is an integer vector ``a`` of length J: ``a[j]`` is the kind placed at
candidate position ``j``. Conductors are interchangeable when they have the same diameter and
the same current phasor at every frequency component (with constraints: also the same
circuit, phase, area and material), so an arrangement names kinds, not conductors, and every
distinct arrangement is one multiset permutation.

Positions are grouped into *cells*: a cell is a contiguous range of positions of one diameter
with a multiset of kinds to place there. Without bundles every diameter forms one free cell.
With bundles a *group* of positions holds one complete parallel set (one conductor of every
phase of one circuit); sets of the same *type* (multiset of kinds) are interchangeable and any
set may take any group of the same *shape* (sorted diameters). Positions are ordered free cells
first, then groups, and inside a group by diameter, so every cell is a slice.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from trayadvisor.model import Layout
from trayadvisor.ranking.enumeration import cartesian, multinomial, multiset_sequences

TOL_MM = 1e-6  #: positions closer than this are the same place (mm)


@dataclass(frozen=True, eq=False)
class Kind:
    """Interchangeable conductors: one diameter and one phasor per frequency component."""

    diameter_mm: float
    currents: np.ndarray  # (H,) complex, A
    members: tuple[int, ...]  # conductor indices in layout order; () for an empty slot
    label: str  # e.g. "F1 L1" or "empty"
    identity: tuple = ()  # (circuit, area, material) when constraints tell circuits apart

    @property
    def empty(self) -> bool:
        return not self.members


@dataclass(frozen=True, eq=False)
class Group:
    """Positions ``start:stop`` that hold one parallel set; sub-cells by diameter."""

    start: int
    stop: int
    subcells: tuple[tuple[int, int], ...]  # (start, stop) of each diameter's positions
    shape: tuple[float, ...]  # sorted diameters


@dataclass(eq=False)
class Space:
    """Everything the enumerator and the local search need to know about the choices.

    Attributes
    ----------
    positions_mm : (J, 2) float
        Candidate centres, mm.
    diameters_mm : (J,) float
    kinds : tuple of Kind
    free_cells : tuple of (start, stop, counts)
        ``counts`` is (K,) int: how many of each kind go into the cell.
    groups : tuple of Group
    set_types : (T, K) int
        Kind counts of each distinct set type (an all-empty type included when groups can
        stay empty).
    type_counts : (T,) int
        How many sets of each type there are (empty type: the number of spare groups).
    baseline : (J,) int or None
        The arrangement in the file (None when the positions are a generated slot grid).
    mirror : (J,) int or None
        ``mirror[j]`` is the position reflected about ``mirror_axis_mm`` when the whole problem
        (positions, cells, fixed conductors and objective) is mirror-symmetric.
    symmetries : list of (perm or None, kind map or None)
        The non-identity elements of the group of transformations that leave the objective
        unchanged: a position permutation (the mirror) and/or a relabelling of kinds (phase
        rotation, L2↔L3 conjugation, reversed polarity). ``t = kmap[a[perm]]``.
    """

    positions_mm: np.ndarray
    diameters_mm: np.ndarray
    kinds: tuple[Kind, ...]
    free_cells: tuple[tuple[int, int, np.ndarray], ...]
    groups: tuple[Group, ...]
    set_types: np.ndarray
    type_counts: np.ndarray
    fixed: tuple[int, ...]
    baseline: np.ndarray | None
    rule: str | None
    notes: list[str] = field(default_factory=list)
    mirror: np.ndarray | None = None
    mirror_axis_mm: float | None = None
    symmetries: list[tuple[np.ndarray | None, np.ndarray | None]] = field(default_factory=list)

    @property
    def n_positions(self) -> int:
        return int(self.positions_mm.shape[0])

    @property
    def n_kinds(self) -> int:
        return len(self.kinds)

    def kind_currents(self) -> np.ndarray:
        """(H, K) complex phasors of each kind (zero for empty slots)."""
        return np.stack([k.currents for k in self.kinds], axis=1)

    # -- structure ------------------------------------------------------------------------
    def shape_classes(self) -> list[np.ndarray]:
        """Indices of the groups of each shape (groups of one shape may trade sets)."""
        by: dict[tuple[float, ...], list[int]] = {}
        for g, grp in enumerate(self.groups):
            by.setdefault(grp.shape, []).append(g)
        return [np.array(v) for v in by.values()]

    def type_shape(self, t: int) -> tuple[float, ...]:
        c = self.set_types[t]
        return tuple(sorted(d for k, n in enumerate(c) for d in [self.kinds[k].diameter_mm] * n))

    def group_cells(self, g: int, t: int) -> list[tuple[int, int, np.ndarray]]:
        """Cells of group ``g`` when it holds a set of type ``t``."""
        dk = np.array([k.diameter_mm for k in self.kinds])
        out = []
        for s, e in self.groups[g].subcells:
            mask = np.abs(dk - self.diameters_mm[s]) <= TOL_MM
            out.append((s, e, np.where(mask, self.set_types[t], 0)))
        return out

    def cells(self, config: np.ndarray) -> list[tuple[int, int, np.ndarray]]:
        """All cells (free cells and group sub-cells) for a set-type per group ``config``."""
        out = list(self.free_cells)
        for g, t in enumerate(config):
            out.extend(self.group_cells(g, int(t)))
        return out

    def configurations(self) -> np.ndarray:
        """(C, G) int: every distinct assignment of set types to groups."""
        g = len(self.groups)
        if g == 0:
            return np.zeros((1, 0), dtype=np.int64)
        blocks, cols = [], []
        for members in self.shape_classes():
            shape = self.groups[int(members[0])].shape
            types = [t for t in range(len(self.type_counts)) if self.type_shape(t) == shape]
            counts = np.zeros(len(self.type_counts), dtype=np.int64)
            counts[types] = self.type_counts[types]
            rows, _ = multiset_sequences(counts, len(members))
            blocks.append(rows)
            cols.append(members)
        prod = cartesian(blocks)
        out = np.empty((prod.shape[0], g), dtype=np.int64)
        out[:, np.concatenate(cols)] = prod
        return out

    def reference(self) -> np.ndarray:
        """A valid arrangement: the baseline, or kinds laid in order cell by cell."""
        if self.baseline is not None:
            return self.baseline.copy()
        a = np.empty(self.n_positions, dtype=np.int64)
        for s, e, counts in self.cells(self.configurations()[0]):
            a[s:e] = np.repeat(np.arange(counts.size), counts)
        return a

    def distinct(self) -> int:
        """Number of distinct arrangements (multinomial products; exact integer)."""
        total = 1
        for _, _, counts in self.free_cells:
            total *= multinomial(counts)
        for t, n in enumerate(self.type_counts):
            total *= multinomial(self.set_types[t]) ** int(n)
        for members in self.shape_classes():
            shape = self.groups[int(members[0])].shape
            sub = [int(n) for t, n in enumerate(self.type_counts)
                   if self.type_shape(t) == shape]
            total *= multinomial(np.array(sub))
        return total

    # -- arrangements ---------------------------------------------------------------------
    def transform(self, codes: np.ndarray,
                  sym: tuple[np.ndarray | None, np.ndarray | None]) -> np.ndarray:
        """Rows of ``codes`` under one symmetry element."""
        perm, kmap = sym
        t = codes if perm is None else codes[:, perm]
        return t if kmap is None else kmap[t]

    def canonical(self, codes: np.ndarray) -> np.ndarray:
        """The lexicographically smallest member of each row's symmetry class."""
        best = np.asarray(codes)
        if not self.symmetries or best.size == 0:
            return best
        for sym in self.symmetries:
            best = _lexmin(best, self.transform(np.asarray(codes), sym))
        return best

    def orbit(self, code: np.ndarray) -> np.ndarray:
        """(G, J) every member of the symmetry class of one arrangement (itself first)."""
        code = np.asarray(code).reshape(1, -1)
        return np.concatenate([code] + [self.transform(code, s) for s in self.symmetries])

    def positions_of(self, a: np.ndarray, layout: Layout) -> dict[str, tuple[float, float]]:
        """Centre (mm) of every conductor for arrangement ``a``; fixed ones stay put.

        A conductor whose current place receives its own kind stays there, so that an option
        moves as few cables as possible; the others fill the remaining places in order.
        """
        pos = {c.name: (float(c.x_mm), float(c.y_mm)) for c in layout.conductors}
        cons = layout.conductors
        for k, kind in enumerate(self.kinds):
            if kind.empty:
                continue
            targets = [int(j) for j in np.nonzero(a == k)[0]]
            here = {self._place(cons[i].x_mm, cons[i].y_mm): i for i in kind.members}
            left = []
            for j in targets:
                key = self._place(*self.positions_mm[j])
                if key in here:
                    here.pop(key)
                else:
                    left.append(j)
            movers = [i for i in kind.members if i in set(here.values())]
            for i, j in zip(movers, left, strict=True):
                pos[cons[i].name] = (float(self.positions_mm[j, 0]),
                                     float(self.positions_mm[j, 1]))
        return pos

    @staticmethod
    def _place(x: float, y: float) -> tuple[int, int]:
        return (round(float(x) / TOL_MM / 10), round(float(y) / TOL_MM / 10))


def _lexmin(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Row-wise lexicographic minimum of two (N, J) arrays."""
    diff = a != b
    first = np.argmax(diff, axis=1)
    rows = np.arange(a.shape[0])
    take = diff[rows, first] & (b[rows, first] < a[rows, first])
    return np.where(take[:, None], b, a)
