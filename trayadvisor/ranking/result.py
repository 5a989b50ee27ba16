"""Ranked options: the result of a ranking run and how an option is applied to a layout."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Protocol

from trayadvisor.model import Layout


class Constraint(Protocol):
    """A check on one arrangement, given as the layout with that arrangement's positions.

    It returns an object with ``passes`` (bool), ``key`` (str) and ``value`` (float) —
    e.g. :class:`trayadvisor.coupling.ConstraintFigure` — or a plain bool.
    Options that fail are skipped; ``key: value`` goes into the option's ``figures``.
    """

    def __call__(self, layout: Layout) -> Any: ...


@dataclass(frozen=True)
class RankOption:
    """One ranked arrangement with its figures (µT or index, %, dB) and every conductor's centre.

    ``max_resultant_uT`` is the objective's value in the result's ``unit``: µT for a field
    objective, the worst index for the limits objective.
    """

    rank: int
    max_resultant_uT: float
    reduction_pct: float
    reduction_db: float
    far_field_order: int | None
    positions: dict[str, tuple[float, float]]  # every conductor, mm
    sketch: str
    figures: dict[str, float] = field(default_factory=dict)
    versus_now: str = ""  # "better", "same" or "worse" than the arrangement in the file
    same_as: int | None = None  # rank of an earlier option with the same figure


@dataclass(frozen=True)
class RankResult:
    """A ranking run: which method, how much was evaluated, and the options found."""

    distance_mm: float
    method: str  # "exhaustive" or "heuristic"
    evaluated: int
    distinct: int | None
    baseline_uT: float
    options: tuple[RankOption, ...]
    elapsed_s: float
    stopped_early: bool
    objective: str
    certified: bool = False  # exhaustive and complete: the options are the exact top K
    screened: int = 0  # heuristic: further arrangements bounded on a few points only
    notes: tuple[str, ...] = ()
    baseline_positions: dict[str, tuple[float, float]] = field(default_factory=dict)
    currents: str = "solved"  # the current model every option was scored with
    unit: str = "µT"  # of the objective values: "µT", or "index" (limits objective)

    def to_json(self) -> dict:
        """The ``rank --json`` object (docs/json.md; keys may be added, never renamed)."""
        return {
            "currents": self.currents,
            "distance_mm": self.distance_mm,
            "method": self.method,
            "evaluated": self.evaluated,
            "distinct": self.distinct,
            "objective": self.objective,
            "unit": self.unit,
            "baseline": self.baseline_uT,
            "baseline_uT": self.baseline_uT if self.unit == "µT" else None,
            "certified": self.certified,
            "screened": self.screened,
            "stopped_early": self.stopped_early,
            "elapsed_s": self.elapsed_s,
            "notes": list(self.notes),
            "options": [
                {"rank": o.rank, "value": o.max_resultant_uT,
                 "max_resultant_uT": o.max_resultant_uT if self.unit == "µT" else None,
                 "versus_now": o.versus_now, "same_as": o.same_as,
                 "reduction_pct": o.reduction_pct, "reduction_db": o.reduction_db,
                 "far_field_order": o.far_field_order, "figures": dict(o.figures),
                 "sketch": o.sketch,
                 "conductors": [{"name": n, "x_mm": x, "y_mm": y}
                                for n, (x, y) in o.positions.items()]}
                for o in self.options
            ],
        }


def apply_option(layout: Layout, option: RankOption) -> Layout:
    """A copy of ``layout`` with every conductor at the option's position."""
    return layout.with_positions(option.positions)
