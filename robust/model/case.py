"""Case files: the loop, its toleranced parameters and the requirements (TOML).

See ``docs/case-files.md`` for the format. Every problem is reported as one
:class:`~robust.errors.CaseError` naming the file, the line when it can be found, the field,
what is wrong and what was expected. Numbers are exact rationals from their decimal text.
"""

from __future__ import annotations

import dataclasses
import hashlib
import os
import re
import stat
import tomllib
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

from ..errors import CaseError, FormulaError, InputError, did_you_mean
from ..exact import sparse
from ..exact.numbers import approx_text, parse_number, to_fraction
from .display import HtmlDisplay
from .expr import MAX_DEGREE, MAX_TOTAL_LENGTH, ParsedFormula, new_work, parse_formula
from .family import Box, UncertainPolynomial, build_family, discrete_family, limit_reached
from .forms import closed_loop, coefficients_polynomial, expression_polynomial, loop_parts
from .diagram import Diagram, diagram_polynomial
from .matrices import FORMS as MATRIX_FORMS
from .matrices import matrix_polynomial

__all__ = ["Case", "Parameter", "Requirements", "case_from_data", "load_case", "parse_case"]

_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
FORMS = ("expression", "coefficients", "loop", *MATRIX_FORMS, "diagram")
_MAX_PARAMETERS = 64
#: Largest case file read, in bytes (checked before reading).
MAX_FILE = 1_000_000
DISTRIBUTIONS = ("uniform", "normal")


@dataclass(frozen=True, slots=True)
class Parameter:
    """A toleranced part: nominal value and the closed range it may take."""

    name: str
    nominal: Fraction
    low: Fraction
    high: Fraction
    unit: str = ""
    note: str = ""
    distribution: str = "uniform"
    tolerance: str = ""  # as written, for reports ("1%", "+-0.5", "range")
    #: Physical limits (exclusive): the part can approach them but never reach them; None is
    #: no limit on that side. Default: (0, inf) for a positive range, (-inf, 0) for a
    #: negative one, none for a range that includes 0.
    limits: tuple[Fraction | None, Fraction | None] = (None, None)
    limits_text: str = ""  # "given" or "default", for reports

    @property
    def relative_tolerance(self) -> Fraction | None:
        """Largest relative deviation from nominal (None when the nominal is 0)."""
        if self.nominal == 0:
            return None
        return max(self.nominal - self.low, self.high - self.nominal) / abs(self.nominal)


@dataclass(frozen=True, slots=True)
class Requirements:
    """What the sign-off asks for; None where not asked."""

    margin: Fraction | None = None
    decay_rate: Fraction | None = None
    radius: Fraction | None = None
    gain_margin_db: Fraction | None = None
    phase_margin_deg: Fraction | None = None
    damping_ratio: Fraction | None = None

    def asked(self) -> tuple[tuple[str, Fraction], ...]:
        """(name, value) of every requirement set, in the order of :data:`REQUIREMENTS`."""
        return tuple((name, getattr(self, name)) for name in REQUIREMENTS if getattr(self, name) is not None)


#: Every requirement a case may set, in the order they are decided and shown.
REQUIREMENTS = ("margin", "decay_rate", "radius", "gain_margin_db", "phase_margin_deg", "damping_ratio")


