"""`python -m sub60.app ...`: the sub60 command line.

BLAS threads are limited by the physics only while a solve runs (`physics/_threads.py`),
so nothing here changes the process.
"""

import sys

from sub60.app.console import main

sys.exit(main())
