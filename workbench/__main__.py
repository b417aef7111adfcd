"""``python -m workbench``: the command line (see :mod:`workbench.cli`)."""
import sys

from .cli import main

sys.exit(main())
