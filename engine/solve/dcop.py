"""The DC operating point: nodal equations with the large-signal transistor models.

Capacitors are open and inductors shorted (the DC limit of the nodal equations of
:mod:`bandsketch.engine.solve.mna`: C drops out at s = 0), every independent source sits at
its DC value and every rail holds its voltage. The transistors biased from the circuit enter
through their large-signal models (:mod:`bandsketch.engine.network.largesignal`); the
equations are solved by Newton–Raphson with the junction-voltage limiter, continued by
source stepping and then by a conductance ramp to ground when plain Newton fails. A point is
accepted only when every node's current sum is within an absolute and a relative tolerance.
"""

from __future__ import annotations

import copy
import hashlib
import math
import threading
from collections import OrderedDict
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping

import numpy as np

from ..core.errors import BiasError
from ..core.values import format_value
from ..network.elements import ISource, Rail, VSource
from ..network.largesignal import bjt_currents, bjt_region, limit_junction, mos_current, mos_region
from ..network.validate import validate
from .floating import check_dc_solvable
from .mna import build_system

ABS_TOL = 1e-12
"""Absolute tolerance on a node's current sum, A."""
REL_TOL = 1e-9
"""Relative tolerance on a node's current sum, against the largest current meeting there."""
MAX_NEWTON = 100
"""Newton iterations of the plain attempt and of each homotopy step."""
MAX_HOMOTOPY_STEPS = 200
"""Homotopy steps before a continuation gives up."""
MOS_STEP = (0.5, 2.0)
"""Largest change of a MOSFET's V_GS and of its V_DS in one Newton step, V (bounded steps)."""
SETTLED = 1e-3
"""A Newton step below this share of the largest unknown (V or A) prompts the current-sum check."""
GMIN_START = 1e-2
"""First conductance to ground (S) of the conductance ramp."""
KEPT_SOLUTIONS = 16
"""DC solutions kept by the exact content of their equations (see :func:`solved`)."""


@dataclass(frozen=True)
class BjtBias:
    """A bipolar transistor at its operating point, in its own polarity (for a pnp: I_C out
    of the collector, V_EB and V_EC), so forward active reads positive for both kinds.

    Attributes
    ----------
    ic, ib : float
        Collector and base currents, A.
    vbe, vce, vbc : float
        Junction and collector–emitter voltages, V.
    region : str
        ``"forward active"``, ``"saturated"``, ``"cut off"`` or ``"reverse active"``.
    small_signal : Mapping[str, float]
        g_m (S), r_π, r_o (Ω), C_π, C_μ, C_cs (F), V_T (V): the exact derivatives at this point.
    """

    ic: float
    ib: float
    vbe: float
    vce: float
    vbc: float
    region: str
    small_signal: Mapping
    kind: str = "bjt"

    def __getitem__(self, key):
        return getattr(self, key)


@dataclass(frozen=True)
class MosBias:
    """A MOS transistor at its operating point, in its own polarity (for a p-MOS: I_D out of
    the drain, V_SG, V_SD).

    Attributes
    ----------
    id : float
        Drain current, A.
    vgs, vds, vbs, vth : float
        Terminal voltages and the threshold at this body bias, V.
    region : str
        ``"saturation"``, ``"triode"`` or ``"cut off"``.
    small_signal : Mapping[str, float]
        g_m, g_mb (S), r_o (Ω) and the capacitances (F) at this point.
    """

    id: float
    vgs: float
    vds: float
    vbs: float
    vth: float
    region: str
    small_signal: Mapping
    kind: str = "mosfet"

    def __getitem__(self, key):
        return getattr(self, key)


