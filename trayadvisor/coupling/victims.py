"""Coupling ("crosstalk"): the EMF induced in victim signal loops by the power conductors.

Figures are RMS; mV/m and V at this boundary, SI inside.

Victim loops are the ``signal`` circuits: the loop between their ``a`` and ``b``
conductors (several conductors of one label share equally). The sources are every conductor
of a non-signal circuit. Optionally a *screen/earth loop* is reported: the pair taken as one
conductor at its centroid, returning through an earth reference plane at height
``earth_y_mm`` directly below (or above) it; the plane carries no induced current.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling.inductance import grover_mutual_finite
from trayadvisor.engine import Reaction, SourceArrays, layout_sources
from trayadvisor.engine.units import K_LINE, MM, MV
from trayadvisor.model import Layout


@dataclass(frozen=True)
class HarmonicPart:
    """One frequency component of a victim's EMF."""

    order: int
    frequency_hz: float
    induced_mV_per_m: float


@dataclass(frozen=True)
class VictimFigure:
    """EMF induced in one victim signal loop (RMS over all components)."""

    circuit: str
    induced_mV_per_m: float
    length_m: float | None
    induced_V: float | None  # over the run, finite-run formula; None without a length
    finite_length_factor: float | None  # finite-run per-metre EMF / infinite per-metre EMF
    harmonics: tuple[HarmonicPart, ...]
    earth_loop_mV_per_m: float | None = None
    earth_loop_V: float | None = None

    @property
    def name(self) -> str:
        return self.circuit


@dataclass(frozen=True)
class EmfPlan:
    """Position-independent part of the victim EMF: who is a victim, which are sources."""

    victims: tuple[str, ...]
    lengths: tuple[float | None, ...]
    points: np.ndarray  # (p,) int conductor indices of victim conductors
    weights: np.ndarray  # (V, p) float, +1/n_a on a, −1/n_b on b
    centroid: np.ndarray  # (V, p) float, 1/n over the victim's conductors
    source: np.ndarray  # (s,) int conductor indices of power conductors


def emf_plan(layout: Layout, length_m: float | None = None) -> EmfPlan:
    """Victims (signal circuits with an ``a`` and a ``b``) and the power conductors.

    A victim's run length is its circuit's ``length_m``, else ``length_m`` given here.
    """
    cons = layout.conductors
    systems = {c.name: c.system for c in layout.circuits}
    victims: list[str] = []
    lengths: list[float | None] = []
    rows: list[tuple[list[int], list[int]]] = []
    for circ in layout.circuits:
        if circ.system != "signal":
            continue
        a = [i for i, c in enumerate(cons) if c.circuit == circ.name and c.phase == "a"]
        b = [i for i, c in enumerate(cons) if c.circuit == circ.name and c.phase == "b"]
        if a and b:
            victims.append(circ.name)
            lengths.append(circ.length_m if circ.length_m is not None else length_m)
            rows.append((a, b))
    points = np.array([i for a, b in rows for i in a + b], dtype=int)
    w = np.zeros((len(rows), points.size))
    cen = np.zeros_like(w)
    col = 0
    for v, (a, b) in enumerate(rows):
        na, nb = len(a), len(b)
        w[v, col:col + na] = 1.0 / na
        w[v, col + na:col + na + nb] = -1.0 / nb
        cen[v, col:col + na + nb] = 1.0 / (na + nb)
        col += na + nb
    source = np.array([i for i, c in enumerate(cons)
                       if systems.get(c.circuit, "signal") != "signal"], dtype=int)
    return EmfPlan(tuple(victims), tuple(lengths), points, w, cen, source)


def vector_potential_kernel(src_xy_m: np.ndarray, pts_m: np.ndarray) -> np.ndarray:
    """A_z per ampere of each source line at each point, (..., p, s) float, T·m/A.

    ``src_xy_m`` is (..., s, 2), ``pts_m`` (..., p, 2); leading axes broadcast.

    Notes
    -----
    A_z = −(μ0/2π) ln r, defined up to a constant that cancels in every difference used
    here. References: Jackson, *Classical Electrodynamics*, 3rd ed., §5.4 (line current).
    """
    dx = pts_m[..., :, None, 0] - src_xy_m[..., None, :, 0]
    dy = pts_m[..., :, None, 1] - src_xy_m[..., None, :, 1]
    return -0.5 * K_LINE * np.log(dx * dx + dy * dy)


