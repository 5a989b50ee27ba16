"""Current sharing between parallel conductors, and the currents every figure uses.

The impedance system itself (parallel groups, cable screens, passive loops) is in
:mod:`trayadvisor.coupling.system`; :func:`solve_sharing` solves it for a layout and reports
each parallel group's shares and imbalance, and the screens and passive loops
(:mod:`trayadvisor.coupling.induced`). ``carried_sources`` gives the currents every figure
uses: the solved ones (each cable's core plus its screen), or equal shares.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.coupling.induced import PassiveFigure, ScreenFigure, induced_figures
from trayadvisor.coupling.system import (
    CURRENT_MODELS,
    DEFAULT_MATERIAL,
    DEFAULT_TEMPERATURE_C,
    TEMPERATURE_RANGE_C,
    ZERO_IMBALANCE_PCT,
    ZERO_TOTAL,
    GroupMeta,
    SharingError,
    SharingPlan,
    check_current_model,
    group_imbalance_pct,
    net_currents,
    plate_sources,
    sharing_plan,
    solve_parts,
    solve_plan,
)
from trayadvisor.engine import SourceArrays
from trayadvisor.model import Layout

__all__ = ["CURRENT_MODELS", "DEFAULT_MATERIAL", "DEFAULT_TEMPERATURE_C", "TEMPERATURE_RANGE_C",
           "ZERO_IMBALANCE_PCT", "ZERO_TOTAL", "ConductorShare", "GroupFigure", "GroupMeta",
           "SharingError", "SharingPlan", "SharingResult", "carried_sources",
           "check_current_model", "check_temperature", "group_imbalance_pct", "plate_sources",
           "sharing_plan",
           "solve_parts", "solve_plan", "solve_sharing", "solved_sources"]


@dataclass(frozen=True)
class ConductorShare:
    """One parallel conductor's solved current at its group's reported component."""

    conductor: str
    circuit: str
    phase: str
    current: complex  # RMS phasor, A
    current_a: float  # |current|
    angle_deg: float
    share_pct: float | None  # |I| / |I_group| × 100; None when the group total is zero
    current_rms_a: float  # all components, root-sum-square


@dataclass(frozen=True)
class GroupFigure:
    """A parallel group: circuit, phase, members, group current and imbalance."""

    circuit: str
    phase: str
    conductors: tuple[str, ...]
    current_a: float  # |group current| at the reported component
    order: int
    imbalance_pct: float | None  # None when the group total is zero
    reactance_only: bool
    circulating_a: float = 0.0  # Σ|I| / 2 when the group total is zero, else 0


@dataclass(frozen=True)
class SharingResult:
    """Solved current sharing of a layout (see module notes).

    ``currents`` holds every conductor (layout order) at every component ``orders``; only the
    parallel-group members differ from the equal shares.
    """

    names: tuple[str, ...]
    orders: np.ndarray  # (H,) int
    currents: np.ndarray  # (H, n) complex
    shares: tuple[ConductorShare, ...]
    groups: tuple[GroupFigure, ...]
    temperature_c: float
    reactance_only: bool  # some parallel group was solved without R'
    gmr_from_overall: tuple[str, ...]  # parallel conductors whose GMR used the overall radius
    sources: SourceArrays  # the layout's sources carrying the solved (net) currents
    screens: tuple[ScreenFigure, ...] = ()
    passive: tuple[PassiveFigure, ...] = ()

    def notes(self) -> list[str]:
        """What the figures rest on, in words (shown with every output that uses them)."""
        out: list[str] = []
        if self.groups:
            out.append("R' from IEC 60228 (class 2, 20 °C) at a conductor temperature of "
                       f"{self.temperature_c:g} °C, AC resistance by the IEC 60287-1-1 skin "
                       "effect; proximity effect left out")
        rx = [f"{g.circuit} {g.phase}" for g in self.groups if g.reactance_only]
        if rx:
            out.append("reactance-only sharing (no conductor area given): " + ", ".join(rx))
        if self.gmr_from_overall:
            out.append("self inductance from the overall diameter (no area given): "
                       + ", ".join(self.gmr_from_overall))
        if any(s.bonding == "both-ends" for s in self.screens):
            out.append("screens bonded at both ends carry circulating currents, solved with "
                       f"the cores (R' of the screens at {self.temperature_c:g} °C; no earth "
                       "return): every figure uses each cable's core plus screen current")
        alone = sorted({s.circuit for s in self.screens if s.bonding == "both-ends"
                        and sum(t.circuit == s.circuit and t.bonding == "both-ends"
                                for t in self.screens) == 1})
        if alone:
            out.append("one screened cable only in " + ", ".join(alone) + ": with no other "
                       "screen to return through (and no earth return modelled) it carries "
                       "no current")
        if any(s.bonding == "single-point" for s in self.screens):
            out.append("screens bonded at one point carry no current; their standing "
                       "voltage is reported per metre")
        if self.passive:
            out.append("passive loops carry the current the other circuits induce in them, "
                       "solved with the cores")
        return out


def solve_sharing(layout: Layout,
                  temperature_c: float = DEFAULT_TEMPERATURE_C) -> SharingResult:
    """Current sharing between parallel conductors of every phase of the layout.

    Parameters
    ----------
    layout : Layout
    temperature_c : float
        Conductor temperature for R', °C (default :data:`DEFAULT_TEMPERATURE_C`).

    Returns
    -------
    SharingResult

    Raises
    ------
    SharingError
        When the impedance system has no solution (naming the conductors).

    Notes
    -----
    See the module notes and :func:`solve_plan`. Imbalance of a group:
    (max |I| − min |I|) / mean |I| × 100. A group whose total is zero at its reported
    component (two parallel neutrals of a balanced circuit) is reported by its circulating
    current, Σ|I| / 2, not by shares of a zero total.

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946; IEC 60287-1-1 (R' at temperature, skin
    effect); IEC 60228 (R' at 20 °C).
    """
    plan = sharing_plan(layout, temperature_c)
    xy = plan.sources.xy_m
    cur, scr = solve_parts(plan, xy)
    net = net_currents(plan, cur, scr)
    imb = group_imbalance_pct(plan, cur)
    cons = layout.conductors
    rss = np.sqrt(np.sum(np.abs(cur) ** 2, axis=0))
    zero = ZERO_TOTAL * max(plan.scale_a, 1e-300)
    shares: list[ConductorShare] = []
    groups: list[GroupFigure] = []
    for k, g in enumerate(plan.groups):
        if g.kind != "parallel":
            continue
        row = plan.report_row[k]
        total = abs(plan.totals[row, k])
        circulating = 0.0
        if total <= zero:
            total = 0.0
            circulating = float(sum(abs(cur[row, i]) for i in g.members) / 2.0)
        for i in g.members:
            v = complex(cur[row, i])
            shares.append(ConductorShare(
                cons[i].name, g.circuit, g.phase, v, abs(v), float(np.angle(v, deg=True)),
                abs(v) / total * 100.0 if total > 0 else None, float(rss[i])))
        imbalance = None if total == 0.0 and circulating > zero else float(imb[k])
        groups.append(GroupFigure(g.circuit, g.phase, tuple(cons[i].name for i in g.members),
                                  float(total), g.order,
                                  0.0 if total == 0.0 and imbalance is not None else imbalance,
                                  g.reactance_only, circulating if circulating > zero else 0.0))
    parallel = [i for g in plan.groups if g.kind == "parallel" for i in g.members]
    overall = tuple(cons[i].name for i in parallel if not plan.gmr_from_area[i])
    screens, passive = induced_figures(layout, plan, xy, cur, scr, net)
    return SharingResult(
        names=tuple(c.name for c in cons), orders=plan.orders, currents=net,
        shares=tuple(shares), groups=tuple(groups), temperature_c=plan.temperature_c,
        reactance_only=any(g.reactance_only for g in plan.groups if g.kind == "parallel"),
        gmr_from_overall=overall, sources=replace(plan.sources, currents=net),
        screens=screens, passive=passive,
    )


def solved_sources(layout: Layout, temperature_c: float = DEFAULT_TEMPERATURE_C
                   ) -> SourceArrays:
    """The layout's sources with the solved currents of its parallel conductors."""
    return solve_sharing(layout, temperature_c).sources


def check_temperature(temperature_c: float) -> float:
    """``temperature_c`` as a float, or ``ValueError`` naming the accepted range."""
    lo, hi = TEMPERATURE_RANGE_C
    t = temperature_c
    if isinstance(t, bool) or not isinstance(t, (int, float)) or not math.isfinite(t) \
            or not lo <= t <= hi:
        raise ValueError(f"give a conductor temperature from {lo:g} to {hi:g} °C")
    return float(t)


def carried_sources(layout: Layout, currents: str = "solved",
                    temperature_c: float = DEFAULT_TEMPERATURE_C) -> SourceArrays:
    """The currents the figures use: ``"solved"`` sharing (the default) or ``"equal"`` shares.

    Raises ValueError for an unknown model and :class:`SharingError` when the sharing has no
    solution.
    """
    if check_current_model(currents) == "equal":
        return plate_sources(layout)
    return solved_sources(layout, temperature_c)
