"""A picture of the design report: its SVG and how wide it is printed, and the HTML that holds
it in a self-contained file (a PDF writer puts its own rendering in its place)."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ReportFigure:
    """One picture of the report.

    Attributes
    ----------
    key : str
        ``"schematic"``, ``"bode"``, ``"bars"`` or ``"step"``.
    title : str
        What it shows, in words (its alternative text).
    svg : str
        The picture, a complete ``<svg>`` element sized in CSS pixels.
    width_mm : float
        How wide it is printed, mm (a PDF writer's layout; a browser scales it to the page).
    """

    key: str
    title: str
    svg: str
    width_mm: float


def inline_svg(figure: ReportFigure) -> str:
    """The HTML of ``figure`` in a self-contained file: its SVG, inline.

    Parameters
    ----------
    figure : ReportFigure
    """
    return f"<figure>{figure.svg}</figure>"
