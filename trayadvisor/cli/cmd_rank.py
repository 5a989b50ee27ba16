"""``trayadvisor rank FILE``: rank arrangements of the movable conductors by stray field."""

from __future__ import annotations

import argparse
import math
import signal
import sys
import threading
import time
from pathlib import Path

from trayadvisor.batch import expand_inputs
from trayadvisor.cli.batch_runs import run_batch
from trayadvisor.cli.common import UserError, add_temperature, current_model, load, print_json
from trayadvisor.engine import DEFAULT_DISTANCE_MM
from trayadvisor.layoutfile import LayoutError, validate_layout, write_layout
from trayadvisor.model import Layout
from trayadvisor.output import CAUTION_LINE, decay_text, fmt_fixed, fmt_uT, write_result
from trayadvisor.ranking import (
    DEFAULT_MAX_EXHAUSTIVE,
    SLOT_RULES,
    RankError,
    RankResult,
    apply_option,
    check_rank_options,
    rank_layout,
    sketch_text,
)

PREFIX = "trayadvisor rank"

#: The flag of each keyword argument of :func:`trayadvisor.ranking.rank_layout`, for errors.
FLAGS: dict[str, str] = {
    "distance_mm": "--distance-mm", "top_k": "--top", "objective": "--objective",
    "slots": "--slots", "bundles": "--bundles", "budget_s": "--budget-s", "seed": "--seed",
    "max_exhaustive": "--max-exhaustive", "currents": "--equal-shares",
    "max_imbalance_pct": "--max-imbalance-pct",
    "max_induced_mV_per_m": "--max-induced-mv-per-m", "temperature_c": "--temperature-c",
}


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
    p.add_argument("--objective", default=None,
                   metavar="limits|contour|line:NAME|point:NAME",
                   help="what to minimise: the worst index of the limits bound to places "
                   "(the default when the layout has such limits), the AC field on the "
                   "contour at --distance-mm (the default otherwise), or on a named "
                   "observation line or point")
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
    p.add_argument("--equal-shares", action="store_true",
                   help="score options with equal shares between parallel conductors "
                   "(default: each arrangement's solved sharing)")
    p.add_argument("--sharing", action="store_true",
                   help="solved current sharing (the default; kept for scripts)")
    add_temperature(p)
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


def flag_error(err: RankError, given: dict[str, str] | None = None) -> UserError:
    """A core ranking error in the words of the command line: its flag and the text typed."""
    if err.parameter is None:
        return _fail(err.reason)
    flag = FLAGS.get(err.parameter, err.parameter)
    text = (given or {}).get(err.parameter)
    if text is None:
        text = "" if isinstance(err.value, bool) else str(err.value)
    return _fail(f"{flag}{' ' + text if text else ''}: {err.reason}")


def _int(name: str, text: str) -> int:
    try:
        return int(str(text).strip())
    except ValueError:
        raise _fail(f"{name} {text}: must be a whole number") from None


def _float(name: str, text: str) -> float:
    try:
        return float(str(text).strip())
    except ValueError:
        raise _fail(f"{name} {text}: must be a number") from None


def options(args: argparse.Namespace) -> dict:
    """Keyword arguments for :func:`trayadvisor.ranking.rank_layout`, checked by the core
    (:func:`trayadvisor.ranking.check_rank_options`); single and batch runs make the same
    call."""
    imbalance = getattr(args, "max_imbalance_pct", None)
    induced = getattr(args, "max_induced_mv_per_m", None)
    given = {"distance_mm": args.distance_mm, "top_k": args.top, "objective": args.objective,
             "slots": args.slots, "budget_s": args.budget_s, "seed": args.seed,
             "max_exhaustive": args.max_exhaustive, "max_imbalance_pct": imbalance,
             "max_induced_mV_per_m": induced, "temperature_c": args.temperature_c}
    opts = {
        "distance_mm": _float("--distance-mm", args.distance_mm),
        "top_k": _int("--top", args.top),
        "objective": args.objective,
        "slots": args.slots,
        "bundles": bool(args.bundles),
        "budget_s": None if args.budget_s is None else _float("--budget-s", args.budget_s),
        "seed": _int("--seed", args.seed),
        "max_exhaustive": _int("--max-exhaustive", args.max_exhaustive),
        "currents": current_model(args),
        "temperature_c": args.temperature_c,
        # a limit not given = inf: the figure is listed, nothing is excluded
        "max_imbalance_pct": math.inf if imbalance is None
        else _float("--max-imbalance-pct", imbalance),
        "max_induced_mV_per_m": math.inf if induced is None
        else _float("--max-induced-mv-per-m", induced),
    }
    try:
        check_rank_options(**opts)
    except RankError as err:
        raise flag_error(err, {k: str(v) for k, v in given.items() if v is not None}) from None
    return opts