@dataclass(frozen=True)
class OperatingPoint:
    """The solved DC operating point of a circuit.

    Attributes
    ----------
    node_voltages : Mapping[str, float]
        Node -> voltage against ground, V (ground included at 0).
    branch_currents : Mapping[str, float]
        Voltage source, rail, inductor -> current from its ``p`` node through it, A.
    devices : Mapping[str, BjtBias or MosBias]
        Transistor name -> its bias.
    warnings : tuple of str
        What a designer should know: devices out of their amplifying region, nodes beyond the
        rails, a device with no drive.
    iterations : int
        Newton iterations spent, all homotopy steps included.
    method : str
        ``"newton"``, ``"source stepping"`` or ``"conductance stepping"``.
    """

    node_voltages: Mapping
    branch_currents: Mapping
    devices: Mapping
    warnings: tuple = ()
    iterations: int = 0
    method: str = "newton"
    residual: float = field(default=0.0)
    """Largest node current sum at the accepted point, A."""

    def __repr__(self) -> str:
        devices = []
        for name, b in self.devices.items():
            current, voltage = (("I_C", b.ic), ("V_CE", b.vce)) if b.kind == "bjt" else (("I_D", b.id), ("V_DS", b.vds))
            devices.append(f"{name} {b.region} ({current[0]} {format_value(current[1], 'A')}, "
                           f"{voltage[0]} {format_value(voltage[1], 'V')})")
        warned = f", {len(self.warnings)} warning{'s' if len(self.warnings) != 1 else ''}" if self.warnings else ""
        return (f"<OperatingPoint {self.method}, {len(self.node_voltages)} nodes: "
                f"{'; '.join(devices) or 'no transistors'}{warned}>")


class _DcView:
    """The circuit as the DC equations see it: its linear elements, every node it has."""

    def __init__(self, circuit):
        self.elements = {el.name: el for el in circuit.dc_elements()}
        self._nodes = circuit.nodes()
        self.input_name = circuit.input_name
        self.output_nodes = circuit.output_nodes or ("0", "0")

    def nodes(self):
        return self._nodes


