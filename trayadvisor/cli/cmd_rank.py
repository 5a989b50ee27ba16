"""``trayadvisor rank FILE``: rank arrangements of the movable conductors by stray field."""

from __future__ import annotations

import argparse
import math
import signal
import sys
import threading
import time
from collections.abc import Callable
from pathlib import Path

from trayadvisor.analysis.summary import DEFAULT_DISTANCE_MM
from trayadvisor.cli.common import CAUTION_LINE, UserError, fmt_ut, load, print_json
from trayadvisor.model import Layout
from trayadvisor.ranking.rank import DEFAULT_MAX_EXHAUSTIVE, RankError, RankResult, rank_layout
from trayadvisor.ranking.sketch import sketch
from trayadvisor.ranking.slots import SLOT_RULES
from trayadvisor.output.wording import decay_text

PREFIX = "trayadvisor rank"


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("rank", help="rank arrangements of the movable conductors by stray "
                       "field (top options, saved as CSV, JSON or Markdown)")
    p.add_argument("files", nargs="+", metavar="FILE",
                   help="layout file(s) or a folder of them (several: a batch run)")
    p.add_argument("--distance-mm", default=str(DEFAULT_DISTANCE_MM), metavar="D",
                   help=f"distance outside the tray envelope (default {DEFAULT_DISTANCE_MM:g})")
    p.add_argument("--top", default="5", metavar="K", help="number of options (default 5)")
    p.add_argument("--out", default=None, metavar="PATH",
                   help="save the options: .csv, .json or .md by extension; with --apply a "
                   ".toml layout; batch runs: SUMMARY.csv")
    p.add_argument("--json", action="store_true", help="print the ranking as JSON")
    p.add_argument("--objective", default=None, metavar="line:NAME|point:NAME",
                   help="minimise the field on a named observation line or point instead of "
                   "the contour at --distance-mm")
    p.add_argument("--slots", default=None, metavar="|".join(SLOT_RULES),
                   help="candidate positions from a slot grid by this laying rule instead of "
                   "the places the conductors occupy now")
    p.add_argument("--bundles", action="store_true",
                   help="keep each parallel set together in one group of positions")
    p.add_argument("--budget-s", default=None, metavar="S",
                   help="time budget in seconds (Ctrl-C also stops and keeps the best found)")
    p.add_argument("--seed", default="0", metavar="N", help="seed of the heuristic search")
    p.add_argument("--max-exhaustive", default=str(DEFAULT_MAX_EXHAUSTIVE), metavar="N",
                   help="enumerate exactly up to this many distinct arrangements "
                   f"(default {DEFAULT_MAX_EXHAUSTIVE:,}); beyond, a heuristic search")
    p.add_argument("--sharing", action="store_true",
                   help="score options with the solved current sharing between parallel "
                   "conductors instead of equal shares")
    p.add_argument("--max-imbalance-pct", default=None, metavar="P",
                   help="keep only options whose parallel conductors share current within "
                   "P %% ((max-min)/mean of each phase group)")
    p.add_argument("--max-induced-mv-per-m", default=None, metavar="V",
                   help="keep only options that induce at most V mV/m in every victim loop")
    p.add_argument("--apply", default=None, metavar="N",
                   help="write a layout with option N to --out NEW.toml")
    p.set_defaults(run=run)


def _fail(text: str) -> UserError:
    return UserError(f"{PREFIX}: {text}")


def _int(name: str, text: str, low: int) -> int:
    try:
        v = int(str(text).strip())
    except ValueError:
        raise _fail(f"{name} {text}: must be a whole number") from None
    if v < low:
        raise _fail(f"{name} {v}: must be at least {low}")
    return v


def _float(name: str, text: str, positive: bool) -> float:
    try:
        v = float(str(text).strip())
    except ValueError:
        raise _fail(f"{name} {text}: must be a number") from None
    if not math.isfinite(v) or v < 0 or (positive and v == 0):
        raise _fail(f"{name} {text}: must be {'a positive' if positive else 'zero or a'}"
                    f"{'' if positive else ' positive'} number")
    return v


