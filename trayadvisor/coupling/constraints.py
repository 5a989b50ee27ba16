"""Coupling constraints for the ranking engine: current imbalance and victim voltage.

Each factory returns a callable ``constraint(layout) -> ConstraintFigure`` on a
:class:`~trayadvisor.model.Layout` with the arrangement's positions applied. Everything that
does not depend on positions (groups, R', GMR, currents, victims) is computed once per layout
*structure* and cached, so a call costs one small batched solve (imbalance) or one
victims × sources kernel (voltage).

``constraint.key`` names the figure (``"imbalance_pct"``, ``"induced_mV_per_m"``) for
columns and JSON; ``constraint.limit`` is the bound. Without building new Layouts,
``constraint.value_xy(layout, xy_m)`` evaluates positions given as an (n, 2) array in metres
(layout conductor order), and ``constraint.values_batch(layout, xy_m)`` a whole batch
(B, n, 2) in one vectorised call, returning the worst figure of each arrangement.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling.induced import induced_loss_w_per_m
from trayadvisor.coupling.system import (
    DEFAULT_TEMPERATURE_C,
    SharingPlan,
    check_current_model,
    group_imbalance_pct,
    plate_sources,
    sharing_plan,
    solve_parts,
    solve_plan,
)
from trayadvisor.coupling.victims import EmfPlan, emf_phasors, emf_plan
from trayadvisor.engine import Reaction
from trayadvisor.engine.units import MM, MV
from trayadvisor.model import Layout

_CACHE_SIZE = 8


@dataclass(frozen=True)
class ConstraintFigure:
    """One constraint's figure for one arrangement."""

    key: str  # "imbalance_pct" or "induced_mV_per_m"
    value: float  # worst group / worst victim
    limit: float
    passes: bool  # value <= limit
    worst: str  # which group ("F1 L1") or victim circuit; "" when there is none


def _signature(layout: Layout) -> tuple:
    """Everything of a layout except conductor positions."""
    return (layout.frequency_hz, layout.circuits,
            tuple((c.name, c.circuit, c.phase, c.diameter_mm, c.area_mm2, c.material,
                   c.current_a, c.angle_deg) for c in layout.conductors))


def positions_m(layout: Layout) -> np.ndarray:
    """Conductor centres of a layout, (n, 2) float, m."""
    return np.array([[c.x_mm, c.y_mm] for c in layout.conductors], float).reshape(-1, 2) * MM


class _PlanCache:
    """Keeps a few position-independent plans keyed by layout structure (picklable)."""

    key = ""
    limit = 0.0

    def __init__(self) -> None:
        self._plans: dict[tuple, object] = {}

    def _build(self, layout: Layout) -> object:
        raise NotImplementedError

    def _plan(self, layout: Layout) -> object:
        sig = _signature(layout)
        plan = self._plans.get(sig)
        if plan is None:
            if len(self._plans) >= _CACHE_SIZE:
                self._plans.pop(next(iter(self._plans)))
            plan = self._plans[sig] = self._build(layout)
        return plan

    def __getstate__(self) -> dict:
        return {k: v for k, v in self.__dict__.items() if k != "_plans"}

    def __setstate__(self, state: dict) -> None:
        self.__dict__.update(state)
        self._plans = {}

    def items(self, layout: Layout, xy_m: np.ndarray) -> tuple[np.ndarray, tuple[str, ...]]:
        """Figure of every group/victim, (..., K), and their labels (K,)."""
        raise NotImplementedError

    def value_xy(self, layout: Layout, xy_m: np.ndarray) -> tuple[float, str]:
        """(worst figure, which group/victim) for centres ``xy_m`` (n, 2) m; a group without
        a figure (NaN: its total is zero) is passed over."""
        vals, labels = self.items(layout, xy_m)
        if not labels or np.all(np.isnan(vals)):
            return 0.0, ""
        k = int(np.nanargmax(vals))
        return float(vals[k]), labels[k]

    def values_batch(self, layout: Layout, xy_m: np.ndarray) -> np.ndarray:
        """Worst figure of each arrangement of a batch, (B,) float, for ``xy_m`` (B, n, 2) m.

        One vectorised evaluation for the whole batch; ``values_batch(...) <= limit`` is
        the pass mask.
        """
        vals, labels = self.items(layout, xy_m)
        if not labels:
            return np.zeros(np.shape(xy_m)[:-2])
        return np.nan_to_num(np.fmax.reduce(vals, axis=-1), nan=0.0)

    def __call__(self, layout: Layout) -> ConstraintFigure:
        value, worst = self.value_xy(layout, positions_m(layout))
        return ConstraintFigure(self.key, value, self.limit, value <= self.limit, worst)


