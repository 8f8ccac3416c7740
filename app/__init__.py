"""Bandsketch desktop application (Qt): views and editing commands over the engine's document.

Importing it sets two process-wide choices, each only where the user has not set it:

- the linear-algebra library (OpenBLAS) stays on one thread. It takes effect only when
  nothing has imported numpy yet (the command line and the benchmarks import this package
  first). The application's matrices are small: a product of a few hundred rows by a dozen
  columns was handed to two threads and, with the interface thread and the analysis worker
  already on both cores, took 8 ms instead of 3 µs, often enough to double an edit's time on
  screen. The engine's ``analyze`` holds this limit itself while it works
  (:func:`bandsketch.engine.core.threads.one_blas_thread`); here it also covers what the views
  derive from an analysis afterwards (the plotted sweep, the sensitivities).
- Qt's software painter does not hand its fills to a thread pool. It passes every fill of
  more than about a hundred spans to one, which a one-pixel grid line or wire across a view
  is, and the hand-over costs more than the line (measured: the Bode plot's axes re-ticked
  in 8.5 ms with the pool, 5.9 ms without). Qt reads it when the pool is first wanted, at
  the first paint.
"""

import os

for _name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS", "QT_NO_GUI_THREADPOOL"):
    os.environ.setdefault(_name, "1")
