"""Batch ``field`` and ``rank``: several files or a folder, in parallel, one summary row each.

``run_batch(kind, files, opts, args)`` is called by the ``field`` and ``rank`` commands with
their validated options; the per-file work is the command's own ``compute(layout, **opts)``,
so a batch row holds the same numbers as a single run of that file.
"""

from __future__ import annotations

import argparse
import csv
import io
import math
import sys
from collections.abc import Callable
from functools import partial
from pathlib import Path

from trayadvisor.batch import FileResult, run_files
from trayadvisor.cli.common import CAUTION_LINE, UserError, fmt_ut, print_json
from trayadvisor.layoutfile.reader import atomic_write_text
from trayadvisor.model import Layout
from trayadvisor.output.wording import decay_text

FIELD_COLUMNS: tuple[str, ...] = (
    "file", "status", "error", "distance_mm", "max_resultant_uT", "max_at_x_mm", "max_at_y_mm",
    "far_field_order", "far_field_uT_at_1m", "points", "limits", "limits_failed")
RANK_COLUMNS: tuple[str, ...] = (
    "file", "status", "error", "method", "evaluated", "baseline_uT", "best_uT", "reduction_pct")


# -- per-file jobs (module level: they run in pool workers) ---------------------------------
def field_job(layout: Layout, opts: dict) -> tuple[dict, dict]:
    """One file of ``field``: the summary row and the ``field --json`` object."""
    from trayadvisor.cli import cmd_field

    data = cmd_field.compute(layout, **opts).to_json()
    lims = data.get("limits", [])
    row = {"distance_mm": data["distance_mm"], "max_resultant_uT": data["max_resultant_uT"],
           "max_at_x_mm": data["max_at_mm"][0], "max_at_y_mm": data["max_at_mm"][1],
           "far_field_order": data["far_field_order"],
           "far_field_uT_at_1m": data["far_field_uT_at_1m"], "points": len(data["points"]),
           "limits": len(lims), "limits_failed": sum(1 for x in lims if not x["pass"])}
    return row, data


def rank_job(layout: Layout, opts: dict) -> tuple[dict, dict]:
    """One file of ``rank``: the summary row and the ``rank --json`` object."""
    from trayadvisor.cli import cmd_rank

    data = cmd_rank.compute(layout, **opts).to_json()
    best = data["options"][0] if data["options"] else {}
    row = {"method": data["method"], "evaluated": data["evaluated"],
           "baseline_uT": data["baseline_uT"], "best_uT": best.get("max_resultant_uT"),
           "reduction_pct": best.get("reduction_pct")}
    return row, data


JOBS: dict[str, tuple[Callable[..., tuple[dict, dict]], tuple[str, ...]]] = {
    "field": (field_job, FIELD_COLUMNS),
    "rank": (rank_job, RANK_COLUMNS),
}


# -- output -------------------------------------------------------------------------------
def csv_text(results: list[FileResult], columns: tuple[str, ...]) -> str:
    """The summary CSV: a header, then one row per file (floats in full precision)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for r in results:
        values = {"file": r.file, "status": "ok" if r.ok else "error", "error": r.error,
                  **r.row}
        cells = []
        for col in columns:
            v = values.get(col)
            if v is None or (isinstance(v, float) and not math.isfinite(v)):
                cells.append("")
            else:
                cells.append(repr(v) if isinstance(v, float) else str(v))
        w.writerow(cells)
    return buf.getvalue()


def human_line(kind: str, r: FileResult) -> str:
    row = r.row
    if kind == "field":

        order = decay_text(row["far_field_order"])
        return (f"{r.file}: {fmt_ut(row['max_resultant_uT'])} µT at {row['distance_mm']:g} mm;"
                f" far field {order}; {row['limits_failed']} of {row['limits']} limit(s) failed")
    red = row["reduction_pct"]
    best = "-" if row["best_uT"] is None else f"{fmt_ut(row['best_uT'])} µT"
    return (f"{r.file}: {row['method']}, {row['evaluated']} evaluated: "
            f"{fmt_ut(row['baseline_uT'])} µT now, best {best}"
            + ("" if red is None else f" ({red:.1f} % lower)"))


class ProgressBar:
    """A one-line progress bar on stderr (drawn only when stderr is a terminal)."""

    def __init__(self, total: int, stream=None) -> None:
        self.total = total
        self.stream = stream or sys.stderr
        self.live = bool(getattr(self.stream, "isatty", lambda: False)())
        self.failed = 0

    def __call__(self, done: int, total: int, result: FileResult) -> None:
        self.failed += 0 if result.ok else 1
        if not self.live:
            return
        width = 30
        fill = round(width * done / max(total, 1))
        name = Path(result.file).name[:30]
        self.stream.write(f"\r[{'#' * fill}{'.' * (width - fill)}] {done}/{total} "
                          f"({self.failed} failed) {name:<30}")
        self.stream.flush()

    def close(self) -> None:
        if self.live:
            self.stream.write("\r" + " " * 90 + "\r")
            self.stream.flush()


def run_batch(kind: str, files: list[str], opts: dict, args: argparse.Namespace) -> int:
    """Run ``kind`` ("field" or "rank") on every file; exit status 2 if any file failed."""
    job, columns = JOBS[kind]
    out = getattr(args, "out", None)
    if not files:
        raise UserError(f"{kind}: no layout files (*.toml) found in "
                        f"{', '.join(getattr(args, 'files', [])) or 'the inputs'}")
    if out:
        target = Path(out)
        if target.suffix.lower() != ".csv":
            raise UserError(f"--out {out}: a batch summary is a .csv file, e.g. --out "
                            "summary.csv")
        if not (target.parent if str(target.parent) else Path(".")).is_dir():
            raise UserError(f"--out {out}: folder {target.parent} does not exist")
    bar = ProgressBar(len(files))
    try:
        results = run_files(partial(job, opts=opts), files,
                            workers=getattr(args, "jobs", None), progress=bar)
    finally:
        bar.close()
    failed = [r for r in results if not r.ok]
    for r in failed:
        print(r.error, file=sys.stderr)
    as_json = bool(getattr(args, "json", False))
    if out:
        try:
            atomic_write_text(out, csv_text(results, columns))
        except OSError as exc:
            raise UserError(f"--out {out}: cannot write ({exc.strerror or exc})") from None
        print(f"wrote {out}: {len(results)} file(s), {len(failed)} failed",
              file=sys.stderr if as_json else sys.stdout)
    if as_json:
        print_json([{**(r.data or {}), "file": r.file, "error": r.error or None}
                    for r in results])
    elif not out:
        for r in results:
            if r.ok:
                print(human_line(kind, r))
        print(CAUTION_LINE)
    return 2 if failed else 0
