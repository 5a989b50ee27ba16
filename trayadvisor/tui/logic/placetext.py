"""The words of places and limits: the places panel of the Field view, the rows of the
limits-library picker, and how a limit's kind is spelled.

Every figure is a field of :class:`trayadvisor.analysis.FieldSummary` (``places``, each
with its bound limits: the ``places`` of ``trayadvisor field --json``), formatted here;
nothing is computed. Verdicts are words ("pass", "FAIL"), so they read without colour. An
equipment-immunity level is always called "immunity", never exposure. No textual here.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from trayadvisor.analysis import FieldSummary
from trayadvisor.limits import LIBRARY, LibraryLimit
from trayadvisor.model import Layout
from trayadvisor.output import fmt_uT, plain
from trayadvisor.tui.logic.couplingtext import Line, g3
from trayadvisor.tui.logic.settings import limit_kind

#: What each kind of limit protects, for notes and help.
KIND_MEANING: dict[str, str] = {"exposure": "exposure limit (people)",
                                "immunity": "immunity level (equipment)",
                                "target": "target (the project's own)"}
#: The same in one short line (the limit form).
KINDS_SHORT = "exposure = people, immunity = equipment, target = your own"
_PROTECTS = {"exposure": "people", "immunity": "equipment"}
#: The note under the places panel and in the limit form.
KINDS_NOTE = ("exposure limits are for people, immunity levels for equipment, targets are "
              "the project's own")


def verdict_word(passes: bool) -> str:
    return "pass" if passes else "FAIL"


def margin_text(db: float) -> str:
    """The margin below a limit in dB with its sign; no field at all has no margin."""
    if not math.isfinite(db):
        return "no field"
    return f"{db:+.1f} dB"


def kind_text(kind: str, band: str) -> str:
    """``immunity``, ``exposure, DC``: the kind spelled out, the band when it is DC."""
    return kind + (", DC" if band == "dc" else "")


def place_lines(summary: FieldSummary | None, layout: Layout, pending: bool = False
                ) -> list[Line]:
    """The places panel: every point, line and area with its AC maximum, its DC maximum
    when there is one, and each limit bound to it with kind, index, margin and verdict.

    Line kinds: "head", "row", "pass", "fail", "note".
    """
    wait = " …" if pending else ""
    out = [Line(f"Places and their limits{wait} (v: legend)", "head")]
    if not (layout.points or layout.lines or layout.areas):
        out.append(Line("No point, line or area: p adds one."))
        return out
    if summary is None:
        out.append(Line("computing the field…"))
        return out
    out.append(Line("index ≤ 1 passes (exposure: Σ B_h/level_h)", "note"))
    for p in summary.places:
        out.append(Line(f"{p.type} {p.name}", "head"))
        x, y = p.at_mm
        out.append(Line(f" AC max {fmt_uT(p.max_resultant_uT)} µT at x {x:.0f}, y {y:.0f}"))
        if p.dc_max_uT > 0:
            out.append(Line(f" DC max {fmt_uT(p.dc_max_uT)} µT (static)"))
        if not p.limits:
            out.append(Line(" no limit bound here", "note"))
        for q in p.limits:
            word = verdict_word(q.passes)
            out.append(Line(f" {word} {q.name}", "pass" if q.passes else "fail"))
            out.append(Line(f"   {kind_text(q.kind, q.band)} · index {g3(q.index)} · "
                            f"{margin_text(q.margin_db)}"))
    out.append(Line(KINDS_NOTE + "; follow the local rules.", "note"))
    return out


def failures(summary: FieldSummary | None) -> int:
    """How many (place, limit) verdicts fail."""
    if summary is None:
        return 0
    return sum(1 for p in summary.places for q in p.limits if not q.passes)


# -- the limits-library picker ---------------------------------------------------------------
def entry_level(entry: LibraryLimit, frequency_hz: float) -> str:
    """An entry's level at the layout's frequency (the static level for DC), or a dash when
    the entry does not cover that frequency."""
    if entry.band == "dc":
        return f"{fmt_uT(entry.value_uT(0.0))} µT"
    if entry.valid_at(frequency_hz):
        return f"{fmt_uT(entry.value_uT(frequency_hz))} µT"
    return f"– (not at {frequency_hz:g} Hz)"


def library_rows(frequency_hz: float, entries: Sequence[LibraryLimit] = LIBRARY
                 ) -> list[tuple[str, str, str]]:
    """(id, row, detail) of each library entry: the row shows id, kind, band and the level
    at the layout's frequency; the detail its name and whether it was checked."""
    width = max((len(e.id) for e in entries), default=0)
    out = []
    for e in entries:
        row = f"{e.id:<{width}} {e.kind:<8} {e.band.upper()} {entry_level(e, frequency_hz)}"
        who = _PROTECTS.get(e.kind, e.kind)
        checked = "checked" if e.checked_at(frequency_hz) else "recalled, not checked"
        out.append((e.id, row, f"{e.name}: {who}; {checked}"))
    return out


# -- the places menu ------------------------------------------------------------------------
def _mm(v: float) -> str:
    return f"{v:g}"


def menu_rows(layout: Layout) -> list[tuple[str, str]]:
    """(option id, text) of the places menu: title and frequency, every point, line, area
    and limit, then the rows that add one. Option ids are ``kind:name`` (``add:kind``)."""
    title = plain(layout.title) or "(no title)"
    earth = ("" if layout.earth_y_mm is None
             else f" · earth plane y {layout.earth_y_mm:g} mm")
    out = [("layout:", f"Title and frequency: {title} · {layout.frequency_hz:g} Hz{earth}")]
    out += [(f"point:{p.name}", f"point {plain(p.name)}  x {_mm(p.x_mm)}, y {_mm(p.y_mm)} mm")
            for p in layout.points]
    out += [(f"line:{ln.name}", f"line  {plain(ln.name)}  ({_mm(ln.x0_mm)}, "
             f"{_mm(ln.y0_mm)}) → ({_mm(ln.x1_mm)}, {_mm(ln.y1_mm)}) mm")
            for ln in layout.lines]
    out += [(f"area:{a.name}", f"area  {plain(a.name)}  ({_mm(a.x0_mm)}, {_mm(a.y0_mm)}) → "
             f"({_mm(a.x1_mm)}, {_mm(a.y1_mm)}) mm") for a in layout.areas]
    for lim in layout.limits:
        level = (f"{fmt_uT(lim.value_uT)} µT" if lim.value_uT is not None
                 else plain(str(lim.library)))
        where = (f"at {', '.join(plain(n) for n in lim.places)}" if lim.places
                 else "on the curve at d")
        out.append((f"limit:{lim.name}", f"limit {plain(lim.name)}  {level} {limit_kind(lim)}"
                    f" · {where}"))
    out += [(f"add:{k}", f"+ add {'an' if k == 'area' else 'a'} {k}")
            for k in ("point", "line", "area", "limit")]
    return out
