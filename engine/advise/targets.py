"""Design targets: what the document asks for, whether the stage meets it, and what would.

A design may hold a minimum upper corner f_H, a maximum lower corner f_L, a mid-band gain
with a tolerance, and a longest step rise time, largest overshoot and longest settling time
(texts, see :data:`bandsketch.engine.design.schema.TARGET_KEYS`). :func:`parse_targets`
reads them; :func:`check_targets` judges the exact figures of an analysis against them and
says beside each what the time-constant estimate would have said; :func:`values_that_meet`
finds, per part field, the single value that alone meets a failing target.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from . import eseries
from ..solve.analysis import analyze
from ..core.errors import BadValueError, Cancelled, CircuitError
from ..design.netlist import design_to_circuit
from ..core.values import format_gain, format_value, parse_value
from .knobs import Knob, knobs
from .targetcheck import TargetCheck
from .timetargets import TIME_TARGETS, check_time_targets, parse_time_target, time_figure

DEFAULT_GAIN_TOLERANCE_DB = 1.0
"""The gain window when a gain target has no tolerance: ±1 dB (common practice, no source)."""

TARGET_LABELS = {"f_high_min": "minimum f_H", "f_low_max": "maximum f_L",
                 "gain": "mid-band gain", "gain_tolerance": "gain tolerance",
                 "rise_time_max": "longest rise time", "overshoot_max": "largest overshoot",
                 "settling_time_max": "longest settling time"}
"""How messages and tables name each target field."""

_DB = re.compile(r"^\s*(?P<num>[+-]?[0-9.]+(?:[eE][+-]?[0-9]+)?)\s*dB\s*$")
_PERCENT = re.compile(r"^\s*(?P<num>[0-9.]+(?:[eE][+-]?[0-9]+)?)\s*%\s*$")


@dataclass(frozen=True)
class Targets:
    """The targets a design holds, in SI units; None where a target is not set.

    Attributes
    ----------
    f_high_min : float or None
        The upper −3 dB corner must be at least this, Hz.
    f_low_max : float or None
        The lower −3 dB corner must be at most this, Hz.
    gain : float or None
        Wanted mid-band gain magnitude |A_m|, V/V (Ω for a current input); its sign is
        not judged, since an inverting stage is as good as a follower of the same size.
    gain_min, gain_max : float or None
        The window |A_m| must fall in (same unit as ``gain``).
    gain_window_text : str
        How the window was given, e.g. ``"±10 %"`` or ``"±1 dB (default)"``.
    rise_time_max : float or None
        s, the exact 10–90 % step rise time must be at most this.
    overshoot_max : float or None
        The step's overshoot must be at most this fraction of its final value (``"5 %"`` is 0.05).
    settling_time_max : float or None
        s, the step must stay within 1 % of its final value after at most this.
    """

    f_high_min: float | None = None
    f_low_max: float | None = None
    gain: float | None = None
    gain_min: float | None = None
    gain_max: float | None = None
    gain_window_text: str = ""
    rise_time_max: float | None = None
    overshoot_max: float | None = None
    settling_time_max: float | None = None

    def is_empty(self) -> bool:
        """Whether no target is set."""
        return self.f_high_min is None and self.f_low_max is None and self.gain is None and not self.has_time()

    def has_time(self) -> bool:
        """Whether a time-domain target (rise, overshoot, settling) is set."""
        return any(getattr(self, key) is not None for key in TIME_TARGETS)


def _bad(key: str, text: str, problem: str) -> BadValueError:
    return BadValueError(f"Target {TARGET_LABELS[key]}: '{text.strip()}' {problem}",
                         part=None, field=key, text=text)


def _gain(text: str) -> float:
    m = _DB.match(text)
    if m:
        return 10 ** (float(m["num"]) / 20)
    value = parse_value(text, unit="V/V", field=f"target {TARGET_LABELS['gain']}",
                        allow_negative=True)
    return abs(value)


def _window(text: str, gain: float) -> tuple:
    m = _DB.match(text)
    if m:
        db = abs(float(m["num"]))
        return gain * 10 ** (-db / 20), gain * 10 ** (db / 20), f"±{db:g} dB"
    m = _PERCENT.match(text)
    if m:
        frac = float(m["num"]) / 100
        if frac >= 1:
            raise _bad("gain_tolerance", text, "is 100 % or more; give a window narrower than the gain itself")
        return gain * (1 - frac), gain * (1 + frac), f"±{float(m['num']):g} %"
    raise _bad("gain_tolerance", text, "is not a tolerance: write a percentage (10 %) or decibels (1 dB)")


def parse_targets(targets) -> Targets:
    """Read a document's target texts.

    Parameters
    ----------
    targets : Mapping[str, str]
        :attr:`bandsketch.engine.design.document.Document.targets`: ``f_high_min`` and ``f_low_max`` in Hz
        (``"1M"``, ``"20 Hz"``), ``gain`` in V/V or dB (``"-100"``, ``"40 dB"``),
        ``gain_tolerance`` as a percentage or in dB (``"10 %"``, ``"1 dB"``), ``rise_time_max``
        and ``settling_time_max`` in s (``"20n"``), ``overshoot_max`` as a percentage (``"5 %"``).

    Returns
    -------
    Targets

    Raises
    ------
    BadValueError
        A target text does not read; the message names the target and what to write.
    """
    def hz(key):
        text = (targets.get(key) or "").strip()
        if not text:
            return None
        return parse_value(text, unit="Hz", field=f"target {TARGET_LABELS[key]}")

    f_high, f_low = hz("f_high_min"), hz("f_low_max")
    times = {key: parse_time_target(key, targets.get(key)) for key in TIME_TARGETS}
    gain_text = (targets.get("gain") or "").strip()
    tol_text = (targets.get("gain_tolerance") or "").strip()
    if not gain_text:
        if tol_text:
            raise _bad("gain_tolerance", tol_text, "has no gain to apply to: set the gain target too, "
                                                   "or clear the tolerance")
        return Targets(f_high, f_low, **times)
    gain = _gain(gain_text)
    if gain == 0:
        raise _bad("gain", gain_text, "is zero; a gain target must be a size the stage should reach")
    if tol_text:
        lo, hi, shown = _window(tol_text, gain)
    else:
        d = DEFAULT_GAIN_TOLERANCE_DB
        lo, hi, shown = gain * 10 ** (-d / 20), gain * 10 ** (d / 20), f"±{d:g} dB (default)"
    return Targets(f_high, f_low, gain, lo, hi, shown, **times)


def _usable(x) -> bool:
    return x is not None and math.isfinite(x) and x > 0


def meets(targets: Targets, f_high, f_low, gain) -> dict:
    """Which targets a set of figures meets.

    Parameters
    ----------
    targets : Targets
    f_high, f_low : float or None
        Upper and lower corners, Hz; None (or NaN) when the gain never falls 3 dB on that
        side, which meets a minimum f_H or a maximum f_L.
    gain : float
        Mid-band gain, V/V (or Ω), signed.

    Returns
    -------
    dict
        Target key -> bool, for the targets that are set.
    """
    out = {}
    if targets.f_high_min is not None:
        out["f_high_min"] = not _usable(f_high) or f_high >= targets.f_high_min
    if targets.f_low_max is not None:
        out["f_low_max"] = not _usable(f_low) or f_low <= targets.f_low_max
    if targets.gain is not None:
        out["gain"] = targets.gain_min <= abs(gain) <= targets.gain_max
    return out


def _corner_check(key, sym, op, target, exact, estimate) -> TargetCheck:
    minimum = key == "f_high_min"
    target_text = f"{sym} {op} {format_value(target, 'Hz')}"

    def ok(f):
        return None if f is None else (not _usable(f) or (f >= target if minimum else f <= target))

    if not _usable(exact):
        exact = None
        passed, margin = True, None
        head = f"no {'upper' if minimum else 'lower'} corner (the gain never falls 3 dB): {target_text} met"
    else:
        passed = ok(exact)
        margin = exact / target - 1 if minimum else target / exact - 1
        # The verdict badge beside the text already says pass or fail; the text gives the margin.
        if passed:
            head = f"{sym} = {format_value(exact, 'Hz')} {op} {format_value(target, 'Hz')}, " \
                   f"{abs(margin) * 100:.0f} % to spare"
        else:
            head = f"{sym} = {format_value(exact, 'Hz')}, not {op} {format_value(target, 'Hz')}: " \
                   f"{abs(margin) * 100:.0f} % short"
    est = estimate if _usable(estimate) else None
    est_ok = ok(est)
    if est is None:
        tail = " (no estimate)"
    else:
        agree = "agrees" if est_ok == passed else "would have said " + ("pass" if est_ok else "fail")
        tail = f" (the estimate, {format_value(est, 'Hz')}, {agree})"
    return TargetCheck(key, target_text, exact, est, passed, margin, est_ok, head + tail)


def _db(x: float) -> float:
    return 20 * math.log10(x)


def check_targets(targets: Targets, analysis, gain_unit: str = "V/V") -> tuple:
    """Judge an analysis against the targets.

    Parameters
    ----------
    targets : Targets
    analysis : bandsketch.engine.solve.analysis.Analysis
    gain_unit : str, optional
        ``"V/V"`` for a voltage input, ``"Ω"`` for a current input.

    Returns
    -------
    tuple of TargetCheck
        One per target that is set, in the order f_H, f_L, gain, rise, overshoot, settling.
        The time targets are judged on the exact step response (:meth:`~bandsketch.engine.
        solve.analysis.Analysis.step_response`); an unstable stage, which has none, fails them.
    """
    return _frequency_checks(targets, analysis, gain_unit) + _time_checks(targets, analysis)


def _time_checks(targets: Targets, analysis) -> tuple:
    if not targets.has_time():
        return ()
    try:
        step = analysis.step_response()
    except CircuitError as exc:
        return tuple(TargetCheck(key, TARGET_LABELS[key], None, None, False, -1.0, None,
                                 f"{TARGET_LABELS[key]}: no step response ({exc.message})")
                     for key in TIME_TARGETS if getattr(targets, key) is not None)
    return check_time_targets(targets, step)


def _frequency_checks(targets: Targets, analysis, gain_unit: str) -> tuple:
    short = getattr(analysis, "shortfall_db", None)
    if short is not None:
        return _no_band_checks(targets, analysis, gain_unit, short)
    out = []
    if targets.f_high_min is not None:
        out.append(_corner_check("f_high_min", "f_H", "≥", targets.f_high_min,
                                 analysis.f_high_exact, analysis.f_high_estimate))
    if targets.f_low_max is not None:
        out.append(_corner_check("f_low_max", "f_L", "≤", targets.f_low_max,
                                 analysis.f_low_exact, analysis.f_low_estimate))
    if targets.gain is not None:
        g = abs(float(analysis.midband_gain))
        passed = targets.gain_min <= g <= targets.gain_max
        if g > 0:
            margin = min(_db(g) - _db(targets.gain_min), _db(targets.gain_max) - _db(g))
        else:
            margin = -math.inf
        wanted = f"{format_gain(targets.gain, gain_unit)} {targets.gain_window_text}"
        target_text = f"|A_m| = {wanted}"
        if g > 0:
            word = "inside the window by" if passed else "outside the window by"
            text = f"|A_m| = {format_gain(g, gain_unit)} against {wanted}: {word} {abs(margin):.2f} dB"
        else:
            text = f"|A_m| = 0: no signal reaches the output; {target_text} failed"
        out.append(TargetCheck("gain", target_text, g, g, passed, margin, passed, text))
    return tuple(out)


def _no_band_checks(targets: Targets, analysis, gain_unit: str, short_db: float) -> tuple:
    """Every target fails where the exact gain never comes within 3 dB of |A_m|: the stage
    has no −3 dB band, and the gain it delivers is not its mid-band gain."""
    why = f"the exact gain never comes within 3 dB of |A_m| (it peaks {short_db:.1f} dB below): no −3 dB band"
    out = []
    if targets.f_high_min is not None:
        text = f"f_H ≥ {format_value(targets.f_high_min, 'Hz')}"
        out.append(TargetCheck("f_high_min", text, None, analysis.f_high_estimate, False, -1.0, None,
                               f"{why}; {text} failed"))
    if targets.f_low_max is not None:
        text = f"f_L ≤ {format_value(targets.f_low_max, 'Hz')}"
        out.append(TargetCheck("f_low_max", text, None, analysis.f_low_estimate, False, -1.0, None,
                               f"{why}; {text} failed"))
    if targets.gain is not None:
        g = abs(float(analysis.midband_gain)) * 10 ** (-short_db / 20)
        text = f"|A_m| = {format_gain(targets.gain, gain_unit)} {targets.gain_window_text}"
        out.append(TargetCheck("gain", text, g, g, False, -short_db, False,
                               f"{why}; the stage peaks at {format_gain(g, gain_unit)}; {text} failed"))
    return tuple(out)


# -- the value that meets it -------------------------------------------------------------------
JUDGED = ("f_high_min", "f_low_max", "gain", *TIME_TARGETS)
"""The targets a value can be searched for, in the order they are judged."""
SEARCH_DECADES = 2.0
"""How far a part's value is searched: from 1/100 to 100 times its present value."""
_ROOT_XTOL = 1e-5
"""brentq's tolerance on ln(value): the root is found to 0.001 %."""
def with_field(doc, part: str, key: str, text: str):
    """A copy of ``doc`` with one field's text changed (the original is not touched).

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        Not changed.
    part : str
        The part's name.
    key : str
        The field's key.
    text : str
        The new field text (``"4k7"``).
    """
    copy = doc.copy()
    copy.replace_part(part, copy.parts[part].with_params(**{key: text}))
    return copy