class ImbalanceConstraint(_PlanCache):
    """Largest current imbalance of any parallel group must stay at or below ``limit`` %."""

    key = "imbalance_pct"

    def __init__(self, max_pct: float, temperature_c: float = DEFAULT_TEMPERATURE_C) -> None:
        super().__init__()
        self.limit = float(max_pct)
        self.temperature_c = float(temperature_c)

    def _build(self, layout: Layout) -> SharingPlan:
        return sharing_plan(layout, self.temperature_c)

    def items(self, layout: Layout, xy_m: np.ndarray) -> tuple[np.ndarray, tuple[str, ...]]:
        """Imbalance % of every parallel group, (..., G), and the groups ("F1 L1")."""
        plan: SharingPlan = self._plan(layout)  # type: ignore[assignment]
        par = [k for k, g in enumerate(plan.groups) if g.kind == "parallel"]
        labels = tuple(f"{plan.groups[k].circuit} {plan.groups[k].phase}" for k in par)
        if not labels:
            return np.zeros((*np.shape(xy_m)[:-2], 0)), labels
        return group_imbalance_pct(plan, solve_parts(plan, xy_m)[0])[..., par], labels


class InducedLossFigure(_PlanCache):
    """The loss in screens bonded at both ends and in passive loops, W/m (a figure each
    ranked option carries; ``limit`` inf unless a maximum is wanted)."""

    key = "induced_loss_w_per_m"

    def __init__(self, max_w_per_m: float = math.inf,
                 temperature_c: float = DEFAULT_TEMPERATURE_C) -> None:
        super().__init__()
        self.limit = float(max_w_per_m)
        self.temperature_c = float(temperature_c)

    def _build(self, layout: Layout) -> SharingPlan:
        return sharing_plan(layout, self.temperature_c)

    def items(self, layout: Layout, xy_m: np.ndarray) -> tuple[np.ndarray, tuple[str, ...]]:
        """The total loss, (..., 1), labelled "screens and loops"."""
        plan: SharingPlan = self._plan(layout)  # type: ignore[assignment]
        if not plan.induced:
            return np.zeros((*np.shape(xy_m)[:-2], 0)), ()
        cores, screens = solve_parts(plan, xy_m)
        return induced_loss_w_per_m(plan, cores, screens)[..., None], ("screens and loops",)


@dataclass(frozen=True)
class _EmfSetup:
    plan: EmfPlan
    omega: np.ndarray  # (H,)
    currents: np.ndarray  # (H, n) equal shares
    sharing: SharingPlan | None
    reaction: Reaction | None = None  # plates nearby


class InducedVoltageConstraint(_PlanCache):
    """Largest victim EMF (mV/m, RMS over harmonics) must stay at or below ``limit``."""

    key = "induced_mV_per_m"

    def __init__(self, max_mv_per_m: float, currents: str = "solved",
                 temperature_c: float = DEFAULT_TEMPERATURE_C) -> None:
        super().__init__()
        self.limit = float(max_mv_per_m)
        self.currents = check_current_model(currents)
        self.temperature_c = float(temperature_c)

    def _build(self, layout: Layout) -> _EmfSetup:
        src = plate_sources(layout)
        shp = sharing_plan(layout, self.temperature_c) if self.currents == "solved" else None
        return _EmfSetup(emf_plan(layout), 2.0 * np.pi * src.frequency_hz, src.currents, shp,
                         src.reaction)

    def items(self, layout: Layout, xy_m: np.ndarray) -> tuple[np.ndarray, tuple[str, ...]]:
        """EMF (mV/m, RMS over harmonics) of every victim, (..., V), and the victims."""
        st: _EmfSetup = self._plan(layout)  # type: ignore[assignment]
        if not st.plan.victims:
            return np.zeros((*np.shape(xy_m)[:-2], 0)), ()
        xy = np.asarray(xy_m, dtype=float)
        cur = st.currents if st.sharing is None else solve_plan(st.sharing, xy)
        emf, _ = emf_phasors(st.plan, xy, cur, st.omega, reaction=st.reaction)
        return np.sqrt(np.sum(np.abs(emf) ** 2, axis=-2)) * MV, st.plan.victims


def imbalance_constraint(max_pct: float,
                         temperature_c: float = DEFAULT_TEMPERATURE_C) -> ImbalanceConstraint:
    """Constraint: every parallel group's imbalance ≤ ``max_pct`` % (solved sharing).

    Imbalance = (max |I| − min |I|) / mean |I| × 100 within a group, at the fundamental
    (DC for dc circuits); see :func:`trayadvisor.coupling.sharing.solve_sharing`.
    """
    return ImbalanceConstraint(max_pct, temperature_c)


def induced_loss_figure(temperature_c: float = DEFAULT_TEMPERATURE_C) -> InducedLossFigure:
    """Figure (no limit): the loss in screens bonded at both ends and in passive loops of
    each arrangement, W/m (:mod:`trayadvisor.coupling.induced`)."""
    return InducedLossFigure(math.inf, temperature_c)


def induced_voltage_constraint(max_mV_per_m: float, currents: str = "solved",  # noqa: N803
                               temperature_c: float = DEFAULT_TEMPERATURE_C,
                               ) -> InducedVoltageConstraint:
    """Constraint: every victim loop's EMF ≤ ``max_mV_per_m`` (RMS over harmonics).

    ``currents="solved"`` (the default) computes the EMF with the solved sharing currents,
    ``"equal"`` with equal shares; see :func:`trayadvisor.coupling.victims.induced_emf`.
    """
    return InducedVoltageConstraint(max_mV_per_m, currents, temperature_c)
