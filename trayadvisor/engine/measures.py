"""Scalar figures of a multi-frequency field at each point: the resultant of some frequency
components, or a weighted sum of their resultants (an exposure index).

A :class:`Measure` maps the phasor field ``B (H, m, 2)`` (one row per frequency component,
:func:`trayadvisor.engine.phasor_field`) to one value per point:

- ``rule = "rss"``: sqrt(Σ_h (w_h B_h)²), e.g. the AC resultant (w = 1 on every harmonic
  order ≥ 1, 0 on DC), the static field (w = 1 on order 0 only), or B / limit;
- ``rule = "sum"``: Σ_h w_h B_h, the multi-frequency exposure index with w_h = 1/RL(f_h).

B_h = sqrt(|Bx_h|² + |By_h|²) is the resultant RMS field of component h (IEC 61786-1).

Every such measure is a non-negative combination of square roots of sums of |analytic
function|², so it is subharmonic outside the conductors: its maximum over a closed region free
of conductors lies on the region's boundary, and it falls monotonically along the curves at
distance d (see :func:`trayadvisor.engine.clearance`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.currents import SourceArrays


@dataclass(frozen=True)
class Measure:
    """Weights per frequency component and how they combine (module notes)."""

    weights: np.ndarray  # (H,) per component; units: output per tesla
    rule: str = "rss"  # "rss" or "sum"

    def __call__(self, b: np.ndarray) -> np.ndarray:
        """The measure at each point of ``b`` (H, m, 2) complex → (m,) float."""
        b = np.asarray(b)
        if b.ndim == 2:
            b = b[None]
        w = np.asarray(self.weights, dtype=float).reshape(-1)
        if w.size != b.shape[0]:
            raise ValueError(f"measure has {w.size} weights for {b.shape[0]} components")
        per = np.sum(b.real**2 + b.imag**2, axis=2)  # (H, m): B_h²
        if self.rule == "rss":
            return np.sqrt(np.tensordot(w * w, per, axes=1))
        if self.rule == "sum":
            return np.tensordot(w, np.sqrt(per), axes=1)
        raise ValueError(f"unknown rule {self.rule!r}")

    def scaled(self, factor: float) -> Measure:
        return Measure(np.asarray(self.weights, dtype=float) * factor, self.rule)


def split_bands(src: SourceArrays) -> tuple[SourceArrays, SourceArrays]:
    """(AC part, DC part) of the sources: rows of order ≥ 1, and the row of order 0.

    A part with no rows gets one row of zero currents (order 1 for AC, 0 for DC), so every
    engine can take it.
    """
    orders = np.asarray(src.orders).reshape(-1)
    parts = []
    for mask, empty in ((orders > 0, 1), (orders == 0, 0)):
        if mask.any():
            sub_orders, cur = orders[mask], src.currents[mask]
        else:
            sub_orders, cur = np.array([empty]), np.zeros((1, src.n), dtype=complex)
        base_f = (src.frequency_hz[orders > 0][0] / orders[orders > 0][0]
                  if (orders > 0).any() else 0.0)
        parts.append(SourceArrays(src.xy_m, src.radius_m, sub_orders,
                                  sub_orders.astype(float) * base_f, cur, src.names,
                                  src.reaction))
    return parts[0], parts[1]
