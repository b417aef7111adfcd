"""Global sensitivity of the budget totals: Sobol indices and a one-at-a-time tornado.

Factors (scenario section ``[sensitivity]``, table ``factors``: name -> range):

* on the linear layer (no engine run; multipliers, uniform on the range):
  ``vd_<species>`` the Vd of a dry species, ``gauge_catch`` every precipitation
  depth, ``precip_conc`` every precipitation concentration, ``air_conc`` every air
  concentration (a calibration bias; the random per-sample errors are the Monte
  Carlo's, :mod:`.uncertainty`), ``bulk_wet_factor`` every bulk collector's wet-only /
  bulk ratio under ``bulk_correction = "scale_wet"`` (on the bulk samples' part of the
  wet deposition; added to the default factors where a site has bulk samples,
  :func:`with_bulk_factor`);
* inside the engine (each distinct value runs the pipeline, through the stage caches
  of :meth:`workbench.pipeline.Study.run`): ``wetness_rule`` (a list of rules, drawn
  with equal probability), ``fine_fraction_<particle>`` [1] and ``fine_mmd_<particle>``
  [m] of a particle's fine mode, ``z0_<land use>`` [m] the roughness length of a
  receptor class (``DryOptions.roughness``), ``rc_scale_<gas>`` [1] a multiplier of a
  gas's surface resistance (``DryOptions.rc_scale``; [0.5, 2.0] when named with ``[]``),
  ``nh3_gamma_<land use>`` [1] a multiplier of the stomatal NH3 emission potential
  Gamma_s of a class in force at each site (the class default, the scenario's
  ``[dry] nh3_emission_potential`` for the class or ``"<site>/<class>"``, or the site's
  own value in sites.toml: each scaled by the same factor, as the Monte Carlo's G;
  named with ``[]``, +-1 GSD of its ``nh3_gamma_gsd``,
  :func:`.sensitivity_options.nh3_gamma_range`).  ``nh3_gamma_*`` keeps the scenario's
  ``[dry] nh3_treatment``: Gamma_s acts through the bidirectional exchange only, so under
  ``"deposition_only"`` the factor has no effect and its rows say so (:func:`row_note`).
  Before, it switched the bidirectional model on in the runs where it had a value: the
  tornado's low and high ends were bidirectional, its base and every other factor's
  runs deposition-only, so the bar compared two runs of another model than the one the
  scenario reports.  Before that, the factor was Gamma_s itself, its ``[]`` range centred on the class default,
  and a site's own Gamma_s won over it: where the scenario or a site overrode the
  class, the analysis explored values that were not in force, or nothing.

Saltelli's scheme (Sobol sequences, first-order and total indices) and the
estimators are SALib's (Herman and Usher 2017, J. Open Source Softw. 2(9), 97;
Saltelli et al. 2010, Comput. Phys. Commun. 181, 259).  Rows of the Saltelli matrix that
differ only in linear factors share one engine run, so k linear and m engine factors
cost N (2 + m) engine runs at most, not N (k + m + 2).

Where the parts are: :func:`problem`, :func:`saltelli_sample`, :func:`sobol_indices`,
the engine factors (:func:`engine_value`, :func:`apply_engine`, :func:`scaled_gamma`)
and :func:`evaluate` in :mod:`workbench.analysis.sensitivity_model`; :func:`sobol` and
:func:`tornado` in :mod:`workbench.analysis.sensitivity_indices`; the notes of the rows
(:func:`data_notes`, :func:`row_note`), :func:`with_bulk_factor` and
:func:`site_classes` in :mod:`workbench.analysis.sensitivity_notes`;
:func:`write_sensitivity` and the page in :mod:`workbench.analysis.sensitivity_write`;
the options in :mod:`workbench.analysis.sensitivity_options`.  This module re-exports
them all, so that ``workbench.analysis.sensitivity.<name>`` keeps working.
"""
from __future__ import annotations

# Sobol indices and the tornado (defined here before)
from .sensitivity_indices import _cells, _label, sobol, tornado  # noqa: F401
# the model: sample, indices, engine factors, evaluation (defined here before)
from .sensitivity_model import (_salib, apply_engine, engine_value, evaluate,  # noqa: F401
                                linear_outputs, problem, saltelli_sample, scaled_gamma,
                                sobol_indices)
# the notes of the rows and the bulk factor (defined here before)
from .sensitivity_notes import (SPECIES_OF, _reaches, _scales, bulk_sites,  # noqa: F401
                                data_notes, row_note, site_classes, with_bulk_factor)
from .sensitivity_options import (BULK_FACTOR_RANGE, OUTPUT_AMOUNTS, OUTPUTS,  # noqa: F401
                                  PERIOD_UNITS, SensitivityOptions, _default_factors,
                                  factor_kind, output_unit)
# the folder and its page (defined here before)
from .sensitivity_write import (_check_cells, _headline_period, _pick_any,  # noqa: F401
                                _write_sensitivity, sensitivity_html, shown_text,
                                write_sensitivity)
