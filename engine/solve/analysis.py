"""The time-constant analysis of a stage: bands, estimated corners, exact corners, warnings.

:func:`analyze` sorts every capacitor and inductor into the low band, the high band or
neither by the short/open gain test (:mod:`bandsketch.engine.solve.bands`), finds the resistive mid-band
gain, the open-circuit time constants of the high band and the short-circuit time
constants of the low band from one factorisation each (:mod:`bandsketch.engine.solve.timeconstants`),
and the exact corners of the full network (:mod:`bandsketch.engine.solve.corners`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property
from types import MappingProxyType
from typing import Mapping

import numpy as np

from .bands import (BANDS, HIGH, IN_BAND_DB, LOW, NEUTRAL, NEUTRAL_DB, band_tests, fixed_elements,
                    parallel_capacitance, parallel_groups)
from .corners import brackets, corner, first_span, midband_guess, points_per_decade, second_order_corner, wide_sweep
from ..network.elements import Capacitor, Inductor, ISource, VSource
from ..core.errors import CircuitError
from .dcop import OperatingPoint, solved
from .mna import OPEN, SHORT, build_system
from .response import frequency_response, poles, zeros
from . import step
from .timeconstants import FULL_MATRIX_LIMIT, factorize, open_circuit, port_columns, port_weights, short_circuit
from ..network.validate import validate
from ..core.values import format_value

MAX_ROUNDS = 6
"""Classification rounds before the analysis gives up waiting for the bands to settle."""
DOMINANCE = 4.0
"""The second pole within this factor of the first: no dominant pole (the two-octave rule)."""
RHP_ZERO_FACTOR = 10.0
"""A right-half-plane zero below this multiple of f_H is worth a warning."""
PEAKING_DB = 0.1
"""Exact gain this far above |A_m| (dB) counts as peaking."""
UNREACHED_RATIO = 1e-12
"""A mid-band output below this fraction of the largest node voltage is rounding, not signal."""
ZERO_CHECK_LIMIT = 250
"""Up to this many unknowns the exact zeros are found during the analysis (for the
right-half-plane warning); beyond it they cost too much and are left to ``Analysis.zeros``."""


@dataclass(frozen=True)
class PortPicture:
    """How an element's resistance is found, for drawing it.

    Attributes
    ----------
    element : str
        The element under test; a test source replaces it.
    nodes : tuple of str
        The two nodes the test source connects.
    shorted, opened : tuple of str
        The other capacitors and inductors, at their mid-band states.
    zeroed : tuple of str
        The independent sources, zeroed (a voltage source is a short, a current source an open).
    """

    element: str
    nodes: tuple[str, str]
    shorted: tuple[str, ...]
    opened: tuple[str, ...]
    zeroed: tuple[str, ...]


@dataclass(frozen=True)
class ElementResult:
    """What the analysis found for one capacitor or inductor.

    Attributes
    ----------
    name : str
        Element name (``Cin``, or ``Q1.cmu`` inside a block).
    nodes : tuple of str
        Its two nodes.
    band : str
        ``"low"``, ``"high"`` or ``"neutral"``.
    pinned : bool
        The user chose the band; the test did not.
    resistance : float or None
        Ω seen at its terminals: for the high band with the other high-band elements at
        zero value (capacitors open, inductors shorted), for the low band with the other
        low-band elements at infinite value (capacitors shorted, inductors open); the other
        band at its mid-band state. ``inf`` for an inductor that sees an open circuit. None
        when neutral.
    time_constant : float or None
        s: C·R for a capacitor, L/R for an inductor. None when neutral. Low-band
        capacitors in parallel form one port: each reports the port's R and τ = ΣC·R.
    share : float
        Fraction of its band: τ/b1 in the high band, (1/τ)/ω_L in the low band; 0 when neutral.
    reason : str
        Why it is in its band, in words.
    gain_shorted, gain_opened : float
        |H| at the mid-band frequency with the element shorted and opened, the others as they
        are (in the gain unit, V/V or V/A).
    acts_in_band : bool
        Both states lower the gain by more than 1 dB: it acts inside the band.
    state : str
        ``"short"`` or ``"open"``: its state in the resistive mid-band network (and in
        every other element's test picture).
    """

    name: str
    nodes: tuple[str, str]
    band: str
    pinned: bool
    resistance: float | None
    time_constant: float | None
    share: float
    reason: str
    gain_shorted: float
    gain_opened: float
    acts_in_band: bool
    state: str


@dataclass(frozen=True)
class CapacitorResult(ElementResult):
    """:class:`ElementResult` of a capacitor; ``capacitance`` in F."""

    capacitance: float


@dataclass(frozen=True)
class InductorResult(ElementResult):
    """:class:`ElementResult` of an inductor; ``inductance`` in H."""

    inductance: float


@dataclass(frozen=True)
class Analysis:
    """The result of :func:`analyze`; immutable.

    Attributes
    ----------
    title : str
        The circuit's title.
    gain_unit : str
        ``"V/V"`` for a voltage input, ``"V/A"`` for a current input.
    midband_gain : float
        Resistive mid-band gain A_m, signed (gain unit): low-band elements at their
        mid-band state (capacitors shorted, inductors open), high-band ones at theirs
        (capacitors open, inductors shorted), neutral capacitors open, neutral inductors shorted.
    midband_frequency : float
        Hz, where the band test was made: √(f_L·f_H) of the exact corners once they are known.
    capacitors, inductors : Mapping[str, ElementResult]
        Name -> :class:`CapacitorResult` / :class:`InductorResult`, in circuit order.
    b1 : float
        s, Σ of the high band's open-circuit time constants (0 without a high band).
    b2 : float or None
        s², the s² coefficient of the high band's normalised denominator (Cochrun–Grabel);
        None when the high band has more than the full-matrix limit of elements.
    high_time_constants : tuple of complex or None
        s, the exact high-band time constants λ (eigenvalues of D·Z), largest first; the
        poles are −1/λ, and λ = 0 marks a loop of capacitors (no pole). None when b2 is None.
    f_high_estimate : float or None
        Hz, 1/(2π·b1).
    f_high_estimate_2nd : float or None
        Hz, the corner of 1/(1 + b1·s + b2·s²).
    omega_low_estimate : float or None
        rad/s, Σ 1/τ of the low band's short-circuit time constants.
    f_low_estimate : float or None
        Hz, ω_L/(2π).
    f_high_exact, f_low_exact : float or None
        Hz, where the exact |H| falls to |A_m|/√2 above and below the mid band; None where
        it never does (a d.c.-coupled stage has no lower corner).
    f_high_ratio, f_low_ratio : float or None
        Estimate / exact (first order).
    dominant_high, dominant_low : str or None
        The element with the largest share of each band.
    sweep_frequencies : numpy.ndarray
        Hz, the exact sweep the corners were found on (read-only).
    sweep_response : numpy.ndarray
        Complex H there (gain unit, read-only).
    sources : tuple of str
        The independent sources, zeroed in every test picture.
    """

    title: str
    gain_unit: str
    midband_gain: float
    midband_frequency: float
    capacitors: Mapping[str, CapacitorResult]
    inductors: Mapping[str, InductorResult]
    b1: float
    b2: float | None
    high_time_constants: tuple[complex, ...] | None
    f_high_estimate: float | None
    f_high_estimate_2nd: float | None
    omega_low_estimate: float | None
    f_low_estimate: float | None
    f_high_exact: float | None
    f_low_exact: float | None
    f_high_ratio: float | None
    f_low_ratio: float | None
    dominant_high: str | None
    dominant_low: str | None
    sweep_frequencies: np.ndarray = field(repr=False)
    sweep_response: np.ndarray = field(repr=False)
    _warnings: tuple[str, ...] = field(repr=False)
    sources: tuple[str, ...] = field(repr=False)
    _system: object = field(repr=False, compare=False)
    _zeros: np.ndarray | None = field(repr=False, compare=False)
    operating_point: OperatingPoint | None = field(default=None, repr=False, compare=False)
    """The DC operating point the transistors biased from the circuit were solved at (their
    regions and the bias warnings), or None when no block is biased from the circuit."""

    @property
    def warnings(self) -> list[str]:
        """Plain-language warnings (a fresh list of str each time)."""
        return list(self._warnings)

    @property
    def elements(self) -> Mapping[str, ElementResult]:
        """Capacitors and inductors together, name -> result."""
        return MappingProxyType({**self.capacitors, **self.inductors})

    def response(self, freqs) -> np.ndarray:
        """Exact complex H (gain unit) of the full network at ``freqs`` (Hz)."""
        return frequency_response(self._system, freqs)

    @cached_property
    def poles(self) -> np.ndarray:
        """Exact poles of the full network (rad/s, complex; computed on first use)."""
        return poles(self._system)

    @cached_property
    def zeros(self) -> np.ndarray:
        """Exact finite zeros from input to output (rad/s, complex; computed on first use)."""
        return zeros(self._system) if self._zeros is None else self._zeros

    def step_response(self, t_stop: float | None = None, points: int = 2000, **options) -> step.StepResponse:
        """The exact response to a unit input step and its figures beside their estimates
        (:func:`bandsketch.engine.solve.step.step_response`; ``t_stop`` in s)."""
        return step.step_response(self, t_stop, points, **options)

    def pulse_response(self, width: float, t_stop: float | None = None, points: int = 2000,
                       **options) -> step.PulseResponse:
        """The response to a unit input pulse of ``width`` s, with its sag
        (:func:`bandsketch.engine.solve.step.pulse_response`)."""
        return step.pulse_response(self, width, t_stop, points, **options)

    def midband_states(self) -> dict[str, str]:
        """Name -> ``"short"`` or ``"open"``: the resistive mid-band network, for
        :func:`bandsketch.engine.solve.mna.build_system`."""
        return {r.name: r.state for r in self.elements.values()}

    def port_picture(self, name: str) -> PortPicture | None:
        """How ``name``'s resistance is found; None for a neutral element (it has none)."""
        el = self.elements[name]
        if el.band == NEUTRAL:
            return None
        shorted, opened = [], []
        for other in self.elements.values():
            if other.name != name:
                (shorted if other.state == SHORT else opened).append(other.name)
        return PortPicture(name, el.nodes, tuple(shorted), tuple(opened), self.sources)


def midband_state(el, band) -> str:
    """``"short"`` or ``"open"``: an element's state in the resistive mid-band network.

    Low band: a capacitor is shorted, an inductor open; high band and neutral: a capacitor
    is open, an inductor shorted. ``el`` is an element or an :class:`ElementResult`.
    """
    is_cap = isinstance(el, (Capacitor, CapacitorResult))
    if band == LOW:
        return SHORT if is_cap else OPEN
    return OPEN if is_cap else SHORT


def midband_states(reactive, bands) -> dict[str, str]:
    """States of the resistive mid-band network, as :func:`bandsketch.engine.solve.mna.build_system` takes them.

    Parameters
    ----------
    reactive : sequence of Capacitor or Inductor
    bands : Mapping[str, str]
        Name -> band.

    Notes
    -----
    A capacitor whose short would close a loop of other shorts is left open instead: its
    nodes are already joined, so the network is the same and stays solvable.
    """
    parent: dict[str, str] = {}

    def root(node):
        while parent.setdefault(node, node) != node:
            parent[node] = parent[parent[node]]
            node = parent[node]
        return node

    states = {}
    for el in sorted(reactive, key=lambda e: isinstance(e, Capacitor)):
        state = midband_state(el, bands[el.name])
        if state == SHORT:
            ra, rb = root(el.a), root(el.b)
            if ra == rb and isinstance(el, Capacitor):
                state = OPEN
            parent[ra] = rb
        states[el.name] = state
    return states


def _db(gain: float) -> str:
    return f"{20 * math.log10(gain):.1f}".replace("-", "−") if gain > 0 else "−∞"


def _reason(el, test, unit_db) -> str:
    is_cap = isinstance(el, Capacitor)
    low_verb, high_verb = ("opening", "shorting") if is_cap else ("shorting", "opening")
    low_gain, high_gain = (test.gain_opened, test.gain_shorted) if is_cap else (test.gain_shorted, test.gain_opened)
    if test.fixed:
        return f"{test.fixed}: neutral"
    if test.band in (LOW, HIGH):
        verb, before, after, mid_state = ((low_verb, high_gain, low_gain, "shorted" if is_cap else "open")
                                          if test.band == LOW else
                                          (high_verb, low_gain, high_gain, "open" if is_cap else "shorted"))
        change = "drops" if after < before else "raises"
        text = f"{verb} {el.name} {change} the gain from {_db(before)} {unit_db} to {_db(after)} {unit_db}"
        if change == "raises":
            text += f", but it is {mid_state} at mid band"
        text += f": {test.band} band"
    else:
        text = (f"neither shorting nor opening {el.name} moves the gain by {NEUTRAL_DB} dB or more "
                f"(as it is {_db(test.gain_as_is)} {unit_db}, shorted {_db(test.gain_shorted)} {unit_db}, "
                f"opened {_db(test.gain_opened)} {unit_db}): neutral")
    if test.acts_in_band:
        text += (f"; both states lower the gain more than {IN_BAND_DB:g} dB below {_db(test.gain_as_is)} "
                 f"{unit_db}, so it acts inside the band")
    return text


def _check_pins(bands, reactive_names) -> dict[str, str]:
    pins = dict(bands or {})
    for name, band in pins.items():
        if name not in reactive_names:
            raise CircuitError(f"Cannot pin {name} to a band: it is not a capacitor or inductor of this "
                               f"circuit (block capacitors are named like Q1.cmu).", parts=(name,))
        if band not in BANDS:
            raise CircuitError(f"{name} is pinned to '{band}': choose 'low', 'high' or 'neutral'.", parts=(name,))
    return pins


def _next_midband(low_bracket, high_bracket, current, f):
    """√(f_L·f_H), with each corner taken as the geometric middle of its sweep bracket."""
    f_low = math.sqrt(low_bracket[0] * low_bracket[1]) if low_bracket else None
    f_high = math.sqrt(high_bracket[0] * high_bracket[1]) if high_bracket else None
    if f_low and f_high:
        nxt = math.sqrt(f_low * f_high)
    elif f_high:
        nxt = f_high / 100  # no low band: the mid band reaches down to d.c.
    elif f_low:
        nxt = f_low * 100
    else:
        nxt = current
    return min(max(nxt, f[0]), f[-1])


def _low_band(c, low, states):
    """Short-circuit constants of the low band, from one LU.

    The network has the low-band elements at zero value (capacitors open, inductors
    0-V branches) and every other element at its mid-band state in ``states``. Parallel
    capacitors are one port of their total capacitance: shorting one would short the
    others. Returns the :class:`~bandsketch.engine.solve.timeconstants.ShortCircuit` and name -> port.
    """
    low_names = {el.name for el in low}
    zero_value = {el.name: OPEN for el in low if isinstance(el, Capacitor)}
    system = build_system(c, {**{k: v for k, v in states.items() if k not in low_names}, **zero_value})
    ports, port_of = [], {}
    for group in [*parallel_groups(low).values(), *([el] for el in low if isinstance(el, Inductor))]:
        port_of.update({el.name: len(ports) for el in group})
        ports.append(group)
    sc = short_circuit(factorize(system.G, "with the low-band elements at zero value", sorted(low_names)), port_columns(system, [g[0] for g in ports]),
                       np.array([sum(port_weights(g)) for g in ports]), ["+".join(el.name for el in g) for g in ports])
    return sc, port_of


def _ratio(a, b):
    return a / b if a is not None and b else None


def analyze(c, bands=None, *, per_decade: int | None = None, full_matrix_limit: int = FULL_MATRIX_LIMIT) -> Analysis:
    """Estimate a stage's −3 dB corners by time constants and find the exact ones.

    Parameters
    ----------
    c : bandsketch.engine.network.circuit.Circuit
        The stage, with its input and output chosen.
    bands : Mapping[str, str], optional
        Element name -> ``"low"``, ``"high"`` or ``"neutral"``: pins that override the
        band test.
    per_decade : int, optional
        Points per decade of the exact sweep; by default 20, or 8 for networks too large
        for a batched dense solve.
    full_matrix_limit : int
        Up to this many high-band elements, b2, the second-order estimate and the exact
        high-band time constants are computed (they cost N² memory and N³ time).

    Returns
    -------
    Analysis

    Raises
    ------
    CircuitError
        When the circuit cannot be analysed; the message names the parts and nodes.

    Notes
    -----
    Cost for N capacitors and n unknowns: the wide sweep is one solve per point (batched
    dense up to 60 unknowns, a sparse LU per point beyond); each band-test round is one
    complex LU and N solves; the time constants are one real LU and N solves each band;
    b2 and the exact high-band time constants add N² memory and an N³ eigenproblem, done
    up to ``full_matrix_limit``; the right-half-plane-zero check is an n³ eigenproblem, done
    up to 250 unknowns. Poles and zeros are otherwise computed only when asked for.
    """
    validate(c)
    point = solved(c) if c.large_blocks else None
    reactive = [el for el in c.elements.values() if isinstance(el, (Capacitor, Inductor))]
    pins = _check_pins(bands, {el.name for el in reactive})
    system = build_system(c)
    fixed = fixed_elements(c)
    freqs, H = wide_sweep(system, first_span(c), per_decade or points_per_decade(system))

    f_m = midband_guess(freqs, H)
    notes: list[str] = list(point.warnings) if point else []
    previous = None
    for _ in range(MAX_ROUNDS):
        tests = band_tests(system, reactive, f_m, fixed)
        chosen = {name: pins.get(name, t.band) for name, t in tests.items()}
        states = midband_states(reactive, chosen)
        mid = build_system(c, states)
        low_names = [el.name for el in reactive if chosen[el.name] == LOW]
        lu_mid = factorize(mid.G, "with the low-band elements at their mid-band states", low_names)
        x_mid = lu_mid.solve(mid.b)
        gain = float((mid.c @ x_mid).real)
        # Rounding leaves a trace at an output the signal cannot reach; judge it against the
        # largest node voltage the input drives, not against an exact zero.
        if abs(gain) <= UNREACHED_RATIO * np.abs(x_mid[:len(mid.node_index)]).max(initial=0.0):
            out = c.output_nodes[0] if c.output_nodes[1] == "0" else " − ".join(c.output_nodes)
            pinned = ", ".join(f"{name} to the {band} band" for name, band in pins.items())
            hint = (f"; it may be the band pins ({pinned}) that cut it off: unpin them to let the test decide"
                    if pins else "")
            raise CircuitError(f"The output {out} does not respond to the input "
                               f"{c.input_name} in the mid band: check the output probe and the signal path{hint}.",
                               nodes=c.output_nodes, parts=tuple(pins))
        low_bracket, high_bracket = brackets(freqs, H, f_m, abs(gain) / math.sqrt(2))
        if chosen == previous:
            break
        previous = chosen
        f_m = _next_midband(low_bracket, high_bracket, f_m, freqs)
    else:
        notes.append("The band test did not settle: the elements change band as the mid-band frequency "
                     "moves, so the bands overlap and the estimates are weak.")
    f_low = corner(system, low_bracket, abs(gain) / math.sqrt(2))
    f_high = corner(system, high_bracket, abs(gain) / math.sqrt(2))

    high = [el for el in reactive if chosen[el.name] == HIGH]
    low = [el for el in reactive if chosen[el.name] == LOW]
    oc = open_circuit(lu_mid, port_columns(mid, high), port_weights(high), full=len(high) <= full_matrix_limit)
    sc, low_port_of = _low_band(c, low, states)
    total_c = parallel_capacitance(low)

    b1 = oc.b1
    f_high_est = 1 / (2 * math.pi * b1) if b1 > 0 else None
    f_high_2nd = second_order_corner(b1, oc.b2) if high and oc.b2 is not None else None
    omega_low = sc.omega if low else None
    f_low_est = omega_low / (2 * math.pi) if omega_low and omega_low > 0 else None

    unit = "V/A" if isinstance(c.elements[c.input_name], ISource) else "V/V"
    unit_db = "dBΩ" if unit == "V/A" else "dB"
    position = {el.name: j for j, el in enumerate(high)}
    caps, inds = {}, {}
    for el in reactive:
        band = chosen[el.name]
        test = tests[el.name]
        resistance = tau = None
        share = 0.0
        j = position.get(el.name)
        if band == HIGH:
            tau = float(oc.time_constants[j])
            z = float(oc.port_values[j])
            resistance = z if isinstance(el, Capacitor) else (1 / -z if z != 0 else math.inf)
            share = tau / b1 if b1 else 0.0
        elif band == LOW:
            j = low_port_of[el.name]
            tau = float(sc.time_constants[j])
            y = float(sc.inverse_diagonal[j])
            resistance = 1 / y if isinstance(el, Capacitor) else -y
            # Parallel partners share their port's 1/τ in proportion to capacitance.
            part = el.value / total_c[el.name] if isinstance(el, Capacitor) else 1.0
            share = part * (1 / tau) / omega_low if omega_low else 0.0
        reason = _reason(el, test, unit_db)
        if el.name in pins:
            reason = f"pinned to the {band} band (the test says: {reason})"
        common = dict(name=el.name, nodes=el.nodes, band=band, pinned=el.name in pins, resistance=resistance,
                      time_constant=tau, share=share, reason=reason, gain_shorted=test.gain_shorted,
                      gain_opened=test.gain_opened, acts_in_band=test.acts_in_band, state=states[el.name])
        if isinstance(el, Capacitor):
            caps[el.name] = CapacitorResult(**common, capacitance=el.value)
        else:
            inds[el.name] = InductorResult(**common, inductance=el.value)

    every = {**caps, **inds}
    known_zeros = zeros(system) if system.size <= ZERO_CHECK_LIMIT else None
    notes += _warnings(every, tests, gain, b1, oc, f_high_est, f_high_2nd, f_high, f_low, freqs, H,
                       known_zeros, len(high) > full_matrix_limit, full_matrix_limit)
    freqs.flags.writeable = False
    H.flags.writeable = False
    sources = tuple(el.name for el in c.elements.values() if isinstance(el, (VSource, ISource)))
    return Analysis(
        title=c.title, gain_unit=unit, midband_gain=gain, midband_frequency=f_m,
        capacitors=MappingProxyType(caps), inductors=MappingProxyType(inds),
        b1=b1, b2=oc.b2,
        high_time_constants=None if oc.exact is None else tuple(complex(v) for v in oc.exact),
        f_high_estimate=f_high_est, f_high_estimate_2nd=f_high_2nd,
        omega_low_estimate=omega_low, f_low_estimate=f_low_est,
        f_high_exact=f_high, f_low_exact=f_low,
        f_high_ratio=_ratio(f_high_est, f_high), f_low_ratio=_ratio(f_low_est, f_low),
        dominant_high=_dominant(every, HIGH), dominant_low=_dominant(every, LOW),
        sweep_frequencies=freqs, sweep_response=H, _warnings=tuple(notes), sources=sources,
        _system=system, _zeros=known_zeros, operating_point=point)


def _dominant(results, band):
    inband = [r for r in results.values() if r.band == band]
    return max(inband, key=lambda r: r.share).name if inband else None


def _hz(f):
    return format_value(f, "Hz")


def _warnings(results, tests, gain, b1, oc, f_high_est, f_high_2nd, f_high, f_low, freqs, H,
              known_zeros, too_many, limit) -> list[str]:
    notes = []
    for r in results.values():
        if r.acts_in_band:
            notes.append(f"{r.name} acts inside the band: shorting and opening it both lower the gain by more "
                         f"than {IN_BAND_DB:g} dB, so the bands are not separated and the estimates are weak.")
    for r in results.values():
        if r.band != LOW or tests[r.name].fixed:
            continue
        is_cap = isinstance(r, CapacitorResult)
        low_gain, high_gain = (r.gain_opened, r.gain_shorted) if is_cap else (r.gain_shorted, r.gain_opened)
        if high_gain > 0 and low_gain / high_gain > 1 / math.sqrt(2):
            verb = "Opening" if is_cap else "Shorting"
            cost = (f"raises the gain by {20 * math.log10(low_gain / high_gain):.2f} dB" if low_gain >= high_gain
                    else f"costs only {20 * math.log10(high_gain / low_gain):.2f} dB")
            notes.append(f"{verb} {r.name} {cost}: it makes a pole–zero pair, not a corner of its own, and its "
                         "share of the lower-corner estimate overstates it.")
    if b1 < 0:
        notes.append("The open-circuit time constants add up to a negative b1: the high band has feedback "
                     "that the first-order estimate cannot describe; trust the exact corner.")
    if oc.b2 is not None and b1 > 0 and b1 * b1 < 4 * oc.b2:
        notes.append("The high band has complex poles (b1² < 4·b2): the response may peak, and the first-order "
                     "estimate 1/(2π·b1) can be optimistic instead of conservative.")
    mag = np.abs(H)
    top = int(np.argmax(mag))
    excess = 20 * math.log10(mag[top] / abs(gain))
    if excess > PEAKING_DB:
        notes.append(f"The exact gain peaks {excess:.1f} dB above the mid-band gain, at {_hz(freqs[top])}.")
    # A complex pair is reported above; dominance is a question about real poles.
    if oc.exact is not None and len(oc.exact) >= 2 and abs(oc.exact[1]) > 0 and oc.exact[0].imag == 0:
        ratio = abs(oc.exact[0]) / abs(oc.exact[1])
        if ratio < DOMINANCE:
            p1, p2 = (1 / (2 * math.pi * abs(v)) for v in oc.exact[:2])
            better = f"; the second-order estimate ({_hz(f_high_2nd)}) is closer" if f_high_2nd else ""
            notes.append(f"No pole dominates the high band: the second pole ({_hz(p2)}) is within "
                         f"{DOMINANCE:g}× of the first ({_hz(p1)}), so the first-order estimate is weak{better}.")
    reference = f_high or f_high_est
    if known_zeros is not None and reference:
        rhp = [z for z in known_zeros if z.real > 0 and abs(z) < RHP_ZERO_FACTOR * 2 * math.pi * reference]
        if rhp:
            z = min(rhp, key=abs)
            notes.append(f"A right-half-plane zero at {_hz(abs(z) / (2 * math.pi))} lies below "
                         f"{RHP_ZERO_FACTOR:g} × f_H: it adds phase lag, and the time-constant estimate ignores it.")
    if too_many:
        notes.append(f"The high band has more than {limit} elements: b2, the second-order estimate and the exact "
                     "high-band time constants were not computed.")
    if f_high is None and f_high_est is not None:
        notes.append("The exact gain never falls 3 dB above the mid band: there is no upper corner, only the estimate.")
    return notes
