"""robust: prove or refute the stability of a feedback loop over its parts' tolerances.

Architecture: layers, one direction of flow (a layer imports only the layers above it here):

    errors      the error hierarchy
    exact/      the exact core, knows nothing of cases: numbers (the one module that imports
                gmpy2), multivariate polynomials, the Routh array, Hurwitz determinants,
                interval polynomials and Kharitonov's theorem
    model/      what the user wrote: expr (safe parser), forms (each form -> one polynomial:
                expression, coefficients, loop, matrices, diagram), units, case (TOML), build
                (the same case from Python values), rewrite, display (a notebook's HTML hook),
                family (the uncertain polynomial over a box, physical limits), graph
    analysis/   what we conclude: outcomes (the enums, the one validity rule and the one
                pass/fail rule), edges, search, verdict (the ladder), margin, criteria, rank,
                montecarlo, designmap, allocate, executor (processes or a dask cluster),
                signoff (every analysis of a report)
    render/     text, report blocks, html, markdown, notebook, figures, writer: no mathematics
    cli         click only: options in, API call, render, exit code

Results are frozen dataclasses; exact numbers stay ``fractions.Fraction`` until rendered.
The public names below load on first use (PEP 562), so ``import robust`` stays cheap.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from ._version import __version__ as __version__

#: public name -> module that defines it
_EXPORTS = {
    "Case": "robust.model.case",
    "CaseError": "robust.errors",
    "CheckResult": "robust.analysis.verdict",
    "FormulaError": "robust.errors",
    "InputError": "robust.errors",
    "RobustError": "robust.errors",
    "RootCounts": "robust.exact.routh",
    "RouthTable": "robust.exact.routh",
    "Witness": "robust.analysis.verdict",
    "allocate": "robust.analysis.allocate",
    "check": "robust.analysis.verdict",
    "design_map": "robust.analysis.designmap",
    "estimate_yield": "robust.analysis.montecarlo",
    "is_hurwitz": "robust.exact.routh",
    "load_case": "robust.model.case",
    "make_case": "robust.model.build",
    "margin": "robust.analysis.margin",
    "rank": "robust.analysis.rank",
    "routh_table": "robust.model.forms",
    "run_tasks": "robust.analysis.executor",
}

__all__ = sorted([*_EXPORTS, "__version__"])

if TYPE_CHECKING:
    from .analysis.allocate import allocate as allocate
    from .analysis.designmap import design_map as design_map
    from .analysis.executor import run_tasks as run_tasks
    from .analysis.margin import margin as margin
    from .analysis.montecarlo import estimate_yield as estimate_yield
    from .analysis.rank import rank as rank
    from .analysis.verdict import CheckResult as CheckResult
    from .analysis.verdict import Witness as Witness
    from .analysis.verdict import check as check
    from .errors import CaseError as CaseError
    from .errors import FormulaError as FormulaError
    from .errors import InputError as InputError
    from .errors import RobustError as RobustError
    from .exact.routh import RootCounts as RootCounts
    from .exact.routh import RouthTable as RouthTable
    from .exact.routh import is_hurwitz as is_hurwitz
    from .model.build import make_case as make_case
    from .model.case import Case as Case
    from .model.case import load_case as load_case
    from .model.forms import routh_table as routh_table


def __getattr__(name: str) -> Any:
    """Load a public name on first use (PEP 562)."""
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'robust' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted([*globals(), *_EXPORTS])
