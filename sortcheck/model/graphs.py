"""Topological order and cycles of the directed graphs of netlists, in plain Python.

Loading a netlist only needs to know that its signals form no cycle, and
engines need the gates in an order where every gate comes after the gates it
reads: a linear-time pass (Kahn's algorithm) over adjacency lists does both,
without building a general graph object.

>>> topological_order({"a": ["b"], "b": ["c"], "c": []})
['a', 'b', 'c']
>>> topological_order({"a": ["b"], "b": ["a"]}) is None
True
>>> find_cycle({"x": ["a"], "a": ["b"], "b": ["a"]})
['a', 'b']
"""

from __future__ import annotations

from collections import deque
from typing import Hashable, Iterable, Mapping, Sequence

Graph = Mapping[Hashable, Sequence[Hashable]]


def adjacency(edges: Iterable[tuple[Hashable, Hashable]], nodes: Iterable[Hashable] = ()) -> dict:
    """Successor lists of the graph with ``edges`` (and the lone ``nodes``), in first-seen order."""
    graph: dict = {node: [] for node in nodes}
    for source, target in edges:
        graph.setdefault(source, []).append(target)
        graph.setdefault(target, [])
    return graph


def _kahn(graph: Graph) -> tuple[list, int]:
    """The nodes Kahn's algorithm orders (every one after its predecessors, ties in the graph's node order:
    all but those on a cycle or reached from one), and how many nodes the graph has."""
    indegree = dict.fromkeys(graph, 0)
    for successors in graph.values():
        for node in successors:
            indegree[node] = indegree.get(node, 0) + 1
    ready = deque(node for node, count in indegree.items() if count == 0)
    order = []
    while ready:
        node = ready.popleft()
        order.append(node)
        for successor in graph.get(node, ()):
            indegree[successor] -= 1
            if indegree[successor] == 0:
                ready.append(successor)
    return order, len(indegree)


def topological_order(graph: Graph) -> list | None:
    """Every node after its predecessors (ties in the graph's node order), or None when there is a cycle."""
    order, nodes = _kahn(graph)
    return order if len(order) == nodes else None


def find_cycle(graph: Graph) -> list:
    """The nodes of one cycle, in the direction of the edges (empty when the graph has none); linear time.

    Every node that Kahn's algorithm cannot order has a predecessor that
    cannot be ordered either; walking backwards along such predecessors must
    come back to a node seen before, and from there on the walk is a cycle.
    """
    ordered = set(_kahn(graph)[0])
    predecessors: dict = {}
    for node, successors in graph.items():
        for successor in successors:
            if node not in ordered:
                predecessors.setdefault(successor, []).append(node)
    node = next((node for node in predecessors if node not in ordered), None)
    if node is None:
        return []
    path, position = [], {}
    while node not in position:
        position[node] = len(path)
        path.append(node)
        node = predecessors[node][0]
    return path[position[node]:][::-1]
