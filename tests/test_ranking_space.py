"""The ranking's search space: enumeration, counting, slot grids, symmetries."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from trayadvisor.engine import stray_uT
from trayadvisor.layoutfile.checks import layout_problems
from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.ranking.build import build_space
from trayadvisor.ranking.enumeration import blocks, multiset_sequences
from trayadvisor.ranking.heuristic import find_mirror
from trayadvisor.ranking.rank import phase_symmetries
from trayadvisor.ranking.slots import RankError, slot_grid
from trayadvisor.ranking.space import multinomial


def flat_sets(n_sets: int, d: float = 30.0, width: float = 600.0, pitch: float | None = None,
              fixed: tuple[Conductor, ...] = ()) -> Layout:
    """One ac3 circuit of ``n_sets`` parallel sets in one flat row, order L1 L2 L3 L1 ..."""
    pitch = pitch or d
    n = 3 * n_sets
    x0 = 0.5 * (width - (n - 1) * pitch)
    cons = tuple(Conductor(f"M-{('L1', 'L2', 'L3')[i % 3]}-{i // 3}", "M",
                           ("L1", "L2", "L3")[i % 3], x0 + i * pitch, d / 2, d)
                 for i in range(n))
    circuits = (Circuit("M", "ac3", 400.0 * n_sets),)
    if fixed:
        circuits += (Circuit("S", "signal"),)
    return Layout(title="sets", trays=(Tray("T", 0.0, 0.0, width, 100.0),), circuits=circuits,
                  conductors=cons + fixed)


def test_multiset_sequences_are_the_distinct_permutations():
    counts = np.array([2, 1, 1, 0])
    rows, rem = multiset_sequences(counts, 4)
    # Source: independent brute force, itertools.permutations of the multiset.
    want = set(itertools.permutations([0, 0, 1, 2]))
    assert set(map(tuple, rows.tolist())) == want
    assert rows.shape[0] == len(want) == 12  # Source: multinomial 4!/(2!1!1!) = 12
    assert not rem.any()


def test_blocks_cover_every_arrangement_exactly_once():
    cells = [(0, 4, np.array([2, 1, 1, 0, 0])), (4, 6, np.array([0, 0, 0, 1, 1])),
             (6, 11, np.array([0, 0, 2, 0, 3]))]
    got = [tuple(p) + tuple(s) for pre, suf in blocks(cells, max_suffix=7)
           for p in pre.tolist() for s in suf.tolist()]
    # Source: independent brute force, itertools over each cell's multiset.
    want = {a + b + c for a in set(itertools.permutations([0, 0, 1, 2]))
            for b in set(itertools.permutations([3, 4]))
            for c in set(itertools.permutations([2, 2, 4, 4, 4]))}
    assert len(got) == len(set(got)) == len(want)
    assert set(got) == want


@pytest.mark.parametrize("n_sets", [2, 4, 6])
def test_distinct_count_is_the_multinomial(n_sets):
    space = build_space(flat_sets(n_sets))
    f = math.factorial
    # Source: multinomial coefficient n!/(k1! k2! k3!) for n_sets of each phase; R12 gives
    # 12!/(4!4!4!) = 34 650 and R18 18!/(6!6!6!) = 17 153 136 (the figures).
    assert space.distinct() == f(3 * n_sets) // f(n_sets) ** 3
    assert {2: 90, 4: 34_650, 6: 17_153_136}[n_sets] == space.distinct()


def test_count_with_mixed_diameters_and_fixed_conductors():
    cons = (Conductor("a1", "A", "L1", 40, 15, 30), Conductor("a2", "A", "L2", 80, 15, 30),
            Conductor("a3", "A", "L3", 120, 15, 30), Conductor("p", "P", "+", 200, 10, 20),
            Conductor("m", "P", "-", 240, 10, 20), Conductor("q", "P", "+", 280, 10, 20),
            Conductor("n", "P", "-", 320, 10, 20), Conductor("x", "A", "PE", 400, 8, 16,
                                                             fixed=True))
    lay = Layout(trays=(Tray("T", 0, 0, 600, 100),),
                 circuits=(Circuit("A", "ac3", 100.0), Circuit("P", "dc", 50.0)),
                 conductors=cons)
    space = build_space(lay)
    # Source: product of multinomials, 3!/(1!1!1!) × 4!/(2!2!) = 6 × 6 = 36.
    assert space.distinct() == 36
    assert space.fixed == (7,)


def test_count_with_spare_slots():
    lay = flat_sets(2, width=400.0)
    space = build_space(lay, slots="touching")
    n_slots = space.n_positions
    assert n_slots == 13  # Source: floor(400 / 30) touching slots (common practice)
    f = math.factorial
    # Source: multinomial with the empty slots as one more kind, 13!/(2!2!2!7!).
    assert space.distinct() == f(13) // (f(2) ** 3 * f(7))


def test_bundles_count_and_groups():
    lay = flat_sets(3)
    space = build_space(lay, bundles=True)
    # Source: brute force — three groups of three places, each holding one L1, one L2 and
    # one L3: (3!)^3 orders; the sets are identical, so the set-to-group choice adds nothing.
    brute = sum(1 for g in itertools.product(itertools.permutations("123"), repeat=3))
    assert space.distinct() == brute == 216
    assert [g.stop - g.start for g in space.groups] == [3, 3, 3]


def test_multinomial_exact_for_huge_counts():
    # Source: 48!/(16!16!16!) by exact integer arithmetic (math.factorial).
    f = math.factorial
    assert multinomial(np.array([16, 16, 16])) == f(48) // f(16) ** 3


@pytest.mark.parametrize("rule,pitch", [("touching", 1.0), ("spaced", 2.0)])
def test_flat_slot_rules(rule, pitch):
    d = 30.0
    lay = flat_sets(2, d=d)
    grid, groups = slot_grid(lay, rule, list(range(6)), None)
    xs = np.sort(grid[:, 0])
    # Source: laying rules, touching = pitch D, spaced one diameter = pitch 2D (common
    # practice), one layer on the tray floor, centred in the tray.
    assert np.allclose(np.diff(xs), pitch * d)
    assert np.allclose(grid[:, 1], d / 2)
    assert xs[0] - d / 2 >= 0 and xs[-1] + d / 2 <= 600
    assert math.isclose(xs[0] - d / 2, 600 - (xs[-1] + d / 2))
    assert groups == []


def test_trefoil_slots_touch_and_keep_two_diameters_apart():
    d = 30.0
    lay = flat_sets(2, d=d)
    grid, groups = slot_grid(lay, "trefoil", list(range(6)), 3)
    assert all(len(g) == 3 for g in groups) and len(groups) == 5  # floor((600+60)/120)
    for g in groups:
        p = grid[g]
        dist = [math.dist(p[i], p[j]) for i, j in ((0, 1), (0, 2), (1, 2))]
        # Source: three touching circles of diameter D have centres D apart (geometry).
        assert np.allclose(dist, d)
    left = [grid[g][:, 0].max() for g in groups]
    right = [grid[g][:, 0].min() for g in groups]
    # Source: trefoil groups a clear 2D apart (common practice, from memory).
    assert np.allclose(np.array(right[1:]) - np.array(left[:-1]), 2 * d + d)


def test_slots_avoid_fixed_conductors_and_options_validate():
    sig = (Conductor("s-a", "S", "a", 300, 3, 6, fixed=True),
           Conductor("s-b", "S", "b", 312, 3, 6, fixed=True))
    lay = flat_sets(2, fixed=sig)
    space = build_space(lay, slots="touching")
    gap = np.hypot(space.positions_mm[:, None, 0] - np.array([300, 312])[None, :],
                   space.positions_mm[:, None, 1] - 3.0)
    assert (gap >= 15.0 + 3.0 - 1e-9).all()
    a = space.reference()
    moved = lay.with_positions(space.positions_of(a, lay))
    assert layout_problems(moved) == []


def test_slot_errors_are_clean():
    lay = flat_sets(2)
    with pytest.raises(RankError, match="slots = 'diagonal': unknown laying rule"):
        build_space(lay, slots="diagonal")
    narrow = Layout(trays=(Tray("T", 0, 0, 100, 100),), circuits=lay.circuits,
                    conductors=tuple(c.moved(15 + 30 * (i % 3), 15 + 30 * (i // 3))
                                     for i, c in enumerate(lay.conductors)))
    with pytest.raises(RankError, match="holds 3 positions for 6 movable conductors"):
        build_space(narrow, slots="touching")


def test_mirror_found_only_for_a_symmetric_problem():
    lay = flat_sets(2)  # row centred in the tray
    space = build_space(lay)
    mir = find_mirror(space, lay, 300.0)
    assert mir is not None
    assert np.allclose(space.positions_mm[mir, 0], 600 - space.positions_mm[:, 0])
    shifted = Layout(trays=lay.trays, circuits=lay.circuits,
                     conductors=tuple(c.moved(c.x_mm + 10, c.y_mm) for c in lay.conductors))
    assert find_mirror(build_space(shifted), shifted, 300.0) is None


def test_symmetries_leave_the_stray_field_unchanged():
    """Every merged relabelling and the mirror give the same field (checked independently)."""
    lay = flat_sets(2)
    space = build_space(lay)
    kmaps = phase_symmetries(space, lay)
    assert len(kmaps) == 5  # Source: 3 rotations × 2 (L2↔L3) − identity (group theory)
    rng = np.random.default_rng(1)
    a = rng.permutation(space.reference())
    base = stray_uT(lay.with_positions(space.positions_of(a, lay)), 500.0)
    mir = find_mirror(space, lay, 300.0)
    for perm, kmap in [(mir, None)] + [(None, k) for k in kmaps] + [(mir, kmaps[0])]:
        b = space.transform(a[None], (perm, kmap))[0]
        assert not np.array_equal(a, b)
        moved = lay.with_positions(space.positions_of(b, lay))
        # Source: independent recomputation with the `field` function (analysis.stray_uT).
        assert stray_uT(moved, 500.0) == pytest.approx(base, rel=1e-9)


def test_positions_keep_conductors_that_need_not_move():
    lay = flat_sets(2)
    space = build_space(lay)
    pos = space.positions_of(space.baseline, lay)
    assert pos == {c.name: (c.x_mm, c.y_mm) for c in lay.conductors}
