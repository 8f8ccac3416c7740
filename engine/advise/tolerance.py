"""Tolerance spread: how far the corners and the gain move when the parts vary.

Each part value gets a tolerance (a default by kind, :data:`DEFAULT_TOLERANCES`, which the
designer may override). :func:`monte_carlo` draws every value uniformly within its band for
thousands of samples at once and finds each sample's exact corners and mid-band gain;
:func:`worst_case` searches the vertices of the tolerance box for the extreme corners.

How the samples are solved: every sample's G and C come from one
:class:`bandsketch.engine.advise.partvalues.ParametricSystem` (stamp patterns read from the nodal builder),
so a batch is a stack of small dense systems solved together. A sample's mid-band gain is
its resistive gain with the nominal bands (low-band reactances at their mid-band state,
high-band ones at theirs; tolerances do not move a capacitor between bands). Its corners
are where |H| = |A_m|/√2: a coarse grid a decade either side of the nominal corner brackets
the first crossing outward from the mid band, and a vectorised Illinois (safeguarded
regula falsi) iteration on ln f refines every sample's bracket at once.

Why uniform: a tolerance band is all that is known of a part; a uniform draw weights the
edges as much as the middle and so errs towards a lower yield than a bell-shaped spread.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from types import MappingProxyType
from typing import Callable, Mapping

import numpy as np

from ..solve.analysis import analyze
from ..core.errors import Cancelled, CircuitError
from ..design.netlist import design_to_circuit
from ..design.parts import KINDS
from ..design.sourcing import tolerance_fraction
from .biasbatch import DEVICE_PARAMETERS, BiasBatch
from .partvalues import PartValue, coefficients_for, parametric_system, part_values
from .targets import Targets, parse_targets
from ..core.values import format_gain, format_value

_SRC_COMMON = "common practice, no source"
DEFAULT_TOLERANCES = MappingProxyType({
    ("resistor", "value"): (0.05, "±5 %: general-purpose resistors come in the E24 series, which "
                                  "IEC 60063:2015 pairs with ±5 %"),
    ("capacitor", "value"): (0.10, "±10 %: ceramic and film capacitors come in the E12 series, which "
                                   "IEC 60063:2015 pairs with ±10 % (electrolytics are often ±20 %)"),
    ("inductor", "value"): (0.10, f"±10 %: {_SRC_COMMON}"),
    ("bjt", "gm"): (0.10, f"±10 %: g_m = I_C/V_T follows the bias current set by ±5 % resistors and "
                          f"the V_BE spread ({_SRC_COMMON})"),
    ("bjt", "rpi"): (0.30, f"±30 %: r_π = β/g_m and β spreads widely between devices of one type "
                           f"({_SRC_COMMON})"),
    ("bjt", "ro"): (0.30, f"±30 %: r_o follows the Early voltage ({_SRC_COMMON})"),
    ("bjt", "rb"): (0.30, f"±30 %: {_SRC_COMMON}"),
    ("bjt", "cpi"): (0.20, f"±20 %: C_π follows f_T ({_SRC_COMMON})"),
    ("bjt", "cmu"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("bjt", "ccs"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("bjt", "beta"): (0.30, f"±30 %: β spreads widely between devices of one type, a datasheet's current-"
                            f"gain group spanning about 2:1 ({_SRC_COMMON})"),
    ("bjt", "isat"): (0.20, f"±20 %: I_S follows the emitter area and doping; ±20 % is about ±5 mV of "
                            f"V_BE ({_SRC_COMMON})"),
    ("mosfet", "vth"): (0.05, f"±5 %: the threshold spreads by tens of millivolts between devices "
                              f"({_SRC_COMMON})"),
    ("mosfet", "kp"): (0.10, f"±10 %: K_P = μC_ox·W/L follows mobility and oxide thickness ({_SRC_COMMON})"),
    ("mosfet", "gm"): (0.10, f"±10 %: g_m follows the bias current ({_SRC_COMMON})"),
    ("mosfet", "gmb"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("mosfet", "ro"): (0.30, f"±30 %: r_o follows λ ({_SRC_COMMON})"),
    ("mosfet", "cgs"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("mosfet", "cgd"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("mosfet", "cdb"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("mosfet", "csb"): (0.20, f"±20 %: {_SRC_COMMON}"),
    ("opamp", "a0"): (0.50, f"±50 %: open-loop gain is specified loosely, typical and minimum often "
                            f"far apart ({_SRC_COMMON})"),
    ("opamp", "cp"): (0.30, f"±30 %: the open-loop pole follows the gain-bandwidth spread ({_SRC_COMMON})"),
    ("opamp", "rin"): (0.30, f"±30 %: {_SRC_COMMON}"),
    ("opamp", "rout"): (0.30, f"±30 %: {_SRC_COMMON}"),
})
"""(part kind, value key) -> (default tolerance as a fraction, where it comes from).

