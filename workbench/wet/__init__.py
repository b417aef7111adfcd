"""Wet deposition: precipitation-chemistry QA, precipitation-weighted means, wet fluxes.

Public API
----------
* :class:`WetOptions` -- every option with its documented default.
* :func:`screen` -- per-sample checks and decisions (dim ``sample``).
* :func:`wet_deposition` -- PWMs, completeness and fluxes (dims ``site``, ``period``).
* :func:`to_table`, :func:`samples_table` -- tidy tables for export.

Modules: :mod:`.qa` (one pure function per check), :mod:`.screening` (the per-sample
decisions), :mod:`.pwm` (weighted means and interval arithmetic), :mod:`.deposition`
(the per-period assembly), :mod:`.carbonate` (CO2 equilibrium), :mod:`.seasalt`
(Keene et al. 1986 ratios), :mod:`.hourly` (sums of hourly meteorology),
:mod:`.options`.  Methods and sources: ``docs/methods_wet.md``.
"""
from .deposition import to_table, wet_deposition
from .options import WetOptions
from .screening import samples_table, screen

__all__ = ["WetOptions", "screen", "wet_deposition", "to_table", "samples_table"]
