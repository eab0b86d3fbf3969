"""``python -m dcchar``: the command line (see :mod:`dcchar.cli`)."""

import sys

from .cli import main

__all__ = ["main"]

if __name__ == "__main__":
    sys.exit(main())