@dataclass(frozen=True, slots=True)
class Case(HtmlDisplay):
    """A loaded case: what the user wrote, and the family it defines."""

    path: str
    title: str
    summary: str
    variable: str
    parameters: tuple[Parameter, ...]
    form: str  # "expression" | "coefficients" | "loop" | "state_space" | "mechanical" | "diagram"
    formulas: tuple[tuple[str, str], ...]  # (field, text) as written
    family: UncertainPolynomial
    requirements: Requirements
    sha256: str
    #: Remarks on how the file was read, said once on stderr by the command line (e.g. what a
    #: large plain-number tolerance means); never part of a result.
    notes: tuple[str, ...] = ()
    #: The sample time in seconds of a discrete-time case (variable = "z"), when given.
    sample_time: Fraction | None = None
    #: The block diagram the polynomial was formed from (form "diagram"), for trace and report.
    diagram: Diagram | None = None

    @property
    def discrete(self) -> bool:
        """Discrete time: stable means every root strictly inside the unit circle."""
        return self.family.discrete

    @property
    def names(self) -> tuple[str, ...]:
        """Parameter names in family order."""
        return self.family.names

    @property
    def written(self) -> str:
        """The polynomial as written, one ``field = text`` line per formula (an equation of
        a diagram, whose field is empty, on its own line)."""
        return "\n".join(f"{field} = {text}" if field else f"  {text}" for field, text in self.formulas)

    def parameter(self, name: str) -> Parameter:
        """The parameter called ``name``."""
        return next(p for p in self.parameters if p.name == name)


class _Reader:
    """Keeps the file name and text so every error can say where it is."""

    def __init__(self, path: str, text: str):
        self.path = path
        self.lines = text.splitlines()
        self.notes: list[str] = []

    def line_of(self, section: str, key: str | None = None) -> int | None:
        """Best-effort line number of ``[section]`` or of ``key`` inside it."""
        header = re.compile(r"\s*\[\s*" + re.escape(section).replace(r"\.", r"\s*\.\s*") + r"\s*\]")
        start = None
        for i, line in enumerate(self.lines):
            if header.match(line):
                start = i
                break
        if start is None:
            if key is None:
                return None
            if section and self.line_of(f"{section}.{key}") is not None:  # [polynomial.loop] alone
                return self.line_of(f"{section}.{key}")
            # a top-level key, a dotted key at top level, or a table of that name
            pattern = re.compile(r"\s*(?:" + re.escape(key) + r"\s*=|\[\s*" + re.escape(key) + r"\s*[\].])")
            for i, line in enumerate(self.lines):
                if pattern.match(line):
                    return i + 1
            return None
        if key is None:
            return start + 1
        pattern = re.compile(r"\s*" + re.escape(key) + r"\s*=")
        for i in range(start + 1, len(self.lines)):
            if self.lines[i].lstrip().startswith("["):
                break
            if pattern.match(self.lines[i]):
                return i + 1
        return start + 1

    def error(self, section: str, key: str | None, problem: str, expected: str = "",
              value: object = None, index: int | tuple[int, ...] | None = None) -> CaseError:
        """The error of ``section.key`` (``section.key[i]`` for an item of a list,
        ``section.key[i][j]`` for an entry of a matrix)."""
        field = section + ("." + key if key else "") if section else (key or "")
        field += "".join(f"[{i}]" for i in ((index,) if isinstance(index, int) else index or ()))
        return CaseError(self.path, field, problem, expected, value,
                         self.line_of(section, key) if section or key else None)


def _number(reader: _Reader, section: str, key: str, value: object) -> Fraction:
    try:
        return to_fraction(value, key)
    except InputError as error:
        raise reader.error(section, key, error.problem, error.expected or "a number", value) from None


