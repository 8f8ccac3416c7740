"""The port diagonal from the selected inverse, against the triangular solves and a dense inverse.

The method is Takahashi's equations (K. Takahashi, J. Fagan, M.-S. Chin, "Formation of a
sparse bus impedance matrix and its application to short circuit study", PICA 1973); the
references here are independent of it: the engine's other way (two triangular solves per
port) and a dense inverse by numpy.linalg.inv (common practice, no source). The networks are
invented.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from bandsketch.engine import Circuit
from bandsketch.engine.network.elements import Capacitor
from bandsketch.engine.solve import timeconstants
from bandsketch.engine.solve.mna import OPEN, SHORT, build_system
from bandsketch.engine.solve.selectedinverse import inverse_entries

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "benchmarks"))
import bench_timeconstants  # noqa: E402  (its invented sensor-array mesh and cable ladder)

RTOL = 1e-10


def _capacitors(c: Circuit) -> list:
    return [el for el in c.elements.values() if isinstance(el, Capacitor)]


def _diagonals(monkeypatch, A, U):
    """(selected inverse, triangular solves, dense inverse) values of diag(Uᵀ A⁻¹ U)."""
    lu = timeconstants.factorize(A, "under test")
    monkeypatch.setattr(timeconstants, "SELECTED_INVERSE_PORTS", 1)
    selected = timeconstants.port_diagonal(lu, U)
    monkeypatch.setattr(timeconstants, "SELECTED_INVERSE_PORTS", 10**9)
    solved = timeconstants.port_diagonal(lu, U)
    Ud = U.toarray()
    dense = np.einsum("ij,ij->j", Ud, np.linalg.inv(A.toarray()) @ Ud)
    return selected, solved, dense


def _assert_close(mine, reference):
    # Relative to each port's value, with a floor of rounding in the largest: a floating
    # port across a near-short is a difference of much larger inverse entries.
    np.testing.assert_allclose(mine, reference, rtol=RTOL, atol=1e-13 * np.abs(reference).max())


def _sparse_system(c: Circuit, states=None):
    system = build_system(c, states or {})
    U = timeconstants.port_columns(system, _capacitors(c), dense=False)
    return system, U


@pytest.mark.parametrize("build, size", [(bench_timeconstants.mesh, 400), (bench_timeconstants.ladder, 300)])
def test_mesh_and_ladder_resistive(monkeypatch, build, size):
    # G with every capacitor open, as the open-circuit time constants read it.
    c = build(size)
    system, U = _sparse_system(c, {el.name: OPEN for el in _capacitors(c)})
    selected, solved, dense = _diagonals(monkeypatch, system.G.tocsc(), U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


@pytest.mark.parametrize("build, size", [(bench_timeconstants.mesh, 400), (bench_timeconstants.ladder, 300)])
def test_mesh_and_ladder_complex(monkeypatch, build, size):
    # G + jωC at a band-test frequency: complex symmetric, with a 0-V source branch.
    c = build(size)
    system, U = _sparse_system(c)
    A = (system.G + 1j * 2 * np.pi * 3e6 * system.C).tocsc()
    selected, solved, dense = _diagonals(monkeypatch, A, U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


def _random_network(seed: int, n_nodes: int = 120, *, sources: int = 0, vccs: int = 0) -> tuple[Circuit, dict]:
    """Resistors on a random tree and chords, capacitors grounded and floating (some shorted:
    0-V branch ports), and optionally voltage sources to ground and voltage-controlled current
    sources. Returns the circuit and the capacitor states."""
    rng = np.random.default_rng(seed)
    c = Circuit(f"random network {seed} (invented)")
    nodes = [f"n{k}" for k in range(n_nodes)]
    for k in range(1, n_nodes):
        c.resistor(f"Rt{k}", nodes[k], nodes[int(rng.integers(0, k))], float(rng.uniform(100, 10e3)))
    for k in range(n_nodes // 2):
        a, b = rng.choice(n_nodes, 2, replace=False)
        c.resistor(f"Rc{k}", nodes[a], nodes[b], float(rng.uniform(100, 10e3)))
    c.resistor("Rg", nodes[0], "0", 1e3)
    held = set(rng.choice(n_nodes, sources, replace=False).tolist())
    for k, node in enumerate(sorted(held)):
        c.vsource(f"V{k}", nodes[node], "0")
    free = [k for k in range(n_nodes) if k not in held]
    for k in range(vccs):
        out, ctl = rng.choice(n_nodes, 2, replace=False)
        c.vccs(f"G{k}", nodes[out], "0", nodes[ctl], "0", float(rng.uniform(1e-4, 1e-2)))
    states = {}
    for k in range(n_nodes // 2):
        c.capacitor(f"Cg{k}", nodes[int(rng.integers(0, n_nodes))], "0", float(rng.uniform(1e-12, 1e-9)))
    # Floating capacitors on disjoint pairs of free nodes, so the shorted ones close no loop.
    pairs = rng.permutation(free)[: 2 * (len(free) // 4)].reshape(-1, 2)
    for k, (a, b) in enumerate(pairs):
        c.capacitor(f"Cf{k}", nodes[a], nodes[b], float(rng.uniform(1e-12, 1e-9)))
        states[f"Cf{k}"] = SHORT if k % 3 == 0 else OPEN
    c.output(nodes[-1])
    return c, states


@pytest.mark.parametrize("seed", range(4))
def test_random_networks_with_floating_ports(monkeypatch, seed):
    c, states = _random_network(seed)
    system, U = _sparse_system(c, {**states, **{el.name: OPEN for el in _capacitors(c) if el.name.startswith("Cg")}})
    assert any(name in system.branch_index for name in states)  # shorted ports are branch unknowns
    selected, solved, dense = _diagonals(monkeypatch, system.G.tocsc(), U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


@pytest.mark.parametrize("seed", range(3))
def test_complex_random_networks(monkeypatch, seed):
    c, states = _random_network(10 + seed, sources=2)
    system, U = _sparse_system(c, {name: s for name, s in states.items() if s == SHORT})
    A = (system.G + 1j * 2 * np.pi * 1e7 * system.C).tocsc()
    selected, solved, dense = _diagonals(monkeypatch, A, U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


@pytest.mark.parametrize("seed", range(3))
def test_voltage_source_branches(monkeypatch, seed):
    # Each source's branch row has a zero diagonal, so the factors pivot off it.
    c, states = _random_network(20 + seed, sources=6)
    system, U = _sparse_system(c, {**states, **{el.name: OPEN for el in _capacitors(c) if el.name.startswith("Cg")}})
    A = system.G.tocsc()
    assert np.count_nonzero(A.diagonal() == 0) >= 6
    selected, solved, dense = _diagonals(monkeypatch, A, U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


@pytest.mark.parametrize("seed", range(3))
def test_unsymmetric_with_vccs(monkeypatch, seed):
    c, states = _random_network(30 + seed, sources=2, vccs=8)
    system, U = _sparse_system(c, {**states, **{el.name: OPEN for el in _capacitors(c) if el.name.startswith("Cg")}})
    A = system.G.tocsc()
    assert abs(A - A.T).max() > 1e-4  # the controlled sources make it unsymmetric in value
    selected, solved, dense = _diagonals(monkeypatch, A, U)
    _assert_close(selected, dense)
    _assert_close(selected, solved)


def test_entries_of_a_pivoted_factorisation():
    # Any entries, of an unsymmetric matrix with zero diagonals that SuperLU's partial
    # pivoting reorders; checked against numpy.linalg.inv (common practice, no source).
    rng = np.random.default_rng(7)
    n = 200
    A = sp.random(n, n, density=0.02, random_state=7) + sp.diags(np.where(rng.random(n) < 0.2, 0.0, 1.0))
    A = (A + 1j * sp.random(n, n, density=0.01, random_state=8)).tocsc()
    lu = spla.splu(A)
    assert not np.array_equal(lu.perm_r, lu.perm_c)
    rows, cols = rng.integers(0, n, 400), rng.integers(0, n, 400)
    Z = np.linalg.inv(A.toarray())
    np.testing.assert_allclose(inverse_entries(lu, rows, cols), Z[rows, cols], rtol=0, atol=1e-12 * np.abs(Z).max())


def test_declined_selected_inverse_falls_back_to_solves(monkeypatch):
    # When the selected inverse declines, the solves give the same diagonal.
    c = bench_timeconstants.mesh(100)
    system, U = _sparse_system(c, {el.name: OPEN for el in _capacitors(c)})
    monkeypatch.setattr(timeconstants, "inverse_entries", lambda *args: None)
    selected, solved, dense = _diagonals(monkeypatch, system.G.tocsc(), U)
    _assert_close(selected, dense)


def test_ladder_against_its_closed_form(monkeypatch):
    # With the capacitors open and the source a short, capacitor k of the ladder sees the k
    # 10-Ω resistors in series back to the source: R_k = 10·k Ω (series resistance,
    # common practice, no source).
    c = bench_timeconstants.ladder(2000)
    system, U = _sparse_system(c, {el.name: OPEN for el in _capacitors(c)})
    monkeypatch.setattr(timeconstants, "SELECTED_INVERSE_PORTS", 1)
    z = timeconstants.port_diagonal(timeconstants.factorize(system.G.tocsc(), "under test"), U)
    np.testing.assert_allclose(z, 10.0 * np.arange(1, 2001), rtol=RTOL)