Controlled sources placed by the designer are ideal model elements: they default to 0."""

IDEAL_SOURCE = "0 %: an ideal model element, exact unless given a tolerance"
BIASED_GM_SOURCE = ("no spread of its own: g_m follows the bias, which is solved again for every sample "
                    "from that sample's resistor values and the device's own parameters")
BIASED_RPI_SOURCE = "no spread of its own: r_π = β/g_m follows the spread β and the bias of each sample"

CHUNK = 2000
"""Samples solved per batch: large enough to amortise Python overhead, small enough that
progress and cancel are checked often and a batch's matrices stay a few megabytes."""
GRID_DECADES = 1.0
GRID_POINTS_PER_DECADE = 2
WIDE_DECADES = 3.0
"""Samples whose corner the decade either side of nominal does not bracket are searched again
this many decades out before being called 'no corner'."""
_ILLINOIS_STEPS = 40
_LOG_TOL = 1e-10
"""Stop refining a corner when ln f is known to this (a relative error of 1e-10)."""
HIST_BINS = 40
WORST_CASE_PARTS = 6
"""Vertices of the tolerance box are searched exhaustively over this many of the parts that
move a figure most (2⁶ = 64 vertices per figure); the rest sit at the vertex their sign picks."""


@dataclass(frozen=True)
class Tolerance:
    """A part value and the band it may fall in.

    Attributes
    ----------
    value : PartValue
        Which value (element, part, label, unit, nominal).
    tolerance : float
        Half-width of the band as a fraction of the nominal (0.05 = ±5 %).
    source : str
        Where the figure comes from ("common practice, no source" where that is the truth).
    """

    value: PartValue
    tolerance: float
    source: str


def default_tolerances(circuit, overrides: Mapping[str, float] | None = None) -> tuple:
    """Every part value of ``circuit`` with its default tolerance, or the designer's.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    overrides : Mapping[str, float], optional
        Element name (``"R1"``, ``"Q1.rpi"``) -> tolerance fraction, replacing the default.

    Returns
    -------
    tuple of Tolerance
        Every element's value, then each transistor biased from the circuit with its own
        parameters (β and I_S, or V_th and K_P, named ``"Q1.beta"`` ...), which the spread
        feeds to each sample's bias; such a transistor's g_m and r_π have no spread of their
        own (they follow).
    """
    overrides = overrides or {}
    out = []
    for pv in part_values(circuit):
        tol, source = DEFAULT_TOLERANCES.get((pv.kind, pv.key), (0.0, IDEAL_SOURCE))
        if pv.part in circuit.large_blocks and pv.key == "gm":
            tol, source = 0.0, BIASED_GM_SOURCE
        if pv.part in circuit.large_blocks and pv.key == "rpi":
            tol, source = 0.0, BIASED_RPI_SOURCE
        if pv.element in overrides:
            tol, source = float(overrides[pv.element]), "set for this part"
        if not (0 <= tol < 1):
            raise ValueError(f"{pv.label}: a tolerance of {tol:.0%} is not usable; give 0 to 99 %")
        out.append(Tolerance(pv, tol, source))
    for large in circuit.large_blocks.values():
        for key in DEVICE_PARAMETERS[large.kind]:
            pv = PartValue(f"{large.name}.{key}", large.name, key, _device_label(large, key),
                           _DEVICE_UNITS[key], float(getattr(large.model.params, key)), large.kind)
            tol, source = DEFAULT_TOLERANCES[(large.kind, key)]
            out.append(Tolerance(pv, overrides.get(pv.element, tol), source if pv.element not in overrides
                                 else "set for this part"))
    return tuple(out)