def _tolerance(reader: _Reader, section: str, value: object,
               nominal: Fraction) -> tuple[Fraction, Fraction, str]:
    """Absolute deviation (down, up) and the text as written."""
    expected = '"5%", "+-5%" or an absolute number such as 0.1 or "2m"'
    if isinstance(value, bool) or not isinstance(value, (str, int, float)):
        raise reader.error(section, "tolerance", "not a tolerance", expected, value)
    text = value.strip() if isinstance(value, str) else repr(value)
    body = text
    for prefix in ("+-", "±", "+/-"):
        if body.startswith(prefix):
            body = body[len(prefix):].strip()
            break
    else:
        if body.startswith("-"):
            raise reader.error(section, "tolerance", "a tolerance cannot be negative", expected, value)
    if body.endswith("%"):
        try:
            pct = parse_number(body[:-1], "tolerance", suffixes=False)
        except InputError:
            raise reader.error(section, "tolerance", "malformed percentage", expected, value) from None
        if pct < 0:
            raise reader.error(section, "tolerance", "a tolerance cannot be negative", expected, value)
        if pct >= 100:
            raise reader.error(section, "tolerance", "a tolerance of 100 % or more reaches zero",
                               "a percentage below 100", value)
        dev = abs(nominal) * pct / 100
    else:
        try:
            dev = parse_number(body, "tolerance") if isinstance(value, str) else to_fraction(value)
        except InputError:
            raise reader.error(section, "tolerance", "malformed tolerance", expected, value) from None
        if dev < 0:
            raise reader.error(section, "tolerance", "a tolerance cannot be negative", expected, value)
        # a bare number ("5", 5) may be a percentage without its sign; "20m" is absolute on purpose
        bare = not isinstance(value, str) or body[-1:].isdigit()
        if bare and nominal != 0 and dev > abs(nominal):  # the range crosses zero: the sign flips
            # "tolerance = 5" on a 470 nF part: almost surely "5%" was meant, not +-5 F
            share = approx_text(100 * dev / abs(nominal), 3)
            raise reader.error(
                section, "tolerance",
                f"a plain number is an absolute tolerance: +-{approx_text(dev)} around the nominal "
                f"{approx_text(nominal)} is {share} % and crosses zero",
                f'a percentage written as text, such as tolerance = "{body}%", a smaller '
                "absolute tolerance, or range = [low, high] for a range through zero", value)
        if bare and nominal != 0 and dev >= abs(nominal) / 5:
            line = reader.line_of(section, "tolerance")
            where = f"{reader.path}:{line}" if line else reader.path
            reader.notes.append(
                f"{where}: {section}.tolerance = {text} is absolute: +-{approx_text(dev)} around "
                f"{approx_text(nominal)}, {approx_text(100 * dev / abs(nominal), 3)} % of the nominal; "
                f'a percentage is written as text, e.g. tolerance = "{body}%"')
    return dev, dev, text


def _parameter(reader: _Reader, name: str, table: object) -> Parameter:
    section = f"parameters.{name}"
    if not _NAME.match(name):
        raise reader.error(section, None, "not a valid parameter name",
                           "letters, digits and _ , starting with a letter", name)
    if not isinstance(table, dict):
        raise reader.error(section, None, "a parameter must be a table",
                           "[parameters.NAME] with nominal and tolerance (or range)", table)
    allowed = {"nominal", "tolerance", "range", "unit", "note", "distribution", "limits"}
    for key in table:
        if key not in allowed:
            raise reader.error(section, key, "unknown key" + did_you_mean(key, allowed),
                               ", ".join(sorted(allowed)))
    has_tol, has_range = "tolerance" in table, "range" in table
    if has_tol == has_range:
        raise reader.error(section, None,
                           "give exactly one of tolerance and range" if has_tol
                           else "neither tolerance nor range given",
                           "nominal + tolerance, or range = [low, high] (nominal optional)")
    if has_range:
        rng = table["range"]
        if not isinstance(rng, list) or len(rng) != 2:
            raise reader.error(section, "range", "a range is two numbers", "[low, high]", rng)
        low = _number(reader, section, "range", rng[0])
        high = _number(reader, section, "range", rng[1])
        if low > high:
            raise reader.error(section, "range", "the range is reversed", "low <= high", rng)
        nominal = (_number(reader, section, "nominal", table["nominal"])
                   if "nominal" in table else (low + high) / 2)
        if not low <= nominal <= high:
            raise reader.error(section, "nominal", "the nominal lies outside the range",
                               f"a value in [{approx_text(low)}, {approx_text(high)}]", table["nominal"])
        tol_text = "range"
    else:
        if "nominal" not in table:
            raise reader.error(section, None, "a tolerance needs a nominal value", "nominal = ...")
        nominal = _number(reader, section, "nominal", table["nominal"])
        down, up, tol_text = _tolerance(reader, section, table["tolerance"], nominal)
        low, high = nominal - down, nominal + up
    distribution = table.get("distribution", "uniform")
    if distribution not in DISTRIBUTIONS:
        raise reader.error(section, "distribution", "unknown distribution",
                           " or ".join(DISTRIBUTIONS), distribution)
    for key in ("unit", "note"):
        if key in table and not isinstance(table[key], str):
            raise reader.error(section, key, "must be text", "a string", table[key])
    limits, limits_text = _limits(reader, section, table.get("limits"), low, high)
    return Parameter(name, nominal, low, high, table.get("unit", ""), table.get("note", ""),
                     distribution, tol_text, limits, limits_text)


