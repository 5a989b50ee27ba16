"""The impedance system of all conductors: parallel groups, cable screens and passive loops.

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

Induced currents are more groups of the same system, with a total of zero:

- **Screens bonded at both ends.** A cable's metallic screen is a thin tube around its core:
  an extra conductor at the core's centre whose self term is ln(1/r_s) (r_s its mean radius,
  the GMR of a thin tube) and whose mutual term with its own core is ln(1/r_s) too (every
  line inside a tube sees it at its radius); with every other conductor the distance
  between centres. R_s = ρ(T)/A_s, no skin effect. The screens of one circuit are bonded
  together at both ends: one voltage drop, currents summing to zero (no earth return).
- **Screens bonded at one point** carry no current; their standing voltage per metre is the
  EMF the currents induce along them (:mod:`trayadvisor.coupling.induced`).
- **Passive loops** (``system = "loop"``): all conductors joined at both ends — one voltage
  drop, currents summing to zero — each with its R′ and skin effect.

The field sees each cable's net current, core plus screen (coaxial: outside the cable they
act as one line current); the sharing figures see the cores.

**Plates** (steel and aluminium, :mod:`trayadvisor.fem`): their eddy currents and
magnetisation add the reaction potential P_ij(f) at conductor i of 1 A in conductor j, so
Z_ij += jω P_ij — more inductance near steel, and the plates' eddy-current loss as
resistance (Re jωP > 0). A screen sits at its core's centre, where P is the core's.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.coupling.inductance import gmr_m, log_distance_matrix
from trayadvisor.coupling.resistance import ac_resistance_per_m, resistance_per_m
from trayadvisor.engine import SourceArrays, layout_sources
from trayadvisor.engine.units import K_LINE, MM
from trayadvisor.fem import layout_reaction
from trayadvisor.model import MATERIALS, Layout

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
    members: tuple[int, ...]  # conductor indices (layout order); screens: n + screen number
    order: int  # frequency component reported: 1, or 0 for dc circuits
    reactance_only: bool
    kind: str = "parallel"  # "parallel", "screens" (bonded at both ends) or "loop"


@dataclass(frozen=True)
class Screens:
    """The cable screens of a layout: which core, bonding, mean radius and R'."""

    core: np.ndarray  # (s,) int conductor index of each screened cable
    both_ends: np.ndarray  # (s,) bool bonded at both ends (in the system), else one point
    radius_m: np.ndarray  # (s,) mean radius of the screen, m
    r_dc: np.ndarray  # (s,) Ω/m at the temperature

    @property
    def in_system(self) -> np.ndarray:
        """Screen numbers bonded at both ends, in the order of their system indices."""
        return np.flatnonzero(self.both_ends)


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
    n: int = 0  # conductors of the layout; system indices n, n+1, ... are screens
    screens: Screens | None = None  # every screened cable (both bondings)
    lam_fix: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None  # (core, screen idx, ln r)

    @property
    def induced(self) -> bool:
        """True when the layout has screens or passive loops (induced currents)."""
        return (self.screens is not None and self.screens.core.size > 0) or any(
            g.kind == "loop" for g in self.groups)


def _screens(layout: Layout, temperature_c: float) -> Screens:
    """Every screened cable with its bonding, mean radius and R' at the temperature."""
    cons = layout.conductors
    bonding = {c.name: c.screen_bonding for c in layout.circuits}
    core = np.array([i for i, c in enumerate(cons) if c.screened], dtype=int)
    both = np.array([bonding.get(cons[i].circuit) == "both-ends" for i in core], dtype=bool)
    radius = np.array([0.5 * float(cons[i].screen_diameter_mm or 0.0) for i in core]) * MM
    # A screen (wires or tape) is not a stranded conductor of the IEC 60228 table: its R' is
    # ρ(θ)/A_s with the IEC 60287-1-1 Table 1 resistivity and temperature coefficient.
    rho = np.array([MATERIALS[cons[i].screen_material or DEFAULT_MATERIAL][0] for i in core])
    alpha = np.array([MATERIALS[cons[i].screen_material or DEFAULT_MATERIAL][1] for i in core])
    area = np.array([float(cons[i].screen_area_mm2 or 0.0) for i in core]) * MM * MM
    r_dc = rho * (1.0 + alpha * (float(temperature_c) - 20.0)) / np.where(area > 0, area, 1.0)
    return Screens(core, both.reshape(-1), radius.reshape(-1),
                   np.asarray(r_dc, float).reshape(-1))


