"""Tests for robust.exact.regions (the disk |z| < r mapped onto the left half-plane, and the
Schur-Cohn reduction) and for robust routh --discrete.

Outside references: polynomials built from roots whose moduli are known exactly (real rational
roots, and pairs x +- jy with x^2 + y^2 rational), so the counts inside, on and outside the
circle follow from the construction (common practice, no source); numpy's roots for random
polynomials away from the circle (Harris et al., "Array programming with NumPy", Nature 2020);
Schur's theorem that every root lies inside the unit circle exactly when every step of the
reduction has |leading| > |constant| (Schur 1917, Cohn 1922; from memory).
"""

from __future__ import annotations

import json
from fractions import Fraction

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.cli import main
from robust.exact.regions import disk_counts, disk_to_half_plane, schur_cohn_table

F = Fraction


def _times(p, q):
    out = [F(0)] * (len(p) + len(q) - 1)
    for i, a in enumerate(p):
        for j, b in enumerate(q):
            out[i + j] += a * b
    return out


@st.composite
def rooted(draw):
    """(coefficients, radius, expected (inside, on, outside)) from roots of known modulus."""
    radius = draw(st.sampled_from([F(1), F(1), F(9, 10), F(3, 2)]))
    poly = [draw(st.sampled_from([F(1), F(-2), F(1, 3)]))]
    inside = on = outside = 0
    for _ in range(draw(st.integers(1, 4))):
        if draw(st.booleans()):  # a real root r
            r = draw(st.sampled_from([F(0), radius, -radius, radius / 2, -radius / 3, 2 * radius,
                                      -3 * radius / 2]))
            poly = _times(poly, [F(1), -r])
            m2 = r * r
            count = 1
        else:  # a pair x +- jy with x^2 + y^2 = m2: (z^2 - 2x z + m2)
            m2 = radius**2 * draw(st.sampled_from([F(1, 4), F(1), F(9, 4)]))
            x = draw(st.sampled_from([F(0), F(1, 5), F(-3, 10)])) * radius
            if x * x >= m2:
                continue
            poly = _times(poly, [F(1), -2 * x, m2])
            count = 2
        if m2 < radius**2:
            inside += count
        elif m2 == radius**2:
            on += count
        else:
            outside += count
    return poly, radius, (inside, on, outside)


@settings(max_examples=200, deadline=None)
@given(rooted())
def test_counts_follow_from_the_roots(data):
    poly, radius, expected = data
    counts = disk_counts(poly, radius)
    assert (counts.inside, counts.on_circle, counts.outside) == expected


@settings(max_examples=200, deadline=None)
@given(rooted())
def test_schur_cohn_decides_the_unit_disk(data):
    poly, radius, (inside, _, _) = data
    scaled = [c * radius ** (len(poly) - 1 - i) for i, c in enumerate(poly)]
    assert schur_cohn_table(scaled).schur_stable == (inside == len(poly) - 1)


def test_random_polynomials_agree_with_numpy_away_from_the_circle():
    rng = np.random.default_rng(7)
    checked = 0
    for _ in range(400):
        n = int(rng.integers(1, 7))
        coeffs = [F(int(v), int(d)) for v, d in zip(rng.integers(-9, 10, n + 1), rng.integers(1, 5, n + 1),
                                                     strict=True)]
        if coeffs[0] == 0:
            continue
        moduli = np.abs(np.roots([float(c) for c in coeffs]))
        if np.any(np.abs(moduli - 1) < 1e-6):
            continue
        counts = disk_counts(coeffs)
        assert (counts.inside, counts.outside) == (int(np.sum(moduli < 1)), int(np.sum(moduli > 1)))
        checked += 1
    assert checked > 300


def test_a_root_at_minus_r_lowers_the_mapped_degree():
    """(z + 1)(z - 1/2) = z^2 + z/2 - 1/2: z = -1 maps to w = infinity, so
    q(w) = (1 + w)^2 + (1 + w)(1 - w)/2 - (1 - w)^2/2 = 3w + 1 (by hand): degree 1, its root
    -1/3 left of the axis (z = 1/2 inside), the lost degree the root on the circle."""
    assert disk_to_half_plane([F(1), F(1, 2), F(-1, 2)]) == [0, 3, 1]
    counts = disk_counts([F(1), F(1, 2), F(-1, 2)])
    assert (counts.inside, counts.on_circle, counts.outside) == (1, 1, 0)


def test_routh_discrete_on_the_command_line():
    runner = CliRunner()
    done = runner.invoke(main, ["routh", "--discrete", "(z - 0.5)*(z^2 + 0.64)", "--json"])
    assert done.exit_code == 0
    data = json.loads(done.stdout)
    assert data["roots"] == {"inside": 3, "on_circle": 0, "outside": 0, "open_right": 0, "imaginary_axis": 0,
                             "open_left": 3} and data["stable"] is True
    assert [row["power"] for row in data["rows"]] == [3, 2, 1, 0]
    done = runner.invoke(main, ["routh", "--discrete", "z^2 - 2.5*z + 1"])  # roots 2 and 1/2
    assert done.exit_code == 0 and "1 outside" in done.stdout and "unstable in discrete time" in done.stdout
    done = runner.invoke(main, ["routh", "--discrete", "z^2 + 1", "--radius", "0"])
    assert done.exit_code == 2 and "--radius" in done.stderr


@pytest.mark.parametrize("text, expected", [("z^2 + z + 1", (0, 2, 0)), ("z^2 - 1.2*z + 1", (0, 2, 0)),
                                            ("z^4 - 1", (0, 4, 0))])
def test_roots_on_the_circle_are_counted_there(text, expected):
    """z^2 + z + 1 (the primitive cube roots of 1), z^2 - 2 (3/5) z + 1 (cos = 3/5) and z^4 - 1:
    every root has modulus 1 (by hand)."""
    from robust.model.forms import as_coefficients

    counts = disk_counts(as_coefficients(text, "z"))
    assert (counts.inside, counts.on_circle, counts.outside) == expected
