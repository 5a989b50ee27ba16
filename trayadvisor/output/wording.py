"""How figures are written for people: µT and mm formats, far-field decay in words.

Shared by the CLI, the terminal UI and the reports so that they print the same thing.
"""

from __future__ import annotations

import math

#: Far-field decay orders in words.
DECAY_WORDS: dict[int, str] = {1: "1/r (net current)", 2: "1/r² (dipole)",
                               3: "1/r³ (quadrupole)"}


def decay_text(order: int | None, short: bool = False, none: str = "no field") -> str:
    """Far-field decay in words: ``1/r² (dipole)``, or ``1/r²`` with ``short``."""
    if not order:
        return none
    if order in DECAY_WORDS:
        text = DECAY_WORDS[order]
        return text.split(" ")[0] if short else text
    return f"1/r^{order}"


def fmt_uT(v: float) -> str:
    """µT with sensible significant figures."""
    if not math.isfinite(v):
        return "inf"
    if v == 0:
        return "0"
    if abs(v) >= 100:
        return f"{v:.0f}"
    if abs(v) >= 1:
        return f"{v:.3g}" if abs(v) < 10 else f"{v:.1f}"
    return f"{v:.3g}"


def fmt_fixed(v: float, digits: int = 1) -> str:
    """``v`` with ``digits`` decimals; a figure that rounds to zero is "0" (never "-0.0").

    Rounding noise (an imbalance of 1e-13 %, a reduction of -1e-14 dB) must not print as a
    figure of its own; non-finite values print as "inf", "-inf" or "–".
    """
    if math.isnan(v):
        return "–"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    text = f"{v:.{digits}f}"
    return "0" if float(text) == 0 else text


def fmt_mm(v: float) -> str:
    """A distance in mm; infinite = beyond the 100 m the clearance search covers."""
    if not math.isfinite(v):
        return "beyond 100 m"
    return f"{v:.0f} mm"


def plain(text: str) -> str:
    """Text from a file made safe for a terminal line: control and other non-printable
    characters (escape sequences, newlines) shown as Python escapes."""
    return "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in str(text))
