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

from ..core.band import Band
from ..core.threads import one_blas_thread
from .bands import (IN_BAND_DB, NEUTRAL_DB, BandTest, GroupTest, band_tests, fixed_elements, group_tests,
                    parallel_capacitance, parallel_groups)
from .corners import (brackets, corners_around, first_span, midband_between, midband_guess, points_per_decade,
                      refine_peak, second_order_corner, wide_sweep)
from ..network.elements import Capacitor, Inductor, ISource, VSource
from ..core.errors import CircuitError
from .dcop import OperatingPoint, solved
from .floating import check_dc_solvable
from .lowcorner import LowSections, low_sections
from .mna import OPEN, SHORT, build_system
from .response import NEAREST_ROOTS, ROOT_LIMIT, frequency_response, poles, zeros
from . import notebook, step
from .analysisjson import analysis_to_dict
from .waveform import modes
from .timeconstants import (FULL_MATRIX_LIMIT, conductance, factorize, open_circuit, port_columns, port_diagonal,
                            port_weights, short_circuit)
from ..network.validate import validate
from ..core.values import db_unit, format_value

MAX_ROUNDS = 6
"""Classification rounds before the analysis gives up waiting for the bands to settle."""
PLACE_ROUNDS = 4
"""Rounds of placing the neutral elements by their impedance before the states must have settled."""
DOMINANCE = 4.0
"""The second pole within this factor of the first: no dominant pole (the two-octave rule)."""
ESTIMATE_TRUST = 0.25
"""An estimate further than this fraction from its exact corner always comes with a warning saying why."""
BANDS_APART = 10.0
"""f_H/f_L below this (a decade): each band's elements still act near the other's corner."""
RHP_ZERO_FACTOR = 10.0
"""A right-half-plane zero below this multiple of f_H is worth a warning."""
PEAKING_DB = 0.1
"""Exact gain this far above |A_m| (dB) counts as peaking; this far below it everywhere, as a
mid band that never reaches A_m."""
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
    band : Band
        ``Band.LOW``, ``Band.HIGH`` or ``Band.NEUTRAL`` (equal to the words ``"low"`` ...).
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
        Fraction of its band: τ/b1 in the high band; in the low band its part of the 3 dB
        fall at the estimated f_L (:class:`~bandsketch.engine.solve.lowcorner.LowSections`;
        negative when its opening raises the gain); 0 when neutral.
    reason : str
        Why it is in its band, in words.
    gain_shorted, gain_opened : float
        |H| at the mid-band frequency with the element shorted and opened, the others as they
        are (in the gain unit, V/V or V/A).
    acts_in_band : bool
        Both states lower the gain by more than 1 dB: it acts inside the band.
    state : str
        ``"short"`` or ``"open"``: its state in the resistive mid-band network (and in
        every other element's test picture, and in both bands' networks). A neutral
        element takes the state its impedance gives: shorted when it is below the
        resistance it sees, open when above.
    midband_reactance : float
        Ω, its impedance at the mid-band frequency: 1/(2π·f_m·C) or 2π·f_m·L.
    midband_resistance : float
        Ω it sees at the mid-band frequency with every other element at its state
        (0 when other shorts already join its ends, ``inf`` when it sees an open circuit).
    state_reason : str
        Its state and why, in words (``"shorted at mid band: 1/(2π·f_m·C) = 31.8 mΩ beside
        the 5 kΩ it sees"``).
    pole_zero_pair : bool
        A low-band element whose own section never falls 3 dB (its open/short gain ratio
        is above 1/√2): it makes a pole–zero pair, not a corner of its own.
    f_zero : float or None
        Hz, the zero of its own section in the low band: |H^j/H^0|/(2π·τ), with H^j the
        gain with it at its low-frequency state and the other low-band elements at their
        mid-band states, H^0 the gain with them all there; 0 for a coupling element. Its
        pole is 1/(2π·τ). None outside the low band.
    """

    name: str
    nodes: tuple[str, str]
    band: Band
    pinned: bool
    resistance: float | None
    time_constant: float | None
    share: float
    reason: str
    gain_shorted: float
    gain_opened: float
    acts_in_band: bool
    state: str
    midband_reactance: float
    midband_resistance: float
    state_reason: str
    pole_zero_pair: bool
    f_zero: float | None

    def __repr__(self) -> str:
        return notebook.element_repr(self)


@dataclass(frozen=True, repr=False)
class CapacitorResult(ElementResult):
    """:class:`ElementResult` of a capacitor; ``capacitance`` in F."""

    capacitance: float


@dataclass(frozen=True, repr=False)
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
        rad/s, the lower-corner estimate ω_L: where the low band's sections, each a pole
        1/τ (short-circuit time constant) and a zero from its open/short gain ratio, fall
        3 dB together (:mod:`bandsketch.engine.solve.lowcorner`); None where they never do
        (only pole–zero pairs).
    f_low_estimate : float or None
        Hz, ω_L/(2π): the headline lower-corner estimate.
    f_low_estimate_squares : float or None
        Hz, √(Σω_p² − 2Σω_z²)/(2π) of the same sections (the first-order expansion);
        None where the radicand is not positive.
    f_low_estimate_sum : float or None
        Hz, Σ 1/τ/(2π): the sum of the low band's pole magnitudes (exact), which counts
        a pole–zero pair as a pole; also the rate a pulse's top starts to sag at.
    f_high_exact, f_low_exact : float or None
        Hz, where the exact |H| falls to |A_m|/√2 above and below the mid band; None where
        it never does (a d.c.-coupled stage has no lower corner).
    f_high_ratio, f_low_ratio : float or None
        Estimate / exact (first order).
    dominant_high, dominant_low : str or None
        The element with the largest share of each band.
    shortfall_db : float or None
        dB by which the exact gain's peak stays below |A_m| when it never comes within 3 dB of
        it (the bands overlap: there is no −3 dB band, and both exact corners are None); None
        when the stage reaches its mid-band gain.
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
    f_low_estimate_squares: float | None
    f_low_estimate_sum: float | None
    f_high_exact: float | None
    f_low_exact: float | None
    f_high_ratio: float | None
    f_low_ratio: float | None
    dominant_high: str | None
    dominant_low: str | None
    shortfall_db: float | None
    sweep_frequencies: np.ndarray = field(repr=False)
    sweep_response: np.ndarray = field(repr=False)
    _warnings: tuple[str, ...] = field(repr=False)
    sources: tuple[str, ...] = field(repr=False)
    _system: object = field(repr=False, compare=False)
    _zeros: np.ndarray | None = field(repr=False, compare=False)
    operating_point: OperatingPoint | None = field(default=None, repr=False, compare=False)
    """The DC operating point the transistors biased from the circuit were solved at (their
    regions and the bias warnings), or None when no block is biased from the circuit."""

    def __repr__(self) -> str:
        return notebook.analysis_repr(self)

    def _repr_html_(self) -> str:
        return notebook.analysis_html(self)

    def to_dict(self) -> dict:
        """Every field as plain JSON-ready data, as ``bandsketch analyze --json`` prints it
        (:func:`bandsketch.engine.solve.analysisjson.analysis_to_dict`)."""
        return analysis_to_dict(self)

    def to_rows(self) -> list[dict]:
        """One dict per capacitor and inductor (element, band, mid-band state, R in Ω, τ in s,
        share, reason): :func:`bandsketch.engine.solve.notebook.analysis_rows`."""
        return notebook.analysis_rows(self)

    def to_frame(self):
        """:meth:`to_rows` as a pandas DataFrame indexed by element name.

        Raises
        ------
        ImportError
            pandas is not installed (it is not a dependency of Bandsketch).
        """
        try:
            import pandas
        except ImportError:
            raise ImportError("Analysis.to_frame needs pandas, which Bandsketch does not install: "
                              "pip install pandas (or use Analysis.to_rows)") from None
        return pandas.DataFrame(self.to_rows()).set_index("element")

    @property
    def warnings(self) -> list[str]:
        """Plain-language warnings (a fresh list of str each time)."""
        return list(self._warnings)

    @property
    def elements(self) -> Mapping[str, ElementResult]:
        """Capacitors and inductors together, name -> result."""
        return MappingProxyType({**self.capacitors, **self.inductors})

    def response(self, freqs) -> np.ndarray:
        """Exact complex H (gain unit) of the full network at ``freqs`` (Hz).

        Parameters
        ----------
        freqs : array_like
            Hz.
        """
        return frequency_response(self._system, freqs)

    @property
    def _band_edges(self) -> tuple:
        """rad/s, negative real shifts at the corners (exact, else estimated) and the mid band."""
        edges = [self.f_high_exact or self.f_high_estimate, self.f_low_exact or self.f_low_estimate,
                 self.midband_frequency]
        return tuple(-2 * math.pi * f for f in edges if f)

    @property
    def roots_complete(self) -> bool:
        """Whether :attr:`poles` and :attr:`zeros` are all of them (up to the root limit of
        unknowns), or only those nearest the band edges (:attr:`roots_note` says which)."""
        return self._system.size <= ROOT_LIMIT

    @property
    def roots_note(self) -> str:
        """What :attr:`poles` and :attr:`zeros` hold, when they are not all of them ("" when they are)."""
        if self.roots_complete:
            return ""
        return (f"Only the {NEAREST_ROOTS} poles and zeros nearest each band edge and the mid band are listed: "
                f"the network has {self._system.size:,} unknowns, and finding all of them (above "
                f"{ROOT_LIMIT} unknowns) would take minutes to hours.")

    @cached_property
    def poles(self) -> np.ndarray:
        """Exact poles of the full network (rad/s, complex; computed on first use): all of
        them, or above the root limit those nearest the band edges (:attr:`roots_note`)."""
        return poles(self._system, near=self._band_edges)

    @cached_property
    def zeros(self) -> np.ndarray:
        """Exact finite zeros from input to output (rad/s, complex; computed on first use):
        all of them, or above the root limit those nearest the band edges (:attr:`roots_note`)."""
        return zeros(self._system, near=self._band_edges) if self._zeros is None else self._zeros

    def step_response(self, t_stop: float | None = None, points: int = 2000, **options) -> step.StepResponse:
        """The exact response to a unit input step and its figures beside their estimates
        (:func:`bandsketch.engine.solve.step.step_response`; ``t_stop`` in s).

        Parameters
        ----------
        t_stop : float, optional
            s, the window's end (see :func:`bandsketch.engine.solve.step.step_response`).
        points : int
            Samples from 0 to ``t_stop``.
        **options
            Passed to :func:`bandsketch.engine.solve.step.step_response`.
        """
        if t_stop is None and points == 2000 and not options:
            return self._default_step
        return step.step_response(self, t_stop, points, **options)

    @cached_property
    def _step_modes(self):
        # The step, the pulse and their figures all read the same poles and residues.
        return modes(self._system, self.midband_gain)

    @cached_property
    def _default_step(self) -> step.StepResponse:
        # The view, the targets and the report all read this one window: worked out once.
        return step.step_response(self, None, 2000)

    def pulse_response(self, width: float, t_stop: float | None = None, points: int = 2000,
                       **options) -> step.PulseResponse:
        """The response to a unit input pulse of ``width`` s, with its sag
        (:func:`bandsketch.engine.solve.step.pulse_response`).

        Parameters
        ----------
        width : float
            The pulse's width, s.
        t_stop : float, optional
            s, the window's end.
        points : int
            Samples from 0 to ``t_stop``.
        **options
            Passed to :func:`bandsketch.engine.solve.step.pulse_response`.
        """
        return step.pulse_response(self, width, t_stop, points, **options)

    def midband_states(self) -> dict[str, str]:
        """Name -> ``"short"`` or ``"open"``: the resistive mid-band network, for
        :func:`bandsketch.engine.solve.mna.build_system`.

        Capacitors in parallel are all shorted at mid band; in the network one short joins
        their nodes and the others are left out (the same network, and solvable).
        """
        return _joined_once(self.elements.values(), {r.name: r.state for r in self.elements.values()})

    def port_picture(self, name: str) -> PortPicture | None:
        """How ``name``'s resistance is found; None for a neutral element (it has none).

        Parameters
        ----------
        name : str
            A capacitor's or inductor's name.
        """
        el = self.elements[name]
        if el.band == Band.NEUTRAL:
            return None
        shorted, opened = [], []
        for other in self.elements.values():
            if other.name != name:
                (shorted if other.state == SHORT else opened).append(other.name)
        return PortPicture(name, el.nodes, tuple(shorted), tuple(opened), self.sources)


def _band_state(el, band) -> str:
    """``"short"`` or ``"open"``: the mid-band state a band implies.

    Low band: a capacitor is shorted, an inductor open; high band: a capacitor is open, an
    inductor shorted. A neutral element has no state of its own from its band: it takes the
    one its impedance gives (:func:`physical_state`); without one it is left at its
    high-band state. ``el`` is an element or an :class:`ElementResult`.
    """
    is_cap = isinstance(el, (Capacitor, CapacitorResult))
    if band == Band.LOW:
        return SHORT if is_cap else OPEN
    return OPEN if is_cap else SHORT


def _joined_once(reactive, states) -> dict[str, str]:
    """``states`` with every capacitor whose short would close a loop of other shorts left open
    (inductors first, then capacitors, each in circuit order)."""
    parent: dict[str, str] = {}

    def root(node):
        while parent.setdefault(node, node) != node:
            parent[node] = parent[parent[node]]
            node = parent[node]
        return node

    out = {}
    for el in sorted(reactive, key=lambda e: isinstance(e, (Capacitor, CapacitorResult))):
        state = states[el.name]
        if state == SHORT:
            ra, rb = root(el.nodes[0]), root(el.nodes[1])
            if ra == rb and isinstance(el, (Capacitor, CapacitorResult)):
                state = OPEN
            parent[ra] = rb
        out[el.name] = state
    return out


def midband_states(reactive, bands, neutral_states=None) -> dict[str, str]:
    """States of the resistive mid-band network, as :func:`bandsketch.engine.solve.mna.build_system` takes them.

    Parameters
    ----------
    reactive : sequence of Capacitor or Inductor
    bands : Mapping[str, Band]
        Name -> band.
    neutral_states : Mapping[str, str], optional
        Name -> state of the neutral elements, by their impedance (:func:`physical_state`).

    Notes
    -----
    A capacitor whose short would close a loop of other shorts is left open instead: its
    nodes are already joined, so the network is the same and stays solvable.
    """
    neutral_states = neutral_states or {}
    chosen = {}
    for el in reactive:
        band = bands[el.name]
        state = neutral_states.get(el.name) if band == Band.NEUTRAL else None
        chosen[el.name] = state or _band_state(el, band)
    return _joined_once(reactive, chosen)


def reactance(el, f: float) -> float:
    """|Z| (Ω) of a capacitor (1/(2π·f·C)) or an inductor (2π·f·L) at ``f`` (Hz).

    Parameters
    ----------
    el : Capacitor or Inductor
        Its value in F or H.
    f : float
        Hz.
    """
    w = 2 * math.pi * f
    return 1 / (w * el.value) if isinstance(el, Capacitor) else w * el.value


def physical_state(el, f: float, seen: float) -> str:
    """``"short"`` or ``"open"``: what an element is at ``f`` (Hz) beside the resistance it sees.

    Parameters
    ----------
    el : Capacitor or Inductor
    f : float
        Hz, the mid-band frequency.
    seen : float
        Ω, the resistance between its terminals with every other element at its mid-band state.

    Notes
    -----
    Its impedance below the resistance it sees (ω·R·C > 1 for a capacitor, ω·L/R < 1 for
    an inductor) makes it a short, above it an open.
    """
    return SHORT if reactance(el, f) < seen else OPEN


def _port_diagonal_at(stage, states, system, lu) -> np.ndarray:
    """Every reactive element's port entry in the resistive network at ``states`` (once per states)."""
    key = tuple(states.items())
    if key not in stage._diagonals:
        stage._diagonals[key] = port_diagonal(lu, port_columns(system, stage.reactive)).real
    return stage._diagonals[key]


def _seen_resistances(system, z, reactive) -> dict[str, float]:
    """Ω each element sees in the resistive network ``system``, from its port entries ``z``.

    A shorted element is a 0-V branch: its port entry is minus the conductance it sees. An
    open one is left out: its port entry, across its nodes, is the resistance. Either way
    the others stay at their states.
    """
    out = {}
    for el, v in zip(reactive, z):
        if el.name in system.branch_index:
            out[el.name] = float(1 / -v) if v != 0 else math.inf
        else:
            out[el.name] = max(float(v), 0.0)
    return out


def _db(gain: float) -> str:
    return f"{20 * math.log10(gain):.1f}".replace("-", "−") if gain > 0 else "−∞"


def _reason(el, test, unit_db) -> str:
    is_cap = isinstance(el, Capacitor)
    low_verb, high_verb = ("opening", "shorting") if is_cap else ("shorting", "opening")
    low_gain, high_gain = (test.gain_opened, test.gain_shorted) if is_cap else (test.gain_shorted, test.gain_opened)
    if test.fixed:
        return f"{test.fixed}: neutral"
    if test.band in (Band.LOW, Band.HIGH):
        verb, before, after, mid_state = ((low_verb, high_gain, low_gain, "shorted" if is_cap else "open")
                                          if test.band == Band.LOW else
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


def state_reason(el, state: str, x: float, seen: float) -> str:
    """An element's mid-band state and why, in a designer's words.

    Parameters
    ----------
    el : Capacitor or Inductor
    state : str
        ``"short"`` or ``"open"``.
    x : float
        Ω, its impedance at the mid-band frequency.
    seen : float
        Ω, the resistance it sees there.
    """
    word = "shorted" if state == SHORT else "open"
    formula = "1/(2π·f_m·C)" if isinstance(el, Capacitor) else "2π·f_m·L"
    if seen == 0:
        return f"{word} at mid band: other shorts already join its ends"
    beside = "the open circuit it sees" if math.isinf(seen) else f"the {format_value(seen, 'Ω')} it sees"
    return f"{word} at mid band: {formula} = {format_value(x, 'Ω')} beside {beside}"


def _check_pins(bands, reactive_names) -> dict[str, Band]:
    pins = {}
    for name, band in dict(bands or {}).items():
        if name not in reactive_names:
            raise CircuitError(f"Cannot pin {name} to a band: it is not a capacitor or inductor of this "
                               f"circuit (block capacitors are named like Q1.cmu).", parts=(name,))
        if band not in tuple(Band):
            words = ", ".join(f"'{b}'" for b in Band)
            raise CircuitError(f"{name} is pinned to '{band}': choose one of {words}.", parts=(name,))
        pins[name] = Band(band)
    return pins


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
    sc = short_circuit(factorize(conductance(system), "with the low-band elements at zero value", sorted(low_names)),
                       port_columns(system, [g[0] for g in ports]),
                       np.array([sum(port_weights(g)) for g in ports]), ["+".join(el.name for el in g) for g in ports],
                       io=(system.b, system.c))
    return sc, port_of


def _ratio(a, b):
    return a / b if a is not None and b else None


# -- the steps of the analysis, each with its own small record -------------------------------------
@dataclass(frozen=True)
class Stage:
    """The circuit as the analysis takes it: validated, assembled and swept once.

    Attributes
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    reactive : tuple of Capacitor or Inductor
        Every capacitor and inductor, in circuit order.
    pins : Mapping[str, Band]
        The user's pins.
    fixed : Mapping[str, str]
        Elements one of whose states an ideal source makes undefined, with the reason.
    system : bandsketch.engine.solve.mna.MnaSystem
        The full network.
    sweep_frequencies : numpy.ndarray
        Hz, the wide exact sweep.
    sweep_response : numpy.ndarray
        Complex H there (gain unit).
    gain_unit : str
        ``"V/V"`` or ``"V/A"``.
    operating_point : OperatingPoint or None
        The DC point the blocks biased from the circuit were solved at; None when no block is.
    """

    circuit: object
    reactive: tuple
    pins: Mapping[str, Band]
    fixed: Mapping[str, str]
    system: object
    sweep_frequencies: np.ndarray = field(repr=False)
    sweep_response: np.ndarray = field(repr=False)
    gain_unit: str
    operating_point: OperatingPoint | None = field(default=None, repr=False)
    _networks: dict = field(default_factory=dict, repr=False, compare=False)
    """States -> the resistive network at them and its factors: the band rounds revisit the same states."""
    _diagonals: dict = field(default_factory=dict, repr=False, compare=False)
    """States -> the port diagonal of every reactive element in that network: the rounds that
    revisit the states, and the open-circuit constants of a large high band, reuse it."""


@dataclass(frozen=True)
class Classification:
    """The band test, repeated until the bands settle, and the resistive mid-band network it gives.

    Attributes
    ----------
    midband_frequency : float
        Hz, where the last test was made.
    tests : Mapping[str, BandTest]
        The short/open gain test of every element there.
    bands : Mapping[str, Band]
        Every element's band (a pin wins over the test).
    states : Mapping[str, str]
        Every element's mid-band state, ``"short"`` or ``"open"``: the one its band implies,
        or for a neutral element the one its impedance gives (:func:`physical_state`).
    seen : Mapping[str, float]
        Ω each element sees at mid band, with every other element at its state.
    midband_gain : float
        Resistive mid-band gain A_m, signed (gain unit).
    mid : bandsketch.engine.solve.mna.MnaSystem
        The resistive mid-band network (every element at its state).
    mid_lu : object
        Its conductance matrix, factorised (:func:`bandsketch.engine.solve.timeconstants.factorize`).
    settled : bool
        False when the bands still changed after :data:`MAX_ROUNDS` rounds.
    groups : tuple of GroupTest
        Capacitors the one-at-a-time test left inconclusive that share nodes, tested together
        at the mid-band frequency (a loop, two paths, a series chain).
    """

    midband_frequency: float
    tests: Mapping[str, BandTest]
    bands: Mapping[str, Band]
    states: Mapping[str, str]
    seen: Mapping[str, float]
    midband_gain: float
    mid: object = field(repr=False)
    mid_lu: object = field(repr=False)
    settled: bool
    groups: tuple[GroupTest, ...] = ()

    def members(self, stage, band) -> list:
        """The elements of ``stage`` in ``band``, in circuit order."""
        return [el for el in stage.reactive if self.bands[el.name] == band]


@dataclass(frozen=True)
class Estimates:
    """The time-constant estimates of both corners.

    Attributes
    ----------
    open_circuit : bandsketch.engine.solve.timeconstants.OpenCircuit
        The high band's open-circuit constants (b1, b2, exact time constants).
    short_circuit : bandsketch.engine.solve.timeconstants.ShortCircuit
        The low band's short-circuit constants.
    low_port_of : Mapping[str, int]
        Low-band element name -> its port in ``short_circuit`` (parallel capacitors share one).
    f_high, f_high_2nd : float or None
        Hz, 1/(2π·b1) and the corner of 1/(1 + b1·s + b2·s²).
    low_sections : bandsketch.engine.solve.lowcorner.LowSections
        The low band's ports as first-order sections (poles, zeros, shares).
    omega_low : float or None
        rad/s, the low band's estimate ω_L (where its sections fall 3 dB together).
    f_low : float or None
        Hz, ω_L/(2π).
    """

    open_circuit: object
    short_circuit: object
    low_port_of: Mapping[str, int]
    low_sections: LowSections
    f_high: float | None
    f_high_2nd: float | None
    omega_low: float | None
    f_low: float | None


@dataclass(frozen=True)
class ExactCorners:
    """Where the exact |H| falls to |A_m|/√2 below and above the mid band.

    Attributes
    ----------
    f_low, f_high : float or None
        Hz; None where the exact gain never falls 3 dB on that side.
    shortfall_db : float or None
        dB by which the exact peak stays below |A_m| when it never reaches |A_m|/√2 (the
        corners are then both None); None otherwise.
    """

    f_low: float | None
    f_high: float | None
    shortfall_db: float | None = None


def prepare(c, bands=None, per_decade: int | None = None) -> Stage:
    """Validate ``c``, check the pins, assemble the network and sweep it (see :func:`analyze`).

    Parameters
    ----------
    c : bandsketch.engine.network.circuit.Circuit
    bands : Mapping[str, Band or str], optional
        Pins, as for :func:`analyze`.
    per_decade : int, optional
        Sweep points per decade, as for :func:`analyze`.
    """
    validate(c)
    system = build_system(c)
    # A floating node is named first: the bias solve would only fail to settle there.
    check_dc_solvable(c, system)
    point = None
    if c.large_blocks:
        # Blocks biased from the circuit take their small-signal values (C_π among them) from
        # the DC point, so the network is read again once it is solved.
        point = solved(c)
        system = build_system(c)
    reactive = tuple(el for el in c.elements.values() if isinstance(el, (Capacitor, Inductor)))
    pins = _check_pins(bands, {el.name for el in reactive})
    freqs, H = wide_sweep(system, first_span(c), per_decade or points_per_decade(system))
    freqs.flags.writeable = False
    H.flags.writeable = False
    unit = "V/A" if isinstance(c.elements[c.input_name], ISource) else "V/V"
    return Stage(c, reactive, MappingProxyType(pins), MappingProxyType(fixed_elements(c)), system, freqs, H, unit,
                 point)


def _mid_network(stage, bands, neutral_states):
    """The resistive mid-band network: its states, equations and factorised conductance matrix."""
    states = midband_states(stage.reactive, bands, neutral_states)
    key = tuple(states.items())
    if key not in stage._networks:
        mid = build_system(stage.circuit, states)
        shorted = [name for name, state in states.items() if state == SHORT]
        stage._networks[key] = mid, factorize(conductance(mid), "with the elements at their mid-band states", shorted)
    return (states, *stage._networks[key])


def _place_neutral(stage, bands, f_m):
    """Put every element the gain test left neutral in the state its impedance gives at ``f_m``.

    Each one is judged with the others at their states; a judgement can change what the
    others see, so this repeats until no state changes. A loop of capacitors settles as
    shorts with one member left open (its ends are already joined), a cut-set as shorts.
    Returns the neutral states, the network's states, equations, LU and what each element sees.
    """
    undecided = [el for el in stage.reactive if bands[el.name] == Band.NEUTRAL and el.name not in stage.fixed]
    placed: dict[str, str] = {}
    for _ in range(PLACE_ROUNDS):
        states, mid, lu = _mid_network(stage, bands, placed)
        seen = _seen_resistances(mid, _port_diagonal_at(stage, states, mid, lu), stage.reactive)
        judged = {el.name: physical_state(el, f_m, seen[el.name]) for el in undecided}
        if judged == placed:
            break
        placed = judged
    else:
        states, mid, lu = _mid_network(stage, bands, placed)
        seen = _seen_resistances(mid, _port_diagonal_at(stage, states, mid, lu), stage.reactive)
    return placed, states, mid, lu, seen


def _midband_gain(stage, mid, lu) -> float:
    """Signed gain of the resistive mid-band network; an error when the output does not respond."""
    c = stage.circuit
    x = lu.solve(mid.b)
    gain = float((mid.c @ x).real)
    # Rounding leaves a trace at an output the signal cannot reach; judge it against the
    # largest node voltage the input drives, not against an exact zero.
    if abs(gain) <= UNREACHED_RATIO * np.abs(x[:len(mid.node_index)]).max(initial=0.0):
        out = c.output_nodes[0] if c.output_nodes[1] == "0" else " − ".join(c.output_nodes)
        pinned = ", ".join(f"{name} to the {band} band" for name, band in stage.pins.items())
        hint = (f"; it may be the band pins ({pinned}) that cut it off: unpin them to let the test decide"
                if stage.pins else "")
        raise CircuitError(f"The output {out} does not respond to the input "
                           f"{c.input_name} in the mid band: check the output probe and the signal path{hint}.",
                           nodes=c.output_nodes, parts=tuple(stage.pins))
    return gain


def classify(stage: Stage) -> Classification:
    """The band and mid-band state of every element, at a mid-band frequency that has settled.

    Test at f_m, place the neutral elements by their impedance, find the mid-band gain and
    the corners it implies, move f_m to their geometric middle, until nothing changes.

    Parameters
    ----------
    stage : Stage
        From :func:`prepare`.

    Returns
    -------
    Classification
    """
    freqs, H = stage.sweep_frequencies, stage.sweep_response
    f_m = midband_guess(stage.system, freqs, H)
    previous = None
    settled = False
    for _ in range(MAX_ROUNDS):
        tests = band_tests(stage.system, stage.reactive, f_m, stage.fixed)
        chosen = {name: stage.pins.get(name, t.band) for name, t in tests.items()}
        placed, states, mid, lu, seen = _place_neutral(stage, chosen, f_m)
        gain = _midband_gain(stage, mid, lu)
        if (chosen, placed) == previous:
            settled = True
            break
        previous = chosen, placed
        low_bracket, high_bracket = brackets(freqs, H, f_m, abs(gain) / math.sqrt(2))
        f_next = midband_between(low_bracket, high_bracket, f_m, freqs)
        if f_next == f_m:
            # The next round would test at this same frequency and find the same.
            settled = True
            break
        f_m = f_next
    inconclusive = [el for el in stage.reactive if isinstance(el, Capacitor) and chosen[el.name] == Band.NEUTRAL
                    and el.name not in stage.fixed and el.name not in stage.pins]
    groups = tuple(group_tests(stage.circuit, stage.system, inconclusive, f_m))
    return Classification(f_m, MappingProxyType(tests), MappingProxyType(chosen), MappingProxyType(states),
                          MappingProxyType(seen), gain, mid, lu, settled, groups)


def estimate(stage: Stage, bands: Classification, full_matrix_limit: int = FULL_MATRIX_LIMIT) -> Estimates:
    """Open-circuit constants of the high band and short-circuit constants of the low band.

    Parameters
    ----------
    stage : Stage
    bands : Classification
    full_matrix_limit : int
        Up to this many high-band elements the whole port matrix is formed (b2, exact
        high-band time constants).

    Returns
    -------
    Estimates
    """
    high, low = bands.members(stage, Band.HIGH), bands.members(stage, Band.LOW)
    full = len(high) <= full_matrix_limit
    diagonal = None
    if not full:
        # Without the whole matrix, the high band's entries are those the band rounds already
        # found in this same network.
        at = {el.name: i for i, el in enumerate(stage.reactive)}
        known = _port_diagonal_at(stage, bands.states, bands.mid, bands.mid_lu)
        diagonal = known[[at[el.name] for el in high]]
    oc = open_circuit(bands.mid_lu, port_columns(bands.mid, high), port_weights(high), full=full,
                      diagonal=diagonal)
    sc, low_port_of = _low_band(stage.circuit, low, bands.states)
    f_high = 1 / (2 * math.pi * oc.b1) if oc.b1 > 0 else None
    f_high_2nd = second_order_corner(oc.b1, oc.b2) if high and oc.b2 is not None else None
    sections = low_sections(sc.time_constants, sc.open_short_ratios)
    omega_low = sections.omega if low else None
    f_low = omega_low / (2 * math.pi) if omega_low else None
    return Estimates(oc, sc, MappingProxyType(low_port_of), sections, f_high, f_high_2nd, omega_low, f_low)


def exact_corners(stage: Stage, bands: Classification) -> ExactCorners:
    """The exact −3 dB corners of the full network nearest the mid band.

    Parameters
    ----------
    stage : Stage
    bands : Classification
        Gives the mid-band frequency and the level |A_m|/√2.

    Returns
    -------
    ExactCorners
    """
    level = abs(bands.midband_gain) / math.sqrt(2)
    f, H = stage.sweep_frequencies, stage.sweep_response
    low, high = corners_around(stage.system, f, H, bands.midband_frequency, level)
    if low is None and high is None:
        peak = float(np.max(np.abs(H)))
        if peak < level:
            # The capacitors of the two bands load each other (a coupling capacitor comparable
            # with the device capacitance it feeds): the stage never delivers its mid-band gain.
            peak = max(peak, abs(frequency_response(stage.system, [refine_peak(stage.system, f, H,
                                                                                 bands.midband_frequency)])[0]))
        if peak < level:
            return ExactCorners(None, None, 20 * math.log10(abs(bands.midband_gain) / peak) if peak > 0 else math.inf)
    return ExactCorners(low, high)


def _results(stage, bands, est):
    """Name -> :class:`CapacitorResult` / :class:`InductorResult` for both kinds."""
    oc, sc = est.open_circuit, est.short_circuit
    high = bands.members(stage, Band.HIGH)
    total_c = parallel_capacitance(bands.members(stage, Band.LOW))
    low_groups = parallel_groups(bands.members(stage, Band.LOW))
    unit_db = db_unit(stage.gain_unit)
    position = {el.name: j for j, el in enumerate(high)}
    caps, inds = {}, {}
    for el in stage.reactive:
        band = bands.bands[el.name]
        test = bands.tests[el.name]
        resistance = tau = f_zero = None
        share = 0.0
        if band == Band.HIGH:
            j = position[el.name]
            tau = float(oc.time_constants[j]) + 0.0  # an inductor that sees an open: 0 s, not −0 s
            z = float(oc.port_values[j])
            resistance = z if isinstance(el, Capacitor) else (1 / -z if z != 0 else math.inf)
            share = tau / oc.b1 if oc.b1 else 0.0
        elif band == Band.LOW:
            j = est.low_port_of[el.name]
            tau = float(sc.time_constants[j])
            y = float(sc.inverse_diagonal[j])
            resistance = 1 / y if isinstance(el, Capacitor) else -y
            # Parallel partners share their port's part in proportion to capacitance.
            part = el.value / total_c[el.name] if isinstance(el, Capacitor) else 1.0
            share = part * float(est.low_sections.shares[j])
            f_zero = float(est.low_sections.zeros[j]) / (2 * math.pi)
        state, seen, x = bands.states[el.name], bands.seen[el.name], reactance(el, bands.midband_frequency)
        why_state = state_reason(el, state, x, seen)
        if band == Band.LOW and isinstance(el, Capacitor) and state == OPEN:
            # Left out of the network only because a capacitor in parallel already joins its
            # nodes: at mid band it is a short like its partners.
            partners = [m for m in low_groups[frozenset(el.nodes)] if m.name != el.name]
            joined = next(m for m in partners if bands.states[m.name] == SHORT)
            state = SHORT
            why_state = (f"shorted at mid band, in parallel with {_names([m.name for m in partners])}: "
                         f"1/(2π·f_m·ΣC) = {format_value(x * el.value / total_c[el.name], 'Ω')} beside the "
                         f"{format_value(bands.seen[joined.name], 'Ω')} they see")
        reason = _reason(el, test, unit_db)
        if band == Band.NEUTRAL and not test.fixed:
            reason += f"; so its impedance decides: {why_state}"
            group = next((g for g in bands.groups if el.name in g.names and g.band != Band.NEUTRAL), None)
            if group:
                reason += f"; {_group_words(group, el.name, unit_db)}"
        if el.name in stage.pins:
            reason = f"pinned to the {band} band (the test says: {reason})"
        common = dict(name=el.name, nodes=el.nodes, band=band, pinned=el.name in stage.pins, resistance=resistance,
                      time_constant=tau, share=share, reason=reason, gain_shorted=test.gain_shorted,
                      gain_opened=test.gain_opened, acts_in_band=test.acts_in_band, state=state,
                      midband_reactance=x, midband_resistance=seen, state_reason=why_state,
                      pole_zero_pair=band == Band.LOW and el.name not in stage.fixed and
                      est.low_sections.is_pair(est.low_port_of[el.name]), f_zero=f_zero)
        if isinstance(el, Capacitor):
            caps[el.name] = CapacitorResult(**common, capacitance=el.value)
        else:
            inds[el.name] = InductorResult(**common, inductance=el.value)
    return caps, inds


def analyze(c, bands=None, *, per_decade: int | None = None, full_matrix_limit: int = FULL_MATRIX_LIMIT) -> Analysis:
    """Estimate a stage's −3 dB corners by time constants and find the exact ones.

    Parameters
    ----------
    c : bandsketch.engine.network.circuit.Circuit
        The stage, with its input and output chosen.
    bands : Mapping[str, Band or str], optional
        Element name -> ``Band.LOW``, ``Band.HIGH`` or ``Band.NEUTRAL`` (or the words
        ``"low"``, ``"high"``, ``"neutral"``): pins that override the band test.
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
    The method in four steps: :func:`classify` (the band test), :func:`estimate` (time
    constants), :func:`exact_corners` (the full network) and :func:`warn` (where the
    estimates cannot be trusted, and why).

    Cost for N capacitors and n unknowns: the wide sweep is one solve per point (batched
    dense up to 60 unknowns, a sparse LU per point beyond); each band-test round is one
    complex LU and N solves; the time constants are one real LU and N solves each band;
    b2 and the exact high-band time constants add N² memory and an N³ eigenproblem, done
    up to ``full_matrix_limit``; the right-half-plane-zero check is an n³ eigenproblem, done
    up to 250 unknowns. Poles and zeros are otherwise computed only when asked for.
    """
    with one_blas_thread():
        return _analyze(c, bands, per_decade, full_matrix_limit)


def _analyze(c, bands, per_decade, full_matrix_limit) -> Analysis:
    stage = prepare(c, bands, per_decade)
    classes = classify(stage)
    est = estimate(stage, classes, full_matrix_limit)
    exact = exact_corners(stage, classes)
    caps, inds = _results(stage, classes, est)
    every = {**caps, **inds}
    known_zeros = zeros(stage.system) if stage.system.size <= ZERO_CHECK_LIMIT else None
    notes = warn(stage, classes, est, exact, every, known_zeros, full_matrix_limit)
    if stage.operating_point is not None:
        notes = (*stage.operating_point.warnings, *notes)
    oc = est.open_circuit
    return Analysis(
        title=c.title, gain_unit=stage.gain_unit, midband_gain=classes.midband_gain,
        midband_frequency=classes.midband_frequency,
        capacitors=MappingProxyType(caps), inductors=MappingProxyType(inds),
        b1=oc.b1, b2=oc.b2,
        high_time_constants=None if oc.exact is None else tuple(complex(v) for v in oc.exact),
        f_high_estimate=est.f_high, f_high_estimate_2nd=est.f_high_2nd,
        omega_low_estimate=est.omega_low, f_low_estimate=est.f_low,
        f_low_estimate_squares=_hz_of(est.low_sections.omega_squares if est.low_port_of else None),
        f_low_estimate_sum=_hz_of(est.low_sections.omega_sum if est.low_port_of else None),
        f_high_exact=exact.f_high, f_low_exact=exact.f_low,
        f_high_ratio=_ratio(est.f_high, exact.f_high), f_low_ratio=_ratio(est.f_low, exact.f_low),
        dominant_high=_dominant(every, Band.HIGH), dominant_low=_dominant(every, Band.LOW),
        shortfall_db=exact.shortfall_db, sweep_frequencies=stage.sweep_frequencies, sweep_response=stage.sweep_response,
        _warnings=tuple(notes), sources=tuple(el.name for el in c.elements.values() if isinstance(el, (VSource, ISource))),
        _system=stage.system, _zeros=known_zeros, operating_point=stage.operating_point)


def _hz_of(omega):
    """Hz of a positive angular frequency (rad/s); None otherwise."""
    return omega / (2 * math.pi) if omega and omega > 0 else None


def _group_words(group, name, unit_db) -> str:
    """What a group test found, said for ``name`` (one of its members)."""
    others = _names([n for n in group.names if n != name])
    verb, after = ("opening", group.gain_opened) if group.band == Band.LOW else ("shorting", group.gain_shorted)
    return (f"tested together with {others}, {verb} them all moves the gain from {_db(group.gain_as_is)} {unit_db} "
            f"to {_db(after)} {unit_db}: together they are {group.band} band")


def _group_notes(bands, exact) -> list[str]:
    """Groups that act only together: the estimates leave them out, so the exact corner decides."""
    notes = []
    for g in bands.groups:
        if g.band == Band.NEUTRAL:
            continue
        verb, after = ("Opening", g.gain_opened) if g.band == Band.LOW else ("Shorting", g.gain_shorted)
        side, corner = ("lower", exact.f_low) if g.band == Band.LOW else ("upper", exact.f_high)
        drop = 20 * math.log10(after / g.gain_as_is) if after > 0 and g.gain_as_is > 0 else -math.inf
        said = "to nothing" if math.isinf(drop) else f"by {abs(drop):.2f} dB"
        trust = f"trust the exact {side} corner ({_hz(corner)})" if corner else f"the exact gain has no {side} corner"
        notes.append(f"{_names(g.names)} act only together: alone each is inconclusive (the others still carry "
                     f"or bypass the signal), but {verb.lower()} them all changes the gain {said}. The time constants "
                     f"take no group apart, so the estimate leaves them out: {trust}.")
    return notes


def _dominant(results, band):
    inband = [r for r in results.values() if r.band == band]
    return max(inband, key=lambda r: r.share).name if inband else None


def _hz(f):
    return format_value(f, "Hz")


def _element_notes(stage, results) -> list[str]:
    """Elements that act inside the band, and low-band elements that make only a pole–zero pair."""
    notes = []
    for r in results.values():
        if r.acts_in_band:
            notes.append(f"{r.name} acts inside the band: shorting and opening it both lower the gain by more "
                         f"than {IN_BAND_DB:g} dB, so the bands are not separated and the estimates are weak.")
    for r in results.values():
        is_cap = isinstance(r, CapacitorResult)
        low_gain, high_gain = (r.gain_opened, r.gain_shorted) if is_cap else (r.gain_shorted, r.gain_opened)
        if r.pole_zero_pair:
            verb = "Opening" if is_cap else "Shorting"
            cost = (f"raises the gain by {20 * math.log10(low_gain / high_gain):.2f} dB" if low_gain >= high_gain
                    else f"costs only {20 * math.log10(high_gain / low_gain):.2f} dB")
            notes.append(f"{verb} {r.name} {cost}: it makes a pole–zero pair (pole {_hz(1 / (2 * math.pi * r.time_constant))}, "
                         f"zero {_hz(r.f_zero)}), not a corner of its own; the lower-corner estimate counts it "
                         "for the part of the 3 dB it costs.")
    return notes


def _high_band_notes(est, exact, known_zeros, too_many, limit) -> list[str]:
    """Feedback, complex poles, no dominant pole, a right-half-plane zero near f_H, a missing b2."""
    oc = est.open_circuit
    b1 = oc.b1
    notes = []
    if b1 < 0:
        notes.append("The open-circuit time constants add up to a negative b1: the high band has feedback "
                     "that the first-order estimate cannot describe; trust the exact corner.")
    if _complex_high_poles(oc):
        notes.append("The high band has complex poles: the response may peak, and the first-order "
                     "estimate 1/(2π·b1) can be optimistic instead of conservative.")
    # A complex pair is reported above; dominance is a question about real poles.
    if oc.exact is not None and len(oc.exact) >= 2 and abs(oc.exact[1]) > 0 and oc.exact[0].imag == 0:
        ratio = abs(oc.exact[0]) / abs(oc.exact[1])
        if ratio < DOMINANCE:
            p1, p2 = (1 / (2 * math.pi * abs(v)) for v in oc.exact[:2])
            better = f"; the second-order estimate ({_hz(est.f_high_2nd)}) is closer" if est.f_high_2nd else ""
            notes.append(f"No pole dominates the high band: the second pole ({_hz(p2)}) is within "
                         f"{DOMINANCE:g}× of the first ({_hz(p1)}), so the first-order estimate is weak{better}.")
    reference = exact.f_high or est.f_high
    if known_zeros is not None and reference:
        rhp = [z for z in known_zeros if z.real > 0 and abs(z) < RHP_ZERO_FACTOR * 2 * math.pi * reference]
        if rhp:
            z = min(rhp, key=abs)
            notes.append(f"A right-half-plane zero at {_hz(abs(z) / (2 * math.pi))} lies below "
                         f"{RHP_ZERO_FACTOR:g} × f_H: it adds phase lag, and the time-constant estimate ignores it.")
    if too_many:
        notes.append(f"The high band has more than {limit} elements: b2, the second-order estimate and the exact "
                     "high-band time constants were not computed.")
    if exact.shortfall_db is not None:
        notes.append(f"The exact gain never comes within 3 dB of the mid-band gain: it peaks {exact.shortfall_db:.1f} dB "
                     "below it, so there is no −3 dB band and neither corner exists. The low- and high-band "
                     "capacitors load each other (a coupling capacitor no larger than the capacitance it feeds); "
                     "the estimates do not describe this stage.")
    elif exact.f_high is None and est.f_high is not None:
        notes.append("The exact gain never falls 3 dB above the mid band: there is no upper corner, only the estimate.")
    return notes


def _complex_high_poles(oc) -> bool:
    """The high band's slowest exact time constant is one of a complex pair; b1² < 4·b2 where
    they are not known. (Two identical halves have b1² < 4·b2 with every pole real and double.)"""
    if oc.exact is not None and len(oc.exact):
        return abs(oc.exact[0].imag) > 1e-6 * abs(oc.exact[0])
    return oc.b2 is not None and oc.b1 > 0 and oc.b1 * oc.b1 < 4 * oc.b2


def _low_poles(est) -> list[float]:
    """rad/s: the low band's exact pole magnitudes (of its own network), largest first."""
    lam = est.short_circuit.exact
    return sorted((1 / abs(v) for v in lam if abs(v) > 0), reverse=True)


def _low_band_notes(est) -> list[str]:
    """The low band's dominance test, the same two-octave rule as the high band's."""
    # Magnitudes only: a complex pair (or a double pole, which comes out a hair complex) is
    # two poles of one size, which no single one dominates.
    p = _low_poles(est)
    if len(p) >= 2 and p[0] < DOMINANCE * p[1]:
        p1, p2 = (w / (2 * math.pi) for w in p[:2])
        return [f"No pole dominates the low band: the second pole ({_hz(p2)}) is within {DOMINANCE:g}× of the "
                f"first ({_hz(p1)}), so the lower corner depends on how the low-band elements interact, which "
                "the estimate (each element a section of its own) leaves out."]
    return []


def _why_off(side, stage, bands, est, exact, results, known_zeros) -> list[str]:
    """The reasons, in a designer's words, that an estimate can be far from its exact corner."""
    why = []
    if exact.f_low and exact.f_high and exact.f_high / exact.f_low < BANDS_APART:
        why.append(f"the bands are only {exact.f_high / exact.f_low:.1f}× apart (f_H/f_L), so each band's "
                   "elements still act near the other's corner")
    together = [g for g in bands.groups if g.band == side]
    if together:
        why.append("; ".join(f"{_names(g.names)} act only together, which the estimate leaves out" for g in together))
    inside = [r.name for r in results.values() if r.acts_in_band]
    if inside:
        why.append(f"{_names(inside)} act{'s' if len(inside) == 1 else ''} inside the band")
    oc = est.open_circuit
    if side == Band.HIGH:
        if _complex_high_poles(oc):
            why.append("the high band has complex poles, which one time constant cannot describe")
        elif oc.exact is not None and len(oc.exact) >= 2 and abs(oc.exact[1]) > 0 and \
                abs(oc.exact[0]) < DOMINANCE * abs(oc.exact[1]):
            why.append("no pole dominates the high band (the second is within "
                       f"{DOMINANCE:g}× of the first), and Σ τ lumps them into one")
        if oc.b1 < 0:
            why.append("the high band has feedback (b1 < 0)")
        reference = 2 * math.pi * exact.f_high
        near = [z for z in (known_zeros if known_zeros is not None else ()) if
                0 < abs(z) < RHP_ZERO_FACTOR * reference and abs(z) > reference / RHP_ZERO_FACTOR]
        if near:
            z = min(near, key=abs)
            half = "right" if z.real > 0 else "left"
            why.append(f"a {half}-half-plane zero at {_hz(abs(z) / (2 * math.pi))} lies near f_H, and the "
                       "time constants ignore zeros")
    else:
        pairs = [r.name for r in results.values() if r.pole_zero_pair]
        if pairs:
            why.append(f"{_names(pairs)} make{'s' if len(pairs) == 1 else ''} a pole–zero pair whose zero moves "
                       "with the other low-band elements")
        p = _low_poles(est)
        if len(p) >= 2 and p[0] < DOMINANCE * p[1]:
            why.append(f"no pole dominates the low band (the second is within {DOMINANCE:g}× of the first), "
                       "and the low-band elements interact, which separate sections leave out")
    if not why:
        why.append("the time constants interact more than a sum of them describes" if side == Band.HIGH else
                   "the low-band elements interact more than separate sections describe")
    return why


def _error_notes(stage, bands, est, exact, results, known_zeros) -> list[str]:
    """A warning for every estimate further than :data:`ESTIMATE_TRUST` from its exact corner."""
    notes = []
    for side, sym, estimate_, exact_ in ((Band.HIGH, "f_H", est.f_high, exact.f_high),
                                         (Band.LOW, "f_L", est.f_low, exact.f_low)):
        if not (estimate_ and exact_) or abs(estimate_ / exact_ - 1) <= ESTIMATE_TRUST:
            continue
        off = 100 * (estimate_ / exact_ - 1)
        where = "above" if off > 0 else "below"
        why = "; ".join(_why_off(side, stage, bands, est, exact, results, known_zeros))
        notes.append(f"The {sym} estimate ({_hz(estimate_)}) is {abs(off):.0f} % {where} the exact corner "
                     f"({_hz(exact_)}): {why}. Trust the exact corner.")
    for side, sym, word, estimate_, exact_ in ((Band.HIGH, "f_H", "upper", est.f_high, exact.f_high),
                                               (Band.LOW, "f_L", "lower", est.f_low, exact.f_low)):
        if estimate_ is not None or not exact_:
            continue
        if not bands.members(stage, side):
            cause = f"no element tests as {side} band"
        elif side == Band.LOW:
            cause = "the low-band elements together never cost 3 dB"
        else:
            cause = "b1 is not positive"
        why = "; ".join(_why_off(side, stage, bands, est, exact, results, known_zeros))
        notes.append(f"The {sym} estimate finds no {word} corner ({cause}), but the exact gain falls 3 dB at "
                     f"{_hz(exact_)}: {why}. Trust the exact corner.")
    if est.f_low and exact.f_low is None:
        notes.append("The exact gain never falls 3 dB below the mid band: there is no lower corner, only the "
                     "estimate.")
    return notes


def _names(names) -> str:
    names = list(names)
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _top_note(stage, gain, shortfall_db) -> list[str]:
    """The exact gain's top against |A_m|: peaking above it, or a mid band that stays below it."""
    mag = np.abs(stage.sweep_response)
    top = int(np.argmax(mag))
    excess = 20 * math.log10(mag[top] / abs(gain))
    if excess > PEAKING_DB:
        return [f"The exact gain peaks {excess:.1f} dB above the mid-band gain, at {_hz(stage.sweep_frequencies[top])}."]
    if -excess > PEAKING_DB and shortfall_db is None:
        return [f"The exact gain tops out {-excess:.2f} dB below the mid-band gain: a capacitor of one band "
                "still acts in the other's (a coupling capacitor against a capacitance it feeds, such as a "
                "Miller capacitance)."]
    return []


def warn(stage: Stage, bands: Classification, est: Estimates, exact: ExactCorners, results,
         known_zeros, full_matrix_limit: int = FULL_MATRIX_LIMIT) -> list[str]:
    """Plain-language warnings: where the estimates cannot be trusted, and why.

    Parameters
    ----------
    stage, bands, est, exact : Stage, Classification, Estimates, ExactCorners
        The records of the other steps.
    results : Mapping[str, ElementResult]
        Every element's result.
    known_zeros : numpy.ndarray or None
        The exact finite zeros (rad/s), when they were computed.
    full_matrix_limit : int
        As for :func:`analyze`.

    Returns
    -------
    list of str
    """
    notes = [] if bands.settled else [
        "The band test did not settle: the elements change band as the mid-band frequency "
        "moves, so the bands overlap and the estimates are weak."]
    notes += _element_notes(stage, results)
    notes += _group_notes(bands, exact)
    too_many = len(bands.members(stage, Band.HIGH)) > full_matrix_limit
    notes += _high_band_notes(est, exact, known_zeros, too_many, full_matrix_limit)
    notes += _low_band_notes(est)
    if exact.f_low and exact.f_high and exact.f_high / exact.f_low < BANDS_APART:
        notes.append(f"The bands are only {exact.f_high / exact.f_low:.1f}× apart (f_H/f_L): the low-band elements "
                     "still act near f_H and the high-band ones near f_L, so both estimates are weak.")
    notes += _error_notes(stage, bands, est, exact, results, known_zeros)
    return notes + _top_note(stage, bands.midband_gain, exact.shortfall_db)
