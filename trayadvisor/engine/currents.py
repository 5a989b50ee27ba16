"""From a layout to the current sources an engine sees: positions, radii and phasors.

Every engine (field, contour, ranking, coupling) takes its currents from
:func:`layout_sources`, so the phase conventions (docs/conventions.md) live in exactly one
place:

- L1 = 0°, L2 = −120°, L3 = +120°; ac1 L = 0°, N returns the L current; dc + = +I, − = −I
  (a real current, frequency component 0); PE and signal conductors carry 0 A unless given an
  explicit current.
- Harmonic h of a phase at angle φ has angle h·φ; a neutral carries the return of the phase
  conductors' sum at every harmonic (balanced ac3: only the triplens, 3 × the phase's current).
- A circuit's phase current is shared equally by its conductors of that phase unless a
  conductor gives ``current_a`` (an explicit fundamental, angle from ``angle_deg`` or the
  phase). Solved sharing between parallel conductors replaces the equal shares afterwards
  (:func:`trayadvisor.coupling.carried_sources`).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from typing import Protocol

import numpy as np

from trayadvisor.engine.field import phasor_field, unit_field
from trayadvisor.engine.units import MM
from trayadvisor.model import PHASE_ANGLE_DEG, Layout


class Reaction(Protocol):
    """What material near the conductors adds to their free-space field (the plates of
    :mod:`trayadvisor.fem`). Arrays in SI units; ``frequency_hz`` (H,) per current row."""

    def field(self, xy_m: np.ndarray, currents: np.ndarray, frequency_hz: np.ndarray,
              pts_m: np.ndarray) -> np.ndarray:
        """(H, m, 2) complex field added at the points by the currents (H, n)."""
        ...

    def inside(self, pts_m: np.ndarray) -> np.ndarray:
        """(m,) bool: the points that lie inside the material (no field figure there)."""
        ...

    def unit_fields(self, xy_m: np.ndarray, frequency_hz: np.ndarray, pts_m: np.ndarray
                    ) -> np.ndarray:
        """(H, n, m, 2) complex field added per ampere of each conductor."""
        ...

    def potentials(self, xy_m: np.ndarray, frequency_hz: np.ndarray,
                   pts_m: np.ndarray | None = None) -> np.ndarray:
        """(H, p, n) complex vector potential added at point i (default: the conductors,
        symmetrised) per ampere in conductor j, V·s/m."""
        ...


def unit_fields(xy_m: np.ndarray, radius_m: np.ndarray, pts_m: np.ndarray,
                reaction: Reaction | None = None, frequency_hz: np.ndarray | None = None
                ) -> np.ndarray:
    """Field per ampere of each conductor at each point: (n, m, 2) real in free space
    (:func:`~trayadvisor.engine.unit_field`), (H, n, m, 2) complex with a reaction (one table
    per frequency component: plates make the field frequency-dependent)."""
    g = unit_field(xy_m, radius_m, pts_m)
    if reaction is None:
        return g
    if frequency_hz is None:
        raise ValueError("a reaction needs the frequency of every current row")
    return g[None] + reaction.unit_fields(xy_m, frequency_hz, pts_m)


def total_field(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray,
                pts_m: np.ndarray, reaction: Reaction | None = None,
                frequency_hz: np.ndarray | None = None) -> np.ndarray:
    """(H, m, 2) phasor field: free space (:func:`~trayadvisor.engine.phasor_field`) plus
    the reaction of material nearby, when there is one."""
    b = phasor_field(src_xy, radius, currents, pts_m)
    if reaction is not None:
        if frequency_hz is None:
            raise ValueError("a reaction needs the frequency of every current row")
        b = b + reaction.field(src_xy, currents, frequency_hz, pts_m)
    return b


@dataclass(frozen=True)
class SourceArrays:
    """Conductor geometry and RMS current phasors in SI units.

    Attributes
    ----------
    xy_m : (n, 2) float
        Conductor centres, metres.
    radius_m : (n,) float
        Conductor outer radii, metres (current assumed uniform over this disc).
    orders : (H,) int
        Frequency component of each row of ``currents``: 0 = DC, 1 = fundamental, h = harmonic.
    frequency_hz : (H,) float
        Frequency of each component (``orders * f``).
    currents : (H, n) complex
        RMS current phasor of each conductor at each component, amperes.
    names : tuple of str
        Conductor names in layout order.
    """

    xy_m: np.ndarray
    radius_m: np.ndarray
    orders: np.ndarray
    frequency_hz: np.ndarray
    currents: np.ndarray
    names: tuple[str, ...]
    #: Plates near the conductors (:class:`Reaction`), or None in free space.
    reaction: Reaction | None = field(default=None, compare=False, repr=False)

    @property
    def n(self) -> int:
        return self.xy_m.shape[0]

    def field_at(self, pts_m: np.ndarray) -> np.ndarray:
        """(H, m, 2) phasor field of these currents at points (m, 2) m, plates included."""
        return total_field(self.xy_m, self.radius_m, self.currents, pts_m, self.reaction,
                           self.frequency_hz)


def _polar(mag: float, angle_deg: float) -> complex:
    a = np.deg2rad(angle_deg)
    return complex(mag * np.cos(a), mag * np.sin(a))


def conductor_currents(layout: Layout) -> dict[int, np.ndarray]:
    """RMS current phasor of every conductor at every frequency component.

    Parameters
    ----------
    layout : Layout

    Returns
    -------
    dict order -> (n,) complex array in layout conductor order.
    """
    cons = layout.conductors
    n = len(cons)
    index = {c.name: i for i, c in enumerate(cons)}
    count = Counter((c.circuit, c.phase) for c in cons)
    out: dict[int, np.ndarray] = {}

    def row(order: int) -> np.ndarray:
        if order not in out:
            out[order] = np.zeros(n, dtype=complex)
        return out[order]

    for circ in layout.circuits:
        members = [c for c in cons if c.circuit == circ.name]
        if circ.system == "dc":
            r = row(0)
            for c in members:
                if c.phase in ("+", "-"):
                    sign = 1.0 if c.phase == "+" else -1.0
                    mag = c.current_a if c.current_a is not None else (
                        circ.current_a / count[(circ.name, c.phase)])
                    r[index[c.name]] = sign * mag
                elif c.current_a is not None:  # PE with an explicit current
                    r[index[c.name]] = c.current_a
            continue
        harmonics = dict(circ.harmonics)
        orders = [1] + sorted(h for h, frac in harmonics.items() if frac > 0 and h != 1)
        neutrals = [c for c in members if c.phase == "N"]
        for c in members:
            if c.phase in PHASE_ANGLE_DEG:
                phi = (c.angle_deg if c.angle_deg is not None
                       else PHASE_ANGLE_DEG[c.phase] + circ.angle_deg)
                mag = c.current_a if c.current_a is not None else (
                    circ.current_a / count[(circ.name, c.phase)])
                for h in orders:
                    frac = 1.0 if h == 1 else harmonics[h]
                    row(h)[index[c.name]] = _polar(mag * frac, h * phi)
            elif c.current_a is not None and c.phase != "N":  # PE or signal, explicit
                phi = c.angle_deg if c.angle_deg is not None else circ.angle_deg
                row(1)[index[c.name]] = _polar(c.current_a, phi)
        for h in orders:
            r = row(h)
            if not neutrals:
                continue
            phase_idx = [index[c.name] for c in members if c.phase in PHASE_ANGLE_DEG]
            ret = -r[phase_idx].sum()
            explicit = [c for c in neutrals if h == 1 and c.current_a is not None]
            for c in explicit:
                phi = c.angle_deg if c.angle_deg is not None else float(np.angle(ret, deg=True))
                r[index[c.name]] = _polar(c.current_a, phi)
            free = [c for c in neutrals if c not in explicit]
            if free:
                rest = ret - sum(r[index[c.name]] for c in explicit)
                for c in free:
                    r[index[c.name]] = rest / len(free)
    return out


def layout_sources(layout: Layout) -> SourceArrays:
    """The layout's conductors as SI arrays with their current phasors.

    Parameters
    ----------
    layout : Layout

    Returns
    -------
    SourceArrays
        ``xy_m (n, 2)`` m, ``radius_m (n,)`` m, ``orders (H,)``, ``frequency_hz (H,)`` Hz and
        ``currents (H, n)`` complex RMS A, in layout conductor order; one row (the
        fundamental, all zero) when nothing carries current.

    Notes
    -----
    Conventions in the module notes: I_h = I_1 · fraction_h at angle h·φ, φ = 0°, −120°,
    +120° for L1, L2, L3; a neutral carries −Σ of its circuit's phases at every h; DC
    is the real current ±I at order 0.

    References
    ----------
    Phase sequence and harmonic sequences: common practice (symmetrical components);
    the neutral return: Kirchhoff's current law.
    """
    cons = layout.conductors
    n = len(cons)
    xy = np.array([[c.x_mm, c.y_mm] for c in cons], dtype=float).reshape(n, 2) * MM
    radius = np.array([c.radius_mm for c in cons], dtype=float) * MM
    rows = conductor_currents(layout)
    orders = np.array(sorted(rows), dtype=int)
    if orders.size == 0:
        orders = np.array([1])
        currents = np.zeros((1, n), dtype=complex)
    else:
        currents = np.stack([rows[h] for h in orders]).reshape(len(orders), n)
    return SourceArrays(
        xy_m=xy,
        radius_m=radius,
        orders=orders,
        frequency_hz=orders.astype(float) * float(layout.frequency_hz),
        currents=currents,
        names=tuple(c.name for c in cons),
    )