_DEVICE_UNITS = {"beta": "", "isat": "A", "vth": "V", "kp": "A/V²"}


def _device_label(large, key: str) -> str:
    return f"{large.name} {KINDS[large.kind].field(key).label}"


def design_tolerances(doc, circuit) -> tuple:
    """The tolerances of a design: each part's own where its sourcing gives one, else by kind.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    circuit : bandsketch.engine.network.circuit.Circuit
        ``doc`` as a circuit (:func:`bandsketch.engine.design.netlist.design_to_circuit`).

    Returns
    -------
    tuple of Tolerance
        A part's tolerance applies to its one value (a resistor's resistance ...); a
        transistor's or op-amp's values keep their defaults by kind.

    Raises
    ------
    BadValueError
        A part's tolerance text is not a percentage; the message names the part.
    """
    overrides = {}
    for part in doc.parts.values():
        frac = tolerance_fraction(part.sourcing.tolerance, part.name)
        if frac is not None and part.name in circuit.elements:
            overrides[part.name] = frac
    return default_tolerances(circuit, overrides)


# -- the batched evaluator -----------------------------------------------------------------------
class _Batch:
    """One batch of samples: per-sample G and C of the full network and of the mid band."""

    def __init__(self, full, mid, circuit, factors):
        self.G, self.C = full.matrices(coefficients_for(full, circuit, factors))
        self.b, self.c = full.b.astype(complex), full.c
        Gm, _ = mid.matrices(coefficients_for(mid, circuit, factors))
        try:
            x = np.linalg.solve(Gm, np.broadcast_to(mid.b, (len(factors), mid.b.size))[..., None])[..., 0]
        except np.linalg.LinAlgError:
            raise CircuitError("The mid-band network of some sample has no unique solution; a part "
                               "value in its tolerance band must short or open something exactly. "
                               "Narrow the tolerances.") from None
        self.gain = np.einsum("mi,i->m", x, mid.c)
        self.level = np.abs(self.gain) / math.sqrt(2)

    def magnitude(self, idx, freq_hz) -> np.ndarray:
        """|H| of samples ``idx`` (None: all) at their own frequencies ``freq_hz``, Hz."""
        G, C = (self.G, self.C) if idx is None else (np.take(self.G, idx, axis=0), np.take(self.C, idx, axis=0))
        # Filling the real and imaginary parts in place avoids three complex temporaries.
        A = np.empty(G.shape, dtype=complex)
        A.real = G
        np.multiply(C, (2 * np.pi * np.asarray(freq_hz))[:, None, None], out=A.imag)
        x = np.linalg.solve(A, np.broadcast_to(self.b, (G.shape[0], self.b.size))[..., None])[..., 0]
        # einsum with the real selector: a complex matrix-vector product here is far slower.
        return np.abs(np.einsum("mi,i->m", x, self.c))


