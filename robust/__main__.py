"""``python -m robust``: the command line (see :mod:`robust.cli`)."""

from .cli import main

if __name__ == "__main__":
    main()
