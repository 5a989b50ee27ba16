"""Current sharing between parallel conductors of one phase, from the impedance matrix.

Model (per metre of run, one solve per frequency component, all circuits jointly):

- Every conductor i has the series impedance Z_ij = R_i δ_ij + jω (μ0/2π) ln(1/d_ij), with
  ln(1/GMR_i) on the diagonal (:func:`trayadvisor.coupling.inductance.gmr_m`).
- A *phase group* is the conductors of one circuit with one phase label (not PE, not
  signal) that have no explicit ``current_a``. Groups of two or more are *parallel groups*;
  their currents are the unknowns, all other conductors keep the currents of
  :func:`trayadvisor.engine.layout_sources` (equal shares, explicit values, neutral
  returns).
- Parallel conductors of a group are joined at both ends, so they share one voltage drop
  U_g, and their currents sum to the group's current (the circuit's phase current, fixed).
- The currents of every other conductor in the tray induce voltage in each group (all
  circuits are solved jointly, every group's total fixed). A group is solved at its own
  circuit's components only (the fundamental and its harmonics; DC for dc circuits): the
  circulating current another circuit's harmonic would induce in it at a frequency its own
  circuit does not carry is left out, as :func:`trayadvisor.engine.layout_sources` carries
  none.

The arbitrary length reference of ln(1/d) adds the same voltage to every conductor, which the
unknown U_g absorb: the currents do not depend on it.

R' = ρ20 (1 + α20 (θ − 20 °C)) / A, DC resistance only (skin and proximity effect are left
out). A group with a conductor without ``area_mm2`` is solved reactance-only (R' = 0) and is
flagged; at DC such a group shares equally.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling.inductance import gmr_m, log_distance_matrix
from trayadvisor.engine import layout_sources
from trayadvisor.engine.units import K_LINE, MM, MM2
from trayadvisor.model import MATERIALS, Layout

#: Conductor temperature for R' unless the caller states one: 90 °C, the maximum continuous
#: operating temperature of XLPE/EPR insulated cables (common practice).
DEFAULT_TEMPERATURE_C: float = 90.0
#: Material assumed when a conductor gives ``area_mm2`` but no ``material``.
DEFAULT_MATERIAL = "copper"


def resistance_per_m(area_mm2: np.ndarray | float, material: str | Sequence[str],
                     temperature_c: float = DEFAULT_TEMPERATURE_C) -> np.ndarray:
    """DC resistance per metre of a conductor from its area, material and temperature.

    Parameters
    ----------
    area_mm2 : float or (n,) float
        Conductor cross-sectional area, mm².
    material : str or sequence of str, length n
        A key of :data:`trayadvisor.model.MATERIALS`.
    temperature_c : float
        Conductor temperature, °C.

    Returns
    -------
    (n,) or () float
        R' in Ω/m.

    Notes
    -----
    R' = ρ20 [1 + α20 (θ − 20)] / A.

    References
    ----------
    IEC 60287-1-1, clause 2.1.1 (DC resistance at operating temperature); resistivities and
    α20 of IEC 60228 as held in :data:`trayadvisor.model.MATERIALS`.
    """
    mats = [material] if isinstance(material, str) else list(material)
    rho = np.array([MATERIALS[m][0] for m in mats], dtype=float)
    alpha = np.array([MATERIALS[m][1] for m in mats], dtype=float)
    r = rho * (1.0 + alpha * (float(temperature_c) - 20.0)) / (np.asarray(area_mm2) * MM2)
    return r[0] if isinstance(material, str) and np.ndim(area_mm2) == 0 else r


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
    r_ac: np.ndarray  # (nf,) Ω/m used at ω > 0 (0 for reactance-only groups)
    r_dc: np.ndarray  # (nf,) Ω/m used at ω = 0 (1 for reactance-only groups: equal shares)
    gmr: np.ndarray  # (n,) m
    gmr_from_area: np.ndarray  # (n,) bool
    resistance: np.ndarray  # (n,) Ω/m, NaN without area
    report_row: np.ndarray  # (G,) int row of ``orders`` reported per group
    inactive: np.ndarray  # (H, nf + G) bool rows of the system fixed to zero (group idle at h)
    groups: tuple[GroupMeta, ...]
    temperature_c: float


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
    own: dict[str, set[int]] = {
        c.name: {0} if c.system == "dc" else {1, *(h for h, f in c.harmonics if f > 0)}
        for c in layout.circuits}
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
    ro = np.array([g.reactance_only for g in groups], dtype=bool)
    r_free = np.nan_to_num(resistance[free]) if free.size else np.zeros(0)
    r_ac = np.where(ro[gof], 0.0, r_free) if free.size else r_free
    r_dc = np.where(ro[gof], 1.0, r_free) if free.size else r_free
    row_of = {int(h): k for k, h in enumerate(orders)}
    report_row = np.array([row_of.get(g.order, 0) for g in groups], dtype=int)
    active = np.array([[int(h) in own[g.circuit] for g in groups] for h in orders],
                      dtype=bool).reshape(orders.size, g_count)
    inactive = ~np.concatenate([active[:, gof], active], axis=1)
    gmr, from_area = gmr_m(layout)
    return SharingPlan(
        orders=orders, omega=2.0 * np.pi * src.frequency_hz, base=src.currents, free=free,
        fixed=fixed, group_of_free=gof, starts=starts, totals=totals, r_ac=r_ac, r_dc=r_dc,
        gmr=gmr, gmr_from_area=from_area, resistance=resistance, report_row=report_row,
        inactive=inactive, groups=tuple(groups), temperature_c=float(temperature_c),
    )


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

    Notes
    -----
    For the free conductors f (parallel-group members, grouped by the incidence matrix E)
    and the fixed ones k, one batched solve over arrangements and components h of

        [ Z_ff   −E ] [ I_f ]   [ −Z_fk I_k ]
        [ Eᵀ      0 ] [ U   ] = [  I_group  ],   Z = R + jω (μ0/2π) (−Λ),

    Λ = ln distances (ln GMR on the diagonal). At ω = 0 only R remains.
    References: Grover, *Inductance Calculations*, 1946 (self and mutual per metre).
    """
    xy = np.asarray(xy_m, dtype=float)
    batch = xy.shape[:-2]
    h = plan.orders.size
    out = np.broadcast_to(plan.base, (*batch, *plan.base.shape)).copy()
    nf, g_count = plan.free.size, plan.starts.size
    if nf == 0:
        return out
    lam = log_distance_matrix(xy, plan.gmr)  # (..., n, n)
    x_ff = -K_LINE * lam[..., plan.free[:, None], plan.free[None, :]]
    x_fk = -K_LINE * lam[..., plan.free[:, None], plan.fixed[None, :]]
    n_sys = nf + g_count
    a = np.zeros((*batch, h, n_sys, n_sys), dtype=complex)
    a[..., :nf, :nf] = 1j * plan.omega[:, None, None] * x_ff[..., None, :, :]
    dc = plan.omega == 0.0
    diag = np.arange(nf)
    a[..., diag, diag] += np.where(dc[:, None], plan.r_dc[None, :], plan.r_ac[None, :])
    a[..., diag, nf + plan.group_of_free] = -1.0
    a[..., nf + plan.group_of_free, diag] = 1.0
    rhs = np.zeros((*batch, h, n_sys), dtype=complex)
    i_k = plan.base[:, plan.fixed]  # (H, nk)
    rhs[..., :nf] = -1j * plan.omega[:, None] * (i_k @ np.swapaxes(x_fk, -1, -2))
    rhs[..., nf:] = plan.totals
    hs, rows = np.nonzero(plan.inactive)  # idle rows: I = 0 (members), U = 0 (group)
    if hs.size:
        a[..., hs, rows, :] = 0.0
        a[..., hs, rows, rows] = 1.0
        rhs[..., hs, rows] = 0.0
    sol = np.linalg.solve(a, rhs[..., None])[..., 0]
    out[..., plan.free] = sol[..., :nf]
    return out