def _corner(batch: _Batch, f0: float, upward: bool) -> np.ndarray:
    """Each sample's −3 dB corner near the nominal ``f0``: above the mid band if ``upward``."""
    m = batch.gain.size
    out = np.full(m, np.nan)
    todo = np.arange(m)
    for decades, per_decade in ((GRID_DECADES, GRID_POINTS_PER_DECADE), (WIDE_DECADES, 2)):
        if todo.size == 0:
            break
        steps = np.linspace(-decades, decades, int(round(2 * decades * per_decade)) + 1)
        grid = np.log(f0) + np.log(10.0) * (steps if upward else steps[::-1])
        idx = None if todo.size == m else todo
        y = np.empty((todo.size, grid.size))
        for j, g in enumerate(grid):
            y[:, j] = np.log(batch.magnitude(idx, np.full(todo.size, math.exp(g)))) - np.log(batch.level[todo])
        below = y < 0
        # The first grid point must be in the mid band's side; the corner is the first drop below.
        first = np.argmax(below, axis=1)
        found = (~below[:, 0]) & below.any(axis=1)
        if found.any():
            rows = np.flatnonzero(found)
            j = first[rows]
            out[todo[rows]] = np.exp(_refine(batch, todo[rows], grid[j - 1], y[rows, j - 1], grid[j], y[rows, j]))
        todo = todo[~found]
    return out


def _refine(batch: _Batch, idx, xa, ya, xb, yb) -> np.ndarray:
    """Illinois iteration on x = ln f for the roots of y = ln|H| − ln(|A_m|/√2), bracketed."""
    xa, ya, xb, yb = (np.array(v, dtype=float) for v in (xa, ya, xb, yb))
    side = np.zeros(xa.size, dtype=int)
    x = xb.copy()
    active = np.ones(xa.size, dtype=bool)
    for _ in range(_ILLINOIS_STEPS):
        if not active.any():
            break
        a = np.flatnonzero(active)
        xn = xb[a] - yb[a] * (xb[a] - xa[a]) / (yb[a] - ya[a])
        rows = idx[a]
        whole = rows.size == batch.level.size
        yn = np.log(batch.magnitude(None if whole else rows, np.exp(xn))) - np.log(batch.level[rows])
        x[a] = xn
        on_b = yn < 0
        # Replace the end whose sign matches; halve the kept end's value if it was kept last time too.
        rb, ra = a[on_b], a[~on_b]
        xb[rb], yb[rb] = xn[on_b], yn[on_b]
        ya[rb[side[rb] == 1]] /= 2
        side[rb] = 1
        xa[ra], ya[ra] = xn[~on_b], yn[~on_b]
        yb[ra[side[ra] == -1]] /= 2
        side[ra] = -1
        active[a] = (np.abs(xb[a] - xa[a]) > _LOG_TOL) & (np.abs(yn) > 1e-13)
    return x


class _Evaluator:
    """Exact corners and gain of any batch of value multipliers of one design.

    Where blocks are biased from the circuit, each row's bias is solved again first
    (:class:`~bandsketch.engine.advise.biasbatch.BiasBatch`), so a bias resistor's factor
    moves g_m, r_π ... as it would on the bench; a row whose bias does not settle, or that
    pushes a transistor out of its amplifying region, gets NaN figures (a failure).
    """

    def __init__(self, circuit, analysis, tolerances):
        self.circuit = circuit
        self.tolerances = tuple(tolerances)
        names = [t.value.element for t in self.tolerances]
        self.bias = None
        if circuit.large_blocks and circuit.operating_point is not None:
            self.bias = BiasBatch(circuit, names)
            names += [d for d in self.bias.derived if d not in names]
        self.names = tuple(names)
        self.columns = {n: k for k, n in enumerate(self.names)}
        # A transistor's own parameter (Q1.beta) moves only the bias; the AC network sees
        # the small-signal values it gives.
        self.ac_columns = [k for k, n in enumerate(self.names) if n in circuit.elements]
        ac_names = [self.names[k] for k in self.ac_columns]
        self.full = parametric_system(circuit, ac_names)
        self.mid = parametric_system(circuit, ac_names, analysis.midband_states())
        self.f_high0 = _positive(analysis.f_high_exact)
        self.f_low0 = _positive(analysis.f_low_exact)

    def __call__(self, factors) -> tuple:
        """(f_H, f_L, A_m) for each row of ``factors``; NaN where a sample has no corner."""
        f = np.asarray(factors, dtype=float)
        m = len(f)
        ok = np.ones(m, dtype=bool)
        if len(self.names) > f.shape[1]:
            f = np.hstack([f, np.ones((m, len(self.names) - f.shape[1]))])
        if self.bias is not None:
            f, ok = self.bias.apply(f, self.columns)
            f[~ok] = 1.0
        batch = _Batch(self.full, self.mid, self.circuit, f[:, self.ac_columns])
        fh = _corner(batch, self.f_high0, True) if self.f_high0 else np.full(m, np.nan)
        fl = _corner(batch, self.f_low0, False) if self.f_low0 else np.full(m, np.nan)
        gain = batch.gain.copy()
        for v in (fh, fl, gain):
            v[~ok] = np.nan
        return fh, fl, gain


