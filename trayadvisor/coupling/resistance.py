"""Conductor resistance per metre as the standards give it: DC at 20 °C, at temperature, AC.

- DC at 20 °C: the IEC 60228 table of maximum resistance of class 2 (stranded) conductors
  for the standard sizes; ρ20 / A for a size not in the table.
- At the operating temperature θ: R′(θ) = R′20 [1 + α20 (θ − 20)] (IEC 60287-1-1).
- AC at frequency f: R′_ac = R′(θ) (1 + y_s), the skin-effect factor of IEC 60287-1-1 with
  k_s = 1 (round stranded conductors). The proximity-effect factor y_p is left out: the
  neighbouring conductors' fields are in the impedance system as mutual inductance, not as
  extra loss in each conductor.

The table values are recalled from memory and marked so; check them against your copy of
IEC 60228 before relying on them.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from trayadvisor.engine.units import MM2
from trayadvisor.model import MATERIALS

#: Maximum DC resistance of class 2 conductors at 20 °C, Ω/km, by nominal area (mm²).
#: Source: IEC 60228:2004, Table 2 (plain annealed copper; aluminium) — values recalled from
#: memory, to be checked against the standard.
IEC_60228_CLASS_2_OHM_PER_KM: dict[str, dict[float, float]] = {
    "copper": {
        1.5: 12.1, 2.5: 7.41, 4.0: 4.61, 6.0: 3.08, 10.0: 1.83, 16.0: 1.15, 25.0: 0.727,
        35.0: 0.524, 50.0: 0.387, 70.0: 0.268, 95.0: 0.193, 120.0: 0.153, 150.0: 0.124,
        185.0: 0.0991, 240.0: 0.0754, 300.0: 0.0601, 400.0: 0.0470, 500.0: 0.0366,
        630.0: 0.0283, 800.0: 0.0221, 1000.0: 0.0176, 1200.0: 0.0151, 1400.0: 0.0129,
        1600.0: 0.0113, 1800.0: 0.0101, 2000.0: 0.0090, 2500.0: 0.0072,
    },
    "aluminium": {
        10.0: 3.08, 16.0: 1.91, 25.0: 1.20, 35.0: 0.868, 50.0: 0.641, 70.0: 0.443,
        95.0: 0.320, 120.0: 0.253, 150.0: 0.206, 185.0: 0.164, 240.0: 0.125, 300.0: 0.100,
        400.0: 0.0778, 500.0: 0.0605, 630.0: 0.0469, 800.0: 0.0367, 1000.0: 0.0291,
        1200.0: 0.0247, 1400.0: 0.0212, 1600.0: 0.0186, 1800.0: 0.0165, 2000.0: 0.0149,
        2500.0: 0.0127,
    },
}
#: The skin-effect coefficient k_s of round stranded conductors (IEC 60287-1-1, Table 2;
#: from memory).
KS_ROUND_STRANDED = 1.0


def dc_resistance_20c_per_m(area_mm2: np.ndarray | float,
                            material: str | Sequence[str]) -> np.ndarray:
    """DC resistance per metre at 20 °C: the IEC 60228 class 2 value, else ρ20 / A.

    Parameters
    ----------
    area_mm2 : float or (n,) float
        Nominal conductor area, mm².
    material : str or sequence of str
        A key of :data:`trayadvisor.model.MATERIALS`.

    Returns
    -------
    (n,) float
        Ω/m.

    References
    ----------
    IEC 60228:2004, Table 2 (class 2 conductors, from memory); ρ20 from IEC 60287-1-1
    Table 1 (from memory) for sizes not in the table.
    """
    area = np.atleast_1d(np.asarray(area_mm2, dtype=float))
    mats = [material] * area.size if isinstance(material, str) else list(material)
    out = np.empty(area.size)
    for i, (a, m) in enumerate(zip(area, mats, strict=True)):
        table = IEC_60228_CLASS_2_OHM_PER_KM.get(m, {})
        ohm_km = table.get(float(a))
        out[i] = ohm_km * 1e-3 if ohm_km is not None else MATERIALS[m][0] / (a * MM2)
    return out


def in_table(area_mm2: float, material: str) -> bool:
    """Whether ``area_mm2`` is a standard size of the IEC 60228 table for ``material``."""
    return float(area_mm2) in IEC_60228_CLASS_2_OHM_PER_KM.get(material, {})


def resistance_per_m(area_mm2: np.ndarray | float, material: str | Sequence[str],
                     temperature_c: float) -> np.ndarray:
    """DC resistance per metre at the conductor temperature.

    Parameters
    ----------
    area_mm2 : float or (n,) float
        Conductor area, mm².
    material : str or sequence of str, length n
        A key of :data:`trayadvisor.model.MATERIALS`.
    temperature_c : float
        Conductor temperature, °C.

    Returns
    -------
    (n,) or () float
        R′ in Ω/m (a scalar for scalar input).

    Notes
    -----
    R′(θ) = R′20 [1 + α20 (θ − 20)], R′20 from :func:`dc_resistance_20c_per_m`.

    References
    ----------
    IEC 60287-1-1, clause 2.1.1 (DC resistance at operating temperature; from memory).
    """
    mats = [material] if isinstance(material, str) else list(material)
    alpha = np.array([MATERIALS[m][1] for m in mats], dtype=float)
    r20 = dc_resistance_20c_per_m(area_mm2, material)
    r = r20 * (1.0 + alpha * (float(temperature_c) - 20.0))
    return r[0] if isinstance(material, str) and np.ndim(area_mm2) == 0 else r


def skin_effect_factor(r_dc_per_m: np.ndarray | float, frequency_hz: np.ndarray | float,
                       ks: float = KS_ROUND_STRANDED) -> np.ndarray:
    """The skin-effect factor y_s of IEC 60287-1-1 (broadcast over both arguments).

    Parameters
    ----------
    r_dc_per_m : float or array
        DC resistance at the operating temperature, Ω/m (> 0).
    frequency_hz : float or array
        Frequency, Hz (0 gives 0).
    ks : float
        Skin-effect coefficient (1 for round stranded conductors).

    Returns
    -------
    array
        y_s, so that R′_ac = R′ (1 + y_s).

    Notes
    -----
    x_s² = 8π f · 10⁻⁷ · k_s / R′, then y_s = x_s⁴ / (192 + 0.8 x_s⁴) for x_s ≤ 2.8,
    −0.136 − 0.0177 x_s + 0.0563 x_s² for 2.8 < x_s ≤ 3.8, and 0.354 x_s − 0.733 beyond
    (harmonics on large conductors).

    References
    ----------
    IEC 60287-1-1, clause 2.1.2 (skin effect factor; the three ranges from memory).
    """
    r = np.asarray(r_dc_per_m, dtype=float)
    f = np.asarray(frequency_hz, dtype=float)
    xs2 = 8.0 * np.pi * f * 1e-7 * ks / r
    xs = np.sqrt(xs2)
    x4 = xs2 * xs2
    low = x4 / (192.0 + 0.8 * x4)
    mid = -0.136 - 0.0177 * xs + 0.0563 * xs2
    high = 0.354 * xs - 0.733
    return np.where(xs <= 2.8, low, np.where(xs <= 3.8, mid, high))


def ac_resistance_per_m(r_dc_per_m: np.ndarray | float, frequency_hz: np.ndarray | float,
                        ks: float = KS_ROUND_STRANDED) -> np.ndarray:
    """R′_ac = R′ (1 + y_s) at ``frequency_hz`` (Ω/m); the DC value at 0 Hz."""
    r = np.asarray(r_dc_per_m, dtype=float)
    return r * (1.0 + skin_effect_factor(r, frequency_hz, ks))
