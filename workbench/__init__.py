"""Deposition workbench: wet and dry deposition budgets of sulfur and nitrogen.

The package is layered: pure physics and chemistry functions (``units``,
``species``, ``wet``, ``surface``, ``drydep``) are imported by the budget and the
scenario runner, which are imported by the writers, the command line and the
widgets.  Nothing in the core imports the I/O or UI layers.
"""

__version__ = "0.1.0"

# the one engine setting that changes no number: threads of the cache-sized blocks
from .threads import get_threads, set_threads  # noqa: E402,F401
