"""Analyses that read computed budgets: uncertainty (Monte Carlo on the linear layer,
``uncertainty``, ``layer``), sensitivity (Sobol indices and a tornado, ``sensitivity``),
critical-load exceedance and what-if reductions (``exceedance``, ``whatif``), trends over
the years (``trends``), the tables handed over with a run (``handover``) and the files
they add to a run folder (``outputs``).

The modules are imported by name (``from workbench.analysis import exceedance``); this
file imports nothing, so that each module loads only what it needs.
"""
