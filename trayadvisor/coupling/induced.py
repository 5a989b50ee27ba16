"""Induced currents: cable screens and passive loops, their losses and standing voltages.

Screens bonded at both ends and passive loops are groups of the impedance system
(:mod:`trayadvisor.coupling.system`); their currents come out of the same solve as the
parallel conductors'. Here they become figures:

- a screen's current (fundamental, and RMS over all components), its loss
  Σ_h R_s |I_s,h|² per metre, and the loss factor λ1 = screen loss / core loss
  (IEC 60287-1-1 §2.3; None when the core has no ``area_mm2``);
- a screen bonded at one point carries no current; its **standing voltage** per metre is
  the EMF the currents induce along it, E_h = jω_h (μ0/2π) Σ_j I_j,h ln(1/d_j) with d the
  distance to each cable's centre and the screen's mean radius for its own core (RMS over
  the components). When the currents of a frequency component do not sum to zero the EMF
  depends on the reference of the logarithm (1 m here), as any voltage without an earth
  return would;
- a passive loop's current (the sum over its ``a`` conductors) and its loss.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling.resistance import ac_resistance_per_m
from trayadvisor.coupling.system import SharingPlan
from trayadvisor.engine.units import K_LINE
from trayadvisor.model import Layout


@dataclass(frozen=True)
class ScreenFigure:
    """The screen of one cable: bonding, current, loss, loss factor, standing voltage."""

    conductor: str
    circuit: str
    bonding: str  # "both-ends" or "single-point"
    current_a: float  # |I| at the fundamental
    angle_deg: float
    current_rms_a: float  # every component, root-sum-square
    loss_w_per_m: float
    core_loss_w_per_m: float | None  # None without the core's area
    loss_factor: float | None  # λ1 = screen loss / core loss
    standing_v_per_m: float  # single-point: RMS EMF along the screen; both ends: 0

    def to_json(self) -> dict:
        return {"conductor": self.conductor, "circuit": self.circuit, "bonding": self.bonding,
                "current_a": self.current_a, "angle_deg": self.angle_deg,
                "current_rms_a": self.current_rms_a, "loss_w_per_m": self.loss_w_per_m,
                "core_loss_w_per_m": self.core_loss_w_per_m, "loss_factor": self.loss_factor,
                "standing_v_per_m": self.standing_v_per_m}


@dataclass(frozen=True)
class PassiveFigure:
    """A passive loop: its current (out on ``a``, back on ``b``) and its loss."""

    circuit: str
    conductors: tuple[str, ...]
    current_a: float  # |Σ I_a| at the fundamental
    angle_deg: float
    current_rms_a: float
    loss_w_per_m: float

    def to_json(self) -> dict:
        return {"circuit": self.circuit, "conductors": list(self.conductors),
                "current_a": self.current_a, "angle_deg": self.angle_deg,
                "current_rms_a": self.current_rms_a, "loss_w_per_m": self.loss_w_per_m}


def _fundamental_row(orders: np.ndarray) -> int:
    hit = np.flatnonzero(np.asarray(orders) == 1)
    return int(hit[0]) if hit.size else 0


def _angle(v: complex) -> float:
    return float(np.angle(v, deg=True)) if abs(v) > 1e-12 else 0.0


def _resistance_rows(plan: SharingPlan, r_dc: np.ndarray) -> np.ndarray:
    """(H, k) R' at each component: the skin effect on AC rows, R_dc at DC."""
    f = plan.sources.frequency_hz[:, None]
    safe = np.where(np.isfinite(r_dc), r_dc, 0.0)
    r = np.where(f == 0.0, safe[None, :], ac_resistance_per_m(safe, f))
    return np.where(np.isfinite(r_dc)[None, :], r, np.nan)