def field_text(value: float) -> str:
    """A field text for a trial value that reads back to 12 significant figures.

    Parameters
    ----------
    value : float
        The trial value in the field's SI unit.
    """
    return f"{value:.12g}"


@dataclass(frozen=True)
class Remedy:
    """The single value of one field that alone meets a failing target.

    Attributes
    ----------
    target : str
        The target key (one of :data:`JUDGED`).
    knob : Knob
        Which field.
    exact_value : float or None
        The value at which the exact figure just meets the target (SI units); None when
        no value within :data:`SEARCH_DECADES` decades either way does.
    estimate_value : float or None
        Where the time-constant estimate would have put it (None likewise).
    standard_value : float or None
        For a resistor, capacitor or inductor: the nearest value of ``series`` that still
        meets the target, checked by a full analysis; None if none near the root does.
    series : str or None
        The E series ``standard_value`` is from.
    apply_text : str or None
        The text to write into the field: the standard value if there is one, else the
        exact value rounded to three figures on the side that meets the target.
    text : str
        One line saying it all, or "no single value of this part can".
    """

    target: str
    knob: Knob
    exact_value: float | None
    estimate_value: float | None
    standard_value: float | None
    series: str | None
    apply_text: str | None
    text: str

    @property
    def change(self) -> float:
        """|ln(new / present)| of the value to apply: how far the part must move (inf if none)."""
        new = self.standard_value or self.exact_value
        return abs(math.log(abs(new / self.knob.nominal))) if new else math.inf