def emf_phasors(plan: EmfPlan, xy_m: np.ndarray, currents: np.ndarray, omega: np.ndarray,
                earth_y_m: float | None = None, reaction: Reaction | None = None
                ) -> tuple[np.ndarray, np.ndarray | None]:
    """Per-metre EMF phasor of each victim loop at each component.

    Parameters
    ----------
    plan : EmfPlan
    xy_m : (..., n, 2) float
        Conductor centres, m; leading axes are a batch of arrangements.
    currents : (..., H, n) complex
        RMS current phasors, A (broadcast against the batch).
    omega : (H,) float
        Angular frequency of each component, rad/s.
    earth_y_m : float, optional
        Height of the earth reference plane, m.
    reaction : Reaction, optional
        Plates nearby (:mod:`trayadvisor.fem`): their reaction potential is added.

    Returns
    -------
    emf : (..., H, V) complex
        E_h = jω_h (A_a − A_b), V/m.
    earth : (..., H, V) complex or None
        E_h = jω_h (A(centroid) − A(centroid projected onto the earth plane)), V/m.

    Notes
    -----
    A_z = −(μ0/2π) Σ_s I_s ln r_s; the difference of A_z between the two sides of a loop is
    its flux linkage per metre, reference-free. References: Grover, *Inductance
    Calculations*, 1946 (mutual inductance of parallel wires).
    """
    src_xy = xy_m[..., plan.source, :]
    pts = xy_m[..., plan.points, :]
    i_s = currents[..., plan.source]  # (..., H, s)
    kern = vector_potential_kernel(src_xy, pts)  # (..., p, s)
    a = i_s @ np.swapaxes(kern, -1, -2)  # (..., H, p)
    freqs = omega / (2.0 * np.pi)
    if reaction is not None:
        a = a + _plate_potential(reaction, src_xy, i_s, freqs, pts)
    jw = 1j * omega[:, None]
    emf = jw * (a @ plan.weights.T)
    if earth_y_m is None:
        return emf, None
    cen = plan.centroid @ pts  # (..., V, 2)
    foot = np.stack([cen[..., 0], np.full(cen.shape[:-1], earth_y_m)], axis=-1)
    k_c = vector_potential_kernel(src_xy, cen)
    k_f = vector_potential_kernel(src_xy, foot)
    diff = i_s @ np.swapaxes(k_c - k_f, -1, -2)
    if reaction is not None:
        diff = diff + (_plate_potential(reaction, src_xy, i_s, freqs, cen)
                       - _plate_potential(reaction, src_xy, i_s, freqs, foot))
    return emf, jw * diff


