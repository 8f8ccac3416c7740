"""The advisor's suggestions as JSON-ready data and as a readable table (the command line).

:func:`advise_design` runs the one-knob suggestions (:func:`bandsketch.engine.advise.suggest.suggest`)
and, when two or three knobs are named, the search over their combinations
(:func:`bandsketch.engine.advise.search.search`).
"""

from __future__ import annotations

import math

from ..advise.search import search
from ..advise.suggest import YIELD_SAMPLES, suggest, verdict_line
from ..advise.targets import parse_targets
from ..core.values import format_gain, format_value


def advise_design(doc, only=None, samples: int = YIELD_SAMPLES) -> tuple:
    """Suggestions for ``doc``'s targets, and the combination search when 2–3 knobs are named.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    only : sequence of str, optional
        Part names or knob labels to restrict the suggestions to.
    samples : int
        Monte Carlo samples behind each yield.

    Returns
    -------
    (Advice, SearchResult or None)

    Raises
    ------
    ValueError
        The design has no targets, or ``only`` names something that is not a knob.
    """
    targets = parse_targets(doc.targets)
    if targets.is_empty():
        raise ValueError("the design has no targets; set f_H, f_L, gain or time targets (in the advisor) first")
    advice = suggest(doc, targets, only=set(only) if only else None, samples=samples)
    found = None
    if only and 2 <= len(only) <= 3:
        found = search(doc, targets, only, samples=samples)
    elif only and not advice.knobs:
        raise ValueError(f"{', '.join(only)}: no value the advisor may change "
                         "(a device's physics needs 'I can choose another device' ticked)")
    return advice, found


def _number(x):
    return float(x) if x is not None and math.isfinite(x) and x > 0 else None


def _effect(e) -> dict:
    return {"f_high": _number(e.f_high), "f_low": _number(e.f_low),
            "gain": abs(e.gain) if math.isfinite(e.gain) else None,
            "failing": list(e.failing), "out_of_region": list(e.out_of_region),
            "margins": {c.key: c.margin for c in e.checks},
            "devices": [{"name": d.name, "region": d.region, "ok": d.ok} for d in e.devices]}


def _suggestion_to_dict(s) -> dict:
    """One single-knob suggestion as JSON-ready data (SI numbers, null where there is none).

    Keys: ``part``, ``field``, ``value`` (as applied, SI), ``meets_all``, ``f_high``, ``f_low``
    (Hz), ``gain`` (|A_m| in the gain's unit); beside them ``text`` (the field text),
    ``series``, ``lower`` and ``upper`` (the series values either side of ``exact``), ``aim``
    (the target it was sought for), ``exact``, ``failing`` (target keys), ``out_of_region``
    (devices), ``margins`` (target key -> margin: a fraction for a corner, dB for the gain),
    ``devices`` (bias regions), ``yield`` and ``yield_standard_error`` (null where not spread).
    """
    change = s.changes[0]
    return {"part": change.knob.part, "field": change.knob.key, "value": change.value,
            "meets_all": s.meets_all, **_effect(s.effect),
            "text": change.text, "series": change.knob.series, "lower": change.lower, "upper": change.upper,
            "aim": s.aim, "exact": s.exact,
            "yield": s.spread.fraction if s.spread else None,
            "yield_standard_error": s.spread.standard_error if s.spread else None}


def advice_to_dict(advice, found=None) -> dict:
    """The whole advice as JSON-ready data: ``suggestions`` (see :func:`_suggestion_to_dict`),
    ``before`` (the design as it stands), ``unmet`` (targets no single knob meets), ``knobs``
    and, after a search, ``combination`` (its ``changes``, verdict and ``text``).

    Parameters
    ----------
    advice : Advice
        From :func:`advise_design`.
    found : bandsketch.engine.advise.search.SearchResult, optional
        A search of knobs together, if one was run.
    """
    out = {"before": _effect(advice.before), "meets_all_now": advice.before.meets_all,
           "knobs": [k.label for k in advice.knobs], "unmet": list(advice.unmet),
           "suggestions": [_suggestion_to_dict(s) for s in advice.suggestions]}
    if found is not None:
        best = found.best
        out["combination"] = {
            "knobs": [k.label for k in found.knobs], "combinations": found.combinations, "found": found.found,
            "text": found.text,
            "changes": [] if best is None else [{"part": c.knob.part, "field": c.knob.key, "value": c.value,
                                                 "text": c.text} for c in best.changes],
            "meets_all": bool(best and best.meets_all), **(_effect(best.effect) if best else {}),
            "yield": best.spread.fraction if best and best.spread else None}
    return out


def _hz(f) -> str:
    return format_value(f, "Hz") if _number(f) else "none"


def advice_table(advice, found=None, title: str = "") -> str:
    """The advice as a plain-text table for a terminal.

    Parameters
    ----------
    advice, found
        As for :func:`advice_to_dict`.
    title : str
        Heading; none if empty.
    """
    unit = advice.before.gain_unit
    lines = [f"Advice for {title}" if title else "Advice",
             f"now: f_H {_hz(advice.before.f_high)}, f_L {_hz(advice.before.f_low)}, "
             f"|A_m| {format_gain(abs(advice.before.gain), unit)}; {verdict_line(advice.before)}", ""]
    if advice.before.meets_all:
        lines.append("Every target is met; nothing to suggest.")
    head = f"{'change':24s} {'exact lies between':24s} {'f_H':>10s} {'f_L':>10s} {'|A_m|':>10s} {'yield':>7s}  verdict"
    if advice.suggestions:
        lines += [head, "-" * len(head)]
    for s in advice.suggestions:
        c = s.changes[0]
        near = (f"{c.knob.series}: {format_value(c.lower, c.knob.unit)} / {format_value(c.upper, c.knob.unit)}"
                if c.lower is not None else "")
        y = f"{100 * s.spread.fraction:.0f} %" if s.spread else ""
        e = s.effect
        lines.append(f"{s.label:24s} {near:24s} {_hz(e.f_high):>10s} {_hz(e.f_low):>10s} "
                     f"{format_gain(abs(e.gain), unit):>10s} {y:>7s}  {verdict_line(e)}")
    for key in advice.unmet:
        lines.append(f"No single knob in reach meets the {key} target.")
    notes = {s.spread.note for s in advice.suggestions if s.spread and s.spread.note}
    lines += [f"Yield: {note.removeprefix('; ')}." for note in notes]
    if found is not None:
        lines += ["", found.text]
    return "\n".join(lines)
