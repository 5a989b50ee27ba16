"""The Ranking view's run parameters, table rows and run summary, as plain functions.

Every figure shown is the ranking engine's own (:func:`trayadvisor.ranking.rank_layout`,
the call ``trayadvisor rank`` makes, with the keyword arguments of
:meth:`RankParams.options`); this module only formats them and decides whether a
result still fits the layout on screen. No textual here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from trayadvisor.model import Layout
from trayadvisor.output import decay_text, fmt_fixed, fmt_uT
from trayadvisor.ranking import RankOption, RankResult, apply_option

MAX_TOP_K = 50  #: most options one run lists
CONTOUR = "contour"  #: the objective value that means "the contour at d"
LIMITS = "limits"  #: the worst index of the limits bound to places

#: Short column titles for figures the constraints add to ``RankOption.figures``.
FIGURE_LABELS = {"imbalance_pct": "imbal %", "induced_mV_per_m": "mV/m"}


@dataclass(frozen=True)
class RankParams:
    """What one ranking run asks for (distance d comes from the view settings).

    Attributes
    ----------
    top_k : int
        Options to list (1 to :data:`MAX_TOP_K`).
    objective : str or None
        None: the maximum on the contour at d; ``"line:NAME"`` / ``"point:NAME"``: a named
        observation line or point of the layout.
    budget_s : float or None
        Time budget in seconds; None leaves it to the engine (exact search has none, the
        heuristic search has its default).
    max_imbalance_pct, max_induced_mV_per_m : float
        Keep only options within these limits (``--max-imbalance-pct``,
        ``--max-induced-mv-per-m``); inf keeps all.
    """

    top_k: int = 5
    objective: str | None = None
    budget_s: float | None = None
    max_imbalance_pct: float = math.inf
    max_induced_mV_per_m: float = math.inf

    def __post_init__(self) -> None:
        if isinstance(self.top_k, bool) or not 1 <= self.top_k <= MAX_TOP_K:
            raise ValueError(f"top K must be a whole number from 1 to {MAX_TOP_K}")
        b = self.budget_s
        if b is not None and not (math.isfinite(b) and b > 0):
            raise ValueError("the time budget must be a positive number of seconds")
        o = self.objective
        if o is not None and o not in (CONTOUR, LIMITS) and (
                o.partition(":")[0] not in ("line", "point") or not o.partition(":")[2]):
            raise ValueError("objective: limits, the contour, line:NAME or point:NAME")
        for v, what in ((self.max_imbalance_pct, "imbalance"),
                        (self.max_induced_mV_per_m, "victim EMF")):
            if math.isnan(v) or v <= 0:
                raise ValueError(f"the {what} limit must be a positive number")

    def options(self, distance_mm: float, currents: str = "solved") -> dict:
        """The keyword arguments of :func:`trayadvisor.ranking.rank_layout` for this run,
        as ``trayadvisor rank --distance-mm D --top K [--objective …] [--budget-s S]
        [--max-imbalance-pct P] [--max-induced-mv-per-m V] [--equal-shares]`` gives them."""
        return {"distance_mm": float(distance_mm), "top_k": self.top_k,
                "objective": self.objective, "budget_s": self.budget_s,
                "max_imbalance_pct": self.max_imbalance_pct,
                "max_induced_mV_per_m": self.max_induced_mV_per_m, "currents": currents}


def place_bound(layout: Layout) -> bool:
    """True when the layout binds a limit to places (the ranking's default is then the
    worst index of those limits)."""
    return any(lim.places for lim in layout.limits)


def objective_choices(layout: Layout) -> list[tuple[str, str]]:
    """(label, value) of every objective the layout offers: the worst index of its
    place-bound limits (when it has any), the contour, its named lines and points."""
    out = [("worst limit index at places", LIMITS)] if place_bound(layout) else []
    out += [("contour at d (stray field)", CONTOUR)]
    out += [(f"line {ln.name}", f"line:{ln.name}") for ln in layout.lines]
    out += [(f"point {p.name}", f"point:{p.name}") for p in layout.points]
    return out


def objective_text(objective: str | None, distance_mm: float,
                   layout: Layout | None = None) -> str:
    """The objective in words; None is the default: the worst limit index when ``layout``
    binds limits to places, else the contour."""
    if objective == LIMITS or (objective is None and layout is not None
                               and place_bound(layout)):
        return "worst index of the limits at their places"
    if objective in (None, CONTOUR):
        return f"max on the contour at d {distance_mm:g} mm"
    kind, _, name = objective.partition(":")
    return f"max on line {name}" if kind == "line" else f"field at point {name}"


def usable_params(params: RankParams, layout: Layout) -> RankParams:
    """``params`` with an objective the layout no longer offers reset to the default."""
    if params.objective is None:
        return params
    if params.objective in {v for _, v in objective_choices(layout)}:
        return params
    return replace(params, objective=None)


# -- the table ------------------------------------------------------------------------------
@dataclass(frozen=True)
class Column:
    key: str
    label: str


def figure_keys(result: RankResult) -> tuple[str, ...]:
    """Extra figure names the options carry (constraint values), sorted."""
    return tuple(sorted({k for o in result.options for k in o.figures}))


def columns(result: RankResult | None) -> list[Column]:
    """The option table's columns: rank, field, reduction, far field, extra figures, moves."""
    unit = "µT" if result is None else result.unit
    cols = [Column("rank", "#"), Column("uT", unit), Column("pct", "lower %"),
            Column("db", "dB"), Column("now", "vs now"), Column("order", "far field")]
    if result is not None:
        cols += [Column(f"fig:{k}", FIGURE_LABELS.get(k, k)) for k in figure_keys(result)]
    cols.append(Column("moved", "moves"))
    return cols


