"""Current sharing between parallel conductors, from the impedance system of all conductors.

Model (per metre of run, one solve per frequency component, all circuits jointly):

- Every conductor i has the series impedance Z_ij = R_i(f) δ_ij + jω (μ0/2π) ln(1/d_ij), with
  ln(1/GMR_i) on the diagonal (:func:`trayadvisor.coupling.inductance.gmr_m`) and R_i(f) the
  AC resistance at that component's own frequency (:mod:`trayadvisor.coupling.resistance`:
  IEC 60228 R′20, temperature, IEC 60287-1-1 skin effect; proximity effect left out).
- A *phase group* is the conductors of one circuit with one phase label (neutrals included;
  not PE, not signal) that have no explicit ``current_a``. Groups of two or more are
  *parallel groups*; their currents are the unknowns, all other conductors keep the currents
  of :func:`trayadvisor.engine.layout_sources` (equal shares, explicit values, neutral
  returns).
- Parallel conductors of a group are joined at both ends, so they share one voltage drop
  U_g, and their currents sum to the group's current (the circuit's phase current at that
  component, fixed; zero at a component the circuit does not carry).
- The currents of every other conductor in the tray induce voltage in each group. Every
  group is solved at every frequency component present in the layout, all circuits
  jointly, each component at its own frequency: another circuit's harmonic drives a
  circulating current in a parallel group even where the group's own circuit carries none
  at that frequency. At DC only resistance shares.

The arbitrary length reference of ln(1/d) adds the same voltage to every conductor, which the
unknown U_g absorb: the currents do not depend on it.

A group with a conductor without ``area_mm2`` is solved reactance-only (R′ = 0) and flagged;
at DC such a group shares equally.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.coupling.inductance import gmr_m, log_distance_matrix
from trayadvisor.coupling.resistance import ac_resistance_per_m, resistance_per_m
from trayadvisor.engine import SourceArrays, layout_sources
from trayadvisor.engine.units import K_LINE
from trayadvisor.model import Layout

#: Conductor temperature for R' unless the caller states one: 90 °C, the maximum continuous
#: operating temperature of XLPE/EPR insulated cables (common practice).
DEFAULT_TEMPERATURE_C: float = 90.0
#: Conductor temperatures accepted (°C): the linear temperature coefficient of IEC 60287-1-1
#: is meant for operating temperatures; far outside this range R' would be meaningless.
TEMPERATURE_RANGE_C: tuple[float, float] = (-50.0, 250.0)
#: Material assumed when a conductor gives ``area_mm2`` but no ``material``.
DEFAULT_MATERIAL = "copper"
#: The current models every figure can use: solved sharing (the default), or equal shares.
CURRENT_MODELS: tuple[str, ...] = ("solved", "equal")
#: A group current below this fraction of the largest current in the layout is zero (a
#: balanced group's total is then reported by its circulating current, never as a share).
ZERO_TOTAL = 1e-9
#: An imbalance below this (%) is rounding noise and reported as 0.
ZERO_IMBALANCE_PCT = 1e-9


class SharingError(ValueError):
    """The impedance system of some parallel conductors cannot be solved (one line)."""


def check_current_model(currents: str) -> str:
    """``currents`` if it is a known current model, else ValueError naming the parameter."""
    if currents not in CURRENT_MODELS:
        raise ValueError(f"currents = {currents!r}: use one of {', '.join(CURRENT_MODELS)}")
    return currents


@dataclass(frozen=True)
class GroupMeta:
    circuit: str
    phase: str
    members: tuple[int, ...]  # conductor indices (layout order)
    order: int  # frequency component reported: 1, or 0 for dc circuits
    reactance_only: bool


@dataclass(frozen=True)
class SharingPlan:
    """Everything of a sharing solve that does not depend on conductor positions."""

    orders: np.ndarray  # (H,) int
    omega: np.ndarray  # (H,) rad/s
    base: np.ndarray  # (H, n) complex, currents with equal shares
    free: np.ndarray  # (nf,) int conductor indices of parallel-group members, group-sorted
    fixed: np.ndarray  # (nk,) int the others
    group_of_free: np.ndarray  # (nf,) int group number of each free conductor
    starts: np.ndarray  # (G,) int first position of each group in ``free``
    totals: np.ndarray  # (H, G) complex group currents
    r_free: np.ndarray  # (H, nf) Ω/m at each component (DC: 1 for reactance-only groups)
    gmr: np.ndarray  # (n,) m
    gmr_from_area: np.ndarray  # (n,) bool
    resistance: np.ndarray  # (n,) DC Ω/m at the temperature, NaN without area
    report_row: np.ndarray  # (G,) int row of ``orders`` reported per group
    scale_a: float  # largest current of the layout, A (the scale of "zero")
    groups: tuple[GroupMeta, ...]
    names: tuple[str, ...]
    temperature_c: float
    sources: SourceArrays  # the layout's sources with equal shares


def sharing_plan(layout: Layout, temperature_c: float = DEFAULT_TEMPERATURE_C) -> SharingPlan:
    """Precompute the position-independent part of :func:`solve_sharing`."""
    cons = layout.conductors
    src = layout_sources(layout)
    systems = {c.name: c.system for c in layout.circuits}
    members: dict[tuple[str, str], list[int]] = {}
    for i, c in enumerate(cons):
        if systems.get(c.circuit) in (None, "signal") or c.phase == "PE" \
                or c.current_a is not None:
            continue
        members.setdefault((c.circuit, c.phase), []).append(i)
    area = np.array([c.area_mm2 if c.area_mm2 is not None else np.nan for c in cons], float)
    has_area = np.isfinite(area)
    resistance = np.full(len(cons), np.nan)
    if has_area.any():
        mats = [cons[i].material or DEFAULT_MATERIAL for i in np.flatnonzero(has_area)]
        resistance[has_area] = resistance_per_m(area[has_area], mats, temperature_c)
    orders = src.orders
    groups: list[GroupMeta] = []
    for (circ, phase), idx in members.items():
        if len(idx) < 2:
            continue
        order = 0 if systems[circ] == "dc" else 1
        groups.append(GroupMeta(circ, phase, tuple(idx), order,
                                not bool(has_area[idx].all())))
    free = np.array([i for g in groups for i in g.members], dtype=int)
    gof = np.array([k for k, g in enumerate(groups) for _ in g.members], dtype=int)
    sizes = np.array([len(g.members) for g in groups], dtype=int)
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]]).astype(int) if groups else \
        np.zeros(0, int)
    fixed = np.setdiff1d(np.arange(len(cons)), free)
    g_count = len(groups)
    totals = np.zeros((orders.size, g_count), dtype=complex)
    np.add.at(totals, (slice(None), gof), src.currents[:, free])
    ro = np.array([g.reactance_only for g in groups], dtype=bool)[gof] if free.size \
        else np.zeros(0, bool)
    r_dc = np.nan_to_num(resistance[free]) if free.size else np.zeros(0)
    freq = src.frequency_hz[:, None]
    r_ac = np.where(ro, 0.0, ac_resistance_per_m(np.where(ro, 1.0, r_dc), freq))
    r_free = np.where(freq == 0.0, np.where(ro, 1.0, r_dc), r_ac).reshape(orders.size, -1)
    row_of = {int(h): k for k, h in enumerate(orders)}
    report_row = np.array([row_of.get(g.order, 0) for g in groups], dtype=int)
    gmr, from_area = gmr_m(layout)
    scale = float(np.abs(src.currents).max()) if src.currents.size else 0.0
    return SharingPlan(
        orders=orders, omega=2.0 * np.pi * src.frequency_hz, base=src.currents, free=free,
        fixed=fixed, group_of_free=gof, starts=starts, totals=totals, r_free=r_free,
        gmr=gmr, gmr_from_area=from_area, resistance=resistance, report_row=report_row,
        scale_a=scale, groups=tuple(groups), names=tuple(c.name for c in cons),
        temperature_c=float(temperature_c), sources=src,
    )


def _coincident(plan: SharingPlan, xy: np.ndarray) -> str:
    """A message naming two coinciding conductors of which one is solved, or ""."""
    for i in plan.free:
        d = np.hypot(*(xy[:, :] - xy[i]).T)
        d[i] = np.inf
        j = int(np.argmin(d))
        if d[j] < 1e-9:
            return (f"conductors '{plan.names[i]}' and '{plan.names[j]}' lie at the same "
                    "place, so the current sharing has no solution; move one of them")
    return ""


def solve_plan(plan: SharingPlan, xy_m: np.ndarray) -> np.ndarray:
    """Solved currents of every conductor at every component, for conductor centres ``xy_m``.

    Parameters
    ----------
    plan : SharingPlan
    xy_m : (..., n, 2) float
        Conductor centres, m (layout order); leading axes are a batch of arrangements.

    Returns
    -------
    (..., H, n) complex
        RMS phasors, A: ``plan.base`` with the parallel-group members replaced.

    Raises
    ------
    SharingError
        When the system has no solution (two conductors at one place), naming them.

    Notes
    -----
    For the free conductors f (parallel-group members, grouped by the incidence matrix E)
    and the fixed ones k, one batched solve over arrangements and components h of

        [ Z_ff   −E ] [ I_f ]   [ −Z_fk I_k ]
        [ Eᵀ      0 ] [ U   ] = [  I_group  ],   Z = R(f_h) + jω_h (μ0/2π) (−Λ),

    Λ = ln distances (ln GMR on the diagonal). At ω = 0 only R remains.
    References: Grover, *Inductance Calculations*, 1946 (self and mutual per metre).
    """
    xy = np.asarray(xy_m, dtype=float)
    batch = xy.shape[:-2]
    out = np.broadcast_to(plan.base, (*batch, *plan.base.shape)).copy()
    if plan.free.size == 0:
        return out
    with np.errstate(all="ignore"):  # coinciding conductors: an error below
        sol = _solve_free(plan, xy)
    if not np.all(np.isfinite(sol)):
        where = xy.reshape(-1, *xy.shape[-2:])[0] if batch else xy
        raise SharingError(_coincident(plan, where) or "the current sharing of the "
                           "parallel conductors has no solution; check their places and "
                           "sizes")
    out[..., plan.free] = sol
    return out


def _solve_free(plan: SharingPlan, xy: np.ndarray) -> np.ndarray:
    """The bordered system of :func:`solve_plan`: currents of the free conductors, NaN when
    it has no solution."""
    batch = xy.shape[:-2]
    h = plan.orders.size
    nf, g_count = plan.free.size, plan.starts.size
    lam = log_distance_matrix(xy, plan.gmr)  # (..., n, n)
    x_ff = -K_LINE * lam[..., plan.free[:, None], plan.free[None, :]]
    x_fk = -K_LINE * lam[..., plan.free[:, None], plan.fixed[None, :]]
    n_sys = nf + g_count
    a = np.zeros((*batch, h, n_sys, n_sys), dtype=complex)
    a[..., :nf, :nf] = 1j * plan.omega[:, None, None] * x_ff[..., None, :, :]
    diag = np.arange(nf)
    a[..., diag, diag] += plan.r_free
    a[..., diag, nf + plan.group_of_free] = -1.0
    a[..., nf + plan.group_of_free, diag] = 1.0
    rhs = np.zeros((*batch, h, n_sys), dtype=complex)
    i_k = plan.base[:, plan.fixed]  # (H, nk)
    rhs[..., :nf] = -1j * plan.omega[:, None] * (i_k @ np.swapaxes(x_fk, -1, -2))
    rhs[..., nf:] = plan.totals
    try:
        return np.linalg.solve(a, rhs[..., None])[..., :nf, 0]
    except np.linalg.LinAlgError:
        return np.full((*batch, h, nf), np.nan, dtype=complex)


def group_imbalance_pct(plan: SharingPlan, currents: np.ndarray) -> np.ndarray:
    """(max |I| − min |I|) / mean |I| × 100 of each parallel group, (..., G) float.

    ``currents`` is (..., H, n) from :func:`solve_plan`. Evaluated at each group's reported
    component (fundamental; DC for dc circuits); 0 for a group carrying no current and for
    rounding noise; NaN for a group whose total is zero (it only carries a circulating
    current: an imbalance of a zero total means nothing).
    """
    if plan.free.size == 0:
        return np.zeros((*currents.shape[:-2], 0))
    mag = np.abs(currents[..., plan.report_row[plan.group_of_free], plan.free])
    hi = np.maximum.reduceat(mag, plan.starts, axis=-1)
    lo = np.minimum.reduceat(mag, plan.starts, axis=-1)
    sizes = np.diff(np.append(plan.starts, plan.free.size))
    mean = np.add.reduceat(mag, plan.starts, axis=-1) / sizes
    safe = np.where(mean > 0.0, mean, 1.0)
    out = np.where(mean > 0.0, (hi - lo) / safe * 100.0, 0.0)
    out = np.where(out < ZERO_IMBALANCE_PCT, 0.0, out)
    zero_total = np.abs(plan.totals[plan.report_row, np.arange(plan.starts.size)]) \
        <= ZERO_TOTAL * max(plan.scale_a, 1e-300)
    out = np.where(zero_total & (mean > ZERO_TOTAL * max(plan.scale_a, 1e-300)), np.nan, out)
    return np.where(np.isfinite(mean), out, np.nan)


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
    sources: SourceArrays  # the layout's sources carrying the solved currents

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
    cur = solve_plan(plan, plan.sources.xy_m)
    imb = group_imbalance_pct(plan, cur)
    cons = layout.conductors
    rss = np.sqrt(np.sum(np.abs(cur) ** 2, axis=0))
    zero = ZERO_TOTAL * max(plan.scale_a, 1e-300)
    shares: list[ConductorShare] = []
    groups: list[GroupFigure] = []
    for k, g in enumerate(plan.groups):
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
    overall = tuple(cons[i].name for i in plan.free if not plan.gmr_from_area[i])
    return SharingResult(
        names=tuple(c.name for c in cons), orders=plan.orders, currents=cur,
        shares=tuple(shares), groups=tuple(groups), temperature_c=plan.temperature_c,
        reactance_only=any(g.reactance_only for g in plan.groups), gmr_from_overall=overall,
        sources=replace(plan.sources, currents=cur),
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
        return layout_sources(layout)
    return solved_sources(layout, temperature_c)
