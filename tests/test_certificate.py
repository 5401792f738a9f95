"""Tests for robust.analysis.certificate (writing a proof) and robust.verify (checking it alone).

Outside references: the Routh checks the verifier makes on pieces (their lowest corners and
their Kharitonov polynomials) are cross-checked with sympy's exact root counting (Meurer et
al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017; tests/reference.py);
certified-stable families are checked against the degree-3 Hurwitz condition on a dense grid
(Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV, from memory); mechanical chains
are stable for every positive part by the energy argument (Meirovitch, "Fundamentals of
Vibrations", 2001, from memory).
"""

from __future__ import annotations

import copy
import itertools
import json
from fractions import Fraction
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import isolated_counts
from strategies import case_toml

from robust.analysis.certificate import build_certificate, certify
from robust.analysis.verdict import decide
from robust.exact.interval import IntervalPolynomial
from robust.model.case import load_case
from robust.verify import verify_certificate, verify_file

CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))
CHAIN = "(m1*s^2 + (c1 + c2)*s + k1 + k2)*(m2*s^2 + c2*s + k2) - (c2*s + k2)^2"


def _write(tmp_path: Path, text: str, name: str = "case.toml"):
    path = tmp_path / name
    path.write_text(text)
    return load_case(path)


def _wide_chain(tmp_path: Path):
    params = {n: {"nominal": v, "tolerance": "10%"}
              for n, v in (("k1", "8000"), ("k2", "2000"), ("c1", "0.05"), ("c2", "0.02"))}
    params = {"m1": {"range": ["0.02", "4"]}, "m2": {"range": ["0.02", "1"]}, **params}
    return _write(tmp_path, case_toml(params, expression=CHAIN, title="wide chain"))


def _roundtrip(data: dict) -> dict:
    return json.loads(json.dumps(data))


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_every_shipped_case_gets_a_certificate_the_checker_confirms(path):
    case = load_case(path)
    result, data = certify(case)
    verification = verify_certificate(_roundtrip(data), case)
    assert verification.valid, verification.failed
    assert verification.verdict == result.verdict.value
    assert verification.pieces == data["summary"]["pieces"]


def test_a_partition_of_bernstein_pieces_is_confirmed_and_its_corners_agree_with_sympy(tmp_path):
    case = _wide_chain(tmp_path)
    result, data = certify(case)
    assert result.method == "subdivision" and data["summary"]["pieces"] >= 2
    assert set(data["summary"]["by_method"]) == {"bernstein"}
    assert verify_certificate(_roundtrip(data), case).valid
    # the checker's Routh test at the pieces' lowest corners, against sympy's root counts
    for low in itertools.islice(_piece_corners(data, case), 4):
        assert isolated_counts(case.family.coefficients_at(low)) == (0, 0, case.family.degree)


def _piece_corners(data: dict, case):
    """The lowest corner of every piece of the certificate."""
    from robust.analysis.certificate import leaves

    return (tuple(low[n] for n in case.names) for _, low, _ in leaves(data))


def test_kharitonov_pieces_are_confirmed_and_agree_with_sympy(tmp_path):
    """The overbound's subdivision, written as a certificate: every piece's Kharitonov
    polynomials are Hurwitz by sympy too."""
    case = _write(tmp_path, case_toml({"T": {"range": ["0.5", "2"]}, "K": {"range": ["1", "3"]}},
                                      expression="T*s^3 + (1 + T)*s^2 + (1 + K*T/4)*s + K"))
    result = decide(case.family, sub_box_test="overbound", use_edges=False, search=False)
    assert result.verdict == "stable" and result.method == "subdivision"
    data = build_certificate(case, result)
    pieces = data["summary"]["pieces"]
    assert data["summary"]["by_method"] == {"kharitonov": pieces} and pieces > 1
    assert verify_certificate(_roundtrip(data), case).valid
    from robust.exact.polynomials import as_intervals

    for low in itertools.islice(_piece_corners(data, case), 4):
        assert isolated_counts(case.family.coefficients_at(low)) == (0, 0, 3)
    # the whole-box overbound is not Hurwitz (a Kharitonov polynomial has right-half-plane roots)
    bounds = [c.bound(as_intervals(case.family.box.intervals))[0] for c in case.family.coefficients]
    family = IntervalPolynomial(tuple(Fraction(int(b[0].numerator), int(b[0].denominator)) for b in bounds),
                                tuple(Fraction(int(b[1].numerator), int(b[1].denominator)) for b in bounds))
    counts = [isolated_counts(family.vertex(label)) for label in ("K1", "K2", "K3", "K4")]
    assert any(right > 0 for right, _, _ in counts)