class _Figure:
    """g(x) = ln(figure) − ln(goal) of one target as a field's value x varies; cached analyses."""

    def __init__(self, doc, knob: Knob, target: str, targets: Targets):
        self._build = lambda d: analyze(design_to_circuit(d), bands=dict(d.band_pins))
        self.doc, self.knob, self.target, self.targets = doc, knob, target, targets
        self.cache: dict = {}
        self.goal = getattr(targets, target)

    def analysis(self, x: float):
        if x not in self.cache:
            try:
                text = field_text(math.copysign(x, self.knob.nominal))
                self.cache[x] = self._build(with_field(self.doc, self.knob.part, self.knob.key, text))
            except CircuitError:
                # This value breaks the network (a derived C_π below zero, a singular mid band).
                self.cache[x] = None
        return self.cache[x]

    def g(self, x: float, estimate: bool) -> float:
        """Signed log distance to the goal; NaN where the network cannot be analysed there."""
        a = self.analysis(x)
        if a is None:
            return math.nan
        if self.target == "gain":
            return math.log(abs(a.midband_gain)) - math.log(self.goal) if a.midband_gain else -math.inf
        if self.target in TIME_TARGETS:
            return self._time_g(a, estimate)
        side = "high" if self.target == "f_high_min" else "low"
        f = getattr(a, f"f_{side}_{'estimate' if estimate else 'exact'}")
        if not _usable(f):
            # No corner on this side: as good as a corner beyond any target.
            return 50.0 if side == "high" else -50.0
        return math.log(f) - math.log(self.goal)

    def _time_g(self, a, estimate: bool) -> float:
        try:
            figure = time_figure(a.step_response(), self.target, estimate)
        except CircuitError:
            return math.nan  # unstable here: no step to judge
        if figure is None:
            return 50.0  # the edge does not complete in the window: far beyond any maximum
        # No overshoot at all meets any maximum; a finite floor keeps the root search bracketed.
        return math.log(max(figure, self.goal * 1e-6)) - math.log(self.goal)

    def passes(self, x: float, estimate: bool = False) -> bool:
        a = self.analysis(x)
        if a is None:
            return False
        if estimate or self.target in TIME_TARGETS:
            return self.ok(self.g(x, estimate))
        return meets(self.targets, a.f_high_exact, a.f_low_exact, a.midband_gain)[self.target]

    def ok(self, g: float) -> bool:
        if math.isnan(g):
            return False
        if self.target == "f_high_min":
            return g >= 0
        if self.target == "f_low_max" or self.target in TIME_TARGETS:
            return g <= 0
        return math.log(self.targets.gain_min / self.goal) <= g <= math.log(self.targets.gain_max / self.goal)