def _plate_potential(reaction: Reaction, src_xy: np.ndarray, i_s: np.ndarray,
                     freqs: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """(..., H, p) the plates' reaction potential of the currents at the points."""
    batch = pts.shape[:-2]
    sx = np.broadcast_to(src_xy, (*batch, *src_xy.shape[-2:])).reshape(-1, *src_xy.shape[-2:])
    cur = np.broadcast_to(i_s, (*batch, *i_s.shape[-2:])).reshape(-1, *i_s.shape[-2:])
    flat = pts.reshape(-1, *pts.shape[-2:])
    out = [np.einsum("hps,hs->hp", reaction.potentials(s, freqs, p), c)
           for s, c, p in zip(sx, cur, flat, strict=True)]
    return np.stack(out).reshape(*batch, freqs.size, pts.shape[-2])


def finite_run_emf(plan: EmfPlan, xy_m: np.ndarray, currents: np.ndarray,
                   omega: np.ndarray, length_m: float, reaction: Reaction | None = None
                   ) -> np.ndarray:
    """|EMF| per metre of run of every victim over a run of ``length_m``, (H, V) V/m.

    Notes
    -----
    Each source–victim line pair is coupled by Grover's partial mutual inductance of two
    parallel filaments of length l, M(l, d) / l per metre, instead of (μ0/2π) ln(1/d).
    Plates (``reaction``) add their per-metre reaction unchanged: their own end effects
    are not modelled. References: Grover, *Inductance Calculations*, 1946.
    """
    pts = xy_m[plan.points]
    src = xy_m[plan.source]
    d = np.hypot(pts[:, None, 0] - src[None, :, 0], pts[:, None, 1] - src[None, :, 1])
    g = grover_mutual_finite(length_m, d) / length_m  # (p, s) H/m
    psi = currents[:, plan.source] @ g.T  # (H, p)
    if reaction is not None:
        psi = psi + _plate_potential(reaction, src, currents[:, plan.source],
                                     omega / (2.0 * np.pi), pts)
    return np.abs(omega[:, None] * (psi @ plan.weights.T))


def induced_emf(layout: Layout, length_m: float | None = None,
                src: SourceArrays | None = None,
                earth_y_mm: float | None = None) -> list[VictimFigure]:
    """EMF induced in every victim signal loop, per metre and over its run.

    Parameters
    ----------
    layout : Layout
    length_m : float, optional
        Run length for victims whose circuit gives no ``length_m``.
    src : SourceArrays, optional
        The currents (e.g. :func:`~trayadvisor.coupling.sharing.solved_sources`); equal
        shares when not given.
    earth_y_mm : float, optional
        Earth reference height, mm; defaults to the layout's ``earth_y_mm`` key when present.
        Adds the screen/earth loop figures.

    Returns
    -------
    list of VictimFigure, in layout order of the signal circuits.

    Notes
    -----
    Per component h: E_h = jω_h (A_a − A_b), |E| = sqrt(Σ_h |E_h|²) (DC adds nothing).
    Over a run of length l each source–victim line pair is coupled by Grover's partial
    mutual inductance M(l, d) instead of l·(μ0/2π) ln(1/d); the transverse end pieces of the
    loops are left out. ``finite_length_factor`` = finite-run EMF / (per-metre EMF × l),
    → 1 for runs long compared with the spacings; ``induced_V`` uses the finite-run value.

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946 (parallel filaments, finite and infinite).
    """
    plan = emf_plan(layout, length_m)
    if not plan.victims:
        return []
    if earth_y_mm is None:
        earth_y_mm = layout.earth_y_mm
    src = src if src is not None else layout_sources(layout)
    omega = 2.0 * np.pi * src.frequency_hz
    xy = src.xy_m
    earth_m = None if earth_y_mm is None else float(earth_y_mm) * MM
    emf, earth = emf_phasors(plan, xy, src.currents, omega, earth_m, src.reaction)
    mag = np.abs(emf)  # (H, V)
    total = np.sqrt(np.sum(mag**2, axis=0))
    e_tot = None if earth is None else np.sqrt(np.sum(np.abs(earth) ** 2, axis=0))
    fin_tot: dict[float, np.ndarray] = {}  # one kernel per distinct run length
    for length in {float(x) for x in plan.lengths if x is not None}:
        fin = finite_run_emf(plan, xy, src.currents, omega, length, src.reaction)
        fin_tot[length] = np.sqrt(np.sum(fin**2, axis=0))
    out: list[VictimFigure] = []
    ac = src.orders > 0
    for v, name in enumerate(plan.victims):
        length = plan.lengths[v]
        factor = volts = earth_v = None
        if length is not None:
            f_v = float(fin_tot[float(length)][v])
            factor = f_v / total[v] if total[v] > 0 else 1.0
            volts = f_v * length
            if e_tot is not None:
                earth_v = float(e_tot[v]) * length
        parts = tuple(HarmonicPart(int(h), float(f), float(m * MV)) for h, f, m in
                      zip(src.orders[ac], src.frequency_hz[ac], mag[ac, v], strict=True))
        out.append(VictimFigure(
            circuit=name, induced_mV_per_m=float(total[v] * MV), length_m=length,
            induced_V=volts, finite_length_factor=factor, harmonics=parts,
            earth_loop_mV_per_m=None if e_tot is None else float(e_tot[v] * MV),
            earth_loop_V=earth_v))
    return out
