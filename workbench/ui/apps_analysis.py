"""The critical-loads explorer: a site's deposition against its critical load function,
and what-if cuts of S, oxidized N and reduced N (see :mod:`workbench.analysis.whatif`).

Where the parts are: what the explorer writes (the path table :func:`path_display`,
:func:`exceedance_words`, :func:`status_note`, :func:`lower_bound`, the Monte Carlo
range) in :mod:`workbench.ui.apps_analysis_words`; the network overview's trend and
exceedance columns (:func:`network_analysis_table`, :func:`network_analysis_parts`,
:func:`totals_status`, :func:`serial_text`) and :func:`partial_statement` in
:mod:`workbench.ui.apps_analysis_network`.  This module re-exports them, so that
``workbench.ui.apps_analysis.<name>`` keeps working.
"""
from __future__ import annotations

import html

import ipywidgets as widgets
import numpy as np

from ..analysis.exceedance import REGIONS, acidity_exceedance, nutrient_n_exceedance
from ..analysis.whatif import (GROUP_TEXT, GROUPS, MODES, group_deposition, path_table,
                               plain_statement)
from ..io.critical_loads import ACIDITY_KEYS
from .figure_open import page
from .controls import fit_options_width
from .controls import (Progress, SavedText, caution_box, figure_widget, open_with_progress,
                       refresh, table_html)
from .figures import from_spec
from .figures_analysis import clf_spec
from .session import Session
# the network overview's columns and the partial statement (defined here before)
from .apps_analysis_network import (SERIAL_MIN_YEARS, network_analysis_parts,  # noqa: F401
                                    network_analysis_table, partial_statement,
                                    serial_text, totals_status, trend_unit)
# what the explorer writes (defined here before)
from .apps_analysis_words import (LOWER_HEADING, PATH_COLUMNS, PATH_HEADINGS,  # noqa: F401
                                  _range_text, exceedance_words, gap_note, lower_bound,
                                  path_display, status_note)
from .summaries_budget import gap_lines

#: Draws of the Monte Carlo the explorer offers when the scenario asks for none [1]
#: (the factors are the defaults of :class:`~workbench.analysis.uncertainty.UncertaintyOptions`).
OFFERED_DRAWS = 200

#: The keys of the critical load function of acidity.
ACIDITY = ACIDITY_KEYS
#: What the explorer says of a critical load the receptor does not have.
NO_LOAD_WORDS = {
    "acidity": "not computed (no complete critical load function of acidity in sites.toml)",
    "nutrient-N": "not computed (no nutrient-N critical load in sites.toml)"}

#: Cuts when the explorer opens [1].
FIRST_CUTS = {"S": 0.5, "NOx": 0.5, "NHx": 0.5}