def test_affine_families_decided_by_edges_are_certified_by_a_partition(tmp_path):
    params = {"u": {"range": ["0", "1"]}, "v": {"range": ["0", "1"]}}
    case = _write(tmp_path, case_toml(params, ["1 + u", "3 + 3*u - v", "3 + 9*u", "1 + 7*u"]))
    edges = decide(case.family, sub_box_test="overbound", search=False)
    assert edges.method == "edges" and edges.proof is None
    _result, data = certify(case, result=edges)
    assert data["verdict"] == "stable" and verify_certificate(_roundtrip(data), case).valid


def test_an_undecided_result_certifies_only_its_proven_part(tmp_path):
    case = _wide_chain(tmp_path)
    result = decide(case.family, max_boxes=3, search=False)
    assert result.verdict == "undecided"
    data = build_certificate(case, result)
    verification = verify_certificate(_roundtrip(data), case)
    assert verification.valid and data["summary"]["open"] >= 1
    assert "open piece" in verification.statement
    data["verdict"] = "stable"  # claiming more than was proven
    claimed = verify_certificate(data, case)
    assert not claimed.valid and "open piece" in claimed.failed["reason"]


# -- tampering ---------------------------------------------------------------------------------


@pytest.fixture
def certified(tmp_path):
    case = _wide_chain(tmp_path)
    _, data = certify(case)
    return case, _roundtrip(data)


def test_altering_one_exact_number_is_invalid(certified):
    case, data = certified
    bad = copy.deepcopy(data)
    leaf = next(k for k, node in enumerate(bad["tree"]) if node.get("piece") == "bernstein")
    value = Fraction(bad["tree"][leaf]["least"][2])
    bad["tree"][leaf]["least"][2] = str(value + Fraction(1, 10**9))
    result = verify_certificate(bad, case)
    assert not result.valid and result.failed["piece"] == 1 and "least" in result.failed["reason"]
    bad = copy.deepcopy(data)
    bad["box"]["m1"][1] = "5"  # a wider box than the case's
    assert not verify_certificate(bad, case).valid


def test_dropping_a_piece_is_invalid(certified):
    case, data = certified
    bad = copy.deepcopy(data)
    del bad["tree"][-1]
    result = verify_certificate(bad, case)
    assert not result.valid and "not covered" in result.failed["reason"]


def test_shifting_a_piece_is_invalid(certified):
    """Splitting along another parameter moves every later piece's bounds."""
    case, data = certified
    bad = copy.deepcopy(data)
    split = next(k for k, node in enumerate(bad["tree"]) if "split" in node)
    bad["tree"][split]["split"] = "k1" if bad["tree"][split]["split"] != "k1" else "k2"
    result = verify_certificate(bad, case)
    assert not result.valid and result.failed["piece"] is not None and result.failed["box"] is not None


def test_a_changed_case_file_is_a_case_mismatch(tmp_path):
    case = _wide_chain(tmp_path)
    _, data = certify(case)
    path = tmp_path / "cert.json"
    path.write_text(json.dumps(data))
    assert verify_file(path, tmp_path / "case.toml").valid
    (tmp_path / "case.toml").write_text((tmp_path / "case.toml").read_text().replace('"10%"', '"12%"'))
    result = verify_file(path, tmp_path / "case.toml")
    assert not result.valid and "SHA-256" in result.failed["reason"]


def test_a_witness_moved_to_a_stable_point_is_invalid(tmp_path):
    params = {"k": {"range": ["0.5", "2"], "nominal": "1.5"}}
    case = _write(tmp_path, case_toml(params, ["k - 1", "2", "3", "1"]))
    _, data = certify(case)
    assert data["verdict"] == "unstable" and verify_certificate(_roundtrip(data), case).valid
    data["witness"] = {"k": "3/2"}  # 0.5 s^3 + 2 s^2 + 3 s + 1: 2*3 > 0.5*1, Hurwitz (Gantmacher)
    assert not verify_certificate(data, case).valid


# -- certified families agree with the closed form ------------------------------------------


