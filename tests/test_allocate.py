"""Allocation of tolerance classes: the cheapest passing design, checked against exhaustive
search decided by a closed form, on an invented cubic and on a shipped case."""

from __future__ import annotations

import itertools
import json
from fractions import Fraction
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import example, given, settings
from hypothesis import strategies as st

from robust.analysis.allocate import DesignDecision, ToleranceClass, allocate, decide_design, parse_classes
from robust.analysis.outcomes import Outcome
from robust.cli import main
from robust.errors import InputError
from robust.model.case import load_case, parse_case
from robust.render.allocation import render_allocation

CASES = Path(__file__).resolve().parent.parent / "cases"

# An invented interval family: s^3 + a2 s^2 + a1 s + a0, each coefficient its own part.
NOMINAL = {"a2": Fraction(2), "a1": Fraction(3), "a0": Fraction(26, 5)}


def cubic_case(margin: str | None = None, limits: str = "") -> object:
    parts = "".join(f'[parameters.{name}]\nnominal = "{value.numerator}/{value.denominator}"\n'
                    'tolerance = "1%"\n' + (limits if name == "a0" else "") + "\n"
                    for name, value in NOMINAL.items())
    text = (f'title = "allocation cubic"\n{parts}[polynomial]\nexpression = "s^3 + a2*s^2 + a1*s + a0"\n'
            + ("" if margin is None else f"[requirements]\nmargin = {margin}\n"))
    return parse_case(text, "cubic.toml")


def cubic_passes(tolerances: dict[str, Fraction], scale: Fraction = Fraction(1)) -> bool:
    """Closed form, derived: a monic cubic s^3 + a2 s^2 + a1 s + a0 is Hurwitz exactly when
    a2 > 0, a0 > 0 and a2*a1 > a0 (its Routh array's first column 1, a2, (a2 a1 - a0)/a2, a0;
    Routh, "A treatise on the stability of a given state of motion", 1877). With every a_k
    positive over the box, a2*a1 - a0 is least at (a2 low, a1 low, a0 high), so the interval
    family is robustly stable exactly when that corner is Hurwitz, in agreement with
    Kharitonov, "Asymptotic stability of an equilibrium position of a family of systems of
    linear differential equations", 1978. ``scale`` widens every tolerance (a margin)."""
    low = {n: NOMINAL[n] * (1 - scale * tolerances[n]) for n in NOMINAL}
    high_a0 = NOMINAL["a0"] * (1 + scale * tolerances["a0"])
    return min(low.values()) > 0 and low["a2"] * low["a1"] > high_a0


def exhaustive_optimum(classes, scale: Fraction = Fraction(1)) -> Fraction | None:
    """The least cost over every class combination that the closed form passes (stability over
    the box and, with a margin, over the box scaled by it)."""
    best = None
    for combo in itertools.product(classes, repeat=3):
        tolerances = dict(zip(NOMINAL, (c.tolerance for c in combo), strict=True))
        if cubic_passes(tolerances) and cubic_passes(tolerances, scale):
            cost = sum(c.cost for c in combo)
            best = cost if best is None or cost < best else best
    return best


def test_allocation_cost_equals_the_exhaustive_optimum():
    """On the cubic with three classes the chosen design costs the exhaustive optimum (27
    combinations decided by the closed form) and passes the closed form itself."""
    classes = parse_classes("2%:5, 5%:2, 10%:1")
    result = allocate(cubic_case(), classes)
    assert result.cost == exhaustive_optimum(classes) == Fraction(9)
    chosen = {p.name: p.options[i].tolerance for p, i in zip(result.parts, result.chosen, strict=True)}
    assert cubic_passes(chosen)
    assert result.decision.result.verdict == "stable"
    assert len(result.log) < 27  # fewer decisions than the exhaustive search


