"""Certificates: a verdict written as a proof that :mod:`robust.verify` re-checks on its own.

The format (version 1) is documented in docs/certificates.md. In short: the case (file name,
SHA-256 of its bytes, parameter names and coefficient formulas as read), the certified box
(and the tolerance scale it stands for, for a margin), the verdict, and

* for "stable": a Hurwitz point of the box and the partition of the box into pieces, as a
  tree of midpoint splits in preorder, each leaf with the test that proves it
  ("kharitonov": the piece's interval overbound has Hurwitz Kharitonov polynomials;
  "bernstein": a_n, a_0 and Delta_(n-1), signed positive at the Hurwitz point, have positive
  Bernstein coefficients over the piece, with the least of each given) and, for the
  Bernstein conditions, the parameters fixed where each condition is least;
* for "unstable": the witness point;
* for "undecided": the proven part as above, with "open" leaves for what is left.

Every number is an exact rational written as a string ("-7/20").
"""

from __future__ import annotations

import hashlib
import json
from collections import Counter
from fractions import Fraction

from ..exact.numbers import format_fraction
from ..model.family import Box, UncertainPolynomial
from .outcomes import Verdict
from .subbox import LABELS
from .verdict import DEFAULT_MAX_BOXES, DEFAULT_MAX_SECONDS, CheckResult, decide

__all__ = ["FORMAT", "VERSION", "build_certificate", "certificate_bytes", "certify", "digest", "leaves"]

FORMAT = "robust certificate"
VERSION = 1


def certify(case, box: Box | None = None, max_boxes: int = DEFAULT_MAX_BOXES,
            max_seconds: float = DEFAULT_MAX_SECONDS, result: CheckResult | None = None,
            scale: Fraction | None = None) -> tuple[CheckResult, dict]:
    """Decide ``case`` over ``box`` (default: its own) so that the answer is a partition or a
    witness, and write it as a certificate. ``result`` is reused when it already carries
    one (a result of the edge theorem does not: the box is then decided again without it)."""
    family: UncertainPolynomial = case.family
    box = box or family.box
    if result is None or (result.proof is None and result.verdict is not Verdict.UNSTABLE):
        result = decide(family, box, max_seconds=max_seconds, max_boxes=max_boxes, use_edges=False)
    return result, build_certificate(case, result, scale)


def _point(names, point) -> dict[str, str]:
    return {n: format_fraction(v) for n, v in zip(names, point, strict=True)}


def build_certificate(case, result: CheckResult, scale: Fraction | None = None) -> dict:
    """The certificate of ``result`` (a decision over ``result.box``) as a JSON-ready dict."""
    family: UncertainPolynomial = case.family
    names = family.names
    data: dict[str, object] = {
        "format": FORMAT,
        "version": VERSION,
        "case": {"file": case.path, "sha256": case.sha256, "parameters": list(names),
                 "coefficients": list(family.formulas())},
        "box": {n: [format_fraction(lo), format_fraction(hi)]
                for n, (lo, hi) in zip(names, result.box.intervals, strict=True)},
        "scale": None if scale is None else format_fraction(scale),
        "verdict": result.verdict.value,
        "witness": None,
        "stable_point": None,
        "conditions": [],
        "tree": [],
    }
    if result.verdict is Verdict.UNSTABLE and result.witness is not None:
        data["witness"] = _point(names, result.witness.point)
        data["summary"] = {"pieces": 0, "by_method": {}, "open": 0, "splits": {}}
        return data
    proof = result.proof
    if proof is None:
        data["verdict"] = Verdict.UNDECIDED.value
        data["tree"] = [{"piece": "open"}]
        data["summary"] = {"pieces": 1, "by_method": {}, "open": 1, "splits": {}}
        return data
    data["stable_point"] = _point(names, proof.point)
    data["conditions"] = [
        {"name": label, "fixed": {names[i]: format_fraction(v) for i, v in sorted(fixed.items())}}
        for label, fixed in zip(LABELS, proof.fixed, strict=False)]
    tree: list[dict[str, object]] = []
    methods: Counter[str] = Counter()
    splits: Counter[str] = Counter()
    for node in proof.nodes:
        if node[0] == "split":
            tree.append({"split": names[node[1]]})
            splits[names[node[1]]] += 1
        elif node[0] == "bernstein":
            tree.append({"piece": "bernstein", "least": [format_fraction(v) for v in node[1]]})
            methods["bernstein"] += 1
        else:
            tree.append({"piece": node[0]})
            methods[node[0]] += 1
    data["tree"] = tree
    opened = methods.pop("open", 0)
    data["summary"] = {"pieces": proof.pieces, "by_method": dict(sorted(methods.items())), "open": opened,
                       "splits": dict(splits.most_common())}
    return data


def leaves(data: dict) -> list[tuple[str, dict[str, Fraction], dict[str, Fraction]]]:
    """The pieces of a certificate's tree: (method, low, high) per leaf, in tree order (for
    pictures and summaries; :mod:`robust.verify` walks the tree on its own)."""
    names = list(data["box"])
    box = data["box"]
    stack = [({n: Fraction(box[n][0]) for n in names}, {n: Fraction(box[n][1]) for n in names})]
    out = []
    for node in data["tree"]:
        low, high = stack.pop()
        if "split" in node:
            name = node["split"]
            middle = (low[name] + high[name]) / 2
            stack.append(({**low, name: middle}, high))
            stack.append((low, {**high, name: middle}))
        else:
            out.append((node["piece"], low, high))
    return out


def certificate_bytes(data: dict) -> bytes:
    """The certificate as it is written to a file (stable key order, one trailing newline)."""
    return (json.dumps(data, indent=1, sort_keys=False) + "\n").encode()


def digest(data: dict) -> str:
    """SHA-256 of :func:`certificate_bytes`."""
    return hashlib.sha256(certificate_bytes(data)).hexdigest()
