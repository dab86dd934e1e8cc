"""``python -m wallrun``: the same as the ``wallrun`` command."""

import sys

from wallrun.cli import main

if __name__ == "__main__":
    sys.exit(main())