def exact_figures(circuit, analysis, elements, factors) -> tuple:
    """Exact corners and mid-band gain of a design with some values scaled, for many rows at once.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    analysis : bandsketch.engine.solve.analysis.Analysis
        Its nominal analysis: the bands and the corners every row's search starts from.
    elements : sequence of str
        The elements whose values are scaled (each one a part value, :func:`part_values`).
    factors : numpy.ndarray
        (m, k) multipliers of those values (dimensionless, 1 = nominal), one row per variant.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray, numpy.ndarray)
        f_H and f_L (Hz; NaN where the row has no corner near the nominal one, or the
        nominal has none) and A_m (signed, gain unit), each (m,).
    """
    by_element = {pv.element: pv for pv in part_values(circuit)}
    evaluate = _Evaluator(circuit, analysis, [Tolerance(by_element[e], 0.0, IDEAL_SOURCE) for e in elements])
    factors = np.asarray(factors, dtype=float)
    out = [np.empty(len(factors)) for _ in range(3)]
    for lo in range(0, len(factors), CHUNK):
        for arr, part in zip(out, evaluate(factors[lo:lo + CHUNK])):
            arr[lo:lo + CHUNK] = part
    return tuple(out)


def _positive(x) -> float | None:
    return float(x) if x is not None and math.isfinite(x) and x > 0 else None


# -- results -------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Histogram:
    """Counts of one figure over the samples, with the target it is held to.

    Attributes
    ----------
    figure : str
        ``"f_high"`` (Hz), ``"f_low"`` (Hz) or ``"gain"`` (|A_m|, V/V or Ω).
    unit : str
        Unit of ``edges``, ``nominal`` and ``target_lines``.
    edges : numpy.ndarray
        Bin edges, ascending (``counts.size + 1`` of them).
    counts : numpy.ndarray
        Samples per bin (integers).
    nominal : float or None
        The nominal design's figure.
    target_lines : tuple of (float, str)
        Where each target bound lies and its label (``(1e6, "f_H ≥ 1 MHz")``).
    missing : int
        Samples with no value (no corner found): not in any bin.
    """

    figure: str
    unit: str
    edges: np.ndarray
    counts: np.ndarray
    nominal: float | None
    target_lines: tuple
    missing: int


@dataclass(frozen=True)
class WorstCase:
    """An extreme of one figure over the vertices of the tolerance box.

    Attributes
    ----------
    figure : str
        ``"f_high"``, ``"f_low"`` or ``"gain"``.
    extreme : str
        ``"min"`` or ``"max"``.
    value : float
        The figure there (Hz, or |A_m| in V/V or Ω); NaN if that vertex has no corner.
    settings : tuple of (str, float)
        Part label -> signed deviation as a fraction (+0.05 = at +5 %), for the parts not at
        nominal.
    """

    figure: str
    extreme: str
    value: float
    settings: tuple


