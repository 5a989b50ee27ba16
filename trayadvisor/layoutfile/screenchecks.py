"""The checks of cable screens and passive loops (stages of
:func:`trayadvisor.layoutfile.checks.layout_problems`; ``ck`` is its collector)."""

from __future__ import annotations

import math
from typing import Any

from trayadvisor.layoutfile.errors import did_you_mean
from trayadvisor.model import MATERIALS, PASSIVE_SYSTEMS, SCREEN_BONDINGS


def _finite(v: object) -> bool:
    return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)


def screen_values(ck: Any) -> None:
    """Screen keys given together, a known material, a screen diameter between the metal
    conductor's and the cable's overall diameter; a known bonding; no current of a loop's
    own."""
    lay = ck.layout
    for i, c in enumerate(lay.conductors):
        what = ck.label("conductor", i, c.name)
        if c.screen_material is not None and c.screen_material not in MATERIALS:
            ck.add(("conductor", i, "screen_material"), f"{what}: unknown screen material "
                   f"{c.screen_material!r}; use {' or '.join(MATERIALS)}"
                   f"{did_you_mean(c.screen_material, MATERIALS)}")
        if not (c.screened or c.screen_material is not None):
            continue
        for key in ("screen_area_mm2", "screen_diameter_mm"):
            if getattr(c, key) is None:
                ck.add(("conductor", i), f"{what}: a screen needs both screen_area_mm2 "
                       f"(metal cross-section) and screen_diameter_mm (mean diameter); add "
                       f"{key}")
                break
        sd, od = c.screen_diameter_mm, c.diameter_mm
        if not (_finite(sd) and _finite(od)) or sd <= 0:
            continue
        if sd >= od:
            ck.add(("conductor", i, "screen_diameter_mm"), f"{what}: screen_diameter_mm = "
                   f"{sd:g} is not inside the cable (overall diameter {od:g} mm); give the "
                   "screen's mean diameter, smaller than diameter_mm")
        elif _finite(c.area_mm2) and c.area_mm2 > 0 \
                and sd <= 2.0 * math.sqrt(c.area_mm2 / math.pi):
            core = 2.0 * math.sqrt(c.area_mm2 / math.pi)
            ck.add(("conductor", i, "screen_diameter_mm"), f"{what}: screen_diameter_mm = "
                   f"{sd:g} is inside the conductor (a {c.area_mm2:g} mm² conductor is "
                   f"{core:.1f} mm across); give the screen's mean diameter, over the "
                   "insulation")
    for i, circ in enumerate(lay.circuits):
        what = ck.label("circuit", i, circ.name)
        if circ.screen_bonding is not None and circ.screen_bonding not in SCREEN_BONDINGS:
            ck.add(("circuit", i, "screen_bonding"), f"{what}: unknown screen_bonding "
                   f"{circ.screen_bonding!r}; use \"both-ends\" or \"single-point\""
                   f"{did_you_mean(circ.screen_bonding, SCREEN_BONDINGS)}")
        if circ.system == "loop" and circ.current_a:
            ck.add(("circuit", i, "current_a"), f"{what}: a passive loop carries only the "
                   "current the other circuits induce in it; remove current_a")


def screen_references(ck: Any) -> None:
    """Screened circuits say how they are bonded; screens on power circuits only; a loop has
    two or more conductors, each with an area."""
    lay = ck.layout
    for i, circ in enumerate(lay.circuits):
        what = ck.label("circuit", i, circ.name)
        mine = [(j, c) for j, c in enumerate(lay.conductors) if c.circuit == circ.name]
        screened = [c for _, c in mine if c.screened]
        if screened and circ.system in PASSIVE_SYSTEMS:
            ck.add(("circuit", i, "system"), f"{what}: conductor '{screened[0].name}' has a "
                   f"screen, but screens are modelled on power cables only (ac3, ac1, dc); "
                   "remove its screen keys")
        elif screened and circ.screen_bonding is None:
            ck.add(("circuit", i), f"{what}: conductor '{screened[0].name}' has a screen; "
                   'say how the screens are bonded: screen_bonding = "both-ends" or '
                   '"single-point"')
        if circ.system != "loop":
            continue
        if len(mine) < 2:
            ck.add(("circuit", i), f"{what}: a passive loop needs two or more conductors "
                   "joined at both ends (phase \"a\" out, \"b\" back); add a conductor")
        for j, c in mine:
            if c.area_mm2 is None:
                ck.add(("conductor", j), f"{ck.label('conductor', j, c.name)}: a "
                       "passive-loop conductor needs area_mm2 (its resistance sets the loop "
                       "current); add area_mm2")
            if c.current_a is not None:
                ck.add(("conductor", j, "current_a"), f"{ck.label('conductor', j, c.name)}"
                       ": a passive-loop conductor carries only induced current; remove "
                       "current_a")