def _root(fig: _Figure, estimate: bool) -> float | None:
    """ln(x / x0) nearest 0 where g crosses zero (the goal), or None within the search reach.

    The ladder steps out half a decade at a time in both directions, nearest first, until g
    changes sign; brentq then solves g = 0 on ln x between the last two rungs. For a corner
    the root is where the target is just met; for the gain it is the window's centre.
    """
    x0 = abs(fig.knob.nominal)
    half = math.log(10) / 2
    g0 = fig.g(x0, estimate)
    if math.isnan(g0):
        return None
    for rung in range(1, int(2 * SEARCH_DECADES) + 1):
        for sense in (1.0, -1.0):
            outer, inner = sense * rung * half, sense * (rung - 1) * half
            g_out, g_in = fig.g(x0 * math.exp(outer), estimate), fig.g(x0 * math.exp(inner), estimate)
            if math.isnan(g_out) or math.isnan(g_in) or (g_out > 0) == (g_in > 0):
                continue
            # Imported here: scipy.optimize takes a tenth of a second to import, and the
            # window and the command line need it only once a target is solved for.
            from scipy.optimize import brentq

            try:
                return brentq(lambda u: fig.g(x0 * math.exp(u), estimate), inner, outer, xtol=_ROOT_XTOL)
            except ValueError:
                # The figure is undefined somewhere between the rungs (a trial value the
                # stage cannot be analysed at, its bias lost): no single value to trust there.
                continue
    return None