class _Devices:
    """The nonlinear devices as arrays, each pin an index into the unknowns plus one for ground."""

    def __init__(self, circuit, index, ground):
        def pin(node):
            return index.get(node, ground)

        bjts = [b for b in circuit.large_blocks.values() if b.kind == "bjt"]
        moss = [b for b in circuit.large_blocks.values() if b.kind == "mosfet"]
        self.bjt_names = [b.name for b in bjts]
        self.mos_names = [b.name for b in moss]
        self.bc = np.array([pin(b.pins["collector"]) for b in bjts], dtype=int)
        self.bb = np.array([pin(b.pins["base"]) for b in bjts], dtype=int)
        self.be = np.array([pin(b.pins["emitter"]) for b in bjts], dtype=int)
        p = [b.model.params for b in bjts]
        self.bs = np.array([q.sign for q in p])
        self.isat = np.array([q.isat for q in p])
        self.beta = np.array([q.beta for q in p])
        self.beta_r = np.array([q.beta_r for q in p])
        self.va = np.array([q.va for q in p])
        self.vt = np.array([q.vt for q in p])
        self.vcrit = np.array([q.vcrit for q in p])
        self.md = np.array([pin(b.pins["drain"]) for b in moss], dtype=int)
        self.mg = np.array([pin(b.pins["gate"]) for b in moss], dtype=int)
        self.ms = np.array([pin(b.pins["source"]) for b in moss], dtype=int)
        self.mb = np.array([pin(b.pins["bulk"]) for b in moss], dtype=int)
        m = [b.model.params for b in moss]
        self.msign = np.array([q.sign for q in m])
        self.vth = np.array([q.vth for q in m])
        self.kp = np.array([q.kp for q in m])
        self.lam = np.array([q.lam for q in m])
        self.gamma = np.array([q.gamma for q in m])
        self.phi = np.array([q.phi for q in m])
        self._scatter(ground + 1)

    def _scatter(self, size):
        """One-hot matrices that add the devices' currents and Jacobian entries into place.

        A matrix product with them is what ``np.add.at`` would do, for one sample or many, at
        a fraction of its cost on a stage's handful of devices.
        """
        rows = [*self.bc, *self.bb, *self.be, *self.md, *self.ms]
        self._to_nodes = np.zeros((len(rows), size))
        self._to_nodes[np.arange(len(rows)), rows] = 1.0
        pairs = []
        for c, b, e in zip(self.bc, self.bb, self.be):
            pairs += [(row, col) for row in (c, b, e) for col in (b, e, c)]
        for d, g, s_, bk in zip(self.md, self.mg, self.ms, self.mb):
            pairs += [(row, col) for row in (d, s_) for col in (g, d, bk, s_)]
        self._to_matrix = np.zeros((len(pairs), size * size))
        self._to_matrix[np.arange(len(pairs)), [r * size + c for r, c in pairs]] = 1.0

    def per_row(self, factors):
        """A copy whose parameters differ row by row.

        ``factors`` maps a parameter (``"isat"``, ``"beta"`` of the BJTs, ``"vth"``, ``"kp"``
        of the MOSFETs) to (m, devices of that kind) multipliers of its nominal values; the
        copy's such parameters are (m, devices) arrays, and :meth:`rows` takes rows of them.
        """
        out = copy.copy(self)
        for key, f in factors.items():
            setattr(out, key, getattr(self, key) * np.asarray(f, dtype=float))
        out._rowwise = tuple(factors)
        return out

    def rows(self, idx):
        """This copy for the rows ``idx`` of its row-by-row parameters (itself if it has none)."""
        keys = getattr(self, "_rowwise", ())
        if not keys:
            return self
        out = copy.copy(self)
        for key in keys:
            setattr(out, key, getattr(self, key)[idx])
        return out

    def start(self):
        """Device voltages of the first iteration: junctions at their critical voltage, MOS on."""
        return (self.vcrit.copy(), np.zeros_like(self.vcrit),
                self.vth + 0.2, np.ones_like(self.vth), np.zeros_like(self.vth))

    def raw(self, xe):
        """Device voltages (own polarity) from the unknowns ``xe`` (ground appended; a leading
        axis of samples is kept)."""
        s, m = self.bs, self.msign

        def at(i):
            return xe[..., i]

        return (s * (at(self.bb) - at(self.be)), s * (at(self.bb) - at(self.bc)),
                m * (at(self.mg) - at(self.ms)), m * (at(self.md) - at(self.ms)), m * (at(self.mb) - at(self.ms)))

    def limited(self, raw, old):
        vbe, vbc, vgs, vds, vbs = raw
        obe, obc, ogs, ods, obs = old
        step_gs, step_ds = MOS_STEP
        return (limit_junction(vbe, obe, self.vt, self.vcrit), limit_junction(vbc, obc, self.vt, self.vcrit),
                ogs + np.clip(vgs - ogs, -step_gs, step_gs), ods + np.clip(vds - ods, -step_ds, step_ds),
                obs + np.clip(vbs - obs, -step_gs, step_gs))

    def currents(self, volts, size):
        """At device voltages ``volts``: the current leaving each node into the devices (A).
        A leading axis of samples in ``volts`` gives one row per sample."""
        vbe, vbc, vgs, vds, vbs = volts
        parts = []
        if self.bjt_names:
            ic, ib, *_ = bjt_currents(vbe, vbc, self.isat, self.beta, self.beta_r, self.va, self.vt)
            s = self.bs
            # Terminal currents into the device: s·I_C at the collector, s·I_B at the base.
            parts += [s * ic, s * ib, -s * (ic + ib)]
        if self.mos_names:
            i_d = mos_current(vgs, vds, vbs, self.vth, self.kp, self.lam, self.gamma, self.phi)[0]
            parts += [self.msign * i_d, -self.msign * i_d]
        if not parts:
            return np.zeros(np.shape(vbe)[:-1] + (size,))
        return np.concatenate(parts, axis=-1) @ self._to_nodes

    def linearised(self, volts, size):
        """At device voltages ``volts``: the Jacobian J of the device currents in node
        voltages (S) and the constant i_eq (A) of the linearisation f ≈ i_eq + J·x. A leading
        axis of samples in ``volts`` gives one of each per sample."""
        vbe, vbc, vgs, vds, vbs = volts
        batch = np.shape(vbe)[:-1]
        constants, entries = [], []
        if self.bjt_names:
            ic, ib, c_be, c_bc, b_be, b_bc = bjt_currents(vbe, vbc, self.isat, self.beta, self.beta_r, self.va, self.vt)
            s = self.bs
            eq_c = s * (ic - c_be * vbe - c_bc * vbc)
            eq_b = s * (ib - b_be * vbe - b_bc * vbc)
            constants += [eq_c, eq_b, -(eq_c + eq_b)]
            # d(s·I)/dv_node with v_be = s(v_b − v_e), v_bc = s(v_b − v_c): the signs cancel.
            # Per device: rows collector, base, emitter; columns base, emitter, collector.
            per_row = [(c_be, c_bc), (b_be, b_bc), (-(c_be + b_be), -(c_bc + b_bc))]
            entries.append(np.stack([d for d_be, d_bc in per_row for d in (d_be + d_bc, -d_be, -d_bc)], axis=-1))
        if self.mos_names:
            i_d, gm, gds, gmb, _ = mos_current(vgs, vds, vbs, self.vth, self.kp, self.lam, self.gamma, self.phi)
            eq_d = self.msign * (i_d - gm * vgs - gds * vds - gmb * vbs)
            constants += [eq_d, -eq_d]
            # Per device: rows drain, source; columns gate, drain, bulk, source.
            entries.append(np.stack([k * v for k in (1.0, -1.0) for v in (gm, gds, gmb, -(gm + gds + gmb))], axis=-1))
        if not constants:
            return np.zeros(batch + (size, size)), np.zeros(batch + (size,))
        i_eq = np.concatenate(constants, axis=-1) @ self._to_nodes
        # Entries come device by device, each device's in the order _scatter lists its pairs.
        J = _device_major(entries, batch) @ self._to_matrix
        return J.reshape(batch + (size, size)), i_eq


