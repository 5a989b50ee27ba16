"""Command-line front end: argument parsing and output only; no physics here.

The engines do many small matrix products (chunks of field points, blocks of arrangements).
A multi-threaded BLAS wakes its worker threads for each of them and measured 3–6× slower
than one thread on a 2-core machine (bench/bench_rank.py, bench/bench_field.py), so the
entry points ask for one BLAS thread unless the user chose otherwise. This must happen
before numpy is first imported, hence here.
"""

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")