@dataclass(frozen=True)
class Spread:
    """The outcome of a Monte Carlo run.

    Attributes
    ----------
    samples : int
        How many samples were drawn.
    seed : int
        The seed of the generator (numpy PCG64); the same seed gives the same numbers.
    tolerances : tuple of Tolerance
        The bands the values were drawn from.
    f_high, f_low : numpy.ndarray
        Each sample's exact upper and lower corner, Hz (NaN: no corner found).
    gain : numpy.ndarray
        Each sample's mid-band gain, signed, V/V (Ω for a current input).
    nominal : tuple of (float or None, float or None, float)
        f_H (Hz), f_L (Hz), A_m of the nominal design.
    histograms : tuple of Histogram
        f_H, f_L (where the design has them) and gain.
    yields : Mapping[str, float]
        Target key -> fraction of samples meeting it, plus ``"all"`` for every target at once
        (empty when no target is set).
    worst_cases : tuple of WorstCase
    seconds : float
        Wall time of the run, s.
    """

    samples: int
    seed: int
    tolerances: tuple
    f_high: np.ndarray
    f_low: np.ndarray
    gain: np.ndarray
    nominal: tuple
    histograms: tuple
    yields: Mapping
    worst_cases: tuple
    seconds: float

    def __repr__(self) -> str:
        parts = [f"{self.samples:,} samples, seed {self.seed}"]
        for name, values in (("f_H", self.f_high), ("f_L", self.f_low)):
            good = values[np.isfinite(values)]
            if good.size:
                parts.append(f"{name} median {format_value(float(np.median(good)), 'Hz')}")
        if "all" in self.yields:
            parts.append(f"yield {100 * self.yields['all']:.1f} %")
        return f"<Spread {', '.join(parts)}>"


def _histogram(figure, unit, values, nominal, lines) -> Histogram:
    good = values[np.isfinite(values)]
    if good.size == 0:
        return Histogram(figure, unit, np.zeros(0), np.zeros(0, int), nominal, lines, int(values.size))
    lo, hi = float(good.min()), float(good.max())
    if hi - lo <= 1e-9 * max(abs(hi), 1e-300):
        # Every sample the same (zero tolerance): one bin either side of it.
        pad = max(abs(lo) * 1e-6, 1e-300)
        lo, hi = lo - pad, hi + pad
    counts, edges = np.histogram(good, bins=HIST_BINS, range=(lo, hi))
    return Histogram(figure, unit, edges, counts, nominal, lines, int(values.size - good.size))


def _target_lines(targets: Targets | None, figure: str, gain_unit: str) -> tuple:
    if targets is None:
        return ()
    if figure == "f_high" and targets.f_high_min is not None:
        return ((targets.f_high_min, f"f_H ≥ {format_value(targets.f_high_min, 'Hz')}"),)
    if figure == "f_low" and targets.f_low_max is not None:
        return ((targets.f_low_max, f"f_L ≤ {format_value(targets.f_low_max, 'Hz')}"),)
    if figure == "gain" and targets.gain is not None:
        return ((targets.gain_min, f"|A_m| ≥ {format_gain(targets.gain_min, gain_unit)}"),
                (targets.gain_max, f"|A_m| ≤ {format_gain(targets.gain_max, gain_unit)}"))
    return ()


def _yields(targets: Targets | None, fh, fl, gain) -> dict:
    if targets is None or targets.is_empty():
        return {}
    # NaN means "no corner was found near the nominal one": a failure, never a silent pass.
    ok = {}
    if targets.f_high_min is not None:
        ok["f_high_min"] = np.isfinite(fh) & (fh >= targets.f_high_min)
    if targets.f_low_max is not None:
        ok["f_low_max"] = np.isfinite(fl) & (fl <= targets.f_low_max)
    if targets.gain is not None:
        g = np.abs(gain)
        ok["gain"] = (g >= targets.gain_min) & (g <= targets.gain_max)
    out = {k: float(v.mean()) for k, v in ok.items()}
    out["all"] = float(np.logical_and.reduce(list(ok.values())).mean())
    return out


def _check_samples(samples: int) -> None:
    if not (isinstance(samples, (int, np.integer)) and 1 <= samples <= 10_000_000):
        raise ValueError(f"samples must be a whole number from 1 to 10,000,000, not {samples!r}")


