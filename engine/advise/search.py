"""Meeting every target at once: a search over two or three knobs together.

One knob at a time can trade one target for another (a smaller collector resistor buys
f_H with gain). :func:`search` tries every combination of standard values of two or three
knobs: each knob's E-series values within :data:`SPAN_DECADES` decades of its present
value, thinned to at most :data:`MAX_VALUES` per knob. Every combination is screened on
the fast batched analysis (:func:`bandsketch.engine.advise.tolerance.exact_figures`: the
exact corners and gain of the nodal equations with the nominal bands, all combinations
solved together); the best few are then written into the design and analysed again from
the sheet, bias included, and only that full analysis decides. The answer is the
combination that meets every target with the most margin, or the one that comes closest
with what it still misses, or a plain statement that no combination in reach can.

:func:`_propose_knobs` picks the pair when the designer does not: the two knobs whose
sensitivities to the targets (failing ones weighted first) move them most independently.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np

from ..core.errors import Cancelled, CircuitError
from ..core.values import format_value
from ..design.netlist import design_to_circuit
from ..solve.analysis import analyze
from . import eseries
from .effect import effect_of, effect_of_analysis, log_margin
from .knobs import Knob, knobs
from .sensitivity import sensitivities
from .suggest import YIELD_SAMPLES, Change, Suggestion, apply_changes, change_text, verdict_line, yield_of
from .targets import Targets
from .timetargets import time_figure
from .tolerance import exact_figures

SPAN_DECADES = 1.0
"""Each knob is searched from a tenth to ten times its present value."""
MAX_VALUES = 25
"""At most this many values per knob (every k-th series value beyond): 25³ ≈ 16,000
combinations for three knobs, a few seconds of batched solves."""
VERIFY = 12
"""How many of the best screened combinations are analysed again in full."""
_FIGURE_OF = {"f_high_min": ("high_exact", 1.0), "f_low_max": ("low_exact", 1.0), "gain": ("gain", 1.0),
              # A rise or a settling time scales as 1/f_H where one pole leads (t_r ≈ 0.35/f_H,
              # common practice, no source): the screen's proxy, confirmed by the full analysis.
              "rise_time_max": ("high_exact", -1.0), "settling_time_max": ("high_exact", -1.0)}
"""Target key -> (sensitivity row attribute, sign) of the figure the target reads; the
overshoot has no first-order proxy and does not steer the screen."""


def _sensitivity(row, key: str) -> float:
    attr, sign = _FIGURE_OF.get(key, (None, 0.0))
    return sign * (getattr(row, attr) or 0.0) if attr else 0.0


@dataclass(frozen=True)
class SearchResult:
    """The outcome of a search over several knobs.

    Attributes
    ----------
    knobs : tuple of Knob
        The knobs searched.
    ranges : tuple of (float, float)
        Lowest and highest value tried per knob, SI units.
    combinations : int
        How many combinations were screened.
    best : Suggestion or None
        The combination meeting every target with the most margin or, when none does, the
        one closest (by its worst margin); None when no combination could be analysed.
    found : bool
        Whether ``best`` meets every target (exactly, from the sheet).
    text : str
        What was found, in words: the values and their verdict, or that no combination of
        the chosen knobs in their ranges meets the targets, and what the closest misses.
    """

    knobs: tuple
    ranges: tuple
    combinations: int
    best: Suggestion | None
    found: bool
    text: str


def _values(knob: Knob, span: float, limit: int) -> np.ndarray:
    x0 = abs(knob.nominal)
    lo, hi = x0 / 10 ** span, x0 * 10 ** span
    if knob.standard:
        vals = eseries.values_between(knob.series, lo, hi)
    else:
        vals = np.array([float(f"{v:.3g}") for v in np.geomspace(lo, hi, limit)])
    if vals.size > limit:
        # Keep the present value's neighbourhood evenly: every k-th value, both ends kept.
        vals = vals[np.unique(np.round(np.linspace(0, vals.size - 1, limit)).astype(int))]
    return vals


def _margins(targets: Targets, analysis, fh, fl, gain, nominal_times=None) -> np.ndarray:
    """Per combination, the worst natural-log margin over the targets.

    A NaN corner is "none found near the nominal one": a failure, unless the nominal design
    has no such corner at all (a d.c.-coupled stage's f_L), which meets its target.
    ``nominal_times`` (target key -> the nominal design's exact rise or settling time, s)
    screens those targets by t ≈ t_nominal·f_H,nominal/f_H; the overshoot is not screened."""
    cols = []

    def corner(f, limit, above, nominal):
        if nominal is None:
            return np.full(np.size(f), 10.0)
        return np.where(np.isfinite(f), np.log(f / limit) if above else np.log(limit / f), -np.inf)

    with np.errstate(divide="ignore", invalid="ignore"):
        if targets.f_high_min is not None:
            cols.append(corner(fh, targets.f_high_min, True, analysis.f_high_exact))
        if targets.f_low_max is not None:
            cols.append(corner(fl, targets.f_low_max, False, analysis.f_low_exact))
        if targets.gain is not None:
            g = np.abs(gain)
            cols.append(np.minimum(np.log(g / targets.gain_min), np.log(targets.gain_max / g)))
        for key, t0 in (nominal_times or {}).items():
            t = t0 * analysis.f_high_exact / fh
            cols.append(np.where(np.isfinite(t), np.log(getattr(targets, key) / t), -np.inf))
    return np.min(np.vstack(cols), axis=0) if cols else np.zeros(np.size(gain))


YIELD_CANDIDATES = 6
"""Combinations meeting every target (those with the most margin) spread for their yield;
the search returns the one with the highest."""


def _highest_yield(meeting, doc, targets: Targets, samples: int):
    """Of the combinations that meet every target at nominal, the one with the highest yield
    under the parts' tolerances (ties to the larger margin); None if none can be spread."""
    spread = []
    for row in sorted(meeting, key=lambda r: -r.effect.worst_margin)[:YIELD_CANDIDATES]:
        try:
            y = yield_of(apply_changes(doc, row.changes), targets, samples)
        except CircuitError:
            continue
        spread.append(Suggestion(row.changes, "all", None, row.effect, y))
    return max(spread, key=lambda r: (r.spread.fraction if r.spread else -1.0, r.effect.worst_margin), default=None)


def _nominal_times(targets: Targets, analysis) -> dict:
    if not targets.has_time() or not analysis.f_high_exact:
        return {}
    try:
        step = analysis.step_response()
    except CircuitError:
        return {}
    return {key: time_figure(step, key) for key in ("rise_time_max", "settling_time_max")
            if getattr(targets, key) is not None and time_figure(step, key)}


def _propose_knobs(doc, targets: Targets, count: int = 2) -> tuple:
    """The knobs a search should try: the pair that moves the targets most independently.

    Each knob bought by value gets its row of sensitivities d ln(figure)/d ln(value) for
    the figures the targets set (f_H, f_L, |A_m|), a failing target's column weighted
    ten times. The proposed pair is the one whose 2 × 2 block over the two most pressing
    targets (failing first, then the least margin) has the largest |determinant|, so the
    two can move those figures apart; with one target set, the two largest sensitivities.

    Returns
    -------
    tuple of Knob
        ``count`` knobs (fewer when the design has fewer).
    """
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    before = effect_of_analysis(analysis, targets, doc)
    sens = {r.value.element: r for r in sensitivities(circuit, analysis).rows}
    pool = [k for k in knobs(doc) if k.key == "value" and k.part in sens]
    if len(pool) <= count:
        return tuple(pool)
    order = sorted(before.checks, key=lambda c: (c.passed, log_margin(c)))
    keys = [c.key for c in order]
    weight = np.array([10.0 if not c.passed else 1.0 for c in order])
    S = np.array([[_sensitivity(sens[k.part], t) for t in keys] for k in pool]) * weight
    if len(keys) < 2 or count != 2:
        score = np.abs(S).sum(axis=1)
        return tuple(pool[i] for i in np.argsort(-score, kind="stable")[:count])
    best = max(itertools.combinations(range(len(pool)), 2),
               key=lambda ij: abs(S[ij[0], 0] * S[ij[1], 1] - S[ij[0], 1] * S[ij[1], 0]))
    return tuple(pool[i] for i in best)


def search(doc, targets: Targets, chosen=None, *, span: float = SPAN_DECADES, limit: int = MAX_VALUES,
           verify: int = VERIFY, with_yield: bool = True, samples: int = YIELD_SAMPLES,
           progress=None, cancel=None) -> SearchResult:
    """Standard-value combinations of two or three knobs that meet every target at once.

    Every combination of the knobs' series values within ``span`` decades is screened in one
    batch; the best ``verify`` of them are analysed again in full. Of those that meet every
    target, the :data:`YIELD_CANDIDATES` with the most margin are spread under the parts'
    tolerances (``with_yield``) and the one with the highest yield is returned.

    Parameters
    ----------
    doc, targets
        As for :func:`bandsketch.engine.advise.suggest.suggest`.
    chosen : sequence of str, optional
        Two or three part names or knob labels; by default :func:`_propose_knobs`.
    span : float
        Decades searched either side of each knob's present value.
    limit : int
        Values per knob at most.
    verify : int
        Best screened combinations analysed again in full.
    with_yield : bool
        Spread the best combination when it meets every target.
    samples : int
        Monte Carlo samples for that yield.
    progress, cancel : callable, optional
        ``progress(done, total)`` over the full analyses; ``cancel()`` polled between them.

    Returns
    -------
    SearchResult

    Raises
    ------
    ValueError
        Fewer than two or more than three knobs, or a name that is not a knob of the design.
    """
    if targets.is_empty():
        raise ValueError("the design has no targets to meet; set f_H, f_L, gain or time targets first")
    if chosen is None:
        picked = _propose_knobs(doc, targets)
    else:
        found = {k.label: k for k in knobs(doc)} | {k.part: k for k in knobs(doc) if k.key == "value"}
        missing = [n for n in chosen if n not in found]
        if missing:
            raise ValueError(f"{', '.join(missing)}: not a value the advisor may change in this design "
                             f"(knobs: {', '.join(sorted(found))})")
        picked = tuple(dict.fromkeys(found[n] for n in chosen))
    if not 2 <= len(picked) <= 3:
        raise ValueError(f"a search takes two or three knobs, not {len(picked)}")
    grids = [_values(k, span, limit) for k in picked]
    combos = np.array(list(itertools.product(*grids)))
    nominal = np.array([abs(k.nominal) for k in picked])
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    batched = all(k.key == "value" and k.part in circuit.elements for k in picked)
    if batched:
        fh, fl, gain = exact_figures(circuit, analysis, [k.part for k in picked], combos / nominal)
        order = np.argsort(-_margins(targets, analysis, fh, fl, gain, _nominal_times(targets, analysis)),
                           kind="stable")[:verify]
    else:
        # Device or rail knobs do not map onto one element: every combination in full, fewer of them.
        order = np.arange(len(combos))
    rows = []
    for n, i in enumerate(order):
        if cancel is not None and cancel():
            raise Cancelled()
        sign = [math.copysign(1.0, k.nominal) for k in picked]
        changes = tuple(Change(k, s * float(v), change_text(s * float(v))) for k, s, v in zip(picked, sign, combos[i]))
        rows.append(Suggestion(changes, "all", None, effect_of(apply_changes(doc, changes), targets)))
        if progress is not None:
            progress(n + 1, len(order))
    analysed = [r for r in rows if not r.effect.problem]
    ranges = tuple((float(g[0]), float(g[-1])) for g in grids)
    names = ", ".join(k.label for k in picked)
    reach = "; ".join(f"{k.label} {format_value(lo, k.unit)} to {format_value(hi, k.unit)}"
                      for k, (lo, hi) in zip(picked, ranges))
    if not analysed:
        return SearchResult(picked, ranges, len(combos), None, False,
                            f"No combination of {names} could be analysed ({reach}).")
    best = max(analysed, key=lambda r: (r.meets_all, r.effect.worst_margin))
    if best.meets_all:
        if with_yield:
            best = _highest_yield([r for r in analysed if r.meets_all], doc, targets, samples) or best
        y = (f", yield {100 * best.spread.fraction:.0f} % under the parts' tolerances{best.spread.note}"
             if best.spread else "")
        text = f"{best.label} meets every target{y} (searched {len(combos)} combinations: {reach})."
    else:
        text = (f"No combination of {names} meets every target ({len(combos)} standard-value combinations: "
                f"{reach}). Closest: {best.label}, which {verdict_line(best.effect)}.")
    return SearchResult(picked, ranges, len(combos), best, best.meets_all, text)