def _device_major(entries, batch):
    """The Jacobian entries of :meth:`_Devices.stamp` as one row per sample, device by device."""
    return np.concatenate([e.reshape(batch + (-1,)) for e in entries], axis=-1)


def _dc_excitation(view, system) -> np.ndarray:
    b = np.zeros(system.size)
    for el in view.elements.values():
        if isinstance(el, VSource):
            b[system.branch_index[el.name]] += el.dc
        elif isinstance(el, ISource):
            for node, sign in ((el.into, 1.0), (el.out_of, -1.0)):
                if node in system.node_index:
                    b[system.node_index[node]] += sign * el.dc
    return b


class DcEquations:
    """The DC equations G·x + f(x) = b, with the devices' currents f."""

    def __init__(self, circuit):
        view = _DcView(circuit)
        self.system = build_system(view)
        self.n = self.system.size
        self.nodes = len(self.system.node_index)
        self.G = np.array(self.system.dense_G)
        self._abs_G = np.abs(self.G)
        self.b = _dc_excitation(view, self.system)
        self.devices = _Devices(circuit, self.system.node_index, self.n)
        self.names = {i: node for node, i in self.system.node_index.items()}

    def digest(self) -> bytes:
        """A digest of everything the solution depends on: the linear equations, the
        excitation, and every device's pins and parameters."""
        h = hashlib.blake2b(np.array([self.n, self.nodes]).tobytes(), digest_size=32)
        # Every array of pins or parameters the devices hold, by name, so one added to them is
        # covered too (the private ones are derived from the pins and the size).
        arrays = sorted((k, v) for k, v in vars(self.devices).items()
                        if isinstance(v, np.ndarray) and not k.startswith("_"))
        for name, a in [("G", self.G), ("b", self.b), *arrays]:
            h.update(f"{name}{a.dtype}{a.shape}".encode())
            h.update(np.ascontiguousarray(a).tobytes())
        return h.digest()

    def residual(self, x, scale_b=1.0, gmin=0.0):
        """Each equation's residual and the size of the largest current in it."""
        xe = np.append(x, 0.0)
        f = self.devices.currents(self.devices.raw(xe), self.n + 1)
        lin = self.G @ x
        r = lin + f[:-1] - scale_b * self.b
        r[:self.nodes] += gmin * x[:self.nodes]
        size = self._abs_G @ np.abs(x) + np.abs(f[:-1]) + abs(scale_b) * np.abs(self.b)
        return r, size

    def accepted(self, x, scale_b=1.0, gmin=0.0) -> bool:
        r, size = self.residual(x, scale_b, gmin)
        return bool(np.all(np.abs(r) <= ABS_TOL + REL_TOL * size))

    def newton(self, x, volts, scale_b=1.0, gmin=0.0, limit=None):
        """Newton–Raphson from ``x`` (device voltages ``volts``, None for the first-iteration
        guess); returns (x, device voltages, iterations, converged, last step)."""
        limit = limit or MAX_NEWTON
        dev = self.devices
        swing = np.zeros(self.n)
        for it in range(1, limit + 1):
            xe = np.append(x, 0.0)
            volts = dev.limited(dev.raw(xe), volts) if it > 1 or volts is not None else dev.start()
            J, i_eq = dev.linearised(volts, self.n + 1)
            # The devices linearised about the limited voltages: i_eq + J·x.
            A = self.G + J[:-1, :-1]
            A[np.arange(self.nodes), np.arange(self.nodes)] += gmin
            rhs = scale_b * self.b - i_eq[:-1]
            try:
                new = np.linalg.solve(A, rhs)
            except np.linalg.LinAlgError:
                return x, volts, it, False, swing
            if not np.all(np.isfinite(new)):
                return x, volts, it, False, swing
            swing = new - x
            x = new
            # The current sums are worth checking only once the step has become small.
            if np.max(np.abs(swing), initial=0.0) <= SETTLED * (1.0 + np.max(np.abs(x), initial=0.0)) \
                    and self.accepted(x, scale_b, gmin):
                return x, volts, it, True, swing
        return x, volts, limit, False, swing

    def solve_batch(self, G, x0, limit: int = MAX_NEWTON, devices=None):
        """Newton–Raphson for many variants of these equations at once, each from ``x0``.

        Parameters
        ----------
        G : numpy.ndarray
            (m, n, n) the linear part of each variant (its resistors changed, say); the
            devices and sources are these equations' own.
        x0 : numpy.ndarray
            (n,) the start of every variant: the solved point of the nominal network, so a
            variant within its tolerances settles in a few steps.
        limit : int
            Newton steps before a variant is given up.
        devices : optional
            These equations' devices with parameters that differ row by row
            (``self.devices.per_row(...)``); by default the nominal devices for every row.

        Returns
        -------
        (numpy.ndarray, numpy.ndarray)
            x, (m, n) node voltages (V) and branch currents (A), and whether each variant's
            current sums were met (:data:`ABS_TOL`, :data:`REL_TOL`); an unsettled variant's
            row is NaN.
        """
        m, every = G.shape[0], devices or self.devices
        dev = every
        x = np.broadcast_to(np.asarray(x0, dtype=float), (m, self.n)).copy()
        volts = dev.raw(np.concatenate([x, np.zeros((m, 1))], axis=1))
        todo = np.arange(m)
        done = np.zeros(m, dtype=bool)
        for _ in range(limit):
            if todo.size == 0:
                break
            dev = every.rows(todo)
            xe = np.concatenate([x[todo], np.zeros((todo.size, 1))], axis=1)
            limited = dev.limited(dev.raw(xe), tuple(v[todo] for v in volts))
            J, i_eq = dev.linearised(limited, self.n + 1)
            A = G[todo] + J[:, :-1, :-1]
            try:
                new = np.linalg.solve(A, (self.b - i_eq[:, :-1])[..., None])[..., 0]
            except np.linalg.LinAlgError:
                break
            swing = new - x[todo]
            x[todo] = new
            for v, lv in zip(volts, limited):
                v[todo] = lv
            xe = np.concatenate([new, np.zeros((todo.size, 1))], axis=1)
            f = dev.currents(dev.raw(xe), self.n + 1)
            r = np.einsum("mij,mj->mi", G[todo], new) + f[:, :-1] - self.b
            size = np.einsum("mij,mj->mi", np.abs(G[todo]), np.abs(new)) + np.abs(f[:, :-1]) + np.abs(self.b)
            settled = np.all(np.abs(swing) <= SETTLED * (1.0 + np.abs(new)), axis=1) \
                & np.all(np.abs(r) <= ABS_TOL + REL_TOL * size, axis=1) & np.all(np.isfinite(new), axis=1)
            done[todo[settled]] = True
            todo = todo[~settled]
        x[~done] = np.nan
        return x, done


