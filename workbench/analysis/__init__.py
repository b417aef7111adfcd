"""Analyses that read computed budgets: uncertainty (Monte Carlo on the linear layer),
sensitivity (Sobol indices and a tornado), exceedance and trends.

The modules are imported one by one (``from workbench.analysis import uncertainty``);
this package imports none of them.
"""
