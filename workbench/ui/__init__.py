"""The workbench's face: plotly figures, ipywidgets apps and what they share.

Modules: ``palette`` (colours), ``summaries`` (the tables behind the figures),
``figures`` (budget, monthly fluxes, sensitivity, network), ``figures_dry`` (Vd diurnal
cycle, resistances), ``figures_wet`` (precipitation-chemistry QA), ``assumptions``
(what a user may change, and the settings of a run), ``session`` (a scenario, its
subset studies, saving and export), ``controls`` (widgets), ``apps`` (site explorer,
sensitivity explorer, network overview).
"""
