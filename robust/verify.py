"""The independent certificate checker.

It confirms a certificate written by ``robust check --certificate`` (format: docs/certificates.md)
using only the exact core (rationals, exact polynomials, the Routh array, Kharitonov's four
polynomials, Bernstein coefficients) and the case reader; none of the search, subdivision or
margin code. What a VALID certificate proves:

* "stable": every polynomial of the case, at every parameter point of the certified box, is
  Hurwitz (all roots in the open left half-plane, with the leading coefficient of one sign).
  The tree of midpoint splits covers the box exactly (each split halves one parameter's
  interval, so the leaves tile the box with no gap and no overlap beyond faces), and each leaf
  is proven by one of:
  - "kharitonov": the exact range of each coefficient over the leaf, or a sound outer bound of
    it, gives an interval polynomial whose Kharitonov polynomials are Hurwitz (Kharitonov 1978);
    every member of the leaf lies in it;
  - "bernstein": a_n, a_0 and the Hurwitz determinant Delta_(n-1), each signed positive at the
    certificate's Hurwitz point, have only positive Bernstein coefficients over the leaf
    (Garloff 1986) after fixing the parameters in which the condition is monotone at the
    stated value (the monotony checked here by a sound bound of the partial derivative between
    that value and the leaf), and the leaf's lowest corner is Hurwitz: no root can then cross
    the imaginary axis inside the leaf (zero exclusion; Zettler and Garloff, IEEE TAC 43(3),
    1998), so all of it is Hurwitz.
* "unstable": the witness point lies in the box and its polynomial (exact coefficients) is not
  Hurwitz.
* "undecided": the leaves that are not "open" are proven as for "stable"; nothing is claimed
  about the open ones.

For a discrete-time case (variable "z") "the polynomial" is the case reader's bilinear image
q(w) = (1 - w)^n p((1 + w)/(1 - w)) of the polynomial in z, Hurwitz exactly when every root in
z lies strictly inside the unit circle; a witness may also be a point where q loses its degree
while p keeps it, which is a root at z = -1, on the circle.

The case file must be the one certified (SHA-256 of its bytes), its parameters and coefficient
formulas must read the same, and the certified box must be the case's box (or, with a scale,
the box with every tolerance scaled by it about nominal).
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass
from fractions import Fraction
from pathlib import Path

from .errors import InputError
from .exact.bernstein import bernstein_patch
from .exact.hurwitz import MAX_DELTA_DEGREE, MAX_DELTA_PRODUCTS, hurwitz_determinant_in, with_fixed_parts
from .exact.interval import IntervalPolynomial, kharitonov_test
from .exact.numbers import from_mpq, mpz
from .exact.polynomials import MultiPoly, as_intervals
from .exact.routh import is_hurwitz
from .model.case import load_case

__all__ = ["Verification", "verify_certificate", "verify_file"]

FORMAT = "robust certificate"
VERSION = 1
MAX_BYTES = 200_000_000
#: The engine's limits for the Bernstein conditions: a crafted certificate must not make the
#: checker expand a huge Delta_(n-1).
MAX_DEGREE = MAX_DELTA_DEGREE
MAX_PRODUCTS = MAX_DELTA_PRODUCTS


@dataclass(frozen=True, slots=True)
class Verification:
    """The checker's answer: ``failed`` names the first piece (or part) that does not hold."""

    valid: bool
    pieces: int
    verdict: str
    failed: dict | None
    statement: str

    def as_dict(self) -> dict[str, object]:
        """JSON: valid, pieces, failed (DESIGN.md section 5), verdict, statement."""
        return {"valid": self.valid, "pieces": self.pieces, "failed": self.failed,
                "verdict": self.verdict, "statement": self.statement}


_INTEGER = re.compile(r"-?[0-9]+")


class _Invalid(Exception):
    def __init__(self, reason: str, piece: int | None = None, box: dict | None = None):
        super().__init__(reason)
        self.failed = {"piece": piece, "reason": reason, "box": box}