def default_limits(low: Fraction, high: Fraction) -> tuple[Fraction | None, Fraction | None]:
    """(0, inf) for a strictly positive range, (-inf, 0) for a strictly negative one, else none."""
    if low > 0:
        return Fraction(0), None
    if high < 0:
        return None, Fraction(0)
    return None, None


def _limits(reader: _Reader, section: str, value: object, low: Fraction, high: Fraction
            ) -> tuple[tuple[Fraction | None, Fraction | None], str]:
    """The physical limits as given (or by default), checked to lie strictly outside the range."""
    expected = '[low, high] with numbers or "-inf" / "inf", e.g. [0, "inf"]'
    if value is None:
        return default_limits(low, high), "default"
    if not isinstance(value, list) or len(value) != 2:
        raise reader.error(section, "limits", "limits are two numbers", expected, value)
    ends: list[Fraction | None] = []
    for end, infinite in zip(value, ("-inf", "inf"), strict=True):
        if isinstance(end, str) and end.strip() in (infinite, "+" + infinite if infinite == "inf" else infinite):
            ends.append(None)
        elif isinstance(end, float) and end in (float("inf"), float("-inf")):
            if (end < 0) != (infinite == "-inf"):
                raise reader.error(section, "limits", "an infinite limit on the wrong side", expected, value)
            ends.append(None)
        else:
            ends.append(_number(reader, section, "limits", end))
    lo, hi = ends
    if lo is not None and hi is not None and lo >= hi:
        raise reader.error(section, "limits", "the limits are reversed or equal", "low < high", value)
    if limit_reached((lo, hi), low, high) is not None:
        raise reader.error(section, "limits", "the parameter's range reaches its limits",
                           f"limits strictly outside the range [{float(low):g}, {float(high):g}] "
                           "(a limit is a value the part can approach but never reach)", value)
    return (lo, hi), "given"


def _formula(reader: _Reader, section: str, key: str, text: object, names, variable,
             polynomial: bool, work: sparse.Work, index: int | tuple[int, ...] | None = None,
             keep_tree: bool = False):
    if not isinstance(text, str | int | float) or isinstance(text, bool):
        raise reader.error(section, key, "a formula must be text", '"..."', text)
    try:
        return parse_formula(str(text), names, variable, polynomial, work, keep_tree)
    except FormulaError as error:
        raise reader.error(section, key,
                           f"{error.problem} at column {error.position} of "
                           f"{error.text if len(error.text) <= 60 else error.text[:57] + '...'!r}",
                           error.expected, index=index) from None


def _top_level_hint(key: str, value: object, allowed: set[str]) -> str:
    """What an unknown top-level key was probably meant to be, as " (did you mean ...?)"."""
    if key in FORMS:  # a form written outside [polynomial]
        return f" (did you mean [polynomial.{key}]?)" if key not in ("expression", "coefficients") \
            else f" (did you mean {key} = ... under [polynomial]?)"
    if key in ("margin", "decay_rate"):
        return f" (did you mean {key} = ... under [requirements]?)"
    if isinstance(value, dict) and {"nominal", "tolerance", "range"} & set(value):
        return f" (did you mean [parameters.{key}]?)"  # a part declared without its section
    return did_you_mean(key, allowed)


