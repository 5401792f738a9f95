"""Tests for robust.model.graph: parameters -> coefficients -> Kharitonov vertices.

Truth comes from outside the project: the direction of every parameter -> coefficient edge is
checked against exact finite differences of the coefficients at random points of the box (a
function with a non-negative partial derivative over a box does not decrease along that
direction: common practice, no source); realised vertices against the Kharitonov polynomials
of the coefficient bounds (Kharitonov, "Asymptotic stability of an equilibrium position of a
family of systems of linear differential equations", Differentsial'nye Uravneniya 14, 1978);
the GraphML file is read back with networkx (Hagberg, Schult & Swart, "Exploring network
structure, dynamics, and function using NetworkX", SciPy 2008).
"""

from __future__ import annotations

import random
from fractions import Fraction
from pathlib import Path

import networkx as nx
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.exact.interval import KHARITONOV_PATTERNS, interval_from_bounds
from robust.model.case import load_case
from robust.model.family import Box, build_family
from robust.model.graph import build_graph, drivers, realise_vertex, write_graphml

F = Fraction
CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))
S = sp.Symbol("s")
LABELS = tuple(KHARITONOV_PATTERNS)


def make_family(expr, names, low, high):
    box = Box(tuple(names), tuple(F(x) for x in low), tuple(F(x) for x in high))
    numerator, denominator = sp.fraction(sp.together(expr))
    return build_family(numerator, denominator, S, names, box, box.center)


def interval_of(fam):
    bounds = fam.bounds()
    return interval_from_bounds([b.low for b in bounds], [b.high for b in bounds])


def assert_directions_match_differences(fam, rng, samples=40):
    """Every '+', '-', '0' edge agrees in sign with exact finite differences in the box."""
    graph = build_graph(fam)
    n = fam.degree
    box = fam.box
    for k, coeff in enumerate(fam.coefficients):
        power = n - k
        for i, name in enumerate(fam.names):
            edge = (("parameter", name), ("coefficient", power))
            if i not in coeff.variables():
                assert not graph.has_edge(*edge)
                continue
            direction = graph.edges[edge]["direction"]
            lo, hi = box.low[i], box.high[i]
            for _ in range(samples):
                point = [a + (b - a) * F(rng.randint(0, 64), 64) for a, b in box.intervals]
                j0 = rng.randint(0, 63)
                j1 = rng.randint(j0 + 1, 64)  # x0 < x1 (equal when the direction is fixed)
                x0, x1 = lo + (hi - lo) * F(j0, 64), lo + (hi - lo) * F(j1, 64)
                point[i] = x0
                before = coeff.evaluate(point)
                point[i] = x1
                diff = coeff.evaluate(point) - before
                if direction == "+":
                    assert diff >= 0
                elif direction == "-":
                    assert diff <= 0
                elif direction == "0":
                    assert diff == 0
                else:
                    assert direction == "mixed"


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_case_directions_agree_with_finite_differences(path):
    """For every example case, the edge directions agree with exact differences in the box."""
    assert_directions_match_differences(load_case(path).family, random.Random(path.stem))


@st.composite
def random_families(draw):
    """Degree 2-4 families whose coefficients are random polynomials in x, y over random boxes
    (some straddling 0), leading coefficient kept non-zero."""
    x, y = sp.symbols("x y")
    degree = draw(st.integers(2, 4))
    expr = sp.Integer(0)
    for k in range(degree + 1):
        c = sp.Integer(draw(st.integers(1, 4)) if k == degree else draw(st.integers(-3, 3)))
        for _ in range(draw(st.integers(0, 3))):
            c += draw(st.integers(-3, 3)) * x ** draw(st.integers(0, 3)) * y ** draw(st.integers(0, 2))
        expr += c * S**k
    lows = [F(draw(st.integers(-4, 4)), 2) for _ in range(2)]
    highs = [lo + F(draw(st.integers(1, 4)), 2) for lo in lows]
    return expr, lows, highs


