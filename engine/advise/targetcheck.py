"""One target judged: the record every target check returns, whatever the figure."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class TargetCheck:
    """One target judged on the exact figures, with the estimate's verdict beside it.

    Attributes
    ----------
    key : str
        The target's key: ``"f_high_min"``, ``"f_low_max"``, ``"gain"``, or a time target
        (``"rise_time_max"``, ``"overshoot_max"``, ``"settling_time_max"``).
    target_text : str
        The target as shown, e.g. ``"f_H ≥ 1 MHz"``.
    exact : float or None
        The exact figure (Hz; |A_m| in V/V; s for a rise or settling time; a fraction of the
        final value for the overshoot); None where there is no such figure.
    estimate : float or None
        The time-constant estimate of the same figure, same unit; for the gain, the same as exact.
    passed : bool
        Whether the exact figure meets the target.
    margin : float or None
        How far inside (positive) or outside (negative) the target the exact figure is:
        a fraction of the target for a corner or a time figure, dB for the gain; None where
        there is no corner.
    estimate_passed : bool or None
        What the estimate would have said; None where there is no estimate.
    text : str
        The verdict line, e.g. ``"f_H = 1.2 MHz ≥ 1 MHz: pass by 20 % (the estimate, 950 kHz,
        would have said fail)"``.
    """

    key: str
    target_text: str
    exact: float | None
    estimate: float | None
    passed: bool
    margin: float | None
    estimate_passed: bool | None
    text: str