def parse_case(text: str, path: str = "<case>") -> Case:
    """Read a case from TOML text. See :func:`load_case`."""
    if not text.strip():
        raise CaseError(path, "", "the file is empty", "a TOML case file (title, [parameters], [polynomial])")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        message = str(error)
        match = re.search(r"\(at line (\d+), column (\d+)\)", message)
        line = int(match.group(1)) if match else None
        problem = re.sub(r"\s*\(at line \d+, column \d+\)", "", message)
        if match:
            problem += f" at column {match.group(2)}"
        raise CaseError(path, "", f"TOML syntax error: {problem}", "valid TOML", None, line) from None
    return case_from_data(data, path, hashlib.sha256(text.encode()).hexdigest(), text)


def case_from_data(data: dict, path: str, sha256: str, text: str = "") -> Case:
    """Build and check a case from the data a TOML reader gives (tables as dicts).

    Every check and error of the case file applies; ``text``, when given, is the file's text,
    for the line numbers of errors. :func:`robust.model.build.make_case` calls this with the
    data of Python arguments.
    """
    reader = _Reader(path, text)
    allowed = {"title", "summary", "variable", "sample_time", "parameters", "polynomial", "requirements"}
    for key in data:
        if key not in allowed:
            raise reader.error("", key, "unknown top-level key" + _top_level_hint(key, data[key], allowed),
                               ", ".join(sorted(allowed)))
    title = data.get("title", "")
    if not isinstance(title, str) or not title.strip():
        raise reader.error("", "title", "missing or empty title", 'title = "one line"')
    if len(title.strip().splitlines()) > 1:
        raise reader.error("", "title", "the title spans several lines",
                           'title = "one line" (longer text belongs in summary)')
    summary = data.get("summary", "")
    if not isinstance(summary, str):
        raise reader.error("", "summary", "must be text", "a string")
    variable = data.get("variable", "s")
    if not isinstance(variable, str) or not _NAME.match(variable):
        raise reader.error("", "variable", "not a valid variable name",
                           '"s" (continuous time) or "z" (discrete time)', variable)
    sample_time = None
    if "sample_time" in data:
        sample_time = _number(reader, "", "sample_time", data["sample_time"])
        if variable != "z":
            raise reader.error("", "sample_time", "a sample time belongs to a discrete-time case",
                               'variable = "z" with it, or no sample_time')
        if sample_time <= 0:
            raise reader.error("", "sample_time", "out of range", "a positive time in seconds",
                               data["sample_time"])
    params_table = data.get("parameters")
    if params_table is None:
        raise reader.error("parameters", None, "missing section [parameters]",
                           "at least one [parameters.NAME] table")
    if not isinstance(params_table, dict) or not params_table:
        raise reader.error("parameters", None, "no parameters declared",
                           "at least one [parameters.NAME] table")
    if len(params_table) > _MAX_PARAMETERS:
        raise reader.error("parameters", None, "too many parameters", f"at most {_MAX_PARAMETERS}")
    parameters = tuple(_parameter(reader, name, t) for name, t in params_table.items())
    names = tuple(p.name for p in parameters)
    if variable in names:
        raise reader.error(f"parameters.{variable}", None,
                           "a parameter has the name of the polynomial variable",
                           "another name", variable)
    poly = data.get("polynomial")
    if not isinstance(poly, dict):
        raise reader.error("polynomial", None, "missing section [polynomial]",
                           "[polynomial] with expression, coefficients or [polynomial.loop]")
    forms = [k for k in FORMS if k in poly]
    for key in poly:
        if key not in FORMS:
            raise reader.error("polynomial", key, "unknown key" + did_you_mean(key, FORMS),
                               "expression, coefficients, loop, state_space, mechanical or diagram")
    if len(forms) != 1:
        raise reader.error("polynomial", None,
                           f"give exactly one of expression, coefficients, loop, state_space, "
                           f"mechanical and diagram (got {' and '.join(forms)})" if forms else "no polynomial given",
                           "expression = \"...\", coefficients = [...], [polynomial.loop], "
                           "[polynomial.state_space], [polynomial.mechanical] or [polynomial.diagram]")
    form = forms[0]
    _check_total_length(reader, form, poly[form])
    formulas: list[tuple[str, str]] = []
    parts = None  # the loop's (den_P den_C, num_P num_C)
    diagram = None
    work = new_work()  # one account for every formula of the case and for combining them
    units = any(p.unit.strip() for p in parameters)  # then each formula keeps its tree
    read: list[tuple[str, str, int | None, ParsedFormula]] = []  # for the dimension check
    try:
        if form == "expression":
            read.append(("polynomial", "expression", None, _formula(
                reader, "polynomial", "expression", poly["expression"], names, variable, True, work,
                keep_tree=units)))
            numerator, denominator = expression_polynomial(read[0][3])
            formulas.append(("expression", str(poly["expression"])))
        elif form == "coefficients":
            items = poly["coefficients"]
            if not isinstance(items, list) or not items:
                raise reader.error("polynomial", "coefficients", "must be a non-empty list",
                                   '["a_n", ..., "a_0"], highest power first', items)
            if len(items) > MAX_DEGREE + 1:
                raise reader.error("polynomial", "coefficients", "degree too high",
                                   f"at most {MAX_DEGREE + 1} coefficients")
            n = len(items) - 1
            parsed = [_formula(reader, "polynomial", "coefficients", item, names, None, False, work, i, units)
                      for i, item in enumerate(items)]
            read += [("polynomial", "coefficients", i, p) for i, p in enumerate(parsed)]
            formulas += [(f"coefficients[{i}] ({variable}^{n - i})", str(item)) for i, item in enumerate(items)]
            numerator, denominator = coefficients_polynomial(parsed, work)
        elif form in MATRIX_FORMS:
            section = f"polynomial.{form}"

            def entry(key: str, text: object, index: tuple[int, int]) -> ParsedFormula:
                read.append((section, key, index, _formula(reader, section, key, text, names, variable,
                                                            False, work, index, units)))
                return read[-1][3]

            (numerator, denominator), written = matrix_polynomial(reader, form, poly[form], variable, work,
                                                                  entry)
            formulas += written
        elif form == "diagram":
            (numerator, denominator), written, diagram, sides = diagram_polynomial(
                reader, poly["diagram"], names, variable, work, lambda i, text, known: _formula(
                    reader, "polynomial.diagram", "equations", text, known, variable, False, work, i, units))
            formulas += written
            read += [("polynomial.diagram", "equations", i, side) for i, side in enumerate(sides)]
        else:
            loop = poly["loop"]
            if not isinstance(loop, dict) or set(loop) - {"plant", "controller"} or "plant" not in loop:
                raise reader.error("polynomial.loop", None, "a loop needs plant (and optionally controller)",
                                   'plant = "...", controller = "..."')
            plant = _formula(reader, "polynomial.loop", "plant", loop["plant"], names, variable, False,
                             work, keep_tree=units)
            controller = _formula(reader, "polynomial.loop", "controller", loop.get("controller", "1"),
                                  names, variable, False, work, keep_tree=units)
            read += [("polynomial.loop", "plant", None, plant),
                     ("polynomial.loop", "controller", None, controller)]
            formulas.append(("plant", str(loop["plant"])))
            formulas.append(("controller", str(loop.get("controller", "1"))))
            parts = loop_parts(plant, controller, work)
            numerator, denominator = closed_loop(parts)
            if sparse.is_zero(numerator):
                raise reader.error("polynomial.loop", "plant",
                                   "the characteristic polynomial 1 + P*C is identically zero",
                                   "a loop whose closed-loop denominator is not zero")
    except CaseError:
        raise
    except InputError as error:  # the work account of combining the formulas ran out
        raise reader.error("polynomial", form, error.problem, error.expected) from None
    if units:
        _check_units(reader, parameters, variable, form, read)
    if sparse.degree_in(denominator, 0) > 0:
        raise reader.error("polynomial", form,
                           f"the characteristic polynomial is not polynomial in {variable}",
                           f"a polynomial in {variable}")
    degree = sparse.degree_in(numerator, 0)
    if degree > MAX_DEGREE:
        raise reader.error("polynomial", form, "degree too high", f"degree <= {MAX_DEGREE}", degree)
    box = Box(names, tuple(p.low for p in parameters), tuple(p.high for p in parameters),
              tuple(p.unit.strip() for p in parameters))
    nominal = tuple(p.nominal for p in parameters)
    slots = 1 + len(names)
    try:
        family = build_family(sparse.to_multipoly(numerator, slots), sparse.to_multipoly(denominator, slots),
                              variable, names, box, nominal,
                              limits=tuple(p.limits for p in parameters))
    except InputError as error:
        raise reader.error("polynomial", form, error.problem, error.expected) from None
    if parts is not None:
        family = _with_loop(family, parts, slots)
    if variable == "z":
        family = discrete_family(family)
    requirements = _requirements(reader, data.get("requirements", {}), variable == "z", bool(family.loop))
    return Case(path, title.strip(), summary.strip(), variable, parameters, form,
                tuple(formulas), family, requirements, sha256, tuple(reader.notes), sample_time, diagram)


