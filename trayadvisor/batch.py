"""Batch runs over many layout files: expand inputs, run a job per file in a process pool.

The job is any picklable callable ``job(layout) -> (row, data)`` (a module-level function or
a ``functools.partial`` of one): ``row`` holds the summary-CSV columns of that file, ``data``
its single-file JSON object. Each pool worker reads its file itself, so a bad file becomes
an error result carrying the reader's one-line ``FILE:LINE: message`` and the other files
carry on.

The jobs of ``field`` and ``rank`` (:data:`JOBS`) make the same core call a single run makes
(:func:`trayadvisor.analysis.field_summary`, :func:`trayadvisor.ranking.rank_layout`) with
the same keyword options, so a batch row holds the same numbers as a single run of that file.
"""

from __future__ import annotations

import contextlib
import csv
import io
import math
import multiprocessing
import os
import time
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from pathlib import Path

from trayadvisor.analysis import field_summary
from trayadvisor.layoutfile import LayoutError, read_layout
from trayadvisor.model import Layout
from trayadvisor.ranking import rank_layout

Job = Callable[[Layout], tuple[dict, dict]]
Progress = Callable[[int, int, "FileResult"], None]


def expand_inputs(items: list[str]) -> list[str]:
    """Files as given, and every ``*.toml`` inside a folder (sorted)."""
    out: list[str] = []
    for item in items:
        p = Path(item)
        if p.is_dir():
            out.extend(str(f) for f in sorted(p.glob("*.toml")))
        else:
            out.append(item)
    return out


@dataclass(frozen=True)
class FileResult:
    """The outcome for one file: its summary row and JSON object, or its one-line error."""

    file: str
    error: str = ""
    row: dict = field(default_factory=dict)
    data: dict | None = None

    @property
    def ok(self) -> bool:
        return not self.error


def run_one(job: Job, path: str) -> FileResult:
    """Read ``path`` and run ``job`` on it; every failure becomes an error result."""
    try:
        layout = read_layout(path)
    except LayoutError as err:
        return FileResult(path, str(err))
    try:
        row, data = job(layout)
    except Exception as exc:  # a bug or an engine limit: report it for this file, go on
        return FileResult(path, f"{path}:0: could not compute ({type(exc).__name__}: {exc})")
    return FileResult(path, "", row, data)


