"""A few lines of plain text showing where each conductor lies in the cross-section.

One text row per layer of conductors (top layer first), x scaled to the envelope's width;
the last row marks each tray's floor. With one circuit a conductor is shown by its phase
label (``L1 L2 L3 N PE``); with several by a circuit letter and a one-character phase
(``A1 A2 A3 AN AE B+ B-``), with the letters listed underneath. A fixed conductor's circuit
letter is lower case.
"""

from __future__ import annotations

import string

from trayadvisor.model import Layout

WIDTH = 72  #: columns of the drawing
_SHORT = {"L1": "1", "L2": "2", "L3": "3", "N": "N", "PE": "E", "L": "L", "+": "+", "-": "-",
          "a": "a", "b": "b"}


def _letters(n: int) -> list[str]:
    alpha = string.ascii_uppercase
    return [alpha[i] if i < 26 else alpha[i // 26 - 1] + alpha[i % 26] for i in range(n)]


def sketch_text(layout: Layout, positions: dict[str, tuple[float, float]],
           width: int = WIDTH) -> str:
    """Text drawing of ``layout`` with conductors at ``positions`` (mm, by name).

    Parameters
    ----------
    layout : Layout
    positions : dict name -> (x_mm, y_mm)
        Every conductor's centre (names missing here stay where the layout has them).
    width : int
        Columns for the envelope's width.
    """
    cons = layout.conductors
    if not cons:
        return "(no conductors)"
    xy = {c.name: positions.get(c.name, (c.x_mm, c.y_mm)) for c in cons}
    x0, _, x1, _ = layout.envelope_mm()
    span = max(x1 - x0, 1e-9)
    circuits = list(dict.fromkeys(c.circuit for c in cons))
    letter = dict(zip(circuits, _letters(len(circuits)), strict=True))
    single = len(circuits) == 1

    def tag(c) -> str:  # noqa: ANN001
        if single:
            t = c.phase[:2]
        else:
            lt = letter[c.circuit]
            t = (lt.lower() if c.fixed else lt) + _SHORT.get(c.phase, c.phase[:1])
        return t if (single and not c.fixed) or not single else t.lower()

    def col(x: float) -> int:
        return int(round((x - x0) / span * (width - 1)))

    dmin = min(c.diameter_mm for c in cons)
    layers: list[tuple[float, list]] = []
    for c in sorted(cons, key=lambda c: xy[c.name][1]):
        y = xy[c.name][1]
        if layers and abs(y - layers[-1][0]) < 0.5 * dmin:
            layers[-1][1].append(c)
        else:
            layers.append((y, [c]))
    rows = []
    for _, members in reversed(layers):
        line: list[str] = [" "] * (width + 4)
        for c in sorted(members, key=lambda c: xy[c.name][0]):
            t = tag(c)
            at = max(0, col(xy[c.name][0]) - len(t) // 2)
            while any(ch != " " for ch in line[at:at + len(t)]) or \
                    (0 < at <= len(line) and line[at - 1] != " "):
                at += 1
            if at + len(t) > len(line):
                line.extend([" "] * (at + len(t) - len(line)))
            line[at:at + len(t)] = list(t)
        rows.append("".join(line).rstrip())
    if layout.trays:
        floor = [" "] * (width + 4)
        for t in layout.trays:
            a, b = col(t.x_mm), col(t.x_mm + t.width_mm)
            for k in range(a, b + 1):
                floor[k] = "_"
            floor[a], floor[b] = "|", "|"
        rows.append("".join(floor).rstrip())
    if not single:
        rows.append("  ".join(f"{letter[c]}={c}" for c in circuits)
                    + "   (lower case = fixed)")
    return "\n".join(rows)
