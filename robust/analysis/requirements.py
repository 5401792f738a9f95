"""The case's requirements, each decided directly over its own box."""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

from ..model.family import UncertainPolynomial
from .decay import shifted_family
from .verdict import Witness, decide

__all__ = ["RequirementCheck", "check_requirements"]


@dataclass(frozen=True, slots=True)
class RequirementCheck:
    """One requirement of the case, decided directly (not through a bracket)."""

    name: str  # "margin" | "decay_rate"
    required: Fraction
    passed: bool | None
    witness: Witness | None

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        return {"required": float(self.required), "passed": self.passed,
                "witness": self.witness.as_dict() if self.witness else None}


def check_requirements(case, max_seconds: float = 30.0, max_boxes: int = 5000) -> tuple[RequirementCheck, ...]:
    """Decide the case's requirements: stable over box(margin), and every root left of
    Re(s) = -decay_rate over the box."""
    family: UncertainPolynomial = case.family
    req = case.requirements
    out = []
    if req.margin is not None:
        box = family.box.scaled(family.nominal, req.margin)
        if family.valid_on(box):
            res = decide(family, box, max_seconds=max_seconds, max_boxes=max_boxes)
            passed = {"stable": True, "unstable": False}.get(res.verdict)
            out.append(RequirementCheck("margin", req.margin, passed, res.witness))
        else:
            out.append(RequirementCheck("margin", req.margin, None, None))
    if req.decay_rate is not None:
        shifted = shifted_family(family, req.decay_rate)
        res = decide(shifted, family.box, max_seconds=max_seconds, max_boxes=max_boxes)
        passed = {"stable": True, "unstable": False}.get(res.verdict)
        out.append(RequirementCheck("decay_rate", req.decay_rate, passed, res.witness))
    return tuple(out)