def _with_loop(family: UncertainPolynomial, parts: tuple[dict, dict], slots: int) -> UncertainPolynomial:
    """The family with its loop's parts (D, N) as coefficient lists of the family's degree,
    divided by their common factor in the parameters (which divides the family's own, so it
    keeps one sign over the box). A loop whose parts reach above the closed loop's degree
    (their leading terms cancel) gets none: its gain and phase margins are not defined."""
    from ..exact.content import common_factor, divide
    from ..exact.polynomials import MultiPoly

    k = slots - 1
    split = [sparse.split_by(part, 0, slots) for part in parts]
    if max(max(by_power, default=0) for by_power in split) > family.degree:
        return family
    lists = [[by_power.get(d, MultiPoly.constant(k, 0)) for d in range(family.degree, -1, -1)]
             for by_power in split]
    content = common_factor([c for coefficients in lists for c in coefficients if not c.is_zero])
    if content is not None:
        lists = [[divide(c, content) if not c.is_zero else c for c in coefficients] for coefficients in lists]
    return dataclasses.replace(family, loop=(tuple(lists[0]), tuple(lists[1])))


def _check_units(reader: _Reader, parameters: tuple[Parameter, ...], variable: str, form: str,
                 read: list) -> None:
    """Every sum of the formulas adds terms of one dimension (see robust.model.units)."""
    from .units import check_units  # loads pint: only for a case with units

    unchecked = check_units(parameters, variable, form, read, reader.error)
    if unchecked:
        reader.notes.append(f"{reader.path}: parameters without a unit, so the terms holding them are "
                            f"not checked for dimension: {', '.join(unchecked)}")


