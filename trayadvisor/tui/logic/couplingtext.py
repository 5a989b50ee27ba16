"""The Coupling view's lines: victim EMF and current sharing, worst values marked in words.

Every number is a field of :meth:`trayadvisor.coupling.CouplingSummary.to_json` (the object
``trayadvisor couple --json`` prints), formatted here; nothing is computed but the choice
of which value is the worst. No textual here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from trayadvisor.coupling import CouplingSummary
from trayadvisor.output import fmt_fixed

#: Markers after the worst value of a table; words, so they read without colour.
WORST_EMF = "◀ largest EMF"
WORST_SHARE = "◀ most loaded"
WORST_IMBALANCE = "◀ largest imbalance"
#: A conductor carrying this fraction above its even share gets a rating caution.
OVERLOAD_NOTE = 0.05


@dataclass(frozen=True)
class Line:
    """One line of the panel; ``kind``: "head", "row", "worst", "note" or "warning"."""

    text: str
    kind: str = "row"


def g3(v: float | None) -> str:
    """Three significant figures, "-" for no value (as ``couple`` prints)."""
    if v is None:
        return "-"
    if not math.isfinite(v):
        return "inf" if v > 0 else "–"
    return f"{v:.3g}" if v != 0 else "0"


def f1(v: float | None) -> str:
    """One decimal place (currents, angles, shares, imbalance); "–" for no value."""
    return fmt_fixed(v) if v is not None and math.isfinite(v) else "–"


def _num(v: float | None) -> float:
    """A JSON number for arithmetic: NaN for none (a share of a zero total, say)."""
    return math.nan if v is None else float(v)


def _largest(values: list[float]) -> int | None:
    """Index of the largest finite value, or None when there is no clear largest one."""
    finite = [(v, i) for i, v in enumerate(values) if math.isfinite(v)]
    if len(finite) < 2:
        return None
    best, i = max(finite)
    if all(math.isclose(v, best, rel_tol=1e-9, abs_tol=1e-12) for v, _ in finite):
        return None
    return i


def victim_lines(data: dict) -> list[Line]:
    victims = data["victims"]
    if not victims:
        return [Line("Victim loops: none", "head"),
                Line(" no signal circuit with an a and a b conductor", "note")]
    out = [Line("Victim signal loops: EMF (RMS)", "head"),
           Line(f" {'circuit':<9}{'mV/m':>8}{'run m':>7}{'V run':>9}", "head")]
    worst = _largest([v["induced_mV_per_m"] for v in victims])
    for k, v in enumerate(victims):
        text = (f" {v['circuit'][:8]:<9}{g3(v['induced_mV_per_m']):>8}"
                f"{g3(v['length_m']):>7}{g3(v['induced_V']):>9}")
        out.append(Line(text + (f" {WORST_EMF}" if k == worst else ""),
                        "worst" if k == worst else "row"))
        parts = [f"{p['frequency_hz']:g} Hz {g3(p['induced_mV_per_m'])}"
                 for p in v["harmonics"]]
        if len(parts) > 1:
            for j in range(0, len(parts), 2):
                out.append(Line("   " + "  ".join(parts[j:j + 2]), "note"))
        if v["earth_loop_mV_per_m"] is not None:
            out.append(Line(f"   earth loop {g3(v['earth_loop_mV_per_m'])} mV/m, "
                            f"{g3(v['earth_loop_V'])} V", "note"))
    return out


def _loading(data: dict) -> list[float]:
    """Each parallel conductor's share over its equal share (1 = even)."""
    size = {(g["circuit"], g["phase"]): len(g["conductors"]) for g in data["groups"]}
    return [_num(c["share_pct"]) * size.get((c["circuit"], c["phase"]), 1) / 100.0
            for c in data["sharing"]]


def sharing_lines(data: dict) -> list[Line]:
    groups = data["groups"]
    if not groups:
        return [Line("Current sharing: no parallel conductors", "head")]
    if data["reactance_only"] and all(g["reactance_only"] for g in groups):
        basis = "reactance only"
    else:
        basis = f"R' at {data['temperature_c']:g} °C"
    out = [Line(f"Current sharing ({basis})", "head"),
           Line(f" {'conductor':<9}{'A':>6}{'°':>7}{'share':>7}", "head")]
    worst = _largest(_loading(data))
    for k, c in enumerate(data["sharing"]):
        text = (f" {c['conductor'][:8]:<9}{f1(c['current_a']):>6}{f1(c['angle_deg']):>7}"
                f"{f1(c['share_pct']):>6}%")
        out.append(Line(text + (f" {WORST_SHARE}" if k == worst else ""),
                        "worst" if k == worst else "row"))
    out.append(Line("Imbalance per group (max−min)/mean", "head"))
    imbalance = [_num(g["imbalance_pct"]) for g in groups]
    worst = _largest(imbalance)
    if worst is None and len(groups) == 1 and imbalance[0] > 0.05:
        worst = 0
    for k, g in enumerate(groups):
        flag = "⚠" if g["reactance_only"] else " "
        if g.get("circulating_a"):  # a zero total: only a circulating current, in amperes
            text = f" {flag}{g['circuit'][:6]:<7}{g['phase']:<4}circ {f1(g['circulating_a'])} A"
        else:
            text = f" {flag}{g['circuit'][:6]:<7}{g['phase']:<4}{f1(imbalance[k]):>6} %"
        out.append(Line(text + (f" {WORST_IMBALANCE}" if k == worst else ""),
                        "worst" if k == worst else "row"))
    return out