def group_imbalance_pct(plan: SharingPlan, currents: np.ndarray) -> np.ndarray:
    """(max |I| − min |I|) / mean |I| × 100 of each parallel group, (..., G) float.

    ``currents`` is (..., H, n) from :func:`solve_plan`. Evaluated at each group's reported
    component (fundamental; DC for dc circuits); 0 for a group carrying no current; NaN when
    the solve has no answer (coincident conductors).
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
    share_pct: float  # |I| / |I_group| × 100
    current_rms_a: float  # all components, root-sum-square


@dataclass(frozen=True)
class GroupFigure:
    """A parallel group: circuit, phase, members, group current and imbalance."""

    circuit: str
    phase: str
    conductors: tuple[str, ...]
    current_a: float  # |group current| at the reported component
    order: int
    imbalance_pct: float
    reactance_only: bool


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

    def overrides(self) -> dict[int, dict[str, complex]]:
        """Solved currents as :func:`trayadvisor.engine.currents.layout_sources` ``overrides``."""
        members = [s.conductor for s in self.shares]
        if not members:
            return {}
        idx = [self.names.index(n) for n in members]
        return {int(h): dict(zip(members, (complex(v) for v in self.currents[k, idx]),
                                 strict=True))
                for k, h in enumerate(self.orders)}


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

    Notes
    -----
    See the module notes and :func:`solve_plan`. Imbalance of a group:
    (max |I| − min |I|) / mean |I| × 100.

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946; IEC 60287-1-1 (R' at temperature).
    """
    plan = sharing_plan(layout, temperature_c)
    xy = np.array([[c.x_mm, c.y_mm] for c in layout.conductors], float).reshape(-1, 2) * MM
    cur = solve_plan(plan, xy)
    imb = group_imbalance_pct(plan, cur)
    cons = layout.conductors
    rss = np.sqrt(np.sum(np.abs(cur) ** 2, axis=0))
    shares: list[ConductorShare] = []
    groups: list[GroupFigure] = []
    for k, g in enumerate(plan.groups):
        row = plan.report_row[k]
        total = abs(plan.totals[row, k])
        for i in g.members:
            v = complex(cur[row, i])
            shares.append(ConductorShare(
                cons[i].name, g.circuit, g.phase, v, abs(v), float(np.angle(v, deg=True)),
                abs(v) / total * 100.0 if total > 0 else 0.0, float(rss[i])))
        groups.append(GroupFigure(g.circuit, g.phase, tuple(cons[i].name for i in g.members),
                                  float(total), g.order, float(imb[k]), g.reactance_only))
    overall = tuple(cons[i].name for i in plan.free if not plan.gmr_from_area[i])
    return SharingResult(
        names=tuple(c.name for c in cons), orders=plan.orders, currents=cur,
        shares=tuple(shares), groups=tuple(groups), temperature_c=plan.temperature_c,
        reactance_only=any(g.reactance_only for g in plan.groups), gmr_from_overall=overall,
    )


def sharing_overrides(
    layout: Layout, temperature_c: float = DEFAULT_TEMPERATURE_C,
) -> dict[int, dict[str, complex]]:
    """Solved currents of the parallel conductors, ``{order: {conductor name: phasor (A)}}``.

    The shape :func:`trayadvisor.engine.layout_sources` accepts as ``overrides``; empty when
    the layout has no parallel conductors.
    """
    return solve_sharing(layout, temperature_c).overrides()
