"""The Ranking view's run form: how many options, which objective, a time budget, and the
limits on current imbalance and victim EMF."""

from __future__ import annotations

import math
from collections.abc import Iterable

from textual.widget import Widget
from textual.widgets import Input, Select, Static

from trayadvisor.model import Layout
from trayadvisor.tui.logic.ranktable import (
    CONTOUR,
    LIMITS,
    MAX_TOP_K,
    RankParams,
    objective_choices,
)
from trayadvisor.tui.screens.forms import FormError, FormScreen


class RankForm(FormScreen[RankParams | None]):
    """Top K, objective (the worst limit index at places, the contour at d or a named
    line/point) and time budget."""

    TITLE_TEXT = "Ranking: what to search for"

    def __init__(self, params: RankParams, layout: Layout, distance_mm: float) -> None:
        super().__init__()
        self.params, self.lay, self.distance_mm = params, layout, distance_mm

    def fields(self) -> Iterable[tuple[str, Widget]]:
        p = self.params
        yield "Top K options", Input(str(p.top_k), id="top", compact=True)
        choices = objective_choices(self.lay)
        values = [v for _, v in choices]
        value = (p.objective if p.objective in values
                 else LIMITS if LIMITS in values else CONTOUR)
        yield "Objective", Select(choices, value=value, allow_blank=False, id="objective",
                                  compact=True)
        yield "Time budget s", Input("" if p.budget_s is None else f"{p.budget_s:g}",
                                     id="budget", compact=True,
                                     placeholder="optional (heuristic: 8 s)")
        yield "Max imbalance %", Input(_limit_text(p.max_imbalance_pct), id="imbalance",
                                       compact=True, placeholder="optional")
        yield "Max EMF mV/m", Input(_limit_text(p.max_induced_mV_per_m), id="emf",
                                    compact=True, placeholder="optional (victim loops)")
        yield "Distance d", Static(f"{self.distance_mm:g} mm (d changes it)", markup=False)

    def build(self) -> RankParams | None:
        text = self.text_of("top")
        try:
            top = int(text)
        except ValueError:
            raise FormError("top", f"top K: '{text}' is not a whole number") from None
        if not 1 <= top <= MAX_TOP_K:
            raise FormError("top", f"top K: give 1 to {MAX_TOP_K}")
        budget = self.number("budget", "time budget", "s", 0.0, strict=True, optional=True)
        objective = self.choice("objective")
        imbalance = self.number("imbalance", "imbalance limit", "%", 0.0, strict=True,
                                optional=True)
        emf = self.number("emf", "victim EMF limit", "mV/m", 0.0, strict=True, optional=True)
        default = LIMITS if LIMITS in {v for _, v in objective_choices(self.lay)} else CONTOUR
        return RankParams(top, None if objective in (None, default) else str(objective),
                          budget, math.inf if imbalance is None else imbalance,
                          math.inf if emf is None else emf)


def _limit_text(v: float) -> str:
    return "" if math.isinf(v) else f"{v:g}"