def test_margin_requirement_is_part_of_passing():
    """With margin = 1.5 a design passes only when its box scaled by 1.5 is stable: the
    optimum moves to the one the closed form gives at that scale."""
    classes = parse_classes("2%:5, 5%:2, 10%:1")
    result = allocate(cubic_case(margin="1.5"), classes)
    assert result.cost == exhaustive_optimum(classes, Fraction(3, 2)) == Fraction(12)
    assert [r.name for r in result.decision.requirements] == ["margin"]


def test_nothing_passes_when_the_tightest_design_fails():
    """When even the tightest classes fail, no design is chosen and one decision suffices:
    the witness of the all-tightest design lies in every design's box."""
    classes = parse_classes("10%:2, 20%:1")
    assert exhaustive_optimum(classes) is None
    result = allocate(cubic_case(), classes)
    assert result.chosen is None and len(result.log) == 1
    assert result.pruned == 7 and not result.exhausted


def test_class_that_reaches_a_physical_limit_is_not_offered():
    """A class whose range reaches a part's physical limit is infeasible for that part alone."""
    case = cubic_case(limits='limits = ["5", "inf"]\n')  # a0 = 5.2: 5 % reaches 4.94 < 5
    result = allocate(case, parse_classes("2%:5, 5%:2, 10%:1"))
    a0 = next(p for p in result.parts if p.name == "a0")
    assert [c.text for c in a0.options] == ["2%"]
    assert [c.text for c, _ in a0.infeasible] == ["5%", "10%"]
    assert "physical limit 5 of a0" in a0.infeasible[0][1]


TOLERANCES = [Fraction(p, 100) for p in (1, 2, 3, 5, 8, 12)]


@settings(max_examples=12)
@given(st.lists(st.sampled_from(TOLERANCES), min_size=2, max_size=3, unique=True),
       st.lists(st.integers(min_value=0, max_value=9), min_size=3, max_size=3),
       st.sampled_from([None, "1.25"]))
# found by hypothesis: the all-tightest design, decided first, is the only one that passes
@example(tolerances=[Fraction(3, 25), Fraction(1, 50)], costs=[1, 0, 0], margin=None)
def test_pruning_and_batches_never_change_the_answer(tolerances, costs, margin):
    """For random class tables (costs in any order, so some classes are dominated) the cost
    found equals the exhaustive optimum of the closed form, with or without pruning and
    whatever the batch size."""
    classes = tuple(ToleranceClass(t, Fraction(c)) for t, c in zip(sorted(tolerances), costs, strict=False))
    case = cubic_case(margin)
    expected = exhaustive_optimum(classes, Fraction(margin) if margin else Fraction(1))
    runs = [allocate(case, classes, batch=1), allocate(case, classes, batch=3),
            allocate(case, classes, prune=False, batch=2)]
    assert {r.cost for r in runs} == {expected}
    assert runs[0].chosen == runs[1].chosen == runs[2].chosen


def test_a_runner_that_maps_in_its_own_way_gives_the_same_result():
    """The ``run`` hook decides batches; a runner that evaluates in reverse order and returns
    the results in order changes nothing in the JSON."""
    def reversed_run(function, items):
        return list(reversed([function(item) for item in reversed(items)]))

    classes = parse_classes("2%:5, 5%:2, 10%:1")
    one = allocate(cubic_case("1.25"), classes)
    two = allocate(cubic_case("1.25"), classes, run=reversed_run)
    assert one.as_dict() == two.as_dict()


