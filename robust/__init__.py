"""robust: prove or refute the stability of a feedback loop over its parts' tolerances.

Architecture (imports flow downwards only; a module never imports one listed above it):

    cli                      thin click layer: parse options, call the API, render
    report, textout          rendering of results (text, JSON, Markdown/HTML, plots)
    margin, rank, montecarlo margins, parameter ranking, yield
    verdict, edges           the decision ladder: prove, refute with a witness, or undecided
    graph                    dependency graph parameters -> coefficients -> Kharitonov vertices
    interval                 interval polynomials and Kharitonov's theorem
    family, case             the uncertain polynomial over a box; case files
    routh, expr, exact       exact Routh array; safe formula parser; exact numbers
    errors                   the error hierarchy

Results are frozen dataclasses; exact numbers stay ``fractions.Fraction`` until rendered.
"""

from __future__ import annotations

__version__ = "0.1.0"

from .case import Case as Case
from .case import load_case as load_case
from .errors import CaseError as CaseError
from .errors import FormulaError as FormulaError
from .errors import InputError as InputError
from .errors import RobustError as RobustError
from .margin import margin as margin
from .montecarlo import estimate_yield as estimate_yield
from .rank import rank as rank
from .routh import RootCounts as RootCounts
from .routh import RouthTable as RouthTable
from .routh import is_hurwitz as is_hurwitz
from .routh import routh_table as routh_table
from .verdict import CheckResult as CheckResult
from .verdict import Witness as Witness
from .verdict import check as check

__all__ = [
    "Case",
    "CaseError",
    "CheckResult",
    "FormulaError",
    "InputError",
    "RobustError",
    "RootCounts",
    "RouthTable",
    "Witness",
    "__version__",
    "check",
    "estimate_yield",
    "is_hurwitz",
    "load_case",
    "margin",
    "rank",
    "routh_table",
]