@settings(max_examples=25, deadline=None)
@given(st.integers(-2, 2), st.integers(-2, 2), st.integers(-2, 2), st.sampled_from(["0.2", "0.4"]))
def test_certified_cubic_families_hold_on_a_dense_grid(u, w, q, r):
    """s^3 + (2 + u x) s^2 + (2 + y) s + (3 + q x + y + w x y) over [-r, r]^2: a VALID
    certificate of stability means the degree-3 condition holds on a dense grid."""
    import tempfile

    params = {n: {"nominal": "0", "range": [f"-{r}", r]} for n in ("x", "y")}
    text = case_toml(params, ["1", f"2 + {u}*x", "2 + y", f"3 + {q}*x + y + {w}*x*y"])
    with tempfile.TemporaryDirectory() as folder:
        case = _write(Path(folder), text)
        result, data = certify(case, max_boxes=2000)
        verification = verify_certificate(_roundtrip(data), case)
    assert verification.valid or result.verdict.value == "undecided"
    if data["verdict"] == "stable":
        (x0, x1), (y0, y1) = case.family.box.intervals
        for i, j in itertools.product(range(13), repeat=2):
            a3, a2, a1, a0 = case.family.coefficients_at((x0 + (x1 - x0) * Fraction(i, 12),
                                                          y0 + (y1 - y0) * Fraction(j, 12)))
            assert a2 > 0 and a1 > 0 and a0 > 0 and a2 * a1 > a3 * a0


# -- the command line ----------------------------------------------------------------------------


