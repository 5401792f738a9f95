"""``python -m robust`` and the ``robust`` command: start the command line.

The command line (:mod:`robust.cli`) is imported here, inside :func:`run`, so that an
interrupt while it loads (click, numpy, sympy: a second or more) ends like one later: one
line and exit code 130, no traceback.
"""

import contextlib
import os
import sys

_INTERRUPTED = 130


def _leave_interrupted() -> None:
    """Exit 130 now. An interrupt that lands inside code a library runs through the exec
    builtin marks the interpreter as interrupted even when it is handled, and Python would then end by
    killing itself with SIGINT instead of exiting 130; os._exit leaves no room for that."""
    for stream in (sys.stdout, sys.stderr):
        with contextlib.suppress(OSError, ValueError):  # a closed pipe: nothing more to say
            stream.flush()
    os._exit(_INTERRUPTED)


def run() -> None:
    """Load the command line and run it."""
    try:
        from .cli import main

        main(prog_name="robust")
    except KeyboardInterrupt:  # before the command line took over SIGINT
        with contextlib.suppress(OSError):
            sys.stderr.write("robust: interrupted\n")
        _leave_interrupted()
    except SystemExit as done:
        if done.code == _INTERRUPTED:
            _leave_interrupted()
        raise


if __name__ == "__main__":
    run()
