"""The engine's linear algebra on one thread while it works.

OpenBLAS threads a matrix product or a triangular solve from a few thousand multiply-adds,
and SuperLU calls it inside every sparse factorisation. With two such threads per call on
a machine whose cores are already busy (the sweep shares its frequencies among the cores;
a window has its interface thread beside the analysis) the calls stall for milliseconds:
the 10,000-capacitor sensor mesh took 10.1 s to analyse with OpenBLAS on two threads and
3.6 s on one. The limit holds only while :func:`one_blas_thread` is entered and is then put
back as it was, so a notebook's own numpy work keeps its threads.
"""

from __future__ import annotations

import functools
from contextlib import contextmanager


@functools.lru_cache(maxsize=1)
def _controller():
    # Built on first use, once numpy's and scipy's OpenBLAS are both loaded: it finds the
    # libraries by walking those loaded (about 2 ms), after which a limit costs microseconds.
    from threadpoolctl import ThreadpoolController

    return ThreadpoolController()


@contextmanager
def one_blas_thread():
    """Run the enclosed work with every loaded BLAS library on one thread."""
    with _controller().limit(limits=1, user_api="blas"):
        yield
