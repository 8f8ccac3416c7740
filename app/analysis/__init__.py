"""The analysis views beside the canvas: time-constant bars, Bode plot, verdict, test picture."""

from app.refguard import guard_bool_refcounts

# The views emit and receive signals continuously (hover, redraws); on CPython 3.11 with
# shiboken6 6.12 each emission would wear down the refcounts of True and None until the
# interpreter aborts (see app.refguard).
guard_bool_refcounts()
