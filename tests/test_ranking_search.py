"""Search internals: field tables, the exact block filter, incremental local search."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from trayadvisor.analysis.summary import envelope_m
from trayadvisor.coupling import solved_sources
from trayadvisor.engine.contour import stray_field
from trayadvisor.engine.currents import MM, layout_sources
from trayadvisor.engine.field import phasor_field, resultant_rms
from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.ranking.build import build_space
from trayadvisor.ranking.exhaustive import exhaustive
from trayadvisor.ranking.local_search import LocalSearch, run_local
from trayadvisor.ranking.moves import MoveState
from trayadvisor.ranking.objective import make_objective
from trayadvisor.ranking.rank import rank_layout
from trayadvisor.ranking.sets import paired_subproblems, pairings
from trayadvisor.ranking.solved import SolvedTables
from trayadvisor.ranking.tables import Pool, Tables


def two_layers(n_per_layer: int = 4, d: float = 30.0) -> Layout:
    """Two layers of an ac3 circuit with harmonics plus a dc pair and a fixed return."""
    cons = []
    for layer in range(2):
        for i in range(n_per_layer):
            k = layer * n_per_layer + i
            ph = ("L1", "L2", "L3")[k % 3]
            cons.append(Conductor(f"c{k}", "A", ph, 50 + i * d, d / 2 + layer * d, d))
    cons += [Conductor("p", "B", "+", 300, 10, 20), Conductor("m", "B", "-", 330, 10, 20),
             Conductor("q", "B", "+", 360, 10, 20),
             Conductor("r", "B", "-", 390, 10, 20, fixed=True)]
    return Layout(trays=(Tray("T", 0, 0, 450, 80),),
                  circuits=(Circuit("A", "ac3", 300.0, harmonics=((5, 0.2),)),
                            Circuit("B", "dc", 100.0)),
                  conductors=tuple(cons))


def setup(lay: Layout):
    src = layout_sources(lay)
    obj = make_objective(lay, 400.0, None, src)
    space = build_space(lay)
    return src, obj, space, Tables(space, src, obj.search_m)


def all_codes(space) -> np.ndarray:
    """Every distinct arrangement by itertools (independent of the engine's enumerator)."""
    parts = []
    for _, _, counts in space.free_cells:
        items = np.repeat(np.arange(counts.size), counts)
        parts.append(sorted(set(itertools.permutations(items.tolist()))))
    return np.array([sum(combo, ()) for combo in itertools.product(*parts)])


def test_contour_search_points_are_samples_of_stray_field():
    lay = two_layers()
    src, obj, _, _ = setup(lay)
    sf = stray_field(src.xy_m, src.radius_m, src.currents, envelope_m(lay), 0.4)
    have = {tuple(np.round(p, 12)) for p in sf.xy_m}
    # Source: contour.stray_field's own sample grid; a subset keeps sampled <= refined.
    assert all(tuple(np.round(p, 12)) in have for p in obj.search_m)


def test_tables_equal_the_phasor_field_of_each_arrangement():
    lay = two_layers()
    src, obj, space, tables = setup(lay)
    rng = np.random.default_rng(0)
    codes = np.array([rng.permutation(space.reference()) for _ in range(5)])
    # keep each kind inside its own cell
    for s, e, _ in space.free_cells:
        codes[:, s:e] = np.array([rng.permutation(space.reference()[s:e]) for _ in range(5)])
    got = np.sqrt(tables.values(codes))
    names = [c.name for c in lay.conductors]
    for a, v in zip(codes, got, strict=True):
        pos = space.positions_of(a, lay)
        xy = np.array([pos[n] for n in names]) * MM
        b = phasor_field(xy, src.radius_m, src.currents, obj.search_m)
        # Source: the field engine's phasor_field, summed directly per arrangement.
        assert v == pytest.approx(resultant_rms(b).max(), rel=1e-12)


def test_exhaustive_pool_equals_plain_scoring_of_every_arrangement():
    lay = two_layers()
    _, _, space, tables = setup(lay)
    codes = all_codes(space)
    assert len(codes) == space.distinct()
    plain = np.sort(tables.values(codes))[:40]  # every arrangement scored one by one
    pool = Pool(40, space.n_positions)
    done, stop = exhaustive(space, tables, pool)
    assert done == space.distinct() and stop == ""
    # Source: independent brute force (itertools) scored without the block filter.
    assert pool.values == pytest.approx(plain, rel=1e-12)


def test_exhaustive_is_exact_when_seeded_and_filtered_hard():
    lay = two_layers()
    _, _, space, tables = setup(lay)
    plain = np.sort(tables.values(all_codes(space)))[:8]
    pool = Pool(8, space.n_positions)
    run_local(space, tables, pool, seed=1, patience=5)
    exhaustive(space, tables, pool)
    assert pool.values == pytest.approx(plain, rel=1e-12)


def test_incremental_moves_match_a_fresh_evaluation():
    lay = two_layers()
    _, _, space, tables = setup(lay)
    ls = LocalSearch(space, tables, np.random.default_rng(2))
    for _ in range(5):
        a0 = ls.random()
        a, s, m = ls.descend(a0)
        fresh = tables.fields(a)[0]
        assert np.allclose(s, fresh, rtol=0, atol=1e-12 * np.abs(fresh).max())
        assert m == pytest.approx(tables.values(a[None])[0], rel=1e-9)
        for s0, e0, counts in space.free_cells:  # moves stay inside cells
            assert np.array_equal(np.bincount(a[s0:e0], minlength=counts.size), counts)


def single_swaps(space, a: np.ndarray) -> np.ndarray:  # noqa: ANN001
    """Every arrangement one swap of two places of a cell away from ``a`` (brute force)."""
    out = []
    for s, e, _ in space.free_cells:
        for i, j in itertools.combinations(range(s, e), 2):
            b = a.copy()
            b[i], b[j] = b[j], b[i]
            out.append(b)
    return np.array(out)


def test_local_optimum_has_no_improving_swap():
    lay = two_layers()
    _, _, space, tables = setup(lay)
    ls = LocalSearch(space, tables, np.random.default_rng(4))
    a, _, m = ls.descend(ls.random())
    worse = single_swaps(space, a)
    # Source: brute force over every single swap of the local optimum.
    assert tables.values(worse).min() >= m * (1 - 1e-12)


def test_pool_merges_symmetry_classes_and_keeps_the_best():
    lay = two_layers()
    _, _, space, _ = setup(lay)
    space.symmetries = [(None, np.array([1, 0] + list(range(2, space.n_kinds))))]
    pool = Pool(3, space.n_positions, space.canonical)
    a = space.reference()
    b = space.transform(a[None], space.symmetries[0])[0]
    pool.add(np.stack([a, b]), np.array([2.0, 1.0]))
    assert len(pool) == 1 and pool.values[0] == 1.0
    assert pool.threshold() == np.inf


def stacked(sets_per_row: int = 2, layers: int = 2, d: float = 30.0) -> Layout:
    """Parallel ac3 sets in ``layers`` touching rows, phases repeating L1 L2 L3 (invented)."""
    per_row = 3 * sets_per_row
    cons = []
    for k in range(per_row * layers):
        row, i = divmod(k, per_row)
        ph = ("L1", "L2", "L3")[k % 3]
        cons.append(Conductor(f"s{k}", "S", ph, 100 + i * d, d / 2 + row * d, d))
    return Layout(trays=(Tray("T", 0, 0, 100 + per_row * d + 100, 100),),
                  circuits=(Circuit("S", "ac3", 200.0 * sets_per_row * layers),),
                  conductors=tuple(cons))


def block_setup(lay: Layout):
    src = layout_sources(lay)
    obj = make_objective(lay, 400.0, None, src)
    space = build_space(lay, bundles=True, rows=True)
    return space, Tables(space, src, obj.search_m)


def block_codes(space) -> np.ndarray:
    """Every arrangement of the bundled space by itertools (one type: any phase order)."""
    per_group = [sorted(set(itertools.permutations(
        space.reference()[g.start:g.stop].tolist()))) for g in space.groups]
    return np.array([sum(combo, ()) for combo in itertools.product(*per_group)])


@pytest.mark.parametrize("sets_per_row,layers", [(2, 2), (4, 1)])
def test_paired_sets_are_the_point_image_arrangements(sets_per_row, layers):
    space, tables = block_setup(stacked(sets_per_row, layers))
    pos = space.positions_mm
    where = {(round(x, 6), round(y, 6)): j for j, (x, y) in enumerate(pos)}
    cen = np.array([pos[g.start:g.stop].mean(axis=0) for g in space.groups])
    everything = block_codes(space)
    problems = paired_subproblems(space, tables)
    assert problems  # a direction with every group paired exists in both layouts
    for pairs, (sub, red, expand) in zip(pairings(space), problems, strict=True):
        assert sorted(g for p in pairs for g in p[:2]) == list(range(len(space.groups)))
        # Source: brute force — keep the arrangements in which every place of a paired group
        # holds the kind of its point image through the pair's centre (from coordinates).
        keep = np.ones(len(everything), dtype=bool)
        for g, h, _ in pairs:
            c = 0.5 * (cen[g] + cen[h])
            for j in range(space.groups[g].start, space.groups[g].stop):
                k = where[(round(2 * c[0] - pos[j, 0], 6), round(2 * c[1] - pos[j, 1], 6))]
                keep &= everything[:, j] == everything[:, k]
        want = everything[keep]
        pool = Pool(10**6, sub.n_positions)
        exhaustive(sub, red, pool)
        got = expand(pool.codes.astype(np.int64))
        assert len(got) == sub.distinct() == len(want)
        assert {tuple(r) for r in got} == {tuple(r) for r in want}
        # the reduced tables (pair rows summed) give the field of the full arrangement
        assert np.sqrt(pool.values) == pytest.approx(
            np.sqrt(tables.values(got)), rel=1e-12)


def test_stacked_pairs_pair_each_set_with_the_one_below():
    space, _ = block_setup(stacked(4, 2))
    first = pairings(space)[0]
    pos = space.positions_mm
    for g, h, img in first:
        a, b = space.groups[g], space.groups[h]
        # same x centre, one layer apart; the image reverses the sequence along the row
        assert pos[a.start:a.stop, 0].mean() == pytest.approx(pos[b.start:b.stop, 0].mean())
        assert abs(pos[a.start, 1] - pos[b.start, 1]) == pytest.approx(30.0)
        assert np.array_equal(np.argsort(pos[img, 0]), np.argsort(-pos[a.start:a.stop, 0]))


def test_heuristic_finds_the_exhaustive_optimum_in_two_layers():
    lay = stacked(2, 2)  # 12!/(4!)³ = 34 650 arrangements
    exact = rank_layout(lay, top_k=1, currents="equal")
    heur = rank_layout(lay, top_k=1, max_exhaustive=0, seed=5, currents="equal")
    assert exact.certified and heur.method == "heuristic"
    # Source: the certified exhaustive optimum of the same layout.
    assert heur.options[0].max_resultant_uT == pytest.approx(
        exact.options[0].max_resultant_uT, rel=1e-9)


def test_heuristic_with_bundles_keeps_sets_together_and_finds_the_optimum():
    lay = stacked(2, 2)
    exact = rank_layout(lay, top_k=3, bundles=True, currents="equal")
    heur = rank_layout(lay, top_k=3, bundles=True, max_exhaustive=0, seed=2, currents="equal")
    assert exact.certified and heur.method == "heuristic"
    # Source: the certified exhaustive optimum of the same bundled space.
    assert heur.options[0].max_resultant_uT == pytest.approx(
        exact.options[0].max_resultant_uT, rel=1e-9)
    space = build_space(lay, bundles=True)
    groups = [{tuple(p) for p in space.positions_mm[g.start:g.stop]} for g in space.groups]
    for o in heur.options:
        for g in groups:  # every group of places holds one complete set (L1, L2, L3)
            phases = sorted(c.phase for c in lay.conductors if o.positions[c.name] in g)
            assert phases == ["L1", "L2", "L3"]


# -- exact scores with solved currents ----------------------------------------------------
def solved_setup(second_area: float = 240.0):
    import test_ranking

    lay = test_ranking.shared_row(second_area)
    src = layout_sources(lay)
    obj = make_objective(lay, 500.0, None, src)
    space = build_space(lay, identity=True)
    return lay, obj, space, SolvedTables(space, src, obj.search_m, lay, 90.0)


@pytest.mark.parametrize("second_area", [240.0, 185.0])
def test_solved_tables_equal_the_sharing_solve_of_each_arrangement(second_area):
    # Reference: the layout's own sharing solve (coupling.solved_sources) on the
    # arrangement's positions, and the field engine on the search points.
    lay, obj, space, tables = solved_setup(second_area)
    assert tables.model.schur is (second_area == 240.0)  # alike sizes: one inverse
    rng = np.random.default_rng(7)
    codes = []
    for _ in range(6):
        a = space.reference().copy()
        for s, e, _ in space.free_cells:
            a[s:e] = rng.permutation(a[s:e])
        codes.append(a)
    got = tables.values(np.array(codes))
    for a, v in zip(codes, got, strict=True):
        moved = lay.with_positions(space.positions_of(a, lay))
        ss = solved_sources(moved)
        b = phasor_field(ss.xy_m, ss.radius_m, ss.currents, obj.search_m)
        assert v == pytest.approx(float((resultant_rms(b) ** 2).max()), rel=1e-10)


def parallel_row(kind: str, n_sets: int, area: float = 240.0) -> Layout:
    """One circuit of ``n_sets`` parallel sets of alike copper conductors in one row."""
    phases = {"ac1": ("L", "N"), "ac3": ("L1", "L2", "L3")}[kind]
    cons = tuple(Conductor(f"{ph}-{k}", "F", ph, 40.0 + 32.0 * (k * len(phases) + i), 16.0,
                           30.0, area, "copper")
                 for k in range(n_sets) for i, ph in enumerate(phases))
    return Layout(title="row", trays=(Tray("T", 0, 0, 600, 80),), conductors=cons,
                  circuits=(Circuit("F", kind, 200.0 * n_sets),))


def _state_setup(case: str):
    if case == "shared_row":  # 3 groups + 2 known-current columns, two harmonics
        return solved_setup()
    lay = parallel_row(*{"ac1 x3": ("ac1", 3), "ac3 x3": ("ac3", 3)}[case])
    src = layout_sources(lay)
    obj = make_objective(lay, 500.0, None, src)
    space = build_space(lay, identity=True)
    return lay, obj, space, SolvedTables(space, src, obj.search_m, lay, 70.0)


@pytest.mark.parametrize("case, columns", [("ac1 x3", 2), ("ac3 x3", 3), ("shared_row", 5)])
def test_incremental_solved_moves_match_a_fresh_solve(case, columns):
    # A move changes a few rows of the column incidence; the rank-update of the column
    # system must give what a fresh solve of the new arrangement gives — for each size of
    # the column system (closed forms for 2 and 3 columns, LU beyond).
    lay, _, space, tables = _state_setup(case)
    assert tables.model.n_cols == columns
    a = space.reference()
    state = MoveState(tables, a)
    rng = np.random.default_rng(3)
    (s, e, _), = space.free_cells
    for step in range(12):
        if step % 3 == 2:  # a 3-cycle: not a swap, takes the general update
            pos = rng.choice(np.arange(s, e), 3, replace=False)[None]
            src = np.roll(pos, 1, axis=1)
        else:
            pos = rng.choice(np.arange(s, e), 2, replace=False)[None]
            src = pos[:, ::-1]
        fresh = a.copy()
        fresh[pos[0]] = a[src[0]]
        predicted = state.evaluate(pos, src)[0]
        screened = state.screen(pos, src, state.peaks(5))[0]
        assert screened <= predicted * (1 + 1e-12)  # a subset of points: a lower bound
        state.apply(pos[0], src[0])
        a = fresh
        assert np.array_equal(state.a, a)
        assert predicted == pytest.approx(tables.values(a[None])[0], rel=1e-10)
        assert state.value == pytest.approx(predicted, rel=1e-12)


def test_solved_local_search_reaches_a_local_optimum_of_the_exact_scores():
    lay, _, space, tables = solved_setup()
    ls = LocalSearch(space, tables, np.random.default_rng(5))
    a, _, m = ls.descend(ls.random())
    assert m == pytest.approx(tables.values(a[None])[0], rel=1e-10)
    worse = single_swaps(space, a)
    # Source: brute force over every single swap, scored with fresh solves.
    assert tables.values(worse).min() >= m * (1 - 1e-12)


@pytest.mark.parametrize("solved", [False, True])
def test_half_turn_subproblem_is_the_point_symmetric_arrangements(solved):
    # Two layers of two parallel sets (240 mm² copper): the sub-problem must hold exactly the
    # arrangements equal to their half-turn image about the centre of the places (brute
    # force over every arrangement, images found from the coordinates), and its reduced
    # tables must give each one's full field — equal shares and solved sharing alike.
    from trayadvisor.ranking.symmetry import invariant_subproblem, point_image

    cons = tuple(Conductor(f"c{k}", "A", ("L1", "L2", "L3")[k % 3], 60.0 + 32.0 * (k % 3),
                           16.0 + 32.0 * (k // 3), 30.0, 240.0, "copper") for k in range(6))
    lay = Layout(trays=(Tray("T", 0, 0, 300, 80),), conductors=cons,
                 circuits=(Circuit("A", "ac3", 500.0, harmonics=((5, 0.2),)),))
    src = layout_sources(lay)
    obj = make_objective(lay, 400.0, None, src)
    space = build_space(lay, identity=solved)
    tables = (SolvedTables(space, src, obj.search_m, lay, 90.0) if solved
              else Tables(space, src, obj.search_m))
    turn = point_image(space)
    assert turn is not None and np.array_equal(turn[turn], np.arange(6))
    sub, red, expand = invariant_subproblem(space, tables, turn)
    pos = space.positions_mm
    centre = 0.5 * (pos.min(axis=0) + pos.max(axis=0))
    where = {(round(x, 6), round(y, 6)): j for j, (x, y) in enumerate(pos)}
    image = [where[(round(2 * centre[0] - x, 6), round(2 * centre[1] - y, 6))] for x, y in pos]
    everything = np.array(sorted(set(itertools.permutations(space.reference().tolist()))))
    want = everything[(everything == everything[:, image]).all(axis=1)]
    pool = Pool(10**4, sub.n_positions)
    exhaustive(sub, red, pool)
    got = expand(pool.codes.astype(np.int64))
    assert {tuple(r) for r in got} == {tuple(r) for r in want} and len(want) == 6
    assert np.sqrt(pool.values) == pytest.approx(np.sqrt(tables.values(got)), rel=1e-10)


def test_no_half_turn_when_a_place_has_no_image():
    from trayadvisor.ranking.symmetry import point_image

    space, _ = block_setup(stacked(4, 2))
    assert space.groups and point_image(space) is None  # groups are not supported
    lay = two_layers()  # the dc pair lies in one row only: no image for its places
    assert point_image(build_space(lay)) is None