def _number(text: object, where: str) -> Fraction:
    """An exact rational from its certificate text "p" or "p/q" (any size)."""
    if not isinstance(text, str):
        raise _Invalid(f"{where}: {text!r} is not an exact number written as a string")
    top, _, bottom = text.partition("/")
    if not _INTEGER.fullmatch(top) or not (bottom == "" or _INTEGER.fullmatch(bottom)):
        raise _Invalid(f"{where}: {text!r} is not an exact rational written p or p/q")
    try:
        value = Fraction(int(mpz(top)), int(mpz(bottom or "1")))
    except (ValueError, ZeroDivisionError):
        raise _Invalid(f"{where}: {text!r} is not an exact rational") from None
    return value


def _box_text(names, low, high) -> dict[str, list[str]]:
    return {n: [str(a), str(b)] for n, a, b in zip(names, low, high, strict=True)}


def verify_file(path: str | Path, case_path: str | Path | None = None) -> Verification:
    """Check the certificate in ``path`` against its case (``case_path``, or the file it
    names, looked for as written and then beside the certificate).

    Raises InputError (bad input: not a readable certificate, no case file) before any check.
    """
    path = Path(path)
    try:
        raw = path.read_bytes()[:MAX_BYTES + 1]
    except OSError as error:
        raise InputError(str(path), f"cannot read the certificate ({error.strerror})",
                         "the path of a certificate written by robust check --certificate") from None
    try:
        data = json.loads(raw)
    except (ValueError, UnicodeDecodeError):
        raise InputError(str(path), "not JSON",
                         "a certificate written by robust check --certificate") from None
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise InputError(str(path), "not a robust certificate (no \"format\": \"robust certificate\")",
                         "a certificate written by robust check --certificate")
    if data.get("version") != VERSION:
        raise InputError(str(path), f"certificate version {data.get('version')!r} is not known here",
                         f"a version {VERSION} certificate")
    if case_path is None:
        recorded = (data.get("case") or {}).get("file")
        if not isinstance(recorded, str):
            raise InputError(str(path), "the certificate names no case file", "--case CASE")
        candidates = [Path(recorded), path.parent / Path(recorded).name]
        case_path = next((c for c in candidates if c.is_file()), None)
        if case_path is None:
            raise InputError(str(path), f"the case file {recorded!r} is not found",
                             "--case CASE with the case file that was certified")
    case = load_case(case_path)
    return verify_certificate(data, case)


def verify_certificate(data: dict, case) -> Verification:
    """Check a certificate (parsed JSON) against a loaded case."""
    verdict = str(data.get("verdict"))
    pieces = 0
    try:
        family, low, high = _same_case(data, case)
        if verdict == "unstable":
            _check_witness(data, family, low, high)
            statement = "a parameter point inside the box whose polynomial is not Hurwitz"
        elif verdict in ("stable", "undecided"):
            pieces, opened = _check_tree(data, family, low, high, verdict)
            where = "the box" if data.get("scale") is None else \
                f"the box with every tolerance scaled by {data['scale']}"
            statement = (f"every parameter point of {where} gives a Hurwitz polynomial" if verdict == "stable"
                         else f"every parameter point of {where} outside the {opened} open piece(s) "
                         "gives a Hurwitz polynomial")
        else:
            raise _Invalid(f"unknown verdict {verdict!r}")
    except _Invalid as invalid:
        return Verification(False, pieces, verdict, invalid.failed, "")
    return Verification(True, pieces, verdict, None, statement)