def _number(v: float, unit: str) -> str:
    return fmt_uT(v) if unit == "µT" else f"{v:.4g}"


def _value(v: float, unit: str) -> str:
    """A ranking figure with its unit: '12.3 µT' or 'index 0.84 (pass)'."""
    if unit == "µT":
        return f"{fmt_uT(v)} µT"
    return f"index {v:.4g} ({'pass' if v <= 1.0 else 'FAIL'}: worst place-bound limit)"


def render(path: str, layout: Layout, r: RankResult) -> str:
    """The human-readable ranking: summary, options table, sketches now and of option 1."""
    done = f"{r.evaluated:,}" + (f" of {r.distinct:,} distinct" if r.distinct else "")
    exact = "; top options exact" if r.certified else ""
    rows = [f"{path}: {layout.title or '(untitled)'}",
            f"  objective: {r.objective}; {r.method}: {done} arrangements evaluated in "
            f"{r.elapsed_s:.1f} s{exact}",
            f"  now (arrangement in the file): {_value(r.baseline_uT, r.unit)}",
            f"  {'rank':>4}  {r.unit:>9}  {'reduction':>9}  {'dB':>6}  far field"]
    for o in r.options:
        db = fmt_fixed(o.reduction_db)
        figs = "".join(f"  {k} {v:.3g}" for k, v in o.figures.items())
        tags = ("  WORSE than now" if o.versus_now == "worse" else
                "  same as now" if o.versus_now == "same" else "")
        if o.same_as is not None:
            tags += f"  equivalent to option {o.same_as}"
        rows.append(f"  {o.rank:>4}  {_number(o.max_resultant_uT, r.unit):>9}  "
                    f"{fmt_fixed(o.reduction_pct):>7} %  {db:>6}  "
                    f"{decay_text(o.far_field_order, short=True, none='-')}"
                    f"{figs}{tags}")
    rows.append("  now:")
    rows += ["    " + ln for ln in sketch_text(layout, r.baseline_positions).splitlines()]
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
    apply = None if args.apply is None else _int("--apply", args.apply)
    if apply is not None and apply < 1:
        raise _fail(f"--apply {args.apply}: must be at least 1")
    files = expand_inputs(args.files)
    if len(files) != 1 or Path(args.files[0]).is_dir():
        if apply is not None:
            raise _fail(f"--apply {apply}: works on one FILE, not a batch")
        return run_batch("rank", files, opts, args)
    _check_out(args.out, apply)
    layout = load(files[0])
    if apply is not None:
        opts["top_k"] = max(opts["top_k"], apply)
    prog = _Progress()
    main_thread = threading.current_thread() is threading.main_thread()
    old = signal.signal(signal.SIGINT, prog.interrupt) if main_thread else None
    try:
        result = rank_layout(layout, **opts, progress=prog, cancel=lambda: prog.stop)
    except RankError as err:
        raise flag_error(err) from None
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
            opt = result.options[apply - 1]
            new = apply_option(layout, opt)
            try:
                validate_layout(new, out)
            except LayoutError as err:
                raise _fail(f"--apply {apply}: the option does not give a valid layout "
                            f"({err.message})") from None
            write_layout(new, out)
            print(f"wrote {out}: {path} with option {apply} "
                  f"({_value(opt.max_resultant_uT, result.unit)}, "
                  f"{fmt_fixed(opt.reduction_pct)} % lower)",
                  file=stream)
            return
        fmt = write_result(result, out, layout, layout.title)
        print(f"wrote {out}: {len(result.options)} option(s) as {fmt}", file=stream)
    except OSError as exc:
        raise _fail(f"--out {out}: cannot write ({exc.strerror or exc})") from None
