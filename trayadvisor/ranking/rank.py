"""The advisor: rank arrangements and go/return pairings of movable conductors by stray field.

``rank_layout`` searches the distinct arrangements of the movable conductors over candidate
positions (see :mod:`trayadvisor.ranking.space`), exactly when their number allows
(:mod:`trayadvisor.ranking.exhaustive`) and by iterated local search beyond
(:mod:`trayadvisor.ranking.local_search`, :mod:`trayadvisor.ranking.heuristic`). The search
scores arrangements on a fixed set of objective points (a subset of the samples the contour
uses); the best candidates are then re-scored with the very function ``field`` uses, so an
option's figure equals :func:`trayadvisor.engine.stray_uT` on its positions. Because the
re-scored figure is never below the sampled one, re-scoring in sampled order can stop as soon
as the next sampled value exceeds the K-th re-scored one: the exhaustive top K is then exact
(``certified``).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from functools import partial

import numpy as np

from trayadvisor.coupling import (
    CURRENT_MODELS,
    DEFAULT_TEMPERATURE_C,
    carried_sources,
    check_temperature,
    imbalance_constraint,
    induced_loss_figure,
    induced_voltage_constraint,
    plate_sources,
    solve_sharing,
)
from trayadvisor.engine import DEFAULT_DISTANCE_MM, SourceArrays, far_field
from trayadvisor.engine.units import UT
from trayadvisor.model import Layout
from trayadvisor.ranking.build import build_space
from trayadvisor.ranking.errors import RankError
from trayadvisor.ranking.exhaustive import exhaustive
from trayadvisor.ranking.heuristic import run_heuristic
from trayadvisor.ranking.local_search import run_local
from trayadvisor.ranking.objective import Objective, make_objective, without_points
from trayadvisor.ranking.result import Constraint, RankOption, RankResult
from trayadvisor.ranking.sketch import sketch_text
from trayadvisor.ranking.slots import SLOT_RULES
from trayadvisor.ranking.solved import SolvedTables
from trayadvisor.ranking.symmetry import (
    circuit_permutations,
    compose,
    find_mirror,
    phase_symmetries,
    symmetry_group,
)
from trayadvisor.ranking.tables import Pool, Tables

DEFAULT_MAX_EXHAUSTIVE = 20_000_000  #: largest space enumerated exactly by default
DEFAULT_HEURISTIC_BUDGET_S = 8.0  #: time cap of the heuristic when no budget is given
#: Default exhaustive limit when every arrangement needs a full sharing solve (screens bonded
#: at both ends, or parallel conductors of different sizes): ~26 µs each (R12, bench).
DEFAULT_MAX_EXHAUSTIVE_FULL = 300_000
_SEED_DESCENTS = 16  # local-search descents that seed the exhaustive pool's threshold
_SMALL = 512  # below this many arrangements no seeding is needed


def _coupling_constraints(constraints: Sequence[Constraint], max_imbalance_pct: float,
                          max_induced_mV_per_m: float, currents: str,  # noqa: N803
                          temperature_c: float, figures: bool,
                          induced: bool = False) -> tuple[Constraint, ...]:
    """The given constraints, the limits on imbalance and victim EMF, and (with ``figures``)
    figure-only checks (limit inf) for the keys nothing else covers, and the loss in
    screens and passive loops when the layout has them (``induced``); R′ at
    ``temperature_c`` like the field scores."""
    out = list(constraints)
    imbalance = partial(imbalance_constraint, temperature_c=temperature_c)
    induced = partial(induced_voltage_constraint, currents=currents,
                      temperature_c=temperature_c)
    if not math.isinf(max_imbalance_pct):
        out.append(imbalance(max_imbalance_pct))
    if not math.isinf(max_induced_mV_per_m):
        out.append(induced(max_induced_mV_per_m))
    if figures:
        have = {getattr(c, "key", None) for c in out}
        if "imbalance_pct" not in have:
            out.append(imbalance(math.inf))
        if "induced_mV_per_m" not in have:
            out.append(induced(math.inf))
    if induced and "induced_loss_w_per_m" not in {getattr(c, "key", None) for c in out}:
        out.append(induced_loss_figure(temperature_c))
    return tuple(out)


def _check(constraints: Sequence[Constraint], lay: Layout) -> tuple[bool, dict[str, float]]:
    ok, figs = True, {}
    for con in constraints:
        got = con(lay)
        if isinstance(got, bool | np.bool_):
            ok = ok and bool(got)
            continue
        ok = ok and bool(got.passes)
        if getattr(got, "worst", None) != "":  # "" = nothing to report (no group, no victim)
            figs[str(got.key)] = float(got.value)
    return ok, figs


def _whole(name: str, value: object, low: int) -> None:
    if isinstance(value, bool) or not isinstance(value, int | np.integer):
        raise RankError("must be a whole number", name, value)
    if value < low:
        raise RankError(f"must be at least {low}", name, value)


def _number(name: str, value: object, *, positive: bool, inf: bool = False) -> None:
    ok = isinstance(value, int | float | np.integer | np.floating) \
        and not isinstance(value, bool) and not math.isnan(value) \
        and (inf or math.isfinite(value)) and (value > 0 if positive else value >= 0)
    if not ok:
        raise RankError("must be a positive number" if positive
                        else "must be zero or a positive number", name, value)


def check_rank_options(*, distance_mm: float = DEFAULT_DISTANCE_MM, top_k: int = 5,
                       objective: str | None = None, slots: str | None = None,
                       max_exhaustive: int = DEFAULT_MAX_EXHAUSTIVE,
                       budget_s: float | None = None, seed: int = 0,
                       max_imbalance_pct: float = math.inf,
                       max_induced_mV_per_m: float = math.inf,  # noqa: N803
                       currents: str = "solved",
                       temperature_c: float = DEFAULT_TEMPERATURE_C, **_: object) -> None:
    """Check the options of :func:`rank_layout` that do not depend on the layout.

    Raises :class:`RankError` naming the parameter; front ends call it before a batch so
    that a bad option is one error, not one per file.
    """
    _whole("top_k", top_k, 1)
    _whole("seed", seed, 0)
    _whole("max_exhaustive", max_exhaustive, 0)
    _number("distance_mm", distance_mm, positive=False)
    if budget_s is not None:
        _number("budget_s", budget_s, positive=True)
    _number("max_imbalance_pct", max_imbalance_pct, positive=True, inf=True)
    _number("max_induced_mV_per_m", max_induced_mV_per_m, positive=True, inf=True)
    if currents not in CURRENT_MODELS:
        raise RankError(f"use one of {', '.join(CURRENT_MODELS)}", "currents", currents)
    try:
        check_temperature(temperature_c)
    except ValueError as exc:
        raise RankError(str(exc), "temperature_c", temperature_c) from None
    if objective is not None and objective not in ("contour", "limits"):
        kind, _, name = str(objective).partition(":")
        if kind not in ("line", "point") or not name:
            raise RankError("use line:NAME, point:NAME, contour or limits, or none (the "
                            "limits' places when limits are bound to places, else the curve "
                            "at distance d)", "objective", objective)
    if slots is not None and slots not in SLOT_RULES:
        raise RankError(f"use one of {', '.join(SLOT_RULES)}", "slots", slots)


def rank_layout(layout: Layout, *, distance_mm: float = DEFAULT_DISTANCE_MM, top_k: int = 5,
                objective: str | None = None, slots: str | None = None,
                bundles: bool = False, max_exhaustive: int = DEFAULT_MAX_EXHAUSTIVE,
                budget_s: float | None = None, seed: int = 0, currents: str = "solved",
                temperature_c: float = DEFAULT_TEMPERATURE_C,
                max_imbalance_pct: float = math.inf,
                max_induced_mV_per_m: float = math.inf,  # noqa: N803
                constraints: Sequence[Constraint] = (),
                progress: Callable[[float, str], None] | None = None,
                cancel: Callable[[], bool] | None = None,
                max_evaluations: int | None = None,
                patience: int | None = None,
                coupling_figures: bool = True) -> RankResult:
    """Rank the distinct arrangements of the movable conductors by stray field.

    Parameters
    ----------
    layout : Layout
    distance_mm : float
        Distance d outside the tray envelope for the contour objective (mm).
    top_k : int
        Number of options (>= 1).
    objective : str or None
        None or "contour": maximum resultant on the contour at d; ``"line:NAME"``: maximum
        over an observation line's samples; ``"point:NAME"``: resultant at a named point.
    slots : {"touching", "spaced", "trefoil"} or None
        Generated slot grid instead of the conductors' current places.
    bundles : bool
        Keep each parallel set in one group of positions.
    max_exhaustive : int
        Enumerate exactly up to this many distinct arrangements, else local search.
    budget_s : float, optional
        Time budget (s); the heuristic defaults to :data:`DEFAULT_HEURISTIC_BUDGET_S`.
    seed : int
        Seed of the local search (results repeat for one seed unless the budget cuts in).
    constraints : sequence of Constraint
        Further checks an option must pass, and figures every option lists. A constraint with a
        finite ``limit`` makes conductors of different circuits distinguishable; one with
        ``limit = inf`` only reports its figure.
    progress : callable(fraction, message), optional
        Called now and then (at most ~5 times a second).
    cancel : callable() -> bool, optional
        Polled between blocks; when true the best found so far is returned.
    max_evaluations, patience : int, optional
        Heuristic stops: scored arrangements; descents without a new best.
    currents : {"solved", "equal"}
        Score every arrangement with its own solved current sharing between parallel
        conductors (the default; the search, its bounds and certification included) or
        with equal shares.
    temperature_c : float
        Conductor temperature for the resistance in the sharing solve, °C.
    max_imbalance_pct : float
        Keep only options whose parallel conductors share current within this imbalance
        (%, (max − min)/mean of each phase group, solved sharing); inf keeps all.
    max_induced_mV_per_m : float
        Keep only options that induce at most this EMF (mV/m) in every victim loop; inf
        keeps all.
    coupling_figures : bool
        List every option's current imbalance and victim EMF (``imbalance_pct``,
        ``induced_mV_per_m`` in ``figures``) when the layout has parallel conductors or
        victim loops; a constraint in ``constraints`` with the same key takes its place.

    Returns
    -------
    RankResult

    Raises
    ------
    RankError
        A request that cannot be run; ``err.parameter`` names the keyword argument at fault.
    """
    t0 = time.perf_counter()
    check_rank_options(distance_mm=distance_mm, top_k=top_k, objective=objective, slots=slots,
                       max_exhaustive=max_exhaustive, budget_s=budget_s, seed=seed,
                       max_imbalance_pct=max_imbalance_pct,
                       max_induced_mV_per_m=max_induced_mV_per_m, currents=currents,
                       temperature_c=temperature_c)
    src = plate_sources(layout)
    obj = make_objective(layout, float(distance_mm), objective, src)
    if src.reaction is not None:  # no figure inside a plate's metal
        obj = without_points(obj, src.reaction.inside(obj.search_m))
    induced = layout.has_induced_paths()
    constraints = _coupling_constraints(constraints, max_imbalance_pct, max_induced_mV_per_m,
                                        currents, temperature_c, coupling_figures, induced)
    solved = currents == "solved"
    # Solved currents tell apart the parallel groups and sizes, like finite constraints.
    identity = solved or any(not math.isinf(float(getattr(c, "limit", 0.0)))
                             for c in constraints)
    space = build_space(layout, slots=slots, bundles=bundles, identity=identity)
    notes = list(space.notes) + ([obj.note] if obj.note else [])
    # Swapping L2 and L3 (complex conjugation) keeps every field only while nothing
    # distinguishes the conductors and the solved currents see no resistance.
    finite = any(not math.isinf(float(getattr(c, "limit", 0.0))) for c in constraints)
    shares = solve_sharing(layout, temperature_c) if solved else None
    conjugate = not finite and (shares is None or all(g.reactance_only for g in shares.groups))
    # eddy currents make the plates' field complex per ampere: conjugation no longer maps
    # one arrangement's field onto another's
    conjugate = conjugate and not layout.all_plates()
    if shares is None and induced:
        notes.append("equal shares: no current is induced in screens or passive loops (the "
                     "options' loss figure is the solved one)")
    if shares is not None:  # what the solved currents rest on (R', reactance-only groups)
        notes += ["every arrangement scored with its own solved current sharing",
                  *shares.notes()]
    _symmetries(space, layout, obj, identity, conjugate, notes, relabel=not induced)
    distinct = space.distinct()
    base_pos = {c.name: (float(c.x_mm), float(c.y_mm)) for c in layout.conductors}
    carried = partial(carried_sources, currents=currents, temperature_c=temperature_c)
    baseline = obj.score_uT(carried(layout), layout, base_pos)
    tables = (SolvedTables(space, src, obj.search_m, layout, temperature_c, obj.search_w)
              if solved else Tables(space, src, obj.search_m, weights=obj.search_w)
              ) if space.n_positions else None
    if (max_exhaustive == DEFAULT_MAX_EXHAUSTIVE and isinstance(tables, SolvedTables)
            and not tables.model.schur and distinct > DEFAULT_MAX_EXHAUSTIVE_FULL):
        # every arrangement needs a full solve (screens, or sizes that differ): about 50×
        # the cost of the small solves, so enumerate less by default (bench_induced.py)
        max_exhaustive = DEFAULT_MAX_EXHAUSTIVE_FULL
        notes.append(f"every arrangement solved in full (screens or mixed sizes): "
                     f"exhaustive search up to {DEFAULT_MAX_EXHAUSTIVE_FULL:,} arrangements")
    method = "exhaustive" if distinct <= max_exhaustive else "heuristic"
    deadline = None
    if budget_s is not None:
        deadline = t0 + budget_s
    elif method == "heuristic":
        deadline = t0 + DEFAULT_HEURISTIC_BUDGET_S
    reporter = _Reporter(progress, t0, obj.unit)
    capacity = max(64, 8 * top_k)
    evaluated, screened, stop, options, certified = 0, 0, "", [], False
    for _ in range(3):
        pool = Pool(capacity, space.n_positions, space.canonical)
        evaluated, screened, stop = _search(layout, space, tables, pool, method, distinct,
                                            seed=seed,
                                            identity=identity, deadline=deadline,
                                            cancel=cancel, reporter=reporter,
                                            patience=patience,
                                            max_evaluations=max_evaluations)
        options, certified = _rescore(layout, space, obj, carried, pool, top_k, constraints)
        if method != "exhaustive" or stop or certified:
            break
        capacity *= 8
        notes.append("pool enlarged to certify the top options after re-scoring")
    if method == "exhaustive" and stop:
        certified = False
    if stop:
        notes.append({"budget": "stopped at the time budget: best found so far",
                      "cancelled": "cancelled: best found so far"}.get(stop, stop))
    if constraints and len(options) < top_k:
        notes.append(f"only {len(options)} option(s) passed the constraints")
    opts = tuple(
        RankOption(rank=r + 1, max_resultant_uT=v,
                   reduction_pct=_pct(baseline, v), reduction_db=_db(baseline, v),
                   far_field_order=order,
                   positions=pos, sketch=sketch_text(layout, pos), figures=figs,
                   versus_now=_versus(baseline, v),
                   same_as=next((q + 1 for q in range(r) if _same(options[q][0], v)), None))
        for r, (v, pos, order, figs) in enumerate(options))
    return RankResult(distance_mm=float(distance_mm), method=method, evaluated=int(evaluated),
                      distinct=int(distinct), baseline_uT=float(baseline), options=opts,
                      elapsed_s=time.perf_counter() - t0, stopped_early=bool(stop),
                      objective=obj.label, certified=bool(certified and method == "exhaustive"),
                      screened=int(screened), notes=tuple(notes),
                      baseline_positions=base_pos, currents=currents, unit=obj.unit)


def _symmetries(space, layout: Layout, obj: Objective, identity: bool,  # noqa: ANN001
                conjugate: bool, notes: list[str], relabel: bool = True) -> None:
    """Find the transformations that leave the objective unchanged (merged in the options).

    ``relabel`` False (screens or passive loops: currents induced by every circuit at once)
    keeps only the mirror: relabelling one circuit's phases would change the induced
    currents' phases relative to the others'."""
    if space.n_positions == 0:
        return
    axis = obj.mirror_axis_mm(layout)
    mirror = find_mirror(space, layout, axis, identity) if axis is not None else None
    phases = phase_symmetries(space, layout, conjugate=conjugate) if relabel else []
    twins = circuit_permutations(space, layout) if relabel else []
    kmaps = compose(twins, phases)
    if mirror is not None:
        space.mirror, space.mirror_axis_mm = mirror, axis
        notes.append(f"mirror twins merged (symmetric about x = {axis:g} mm)")
    if kmaps:
        what = " and ".join(w for w, on in (("phase", phases), ("twin circuit", twins)) if on)
        notes.append(f"{what} relabellings with equal field merged ({len(kmaps)} besides "
                     "the identity)")
    space.symmetries = symmetry_group(mirror, kmaps)


def _search(layout: Layout, space, tables: Tables | None, pool: Pool,  # noqa: ANN001
            method: str, distinct: int, *, seed: int, identity: bool,
            deadline: float | None, cancel: Callable[[], bool] | None,
            reporter: _Reporter, patience: int | None, max_evaluations: int | None
            ) -> tuple[int, int, str]:
    """Fill ``pool`` by the chosen method; returns (evaluated, screened, stop reason)."""
    if space.n_positions == 0:
        pool.add(np.zeros((1, 0), dtype=np.int64), np.zeros(1))
        return 1, 0, ""
    if method == "exhaustive":
        if distinct > _SMALL:
            run_local(space, tables, pool, seed=seed, patience=_SEED_DESCENTS,
                      deadline=deadline, cancel=cancel)
        done, stop = exhaustive(
            space, tables, pool, deadline=deadline, cancel=cancel,
            tick=lambda n: reporter(n / distinct, f"{n:,} of {distinct:,} arrangements", pool))
        return done, 0, stop
    t0 = reporter.t0
    span = max(1e-9, (deadline or t0) - t0)
    stats = run_heuristic(
        layout, space, tables, pool, seed=seed, identity=identity,
        patience=patience if patience is not None else max(200, 12 * space.n_positions),
        deadline=deadline, max_evaluations=max_evaluations, cancel=cancel,
        tick=lambda st, best: reporter((time.perf_counter() - t0) / span,
                                       f"{st.descents:,} descents, {st.evaluated:,} "
                                       "arrangements", pool))
    return (stats.evaluated, stats.screened,
            "" if stats.stopped == "evaluations" else stats.stopped)

def _closest(space, code: np.ndarray) -> np.ndarray:  # noqa: ANN001
    """Of a symmetry class, the member that leaves most conductors where they are now."""
    if not space.symmetries or space.baseline is None:
        return code
    orbit = space.orbit(code)
    same = (orbit == space.baseline[None, :]).sum(axis=1)
    return orbit[int(np.argmax(same))]


#: Option and baseline fields closer than this (relative) are the same field: the
#: reduction is 0, not a rounding-noise figure such as -1e-14 %.
_SAME_FIELD = 1e-9


def _same(a: float, b: float) -> bool:
    """Two figures equal to rounding (the same field, or an equivalent arrangement)."""
    return abs(a - b) <= _SAME_FIELD * max(abs(a), abs(b))


def _versus(base: float, v: float) -> str:
    """How an option compares with the arrangement in the file: better, same or worse."""
    return "same" if _same(base, v) else ("better" if v < base else "worse")


def _pct(base: float, v: float) -> float:
    if base <= 0 or abs(v - base) <= _SAME_FIELD * base:
        return 0.0
    return 100.0 * (1.0 - v / base)


def _db(base: float, v: float) -> float:
    if base <= 0 or abs(v - base) <= _SAME_FIELD * base:
        return 0.0
    return float(20.0 * np.log10(base / v)) if v > 0 else float("inf")


def _rescore(layout: Layout, space, obj: Objective,  # noqa: ANN001
             carried: Callable[[Layout], SourceArrays], pool: Pool, top_k: int,
             constraints: Sequence[Constraint]) -> tuple[list, bool]:
    """Re-score the pool in sampled order with the exact objective; returns (options, certified).

    Stops once the next sampled value is at or above the K-th re-scored value, which proves
    no arrangement left (in the pool or outside it) can enter the top K: the sampled value
    is the same arrangement's field (with its own currents) on a subset of the points.
    """
    sampled = np.sqrt(pool.values) * UT
    found: list[tuple[float, dict, int | None, dict]] = []
    certified = False
    for n in range(len(pool)):
        if len(found) >= top_k and sampled[n] * (1.0 - 1e-9) >= found[top_k - 1][0]:
            certified = True
            break
        a = _closest(space, pool.codes[n].astype(np.int64))
        pos = space.positions_of(a, layout)
        moved = layout.with_positions(pos)
        ok, figs = _check(constraints, moved) if constraints else (True, {})
        if not ok:
            continue
        src = carried(moved)
        value = obj.score_uT(src, layout, pos)
        ac = src.orders > 0
        order = far_field(src.xy_m, src.currents[ac] if ac.any() else src.currents).order
        found.append((value, pos, order, figs))
        found.sort(key=lambda f: f[0])
    else:
        threshold = np.sqrt(pool.threshold()) * UT
        certified = len(found) >= top_k and found[top_k - 1][0] <= threshold * (1 - 1e-9)
        if len(pool) < pool.capacity:  # the pool holds every arrangement there is
            certified = True
    return found[:top_k], certified


class _Reporter:
    """Rate-limited progress messages with the best sampled field so far."""

    def __init__(self, progress: Callable[[float, str], None] | None, t0: float,
                 unit: str = "µT") -> None:
        self.progress, self.t0, self.last, self.unit = progress, t0, 0.0, unit

    def __call__(self, fraction: float, what: str, pool: Pool) -> None:
        if self.progress is None:
            return
        now = time.perf_counter()
        if now - self.last < 0.2:
            return
        self.last = now
        best = (f"; best so far {np.sqrt(pool.values[0]) * UT:.4g} {self.unit}" if len(pool)
                else "")
        self.progress(float(min(1.0, max(0.0, fraction))), what + best)
