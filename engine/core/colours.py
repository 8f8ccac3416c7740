"""The colours every picture is drawn in, light and dark: the one source for the window (the app
makes its Qt colours of these) and for the report and the exported figures, so a band reads in
the same colour on the sheet, on the bars and in a review's PDF.

Accents come from the Okabe–Ito set, which stays distinguishable under the common forms of
colour blindness; the ink and paper tones are our own.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Palette:
    """Every colour, as ``#rrggbb`` text.

    Attributes
    ----------
    dark : bool
        Light ink on dark paper.
    paper, grid, ink, wire, label, value : str
        The sheet and plot background, grid lines, symbols and the exact curve, wires, part
        names, part values (and muted text).
    selection, hover, problem, input : str
        Accents: what is selected, what the pointer is over, a fault, the signal input.
    band_low, band_high : str
        The lower-corner band and the upper-corner band (bars, estimates, pins).
    ghost : str
        Neutral elements and anything greyed out.
    """

    dark: bool
    paper: str
    grid: str
    ink: str
    wire: str
    label: str
    value: str
    selection: str
    hover: str
    problem: str
    input: str
    band_low: str
    band_high: str
    ghost: str

    def band(self, band: str) -> str:
        """The colour of ``band`` (``"high"``, ``"low"``; the ghost colour for any other).

        Parameters
        ----------
        band : str
            A :class:`bandsketch.engine.core.band.Band` or its word.
        """
        return {"high": self.band_high, "low": self.band_low}.get(str(band), self.ghost)


LIGHT = Palette(
    dark=False, paper="#fbfaf6", grid="#c4c1b8", ink="#1d232b", wire="#2b5d7c", label="#1d232b",
    value="#4b5563", selection="#e69f00", hover="#56b4e9", problem="#d55e00", input="#009e73",
    band_low="#cc79a7", band_high="#0072b2", ghost="#7d8793",
)
DARK = Palette(
    dark=True, paper="#1c2026", grid="#3b424c", ink="#e4e7eb", wire="#8fbcd6", label="#e4e7eb",
    value="#aab3bd", selection="#e69f00", hover="#56b4e9", problem="#ff7b3a", input="#2fc497",
    band_low="#e08fbe", band_high="#4aa3e0", ghost="#8a939e",
)
