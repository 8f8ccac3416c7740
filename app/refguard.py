"""A guard against a reference-count fault in shiboken6 6.12 on CPython 3.11.

With PySide6/shiboken6 6.12.0 on CPython 3.11, every emission of a signal to a Python slot
releases one reference to ``True`` that it never took. ``True`` is an ordinary object
there, so after a few thousand emissions (a minute of moving the mouse over a plot) its
count reaches zero and the interpreter aborts with "deallocating True or False". CPython
3.12 made ``True`` and ``False`` immortal (PEP 683), where the fault is harmless.

:func:`guard_bool_refcounts` gives both singletons a reserve of references that no run
can use up. It touches nothing else and does nothing on interpreters that do not need it.
"""

from __future__ import annotations

import ctypes
import sys

RESERVE = 1 << 40
"""References added to each guarded singleton: more than any session can use up."""

_guarded = False


def needs_guard() -> bool:
    """Whether True and False are mortal objects here (CPython before 3.12)."""
    return sys.implementation.name == "cpython" and sys.version_info < (3, 12)


def guard_bool_refcounts() -> None:
    """Add :data:`RESERVE` references to True and False once, where they are mortal."""
    global _guarded
    if _guarded or not needs_guard():
        return
    for singleton in (True, False, None):
        # ob_refcnt is the first field of every CPython object.
        ctypes.c_ssize_t.from_address(id(singleton)).value += RESERVE
    _guarded = True