def _check_total_length(reader: _Reader, form: str, value: object) -> None:
    """Refuse, before parsing any, formulas that are too long together to read quickly."""
    items, total = [value], 0
    for _ in range(4):  # a list of formulas, a table of them, a table of matrices (rows of them)
        total += sum(len(item) for item in items if isinstance(item, str))
        items = [v for item in items if isinstance(item, list | dict)
                 for v in (item.values() if isinstance(item, dict) else item)]
    if total > MAX_TOTAL_LENGTH:
        raise reader.error("polynomial", form, f"the formulas are too long together ({total:,} characters)",
                           f"at most {MAX_TOTAL_LENGTH:,} characters in all the formulas of a case")


#: Per requirement: (what it must be, the test of a value) for the one-line error.
_RANGES = {
    "margin": ("a positive number (1 = the tolerances as written)", lambda v: v > 0),
    "decay_rate": ("a number >= 0 (1/s)", lambda v: v >= 0),
    "radius": ("a number in (0, 1]", lambda v: 0 < v <= 1),
    "gain_margin_db": ("a number of decibels in (0, 120], e.g. 6", lambda v: 0 < v <= 120),
    "phase_margin_deg": ("an angle in degrees between 0 and 179, e.g. 45", lambda v: 0 < v <= 179),
    "damping_ratio": ("a number in (0, 0.99], e.g. 0.4", lambda v: 0 < v <= Fraction(99, 100)),
}


