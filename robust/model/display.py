"""Rich display in a notebook (Jupyter): the ``_repr_html_`` of cases and results.

The markup belongs to the renderers (:mod:`robust.render.notebook`, which reuses the report's
blocks and their HTML), and the renderers sit above the model and the analyses. A notebook
asks an object for HTML only when it shows it, so this mixin reaches the renderer by its
module's name at that moment: the one place below ``render`` that does (tests/test_layout.py
holds it to that), and never on the way of an analysis.
"""

from __future__ import annotations

import importlib

__all__ = ["HtmlDisplay"]

#: The renderer a notebook's display calls.
RENDERER = "robust.render.notebook"


class HtmlDisplay:
    """Mixin: ``_repr_html_`` for a notebook; ``__repr__`` stays the dataclass's own."""

    __slots__ = ()

    def _repr_html_(self) -> str:
        """This object as an HTML fragment (every text escaped)."""
        return importlib.import_module(RENDERER).to_html(self)
