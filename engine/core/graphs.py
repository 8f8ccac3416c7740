"""Which nodes elements join: connected pieces, the path between two nodes, and bridges.

Small graphs of circuit nodes (names), in plain Python: for a stage of tens of parts this
is quicker than building a graph object, and it keeps a graph library out of the imports.
"""

from __future__ import annotations

from collections import defaultdict, deque


class Pieces:
    """Nodes joined by edges so far, as disjoint pieces (union–find with path halving)."""

    def __init__(self, nodes=()):
        self._parent: dict = {}
        for node in nodes:
            self._parent.setdefault(node, node)

    def root(self, node):
        """The representative of ``node``'s piece (a node never seen is a piece of its own).

        Parameters
        ----------
        node : hashable
            A node name.
        """
        parent = self._parent
        while parent.setdefault(node, node) != node:
            parent[node] = parent[parent[node]]
            node = parent[node]
        return node

    def join(self, a, b) -> bool:
        """Put ``a`` and ``b`` in one piece; False when they were in one already.

        Parameters
        ----------
        a, b : hashable
            Node names.
        """
        ra, rb = self.root(a), self.root(b)
        if ra == rb:
            return False
        self._parent[ra] = rb
        return True

    def joined(self, a, b) -> bool:
        """Whether ``a`` and ``b`` are in one piece.

        Parameters
        ----------
        a, b : hashable
            Node names.
        """
        return self.root(a) == self.root(b)

    def pieces(self) -> list[set]:
        """Every piece as a set of nodes, in the order their first node was seen."""
        out: dict = {}
        for node in list(self._parent):
            out.setdefault(self.root(node), set()).add(node)
        return list(out.values())


def path(edges, a, b) -> list | None:
    """The nodes on a path from ``a`` to ``b`` through ``edges`` (breadth first), or None.

    Parameters
    ----------
    edges : iterable of (hashable, hashable)
        Node pairs.
    a, b : hashable
        Node names.
    """
    adjacent = defaultdict(list)
    for u, v in edges:
        adjacent[u].append(v)
        adjacent[v].append(u)
    before = {a: None}
    queue = deque([a])
    while queue:
        u = queue.popleft()
        if u == b:
            out = [u]
            while before[out[-1]] is not None:
                out.append(before[out[-1]])
            return out[::-1]
        for v in adjacent[u]:
            if v not in before:
                before[v] = u
                queue.append(v)
    return None


def bridges(nodes, edges) -> set[frozenset]:
    """Edges whose removal splits their piece: each as the frozenset of its two nodes.

    An edge given twice (two parallel elements) is never a bridge. Iterative depth-first
    search with low points (R. E. Tarjan, "A note on finding the bridges of a graph",
    Information Processing Letters 2(6), 1974).

    Parameters
    ----------
    nodes : iterable of hashable
        Node names.
    edges : iterable of (hashable, hashable)
        Node pairs; a pair with both ends on one node is passed over.
    """
    adjacent = defaultdict(list)
    for k, (u, v) in enumerate(edges):
        if u != v:
            adjacent[u].append((v, k))
            adjacent[v].append((u, k))
    order: dict = {}
    low: dict = {}
    found = set()
    for start in list(nodes) + list(adjacent):
        if start in order:
            continue
        order[start] = low[start] = len(order)
        stack = [(start, -1, iter(adjacent[start]))]
        while stack:
            u, via, it = stack[-1]
            for v, k in it:
                if k == via:
                    continue
                if v in order:
                    low[u] = min(low[u], order[v])
                else:
                    order[v] = low[v] = len(order)
                    stack.append((v, k, iter(adjacent[v])))
                    break
            else:
                stack.pop()
                if stack:
                    parent = stack[-1][0]
                    low[parent] = min(low[parent], low[u])
                    if low[u] > order[parent]:
                        found.add(frozenset((parent, u)))
    return found