def options(args: argparse.Namespace) -> dict:
    """Validated keyword arguments for :func:`compute` (shared with batch runs)."""
    objective = args.objective
    if objective is not None and objective != "contour":
        kind, _, name = objective.partition(":")
        if kind not in ("line", "point") or not name:
            raise _fail(f"--objective {objective}: use line:NAME or point:NAME")
    if args.slots is not None and args.slots not in SLOT_RULES:
        raise _fail(f"--slots {args.slots}: use one of {', '.join(SLOT_RULES)}")
    return {
        "distance_mm": _float("--distance-mm", args.distance_mm, positive=False),
        "top_k": _int("--top", args.top, 1),
        "objective": None if objective == "contour" else objective,
        "slots": args.slots,
        "bundles": bool(args.bundles),
        "budget_s": None if args.budget_s is None else _float("--budget-s", args.budget_s,
                                                              positive=True),
        "seed": _int("--seed", args.seed, 0),
        "max_exhaustive": _int("--max-exhaustive", args.max_exhaustive, 0),
        "sharing": bool(getattr(args, "sharing", False)),
        "max_imbalance_pct": _limit("--max-imbalance-pct",
                                    getattr(args, "max_imbalance_pct", None)),
        "max_induced_mv_per_m": _limit("--max-induced-mv-per-m",
                                       getattr(args, "max_induced_mv_per_m", None)),
    }


def _limit(name: str, text: str | None) -> float:
    """A constraint limit; none given = inf (the figure is listed, nothing is excluded)."""
    return math.inf if text is None else _float(name, text, positive=True)


def compute(layout: Layout, *, distance_mm: float, top_k: int, objective: str | None,
            slots: str | None, bundles: bool, budget_s: float | None, seed: int,
            max_exhaustive: int = DEFAULT_MAX_EXHAUSTIVE, sharing: bool = False,
            max_imbalance_pct: float = math.inf, max_induced_mv_per_m: float = math.inf,
            progress: Callable[[float, str], None] | None = None,
            cancel: Callable[[], bool] | None = None) -> RankResult:
    """One ranking run (the engine call shared by single and batch runs).

    Every option lists its current imbalance and victim EMF (when the layout has parallel
    conductors or victim loops); finite limits also exclude options.
    """
    from trayadvisor.coupling.constraints import imbalance_constraint, induced_voltage_constraint

    constraints = []
    if not math.isinf(max_imbalance_pct):
        constraints.append(imbalance_constraint(max_imbalance_pct))
    if not math.isinf(max_induced_mv_per_m):
        constraints.append(induced_voltage_constraint(max_induced_mv_per_m, sharing=sharing))
    return rank_layout(layout, distance_mm=distance_mm, top_k=top_k, objective=objective,
                       slots=slots, bundles=bundles, max_exhaustive=max_exhaustive,
                       budget_s=budget_s, seed=seed, constraints=tuple(constraints),
                       sharing=sharing, progress=progress, cancel=cancel)


def render(path: str, layout: Layout, r: RankResult) -> str:
    """The human-readable ranking: summary, options table, sketches now and of option 1."""
    done = f"{r.evaluated:,}" + (f" of {r.distinct:,} distinct" if r.distinct else "")
    exact = "; top options exact" if r.certified else ""
    rows = [f"{path}: {layout.title or '(untitled)'}",
            f"  objective: {r.objective}; {r.method}: {done} arrangements evaluated in "
            f"{r.elapsed_s:.1f} s{exact}",
            f"  now (arrangement in the file): {fmt_ut(r.baseline_uT)} µT",
            f"  {'rank':>4}  {'µT':>9}  {'reduction':>9}  {'dB':>6}  far field"]
    for o in r.options:
        db = "inf" if math.isinf(o.reduction_db) else f"{o.reduction_db:.1f}"
        figs = "".join(f"  {k} {v:.3g}" for k, v in o.figures.items())
        rows.append(f"  {o.rank:>4}  {fmt_ut(o.max_resultant_uT):>9}  "
                    f"{o.reduction_pct:>7.1f} %  {db:>6}  "
                    f"{decay_text(o.far_field_order, short=True, none='-')}"
                    f"{figs}")
    rows.append("  now:")
    rows += ["    " + ln for ln in sketch(layout, r.baseline_positions).splitlines()]
    if r.options:
        rows.append("  option 1:")
        rows += ["    " + ln for ln in r.options[0].sketch.splitlines()]
    rows += [f"  note: {n}" for n in r.notes]
    rows.append(CAUTION_LINE)
    return "\n".join(rows)


