"""Every unit constant of the program, in one place.

The engines work in SI units (metres, amperes, tesla, henry, volts); files and people see
millimetres, µT, mV and µH. Multiply a value in the unit on the left of a name's "per" by
the constant to get SI, or divide an SI value by it: ``x_m = x_mm * MM``,
``b_uT = b_T / UT_T`` is written here as ``b_uT = b_T * UT`` (µT per tesla).
"""

from __future__ import annotations

import math

from scipy.constants import mu_0

MM: float = 1e-3  #: metres per millimetre
MM2: float = 1e-6  #: square metres per mm²
UT: float = 1e6  #: µT per tesla
MV: float = 1e3  #: mV per volt
UH: float = 1e6  #: µH per henry
NH: float = 1e9  #: nH per henry

MU0: float = mu_0  #: vacuum permeability, T·m/A (CODATA, via scipy.constants)
K_LINE: float = mu_0 / (2.0 * math.pi)  #: μ0/(2π), T·m/A: B = K_LINE · I / r
UT_PER_A_PER_M: float = mu_0 * UT  #: µT per A/m in air (B = μ0 H)