def monte_carlo(circuit, analysis, tolerances=None, *, samples: int = 10_000, seed: int = 1,
                targets: Targets | None = None, gain_unit: str = "V/V",
                progress: Callable[[int, int], None] | None = None,
                cancel: Callable[[], bool] | None = None) -> Spread:
    """Draw ``samples`` designs within the tolerances and find each one's exact figures.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    analysis : bandsketch.engine.solve.analysis.Analysis
        The nominal analysis (its bands and exact corners anchor every sample's search).
    tolerances : sequence of Tolerance, optional
        Defaults to :func:`default_tolerances`.
    samples : int
        How many samples (10,000 or more for a yield to ±1 %).
    seed : int
        Seed of the random generator; the same seed gives the same numbers.
    targets : Targets, optional
        Targets the yield and the histogram lines refer to.
    gain_unit : str
        ``"V/V"`` or ``"Ω"``, for the labels.
    progress : callable, optional
        ``progress(done, total)`` after each batch of :data:`CHUNK` samples.
    cancel : callable, optional
        Polled between batches; when it returns True the run stops with :class:`bandsketch.engine.core.errors.Cancelled`.

    Returns
    -------
    Spread
    """
    _check_samples(samples)
    start = time.perf_counter()
    tols = tuple(default_tolerances(circuit) if tolerances is None else tolerances)
    evaluate = _Evaluator(circuit, analysis, tols)
    widths = np.array([t.tolerance for t in tols])
    # One draw for the whole run, so the numbers do not depend on the batch size.
    u = np.random.default_rng(seed).uniform(-1.0, 1.0, size=(samples, widths.size))
    factors = 1.0 + u * widths
    fh, fl, gain = np.empty(samples), np.empty(samples), np.empty(samples)
    for lo in range(0, samples, CHUNK):
        if cancel is not None and cancel():
            raise Cancelled()
        hi = min(samples, lo + CHUNK)
        fh[lo:hi], fl[lo:hi], gain[lo:hi] = evaluate(factors[lo:hi])
        if progress is not None:
            progress(hi, samples)
    nominal = (evaluate.f_high0, evaluate.f_low0, float(analysis.midband_gain))
    hists = []
    if evaluate.f_high0:
        hists.append(_histogram("f_high", "Hz", fh, nominal[0], _target_lines(targets, "f_high", gain_unit)))
    if evaluate.f_low0:
        hists.append(_histogram("f_low", "Hz", fl, nominal[1], _target_lines(targets, "f_low", gain_unit)))
    hists.append(_histogram("gain", gain_unit, np.abs(gain), abs(nominal[2]),
                            _target_lines(targets, "gain", gain_unit)))
    worst = _worst_case(evaluate)
    return Spread(samples, seed, tols, fh, fl, gain, nominal, tuple(hists),
                  MappingProxyType(_yields(targets, fh, fl, gain)), worst, time.perf_counter() - start)