def operating_point(circuit) -> OperatingPoint:
    """Solve the DC operating point of ``circuit`` and give its biased blocks their values.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
        The network; blocks given large-signal parameters are biased from it.

    Returns
    -------
    OperatingPoint
        Node voltages (V), branch currents (A), each transistor's bias and the warnings. The
        circuit's biased blocks then hold the small-signal values of this point.

    Raises
    ------
    CircuitError
        The circuit cannot be solved as drawn (see :func:`validate`).
    BiasError
        Newton–Raphson and both homotopies failed; the message names the device and the node
        that swings most.
    """
    validate(circuit)
    # A floating node is named first: Newton–Raphson would only fail to settle there.
    check_dc_solvable(circuit, build_system(circuit))
    return solved(circuit)


def solved(circuit) -> OperatingPoint:
    """:func:`operating_point` of a circuit already validated (the analysis checks it once).

    The last :data:`KEPT_SOLUTIONS` solutions are kept by a digest of their equations, so a
    circuit whose DC equations are those of one solved before takes that solution as solving
    would give it, without the iterations.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
        Validated.
    """
    if circuit.operating_point is not None:
        return circuit.operating_point
    problem = DcEquations(circuit)
    x, iterations, method = _kept_solve(problem)
    point = _point(circuit, problem, x, iterations, method)
    circuit.install_bias(point, {name: d.small_signal for name, d in point.devices.items()})
    return point


