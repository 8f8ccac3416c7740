"""Bandsketch desktop application (Qt): views and editing commands over the engine's document.

Importing it keeps the linear-algebra library (OpenBLAS) on one thread unless the user has
chosen otherwise, which takes effect only when nothing has imported numpy yet (the command
line and the benchmarks import this package first). The application's matrices are small: a
product of a few hundred rows by a dozen columns was handed to two threads, and with the
interface thread and the analysis worker already on both cores it took 8 ms instead of
3 µs, often enough to double an edit's time on screen. The one wide job, a large network's
sweep, shares its frequencies among the cores itself.
"""

import os

for _name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_name, "1")