@given(random_families(), st.randoms(use_true_random=False))
@settings(max_examples=40, deadline=None)
def test_random_directions_agree_with_finite_differences(data, rng):
    """For random polynomial families, every definite direction agrees with exact differences."""
    expr, lows, highs = data
    if sp.Poly(sp.expand(expr), S).LC() == 0 or sp.degree(expr, S) < 1:
        return
    fam = make_family(expr, ["x", "y"], lows, highs)
    assert_directions_match_differences(fam, rng, samples=10)


def test_genuinely_mixed_direction_is_reported_mixed():
    """A coefficient that falls then rises in a parameter gets 'mixed', and both signs occur."""
    R = sp.Symbol("R")
    fam = make_family(S**2 + (R**2 - 2 * R + 2) * S + 1, ["R"], [F(1, 2)], [F(3, 2)])
    graph = build_graph(fam)
    assert graph.edges[("parameter", "R"), ("coefficient", 1)]["direction"] == "mixed"
    c = fam.coefficients[1]
    assert c.evaluate([F(3, 4)]) < c.evaluate([F(1, 2)])   # falling left of R = 1
    assert c.evaluate([F(3, 2)]) > c.evaluate([F(5, 4)])   # rising right of it
    assert realise_vertex(graph, fam, "K1").realisable is None


def test_graph_nodes_carry_bounds_and_formulas():
    """Coefficient nodes hold the formula and the exact bound; parameter nodes the range."""
    fam = load_case(CASES[0].parent / "thermal_pi_affine.toml").family
    graph = build_graph(fam)
    bounds = fam.bounds()
    for k, b in enumerate(bounds):
        node = graph.nodes[("coefficient", fam.degree - k)]
        assert (node["low"], node["high"], node["exact"]) == (str(b.low), str(b.high), b.exact)
        assert node["formula"] == fam.formulas()[k]
    assert graph.nodes[("parameter", "G")]["low"] == "3/5"
    for label in LABELS:
        preds = set(graph.predecessors(("vertex", label)))
        assert preds == {("coefficient", p) for p in range(fam.degree + 1)}


def test_vertex_edges_follow_the_kharitonov_pattern():
    """Coefficient -> vertex edges name the bound the theorem's pattern picks per power."""
    # Kharitonov 1978, ascending powers: K1 L L H H, K2 H H L L, K3 H L L H, K4 L H H L.
    written = {"K1": "LLHH", "K2": "HHLL", "K3": "HLLH", "K4": "LHHL"}
    fam = load_case(CASES[0].parent / "interval_measured.toml").family
    graph = build_graph(fam)
    for label, pattern in written.items():
        for power in range(fam.degree + 1):
            bound = graph.edges[("coefficient", power), ("vertex", label)]["bound"]
            assert bound == ("low" if pattern[power % 4] == "L" else "high")


def test_no_vertex_nodes_when_the_leading_interval_contains_zero():
    """Without degree invariance the graph has no Kharitonov vertices."""
    R = sp.Symbol("R")
    fam = make_family(R * S**2 + S + 1, ["R"], [-1], [1])
    graph = build_graph(fam)
    assert not [n for n in graph.nodes if n[0] == "vertex"]


# -- realisation ------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["interval_measured", "interval_unstable"])
def test_interval_case_vertices_are_realised_exactly(name):
    """In an interval family every vertex is realisable and its point gives the vertex polynomial."""
    fam = load_case(CASES[0].parent / f"{name}.toml").family
    graph = build_graph(fam)
    interval = interval_of(fam)
    for label in LABELS:
        r = realise_vertex(graph, fam, label)
        assert r.realisable is True
        assert fam.box.contains(r.point)
        assert fam.coefficients_at(r.point) == interval.vertex(label)