def test_undecided_designs_count_as_not_passing():
    """A design left undecided (here, made so by the runner, every design with a part at 5 %)
    does not pass and rules nothing out: the answer is the closed form's optimum among the
    others, and the output says that cheaper designs were undecided."""
    def at_five_percent(box) -> bool:
        return any(box.low[box.names.index(n)] == v * Fraction(95, 100) for n, v in NOMINAL.items())

    def undecided_at_five_percent(function, items):
        return [DesignDecision(Outcome.OPEN, "stability", None) if at_five_percent(task.family.box)
                else decide_design(task) for task in items]

    classes = parse_classes("2%:5, 5%:2, 10%:1")
    result = allocate(cubic_case(), classes, run=undecided_at_five_percent)
    best = min(sum(c.cost for c in combo) for combo in itertools.product(classes, repeat=3)
               if all(c.text != "5%" for c in combo)
               and cubic_passes(dict(zip(NOMINAL, (c.tolerance for c in combo), strict=True))))
    assert result.cost == best == Fraction(11)
    # among them the three designs at cost 9 that pass in truth
    assert result.undecided_cheaper >= 3
    text = render_allocation(cubic_case(), result)
    assert "undecided within the work budget: they count as not passing" in text
    assert f"{result.undecided_cheaper} of them cost less than the chosen design" in text


def test_designs_travel_to_other_processes():
    """A runner using processes gets picklable work: a task and its decision survive a
    pickle round trip and decide the same."""
    import pickle

    seen = []

    def pickling_run(function, items):
        out = [pickle.loads(pickle.dumps(function(pickle.loads(pickle.dumps(item))))) for item in items]
        seen.extend(out)
        return out

    classes = parse_classes("2%:5, 5%:2, 10%:1")
    assert allocate(cubic_case("1.25"), classes, run=pickling_run).as_dict() == \
        allocate(cubic_case("1.25"), classes).as_dict()
    assert seen and all(d.outcome in (Outcome.PASS, Outcome.FAIL) for d in seen)


def run(*args: str):
    """The command in this process (--workers 1), unless the test says where to run."""
    workers = () if "--workers" in args else ("--workers", "1")
    return CliRunner().invoke(main, ["allocate", *args, *workers])


@pytest.mark.parametrize("text", ["", "1%", "1:4", "x%:1", "1%:-2", "1%:4, 1%:3", "150%:1", "1%:4,,2%:1",
                                  "0%:3"])
def test_bad_classes_give_one_line_and_exit_2(text):
    """Malformed --classes text is refused before any analysis with one error line."""
    result = run(str(CASES / "active_filter.toml"), "--classes", text)
    assert result.exit_code == 2, result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("robust: error: --classes: ")
    assert "Traceback" not in result.stderr and result.stdout == ""


def test_unknown_part_suggests_the_nearest_name():
    """An unknown part in --parts is bad input, with the nearest name suggested."""
    result = run(str(CASES / "active_filter.toml"), "--classes", "1%:4, 5%:1", "--parts", "C1,kR")
    assert result.exit_code == 2
    assert result.stderr.strip() == ("robust: error: --parts: unknown part 'kR' (did you mean kr?); expected "
                                     "one of R1, R2, C1, C2, kr, wt")


def test_parse_classes_reads_exact_tolerances_and_costs():
    """Classes are read exactly from their decimal text and sorted tightest first."""
    classes = parse_classes("10%:0.6, 0.5%:12, 2%:2")
    assert [(c.tolerance, c.cost, c.text) for c in classes] == [
        (Fraction(1, 200), Fraction(12), "0.5%"), (Fraction(1, 50), Fraction(2), "2%"),
        (Fraction(1, 10), Fraction(3, 5), "10%")]
    with pytest.raises(InputError):
        parse_classes("5%:1:2")


def _filter_hurwitz(point: dict[str, Fraction]) -> bool:
    """Closed form, derived: cases/active_filter.toml is a cubic a3 s^3 + a2 s^2 + a1 s + a0
    (its coefficients as the file writes them); with a3 > 0 it is Hurwitz exactly when a2, a1,
    a0 > 0 and a2*a1 > a3*a0 (Routh array of the cubic, as above)."""
    r1, r2, c1, c2, kr, wt = (point[n] for n in ("R1", "R2", "C1", "C2", "kr", "wt"))
    a3 = (1 + kr) * r1 * r2 * c1 * c2
    a2 = wt * r1 * r2 * c1 * c2 + (1 + kr) * (r1 * c1 + r1 * c2 + r2 * c2)
    a1 = wt * (r1 * c2 + r2 * c2 - kr * r1 * c1) + 1 + kr
    a0 = wt
    return a3 > 0 and a2 > 0 and a1 > 0 and a0 > 0 and a2 * a1 > a3 * a0