def plate_sources(layout: Layout) -> SourceArrays:
    """:func:`~trayadvisor.engine.layout_sources` with the layout's plates attached (the
    field of every figure then includes their reaction)."""
    src = layout_sources(layout)
    reaction = layout_reaction(layout)
    return src if reaction is None else replace(src, reaction=reaction)


def sharing_plan(layout: Layout, temperature_c: float = DEFAULT_TEMPERATURE_C) -> SharingPlan:
    """Precompute the position-independent part of :func:`solve_sharing`."""
    cons = layout.conductors
    n = len(cons)
    src = plate_sources(layout)
    systems = {c.name: c.system for c in layout.circuits}
    members: dict[tuple[str, str], list[int]] = {}
    loops: dict[str, list[int]] = {}
    for i, c in enumerate(cons):
        if systems.get(c.circuit) == "loop":
            loops.setdefault(c.circuit, []).append(i)
            continue
        if systems.get(c.circuit) in (None, "signal") or c.phase == "PE" \
                or c.current_a is not None:
            continue
        members.setdefault((c.circuit, c.phase), []).append(i)
    area = np.array([c.area_mm2 if c.area_mm2 is not None else np.nan for c in cons], float)
    has_area = np.isfinite(area)
    resistance = np.full(n, np.nan)
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
    screens = _screens(layout, temperature_c)
    on = screens.in_system
    by_circuit: dict[str, list[int]] = {}
    for k, s in enumerate(on):
        by_circuit.setdefault(cons[int(screens.core[s])].circuit, []).append(n + k)
    for circ, idx in by_circuit.items():
        groups.append(GroupMeta(circ, "screen", tuple(idx), 1, False, "screens"))
    for circ, idx in loops.items():
        if len(idx) >= 2:
            groups.append(GroupMeta(circ, "loop", tuple(idx), 1,
                                    not bool(has_area[idx].all()), "loop"))
    free = np.array([i for g in groups for i in g.members], dtype=int)
    gof = np.array([k for k, g in enumerate(groups) for _ in g.members], dtype=int)
    sizes = np.array([len(g.members) for g in groups], dtype=int)
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]]).astype(int) if groups else \
        np.zeros(0, int)
    fixed = np.setdiff1d(np.arange(n), free)
    g_count = len(groups)
    base_ext = np.concatenate([src.currents, np.zeros((orders.size, on.size))], axis=1)
    totals = np.zeros((orders.size, g_count), dtype=complex)
    np.add.at(totals, (slice(None), gof), base_ext[:, free])
    real = free < n
    ro = np.zeros(free.size, bool)
    if free.size:
        ro[real] = np.array([g.reactance_only for g in groups], dtype=bool)[gof[real]]
    r_dc = np.zeros(free.size)
    r_dc[real] = np.nan_to_num(resistance[free[real]])
    r_dc[~real] = screens.r_dc[on[free[~real] - n]]
    freq = src.frequency_hz[:, None]
    r_ac = np.where(ro, 0.0, ac_resistance_per_m(np.where(ro, 1.0, r_dc), freq))
    r_ac = np.where(real[None, :], r_ac, r_dc[None, :])  # screens: no skin effect
    r_free = np.where(freq == 0.0, np.where(ro, 1.0, r_dc), r_ac).reshape(orders.size, -1)
    row_of = {int(h): k for k, h in enumerate(orders)}
    report_row = np.array([row_of.get(g.order, 0) for g in groups], dtype=int)
    gmr, from_area = gmr_m(layout)
    gmr_ext = np.concatenate([gmr, screens.radius_m[on]])
    lam_fix = (screens.core[on].astype(int), n + np.arange(on.size),
               np.log(np.maximum(screens.radius_m[on], 1e-12)))
    scale = float(np.abs(src.currents).max()) if src.currents.size else 0.0
    return SharingPlan(
        orders=orders, omega=2.0 * np.pi * src.frequency_hz, base=src.currents, free=free,
        fixed=fixed, group_of_free=gof, starts=starts, totals=totals, r_free=r_free,
        gmr=gmr_ext, gmr_from_area=from_area, resistance=resistance, report_row=report_row,
        scale_a=scale, groups=tuple(groups), names=tuple(c.name for c in cons),
        temperature_c=float(temperature_c), sources=src, n=n, screens=screens,
        lam_fix=lam_fix if on.size else None,
    )


