"""Limits judged where they apply: the figures of every place and the index of every limit.

A limit bound to places (``places = [...]``) is judged at each of them by its index
(:class:`trayadvisor.limits.Rule`): the maximum over the place of Σ_h B_h/RL(f_h) for a
library exposure level (the multi-frequency rule), of B_AC/limit for every other AC limit, of
B_DC/limit for a DC-band one. A limit without places is judged on the curve at distance d.
AC figures are the fundamental and harmonics only; the static (DC) field is reported beside
them and judged only by DC-band limits. Millimetres and µT at this boundary.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine import (
    Measure,
    SourceArrays,
    envelope_m,
    place_maxima,
    source_clearance,
    source_stray_field,
)
from trayadvisor.engine.units import MM, UT
from trayadvisor.limits import Rule
from trayadvisor.model import Layout


def margin_db(index: float) -> float:
    """The margin below a limit in dB, 20·log10(1/index) (negative when it fails)."""
    if index <= 0.0:
        return math.inf
    return -20.0 * math.log10(index)


@dataclass(frozen=True)
class PlaceLimit:
    """One limit's verdict at one place: its worst index there and where that is."""

    name: str
    kind: str
    band: str
    limit_uT: float
    index: float
    at_mm: tuple[float, float]
    source: str
    rule: str  # e.g. "exposure, AC, multi-frequency sum"
    outside_hz: tuple[float, ...] = ()  # components outside the library entry's range

    @property
    def passes(self) -> bool:
        return self.index <= 1.0

    @property
    def margin_db(self) -> float:
        return margin_db(self.index)


@dataclass(frozen=True)
class PlaceFigure:
    """The AC and DC field over one point, line or area, and the limits bound to it."""

    name: str
    type: str  # "point" | "line" | "area"
    max_resultant_uT: float
    at_mm: tuple[float, float]
    dc_max_uT: float
    dc_at_mm: tuple[float, float]
    limits: tuple[PlaceLimit, ...]


def rule_measure(rule: Rule, src: SourceArrays, frequency_hz: float
                 ) -> tuple[Measure, tuple[float, ...]]:
    """The measure (per tesla) whose value is the rule's index, for ``src``'s rows."""
    w, how, outside = rule.weights(src.orders, frequency_hz)
    return Measure(np.asarray(w, dtype=float) * UT, how), outside


def place_figures(layout: Layout, ac: SourceArrays, dc: SourceArrays,
                  rules: list[Rule]) -> tuple[PlaceFigure, ...]:
    """Every point, line and area of the layout, in that order, with its bound limits."""
    f = float(layout.frequency_hz)
    out = []
    for kind, group in (("point", layout.points), ("line", layout.lines),
                        ("area", layout.areas)):
        for place in group:
            bound = [r for r in rules if place.name in r.places]
            judged: dict[int, PlaceLimit] = {}
            for band, src in (("ac", ac), ("dc", dc)):
                mine = [(i, r) for i, r in enumerate(bound) if r.band == band]
                made = [rule_measure(r, src, f) for _, r in mine]
                found = place_maxima(src, place, [None] + [m for m, _ in made])
                if band == "ac":
                    ac_max = found[0]
                else:
                    dc_max = found[0]
                for (i, r), (_, outside), (value, at) in zip(mine, made, found[1:],
                                                             strict=True):
                    judged[i] = PlaceLimit(r.name, r.kind, r.band, r.limit_uT, value, at,
                                           r.source, r.describe(), outside)
            out.append(PlaceFigure(place.name, kind, ac_max[0] * UT, ac_max[1],
                                   dc_max[0] * UT, dc_max[1],
                                   tuple(judged[i] for i in range(len(bound)))))
    return tuple(out)


@dataclass(frozen=True)
class CurveVerdict:
    """A limit judged on the curve at distance d: its index there and its clearance."""

    index: float
    clearance_mm: float  # inf when still above the limit at 100 m
    outside_hz: tuple[float, ...]


def curve_verdict(layout: Layout, rule: Rule, src: SourceArrays, distance_mm: float,
                  stray_uT: float) -> CurveVerdict:
    """A limit without places on the curve at d (``src``: the rows of its band;
    ``stray_uT``: that band's resultant maximum at d, reused for the simple rules)."""
    env = envelope_m(layout)
    measure, outside = rule_measure(rule, src, float(layout.frequency_hz))
    if rule.multi_frequency:
        index = source_stray_field(src, env, distance_mm * MM, measure=measure).max_T
        clr = source_clearance(src, env, 1.0, measure=measure)
    else:
        index = stray_uT / rule.limit_uT
        clr = source_clearance(src, env, rule.limit_uT / UT)
    return CurveVerdict(float(index), float(clr / MM), outside)


def outside_notes(name: str, outside: tuple[float, ...], rule: Rule) -> list[str]:
    """A note when harmonics fall outside a library entry's frequency range."""
    if not outside or rule.entry is None:
        return []
    freqs = ", ".join(f"{f:g}" for f in outside)
    return [f"limit '{name}': components at {freqs} Hz lie outside the "
            f"{rule.entry.f_min_hz:g}-{rule.entry.f_max_hz:g} Hz range of "
            f"{rule.entry.name} and are not in its index"]