def _corner_fails(case, tolerances: dict[str, Fraction], scale: Fraction) -> bool:
    """Whether some corner of the design's box scaled by ``scale`` about nominal is not Hurwitz."""
    ranges = []
    for p in case.parameters:
        if p.name in tolerances:
            half = tolerances[p.name] * p.nominal
            ranges.append((p.name, p.nominal - scale * half, p.nominal + scale * half))
        else:
            ranges.append((p.name, p.nominal - scale * (p.nominal - p.low),
                           p.nominal + scale * (p.high - p.nominal)))
    return any(not _filter_hurwitz({n: v for (n, _, _), v in zip(ranges, corner, strict=True)})
               for corner in itertools.product(*[(lo, hi) for _, lo, hi in ranges]))


def test_shipped_filter_gets_its_cheapest_passing_classes():
    """On cases/active_filter.toml (margin 1.2 required) the command finds classes for C1, C2
    and kr whose every cheaper combination has a corner of its 1.2-scaled box that the
    cubic's closed form calls unstable, while the chosen box's corners all pass; it decides
    fewer designs than the 64 of an exhaustive search."""
    path = str(CASES / "active_filter.toml")
    result = run(path, "--classes", "1%:4, 2%:2, 5%:1, 10%:0.6", "--parts", "C1,C2,kr", "--json")
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["chosen"] == {"C1": "5%", "C2": "5%", "kr": "10%"} and data["cost"] == "13/5"
    assert data["tightest_cost"] == "12" and data["proof"]["verdict"] == "stable"
    assert data["proof"]["requirements"] == {"margin": "pass"}
    assert data["search"]["decided"] < 64
    case = load_case(path)
    classes = parse_classes("1%:4, 2%:2, 5%:1, 10%:0.6")
    margin = case.requirements.margin
    chosen = {n: Fraction(t.rstrip("%")) / 100 for n, t in data["chosen"].items()}
    assert not _corner_fails(case, chosen, margin)
    for combo in itertools.product(classes, repeat=3):
        if sum(c.cost for c in combo) < Fraction(13, 5):
            tolerances = dict(zip(("C1", "C2", "kr"), (c.tolerance for c in combo), strict=True))
            assert _corner_fails(case, tolerances, margin), combo


def test_text_output_names_the_choice_and_the_proof():
    """The text output gives the chosen classes, the cost against all-tightest and the method."""
    result = run(str(CASES / "active_filter.toml"), "--classes", "1%:4, 2%:2, 5%:1, 10%:0.6",
                 "--parts", "C1,C2,kr")
    assert result.exit_code == 0, result.stderr
    assert "Cheapest passing design: C1 5%, C2 5%, kr 10%" in result.stdout
    assert "cost 2.6 against 12" in result.stdout
    assert "Kharitonov" in result.stdout and "requirement margin" in result.stdout


def test_no_passing_design_exits_1():
    """A class table whose tightest design fails gives exit code 1 and says so."""
    result = run(str(CASES / "active_filter.toml"), "--classes", "30%:1, 40%:0.5", "--parts", "C1,C2")
    assert result.exit_code == 1, result.stderr
    assert "No design passes" in result.stdout


FILTER_CLASSES = ("--classes", "1%:4, 2%:2, 5%:1, 10%:0.6", "--parts", "C1,C2,kr")


def test_two_processes_give_the_same_allocation():
    """Batches decided on two local processes: the same JSON as in this process (the batch,
    not where it runs, fixes the result)."""
    path = str(CASES / "active_filter.toml")
    here = run(path, *FILTER_CLASSES, "--json")
    there = run(path, *FILTER_CLASSES, "--json", "--workers", "2")
    assert here.exit_code == there.exit_code == 0, there.stderr

    def strip(data):
        return {k: v for k, v in data.items() if not k.endswith("seconds")}

    assert strip(json.loads(here.stdout)) == strip(json.loads(there.stdout))