def _coincident(plan: SharingPlan, xy: np.ndarray) -> str:
    """A message naming two coinciding conductors of which one is solved, or ""."""
    for i in plan.free[plan.free < plan.n]:
        d = np.hypot(*(xy[:, :] - xy[i]).T)
        d[i] = np.inf
        j = int(np.argmin(d))
        if d[j] < 1e-9:
            return (f"conductors '{plan.names[i]}' and '{plan.names[j]}' lie at the same "
                    "place, so the current sharing has no solution; move one of them")
    return ""


def solve_parts(plan: SharingPlan, xy_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solved currents of every conductor (cores) and of every screen bonded at both ends.

    Parameters
    ----------
    plan : SharingPlan
    xy_m : (..., n, 2) float
        Conductor centres, m (layout order); leading axes are a batch of arrangements.

    Returns
    -------
    cores : (..., H, n) complex
        RMS phasors, A: ``plan.base`` with the parallel-group and loop members replaced.
    screens : (..., H, s) complex
        Currents of the screens bonded at both ends, in ``plan.screens.in_system`` order.

    Raises
    ------
    SharingError
        When the system has no solution (two conductors at one place), naming them.

    Notes
    -----
    For the free conductors f (group members, grouped by the incidence matrix E; screens at
    their core's centre) and the fixed ones k, one batched solve over arrangements and
    components h of

        [ Z_ff   −E ] [ I_f ]   [ −Z_fk I_k ]
        [ Eᵀ      0 ] [ U   ] = [  I_group  ],   Z = R(f_h) + jω_h (μ0/2π) (−Λ),

    Λ = ln distances (ln GMR on the diagonal; ln r_s between a screen and its core). At
    ω = 0 only R remains. References: Grover, *Inductance Calculations*, 1946 (self and
    mutual per metre); IEC 60287-1-1 §2.3 (a screen's mutual with its core at the screen's
    mean radius).
    """
    xy = np.asarray(xy_m, dtype=float)
    batch = xy.shape[:-2]
    out = np.broadcast_to(plan.base, (*batch, *plan.base.shape)).copy()
    n_s = 0 if plan.lam_fix is None else plan.lam_fix[0].size
    scr = np.zeros((*batch, plan.orders.size, n_s), dtype=complex)
    if plan.free.size == 0:
        return out, scr
    with np.errstate(all="ignore"):  # coinciding conductors: an error below
        sol = _solve_free(plan, xy)
    if not np.all(np.isfinite(sol)):
        where = xy.reshape(-1, *xy.shape[-2:])[0] if batch else xy
        raise SharingError(_coincident(plan, where) or "the current sharing of the "
                           "parallel conductors has no solution; check their places and "
                           "sizes")
    real = plan.free < plan.n
    out[..., plan.free[real]] = sol[..., real]
    scr[..., plan.free[~real] - plan.n] = sol[..., ~real]
    return out, scr


def net_currents(plan: SharingPlan, cores: np.ndarray, screens: np.ndarray) -> np.ndarray:
    """Each cable's net current, core plus its screen (what the field outside sees)."""
    if plan.lam_fix is None:
        return cores
    net = cores.copy()
    np.add.at(net, (..., plan.lam_fix[0]), screens)
    return net


def solve_plan(plan: SharingPlan, xy_m: np.ndarray) -> np.ndarray:
    """Solved net currents of every conductor at every component (core plus screen), for
    conductor centres ``xy_m`` (..., n, 2): the currents the field and the victims see.
    See :func:`solve_parts`."""
    cores, screens = solve_parts(plan, xy_m)
    return net_currents(plan, cores, screens)


def _solve_free(plan: SharingPlan, xy: np.ndarray) -> np.ndarray:
    """The bordered system of :func:`solve_plan`: currents of the free conductors, NaN when
    it has no solution."""
    batch = xy.shape[:-2]
    h = plan.orders.size
    nf, g_count = plan.free.size, plan.starts.size
    if plan.lam_fix is not None:  # screens at their cores' centres
        core, idx, ln_r = plan.lam_fix
        xy = np.concatenate([xy, xy[..., core, :]], axis=-2)
    lam = log_distance_matrix(xy, plan.gmr)  # (..., n + s, n + s)
    if plan.lam_fix is not None:
        lam[..., core, idx] = ln_r
        lam[..., idx, core] = ln_r
    # inductance per metre (..., H, n + s, n + s): free space, plus the plates' reaction
    ind = np.broadcast_to(-K_LINE * lam[..., None, :, :], (*batch, h, *lam.shape[-2:]))
    reaction = plan.sources.reaction
    if reaction is not None:
        flat = xy.reshape(-1, *xy.shape[-2:])
        extra = np.stack([reaction.potentials(one, plan.sources.frequency_hz)
                          for one in flat]).reshape(*batch, h, *lam.shape[-2:])
        ind = ind + extra
    x_ff = ind[..., plan.free[:, None], plan.free[None, :]]
    x_fk = ind[..., plan.free[:, None], plan.fixed[None, :]]
    n_sys = nf + g_count
    a = np.zeros((*batch, h, n_sys, n_sys), dtype=complex)
    a[..., :nf, :nf] = 1j * plan.omega[:, None, None] * x_ff
    diag = np.arange(nf)
    a[..., diag, diag] += plan.r_free
    a[..., diag, nf + plan.group_of_free] = -1.0
    a[..., nf + plan.group_of_free, diag] = 1.0
    rhs = np.zeros((*batch, h, n_sys), dtype=complex)
    i_k = plan.base[:, plan.fixed]  # (H, nk)
    rhs[..., :nf] = -1j * plan.omega[:, None] * np.einsum("...hfk,hk->...hf", x_fk, i_k)
    rhs[..., nf:] = plan.totals
    try:
        return np.linalg.solve(a, rhs[..., None])[..., :nf, 0]
    except np.linalg.LinAlgError:
        return np.full((*batch, h, nf), np.nan, dtype=complex)


def group_imbalance_pct(plan: SharingPlan, currents: np.ndarray) -> np.ndarray:
    """(max |I| − min |I|) / mean |I| × 100 of each parallel group, (..., G) float.

    ``currents`` is (..., H, n), the cores of :func:`solve_parts`. Only parallel groups
    (not screens or loops) have an imbalance; the others get NaN. Evaluated at each group's
    reported component (fundamental; DC for dc circuits); 0 for a group carrying no current
    and for rounding noise; NaN for a group whose total is zero (it only carries a
    circulating current: an imbalance of a zero total means nothing).
    """
    if plan.free.size == 0:
        return np.zeros((*currents.shape[:-2], 0))
    idx = np.where(plan.free < plan.n, plan.free, 0)  # screens: masked out below
    mag = np.abs(currents[..., plan.report_row[plan.group_of_free], idx])
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
    parallel = np.array([g.kind == "parallel" for g in plan.groups], dtype=bool)
    return np.where(np.isfinite(mean) & parallel, out, np.nan)