class _Ramp:
    """Steps of a homotopy parameter from ``start`` to ``end`` (the source scale, or log10 of
    the conductance to ground), widened after a success and narrowed after a failure."""

    def __init__(self, start, end, step, make):
        self.t, self.end, self.step, self.make = start, end, step, make
        self.done = False
        self._trial = start

    def next_step(self):
        """Keywords for the next Newton solve, or None when the ramp has ended or stalled."""
        if self.done or abs(self.step) < 1e-4:
            return None
        self._trial = self.end if abs(self.step) >= abs(self.end - self.t) else self.t + self.step
        return self.make(self._trial)

    def report(self, ok: bool) -> None:
        if ok:
            self.t = self._trial
            self.done = self.t == self.end
            self.step *= 1.5
        else:
            self.step /= 4.0


def _continued(problem, x, volts, ramp):
    """Follow a homotopy, each step starting from the last solution; returns
    (x, device voltages, iterations, reached the end, last swing)."""
    total = 0
    swing = np.zeros(problem.n)
    for _ in range(MAX_HOMOTOPY_STEPS):
        kw = ramp.next_step()
        if kw is None:
            break
        new_x, new_volts, its, ok, swing = problem.newton(x, volts, limit=max(1, MAX_NEWTON // 2), **kw)
        total += its
        ramp.report(ok)
        if ok:
            x, volts = new_x, new_volts
    return x, volts, total, ramp.done, swing


_solutions: OrderedDict = OrderedDict()
_solutions_lock = threading.Lock()


def forget_solutions() -> None:
    """Drop the kept DC solutions, so the next bias is solved from the start (a measurement
    of the whole analysis needs that)."""
    with _solutions_lock:
        _solutions.clear()


def _kept_solve(problem):
    """:func:`_solve`, or its answer to the same equations kept from before: an edit that leaves
    the bias alone (a capacitor's value, a band pin) costs no Newton iterations, and the
    answer is the one solving again would give, to the last bit."""
    # The solver's own settings are part of what the answer depends on.
    key = (problem.digest(), ABS_TOL, REL_TOL, MAX_NEWTON, MAX_HOMOTOPY_STEPS, MOS_STEP, SETTLED, GMIN_START)
    with _solutions_lock:
        kept = _solutions.get(key)
        if kept is not None:
            _solutions.move_to_end(key)
    if kept is not None:
        x, iterations, method = kept
        return x.copy(), iterations, method
    x, iterations, method = _solve(problem)
    with _solutions_lock:
        _solutions[key] = (x.copy(), iterations, method)
        while len(_solutions) > KEPT_SOLUTIONS:
            _solutions.popitem(last=False)
    return x, iterations, method


def _solve(problem):
    x0 = np.zeros(problem.n)
    x, volts, its, ok, swing = problem.newton(x0, None)
    total = its
    if ok:
        return x, total, "newton"
    # Source stepping: at zero sources x = 0 solves exactly; raise them to their values.
    zero_volts = problem.devices.raw(np.append(x0, 0.0))
    ramp = _Ramp(0.0, 1.0, 0.1, lambda t: {"scale_b": t})
    x, volts, its, ok, swing = _continued(problem, x0, zero_volts, ramp)
    total += its
    if ok:
        return x, total, "source stepping"
    # Conductance stepping: a conductance from every node to ground, removed in decades.
    first = problem.newton(x0, None, gmin=GMIN_START)
    total += first[2]
    if first[3]:
        ramp = _Ramp(math.log10(GMIN_START), -13.0, -1.0,
                     lambda t: {"gmin": 0.0 if t <= -13.0 else 10.0 ** t})
        x, volts, its, ok, swing = _continued(problem, first[0], first[1], ramp)
        total += its
        if ok:
            return x, total, "conductance stepping"
    else:
        swing = first[4]
    raise _no_convergence(problem, swing, total)


def _no_convergence(problem, swing, total) -> BiasError:
    dev = problem.devices
    worst = int(np.argmax(np.abs(swing[:problem.nodes]))) if problem.nodes else 0
    node = problem.names.get(worst, "0")
    attached = [name for name, pins in zip(dev.bjt_names, zip(dev.bc, dev.bb, dev.be)) if worst in pins]
    attached += [name for name, pins in zip(dev.mos_names, zip(dev.md, dev.mg, dev.ms, dev.mb)) if worst in pins]
    device = attached[0] if attached else (dev.bjt_names + dev.mos_names or ["the circuit"])[0]
    return BiasError(
        f"The bias of {device} does not settle: Newton–Raphson found no operating point in {total} steps, "
        f"with source stepping and conductance stepping; node {node} swings most "
        f"(by {format_value(abs(float(swing[worst])) if problem.nodes else 0.0, 'V')} in the last step). "
        "Check the bias network around it (a missing resistor to a rail, a loop that latches).",
        parts=tuple(attached) or tuple(dev.bjt_names + dev.mos_names)[:1], nodes=(node,))


def _v(value) -> str:
    return format_value(float(value), "V")


def _bjt_warning(name, d: BjtBias) -> str | None:
    if d.region == "saturated":
        return (f"{name} is saturated (V_CE = {_v(d.vce)}, its collector junction forward-biased by "
                f"{_v(d.vbc)}): it does not amplify as its small-signal values say; lower the base drive "
                "or the collector resistor.")
    if d.region == "cut off" and abs(d.vbe) < 1e-3:
        return (f"{name} has no base drive (V_BE = {_v(d.vbe)}): nothing biases its base; connect a bias "
                "resistor or divider from a rail.")
    if d.region == "cut off":
        return f"{name} is cut off (V_BE = {_v(d.vbe)}): it carries no collector current; raise its base bias."
    if d.region == "reverse active":
        return f"{name} runs reverse active (V_BC = {_v(d.vbc)}): check which way it is drawn."
    return None


def _mos_warning(name, d: MosBias) -> str | None:
    if d.region == "triode":
        return (f"{name} is in triode (V_DS = {_v(d.vds)} is below V_GS − V_th = {_v(d.vgs - d.vth)}): it acts "
                "as a resistor, not an amplifier; lower the drain resistor or the gate bias.")
    if d.region == "cut off" and abs(d.vgs) < 1e-3:
        return (f"{name} has no gate drive (V_GS = {_v(d.vgs)}): nothing biases its gate; connect a bias "
                "divider from a rail.")
    if d.region == "cut off":
        return f"{name} is below threshold (V_GS = {_v(d.vgs)} < V_th = {_v(d.vth)}): it carries no drain current."
    return None


def _point(circuit, problem, x, iterations, method) -> OperatingPoint:
    system, dev = problem.system, problem.devices
    xe = np.append(x, 0.0)
    vbe, vbc, vgs, vds, vbs = dev.raw(xe)
    devices, warnings = {}, []
    if dev.bjt_names:
        ic, ib, *_ = bjt_currents(vbe, vbc, dev.isat, dev.beta, dev.beta_r, dev.va, dev.vt)
    for k, name in enumerate(dev.bjt_names):
        volts = {"vbe": float(vbe[k]), "vbc": float(vbc[k])}
        ss = circuit.large_blocks[name].model.small_signal(name, volts)
        d = BjtBias(float(ic[k]), float(ib[k]), volts["vbe"], volts["vbe"] - volts["vbc"], volts["vbc"],
                    bjt_region(vbe[k], vbc[k]), MappingProxyType(ss))
        devices[name] = d
        warnings.append(_bjt_warning(name, d))
    if dev.mos_names:
        i_d, _, _, _, vth = mos_current(vgs, vds, vbs, dev.vth, dev.kp, dev.lam, dev.gamma, dev.phi)
    for k, name in enumerate(dev.mos_names):
        volts = {"vgs": float(vgs[k]), "vds": float(vds[k]), "vbs": float(vbs[k])}
        ss = circuit.large_blocks[name].model.small_signal(name, volts)
        d = MosBias(float(i_d[k]), volts["vgs"], volts["vds"], volts["vbs"], float(vth[k]),
                    mos_region(vgs[k], vds[k], vth[k]), MappingProxyType(ss))
        devices[name] = d
        warnings.append(_mos_warning(name, d))
    nodes = {"0": 0.0, **{node: float(x[i]) for node, i in system.node_index.items()}}
    rails = [el.dc for el in circuit.elements.values() if isinstance(el, Rail)]
    if rails:
        lo, hi = min(0.0, *rails), max(0.0, *rails)
        margin = 1e-6 * max(1.0, hi - lo)
        for node, v in nodes.items():
            if v > hi + margin or v < lo - margin:
                warnings.append(f"Node {node} sits at {_v(v)}, beyond the supply rails ({_v(lo)} to {_v(hi)}): "
                                "a source drives it past them; check its DC value.")
    r, _ = problem.residual(x)
    return OperatingPoint(
        MappingProxyType(nodes),
        MappingProxyType({name: float(x[k]) for name, k in system.branch_index.items()}),
        MappingProxyType(devices), tuple(w for w in warnings if w), iterations, method,
        float(np.max(np.abs(r[:problem.nodes]))) if problem.nodes else 0.0)