def test_the_chosen_design_is_written_as_a_case_whose_certificate_verifies(tmp_path):
    """--write-case writes the case with the allocated tolerances (every other line as
    written); --certificate proves it, and robust verify confirms the proof against that file.
    The written ranges are nominal +-5 % and +-10 % exactly (the classes' definition)."""
    path = CASES / "active_filter.toml"
    out, proof = tmp_path / "chosen.toml", tmp_path / "chosen.json"
    result = run(str(path), *FILTER_CLASSES, "--write-case", str(out), "--certificate", str(proof))
    assert result.exit_code == 0, result.stderr
    written = load_case(out)
    original = load_case(path)
    for name, tolerance in (("C1", Fraction(5, 100)), ("C2", Fraction(5, 100)), ("kr", Fraction(10, 100))):
        part = written.parameter(name)
        nominal = original.parameter(name).nominal
        assert (part.low, part.high) == (nominal * (1 - tolerance), nominal * (1 + tolerance))
    for name in ("R1", "R2", "wt"):  # untouched
        assert written.parameter(name) == original.parameter(name)
    pairs = zip(path.read_text().splitlines(), out.read_text().splitlines(), strict=True)
    changed = [line for a, line in pairs if a != line]
    assert len(changed) == 3 and all(line.endswith("# chosen by robust allocate") for line in changed)
    check = CliRunner().invoke(main, ["verify", str(proof), "--case", str(out)])
    assert check.exit_code == 0 and check.stdout.startswith("VALID"), check.stdout


def test_a_part_written_as_a_range_gets_its_nominal_and_tolerance(tmp_path):
    """A range without a nominal is replaced by the nominal it implied (its middle) and the
    class: the written file reads back as that exact range."""
    text = ('title = "t"\n[parameters.a]\nrange = ["1.8", "2.2"]\n[parameters.b]\nnominal = "3"\n'
            'tolerance = "1%"\n[polynomial]\nexpression = "s^2 + a*s + b"\n')
    case_path = tmp_path / "range.toml"
    case_path.write_text(text)
    out = tmp_path / "out.toml"
    result = run(str(case_path), "--classes", "5%:1, 20%:0.5", "--parts", "a,b", "--write-case", str(out))
    assert result.exit_code == 0, result.stderr
    written = load_case(out)
    assert written.parameter("a").nominal == 2 and written.parameter("a").tolerance == "20%"
    assert (written.parameter("a").low, written.parameter("a").high) == (Fraction(8, 5), Fraction(12, 5))


def test_certificate_without_the_written_case_is_refused(tmp_path):
    proof = str(tmp_path / "p.json")
    result = run(str(CASES / "active_filter.toml"), *FILTER_CLASSES, "--certificate", proof)
    assert result.exit_code == 2
    assert result.stderr.strip() == ("robust: error: --certificate: the proof of the chosen design needs the "
                                     "case file it proves; expected --write-case FILE as well")


def test_the_written_case_never_overwrites_a_file(tmp_path):
    existing = tmp_path / "exists.toml"
    existing.write_text("keep")
    result = run(str(CASES / "active_filter.toml"), *FILTER_CLASSES, "--write-case", str(existing))
    assert result.exit_code == 2 and existing.read_text() == "keep"
    assert "robust never overwrites it" in result.stderr


def test_a_failing_tightest_design_ends_the_search_at_once():
    """Ten parts, four classes (about a million designs) and an unstable polynomial (s^2 with
    a negative s coefficient fails Routh at every point: common practice, no source): the
    tightest design's witness rules out every design, so one decision ends the search."""
    parts = "".join(f'[parameters.p{i}]\nnominal = "1"\ntolerance = "1%"\n' for i in range(10))
    total = " + ".join(f"p{i}" for i in range(10))
    case = parse_case(f'title = "t"\n{parts}[polynomial]\nexpression = "s^2 - ({total})*s + 1"\n')
    result = allocate(case, parse_classes("1%:4, 2%:2, 5%:1, 10%:0.5"))
    assert result.chosen is None and len(result.log) == 1
    assert result.pruned == 4**10 - 1 and not result.exhausted


