"""The whole effect of a design as it stands: corners, gain, bias and every target's verdict.

A suggestion is judged the way a designer would judge it: write the value in, analyse the
design again from the sheet (which re-derives everything the sheet implies, the bias
included), and read every figure against every target. :func:`effect_of` does exactly that
for one document; :func:`log_margin` puts the margins of corners and gain on one scale.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.errors import CircuitError
from ..design.netlist import design_to_circuit
from ..network.largesignal import AMPLIFYING_REGION
from ..solve.analysis import analyze
from .targets import Targets, check_targets



@dataclass(frozen=True)
class DeviceBias:
    """One transistor's bias as solved for this design.

    Attributes
    ----------
    name : str
        The device (``"Q1"``).
    region : str
        Its region as the bias solver names it.
    ok : bool
        Whether that is the region a small-signal amplifier needs.
    text : str
        A short line for a table (``"Q1 forward active"``).
    """

    name: str
    region: str
    ok: bool
    text: str


@dataclass(frozen=True)
class Effect:
    """A design's exact figures and its verdict against every target.

    Attributes
    ----------
    f_high, f_low : float or None
        Exact upper and lower −3 dB corners, Hz; None where the gain never falls 3 dB.
    gain : float
        Mid-band gain, signed (``gain_unit``).
    gain_unit : str
        ``"V/V"`` or ``"V/A"``.
    checks : tuple of bandsketch.engine.advise.targets.TargetCheck
        Every target, judged on the exact figures.
    devices : tuple of DeviceBias
        Each transistor's bias, when the design is biased from the sheet; empty otherwise.
    problem : str
        Why the design cannot be analysed ("" when it can; the figures are then NaN).
    """

    f_high: float | None
    f_low: float | None
    gain: float
    gain_unit: str
    checks: tuple
    devices: tuple
    problem: str = ""

    @property
    def failing(self) -> tuple:
        """Keys of the targets not met."""
        return tuple(c.key for c in self.checks if not c.passed)

    @property
    def out_of_region(self) -> tuple:
        """Names of the transistors pushed out of their amplifying region."""
        return tuple(d.name for d in self.devices if not d.ok)

    @property
    def meets_all(self) -> bool:
        """Whether it analyses, meets every target and keeps every transistor in its region."""
        return not self.problem and not self.failing and not self.out_of_region

    @property
    def worst_margin(self) -> float:
        """The smallest :func:`log_margin` over the targets (+inf with no targets)."""
        if self.problem:
            return -math.inf
        return min((log_margin(c) for c in self.checks), default=math.inf)


def log_margin(check) -> float:
    """A target's margin as a natural log ratio, so corners and gain compare.

    Positive inside the target: ln(f_H / f_H,min), ln(f_L,max / f_L), or the gain's distance
    in dB to the nearer edge of its window converted to nepers (dB·ln 10 / 20). A missing
    corner (the gain never falls 3 dB there) meets its target by a wide margin.

    Parameters
    ----------
    check : bandsketch.engine.advise.targets.TargetCheck
        A judged target; its ``margin`` is a fraction for a corner, dB for the gain.
    """
    if check.margin is None:
        return 10.0
    if check.key == "gain":
        return check.margin * math.log(10) / 20
    return math.log1p(check.margin) if check.margin > -1 else -math.inf


def _devices(analysis, doc) -> tuple:
    # The operating point exists once the design biases a transistor from the sheet.
    point = getattr(analysis, "operating_point", None)
    if point is None:
        return ()
    out = []
    for name, bias in point.devices.items():
        region = str(getattr(bias, "region", ""))
        part = doc.parts.get(name)
        ok = part is not None and region == AMPLIFYING_REGION.get(part.kind)
        out.append(DeviceBias(name, region, ok, f"{name} {region}"))
    return tuple(out)


def effect_of(doc, targets: Targets) -> Effect:
    """Analyse ``doc`` exactly, from the sheet, and judge it against ``targets``.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    targets : Targets

    Returns
    -------
    Effect
        With ``problem`` set (and NaN figures) when the design cannot be analysed.
    """
    try:
        analysis = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    except CircuitError as exc:
        return Effect(math.nan, math.nan, math.nan, "V/V", (), (), exc.message)
    return effect_of_analysis(analysis, targets, doc)


def effect_of_analysis(analysis, targets: Targets, doc) -> Effect:
    """:func:`effect_of` for an analysis of ``doc`` already made.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
        An analysis of ``doc``.
    targets : bandsketch.engine.advise.targets.Targets
        The targets, SI units (Hz; the gain in V/V, Ω for a current input).
    doc : bandsketch.engine.design.document.Document
        The design analysed (for its devices' bias regions).
    """
    return Effect(analysis.f_high_exact, analysis.f_low_exact, float(analysis.midband_gain), analysis.gain_unit,
                  check_targets(targets, analysis, analysis.gain_unit), _devices(analysis, doc))
