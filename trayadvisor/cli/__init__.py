"""Command-line front end: argument parsing and output only; no physics here.

- :mod:`~trayadvisor.cli.main` — the parser, one ``cmd_NAME`` module per command, exit
  statuses (0, or 2 with one ``FILE:LINE: message`` line for bad input).
- ``cmd_check``, ``cmd_field``, ``cmd_rank``, ``cmd_couple``, ``cmd_report``, ``cmd_limits``:
  each turns its flags into the keyword arguments of one core call and prints the result;
  ``cmd_edit`` validates the options of the terminal UI, which :mod:`trayadvisor.launcher`
  starts (the CLI never imports the UI).
- :mod:`~trayadvisor.cli.batch_runs` — ``field`` and ``rank`` on several files, in parallel.
- :mod:`~trayadvisor.cli.common` — loading layouts, ``UserError``, JSON printing.

The engines do many small matrix products (chunks of field points, blocks of arrangements).
A multi-threaded BLAS wakes its worker threads for each of them and measured 3–6× slower
than one thread on a 2-core machine (bench/bench_rank.py, bench/bench_field.py), so the
entry points ask for one BLAS thread unless the user chose otherwise. This must happen
before numpy is first imported, hence here, before anything else is imported.
"""

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

from trayadvisor.cli.common import UserError  # noqa: E402
from trayadvisor.cli.main import guarded, main, parse_args, run, ui_options, wants_ui  # noqa: E402

__all__ = ["UserError", "guarded", "main", "parse_args", "run", "ui_options", "wants_ui"]
