"""Per-metre and finite-length inductance of long parallel conductors and of loops.

Arrays in SI units (metres, henry). Every loop of the cross-section is a *weight vector* over
the conductors, summing to zero (go conductors share +1, return conductors share −1), so the
arbitrary length reference of the logarithmic potential cancels in every figure.

Loops of a layout (the pairing :func:`loop_inductance_matrix` uses):

- ac3 with a neutral: ``L1/N``, ``L2/N``, ``L3/N`` (each phase returning in the neutral);
- ac3 without a neutral: ``L1/L3`` and ``L2/L3`` (L3 carries the return of L1 and L2);
- ac1: ``L/N``; dc: ``+/-``; signal: ``a/b``.

A phase with several parallel conductors enters its loops with its weight shared equally
over them; PE conductors are in no loop. The loop currents of a circuit are then its phase
currents (ac3 without N: I_L1 and I_L2), and any current distribution whose sum is zero per
circuit is a combination of these loops.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.units import K_LINE, MM
from trayadvisor.model import Layout

#: Ratio of the geometric mean radius to the radius of a solid round conductor, e^(−1/4).
GMR_SOLID: float = float(np.exp(-0.25))

#: Phase pairs (go, return) that form each system's loops.
LOOP_PAIRS: dict[str, tuple[tuple[str, str], ...]] = {
    "ac3+N": (("L1", "N"), ("L2", "N"), ("L3", "N")),
    "ac3": (("L1", "L3"), ("L2", "L3")),
    "ac1": (("L", "N"),),
    "dc": (("+", "-"),),
    "signal": (("a", "b"),),
}


def mutual_inductance_per_m(go_1: np.ndarray, ret_1: np.ndarray, go_2: np.ndarray,
                            ret_2: np.ndarray) -> np.ndarray:
    """Mutual inductance per metre of two loops, each a pair of infinite parallel lines.

    Parameters
    ----------
    go_1, ret_1 : (..., 2) float
        Go and return line of loop 1 in the cross-section, m.
    go_2, ret_2 : (..., 2) float
        Go and return line of loop 2, m. All four broadcast against each other.

    Returns
    -------
    (...) float
        M' in H/m; positive when loop 1's go line is nearer loop 2's go line.

    Notes
    -----
    With lines 1, 2 (loop 1) and 3, 4 (loop 2) and r_ij their distances,

        M' = (μ0 / 2π) · ln(r14 · r23 / (r13 · r24)).

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946, chapter on parallel filaments (mutual
    inductance of two circuits of long parallel wires).
    """
    p1, p2, p3, p4 = (np.asarray(p, dtype=float) for p in (go_1, ret_1, go_2, ret_2))

    def dist(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        return np.hypot(a[..., 0] - b[..., 0], a[..., 1] - b[..., 1])

    return K_LINE * np.log(dist(p1, p4) * dist(p2, p3) / (dist(p1, p3) * dist(p2, p4)))


def grover_mutual_finite(l: np.ndarray | float, d: np.ndarray | float) -> np.ndarray:  # noqa: E741
    """Mutual inductance of two parallel straight filaments of equal length, side by side.

    Parameters
    ----------
    l : float or (...) array
        Filament length, m (> 0).
    d : float or (...) array
        Distance between the filaments, m (> 0). Broadcasts with ``l``.

    Returns
    -------
    (...) float
        M in H (for the whole length, not per metre).

    Notes
    -----
    M = (μ0 / 2π) · l · [asinh(l/d) − sqrt(1 + d²/l²) + d/l], with
    asinh(x) = ln(x + sqrt(1 + x²)). For l ≫ d it tends to (μ0 l / 2π)(ln(2l/d) − 1).

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946, "Mutual inductance of two equal parallel
    filaments" (from memory).
    """
    l_ = np.asarray(l, dtype=float)
    d_ = np.asarray(d, dtype=float)
    q = d_ / l_
    return K_LINE * l_ * (np.arcsinh(l_ / d_) - np.sqrt(1.0 + q * q) + q)


def log_distance_matrix(xy_m: np.ndarray, self_m: np.ndarray) -> np.ndarray:
    """ln of every pairwise distance, with ln of the given self distance on the diagonal.

    Parameters
    ----------
    xy_m : (..., n, 2) float
        Conductor centres, m; leading axes are a batch of arrangements.
    self_m : (n,) float
        Self distance of each conductor (its geometric mean radius), m.

    Returns
    -------
    (..., n, n) float
        Λ_ij = ln d_ij (i ≠ j), Λ_ii = ln GMR_i; exactly symmetric.
    """
    xy = np.asarray(xy_m, dtype=float)
    dx = xy[..., :, None, 0] - xy[..., None, :, 0]
    dy = xy[..., :, None, 1] - xy[..., None, :, 1]
    d2 = dx * dx + dy * dy
    i = np.arange(d2.shape[-1])
    d2[..., i, i] = np.asarray(self_m, dtype=float) ** 2
    return 0.5 * np.log(d2)


def gmr_m(layout: Layout) -> tuple[np.ndarray, np.ndarray]:
    """Geometric mean radius of each conductor, m, and whether it came from the area.

    Returns
    -------
    gmr : (n,) float
        r·e^(−1/4) with r = sqrt(area/π) when ``area_mm2`` is given, else the overall
        (insulated) radius — an overestimate of the metal radius.
    from_area : (n,) bool

    Notes
    -----
    A solid round conductor's internal inductance μ0/(8π) per metre is folded into its self
    term as ln(1/(r e^(−1/4))). Stranded conductors differ slightly (not modelled).
    References: Grover, *Inductance Calculations*, 1946, geometric mean distance of a circle.
    """
    cons = layout.conductors
    area = np.array([c.area_mm2 if c.area_mm2 is not None else np.nan for c in cons], float)
    overall = np.array([c.radius_mm for c in cons], dtype=float)
    from_area = np.isfinite(area)
    r_mm = np.where(from_area, np.sqrt(np.where(from_area, area, 0.0) / np.pi), overall)
    return r_mm * MM * GMR_SOLID, from_area


@dataclass(frozen=True)
class Loops:
    """The loops of a layout as weights over its conductors (see module notes)."""

    names: tuple[str, ...]
    circuits: tuple[str, ...]
    weights: np.ndarray  # (L, n) float; each row sums to zero


def layout_loops(layout: Layout) -> Loops:
    """Every power circuit's go/return loops and every signal pair, as conductor weights."""
    cons = layout.conductors
    circ_of = np.array([c.circuit for c in cons], dtype=object)
    phase_of = np.array([c.phase for c in cons], dtype=object)
    names: list[str] = []
    circuits: list[str] = []
    rows: list[np.ndarray] = []
    for circ in layout.circuits:
        mine = circ_of == circ.name
        key = circ.system
        if key == "ac3" and np.any(mine & (phase_of == "N")):
            key = "ac3+N"
        for go, ret in LOOP_PAIRS.get(key, ()):
            g = mine & (phase_of == go)
            r = mine & (phase_of == ret)
            if not g.any() or not r.any():
                continue
            rows.append(g / g.sum() - r / r.sum())
            names.append(f"{circ.name}:{go}/{ret}")
            circuits.append(circ.name)
    w = np.array(rows, dtype=float).reshape(len(rows), len(cons))
    return Loops(tuple(names), tuple(circuits), w)


