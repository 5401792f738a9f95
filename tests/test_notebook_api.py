"""Cases built from Python (robust.make_case) and the results' HTML for a notebook.

References outside the code under test: the file reader (robust.load_case on cases/*.toml)
for the built cases, and, for the verdicts, Routh/Hurwitz for degree 2: s^2 + a*s + b is
stable exactly when a > 0 and b > 0 (common practice, no source).
"""

from __future__ import annotations

import dataclasses
import hashlib
import tomllib
from fractions import Fraction
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

import robust
from robust.analysis.outcomes import Verdict
from robust.model.build import canonical_text
from robust.render.blocks import Document, Paragraph, Section

CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))


def _arguments(data: dict) -> tuple[str, dict, dict]:
    """make_case's arguments for the content of a case file, as tomllib reads it."""
    polynomial = data["polynomial"]
    keywords = {key: data[key] for key in ("summary", "variable", "sample_time", "requirements")
                if key in data}
    keywords.update(polynomial.get("loop", polynomial))
    return data["title"], data["parameters"], keywords


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_python_case_equals_the_file_case(path):
    """Built from a shipped file's content, the case equals the file's (family coefficients
    included), apart from the name it is known by and its checksum."""
    title, parameters, keywords = _arguments(tomllib.loads(path.read_text(encoding="utf-8")))
    built = robust.make_case(title, parameters, **keywords)
    read = robust.load_case(path)
    assert built.family.coefficients == read.family.coefficients
    assert built.family.loop == read.family.loop
    assert (built.path, read.path) == ("<python>", str(path))
    assert dataclasses.replace(built, path=read.path, sha256=read.sha256) == read


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_python_case_gets_the_file_verdict(path):
    """check gives the Python-built case the verdict and witness it gives the file."""
    title, parameters, keywords = _arguments(tomllib.loads(path.read_text(encoding="utf-8")))
    built = robust.check(robust.make_case(title, parameters, **keywords))
    read = robust.check(robust.load_case(path))
    assert built.verdict == read.verdict
    assert (built.witness is None) == (read.witness is None)
    if built.witness is not None:
        assert built.witness.parameters == read.witness.parameters


_ENDS = st.fractions(min_value=-5, max_value=5, max_denominator=12)


@given(a=st.tuples(_ENDS, _ENDS).map(sorted), b=st.tuples(_ENDS, _ENDS).map(sorted))
def test_second_order_verdict_is_routh_hurwitz(a, b):
    """s^2 + a*s + b over a box is stable exactly when a > 0 and b > 0 all over it
    (Routh/Hurwitz for degree 2: common practice, no source)."""
    case = robust.make_case("second order", {"a": {"range": a}, "b": {"range": b}},
                            expression="s^2 + a*s + b")
    expected = Verdict.STABLE if a[0] > 0 and b[0] > 0 else Verdict.UNSTABLE
    assert robust.check(case).verdict == expected


@given(st.fractions(min_value=Fraction(1, 1000), max_value=1000, max_denominator=10**6))
def test_fraction_values_stay_exact(value):
    """A Fraction nominal is kept exactly, and is the same case as its "p/q" text."""
    as_fraction = robust.make_case("t", {"k": {"nominal": value, "tolerance": "1%"}}, expression="s + k")
    # a whole number is written as the number 125 ("125/1" or "125" is other text, and the
    # checksum is taken over what was written)
    written = value.numerator if value.denominator == 1 else f"{value.numerator}/{value.denominator}"
    as_text = robust.make_case("t", {"k": {"nominal": written, "tolerance": "1%"}}, expression="s + k")
    assert as_fraction.parameter("k").nominal == value
    assert as_fraction == as_text


def test_fraction_in_a_formula_is_exact():
    """A Fraction among the coefficients is read as that exact number."""
    case = robust.make_case("t", {"k": {"nominal": 2, "tolerance": "1%"}},
                            coefficients=[1, Fraction(1, 3), "k"])
    at_nominal = case.family.written_at((Fraction(2),))  # up to the constant factor that clears 1/3
    assert tuple(c / at_nominal[0] for c in at_nominal) == (1, Fraction(1, 3), 2)


def test_checksum_is_over_the_canonical_text():
    """sha256 is the SHA-256 of the canonical text: equal for the same content written in
    another key order, different for other content."""
    first = robust.make_case("t", {"a": {"nominal": 3, "tolerance": "10%"},
                                   "b": {"nominal": 2, "tolerance": "5%"}},
                             expression="s^2 + a*s + b", requirements={"margin": 1.2})
    reordered = robust.make_case("t", {"a": {"tolerance": "10%", "nominal": 3},
                                       "b": {"tolerance": "5%", "nominal": 2}},
                                 requirements={"margin": 1.2}, expression="s^2 + a*s + b")
    other = robust.make_case("t", {"a": {"nominal": 3, "tolerance": "10%"},
                                   "b": {"nominal": 2, "tolerance": "6%"}},
                             expression="s^2 + a*s + b", requirements={"margin": 1.2})
    assert first.sha256 == reordered.sha256 != other.sha256
    data = {"title": "t", "variable": "s",
            "parameters": {"a": {"nominal": 3, "tolerance": "10%"}, "b": {"nominal": 2, "tolerance": "5%"}},
            "polynomial": {"expression": "s^2 + a*s + b"}, "requirements": {"margin": 1.2}}
    assert first.sha256 == hashlib.sha256(canonical_text(data).encode()).hexdigest()


