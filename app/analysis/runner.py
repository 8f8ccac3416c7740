"""Re-analysing the design after every finished edit, off the UI thread when it is slow.

:func:`analyse_design` is the whole job, free of Qt: design → circuit → analysis → what the
views draw, or the problem that stops it. :class:`AnalysisRunner` runs it on the UI thread
while runs stay quick (no thread hand-over to wait for), and on a worker thread once a run
has taken longer than :data:`THREAD_AFTER_S`. Each request gets a generation number; only
the newest request's outcome is delivered, and while one run is under way only the newest
of the requests that arrive meanwhile is kept, so a burst of edits costs at most two runs.
The exact sensitivities written beside the bars follow the delivered outcomes once the edits
pause (:data:`SENSE_AFTER_MS`), always on the worker thread (they cost as much again as the
analysis), one run at a time, the newest next.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

from PySide6.QtCore import QObject, QThreadPool, QTimer, Signal

from bandsketch.engine.solve.analysis import analyze
from bandsketch.engine.design.document import Document
from bandsketch.engine.core.errors import CircuitError
from bandsketch.engine.present.biasdata import BiasMarks, bias_marks
from bandsketch.engine.design.netlist import DrawnDesign, Netlist, read_design
from bandsketch.engine.advise.sensitivity import sensitivities
from bandsketch.engine.present.plotdata import (BarData, BodeData, VerdictData, bar_data, bar_sensitivities, bode_data,
                                                verdict_data)
from bandsketch.engine.present.stepdata import PulseData, StepData, time_views

THREAD_AFTER_S = 0.030
"""A run slower than this (seconds) moves the next ones off the UI thread."""
SENSE_AFTER_MS = 150
"""The sensitivities wait until no newer outcome has been delivered for this long (ms): during
a value scrub they would share the interpreter with the views and slow every step, while
they only matter once the hand rests."""


@dataclass(frozen=True)
class Outcome:
    """The result of analysing one state of the design.

    Attributes
    ----------
    generation : int
        Which request this answers (higher is newer).
    doc : Document
        The snapshot of the design that was analysed.
    netlist : Netlist or None
        Its nets (None for an empty design).
    circuit : bandsketch.engine.network.circuit.Circuit or None
        The circuit that was analysed (None if the design is empty or not a circuit yet).
    analysis : bandsketch.engine.solve.analysis.Analysis or None
        The analysis, or None if the design is empty or cannot be analysed.
    bode, bars, verdict : BodeData, BarData, VerdictData or None
        What the views draw.
    timed : bool
        Whether the step and pulse were worked out (only while the time view is on show).
    step, pulse : StepData, PulseData or None
        What the time-domain view draws; None when not ``timed``, or when the stage has no
        step response (then ``time_problem`` says why).
    time_problem : str or None
        Why there is no step response (an unstable network), in words.
    problem : str or None
        Why the design cannot be analysed, naming the part or node.
    problem_parts : tuple of str
        The parts at fault.
    problem_points : tuple of (int, int)
        Sheet points at fault (scene units).
    bias : BiasMarks or None
        The operating point as the sheet writes it (None when nothing is biased from the sheet).
    seconds : float
        How long the run took, s.
    """

    generation: int
    doc: Document
    netlist: Netlist | None = None
    circuit: object = None
    analysis: object = None
    bode: BodeData | None = None
    bars: BarData | None = None
    verdict: VerdictData | None = None
    timed: bool = False
    step: StepData | None = None
    pulse: PulseData | None = None
    time_problem: str | None = None
    problem: str | None = None
    problem_parts: tuple = ()
    problem_points: tuple = ()
    seconds: float = 0.0
    bias: BiasMarks | None = None

    @property
    def ok(self) -> bool:
        """Whether there is an analysis to show."""
        return self.analysis is not None


def _problem_outcome(generation, doc, nets, message, parts=(), points=(), started=0.0) -> Outcome:
    return Outcome(generation, doc, nets, problem=message, problem_parts=tuple(parts),
                   problem_points=tuple(points), seconds=time.perf_counter() - started)


def analyse_design(doc: Document, generation: int = 0, drawn: DrawnDesign | None = None,
                   pulse_width: float | None = None, timed: bool = True) -> Outcome:
    """Analyse a design snapshot and prepare what the views draw; never raises.

    Parameters
    ----------
    doc : Document
        A copy (:meth:`Document.copy`): it is read from another thread.
    generation : int
        Carried into the outcome.
    drawn : DrawnDesign, optional
        The nets and circuit of ``doc`` as the sheet already read them (read here if not
        given); from here on only this run uses the circuit.
    pulse_width : float, optional
        s, the width of the pulse the time view shows; None for the default.
    timed : bool
        Whether to work out the step and pulse too.
    """
    started = time.perf_counter()
    if doc.is_empty():
        return Outcome(generation, doc, seconds=time.perf_counter() - started)
    drawn = drawn or read_design(doc)
    nets, circuit = drawn.netlist, drawn.circuit
    if circuit is None:
        first = drawn.problems[0]
        return _problem_outcome(generation, doc, nets, first.message, first.parts, first.points, started)
    try:
        analysis = analyze(circuit, bands=dict(doc.band_pins))
    except CircuitError as exc:
        points = tuple(pt for node in exc.nodes for pt in nets.net_points.get(node, ()))
        parts = tuple(dict.fromkeys(p.split(".", 1)[0] for p in exc.parts))
        return _problem_outcome(generation, doc, nets, exc.message, parts, points, started)
    except Exception as exc:  # noqa: BLE001
        # A breakdown the checks did not foresee (a numerical failure deep in a solver) must
        # still reach the user as a sentence, and must not leave the worker thread silent.
        return _problem_outcome(generation, doc, nets,
                                f"The analysis could not be completed ({type(exc).__name__}: {exc}); "
                                "check the values of the parts you changed last.", started=started)
    step = pulse = time_problem = None
    try:
        if timed:
            step, pulse = time_views(analysis, pulse_width)
    except CircuitError as exc:
        time_problem = exc.message
    point = analysis.operating_point
    return Outcome(generation, doc, nets, circuit, analysis, bode_data(analysis), bar_data(analysis),
                   verdict_data(analysis), timed, step, pulse, time_problem, seconds=time.perf_counter() - started,
                   bias=None if point is None else bias_marks(doc, nets, point))


class _Relay(QObject):
    """Carries a worker's outcome back to the UI thread (it lives there, so delivery is queued)."""

    done = Signal(object)
    sensed = Signal(int, object)