def induced_lines(data: dict) -> list[Line]:
    """Cable screens (current, loss, λ1, standing voltage) and passive loops (current,
    loss), with the caution on standing voltages."""
    out: list[Line] = []
    screens = data.get("screens", [])
    if screens:
        out += [Line("Cable screens (λ1 = screen loss / core loss)", "head"),
                Line(f" {'cable':<9}{'bond':>5}{'A':>7}{'W/m':>7}{'λ1':>7}{'V/m':>7}", "head")]
        for f in screens:
            bond = "both" if f["bonding"] == "both-ends" else "one"
            out.append(Line(f" {f['conductor'][:8]:<9}{bond:>5}{f1(f['current_a']):>7}"
                            f"{g3(f['loss_w_per_m']):>7}{g3(f['loss_factor']):>7}"
                            f"{g3(f['standing_v_per_m']):>7}"))
        if any(f["standing_v_per_m"] for f in screens):
            out.append(Line("⚠ Standing voltage on screens bonded at one point (V/m × run "
                            "length at the open end): the permitted touch voltage and the "
                            "sheath insulation are for the local rules and licensed practice",
                            "warning"))
    passive = data.get("passive", [])
    if passive:
        out += [Line("Passive loops: induced current and loss", "head"),
                Line(f" {'loop':<9}{'A':>7}{'°':>7}{'W/m':>8}", "head")]
        out += [Line(f" {p['circuit'][:8]:<9}{f1(p['current_a']):>7}{f1(p['angle_deg']):>7}"
                     f"{g3(p['loss_w_per_m']):>8}") for p in passive]
    return out


def reactance_note(data: dict) -> list[Line]:
    """A warning when any group was solved without resistance (no conductor area)."""
    groups = data["groups"]
    rx = [f"{g['circuit']} {g['phase']}" for g in groups if g["reactance_only"]]
    if not rx:
        return []
    which = f"all {len(rx)} groups" if len(rx) == len(groups) and len(rx) > 3 \
        else ", ".join(rx)
    return [Line(f"⚠ Reactance-only sharing for {which} (no area_mm2 given: R' = 0, the "
                 "shares follow the inductance alone)", "warning")]


def worst_lines(data: dict) -> list[Line]:
    """The worst value of each table, first, so a long panel shows them without scrolling."""
    out = []
    emf = [v for v in data["victims"] if math.isfinite(v["induced_mV_per_m"])]
    if emf:
        v = max(emf, key=lambda v: v["induced_mV_per_m"])
        volts = f", {g3(v['induced_V'])} V" if v["induced_V"] is not None else ""
        out.append(Line(f" EMF       {v['circuit']} {g3(v['induced_mV_per_m'])} mV/m{volts}",
                        "worst"))
    load = _loading(data)
    if data["groups"] and any(math.isfinite(x) for x in load):
        k = max((i for i in range(len(load)) if math.isfinite(load[i])), key=load.__getitem__)
        c = data["sharing"][k]
        even = _num(c["share_pct"]) / load[k] if load[k] else math.nan
        out.append(Line(f" share     {c['conductor']} {f1(c['share_pct'])} % (even "
                        f"{f1(even)} %)", "worst"))
        if load[k] > 1.0 + OVERLOAD_NOTE:
            out.append(Line(f"   ⚠ {c['conductor']} carries more than its even share and runs "
                            "hotter: rate it for this current (no ampacity check here)",
                            "warning"))
    imb = [g for g in data["groups"] if math.isfinite(_num(g["imbalance_pct"]))]
    if imb:
        g = max(imb, key=lambda g: g["imbalance_pct"])
        out.append(Line(f" imbalance {g['circuit']} {g['phase']} {f1(g['imbalance_pct'])} %",
                        "worst"))
    return [Line("Worst values", "head"), *out] if out else []


def undefined_note(data: dict) -> list[Line]:
    """A warning when some figure is not a number (conductors that coincide)."""
    values = [v["induced_mV_per_m"] for v in data["victims"]]
    if all(math.isfinite(v) for v in values):
        return []
    return [Line("⚠ Some figures are undefined (–): conductors coincide or overlap; the "
                 "status line names them.", "warning")]


def coupling_lines(summary: CouplingSummary) -> list[Line]:
    """Everything the panel shows, top to bottom."""
    data = summary.to_json()
    undefined = undefined_note(data)
    out = undefined + reactance_note(data)
    if not undefined:  # coinciding conductors: no worst value worth naming
        out += worst_lines(data)
    if out:
        out.append(Line(""))
    out += victim_lines(data)
    out.append(Line(""))
    out += sharing_lines(data)
    induced = induced_lines(data)
    if induced:
        out += [Line(""), *induced]
    out += [Line(f"note: {n}", "note") for n in data["notes"]
            if not n.startswith("reactance-only") and (data["groups"] or "R'" not in n)]
    return out
