"""Progress of long analyses, told to whoever listens (the command line); never part of a result.

An analysis calls :func:`tell` at the points worth showing (a decision starts, a scale was
tested); by default nobody listens and the call costs one context-variable look-up. The
command line listens for the length of one command with :func:`listening`. A context
variable rather than a ``progress=`` parameter threaded through every layer keeps the
analyses' signatures as they are, and keeps two analyses in two threads apart.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar

__all__ = ["Listener", "listening", "tell"]

#: listener(event, facts): event is "decision" (a decision ladder starts) or "tested" (a
#: scale was decided: facts ``scale`` and ``verdict``).
Listener = Callable[[str, dict], None]

_LISTENER: ContextVar[Listener | None] = ContextVar("robust_progress_listener", default=None)


def tell(event: str, **facts: object) -> None:
    """Tell the current listener, if any, that ``event`` happened."""
    listener = _LISTENER.get()
    if listener is not None:
        listener(event, facts)


@contextmanager
def listening(listener: Listener) -> Iterator[None]:
    """Send every :func:`tell` inside the ``with`` block to ``listener``."""
    token = _LISTENER.set(listener)
    try:
        yield
    finally:
        _LISTENER.reset(token)