def standing_emf(plan: SharingPlan, xy_m: np.ndarray, net: np.ndarray,
                 screen: int) -> np.ndarray:
    """(H,) complex EMF per metre along screen number ``screen`` (no current in it)."""
    sc = plan.screens
    assert sc is not None
    core = int(sc.core[screen])
    d = np.hypot(*(np.asarray(xy_m) - np.asarray(xy_m)[core]).T)
    d[core] = sc.radius_m[screen]
    lam = np.log(d)  # (n,)
    psi = net @ -(K_LINE * lam)  # (H,)
    reaction = plan.sources.reaction
    if reaction is not None:  # the plates' reaction potential at the screen (its core)
        xy = np.asarray(xy_m, dtype=float)
        pot = reaction.potentials(xy, plan.sources.frequency_hz, xy[core:core + 1])
        psi = psi + np.einsum("hn,hn->h", pot[:, 0, :], net)
    return 1j * plan.omega * psi


def induced_figures(layout: Layout, plan: SharingPlan, xy_m: np.ndarray, cores: np.ndarray,
                    screens: np.ndarray, net: np.ndarray
                    ) -> tuple[tuple[ScreenFigure, ...], tuple[PassiveFigure, ...]]:
    """Screen and passive-loop figures of one arrangement (see the module notes).

    ``cores`` (H, n), ``screens`` (H, s) and ``net`` (H, n) are the solve's currents at the
    centres ``xy_m`` (n, 2).
    """
    cons = layout.conductors
    row = _fundamental_row(plan.orders)
    sc = plan.screens
    out_s: list[ScreenFigure] = []
    if sc is not None and sc.core.size:
        r_core = _resistance_rows(plan, plan.resistance[sc.core])
        system_no = {int(s): k for k, s in enumerate(sc.in_system)}
        for s, core in enumerate(sc.core):
            c = cons[int(core)]
            core_loss = float(np.sum(r_core[:, s] * np.abs(cores[:, core]) ** 2))
            core_loss_v = core_loss if np.isfinite(core_loss) else None
            if sc.both_ends[s]:
                i_s = screens[:, system_no[s]]
                loss = float(np.sum(sc.r_dc[s] * np.abs(i_s) ** 2))
                emf = 0.0
            else:
                i_s = np.zeros(plan.orders.size, dtype=complex)
                loss = 0.0
                emf = float(np.sqrt(np.sum(np.abs(standing_emf(plan, xy_m, net, s)) ** 2)))
            factor = (loss / core_loss) if core_loss_v and core_loss > 0 else None
            out_s.append(ScreenFigure(
                c.name, c.circuit, "both-ends" if sc.both_ends[s] else "single-point",
                float(abs(i_s[row])), _angle(complex(i_s[row])),
                float(np.sqrt(np.sum(np.abs(i_s) ** 2))), loss, core_loss_v, factor, emf))
    out_p: list[PassiveFigure] = []
    for g in plan.groups:
        if g.kind != "loop":
            continue
        idx = np.array(g.members, dtype=int)
        r = _resistance_rows(plan, plan.resistance[idx])
        loss = float(np.nansum(r * np.abs(cores[:, idx]) ** 2))
        go = [i for i in idx if cons[i].phase == "a"] or [int(idx[0])]
        loop = cores[:, go].sum(axis=1)
        out_p.append(PassiveFigure(g.circuit, tuple(cons[i].name for i in idx),
                                   float(abs(loop[row])), _angle(complex(loop[row])),
                                   float(np.sqrt(np.sum(np.abs(loop) ** 2))), loss))
    return tuple(out_s), tuple(out_p)


def induced_loss_w_per_m(plan: SharingPlan, cores: np.ndarray, screens: np.ndarray
                         ) -> np.ndarray:
    """Total loss in the screens bonded at both ends and the passive loops, W/m, (...,) for
    a batch of solutions ``cores`` (..., H, n) and ``screens`` (..., H, s)."""
    total = np.zeros(cores.shape[:-2])
    sc = plan.screens
    if sc is not None and sc.in_system.size:
        r = sc.r_dc[sc.in_system]
        total = total + np.einsum("...hk,k->...", np.abs(screens) ** 2, r)
    for g in plan.groups:
        if g.kind == "loop":
            idx = np.array(g.members, dtype=int)
            r = np.nan_to_num(_resistance_rows(plan, plan.resistance[idx]))
            total = total + np.einsum("...hk,hk->...", np.abs(cores[..., idx]) ** 2, r)
    return total