def _worst_case(evaluate: _Evaluator) -> tuple:
    """Extremes over the tolerance box's vertices, guided by each part's one-at-a-time effect."""
    tols = evaluate.tolerances
    moving = [i for i, t in enumerate(tols) if t.tolerance > 0]
    k = len(tols)
    if not moving:
        return ()
    # One at a time, each part at either edge of its band: its sign and size of effect.
    probe = np.ones((2 * len(moving), k))
    for j, i in enumerate(moving):
        probe[2 * j, i] = 1 + tols[i].tolerance
        probe[2 * j + 1, i] = 1 - tols[i].tolerance
    figures = dict(zip(("f_high", "f_low", "gain"), evaluate(probe)))
    figures["gain"] = np.abs(figures["gain"])
    batches, index = [], []
    for name, values in figures.items():
        if name != "gain" and not np.isfinite(values).any():
            continue
        up, down = values[0::2], values[1::2]
        effect = np.nan_to_num(np.log(up) - np.log(down))
        order = np.argsort(-np.abs(effect), kind="stable")
        top = [moving[j] for j in order[:WORST_CASE_PARTS]]
        for extreme, sense in (("min", -1.0), ("max", 1.0)):
            base = np.ones(k)
            for j, i in enumerate(moving):
                base[i] = 1 + sense * np.sign(effect[j]) * tols[i].tolerance
            corners = np.array(np.meshgrid(*[[-1.0, 1.0]] * len(top), indexing="ij")).reshape(len(top), -1).T
            rows = np.repeat(base[None, :], corners.shape[0], axis=0)
            for c, i in enumerate(top):
                rows[:, i] = 1 + corners[:, c] * tols[i].tolerance
            batches.append(rows)
            index.append((name, extreme, rows.shape[0]))
    stacked = np.vstack(batches)
    values = evaluate(stacked)
    out, at = [], 0
    for name, extreme, n in index:
        v = values[("f_high", "f_low", "gain").index(name)][at:at + n]
        v = np.abs(v) if name == "gain" else v
        rows = stacked[at:at + n]
        at += n
        if not np.isfinite(v).any():
            out.append(WorstCase(name, extreme, math.nan, ()))
            continue
        pick = np.nanargmin(v) if extreme == "min" else np.nanargmax(v)
        settings = tuple((tols[i].value.label, float(rows[pick, i] - 1)) for i in moving
                         if rows[pick, i] != 1)
        out.append(WorstCase(name, extreme, float(v[pick]), settings))
    return tuple(out)


def _percentiles(values: np.ndarray) -> dict:
    good = values[np.isfinite(values)]
    if good.size == 0:
        return {"missing": int(values.size)}
    p = np.percentile(good, [0.135, 50, 99.865])
    return {"min": float(good.min()), "p0.135": float(p[0]), "median": float(p[1]),
            "p99.865": float(p[2]), "max": float(good.max()), "mean": float(good.mean()),
            "std": float(good.std()), "missing": int(values.size - good.size)}


def spread_to_dict(spread: Spread) -> dict:
    """The JSON-ready form of a :class:`Spread` (frequencies in Hz, gains in the gain unit).

    Percentiles 0.135 and 99.865 are the ±3σ points of a normal distribution, the span
    designers usually quote; the spread itself need not be normal.

    Parameters
    ----------
    spread : Spread
        Frequencies in Hz, gains in the gain unit.
    """
    fh0, fl0, am0 = spread.nominal
    return {
        "samples": spread.samples, "seed": spread.seed, "seconds": round(spread.seconds, 3),
        "nominal": {"f_high_hz": fh0, "f_low_hz": fl0, "midband_gain": am0},
        "f_high_hz": _percentiles(spread.f_high) if fh0 else None,
        "f_low_hz": _percentiles(spread.f_low) if fl0 else None,
        "gain_magnitude": _percentiles(np.abs(spread.gain)),
        "gain_unit": next(h.unit for h in spread.histograms if h.figure == "gain"),
        "yield": dict(spread.yields),
        "worst_case": [{"figure": w.figure, "extreme": w.extreme, "value": w.value,
                        "settings": {label: dev for label, dev in w.settings}} for w in spread.worst_cases],
        "tolerances": [{"part": t.value.part, "value": t.value.label, "element": t.value.element,
                        "nominal": t.value.nominal, "unit": t.value.unit, "tolerance": t.tolerance,
                        "source": t.source} for t in spread.tolerances],
    }


def spread_of_design(doc, samples: int = 10_000, seed: int = 1, **kw) -> Spread:
    """:func:`monte_carlo` of a design document with its targets and its parts' tolerances.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    samples : int
        Monte Carlo samples.
    seed : int
        Seed of the random generator.
    """
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    return monte_carlo(circuit, analysis, design_tolerances(doc, circuit), samples=samples, seed=seed,
                       targets=parse_targets(doc.targets), gain_unit=analysis.gain_unit, **kw)