def exact_root(doc, knob: Knob, target: str, targets: Targets) -> float | None:
    """The value of ``knob`` (SI, magnitude) at which the exact figure just meets ``target``.

    The same search as :func:`values_that_meet` (within :data:`SEARCH_DECADES` decades
    either way of the present value), without the estimate's answer or a standard value;
    None when no value in reach meets the target.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    knob : bandsketch.engine.advise.knobs.Knob
        The value searched (SI units).
    target : str
        Which target: one of :data:`JUDGED`.
    targets : bandsketch.engine.advise.targets.Targets
        The targets, SI units (Hz; the gain in V/V, Ω for a current input).
    """
    fig = _Figure(doc, knob, target, targets)
    t = _root(fig, estimate=False)
    return None if t is None else abs(knob.nominal) * math.exp(t)


def _rounded_toward(x: float, passes) -> str | None:
    """Three-figure text for ``x``: whichever neighbour at that rounding meets the target."""
    exponent = math.floor(math.log10(x)) - 2
    unit = 10.0 ** exponent
    for candidate in (round(x / unit) * unit, math.ceil(x / unit) * unit, math.floor(x / unit) * unit):
        candidate = float(f"{candidate:.3g}")
        if passes(candidate):
            return candidate
    return None


def values_that_meet(doc, target: str, targets: Targets, series: str | None = None, *,
                     progress=None, cancel=None) -> tuple:
    """For each field of the design, the single value that alone meets one failing target.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        The design (not changed: each trial value is analysed on a copy).
    target : str
        One of :data:`JUDGED` (a corner, the gain or a time target).
    targets : Targets
        The design's targets (:func:`parse_targets`).
    series : str, optional
        The IEC 60063 series to pick every resistor, capacitor and inductor from
        (``"E12"``, ``"E24"`` ...); by default each part's own (its sourcing's, or by kind).
    progress : callable, optional
        ``progress(done, total)`` after each field.
    cancel : callable, optional
        Polled between fields; True stops the search with :class:`bandsketch.engine.core.errors.Cancelled`.

    Returns
    -------
    tuple of Remedy
        Fields that can meet the target first, the smallest change first; then the ones
        that cannot.
    """
    if target not in JUDGED or getattr(targets, target) is None:
        raise ValueError(f"the design has no {TARGET_LABELS[target]} target")
    found = []
    all_knobs = knobs(doc)
    for i, knob in enumerate(all_knobs):
        if cancel is not None and cancel():
            raise Cancelled()
        found.append(_remedy_for(doc, knob, target, targets, series))
        if progress is not None:
            progress(i + 1, len(all_knobs))
    return tuple(sorted(found, key=lambda r: (r.exact_value is None, r.change, r.knob.label)))