def _same_case(data: dict, case):
    """The family, and the certified box, after checking they are the case's."""
    record = data.get("case")
    if not isinstance(record, dict):
        raise _Invalid("no case record")
    if record.get("sha256") != case.sha256:
        raise _Invalid("the case file is not the one certified (its SHA-256 differs)")
    family = case.family
    names = list(family.names)
    if record.get("parameters") != names:
        raise _Invalid("the case's parameters differ from the certified ones")
    if record.get("coefficients") != list(family.formulas()):
        raise _Invalid("the case's coefficients differ from the certified ones")
    box = data.get("box")
    if not isinstance(box, dict) or list(box) != names:
        raise _Invalid("the box does not name the case's parameters in order")
    if not all(isinstance(box[n], list) and len(box[n]) == 2 for n in names):
        raise _Invalid("the box does not give [low, high] for every parameter")
    low = [_number(box[n][0], f"box {n}") for n in names]
    high = [_number(box[n][1], f"box {n}") for n in names]
    scale = data.get("scale")
    rho = Fraction(1) if scale is None else _number(scale, "scale")
    if rho < 0:  # a negative scale would mirror the box about nominal
        raise _Invalid(f"the scale {rho} is negative")
    for i, n in enumerate(names):
        nominal, lo, hi = family.nominal[i], family.box.low[i], family.box.high[i]
        if (low[i], high[i]) != (nominal - rho * (nominal - lo), nominal + rho * (hi - nominal)):
            raise _Invalid(f"the box of {n} is not the case's range scaled by {rho}")
    return family, low, high


def _check_witness(data: dict, family, low, high) -> None:
    point = _point(data.get("witness"), family.names, "witness")
    if not all(a <= x <= b for a, x, b in zip(low, point, high, strict=True)):
        raise _Invalid("the witness lies outside the box")
    coefficients = family.coefficients_at(point)
    if family.on_circle_at(point):
        return  # discrete time: a root at z = -1, on the circle
    if coefficients[0] == 0 or is_hurwitz(coefficients):
        raise _Invalid("the witness polynomial is Hurwitz (or drops degree)")


def _point(record, names, what: str) -> tuple[Fraction, ...]:
    if not isinstance(record, dict) or list(record) != list(names):
        raise _Invalid(f"the {what} does not give every parameter in order")
    return tuple(_number(record[n], f"{what} {n}") for n in names)


def _conditions(data: dict, family, point, low, high) -> list[tuple[MultiPoly, dict[int, Fraction]]]:
    # parts the certified box holds at one value enter as that value (every piece lies in it)
    coefficients = with_fixed_parts(family.coefficients, low, high)
    nvars = len(family.names)
    if family.degree > MAX_DEGREE:  # the engine writes no Bernstein piece above it either
        raise _Invalid(f"Bernstein pieces for degree {family.degree} (the checker expands "
                       f"Delta_(n-1) up to degree {MAX_DEGREE})")
    polys = [coefficients[0], coefficients[-1]]
    if family.degree >= 2:
        delta = hurwitz_determinant_in(coefficients, nvars)
        if delta is None:
            raise _Invalid(f"Delta_(n-1) needs more than {MAX_PRODUCTS:,} term products to check")
        polys.append(delta)
    records = data.get("conditions")
    if not isinstance(records, list) or len(records) != len(polys):
        raise _Invalid(f"the certificate gives {len(records or [])} conditions, the degree asks {len(polys)}")
    out = []
    index = {n: i for i, n in enumerate(family.names)}
    for poly, record in zip(polys, records, strict=True):
        value = poly.evaluate(point)
        if value == 0:
            raise _Invalid("a condition vanishes at the Hurwitz point")
        if value < 0:
            poly = MultiPoly.from_mapping(nvars, {e: -c for e, c in poly.terms})
        fixed = record.get("fixed") if isinstance(record, dict) else None
        if not isinstance(fixed, dict) or not set(fixed) <= set(index):
            raise _Invalid("a condition's fixed parameters are not the case's")
        out.append((poly, {index[n]: _number(v, f"fixed {n}") for n, v in fixed.items()}))
    return out


