"""The Ranking view's run form: how many options, which objective, a time budget."""

from __future__ import annotations

from collections.abc import Iterable

from textual.widget import Widget
from textual.widgets import Input, Select, Static

from trayadvisor.model import Layout
from trayadvisor.tui.logic.ranktable import CONTOUR, MAX_TOP_K, RankParams, objective_choices
from trayadvisor.tui.screens.forms import FormError, FormScreen


class RankForm(FormScreen[RankParams | None]):
    """Top K, objective (the contour at d or a named line/point) and time budget."""

    TITLE_TEXT = "Ranking: what to search for"

    def __init__(self, params: RankParams, layout: Layout, distance_mm: float) -> None:
        super().__init__()
        self.params, self.lay, self.distance_mm = params, layout, distance_mm

    def fields(self) -> Iterable[tuple[str, Widget]]:
        p = self.params
        yield "Top K options", Input(str(p.top_k), id="top", compact=True)
        choices = objective_choices(self.lay)
        values = [v for _, v in choices]
        value = p.objective if p.objective in values else CONTOUR
        yield "Objective", Select(choices, value=value, allow_blank=False, id="objective",
                                  compact=True)
        yield "Time budget s", Input("" if p.budget_s is None else f"{p.budget_s:g}",
                                     id="budget", compact=True,
                                     placeholder="optional (heuristic: 8 s)")
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
        return RankParams(top, None if objective in (None, CONTOUR) else str(objective),
                          budget)
