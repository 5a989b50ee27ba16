"""Batch ``field`` and ``rank`` on the command line: progress, the summary, exit status.

``run_batch(kind, files, opts, args)`` is called by the ``field`` and ``rank`` commands with
their validated options; the per-file work is :data:`trayadvisor.batch.JOBS`, the same core
call a single run makes, so a batch row holds the same numbers as a single run of that file.
"""

from __future__ import annotations

import argparse
import sys
from functools import partial
from pathlib import Path

from trayadvisor.batch import JOBS, FileResult, run_files, summary_csv
from trayadvisor.cli.common import UserError, print_json
from trayadvisor.layoutfile import atomic_write_text
from trayadvisor.output import CAUTION_LINE, decay_text, fmt_fixed, fmt_uT


def human_line(kind: str, r: FileResult) -> str:
    """One line of the plain-text batch output for a file that ran."""
    row = r.row
    if kind == "field":
        order = decay_text(row["far_field_order"])
        return (f"{r.file}: {fmt_uT(row['max_resultant_uT'])} µT at {row['distance_mm']:g} mm;"
                f" far field {order}; {row['limits_failed']} of {row['limits']} limit(s) failed")
    red = row["reduction_pct"]
    best = "-" if row["best_uT"] is None else f"{fmt_uT(row['best_uT'])} µT"
    return (f"{r.file}: {row['method']}, {row['evaluated']} evaluated: "
            f"{fmt_uT(row['baseline_uT'])} µT now, best {best}"
            + ("" if red is None else f" ({fmt_fixed(red)} % lower)"))


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
            atomic_write_text(out, summary_csv(results, columns))
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
