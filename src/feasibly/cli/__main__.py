"""``python -m feasibly.cli``: the same as the ``feasibly`` command."""

import sys

from . import main

if __name__ == "__main__":
    sys.exit(main())
