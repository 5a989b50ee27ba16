"""Independent reference values for the tests, computed here and never by the code under test."""

from __future__ import annotations

import numpy as np
from scipy.integrate import dblquad

#: μ0 = 4π × 10⁻⁷ T·m/A. Source: the classical SI definition (from memory); the CODATA value
#: scipy uses differs from it by less than 1e-9 relative.
MU0 = 4e-7 * np.pi


def neumann_mutual(length_m: float, d_m: float) -> float:
    """Mutual inductance (H) of two parallel filaments of equal length, side by side.

    Source: F. E. Neumann's double integral, M = (μ0/4π) ∫₀ˡ∫₀ˡ dx dy / sqrt((x − y)² + d²)
    (F. W. Grover, *Inductance Calculations*, 1946, ch. 1; from memory), evaluated numerically
    with scipy.integrate.dblquad, independently of the closed form in the product.
    """
    val, _ = dblquad(lambda y, x: 1.0 / np.sqrt((x - y) ** 2 + d_m * d_m), 0.0, length_m,
                     0.0, length_m, epsabs=1e-13, epsrel=1e-11)
    return float(MU0 / (4.0 * np.pi) * val)
