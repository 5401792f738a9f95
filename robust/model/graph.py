"""The dependency graph: parameters -> coefficients -> Kharitonov vertices.

Nodes are ``("parameter", name)``, ``("coefficient", power)`` and ``("vertex", label)``.
A parameter -> coefficient edge carries ``direction``: the sign of the partial derivative
over the box, ``"+"``, ``"-"``, ``"0"`` or ``"mixed"`` (decided soundly from an outer bound of
the derivative). A coefficient -> vertex edge carries ``bound``: ``"low"`` or ``"high"``, the
end of the coefficient interval that vertex uses.

A vertex is *realisable* when one parameter point produces all its coefficient ends at once:
every parameter is asked for one end only, by every coefficient it drives, with a definite
direction. The point is then the corner where each parameter sits at its asked end.
"""

from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

import networkx as nx

from ..errors import InputError
from ..exact.interval import KHARITONOV_PATTERNS, IntervalPolynomial
from ..exact.numbers import format_fraction
from .family import Box, UncertainPolynomial

__all__ = ["Realisation", "build_graph", "drivers", "realise_vertex", "write_graphml"]

_SIGN_TEXT = {1: "+", -1: "-", 0: "0", None: "mixed"}


@dataclass(frozen=True, slots=True)
class Realisation:
    """Whether a vertex is realisable, and the point that realises it.

    ``realisable`` is True (``point`` given), False (some parameter is asked for both ends:
    ``conflicts`` names them) or None (a mixed direction leaves it open).
    """

    vertex: str
    realisable: bool | None
    point: tuple[Fraction, ...] | None
    conflicts: tuple[str, ...] = ()
    undecided: tuple[str, ...] = ()


def build_graph(family: UncertainPolynomial, box: Box | None = None,
                interval: IntervalPolynomial | None = None) -> nx.DiGraph:
    """Build the dependency graph of a family over a box (default: its own box)."""
    box = box or family.box
    graph = nx.DiGraph()
    n = family.degree
    directions = family.directions(box)
    bounds = family.bounds(box)
    for name, lo, hi in zip(family.names, box.low, box.high, strict=True):
        graph.add_node(("parameter", name), kind="parameter", name=name,
                       low=format_fraction(lo), high=format_fraction(hi))
    for k, coeff in enumerate(family.coefficients):
        power = n - k
        b = bounds[k]
        graph.add_node(("coefficient", power), kind="coefficient", power=power,
                       formula=coeff.to_text(family.names), low=format_fraction(b.low),
                       high=format_fraction(b.high),
                       exact=b.exact)
        used = coeff.variables()
        for i, name in enumerate(family.names):
            if i in used:
                graph.add_edge(("parameter", name), ("coefficient", power),
                               direction=_SIGN_TEXT[directions[k][i]])
    if interval is None:
        from ..exact.interval import interval_from_bounds

        interval = interval_from_bounds([b.low for b in bounds], [b.high for b in bounds])
    if interval.degree_invariant:
        for label in KHARITONOV_PATTERNS:
            graph.add_node(("vertex", label), kind="vertex", label=label)
            for k, which in enumerate(interval.pattern(label)):
                graph.add_edge(("coefficient", n - k), ("vertex", label), bound=which)
    return graph


def drivers(graph: nx.DiGraph, vertex: str) -> dict[str, dict[int, str]]:
    """Parameters that drive a vertex: name -> {power: direction} over the coefficients."""
    out: dict[str, dict[int, str]] = {}
    for coef in graph.predecessors(("vertex", vertex)):
        for param in graph.predecessors(coef):
            out.setdefault(param[1], {})[coef[1]] = graph.edges[param, coef]["direction"]
    return out


def realise_vertex(graph: nx.DiGraph, family: UncertainPolynomial, vertex: str,
                   box: Box | None = None) -> Realisation:
    """Decide from the graph whether one parameter point yields the whole vertex polynomial."""
    box = box or family.box
    asked: dict[str, set[str]] = {}
    undecided: set[str] = set()
    for coef in graph.predecessors(("vertex", vertex)):
        end = graph.edges[coef, ("vertex", vertex)]["bound"]
        for param in graph.predecessors(coef):
            direction = graph.edges[param, coef]["direction"]
            if direction == "mixed":
                undecided.add(param[1])
            elif direction in "+-":
                want_high = (end == "high") == (direction == "+")
                asked.setdefault(param[1], set()).add("high" if want_high else "low")
    conflicts = tuple(sorted(name for name, ends in asked.items() if len(ends) > 1))
    if conflicts:
        return Realisation(vertex, False, None, conflicts, tuple(sorted(undecided)))
    if undecided:
        return Realisation(vertex, None, None, (), tuple(sorted(undecided)))
    point = []
    for i, name in enumerate(family.names):
        ends = asked.get(name)
        if not ends:
            point.append(min(max(family.nominal[i], box.low[i]), box.high[i]))
        else:
            point.append(box.high[i] if "high" in ends else box.low[i])
    return Realisation(vertex, True, tuple(point))


def write_graphml(graph: nx.DiGraph, path: str) -> None:
    """Write the graph as GraphML (node ids flattened to text) to a new file.

    The file appears complete or not at all (written beside it, then linked into place), and
    an existing file (or link) at ``path`` is never replaced.

    Raises
    ------
    InputError
        When ``path`` exists.
    """
    flat = nx.relabel_nodes(graph, {node: f"{node[0]}:{node[1]}" for node in graph.nodes})
    target = Path(path)
    handle, partial = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".partial",
                                       dir=target.absolute().parent)
    try:
        with os.fdopen(handle, "wb") as stream:
            nx.write_graphml(flat, stream)
        os.link(partial, target)  # fails when the target exists: nothing is overwritten
    except FileExistsError:
        raise InputError("graphml", "the file exists already; robust never overwrites it",
                         "a new file name", str(target)) from None
    finally:
        os.unlink(partial)