def default_workers() -> int:
    """Cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


#: Thread settings for pool workers: one process per core, one thread per process (BLAS
#: thread pools that spin while oversubscribed cost more than they give).
WORKER_ENV: dict[str, str] = {"TRAYADVISOR_THREADS": "1", "OPENBLAS_NUM_THREADS": "1",
                              "OMP_NUM_THREADS": "1", "MKL_NUM_THREADS": "1"}


@contextlib.contextmanager
def _worker_environment() -> Iterator[None]:
    """Set :data:`WORKER_ENV` (where the user has not) while workers are started."""
    added = {k: v for k, v in WORKER_ENV.items() if k not in os.environ}
    os.environ.update(added)
    try:
        yield
    finally:
        for k in added:
            os.environ.pop(k, None)


#: Wall time to start pool workers (spawn, import numpy/scipy), s; measured 1.2-2.4 s on 2 cores.
WORKER_START_S = 1.5


def run_files(job: Job, files: Sequence[str], *, workers: int | None = None,
              progress: Progress | None = None, serial_first_s: float = 0.5
              ) -> list[FileResult]:
    """Run ``job`` on every file, in parallel across ``workers`` processes when it pays.

    Files are first run here, one after another, for up to ``serial_first_s``; workers are
    started only when the files left would take longer than starting them
    (:data:`WORKER_START_S`), so a batch of quick files does not wait for workers.

    Parameters
    ----------
    job : picklable ``job(layout) -> (row, data)``
    files : paths, in the order results are returned
    workers : processes (default: the cores available); 1 runs everything in this process
    progress : called as ``progress(done, total, result)`` after each file completes
    serial_first_s : time to run files here before deciding; 0 starts workers at once

    Returns
    -------
    One :class:`FileResult` per file, in input order (the same whichever way they ran).
    """
    files = list(files)
    total = len(files)
    n = min(workers or default_workers(), total)
    results: list[FileResult | None] = [None] * total
    done = 0
    start = time.perf_counter()
    while done < total and (n <= 1 or serial_first_s > 0):
        results[done] = run_one(job, files[done])
        done += 1
        if progress:
            progress(done, total, results[done - 1])
        spent = time.perf_counter() - start
        left = spent / done * (total - done)
        if n > 1 and spent >= serial_first_s and left * (1 - 1 / n) > WORKER_START_S:
            break
    if done < total:
        _run_pool(job, files, results, done, n, progress)
    return [r for r in results if r is not None]


def _run_pool(job: Job, files: list[str], results: list[FileResult | None], done: int,
              n: int, progress: Progress | None) -> None:
    """Run ``files[done:]`` in a pool of ``n`` worker processes, filling ``results``."""
    total = len(files)
    n = min(n, total - done)
    # spawn: fresh workers that inherit no threads, locks or open state of this process, and
    # that read WORKER_ENV when they import numpy (workers start during the submits)
    ctx = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(max_workers=n, mp_context=ctx) as pool:
        with _worker_environment():
            futures = {pool.submit(run_one, job, files[i]): i for i in range(done, total)}
        try:
            for count, fut in enumerate(as_completed(futures), start=done + 1):
                i = futures[fut]
                try:
                    results[i] = fut.result()
                except BrokenProcessPool as exc:
                    results[i] = FileResult(files[i], f"{files[i]}:0: worker process failed "
                                            f"({exc})")
                if progress:
                    progress(count, total, results[i])
        except BaseException:
            pool.shutdown(wait=False, cancel_futures=True)
            raise


# -- the jobs of field and rank, and the summary CSV --------------------------------------
FIELD_COLUMNS: tuple[str, ...] = (
    "file", "status", "error", "distance_mm", "max_resultant_uT", "max_at_x_mm", "max_at_y_mm",
    "far_field_order", "far_field_uT_at_1m", "points", "limits", "limits_failed", "dc_max_uT",
    "place_limits_failed", "plates", "plate_loss_w_per_m")
#: Prefix of the per-file columns of ``field``: one per place-bound limit and place, holding
#: that limit's index there (``index:LIMIT@PLACE``; pass = index <= 1).
INDEX_PREFIX = "index:"
RANK_COLUMNS: tuple[str, ...] = (
    "file", "status", "error", "method", "evaluated", "baseline_uT", "best_uT", "reduction_pct",
    "unit", "baseline", "best")


def field_job(layout: Layout, opts: dict) -> tuple[dict, dict]:
    """One file of ``field``: the summary row and the ``field --json`` object.

    ``opts`` are the keyword arguments of :func:`trayadvisor.analysis.field_summary`.
    """
    data = field_summary(layout, **opts).to_json()
    lims = data.get("limits", [])
    row = {"distance_mm": data["distance_mm"], "max_resultant_uT": data["max_resultant_uT"],
           "max_at_x_mm": data["max_at_mm"][0], "max_at_y_mm": data["max_at_mm"][1],
           "far_field_order": data["far_field_order"],
           "far_field_uT_at_1m": data["far_field_uT_at_1m"], "points": len(data["points"]),
           "limits": len(lims), "limits_failed": sum(1 for x in lims if not x["pass"]),
           "dc_max_uT": data["dc_max_uT"], "place_limits_failed": 0,
           "plates": len(data["plates"]),
           "plate_loss_w_per_m": sum(p["loss_w_per_m"] for p in data["plates"])}
    for place in data["places"]:
        for q in place["limits"]:
            row[f"{INDEX_PREFIX}{_cell_text(q['name'])}@{_cell_text(place['name'])}"] = \
                q["index"]
            row["place_limits_failed"] += 0 if q["passes"] else 1
    return row, data


def _cell_text(text: str) -> str:
    """A name from a file as plain text for a CSV header (no control characters)."""
    return "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in str(text))


def rank_job(layout: Layout, opts: dict) -> tuple[dict, dict]:
    """One file of ``rank``: the summary row and the ``rank --json`` object.

    ``opts`` are the keyword arguments of :func:`trayadvisor.ranking.rank_layout`.
    """
    data = rank_layout(layout, **opts).to_json()
    best = data["options"][0] if data["options"] else {}
    row = {"method": data["method"], "evaluated": data["evaluated"],
           "baseline_uT": data["baseline_uT"], "best_uT": best.get("max_resultant_uT"),
           "reduction_pct": best.get("reduction_pct"), "unit": data["unit"],
           "baseline": data["baseline"], "best": best.get("value")}
    return row, data


#: Batch-capable commands: their job and their summary columns.
JOBS: dict[str, tuple[Callable[..., tuple[dict, dict]], tuple[str, ...]]] = {
    "field": (field_job, FIELD_COLUMNS),
    "rank": (rank_job, RANK_COLUMNS),
}


def summary_csv(results: Sequence[FileResult], columns: tuple[str, ...]) -> str:
    """The summary CSV: a header, then one row per file (floats in full precision).

    Row keys that start with :data:`INDEX_PREFIX` become further columns, in the order first
    seen (a file without that limit or place leaves the cell empty).
    """
    extra: dict[str, None] = {}
    for r in results:
        extra.update((k, None) for k in r.row if k.startswith(INDEX_PREFIX))
    columns = tuple(columns) + tuple(k for k in extra if k not in columns)
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