def moved_count(result: RankResult, option: RankOption) -> int:
    """Conductors the option puts somewhere else than where they were when ranked."""
    n = 0
    for name, (x, y) in option.positions.items():
        base = result.baseline_positions.get(name)
        if base is None or math.hypot(base[0] - x, base[1] - y) > 1e-6:
            n += 1
    return n


def _pct(v: float) -> str:
    return fmt_fixed(v) if math.isfinite(v) else "–"


def _db(v: float) -> str:
    return fmt_fixed(v) if not math.isinf(v) or v > 0 else "–"


def order_text(order: int | None) -> str:
    return decay_text(order, short=True, none="–")


def fmt_figure(v: float) -> str:
    return f"{v:.3g}" if math.isfinite(v) else "–"


def value_text(result: RankResult, v: float) -> str:
    """An objective value as the table shows it: µT, or the index."""
    return fmt_uT(v) if result.unit == "µT" else f"{v:.3g}"


def versus_text(option: RankOption) -> str:
    """'better', 'same', 'WORSE', with '=k' when option k has the same figure."""
    word = {"worse": "WORSE", "same": "same"}.get(option.versus_now, "better")
    return word + (f" ={option.same_as}" if option.same_as else "")


def option_cells(result: RankResult, option: RankOption) -> list[str]:
    """One table row, in :func:`columns` order."""
    cells = [str(option.rank), value_text(result, option.max_resultant_uT),
             _pct(option.reduction_pct), _db(option.reduction_db), versus_text(option),
             order_text(option.far_field_order)]
    cells += [fmt_figure(option.figures[k]) if k in option.figures else "–"
              for k in figure_keys(result)]
    cells.append(f"{moved_count(result, option)}")
    return cells


def _count(n: int) -> str:
    return f"{n:,}" if n < 10**9 else f"{n:.2g}"


def run_line(result: RankResult) -> str:
    """Method, arrangements evaluated, exactness and time, in one line."""
    done = _count(result.evaluated)
    if result.distinct is not None:
        done += f" of {_count(result.distinct)}"
    stop = " (stopped early: best found so far)" if result.stopped_early else ""
    exact = " · top options exact" if result.certified else ""
    return (f"{result.method}{stop}: {done} arrangements evaluated{exact} · "
            f"{result.elapsed_s:.1f} s")


def run_notes(result: RankResult) -> list[str]:
    """The engine's notes, less the stop reason :func:`run_line` already gives."""
    return [n for n in result.notes
            if not n.startswith(("cancelled:", "stopped at the time budget"))]


def option_lines(result: RankResult, option: RankOption, n_conductors: int) -> list[str]:
    """The highlighted option's figures, then the figure of the arrangement ranked."""
    unit = " µT" if result.unit == "µT" else " (worst limit index)"
    value = value_text(result, option.max_resultant_uT)
    lines = [f"Option {option.rank} of {len(result.options)} (a applies)",
             f" {value}{unit}, {_pct(option.reduction_pct)} % lower, "
             f"{_db(option.reduction_db)} dB",
             f" far field {order_text(option.far_field_order)}",
             f" moves {moved_count(result, option)} of {n_conductors} conductors"]
    lines += [f" {FIGURE_LABELS.get(k, k)} {fmt_figure(v)}" for k, v in option.figures.items()]
    if option.versus_now == "worse":
        lines.append(" WORSE than the arrangement ranked")
    elif option.versus_now == "same":
        lines.append(" same figure as the arrangement ranked")
    if option.same_as:
        lines.append(f" equivalent to option {option.same_as} (same figure)")
    lines.append(f"Before (as ranked): {value_text(result, result.baseline_uT)}{unit}")
    return lines


# -- does a result still fit the open layout? ------------------------------------------------
def fits(option: RankOption, ranked: Layout, layout: Layout) -> bool:
    """True when applying ``option`` to ``layout`` gives what it gives on the layout that was
    ranked: only positions changed since, so the option's figures still hold."""
    try:
        return apply_option(layout, option) == apply_option(ranked, option)
    except (KeyError, ValueError):
        return False


def staleness(result: RankResult, ranked: Layout, layout: Layout, objective: str | None,
              distance_mm: float) -> str:
    """Why the result on show no longer describes the open layout ("" when it does)."""
    if result.options and not fits(result.options[0], ranked, layout):
        return "the layout changed since this ranking (not only positions): r ranks again"
    on_curve = objective in (None, CONTOUR) and result.objective.startswith("contour")
    if on_curve and not math.isclose(result.distance_mm, distance_mm):
        return (f"ranked at d {result.distance_mm:g} mm, d is now {distance_mm:g} mm: "
                "r ranks again")
    if layout != ranked:
        for opt in result.options:
            if apply_option(ranked, opt) == layout:
                return f"the open layout is option {opt.rank} (u undoes)"
        return "conductors moved since this ranking; the options still apply as listed"
    return ""
