"""Poles and zeros of networks too large to find them all: those nearest the band edges.

Held against LAPACK's QZ algorithm on the whole pencil (scipy.linalg.eig, generalised form;
Moler and Stewart, "An algorithm for generalized matrix eigenvalue problems", SIAM J. Numer.
Anal. 10(2), 1973), which finds every root and is what the engine uses up to its limit.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from bandstages import ladder
from bandsketch.engine import Circuit, analyze
from bandsketch.engine.solve import response
from bandsketch.engine.solve.analysisjson import analysis_to_dict

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "benchmarks"))
import bench_timeconstants  # noqa: E402  (its invented sensor-array mesh, 25 × 28 nodes at 700)


def _all_roots(system):
    n = system.size
    A, B = np.zeros((n + 1, n + 1)), np.zeros((n + 1, n + 1))
    A[:n, :n], A[:n, n], A[n, :n], B[:n, :n] = -system.dense_G, system.b, -system.c, system.dense_C
    return (response._finite_eigenvalues(-system.dense_G, system.dense_C), response._finite_eigenvalues(A, B))


@pytest.fixture(scope="module")
def mesh_analysis():
    a = analyze(bench_timeconstants.mesh(700))
    assert a._system.size > response.ROOT_LIMIT
    return a


def test_the_roots_found_are_roots_and_the_nearest_each_band_edge(mesh_analysis):
    a = mesh_analysis
    every_pole, every_zero = _all_roots(a._system)
    for found, every in ((a.poles, every_pole), (a.zeros, every_zero)):
        assert found.size
        for s in found:
            assert np.min(np.abs(every - s)) <= 1e-8 * abs(s)
        for edge in a._band_edges:
            for s in every[np.argsort(np.abs(every - edge))[:response.NEAREST_ROOTS]]:
                assert np.min(np.abs(found - s)) <= 1e-8 * abs(s)
    assert not a.roots_complete and "nearest each band edge" in a.roots_note


def test_an_all_pole_ladder_has_no_finite_zeros_even_beside_its_nilpotent_block():
    # A ladder's zeros of transmission are where a series arm opens or a shunt arm shorts:
    # for an RC ladder only at s = ∞ (common practice; e.g. E. A. Guillemin, Synthesis of
    # Passive Networks, 1957). Arnoldi on its bordered pencil sees the rounding of those
    # infinite roots, which must not come out as zeros.
    a = analyze(ladder(700))
    assert a.zeros.size == 0
    poles, _ = _all_roots(a._system)
    assert np.allclose(np.sort(a.poles.real)[::-1], np.sort(poles.real)[::-1][:a.poles.size], rtol=1e-8)


def test_the_analysis_json_says_which_roots_it_lists(mesh_analysis):
    data = analysis_to_dict(mesh_analysis)
    assert data["roots_note"] == mesh_analysis.roots_note and len(data["poles"]) == mesh_analysis.poles.size
    small = analysis_to_dict(analyze(ladder(5)))
    assert small["roots_note"] == "" and len(small["poles"]) == 5


def test_the_analysis_table_says_when_its_roots_are_only_the_nearest():
    # Few capacitors on a long resistive chain: the table lists the roots, and says they are
    # only those nearest the band edges.
    from bandsketch.engine.present.summary import format_table
    c = Circuit("long divider chain (invented)")
    c.vsource("Vsig", "n0", "0")
    for k in range(1, 701):
        c.resistor(f"R{k}", f"n{k - 1}", f"n{k}", 1.0)
    c.capacitor("C1", "n350", "0", 1e-9)
    c.capacitor("C2", "n700", "0", 1e-9)
    c.output("n700")
    a = analyze(c)
    assert not a.roots_complete
    assert a.roots_note in format_table(a)
