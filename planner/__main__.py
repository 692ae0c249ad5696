"""``python -m planner``: the same entry point as the ``scanplan`` command."""

import sys

from planner.cli import main

if __name__ == "__main__":
    sys.exit(main())