def _check_tree(data: dict, family, low, high, verdict: str) -> tuple[int, int]:
    names = list(family.names)
    if verdict == "undecided" and data.get("stable_point") is None:
        # nothing proven (no stable point was found): the whole box is one open piece
        if data.get("tree") != [{"piece": "open"}]:
            raise _Invalid("an undecided certificate without a stable point claims proven pieces")
        return 1, 1
    point = _point(data.get("stable_point"), names, "stable point")
    if not all(a <= x <= b for a, x, b in zip(low, point, high, strict=True)):
        raise _Invalid("the stable point lies outside the box")
    if not is_hurwitz(family.coefficients_at(point)):
        raise _Invalid("the stable point's polynomial is not Hurwitz")
    nodes = data.get("tree")
    if not isinstance(nodes, list) or not nodes:
        raise _Invalid("no tree of pieces")
    conditions = None
    stack = [(list(low), list(high))]
    pieces = opened = 0
    for position, node in enumerate(nodes):
        if not stack:
            raise _Invalid(f"node {position}: the tree has more nodes than its splits make room for")
        lo, hi = stack.pop()
        if not isinstance(node, dict):
            raise _Invalid(f"node {position} is not an object")
        if "split" in node:
            if node["split"] not in names:
                raise _Invalid(f"node {position} splits an unknown parameter {node['split']!r}")
            i = names.index(node["split"])
            middle = (lo[i] + hi[i]) / 2
            upper = ([*lo[:i], middle, *lo[i + 1:]], hi)
            lower = (lo, [*hi[:i], middle, *hi[i + 1:]])
            stack += [upper, lower]  # the lower half is the next subtree
            continue
        pieces += 1
        method = node.get("piece")
        where = _box_text(names, lo, hi)
        if method == "open":
            if verdict == "stable":
                raise _Invalid("an open piece in a certificate of stability", pieces, where)
            opened += 1
        elif method == "kharitonov":
            _kharitonov_piece(family, lo, hi, pieces, where)
        elif method == "bernstein":
            if conditions is None:
                conditions = _conditions(data, family, point, low, high)
                for _, fixed in conditions:  # the engine fixes at ends of the certified box
                    if any(not low[i] <= v <= high[i] for i, v in fixed.items()):
                        raise _Invalid("a condition's fixed value lies outside the box")
            _bernstein_piece(family, conditions, node.get("least"), lo, hi, pieces, where)
        else:
            raise _Invalid(f"unknown method {method!r}", pieces, where)
    if stack:
        raise _Invalid(f"the tree stops with {len(stack)} part(s) of the box not covered")
    return pieces, opened


def _kharitonov_piece(family, lo, hi, piece: int, where: dict) -> None:
    intervals = as_intervals(zip(lo, hi, strict=True))
    bounds = [c.bound(intervals)[0] for c in family.coefficients]
    lows = tuple(from_mpq(b[0]) for b in bounds)
    highs = tuple(from_mpq(b[1]) for b in bounds)
    if not kharitonov_test(IntervalPolynomial(lows, highs)).stable:
        raise _Invalid("the piece's Kharitonov polynomials are not all Hurwitz", piece, where)


def _bernstein_piece(family, conditions, least, lo, hi, piece: int, where: dict) -> None:
    if not isinstance(least, list) or len(least) != len(conditions):
        raise _Invalid("the piece does not give one least coefficient per condition", piece, where)
    for k, ((poly, fixed), stated) in enumerate(zip(conditions, least, strict=True)):
        # the parameters are fixed one after another, so each slope must keep its sign over the
        # hull of the piece and every fixed value at once (not just its own coordinate)
        span = as_intervals((min(lo[j], fixed.get(j, lo[j])), max(hi[j], fixed.get(j, hi[j])))
                            for j in range(len(lo)))
        for i, value in fixed.items():
            slope_low, slope_high = poly.derivative(i).outer_interval(span)
            if not ((value <= lo[i] and slope_low >= 0) or (value >= hi[i] and slope_high <= 0)):
                raise _Invalid(f"condition {k + 1} is not shown monotone in {family.names[i]} "
                               "towards its fixed value", piece, where)
        reduced = poly.substitute(fixed) if fixed else poly
        patch = bernstein_patch(reduced, list(zip(lo, hi, strict=True)))
        if not patch.positive():
            raise _Invalid(f"condition {k + 1} has a Bernstein coefficient <= 0 on the piece", piece, where)
        if patch.low() != _number(stated, f"piece {piece} least"):
            raise _Invalid(f"condition {k + 1}'s least Bernstein coefficient is {patch.low()}, "
                           f"not the stated {stated}", piece, where)
    if not is_hurwitz(family.coefficients_at(tuple(lo))):
        raise _Invalid("the piece's lowest corner is not Hurwitz", piece, where)