def sense_outcome(outcome: Outcome):
    """The exact sensitivity beside each bar of ``outcome`` (element -> BarSensitivity), or
    the sentence saying why there are none; never raises."""
    try:
        return bar_sensitivities(outcome.bars, sensitivities(outcome.circuit, outcome.analysis))
    except Exception as exc:  # noqa: BLE001 - a worker must answer, and the bars stand without
        return f"The exact sensitivities could not be computed ({type(exc).__name__}: {exc})."


class AnalysisRunner(QObject):
    """Analyses the newest state of a design and announces its outcome.

    Signals
    -------
    finished(Outcome)
        The outcome of the newest request; older ones are dropped unannounced.
    sensed(object)
        The bars' exact sensitivities for the outcome announced last (a mapping element ->
        BarSensitivity, or a sentence saying why there are none).

    Attributes
    ----------
    last : Outcome or None
        The outcome announced last, for a view that starts listening late.
    pulse_width : float or None
        s, the pulse the time view shows (None: the default); read by each request.
    timed : bool
        Whether each run works out the step and pulse too (the time view sets it while on
        show: they cost a fifth of a small stage's run); read by each request.
    """

    finished = Signal(object)
    sensed = Signal(object)

    def __init__(self, parent=None, thread_after_s: float = THREAD_AFTER_S):
        super().__init__(parent)
        self.thread_after_s = thread_after_s
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_done)
        self._relay.sensed.connect(self._on_sensed)
        self._sensing = 0
        self._sense_next: Outcome | None = None
        self._sense_timer = QTimer(self)
        self._sense_timer.setSingleShot(True)
        self._sense_timer.setInterval(SENSE_AFTER_MS)
        self._sense_timer.timeout.connect(self._sense_newest)
        self._generation = 0
        self._running = False
        self._pending: tuple | None = None
        self.last_seconds = 0.0
        self.last: Outcome | None = None
        self.threaded_runs = 0
        self.pulse_width: float | None = None
        self.timed = True

    @property
    def generation(self) -> int:
        """The number of the newest request."""
        return self._generation

    def request(self, doc: Document, drawn: DrawnDesign | None = None) -> None:
        """Analyse ``doc`` as it is now (``drawn``: its reading, if the sheet made one); a
        newer request supersedes this one."""
        self._generation += 1
        job = (self._generation, doc.copy(), drawn, self.pulse_width, self.timed)
        if self._running:
            self._pending = job
        else:
            self._start(job)

    def _start(self, job) -> None:
        generation, doc, drawn, width, timed = job
        if self.last_seconds <= self.thread_after_s:
            self._on_done(analyse_design(doc, generation, drawn, width, timed))
            return
        self._running = True
        self.threaded_runs += 1
        relay = self._relay
        self.pool.start(lambda: relay.done.emit(analyse_design(doc, generation, drawn, width, timed)))

    def _on_done(self, outcome: Outcome) -> None:
        self._running = False
        self.last_seconds = outcome.seconds
        if outcome.generation == self._generation:
            self.last = outcome
            self.finished.emit(outcome)
            if outcome.ok:
                self._sense_next = outcome
                self._sense_timer.start()
        if self._pending is not None:
            job, self._pending = self._pending, None
            self._start(job)

    def _sense_newest(self) -> None:
        # One sensitivity run at a time, of the newest outcome only, so no queue builds up on
        # the worker ahead of the next analysis.
        outcome = self._sense_next
        if self._sensing or outcome is None:
            return
        self._sense_next = None
        if outcome.generation != self._generation:
            return
        self._sensing = 1
        relay, generation = self._relay, outcome.generation
        self.pool.start(lambda: relay.sensed.emit(generation, sense_outcome(outcome)))

    def _on_sensed(self, generation: int, result) -> None:
        self._sensing = 0
        if generation == self._generation:
            self.sensed.emit(result)
        if not self._sense_timer.isActive():
            self._sense_newest()

    def shutdown(self) -> None:
        """Drop what is queued and wait for the worker to finish (before the window goes)."""
        self._pending = self._sense_next = None
        self._sense_timer.stop()
        self.pool.clear()
        self.pool.waitForDone()
        # What the worker finished is still queued for this thread; none of it is awaited now.
        self._running, self._sensing = False, 0

    def wait(self, timeout_ms: int = 10000) -> bool:
        """Block until no run is under way (for tests, screenshots and shutdown).

        Returns
        -------
        bool
            True if every run finished within ``timeout_ms``.
        """
        from PySide6.QtCore import QCoreApplication, QDeadlineTimer

        deadline = QDeadlineTimer(timeout_ms)
        while self._running or self._pending is not None or self._sensing or self._sense_timer.isActive():
            if deadline.hasExpired():
                return False
            self.pool.waitForDone(20)
            QCoreApplication.processEvents()
        return True
