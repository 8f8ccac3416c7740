"""Suggestions that weigh the whole design: each candidate value with everything it does.

For every knob (:mod:`bandsketch.engine.advise.knobs`) and every failing target, the
one-knob root find of :mod:`bandsketch.engine.advise.targets` gives the exact value that just
meets that target; the candidates are the standard values of the part's E series either
side of it (or the value to three figures for a knob not bought by series). Each candidate
is written into a copy of the design and analysed again from the sheet
(:func:`bandsketch.engine.advise.effect.effect_of`): its f_H, f_L, gain, bias and verdict
against *every* target are what the row shows. A candidate that meets every target and
keeps every transistor in its region is then spread under the parts' tolerances, and the
rows that meet everything come first, highest yield first; the rest follow, the fewest
broken targets first.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.errors import Cancelled, CircuitError
from ..core.values import format_value
from ..design.netlist import design_to_circuit
from ..solve.analysis import analyze
from . import eseries
from .effect import Effect, effect_of
from .knobs import Knob, knobs
from .timetargets import TIME_TARGETS
from .targets import JUDGED, TARGET_LABELS, Targets, exact_root, field_text, with_field
from .tolerance import design_tolerances, monte_carlo

YIELD_SAMPLES = 1000
"""Monte Carlo samples behind each suggestion's yield: one standard error is at most
√(0.25/1000) = 1.6 % (binomial), enough to rank values, not to sign off a design."""


@dataclass(frozen=True)
class Yield:
    """The share of a design's tolerance spread that meets every target.

    Attributes
    ----------
    fraction : float
        Samples meeting every target / samples (0 to 1).
    samples : int
        How many were drawn.
    standard_error : float
        √(p(1 − p)/n), the binomial standard error of ``fraction``.
    nominal_only : tuple of str
        Target keys the spread does not judge (the time targets: each sample would need a
        step response of its own); they are judged at the nominal values only.
    """

    fraction: float
    samples: int
    standard_error: float
    nominal_only: tuple = ()

    @property
    def note(self) -> str:
        """What the yield leaves out, as a clause to follow it ("" when it judges every target)."""
        if not self.nominal_only:
            return ""
        return "; the spread judges the corners and the gain, and the time targets only at the nominal values"


@dataclass(frozen=True)
class Change:
    """One field written to a new value.

    Attributes
    ----------
    knob : Knob
    value : float
        The value as applied, SI units, signed as the field is.
    text : str
        The text written into the field (``"3.9k"``).
    lower, upper : float or None
        The part's series values just below and just above the exact value that meets the
        target this change was sought for (None for a knob not bought by series).
    """

    knob: Knob
    value: float
    text: str
    lower: float | None = None
    upper: float | None = None


@dataclass(frozen=True)
class Suggestion:
    """A candidate change of the design with its whole effect.

    Attributes
    ----------
    changes : tuple of Change
        The fields it writes (one for a single-knob suggestion).
    aim : str
        The target it was sought for (``"f_high_min"`` ...), or ``"all"`` for a search.
    exact : float or None
        For a single knob: the exact value at which ``aim`` is just met (SI units).
    effect : Effect
        The design with the change applied, analysed exactly.
    spread : Yield or None
        Its tolerance spread, for a suggestion that meets everything at nominal.
    """

    changes: tuple
    aim: str
    exact: float | None
    effect: Effect
    spread: Yield | None = None

    @property
    def meets_all(self) -> bool:
        """Whether it meets every target with every transistor in its region."""
        return self.effect.meets_all

    @property
    def size(self) -> float:
        """Σ |ln(new/now)| over its changes: how far it moves the design."""
        return sum(abs(math.log(abs(c.value / c.knob.nominal))) for c in self.changes)

    @property
    def label(self) -> str:
        """``"RC = 3.9 kΩ"``, changes joined by commas."""
        return ", ".join(f"{c.knob.label} = {format_value(c.value, c.knob.unit)}" for c in self.changes)

    def sort_key(self) -> tuple:
        """Meets everything first, highest yield first; then the fewest broken targets, least missed."""
        y = self.spread.fraction if self.spread is not None else -1.0
        return (not self.meets_all, -y if self.meets_all else 0.0, len(self.effect.failing)
                + len(self.effect.out_of_region), -self.effect.worst_margin, self.size, self.label)


@dataclass(frozen=True)
class Advice:
    """The suggestions for a design's targets.

    Attributes
    ----------
    targets : Targets
    before : Effect
        The design as it stands.
    knobs : tuple of Knob
        The knobs considered.
    suggestions : tuple of Suggestion
        Sorted by :meth:`Suggestion.sort_key`.
    unmet : tuple of str
        Target keys no single knob can meet within the search's reach.
    """

    targets: Targets
    before: Effect
    knobs: tuple
    suggestions: tuple
    unmet: tuple


def apply_changes(doc, changes):
    """A copy of ``doc`` with each :class:`Change` written into its field.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        Not changed.
    changes : sequence of Change
        The values to write, SI units.
    """
    out = doc
    for c in changes:
        out = with_field(out, c.knob.part, c.knob.key, c.text)
    return out


def change_text(value: float) -> str:
    """The field text for an applied value: the shortest that reads back exactly.

    Parameters
    ----------
    value : float
        The value in the field's SI unit.
    """
    return format_value(value, "", digits=3) if float(f"{value:.3g}") == value else field_text(value)


def yield_of(doc, targets: Targets, samples: int = YIELD_SAMPLES, seed: int = 1) -> Yield | None:
    """The tolerance spread's yield against the corner and gain targets (None when none is set;
    the time targets are judged at the nominal values, see :attr:`Yield.nominal_only`).

    The design is analysed again from the sheet, then spread under its parts' tolerances
    (:func:`bandsketch.engine.advise.tolerance.design_tolerances`).

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    targets : bandsketch.engine.advise.targets.Targets
        The targets, SI units (Hz; the gain in V/V, Ω for a current input).
    samples : int
        Monte Carlo samples.
    seed : int
        Seed of the random generator.
    """
    if targets.f_high_min is None and targets.f_low_max is None and targets.gain is None:
        return None  # only time targets: nothing the spread judges
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    spread = monte_carlo(circuit, analysis, design_tolerances(doc, circuit), samples=samples, seed=seed,
                         targets=targets, gain_unit=analysis.gain_unit)
    p = spread.yields["all"]
    left = tuple(key for key in TIME_TARGETS if getattr(targets, key) is not None)
    return Yield(p, samples, math.sqrt(p * (1 - p) / samples), left)


CANDIDATE_STEPS = 2
"""Series values tried on each side of the exact value: the neighbours and one step beyond,
so a value with more margin (and a higher yield) can rank above the nearest one."""


def _candidates(knob: Knob, exact: float) -> list:
    sign = math.copysign(1.0, knob.nominal)
    if knob.standard:
        ladder = eseries.values_between(knob.series, exact / 10, exact * 10)
        below = ladder[ladder <= exact * (1 + 1e-12)][-CANDIDATE_STEPS:]
        above = ladder[ladder >= exact * (1 - 1e-12)][:CANDIDATE_STEPS]
        lo, hi = float(below[-1]), float(above[0])
        return [Change(knob, sign * v, change_text(sign * v), lo, hi)
                for v in sorted({float(v) for v in (*below, *above)})]
    three = float(f"{exact:.3g}")
    return [Change(knob, sign * three, change_text(sign * three))]


def suggest(doc, targets: Targets, *, only=None, with_yield: bool = True, samples: int = YIELD_SAMPLES,
            progress=None, cancel=None) -> Advice:
    """Candidate values for each knob and failing target, each with its whole effect.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        The design (not changed).
    targets : Targets
    only : collection of str, optional
        Restrict the knobs to these part names or labels (``{"R1", "RC"}``).
    with_yield : bool
        Spread each suggestion that meets everything (``samples`` samples, seed 1).
    samples : int
        Monte Carlo samples per yield.
    progress, cancel : callable, optional
        ``progress(done, total)`` after each knob; ``cancel()`` polled between knobs, True
        stops with :class:`bandsketch.engine.core.errors.Cancelled`.

    Returns
    -------
    Advice
    """
    before = effect_of(doc, targets)
    if before.problem:
        raise CircuitError(f"The design cannot be analysed, so nothing can be suggested: {before.problem}")
    chosen = knobs(doc, only)
    failing = [k for k in JUDGED if k in before.failing]
    rows, seen, met = [], set(), set()
    for i, knob in enumerate(chosen):
        if cancel is not None and cancel():
            raise Cancelled()
        for aim in failing:
            exact = exact_root(doc, knob, aim, targets)
            if exact is None:
                continue
            met.add(aim)
            for change in _candidates(knob, exact):
                key = (knob.part, knob.key, change.value)
                if key in seen or change.value == knob.nominal:
                    continue
                seen.add(key)
                rows.append(Suggestion((change,), aim, exact,
                                       effect_of(apply_changes(doc, (change,)), targets)))
        if progress is not None:
            progress(i + 1, len(chosen))
    if with_yield:
        rows = [_with_yield(r, doc, targets, samples) for r in rows]
    unmet = tuple(k for k in failing if k not in met)
    return Advice(targets, before, chosen, tuple(sorted(rows, key=Suggestion.sort_key)), unmet)


def _with_yield(row: Suggestion, doc, targets: Targets, samples: int) -> Suggestion:
    if not row.meets_all:
        return row
    try:
        spread = yield_of(apply_changes(doc, row.changes), targets, samples)
    except CircuitError:
        spread = None
    return Suggestion(row.changes, row.aim, row.exact, row.effect, spread)


def _miss(check) -> str:
    if check.exact is None and check.key in TIME_TARGETS:
        return f"{TARGET_LABELS[check.key]} (the step does not show it: {check.text})"
    if check.exact is None:
        return f"{TARGET_LABELS[check.key]} (no −3 dB band: the gain never comes within 3 dB of |A_m|)"
    if check.key == "gain":
        return f"the gain by {abs(check.margin):.2f} dB"
    # A time figure is over its maximum by exact/target − 1; the margin is target/exact − 1.
    pct = 100 * (1 / (1 + check.margin) - 1) if check.key in TIME_TARGETS else 100 * abs(check.margin)
    return f"{TARGET_LABELS[check.key]} by {pct:.1f} %" if pct < 9.95 else f"{TARGET_LABELS[check.key]} by {pct:.0f} %"


def verdict_line(effect: Effect) -> str:
    """``"meets every target"`` or what it misses and by how much, in words.

    Parameters
    ----------
    effect : bandsketch.engine.advise.effect.Effect
    """
    if effect.problem:
        return f"cannot be analysed: {effect.problem}"
    missed = [_miss(c) for c in effect.checks if not c.passed]
    missed += [f"leaves {d.text} (out of its amplifying region)" for d in effect.devices if not d.ok]
    return "meets every target" if not missed else "misses " + ", ".join(missed)