def _remedy_for(doc, knob: Knob, target: str, targets: Targets, series: str | None = None) -> Remedy:
    """The value of one knob that alone meets ``target`` (see :func:`values_that_meet`)."""
    fig = _Figure(doc, knob, target, targets)
    x0 = abs(knob.nominal)
    what = TARGET_LABELS[target]
    t_exact = _root(fig, estimate=False)
    lo, hi = format_value(x0 / 10 ** SEARCH_DECADES, knob.unit), format_value(x0 * 10 ** SEARCH_DECADES, knob.unit)
    if t_exact is None:
        return Remedy(target, knob, None, None, None, None, None,
                      f"no single value of {knob.label} from {lo} to {hi} meets the {what} target")
    exact = x0 * math.exp(t_exact)
    t_est = t_exact if target == "gain" else _root(fig, estimate=True)
    estimate = None if t_est is None else x0 * math.exp(t_est)
    sign = math.copysign(1.0, knob.nominal)

    def passes(v):
        return fig.passes(abs(v))

    standard, used = None, None
    if knob.standard:
        used = series or knob.series
        if target == "gain":
            near = eseries.nearest(exact, used)
            standard = near if passes(near) else None
        else:
            # Which side of the root meets the target: the side g grows into for f_H, falls into for f_L.
            up = fig.ok(fig.g(exact * 1.001, False))
            standard = eseries.nearest_meeting(exact, used, passes, +1 if up else -1)
        apply_value = standard
    else:
        apply_value = _rounded_toward(exact, passes)
    apply_text = None if apply_value is None else format_value(sign * apply_value, "", digits=3)
    est_text = "the estimate has no answer in that range" if estimate is None else \
        f"the estimate would say {format_value(estimate, knob.unit)}"
    text = f"{knob.label} = {format_value(exact, knob.unit, 4)} meets it ({est_text})"
    if knob.standard:
        text += (f"; {used}: {format_value(standard, knob.unit)}" if standard is not None
                 else f"; no {used} value near it meets it")
    return Remedy(target, knob, exact, estimate, standard, used, apply_text, text)
