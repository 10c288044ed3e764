"""`python -m sub60.app ...`: the sub60 command line, with one BLAS thread per process.

The banded Poisson solves run steadier on one BLAS thread, and the explorer runs its
own worker threads; the limit must be set before numpy is first imported.
"""

import os
import sys

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

from sub60.app.cli import main  # noqa: E402

sys.exit(main())
