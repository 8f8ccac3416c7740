"""The Bode plot in matplotlib, for a notebook: the window's curves (exact, and the estimates
over their halves of the band), its corner markers and colours, drawn from
:func:`bandsketch.engine.present.plotdata.bode_data`.

matplotlib is optional (``pip install bandsketch[plot]``); it is imported only when a plot is drawn.
"""

from __future__ import annotations

from ..core.colours import LIGHT
from .plotdata import bode_data


def plot_bode(analysis, ax=None, span_hz: tuple | None = None):
    """Draw the Bode plot of ``analysis`` with matplotlib.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    ax : matplotlib Axes, or a pair of them, optional
        Where to draw: one Axes takes the magnitude only, a pair (magnitude, phase) both;
        None makes a new figure with the magnitude over the phase.
    span_hz : (float, float), optional
        The sweep, Hz (lowest, highest); None spans the window's default.

    Returns
    -------
    tuple of matplotlib Axes
        (magnitude,) or (magnitude, phase).

    Raises
    ------
    ImportError
        matplotlib is not installed.
    """
    try:
        import matplotlib.pyplot as plt
    except ImportError:
        raise ImportError("plot_bode needs matplotlib, which Bandsketch does not install: "
                          "pip install bandsketch[plot] (or matplotlib)") from None
    data = bode_data(analysis, span_hz)
    if ax is None:
        _, axes = plt.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 2]}, figsize=(7, 4.5))
        axes = tuple(axes)
    elif isinstance(ax, (tuple, list)):
        axes = tuple(ax)
    else:
        axes = (ax,)
    c = LIGHT
    curves = ((data.exact, c.ink, "-", "exact"), (data.high_estimate, c.band_high, "--", "A_m/(1 + jω b1)"),
              (data.low_estimate, c.band_low, "--", "A_m·s/(s + ω_L)"))
    for values, panel in (("magnitude_db", axes[0]), ("phase_deg", axes[1] if len(axes) > 1 else None)):
        if panel is None:
            continue
        for curve, colour, style, label in curves:
            if curve is not None:
                panel.semilogx(curve.freq_hz, getattr(curve, values), style, color=colour, label=label)
        panel.grid(True, which="both", alpha=0.3)
    mag = axes[0]
    for m in data.markers:
        colour = c.band(m.corner) if m.estimated else c.ink
        mag.plot([m.freq_hz], [m.level_db], "o", color=colour)
        mag.annotate(m.text, (m.freq_hz, m.level_db), textcoords="offset points",
                     xytext=(0, 8 if m.estimated else -14), ha="center", color=colour, fontsize=8)
    mag.set_ylim(*data.magnitude_view_db)
    mag.set_ylabel(data.gain_axis)
    mag.legend(fontsize=8, loc="lower center")
    if len(axes) > 1:
        axes[1].set_ylim(*data.phase_view_deg)
        axes[1].set_ylabel("Phase (°)")
    axes[-1].set_xlabel("Frequency (Hz)")
    return axes