def loop_inductance_matrix(layout: Layout) -> tuple[tuple[str, ...], np.ndarray]:
    """Self and mutual inductance per metre of every loop of the layout.

    Parameters
    ----------
    layout : Layout

    Returns
    -------
    names : tuple of str, length L
        Loop names ``"CIRCUIT:GO/RET"``, e.g. ``"F1:L1/L3"`` (see module notes).
    M : (L, L) float
        H/m; diagonal = loop self inductance (external + internal), off-diagonal = mutual.
        Exactly symmetric.

    Notes
    -----
    M = −(μ0/2π) · W Λ Wᵀ with W the (L, n) loop weights (rows sum to 0) and Λ the log
    distance matrix (ln GMR on the diagonal). For two loops of single lines this is
    (μ0/2π) ln(r14 r23 / (r13 r24)); the self term of a two-wire loop is
    (μ0/π) ln(d / GMR) for equal conductors.

    References
    ----------
    F. W. Grover, *Inductance Calculations*, 1946 (geometric mean distances).
    """
    loops = layout_loops(layout)
    if not loops.names:
        return loops.names, np.zeros((0, 0))
    xy = np.array([[c.x_mm, c.y_mm] for c in layout.conductors], dtype=float) * MM
    gmr, _ = gmr_m(layout)
    lam = log_distance_matrix(xy, gmr)
    m = -K_LINE * (loops.weights @ lam @ loops.weights.T)
    return loops.names, 0.5 * (m + m.T)
