"""Typical material data for plates, trays and covers: relative permeability and conductivity.

Every value is a typical value recalled from memory, to be checked against the data of the
actual steel or alloy (structural steel's permeability in particular varies widely with
grade and field strength). The materials are linear: no saturation, no hysteresis.
"""

from __future__ import annotations

import math

from trayadvisor.engine.units import MU0

#: name -> (relative permeability μr, conductivity σ in S/m); typical values recalled from
#: memory: structural (mild) steel μr ≈ 200 at low fields and σ ≈ 5·10⁶; austenitic
#: stainless steel non-magnetic, σ ≈ 1.4·10⁶; aluminium (alloys for trays) σ ≈ 3.5·10⁷;
#: copper σ ≈ 5.8·10⁷ (the IEC 60028 annealed value 1/1.7241e-8 = 5.80·10⁷).
PLATE_MATERIALS: dict[str, tuple[float, float]] = {
    "steel": (200.0, 5.0e6),
    "stainless": (1.0, 1.4e6),
    "aluminium": (1.0, 3.5e7),
    "copper": (1.0, 5.8e7),
}


def skin_depth_m(mu_r: float, sigma_s_per_m: float, frequency_hz: float) -> float:
    """δ = sqrt(2 / (ω μ0 μr σ)), m; inf at DC or without conductivity."""
    w = 2.0 * math.pi * frequency_hz
    if w <= 0.0 or sigma_s_per_m <= 0.0:
        return math.inf
    return math.sqrt(2.0 / (w * MU0 * mu_r * sigma_s_per_m))
