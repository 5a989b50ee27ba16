"""Test-wide settings: one BLAS thread, as the command-line entry points use.

Set before numpy is imported by any test module (see trayadvisor/cli/__init__.py for why).
"""

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")
