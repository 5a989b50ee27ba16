"""``trayadvisor limits``: the limits library (and a layout's own limits) as a table or JSON."""

from __future__ import annotations

import argparse

from trayadvisor.cli.common import load, positive, print_json
from trayadvisor.limits import LIBRARY, LibraryLimit, resolve_limit
from trayadvisor.output import plain


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("limits", help="list the limits library: name, µT, frequency range, source")
    p.add_argument("file", nargs="?", metavar="FILE",
                   help="also list this layout's own [[limit]] entries, at its frequency")
    p.add_argument("--frequency-hz", type=float, default=None, metavar="F",
                   help="only levels valid at F, with their value there")
    p.add_argument("--json", action="store_true", help="print the library as JSON")
    p.set_defaults(run=run)


def _value(lim: LibraryLimit, f: float) -> float | None:
    f = 0.0 if lim.band == "dc" else f
    return lim.value_uT(f) if lim.valid_at(f) else None


def _row(lim: LibraryLimit, f: float | None) -> dict:
    row = {"id": lim.id, "name": lim.name, "kind": lim.kind, "band": lim.band,
           "formula_uT": lim.formula(), "formulas": lim.formulas(),
           "pieces": [{"f_lo_hz": p.f_lo, "f_hi_hz": p.f_hi, "k_uT": p.k_uT,
                       "power": p.power, "checked": p.checked} for p in lim.pieces],
           "f_min_hz": lim.f_min_hz, "f_max_hz": lim.f_max_hz,
           "uT_at_50hz": _value(lim, 50.0), "uT_at_60hz": _value(lim, 60.0),
           "source": lim.source, "checked": lim.checked, "note": lim.note}
    if f is not None:
        row["uT"] = _value(lim, f)
        row["checked_at_f"] = lim.checked_at(f)
    return row


def _status(r: dict) -> str:
    """'checked', 'partly' (some pieces recalled) or 'RECALLED' (at F: that piece's)."""
    if "checked_at_f" in r:
        return "checked" if r["checked_at_f"] else "RECALLED"
    ok = [p["checked"] for p in r["pieces"]]
    return "checked" if all(ok) else ("partly" if any(ok) else "RECALLED")


def _shown(lim: LibraryLimit, f: float | None) -> bool:
    return f is None or lim.band == "dc" or lim.valid_at(f)


_KIND_WORDS = {"exposure": "people", "immunity": "equipment", "target": "project target"}


def _cell(v: float | str | None) -> str:
    if v is None:
        return "-"
    if isinstance(v, str):
        return v
    return f"{v:.0f}" if v >= 1e4 else f"{v:.4g}"


def run(args: argparse.Namespace) -> int:
    f = args.frequency_hz
    layout = load(args.file) if args.file else None
    if f is None and layout is not None:
        f = layout.frequency_hz
    if f is not None:
        positive("--frequency-hz", f)
    rows = [_row(lim, f) for lim in LIBRARY if _shown(lim, f)]
    own = []
    for lim in (layout.limits if layout else ()):
        rule = resolve_limit(lim, layout.frequency_hz)  # type: ignore[union-attr]
        own.append({"name": lim.name, "uT": rule.limit_uT, "source": rule.source,
                    "kind": rule.kind, "band": rule.band, "library": lim.library,
                    "places": list(lim.places)})
    if args.json:
        print_json({"frequency_hz": f, "library": rows, "layout": own})
        return 0
    cols = [f"at {f:g} Hz"] if f is not None else ["µT", "50 Hz", "60 Hz"]
    print(f"{'name':<30}" + "".join(f"{c:>9}" for c in cols) + f"  {'Hz':<10} value")
    for r in rows:
        vals = ([r["uT"]] if f is not None else [r["formula_uT"], r["uT_at_50hz"],
                                                 r["uT_at_60hz"]])
        rng = "static" if r["band"] == "dc" else f"{r['f_min_hz']:g}-{r['f_max_hz']:g}"
        print(f"{r['name']:<30}" + "".join(f"{_cell(v):>9}" for v in vals)
              + f"  {rng:<10} {_status(r)}")
        print(f"    id {r['id']}: {r['kind']} ({_KIND_WORDS[r['kind']]}), "
              f"{r['band'].upper()}; {r['source']}")
        if len(r["pieces"]) > 1:
            print(f"    level: {r['formulas']}")
    for r in own:
        pad = "" if f is not None else " " * 18
        where = ", ".join(r["places"]) if r["places"] else "the curve at distance d"
        print(f"{plain(r['name'])[:29]:<30}{_cell(r['uT']):>9}{pad}  "
              f"{'layout':<10} -")
        print(f"    {r['kind']} ({_KIND_WORDS[r['kind']]}), {r['band'].upper()}, at "
              f"{plain(where)}; {plain(r['source'])}")
    print("RECALLED: value not checked against the cited document; check your own copy.\n"
          "partly: some frequency pieces checked, the others recalled (see the level).\n"
          "Levels are RMS flux density in µT; IEC 61000-4-8 levels are converted from A/m\n"
          "with B = µ0·H. Exposure levels judge harmonics by the multi-frequency rule\n"
          "(sum of B_h / level(f_h)); static (DC) levels judge only the DC field.")
    return 0