class _Progress:
    """Progress on stderr once a run has taken more than a second; Ctrl-C sets ``stop``."""

    def __init__(self) -> None:
        self.t0 = time.perf_counter()
        self.last = 0.0
        self.tty = bool(getattr(sys.stderr, "isatty", lambda: False)())
        self.shown = False
        self.stop = False

    def __call__(self, fraction: float, message: str) -> None:
        now = time.perf_counter()
        if now - self.t0 < 1.0 or (not self.tty and now - self.last < 1.0):
            return
        self.last, self.shown = now, True
        text = f"{PREFIX}: {100 * fraction:3.0f} %  {message}"
        if self.tty:
            sys.stderr.write("\r" + text[:120].ljust(120))
        else:
            sys.stderr.write(text + "\n")
        sys.stderr.flush()

    def done(self) -> None:
        if self.tty and self.shown:
            sys.stderr.write("\r" + " " * 120 + "\r")
            sys.stderr.flush()

    def interrupt(self, signum: int, frame: object) -> None:
        if self.stop:
            raise KeyboardInterrupt
        self.stop = True
        sys.stderr.write(f"\n{PREFIX}: stopping; keeping the best found so far "
                         "(Ctrl-C again to abort)\n")


def _check_out(out: str | None, apply: int | None) -> None:
    if apply is not None and out is None:
        raise _fail(f"--apply {apply}: needs --out NEW.toml (the layout to write)")
    if out is None:
        return
    ext = Path(out).suffix.lower()
    if apply is not None and ext != ".toml":
        raise _fail(f"--out {out}: with --apply the output is a layout; name a .toml file")
    if apply is None and ext not in (".csv", ".json", ".md", ".markdown"):
        hint = " (to write a layout, add --apply N)" if ext == ".toml" else ""
        raise _fail(f"--out {out}: unknown extension '{ext or '(none)'}'; use .csv, .json or "
                    f".md{hint}")
    folder = Path(out).parent
    if not (folder if str(folder) else Path(".")).is_dir():
        raise _fail(f"--out {out}: folder {folder} does not exist")


def run(args: argparse.Namespace) -> int:
    opts = options(args)
    apply = None if args.apply is None else _int("--apply", args.apply, 1)
    from trayadvisor.batch import expand_inputs

    files = expand_inputs(args.files)
    if len(files) != 1 or Path(args.files[0]).is_dir():
        if apply is not None:
            raise _fail(f"--apply {apply}: works on one FILE, not a batch")
        from trayadvisor.cli.batch_runs import run_batch

        return run_batch("rank", files, opts, args)
    _check_out(args.out, apply)
    layout = load(files[0])
    if apply is not None:
        opts["top_k"] = max(opts["top_k"], apply)
    prog = _Progress()
    main_thread = threading.current_thread() is threading.main_thread()
    old = signal.signal(signal.SIGINT, prog.interrupt) if main_thread else None
    try:
        result = compute(layout, **opts, progress=prog, cancel=lambda: prog.stop)
    except RankError as err:
        raise _fail(str(err)) from None
    finally:
        if main_thread:
            signal.signal(signal.SIGINT, old)
        prog.done()
    _write(args.out, apply, layout, result, files[0], bool(args.json))
    if args.json:
        print_json(result.to_json())
    else:
        print(render(files[0], layout, result))
    return 0


def _write(out: str | None, apply: int | None, layout: Layout, result: RankResult,
           path: str, as_json: bool) -> None:
    if out is None:
        return
    stream = sys.stderr if as_json else sys.stdout
    try:
        if apply is not None:
            if apply > len(result.options):
                raise _fail(f"--apply {apply}: only {len(result.options)} option(s) were "
                            f"found; choose 1 to {len(result.options)}")
            from trayadvisor.layoutfile.reader import LayoutError, validate_layout, write_layout
            from trayadvisor.ranking.rank import apply_option

            opt = result.options[apply - 1]
            new = apply_option(layout, opt)
            try:
                validate_layout(new, out)
            except LayoutError as err:
                raise _fail(f"--apply {apply}: the option does not give a valid layout "
                            f"({err.message})") from None
            write_layout(new, out)
            print(f"wrote {out}: {path} with option {apply} "
                  f"({fmt_ut(opt.max_resultant_uT)} µT, {opt.reduction_pct:.1f} % lower)",
                  file=stream)
            return
        from trayadvisor.output.exports import write_result

        fmt = write_result(result, out, layout, layout.title)
        print(f"wrote {out}: {len(result.options)} option(s) as {fmt}", file=stream)
    except OSError as exc:
        raise _fail(f"--out {out}: cannot write ({exc.strerror or exc})") from None