def test_the_search_stops_after_passing_over_its_limit(monkeypatch):
    """Passing over ruled-out designs is work too: past the limit the search stops and says so."""
    import robust.analysis.allocate as module

    monkeypatch.setattr(module, "MAX_PASSED_OVER", 5)
    parts = "".join(f'[parameters.p{i}]\nnominal = "1"\ntolerance = "1%"\n' for i in range(4))
    total = " + ".join(f"p{i}" for i in range(4))
    # stable exactly while the sum of the parts stays below 4.3 (Routh, degree 2: both
    # coefficients positive): the cheap, loose designs fail, and their witnesses rule out
    # many others, which the search passes over until its limit
    case = parse_case(f'title = "t"\n{parts}[polynomial]\nexpression = "s^2 + (4.3 - ({total}))*s + 1"\n')
    result = allocate(case, parse_classes("1%:4, 2%:2, 5%:1, 10%:0.5, 20%:0.1"))
    assert result.chosen is None and result.passed_over_limit and result.exhausted and result.pruned == 5
    assert "passed over 5 designs" in render_allocation(case, result)


@pytest.mark.parametrize("address", ["garbage", "tcp://[::1", "tcp://host", "tcp://host:99999", "host:port"])
def test_a_bad_cluster_address_is_one_line_before_any_work(address):
    result = run(str(CASES / "active_filter.toml"), *FILTER_CLASSES, "--cluster", address)
    assert result.exit_code == 2 and result.stdout == ""
    assert result.stderr.strip().startswith("robust: error: --cluster: not a scheduler address")


def test_a_case_that_cannot_be_rewritten_is_refused_before_the_search(tmp_path):
    """A range over several lines is not rewritten by guesswork: one line, exit 2, no analysis."""
    text = ('title = "t"\n[parameters.a]\nrange = [\n  "1.8",\n  "2.2",\n]\n[parameters.b]\nnominal = "3"\n'
            'tolerance = "1%"\n[polynomial]\nexpression = "s^2 + a*s + b"\n')
    path = tmp_path / "multi.toml"
    path.write_text(text)
    out = str(tmp_path / "o.toml")
    result = run(str(path), "--classes", "5%:1, 20%:0.5", "--parts", "a,b", "--write-case", out)
    assert result.exit_code == 2 and result.stdout == ""
    assert "parameters.a.range spans several lines" in result.stderr
    assert not (tmp_path / "o.toml").exists()


def test_quoted_keys_and_a_byte_order_mark_are_rewritten(tmp_path):
    """A file saved with a UTF-8 byte order mark and a quoted key ("tolerance" = ...) reads as
    any case (TOML 1.0 allows quoted keys) and is rewritten as such."""
    text = ('title = "t"\n[parameters.a]\nnominal = "2"\n"tolerance" = "1%"\n[parameters.b]\nnominal = "3"\n'
            'tolerance = "1%"\n[polynomial]\nexpression = "s^2 + a*s + b"\n')
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + text.encode())
    out = tmp_path / "out.toml"
    result = run(str(path), "--classes", "5%:1, 20%:0.5", "--parts", "a,b", "--write-case", str(out))
    assert result.exit_code == 0, result.stderr
    written = load_case(out)
    assert written.parameter("a").tolerance == "20%" and written.parameter("b").tolerance == "20%"


def test_one_file_for_both_outputs_is_refused(tmp_path):
    same = str(tmp_path / "x.toml")
    result = run(str(CASES / "active_filter.toml"), *FILTER_CLASSES, "--write-case", same,
                 "--certificate", same)
    assert result.exit_code == 2 and "--certificate: the same file as --write-case" in result.stderr
