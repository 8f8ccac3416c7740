"""The engine's own root finder and node-graph helpers against scipy and networkx."""

from __future__ import annotations

import math

import networkx as nx
import numpy as np
import pytest
from scipy.optimize import brentq

from bandsketch.engine.core.graphs import Pieces, bridges, path
from bandsketch.engine.core.roots import brent_root


@pytest.mark.parametrize("f, a, b", [
    (lambda x: x ** 3 - 2 * x - 5, 2.0, 3.0),                   # Wallis's cubic
    (lambda x: math.cos(x) - x, 0.0, 1.0),
    (lambda x: math.exp(x) - 1e6, 0.0, 30.0),
    (lambda x: abs(1 / (1 + 1j * 10 ** x)) - 1 / math.sqrt(2), -3.0, 3.0),  # a one-pole corner at log f = 0
    (lambda x: math.tanh(50 * (x - 0.3)), -1.0, 2.0),
])
def test_brent_root_agrees_with_scipy_brentq(f, a, b):
    # Source: scipy.optimize.brentq, with the same tolerances.
    want = brentq(f, a, b, xtol=1e-13, rtol=1e-13)
    assert brent_root(f, a, b, xtol=1e-13, rtol=1e-13) == pytest.approx(want, rel=1e-12, abs=1e-12)


def test_brent_root_refuses_a_bracket_without_a_sign_change():
    with pytest.raises(ValueError):
        brent_root(lambda x: x * x + 1, -1.0, 1.0, xtol=1e-12, rtol=1e-12)


def _random_edges(rng, n_nodes, n_edges):
    return [(f"n{rng.integers(n_nodes)}", f"n{rng.integers(n_nodes)}") for _ in range(n_edges)]


@pytest.mark.parametrize("seed", range(20))
def test_pieces_and_paths_agree_with_networkx(seed):
    # Source: networkx.connected_components and has_path.
    rng = np.random.default_rng(seed)
    nodes = [f"n{i}" for i in range(12)]
    edges = _random_edges(rng, 12, int(rng.integers(0, 14)))
    joined = Pieces(nodes)
    for a, b in edges:
        joined.join(a, b)
    graph = nx.Graph()
    graph.add_nodes_from(nodes)
    graph.add_edges_from(edges)
    assert sorted(map(sorted, joined.pieces())) == sorted(map(sorted, nx.connected_components(graph)))
    for a, b in (("n0", "n1"), ("n2", "n7"), ("n3", "n3")):
        found = path(edges, a, b)
        assert (found is not None) == nx.has_path(graph, a, b)
        if found:
            assert found[0] == a and found[-1] == b
            assert all(graph.has_edge(u, v) for u, v in zip(found, found[1:]))


@pytest.mark.parametrize("seed", range(30))
def test_bridges_agree_with_networkx(seed):
    # Source: networkx.bridges on the simple graph, less the edges given twice (parallel elements).
    rng = np.random.default_rng(100 + seed)
    nodes = [f"n{i}" for i in range(10)]
    edges = _random_edges(rng, 10, int(rng.integers(1, 16)))
    multi = nx.MultiGraph()
    multi.add_nodes_from(nodes)
    multi.add_edges_from(edges)
    want = {frozenset(e) for e in nx.bridges(nx.Graph(multi)) if multi.number_of_edges(*e) == 1}
    assert bridges(nodes, edges) == want