def test_check_writes_a_certificate_that_verify_confirms_and_tampering_fails(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from robust.cli import main

    monkeypatch.chdir(tmp_path)
    case = _wide_chain(tmp_path)
    runner = CliRunner()
    done = runner.invoke(main, ["check", case.path, "--certificate", "proof.json"])
    assert done.exit_code == 0, done.output
    done = runner.invoke(main, ["verify", "proof.json"])
    assert done.exit_code == 0 and done.stdout.startswith("VALID: stable")
    data = json.loads((tmp_path / "proof.json").read_text())
    assert json.loads(runner.invoke(main, ["verify", "proof.json", "--json"]).stdout) == {
        "valid": True, "pieces": data["summary"]["pieces"], "failed": None, "verdict": "stable",
        "statement": "every parameter point of the box gives a Hurwitz polynomial"}
    del data["tree"][-1]
    (tmp_path / "dropped.json").write_text(json.dumps(data))
    done = runner.invoke(main, ["verify", "dropped.json", "--case", case.path])
    assert done.exit_code == 1 and done.stdout.startswith("INVALID")
    # an existing file is never overwritten, and that is known before any analysis
    done = runner.invoke(main, ["check", case.path, "--certificate", "proof.json"])
    assert done.exit_code == 2 and "never overwrites" in done.stderr and done.stdout == ""
    done = runner.invoke(main, ["verify", case.path])
    assert done.exit_code == 2 and "not JSON" in done.stderr and len(done.stderr.splitlines()) == 1


def test_margin_certifies_the_proven_end_of_its_bracket(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from robust.cli import main

    monkeypatch.chdir(tmp_path)
    case = _write(tmp_path, (Path(__file__).resolve().parent.parent / "cases" / "servo_pid.toml").read_text())
    runner = CliRunner()
    done = runner.invoke(main, ["margin", case.path, "--no-decay", "--certificate", "m.json", "--json"])
    assert done.exit_code == 0, done.output
    data = json.loads((tmp_path / "m.json").read_text())
    lower = json.loads(done.stdout)
    assert Fraction(data["scale"]) == Fraction(lower["margin_detail"]["lower_exact"])
    result = verify_file(tmp_path / "m.json")
    assert result.valid and "scaled by" in result.statement


def test_the_report_carries_the_certificate_and_the_command_that_checks_it(tmp_path):
    """The demo servo: its whole-box overbound fails (K4 is not Hurwitz) while the proof is
    Bernstein's, so the failing table is shown apart, as a record, after the proof."""
    from robust.analysis.certificate import digest
    from robust.analysis.signoff import analyse
    from robust.render.writer import write_report

    case = load_case(Path(__file__).resolve().parent.parent / "cases" / "servo_pid.toml")
    analysis = analyse(case, yield_draws=200, search_tests=12)
    files = write_report(analysis, tmp_path / "report")
    certificate = tmp_path / "report" / "certificate.json"
    assert verify_file(certificate, case.path).valid
    markdown = files.markdown.read_text()
    assert digest(analysis.certificate) in markdown and "robust verify" in markdown
    proof_at = markdown.index("The proof, written as a certificate")
    record_at = markdown.index("For the record: the whole-box overbound (not the proof)")
    assert proof_at < record_at < markdown.index("NOT Hurwitz")
    assert json.loads(files.json.read_text())["proof"]["sha256"] == digest(analysis.certificate)


def test_the_pieces_of_a_certificate_tile_its_box(certified):
    """leaves(): the pieces' volumes add up to the box's, exactly (a split halves one interval),
    and every piece lies inside the box."""
    from robust.analysis.certificate import leaves

    _, data = certified
    box = {n: (Fraction(a), Fraction(b)) for n, (a, b) in data["box"].items()}

    def volume(low, high):
        out = Fraction(1)
        for n, (a, b) in box.items():
            if b > a:
                out *= high[n] - low[n]
        return out

    pieces = leaves(data)
    assert len(pieces) == data["summary"]["pieces"]
    assert sum(volume(low, high) for _, low, high in pieces) == volume(
        {n: a for n, (a, _) in box.items()}, {n: b for n, (_, b) in box.items()})
    assert all(box[n][0] <= low[n] <= high[n] <= box[n][1] for _, low, high in pieces for n in box)


def test_an_undecided_result_without_a_stable_point_certifies_nothing(tmp_path):
    """An undecided result with no partition (as when no point of the box is known stable)
    becomes one open piece that claims nothing; a proven piece added to it is refused."""
    import dataclasses

    from robust.analysis.outcomes import Verdict

    case = _wide_chain(tmp_path)
    result = dataclasses.replace(decide(case.family, max_boxes=3, search=False),
                                 verdict=Verdict.UNDECIDED, proof=None)
    data = build_certificate(case, result)
    assert data["stable_point"] is None and data["tree"] == [{"piece": "open"}]
    verification = verify_certificate(_roundtrip(data), case)
    assert verification.valid and verification.pieces == 1
    data["tree"] = [{"piece": "kharitonov"}]
    assert not verify_certificate(data, case).valid


def test_fixed_parameters_are_checked_together_and_inside_the_box(tmp_path):
    """A forged "stable" certificate for 2 s + (-1/2 + (3 - x)(2 - y)), x, y in [1, 2], which is
    unstable at x = y = 2 (a_0 = -1/2 < 0, by hand): it fixes x = 4 and y = 3 in a_0, where
    each slope alone has its sign over its own coordinate's span but the two together do not
    bound a_0 from below. The checker refuses it (the fixed values lie outside the box, and
    every slope is checked over the hull of the piece and all the fixed values)."""
    params = {n: {"nominal": "3/2", "tolerance": "1/2"} for n in ("x", "y")}
    case = _write(tmp_path, case_toml(params, ["1", "-1/2 + (3 - x)*(2 - y)"]))
    result, data = certify(case)
    assert result.verdict == "unstable"
    forged = dict(data, verdict="stable", witness=None, stable_point={"x": "1", "y": "1"},
                  conditions=[{"name": "leading coefficient", "fixed": {}},
                              {"name": "constant coefficient", "fixed": {"x": "4", "y": "3"}}],
                  tree=[{"piece": "bernstein", "least": ["1", "1/2"]}])
    assert not verify_certificate(forged, case).valid
    # the same claim with the fixed values at the box's far corner is refused by the slopes
    forged["conditions"][1]["fixed"] = {"x": "2", "y": "2"}
    assert not verify_certificate(forged, case).valid


def test_a_malformed_box_is_invalid_not_a_crash(certified):
    case, data = certified
    bad = copy.deepcopy(data)
    bad["box"]["m1"] = "0"
    result = verify_certificate(bad, case)
    assert not result.valid and "[low, high]" in result.failed["reason"]
    bad = copy.deepcopy(data)
    bad["box"]["m1"][0] = "0x10"
    assert not verify_certificate(bad, case).valid


def test_a_negative_scale_is_refused_as_such(certified):
    """A scale of -1 with the box mirrored about nominal is refused for its sign, not by chance
    (every box(rho) in a certificate has rho >= 0: a scale of every half-width)."""
    case, data = certified
    bad = copy.deepcopy(data)
    bad["scale"] = "-1"
    family = case.family
    for name, nominal, low, high in zip(family.names, family.nominal, family.box.low, family.box.high,
                                        strict=True):
        bad["box"][name] = [str(nominal + (nominal - low)), str(nominal - (high - nominal))]
    result = verify_certificate(bad, case)
    assert not result.valid and "negative" in result.failed["reason"]


def test_a_bernstein_piece_above_the_degree_limit_is_refused_before_expanding(tmp_path):
    """A forged Bernstein piece for a degree-16 family would make the checker expand a generic
    Hurwitz determinant of 441,145 terms; it is refused at once (the engine writes none)."""
    from math import comb

    coefficients = [f"{comb(16, k)} + u/1000" for k in range(17)]
    case = _write(tmp_path, case_toml({"u": {"nominal": "1", "tolerance": "0.5"}}, coefficients))
    _, data = certify(case, max_boxes=20)
    forged = dict(data, verdict="stable", witness=None, stable_point={"u": "1"},
                  conditions=[{"name": "c", "fixed": {}}] * 3,
                  tree=[{"piece": "bernstein", "least": ["1", "1", "1"]}])
    result = verify_certificate(forged, case)
    assert not result.valid and "degree 16" in result.failed["reason"]