class CriticalLoadsExplorer(SavedText, widgets.VBox):
    """One site, receptor and year against the critical load function, with a what-if path.

    Attributes
    ----------
    parts : xarray.Dataset
        Wet and dry deposition of S, oxidized and reduced N [eq ha-1 yr-1] per year.
    path : pandas.DataFrame
        The last path (:func:`workbench.analysis.whatif.path_table`).
    statement : str
        The last plain statement of what the cuts do.
    fig : plotly.graph_objects.FigureWidget
    """

    title = "Critical loads and what-if cuts"

    def shown_what(self) -> str:
        try:
            return f"{self.site_w.value} · {self.receptor_w.value} · {self.year_w.value}"
        except AttributeError:          # while being built
            return ""

    @classmethod
    def from_scenario(cls, scenario_path, **kw) -> "CriticalLoadsExplorer":
        return open_with_progress(cls, scenario_path, **kw)

    def __init__(self, session: Session, site=None, years=None, progress=None):
        self.session = session
        first, last = session.years
        self.years = tuple(years) if years else (first, last)
        self._years_given = bool(years)
        self.progress = progress or Progress()
        site = site or session.sites[0]
        self.site_w = widgets.Dropdown(options=session.site_options(), value=site,
                                       description="site")
        fit_options_width(self.site_w)          # names whole: "v01 · Brackwick plantation"
        self.receptor_w = widgets.Dropdown(options=session.receptors(site), description="receptor")
        self.year_w = widgets.Dropdown(options=[], description="year")
        pct = dict(min=0, max=100, step=5, continuous_update=False, style={"description_width": "150px"},
                   layout=widgets.Layout(width="420px"))
        self.cut_w = {g: widgets.IntSlider(value=int(100 * FIRST_CUTS[g]),
                                           description=f"cut {GROUP_TEXT[g]} [%]", **pct)
                      for g in GROUPS}
        self.mode_w = widgets.RadioButtons(options=[(v, k) for k, v in MODES.items()],
                                           value="air_and_wet", description="what is cut",
                                           layout=widgets.Layout(width="auto"))
        self.text_w = widgets.HTML("")
        #: why the control just moved changes nothing shown (empty when it does)
        self.effect_w = widgets.HTML("", layout=widgets.Layout(min_height="1.4em"))
        self.effect_w.add_class("wb-no-effect")
        self.table_w = widgets.HTML("")
        # with the apps' template (a bare spec gave plotly's grey default)
        self.fig = figure_widget(from_spec(_sized(clf_spec({}))))
        self.unc_options = self._uncertainty_options(session)
        self.range_w = widgets.Checkbox(
            value=(session.scenario.options.get("uncertainty") or self.unc_options).draws > 0,
            description=f"show the 5-95 % range (Monte Carlo, {self.unc_options.draws} draws)",
            indent=False, layout=widgets.Layout(width="auto"))
        self._draws = None
        from .range_shares_panel import RangeSharesPanel   # where the range comes from
        # total N in eq, as the range above the figure: its "every factor (the range
        # shown)" row read dry N in kg N/ha under "N 1196-5761 eq/ha/yr"
        self.shares_w = RangeSharesPanel(self.range_shares, lambda: (
            self.site_w.value, self.receptor_w.value, self.year_w.value),
            total="N_total", eq=True)
        #: True while the receptor and year lists are refilled: their changes draw nothing.
        #: (Never ``unobserve_all("value")`` on a Dropdown: it also drops ipywidgets' own
        #: value -> index link, and the page then shows an empty drop-down.)
        self._filling = False
        self.site_w.observe(self._on_site, "value")
        for w in (self.receptor_w, self.year_w, self.mode_w, self.range_w,
                  *self.cut_w.values()):
            w.observe(self._on_control, "value")
        super().__init__([widgets.HTML("<h3>Critical loads and what-if cuts</h3>"), caution_box(),
                          # rows that wrap: beside an open file browser (a 568 px output
                          # area) the year was cut and the choice of what is cut drew its
                          # options over one another
                          widgets.HBox([self.site_w, self.receptor_w, self.year_w],
                                       layout=widgets.Layout(flex_flow="row wrap")),
                          widgets.HBox([widgets.VBox(list(self.cut_w.values())), self.mode_w],
                                       layout=widgets.Layout(flex_flow="row wrap")),
                          self.range_w, self.progress, self.effect_w, self.text_w, page(self.fig),
                          self.shares_w, self.table_w])
        from .export_controls import FigureExport      # every figure as PNG/SVG/HTML
        self.figure_export = FigureExport(
            lambda: {f"{self.site_w.value} {self.year_w.value}": self.fig}, "critical-loads")
        self.children = (*self.children, self.figure_export)
        self._load()

    def _on_control(self, change):
        if self._filling:
            return
        self.draw()
        group = next((g for g, w in self.cut_w.items() if w is change["owner"]), None)
        self.effect_w.value = self.no_effect_html(group) if group else ""

    def no_effect_html(self, group) -> str:
        """Why the cut of `group` changes nothing shown (:func:`cut_no_effect_text`) as
        a line of the page, or ``""`` when it changes something."""
        from .no_effect import cut_no_effect_text, missing_species
        from .summaries import component_rates
        if self.path is None:            # no critical load function: the page says so
            return ""
        sel = (self.site_w.value, self.receptor_w.value, self.year_w.value)
        parts = {k: float(v) for k, v in self.parts.sel(
            site=sel[0], receptor=sel[1], period=sel[2]).data_vars.items()}
        comps = component_rates(self.result.years, *sel[:2], [str(sel[2])])
        cuts = {g: w.value / 100.0 for g, w in self.cut_w.items()}
        text = cut_no_effect_text(group, parts, self.loads(), cuts, self.mode_w.value,
                                  missing_species(comps, group))
        return (f"<p style='color:#0072B2'><i>{html.escape(text)}</i></p>" if text else "")

    def _on_site(self, change):
        self._filling = True
        try:
            self.receptor_w.options = self.session.receptors(self.site_w.value)
            self.receptor_w.value = self.receptor_w.options[0]
        finally:
            self._filling = False
        self._load()

    def _load(self):
        """Run the site's yearly budget and split it into the groups that can be cut."""
        self.progress.start(f"budget of {self.site_w.value}")
        # the years of the site's record only (Session.site_years): the scenario's span
        # ran to the year the last weekly sample ends in, and the app opened on that
        # year's two days of data ("There is no acidity exceedance" of a flagged year,
        # the site exceeding in every whole year)
        years, moved = self.session.years_for(self.site_w.value, self.years)
        result = self.session.run(self.session.baseline, self.site_w.value, *years,
                                  resolution="year")
        self.run_years = years
        self.result, self._draws = result, None
        self.shares_w.clear()
        self.effect_w.value = ""
        self.parts = group_deposition(result.years)
        labels = [str(p) for p in self.parts["period"].values]
        self._filling = True
        try:
            self.year_w.options = labels
            self.year_w.value = labels[-1]
        finally:
            self._filling = False
        self.progress.done("ready" + (f"; {moved}" if moved and self._years_given else ""))
        self.draw()

    @staticmethod
    def _uncertainty_options(session):
        """The scenario's ``[uncertainty]`` when it asks for draws, else its factors (or
        the defaults) with :data:`OFFERED_DRAWS` draws."""
        import dataclasses

        from ..analysis.uncertainty import UncertaintyOptions
        opt = session.scenario.options.get("uncertainty") or UncertaintyOptions()
        return opt if opt.draws > 0 else dataclasses.replace(opt, draws=OFFERED_DRAWS)

    def total_draws(self):
        """Monte Carlo draws of the shown site's annual S and N totals (computed once per
        site and years; the site's study only) [eq ha-1 yr-1], see
        :func:`workbench.analysis.uncertainty.monte_carlo`."""
        if self._draws is None:
            from ..analysis.uncertainty import monte_carlo
            self.progress.start(f"Monte Carlo of {self.site_w.value} "
                                f"({self.unc_options.draws} draws)")
            study = self.session.study_for(self.site_w.value, *self.run_years)
            q = monte_carlo(self.result, study, self.unc_options,
                            overrides=self.session.baseline.for_site(self.site_w.value).overrides,
                            years_only=True)
            self._draws = q.total_draws
            self.progress.done("ready")
        return self._draws

    def range_shares(self):
        """Each drawn factor's share of the shown site's ranges, every receptor, year and
        total (the ``range_shares`` stage of the session's graph: computed once per site,
        years and options) [1; kg ha-1],
        :func:`workbench.analysis.range_shares.site_shares`."""
        from ..analysis.range_shares import site_shares
        site = self.site_w.value
        self.progress.start(f"each factor's share of the ranges of {site} "
                            f"({self.unc_options.draws} draws, once more per factor)")
        study = self.session.study_for(site, *self.run_years)
        shares = site_shares(self.session.graph, study, self.result, site, self.unc_options,
                             self.session.baseline.for_site(site).overrides)
        self.progress.done("ready")
        return shares

    def ranges(self, loads, sel, lower=False, lower_n=None) -> dict | None:
        """The exceedance.csv-like row of the shown site-year with the 5-95 % range of S and
        N deposition and the probability of exceedance, or None when the range is off.
        `lower`: the deposition is partial (a lower bound), so a probability of 0 is not
        determined, as in exceedance.csv (it read "probability ... 0.00" here);
        `lower_n`: the N total is partial (nutrient N; default `lower`)."""
        if not self.range_w.value:
            return None
        import pandas as pd

        from ..analysis.exceedance import ACIDITY_KEYS, NUTRIENT_KEY, exceedance_probability
        row = {**sel, **{f"{k}_eq_ha_yr": float(loads.get(k, np.nan))
                         for k in ACIDITY_KEYS + (NUTRIENT_KEY,)}}
        lower_n = lower if lower_n is None else lower_n
        return exceedance_probability(pd.DataFrame([row]), self.total_draws(),
                                      [bool(lower)], [bool(lower_n)]).iloc[0].to_dict()

    def loads(self) -> dict:
        site = self.session.study.catalogue()[self.site_w.value]
        return site.critical_loads_for(self.receptor_w.value)

    def draw(self):
        """Recompute the path and redraw."""
        sel = {"site": self.site_w.value, "receptor": self.receptor_w.value,
               "period": self.year_w.value}
        # the shares of the range: shown with the range, for the receptor and year shown
        self.shares_w.layout.display = "" if self.range_w.value else "none"
        self.shares_w.show()
        parts = {k: float(v) for k, v in self.parts.sel(sel).data_vars.items()}
        loads = self.loads()
        cuts = {g: w.value / 100.0 for g, w in self.cut_w.items()}
        mode = self.mode_w.value
        where = " · ".join(sel.values())
        acid_loads = all(k in loads for k in ACIDITY)
        if not acid_loads and "cl_nut_n" not in loads:
            self.statement = f"{where}: no critical loads in sites.toml."
            self.path = None
            refresh(self.fig, _sized(clf_spec(loads, title=where)))
            self.text_w.value = f"<p>{html.escape(self.statement)}</p>"
            self.table_w.value = ""
            return self.statement
        # a receptor with a nutrient-N load only (a heathland) or an acidity function
        # only (a lake) gets what it has; the other is said to be missing (a heathland
        # read "no complete critical load function" and lost its nutrient-N exceedance)
        full = {**dict.fromkeys(ACIDITY + ("cl_nut_n",), np.nan), **loads}
        self.path = path_table(parts, cuts, full, mode)
        first = self.path.iloc[0]
        ex = acidity_exceedance(first["s_dep_eq_ha_yr"], first["n_dep_eq_ha_yr"],
                                *(full[k] for k in ACIDITY))
        nut = nutrient_n_exceedance(first["n_dep_eq_ha_yr"], full["cl_nut_n"])
        self.status_note = status_note(self.result.years, *sel.values())
        # why a total rests on a gap (met gaps, weeks without an air sample, a species
        # blank): budget.csv's note of the total row, also where its status reads
        # complete or filled; from the total rows' notes alone, as the site explorer's
        # line (budget.csv's whole table was built for it at each change of site)
        self.gap_note = next(iter(gap_lines(self.result.years, sel["site"],
                                            sel["receptor"], [sel["period"]])), "")
        lower = lower_bound(self.result.years, *sel.values())        # S or N partial
        lower_n = lower_bound(self.result.years, *sel.values(), elements=("N",))
        row = self.ranges(loads, sel, lower, lower_n)
        self.range_text = ("" if row is None else
                           _range_text(row, self.unc_options.draws, lower,
                                       {"acidity": acid_loads, "nutrient-N": "cl_nut_n" in loads},
                                       lower_n))
        self.statement = plain_statement(parts, cuts, full, mode, where) + self.range_text
        if lower:
            self.statement = partial_statement(
                self.statement, ("acidity", "nutrient-N") if lower_n else ("acidity",))
        self.exceedance_words = (
            "acidity exceedance " + (exceedance_words(float(ex.exceedance), lower,
                                                      REGIONS[int(ex.region)])
                                     if acid_loads else NO_LOAD_WORDS["acidity"])
            + "; nutrient-N exceedance " + (exceedance_words(float(nut), lower_n)
                                            if "cl_nut_n" in loads
                                            else NO_LOAD_WORDS["nutrient-N"]))
        self.text_w.value = (
            (f"<p style='color:#D55E00'>{html.escape(self.status_note)}</p>"
             if self.status_note else "") +
            (f"<p>{html.escape(self.gap_note)}</p>" if self.gap_note else "") +
            f"<p>Deposition S {first['s_dep_eq_ha_yr']:.0f}, N {first['n_dep_eq_ha_yr']:.0f} "
            f"eq/ha/yr{' (partial: a lower bound)' if lower else ''}: "
            f"{html.escape(self.exceedance_words)}.</p>"
            f"<p><b>{html.escape(self.statement)}</b></p>")
        refresh(self.fig, _sized(clf_spec(loads, first["s_dep_eq_ha_yr"],
                                          first["n_dep_eq_ha_yr"], self.path, where,
                                          MODES[mode], ranges=row)))
        self.table_w.value = table_html(path_display(self.path, lower, lower_n), fill=True)
        return self.statement


def _sized(spec: dict) -> dict:
    """`spec` with the width of a figure in a page box
    (:data:`~workbench.ui.figure_open.PAGE_FIGURE_WIDTH`).  Defect (chromium, 1,000 px
    window, file browser open): without a width plotly drew the critical load function
    at 700 px in a 568 px output area, its N axis cut at the right."""
    from .figure_open import PAGE_FIGURE_WIDTH
    return {**spec, "layout": {**spec.get("layout", {}), "width": PAGE_FIGURE_WIDTH}}