def _requirements(reader: _Reader, table: object, discrete: bool = False, loop: bool = False) -> Requirements:
    if not isinstance(table, dict):
        raise reader.error("requirements", None, "must be a table", "[requirements]")
    out = {}
    for key in table:
        if key not in REQUIREMENTS:
            raise reader.error("requirements", key, "unknown requirement" + did_you_mean(key, REQUIREMENTS),
                               ", ".join(REQUIREMENTS))
        value = _number(reader, "requirements", key, table[key])
        expected, holds = _RANGES[key]
        if not holds(value):
            raise reader.error("requirements", key, "out of range", expected, table[key])
        if key == "decay_rate" and discrete:
            raise reader.error("requirements", key, "a decay rate is for continuous time (variable s)",
                               "radius = r: every root inside |z| < r (e.g. 0.9)")
        if key == "damping_ratio" and discrete:
            raise reader.error("requirements", key, "a damping ratio is for continuous time (variable s): "
                               "the damping region of z = e^(sT) is not a polynomial region",
                               "radius = r: every root inside |z| < r (e.g. 0.9)")
        if key == "radius" and not discrete:
            raise reader.error("requirements", key, "a radius is for discrete time (variable = \"z\")",
                               "decay_rate = sigma: every root left of Re(s) = -sigma")
        if key in ("gain_margin_db", "phase_margin_deg") and not loop:
            raise reader.error("requirements", key, "a gain or phase margin needs the loop's plant and controller",
                               "[polynomial.loop] with plant and controller")
        out[key] = value
    return Requirements(**out)


def load_case(path: str | Path) -> Case:
    """Load and check a case file.

    Raises
    ------
    CaseError
        One line naming the file, line, field, the problem and what was expected.
    """
    name = str(path)
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise CaseError(name, "", "no such file", "the path of a .toml case file") from None
    except OSError as error:
        raise CaseError(name, "", f"cannot read the file ({error.strerror})") from None
    if stat.S_ISDIR(info.st_mode):
        raise CaseError(name, "", "is a directory", "the path of a .toml case file")
    if not stat.S_ISREG(info.st_mode):  # a device such as /dev/zero, a pipe, a socket
        raise CaseError(name, "", "not a regular file", "the path of a .toml case file")
    if info.st_size > MAX_FILE:
        raise CaseError(name, "", f"file too large for a case ({info.st_size:,} bytes)",
                        f"at most {MAX_FILE:,} bytes")
    try:
        with open(path, "rb") as handle:
            raw = handle.read(MAX_FILE + 1)  # the size may have changed since stat
    except OSError as error:
        raise CaseError(name, "", f"cannot read the file ({error.strerror})") from None
    if len(raw) > MAX_FILE:
        raise CaseError(name, "", "file too large for a case", f"at most {MAX_FILE:,} bytes")
    try:
        text = raw.decode("utf-8-sig")  # a byte-order mark some editors write is dropped
    except UnicodeDecodeError:
        raise CaseError(name, "", "not UTF-8 text", "a TOML text file") from None
    # the record names the file's own bytes, byte-order mark included
    return dataclasses.replace(parse_case(text, name), sha256=hashlib.sha256(raw).hexdigest())
