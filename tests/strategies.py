"""Shared hypothesis strategies: coefficient lists and polynomials built from known roots.

A polynomial built here carries its root description (``RootSpec``), so that a test can
build the same polynomial with every root moved (for the shift property) and knows the
counts by construction: a root's half-plane is the sign of its real part (common practice,
no source).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

from hypothesis import strategies as st

MAX_DEGREE = 15

small_ints = st.integers(min_value=-30, max_value=30)
nonzero_ints = small_ints.filter(lambda v: v != 0)
small_fractions = st.fractions(min_value=-30, max_value=30, max_denominator=12)
nonzero_fractions = small_fractions.filter(lambda v: v != 0)
positive_fractions = st.fractions(min_value=Fraction(1, 12), max_value=12, max_denominator=12)


@st.composite
def integer_coefficients(draw, min_degree: int = 0, max_degree: int = MAX_DEGREE):
    """Integer coefficients, highest power first, with a non-zero leading coefficient."""
    degree = draw(st.integers(min_degree, max_degree))
    wide = draw(st.booleans())
    values = st.integers(-(10**12), 10**12) if wide else small_ints
    lead = draw(values.filter(lambda v: v != 0))
    return [lead, *draw(st.lists(values, min_size=degree, max_size=degree))]


@st.composite
def rational_coefficients(draw, min_degree: int = 0, max_degree: int = MAX_DEGREE):
    """Fraction coefficients, highest power first, with a non-zero leading coefficient."""
    degree = draw(st.integers(min_degree, max_degree))
    lead = draw(nonzero_fractions)
    return [lead, *draw(st.lists(small_fractions, min_size=degree, max_size=degree))]


@dataclass(frozen=True)
class RootSpec:
    """Roots by family: ``real`` rational roots, ``pairs`` (re, im^2) for re +- j*im.

    Each entry carries its multiplicity; ``scale`` is the (non-zero) leading coefficient.
    Imaginary-axis pairs are pairs with re = 0, roots at the origin are real roots 0.
    """

    real: tuple[tuple[Fraction, int], ...]
    pairs: tuple[tuple[Fraction, Fraction, int], ...]
    scale: Fraction

    @property
    def degree(self) -> int:
        return sum(m for _, m in self.real) + 2 * sum(m for _, _, m in self.pairs)

    def shifted(self, sigma: Fraction) -> RootSpec:
        """The same roots moved by +sigma along the real axis."""
        return RootSpec(
            tuple((r + sigma, m) for r, m in self.real),
            tuple((re + sigma, im2, m) for re, im2, m in self.pairs),
            self.scale,
        )

    def coefficients(self) -> list[Fraction]:
        """The polynomial scale * prod (s - r)^m * prod (s^2 - 2 re s + re^2 + im^2)^m."""
        poly = [self.scale]
        for r, m in self.real:
            for _ in range(m):
                poly = _times(poly, [Fraction(1), -r])
        for re, im2, m in self.pairs:
            for _ in range(m):
                poly = _times(poly, [Fraction(1), -2 * re, re * re + im2])
        return poly

    def counts(self) -> tuple[int, int, int]:
        """(open_right, imaginary_axis, open_left) by construction."""
        right = axis = left = 0
        for value, weight in [(r, m) for r, m in self.real] + [
            (re, 2 * m) for re, _, m in self.pairs
        ]:
            if value > 0:
                right += weight
            elif value < 0:
                left += weight
            else:
                axis += weight
        return right, axis, left


def _times(a: list[Fraction], b: list[Fraction]) -> list[Fraction]:
    out = [Fraction(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            out[i + j] += x * y
    return out


def _real_root(draw) -> list[tuple[Fraction, int]]:
    # non-zero: roots at the origin are their own kind ("origin")
    return [(draw(nonzero_fractions.map(lambda v: v / 3)), draw(st.integers(1, 2)))]


def _complex_pair(draw) -> list[tuple[Fraction, Fraction, int]]:
    return [(draw(nonzero_fractions.map(lambda v: v / 3)), draw(positive_fractions), 1)]


def _imaginary_pair(draw) -> list[tuple[Fraction, Fraction, int]]:
    return [(Fraction(0), draw(positive_fractions), draw(st.integers(1, 3)))]


def _quadrantal(draw) -> list[tuple[Fraction, Fraction, int]]:
    # (s^2 - 2as + a^2 + b^2)(s^2 + 2as + a^2 + b^2): roots +-a +- jb, symmetric about the
    # origin without being on the axis (a zero row whose auxiliary has no imaginary roots)
    a = draw(st.fractions(min_value=Fraction(1, 4), max_value=4, max_denominator=4))
    b2 = draw(positive_fractions)
    return [(a, b2, 1), (-a, b2, 1)]


@st.composite
def known_root_polynomials(draw, max_degree: int = 12, origin: bool = True) -> RootSpec:
    """Products of known factors: rational real roots, complex pairs, imaginary-axis pairs
    (multiplicity 1-3), roots at the origin and quadrantally symmetric quartics."""
    real: list[tuple[Fraction, int]] = []
    pairs: list[tuple[Fraction, Fraction, int]] = []
    kinds = ["real", "complex", "imaginary", "quadrantal"] + (["origin"] if origin else [])
    for kind in draw(st.lists(st.sampled_from(kinds), min_size=1, max_size=6)):
        if kind == "real":
            extra_real, extra_pairs = _real_root(draw), []
        elif kind == "origin":
            extra_real, extra_pairs = [(Fraction(0), draw(st.integers(1, 2)))], []
        elif kind == "complex":
            extra_real, extra_pairs = [], _complex_pair(draw)
        elif kind == "imaginary":
            extra_real, extra_pairs = [], _imaginary_pair(draw)
        else:
            extra_real, extra_pairs = [], _quadrantal(draw)
        grown = RootSpec(tuple(real + extra_real), tuple(pairs + extra_pairs), Fraction(1))
        if grown.degree > max_degree:
            break
        real += extra_real
        pairs += extra_pairs
    scale = draw(nonzero_fractions)
    return RootSpec(tuple(real), tuple(pairs), scale)


def case_toml(parameters, coefficients=None, expression=None, requirements=None,
              title="test case") -> str:
    """TOML text of a case (DESIGN.md section 4); numbers are written as strings, so exact.

    ``parameters`` maps a name to its keys (lists become TOML arrays of strings); give either
    ``coefficients`` (highest power first) or ``expression``.
    """
    lines = [f'title = "{title}"']
    for name, spec in parameters.items():
        lines.append(f"[parameters.{name}]")
        for key, value in spec.items():
            if isinstance(value, (list, tuple)):
                lines.append(f"{key} = [" + ", ".join(f'"{v}"' for v in value) + "]")
            else:
                lines.append(f'{key} = "{value}"')
    lines.append("[polynomial]")
    if coefficients is not None:
        lines.append("coefficients = [" + ", ".join(f'"{c}"' for c in coefficients) + "]")
    else:
        lines.append(f'expression = "{expression}"')
    if requirements:
        lines.append("[requirements]")
        lines += [f"{k} = {v}" for k, v in requirements.items()]
    return "\n".join(lines) + "\n"


@st.composite
def small_families(draw):
    """(text, formulas, names) of a family of degree 3-4 in 2-3 parameters, affine or
    multilinear, with a Hurwitz nominal: coefficients of a product of stable factors
    s + r plus integer multiples of (p_j - 1) (every p_j has nominal 1)."""
    degree = draw(st.integers(3, 4))
    k = draw(st.integers(2, 3))
    base = [Fraction(1)]
    for _ in range(degree):
        r = draw(st.integers(1, 4))
        base = [a + r * b for a, b in zip([*base, Fraction(0)], [Fraction(0), *base], strict=True)]
    multilinear = draw(st.booleans())
    names = [f"p{j}" for j in range(k)]
    formulas = []
    for i, c in enumerate(base):
        terms = [str(c)]
        for j in range(k):
            d = draw(st.integers(-2, 3))
            if d:
                terms.append(f"{d}*(p{j} - 1)")
        if multilinear and i > 0:
            e = draw(st.integers(-2, 2))
            if e:
                terms.append(f"{e}*(p0 - 1)*(p1 - 1)")
        formulas.append(" + ".join(terms))
    tolerances = [draw(st.sampled_from(["0.1", "0.2", "0.3", "0.5"])) for _ in range(k)]
    params = {n: {"nominal": "1", "tolerance": t} for n, t in zip(names, tolerances, strict=True)}
    return params, formulas, names