@st.composite
def independent_families(draw):
    """Each coefficient an affine function of its own parameter, with either sign of slope."""
    degree = draw(st.integers(1, 5))
    names = [f"p{k}" for k in range(degree + 1)]
    expr = sp.Integer(0)
    lows, highs = [], []
    for k, name in enumerate(names):
        slope = draw(st.sampled_from([-3, -1, 1, 2]))
        offset = draw(st.integers(10, 20))
        expr += (offset + slope * sp.Symbol(name)) * S ** (degree - k)
        lo = F(draw(st.integers(0, 1)))  # p in [0, 3]: every coefficient stays >= 1
        lows.append(lo)
        highs.append(lo + F(draw(st.integers(1, 2))))
    return expr, names, lows, highs


@given(independent_families())
@settings(max_examples=40, deadline=None)
def test_independent_family_vertices_are_realisable(data):
    """When each parameter drives one coefficient monotonically, every vertex is realisable
    and its point's exact coefficients are the vertex polynomial."""
    expr, names, lows, highs = data
    fam = make_family(expr, names, lows, highs)
    graph = build_graph(fam)
    interval = interval_of(fam)
    for label in LABELS:
        r = realise_vertex(graph, fam, label)
        assert r.realisable is True and r.conflicts == ()
        assert fam.box.contains(r.point)
        assert fam.coefficients_at(r.point) == interval.vertex(label)


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_realisation_answers_are_consistent(path):
    """Realisable vertices give their polynomial exactly; conflicts name parameters truly asked
    for both ends by the pattern and the directions."""
    fam = load_case(path).family
    graph = build_graph(fam)
    interval = interval_of(fam)
    for label in LABELS:
        r = realise_vertex(graph, fam, label)
        if r.realisable:
            assert fam.coefficients_at(r.point) == interval.vertex(label)
        elif r.realisable is False:
            # recompute the ends each conflicting parameter is asked for, from the edges
            for name in r.conflicts:
                asked = set()
                for power in range(fam.degree + 1):
                    edge = (("parameter", name), ("coefficient", power))
                    if not graph.has_edge(*edge) or graph.edges[edge]["direction"] not in ("+", "-"):
                        continue
                    end = graph.edges[("coefficient", power), ("vertex", label)]["bound"]
                    asked.add((end == "high") == (graph.edges[edge]["direction"] == "+"))
                assert asked == {True, False}
        else:
            assert r.undecided


def test_thermal_vertex_conflict_is_the_shared_parameter():
    """In the affine heater case, K1 needs G both high (in a2) and low (in a1): a conflict."""
    # a2 = C + 8G, a1 = G + 4Kd (up to a constant factor); K1 takes a2 high and a1 low.
    fam = load_case(CASES[0].parent / "thermal_pi_affine.toml").family
    r = realise_vertex(build_graph(fam), fam, "K1")
    assert r.realisable is False and r.conflicts == ("G",)


def test_drivers_lists_parameters_per_coefficient():
    """drivers() maps each parameter to the powers it drives and the direction of each."""
    fam = load_case(CASES[0].parent / "maglev_lead.toml").family
    graph = build_graph(fam)
    d = drivers(graph, "K1")
    assert d["kx"] == {2: "-", 1: "-", 0: "-"}
    assert d["m"] == {4: "+", 3: "+", 2: "+"}
    assert d["ks"] == {1: "+", 0: "+"}


def test_write_graphml_round_trips_through_networkx(tmp_path):
    """write_graphml writes a file networkx reads back with the same nodes, edges and labels."""
    fam = load_case(CASES[0].parent / "maglev_lead.toml").family
    graph = build_graph(fam)
    target = tmp_path / "maglev.graphml"
    write_graphml(graph, str(target))
    back = nx.read_graphml(target)  # NetworkX (Hagberg et al. 2008)
    assert back.number_of_nodes() == graph.number_of_nodes()
    assert back.number_of_edges() == graph.number_of_edges()
    assert back.is_directed()
    assert back.edges["parameter:kx", "coefficient:0"]["direction"] == "-"
    assert back.edges["coefficient:0", "vertex:K1"]["bound"] == "low"
    assert back.nodes["coefficient:0"]["formula"] == fam.formulas()[-1]