_GOOD = {"a": {"nominal": 3, "tolerance": "10%"}}


@pytest.mark.parametrize(("parameters", "keywords", "field"), [
    ({"a": {"nominal": 3, "tolerance": "-5%"}}, {"expression": "s + a"}, "parameters.a.tolerance"),
    ({"a": {"nominal": "3x", "tolerance": "5%"}}, {"expression": "s + a"}, "parameters.a.nominal"),
    ({"a": {"nominal": 3}}, {"expression": "s + a"}, "parameters.a"),
    ({"a": 3}, {"expression": "s + a"}, "parameters.a"),
    ({}, {"expression": "s + 1"}, "parameters"),
    (_GOOD, {"expression": "s + a + q"}, "polynomial.expression"),
    (_GOOD, {"coefficients": [1, "a +"]}, "polynomial.coefficients[1]"),
    (_GOOD, {"expression": "s + a", "plant": "1/s"}, "polynomial"),
    (_GOOD, {}, "polynomial"),
    (_GOOD, {"controller": "a"}, "polynomial.loop"),
    (_GOOD, {"expression": "s + a", "requirements": {"margn": 2}}, "requirements.margn"),
    (_GOOD, {"expression": "s + a", "requirements": {"margin": -1}}, "requirements.margin"),
    (_GOOD, {"expression": "s + a", "sample_time": Fraction(1, 100)}, "sample_time"),
    (_GOOD, {"expression": "s + a", "variable": "a"}, "parameters.a"),
])
def test_errors_name_the_field(parameters, keywords, field):
    """A mistake raises CaseError naming <python> and the field as a case file would."""
    with pytest.raises(robust.CaseError) as caught:
        robust.make_case("t", parameters, **keywords)
    assert (caught.value.file, caught.value.field, caught.value.line) == ("<python>", field, None)
    assert str(caught.value).startswith(f"<python>: {field}: ")


def test_empty_title_is_refused():
    """The title is checked as in a file."""
    with pytest.raises(robust.CaseError) as caught:
        robust.make_case("  ", _GOOD, expression="s + a")
    assert caught.value.field == "title"


_HOSTILE = '<script>alert("x")</script>'


def test_case_html_escapes_what_was_written():
    """A title, summary and note with markup show as text, never as markup (a unit with markup
    is refused before: the unit check reads only unit text)."""
    with pytest.raises(robust.CaseError, match="parameters.a.unit"):
        robust.make_case("t", {"a": {"nominal": 3, "tolerance": "10%", "unit": "<b>V</b>"}},
                         expression="s^2 + a*s + 1")
    case = robust.make_case(_HOSTILE, {"a": {"nominal": 3, "tolerance": "10%", "unit": "1/s",
                                             "note": "<img src=x onerror=alert(1)>"}},
                            expression="s^2 + a*s + 1", summary="<i>summary</i>")
    html = case._repr_html_()
    assert "<script" not in html and "<b>" not in html and "<img" not in html and "<i>" not in html
    assert "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;" in html
    assert "&lt;img src=x onerror=alert(1)&gt;" in html


def test_block_html_escapes_titles():
    """The report's blocks show as an escaped fragment in a notebook."""
    section = Section(_HOSTILE, (Paragraph(("a < b & c",)),))
    for html in (section._repr_html_(), Document(_HOSTILE, (section,))._repr_html_()):
        assert "<script" not in html
        assert "&lt;script&gt;" in html and "a &lt; b &amp; c" in html


def test_check_html_says_the_verdict():
    """The check's HTML holds its verdict's words; an unstable one shows its witness."""
    stable = robust.check(robust.make_case("t", {"a": {"range": [1, 2]}}, expression="s^2 + a*s + 1"))
    unstable = robust.check(robust.make_case("t", {"a": {"range": [-1, 2]}}, expression="s^2 + a*s + 1"))
    assert Verdict.STABLE.headline in stable._repr_html_()
    html = unstable._repr_html_()
    assert Verdict.UNSTABLE.headline in html
    assert 'id="witness"' in html and "Witness" not in stable._repr_html_()


def test_margin_and_rank_html_say_their_results():
    """The margin's HTML holds the requirement's outcome; the rank's names every parameter."""
    case = robust.make_case("t", {"a": {"nominal": 3, "tolerance": "10%"},
                                  "b": {"nominal": 2, "tolerance": "10%"}},
                            expression="s^3 + a*s^2 + b*s + 1", requirements={"margin": 2})
    margins = robust.margin(case)
    html = margins._repr_html_()
    assert "robust margin" in html and margins.outcome.word in html
    ranking = robust.rank(case)
    html = ranking._repr_html_()
    assert "Parameter ranking" in html
    assert all(f'<td class="mono">{p.name}</td>' in html for p in ranking.parameters)
    assert "<img" not in html  # no picture in a notebook fragment


def test_repr_stays_the_dataclass_repr():
    """The HTML display leaves repr alone."""
    case = robust.make_case("t", {"a": {"range": [1, 2]}}, expression="s + a")
    result = robust.check(case)
    assert repr(result).startswith("CheckResult(verdict=<Verdict.STABLE: 'stable'>")
    assert repr(case).startswith("Case(path='<python>', title='t'")
