"""The critical-loads explorer: a site's deposition against its critical load function,
and what-if cuts of S, oxidized N and reduced N (see :mod:`workbench.analysis.whatif`).
"""
from __future__ import annotations

import html

import ipywidgets as widgets
import numpy as np
import pandas as pd

from ..analysis.exceedance import (REGIONS, acidity_exceedance, not_determined,
                                   nutrient_n_exceedance)
from ..analysis.trends import MIN_YEARS
from ..analysis.whatif import (GROUP_TEXT, GROUPS, MODES, group_deposition, path_table, percent_up,
                               plain_statement)
from ..io.critical_loads import ACIDITY_KEYS
from .figure_open import page
from .controls import fit_options_width
from .controls import (Progress, SavedText, caution_box, figure_widget, open_with_progress,
                       refresh, table_html)
from .figures import from_spec
from .figures_analysis import clf_spec
from .session import Session
from .summaries import RANKABLE, total_rates

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
#: Columns of the path shown under the figure.
PATH_COLUMNS = ("fraction", "cut_S", "cut_NOx", "cut_NHx", "s_dep_eq_ha_yr", "n_dep_eq_ha_yr",
                "ex_acidity_eq_ha_yr", "ex_nutrient_n_eq_ha_yr")


#: Headings of the path table as shown (the cuts in %, like the sliders; every number
#: its unit).
PATH_HEADINGS = {"fraction": "share of the cuts [%]", "cut_S": "cut S [%]",
                 "cut_NOx": "cut oxidized N [%]", "cut_NHx": "cut reduced N [%]",
                 "s_dep_eq_ha_yr": "S deposition [eq/ha/yr]",
                 "n_dep_eq_ha_yr": "N deposition [eq/ha/yr]",
                 "ex_acidity_eq_ha_yr": "acidity exceedance [eq/ha/yr]",
                 "ex_nutrient_n_eq_ha_yr": "nutrient-N exceedance [eq/ha/yr]"}


#: Added to the heading of an exceedance resting on a partial deposition.
LOWER_HEADING = " (deposition partial: a lower bound, 0 not determined)"


def path_display(path: pd.DataFrame, lower=False, lower_n=False) -> pd.DataFrame:
    """The what-if path as the table under the figure: fractions [1] as percent [%],
    headings in words with units (the table read "cut_S 0.025" beside a slider of %).

    `lower` (S or N partial) and `lower_n` (N partial), as :func:`lower_bound`: the
    acidity and the nutrient-N exceedance columns say in their headings that they rest
    on a partial deposition (a 0 there is not determined, as the line above the figure
    says; the table showed a bare 0 under "acidity exceedance not determined").

    A row that ends an exceedance (``ends_exceedance``) gives its percents rounded up to
    a whole percent by :func:`workbench.analysis.whatif.percent_up`, as the sentence
    above it does (the table read 33.3 where the sentence said "34 %"); the other rows
    are points of the path, shown as they are."""
    t = path[list(PATH_COLUMNS)].copy()
    ends = (path["ends_exceedance"].to_numpy(bool) if "ends_exceedance" in path
            else np.zeros(len(path), bool))
    for c in ("fraction", "cut_S", "cut_NOx", "cut_NHx"):
        t[c] = np.where(ends, percent_up(t[c].to_numpy(float)), 100.0 * t[c].to_numpy(float))
    heads = dict(PATH_HEADINGS)
    if lower:
        heads["ex_acidity_eq_ha_yr"] += LOWER_HEADING
    if lower_n:
        heads["ex_nutrient_n_eq_ha_yr"] += LOWER_HEADING
    return t.rename(columns=heads)


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
        self.shares_w = RangeSharesPanel(self.range_shares, lambda: (
            self.site_w.value, self.receptor_w.value, self.year_w.value))
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
            f"<p>Deposition S {first['s_dep_eq_ha_yr']:.0f}, N {first['n_dep_eq_ha_yr']:.0f} "
            f"eq/ha/yr{' (partial: a lower bound)' if lower else ''}: "
            f"{html.escape(self.exceedance_words)}.</p>"
            f"<p><b>{html.escape(self.statement)}</b></p>")
        refresh(self.fig, _sized(clf_spec(loads, first["s_dep_eq_ha_yr"],
                                          first["n_dep_eq_ha_yr"], self.path, where,
                                          MODES[mode], ranges=row)))
        self.table_w.value = table_html(path_display(self.path, lower, lower_n), fill=True)
        return self.statement


def lower_bound(years_ds, site, receptor, period, elements=("S", "N")) -> bool:
    """Whether the total of one of `elements` of the period lacks a component (status
    ``partial`` or components named missing): that deposition, and so an exceedance
    resting on it, is a lower bound (the rule of ``exceedance.csv``,
    :func:`workbench.analysis.exceedance.not_determined`): S and N for acidity, N alone
    for nutrient N."""
    t = total_rates(years_ds, site, receptor, [str(period)])
    t = t[(t["pathway"] == "total") & t["element"].isin(elements)]
    return bool((t["status"].eq("partial") | t["missing"].str.strip().ne("")).any())


def exceedance_words(value, lower, region="") -> str:
    """An exceedance [eq ha-1 yr-1] in words: ``not determined`` where it is 0 on a
    partial deposition, ``at least`` where it is positive on one.

    >>> exceedance_words(0.0, True)
    'not determined (0 on a partial deposition, which is a lower bound)'
    >>> exceedance_words(12.4, True, "reduce S only")
    'at least 12 eq/ha/yr (reduce S only)'
    >>> exceedance_words(0.0, False, "not exceeded")
    '0 eq/ha/yr (not exceeded)'
    """
    if not np.isfinite(value):
        return "not determined"
    if not_determined(value, lower):
        return "not determined (0 on a partial deposition, which is a lower bound)"
    text = f"{'at least ' if lower and value > 0 else ''}{value:.0f} eq/ha/yr"
    return text + (f" ({region})" if region else "")


def status_note(years_ds, site, receptor, period) -> str:
    """A warning when the S or N total of the period is not complete: a partial total
    (a species without data) is a lower bound of the deposition, so an exceedance may be
    missed; a flagged one is read with care.  Empty text when both are complete."""
    t = total_rates(years_ds, site, receptor, [str(period)])
    t = t[t["pathway"] == "total"]
    out = []
    for _, r in t.iterrows():
        if r["status"] in RANKABLE:
            continue
        what = f"{r['element']} total {r['status']}"
        if r["missing"].strip():
            what += f" (no {', '.join(r['missing'].split())})"
        out.append(what)
    if not out:
        return ""
    return (f"Read with care: {'; '.join(out)} in {period}. A partial total leaves out "
            "species without data, so the deposition and its exceedance may be higher; "
            "a flagged one has components flagged (site budget explorer, budget.csv notes).")


def _range_text(row: dict, draws: int, lower=False, has=None, lower_n=None) -> str:
    """The 5-95 % range and the probabilities of exceedance of a row of
    :func:`workbench.analysis.exceedance.exceedance_probability`, in words.

    `lower`: the deposition is partial, so a probability left empty there is "not
    determined" (no draw exceeds the lower bound); `has`: {"acidity": bool,
    "nutrient-N": bool}, whether the receptor has that critical load (a probability
    of a load it lacks is not said); `lower_n`: the N total is partial (the nutrient-N
    probability's bound; default `lower`).

    >>> _range_text({"p_exceed_acidity": np.nan, "p_exceed_nutrient_n": 0.25}, 10, True)
    ' 5-95 % range of 10 Monte Carlo draws: S n/a, N n/a eq/ha/yr; probability of acidity exceedance not determined (no draw exceeds the partial deposition, a lower bound); probability of nutrient-N exceedance at least 0.25.'
    """
    def pair(name):
        lo, hi = row.get(f"{name}_p05", np.nan), row.get(f"{name}_p95", np.nan)
        return f"{lo:.0f}-{hi:.0f}" if np.isfinite([lo, hi]).all() else "n/a"
    has = has or {}
    bound = {"acidity": lower, "nutrient-N": lower if lower_n is None else lower_n}
    out = (f" 5-95 % range of {draws} Monte Carlo draws: S {pair('s_dep_eq_ha_yr')}, "
           f"N {pair('n_dep_eq_ha_yr')} eq/ha/yr;")
    for name, what in (("p_exceed_acidity", "acidity"), ("p_exceed_nutrient_n", "nutrient-N")):
        if not has.get(what, True):
            continue
        p = row.get(name, np.nan)
        if np.isfinite(p):
            out += (f" probability of {what} exceedance {'at least ' if bound[what] else ''}"
                    f"{p:.2f};")
        elif bound[what]:
            out += (f" probability of {what} exceedance not determined (no draw exceeds the "
                    "partial deposition, a lower bound);")
        else:
            out += f" probability of {what} exceedance not known;"
    return out.rstrip(";") + "."


def _sized(spec: dict) -> dict:
    """`spec` with the width of a figure in a page box
    (:data:`~workbench.ui.figure_open.PAGE_FIGURE_WIDTH`).  Defect (chromium, 1,000 px
    window, file browser open): without a width plotly drew the critical load function
    at 700 px in a 568 px output area, its N axis cut at the right."""
    from .figure_open import PAGE_FIGURE_WIDTH
    return {**spec, "layout": {**spec.get("layout", {}), "width": PAGE_FIGURE_WIDTH}}


def network_analysis_table(results: dict, catalogue, unit="kg/ha/yr",
                           parts=None, serial=False) -> "pd.DataFrame":
    """Trend and exceedance columns of the network overview, per site on its own surface.

    Parameters
    ----------
    results : dict
        site -> ``Result`` of a yearly run of that site.
    catalogue : SiteCatalogue
        The sites (own land use and critical loads).
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS`: the unit of the trend slopes
        (``eq/ha/yr`` gives eq ha-1 yr-1 per yr; the p value and the years are the same
        in every unit).  The exceedances stay in eq/ha/yr (the critical loads' unit).
    parts : DataFrame, optional
        :func:`network_analysis_parts` of the same runs (computed when not given), so
        that a change of unit formats the same numbers again.
    serial : bool
        Add to each trend the p corrected for serially correlated years (Hamed and Rao
        1998, :func:`serial_text`); `parts` must then hold ``{el}_p_hamed_rao``.

    Returns
    -------
    DataFrame
        site, receptor; ``S_trend`` and ``N_trend`` (Sen slope of the annual totals
        [unit per yr], with p and "not valid" when fewer than the minimum of complete
        years); the span's ``ex_acidity_eq_ha_yr``, ``ex_nutrient_n_eq_ha_yr``,
        ``totals_status`` (the budget's own status of the S and N totals,
        :func:`totals_status`: it showed exceedance.csv's status, which counts a partial
        total as flagged) and ``exceedance_note`` (the note of ``exceedance.csv``: an
        empty exceedance on a partial deposition is "not determined", a positive one a
        lower bound; the table showed "–" and a bare number there).
    """
    import pandas as pd

    from .summaries import to_unit
    if parts is None:
        parts = network_analysis_parts(results, catalogue,
                                       "hamed_rao" if serial else None)
    rows = []
    for _, p in parts.iterrows():
        row = {"site": p["site"], "receptor": p["receptor"]}
        for el in ("S", "N"):
            n = p[f"{el}_n_years"]
            if not np.isfinite(n):
                row[f"{el}_trend"] = "–"
                continue
            n = int(n)
            years_text = f"{n} complete year{'' if n == 1 else 's'}"
            slope = p[f"{el}_slope_kg_ha_yr"]
            if not np.isfinite(slope):                # too few years for a slope
                row[f"{el}_trend"] = f"no slope: {years_text}"
                continue
            # kg/ha/yr of the element -> the unit shown: the factor of a yearly rate
            factor = float(to_unit(1.0, el, unit) / to_unit(1.0, el, "kg/ha/yr"))
            row[f"{el}_trend"] = (
                f"{slope * factor:+.3g} {trend_unit(el, unit)} per yr (p {p[f'{el}_p']:.2g}"
                + (serial_text(p.get(f"{el}_p_hamed_rao", np.nan), n,
                               bool(p.get(f"{el}_p_hamed_rao_held", False)))
                   if serial else "")
                + ("" if p[f"{el}_valid"] else
                   f"; indicative only: {years_text}, a valid trend needs {MIN_YEARS}")
                + (f"; crosses a change of method: {p[f'{el}_method_changes']}"
                   if p.get(f"{el}_method_changes") else "")
                + ")")
        row.update(ex_acidity_eq_ha_yr=p["ex_acidity_eq_ha_yr"],
                   ex_nutrient_n_eq_ha_yr=p["ex_nutrient_n_eq_ha_yr"],
                   totals_status=p.get("totals_status", ""),
                   exceedance_note=p["exceedance_note"])
        rows.append(row)
    return pd.DataFrame(rows, columns=["site", "receptor", "S_trend", "N_trend",
                                       "ex_acidity_eq_ha_yr", "ex_nutrient_n_eq_ha_yr",
                                       "totals_status", "exceedance_note"])


#: Years below which the serial correction of the annual test sees only a strong
#: lag-1 correlation (|rho_1| > 1.96/sqrt(n): 0.39 at 25 years), so that a corrected p
#: equal to the plain one is no evidence of independent years (docs/methods_analysis.md,
#: our reading, not a published rule).
SERIAL_MIN_YEARS = 25


def serial_text(p_corrected: float, n_years: int, held: bool = False) -> str:
    """The words a trend gains with the serial correction: the corrected p, and the
    caution where the record is shorter than :data:`SERIAL_MIN_YEARS` years.  `held`:
    the corrected p is held at the smallest p any order of the `n_years` values allows
    (trends.csv's ``p_min_exact``; the correction gave less).

    >>> serial_text(0.31, 8)
    '; p 0.31 if the years are correlated (Hamed-Rao), weak: 8 years, needs ~25'
    >>> serial_text(8 / 720, 6, held=True)
    '; p 0.011 if the years are correlated (Hamed-Rao; the smallest p of any order of 6 values, the correction gave less), weak: 6 years, needs ~25'
    >>> serial_text(float("nan"), 30)
    '; no correlated-years test (too few or tied values)'
    """
    if not np.isfinite(p_corrected):
        return "; no correlated-years test (too few or tied values)"
    out = (f"; p {p_corrected:.2g} if the years are correlated (Hamed-Rao"
           + (f"; the smallest p of any order of {n_years} values, the correction gave less)"
              if held else ")"))
    if n_years < SERIAL_MIN_YEARS:
        out += f", weak: {n_years} years, needs ~{SERIAL_MIN_YEARS}"
    return out


def trend_unit(element: str, unit: str) -> str:
    """The unit of a yearly rate of `element` as a trend's text says it.

    >>> trend_unit("S", "kg/ha/yr"), trend_unit("N", "eq/ha/yr"), trend_unit("N", "mmol/m2/yr")
    ('kg S/ha/yr', 'eq/ha/yr', 'mmol N/m2/yr')
    """
    amount, _, rest = unit.partition("/")
    return f"{amount} {element}/{rest}" if amount in ("kg", "mmol") else unit


def totals_status(table, receptor) -> str:
    """The budget's own status of the span's S and N totals of `receptor` (docs/budget.md,
    "Status"), with the components each lacks: ``"S complete, N partial (no NO2)"``;
    one word where both totals have it and lack nothing (``"complete"``); ``""`` without
    a span total.  The exceedance's status (``exceedance.csv``) counts a partial total as
    flagged; this column says which it is.

    >>> import pandas as pd
    >>> t = pd.DataFrame({"period": "span", "receptor": "lake", "pathway": "total",
    ...                   "species": "all", "element": ["S", "N"],
    ...                   "status": ["complete", "partial"],
    ...                   "missing_components": ["", "NO2"]})
    >>> totals_status(t, "lake")
    'S complete, N partial (no NO2)'
    """
    span = table[(table["period"].astype(str) == "span") & (table["receptor"] == receptor)
                 & (table["pathway"] == "total") & (table["species"] == "all")]
    words = []
    for _, r in span.iterrows():
        m = r.get("missing_components")
        lack = ", ".join(m.split()) if isinstance(m, str) else ""
        words.append((str(r["element"]), str(r["status"]),
                      f" (no {lack})" if lack and r["status"] != "missing" else ""))
    if not words:
        return ""
    words.sort(key=lambda w: ("S", "N").index(w[0]) if w[0] in ("S", "N") else 2)
    if len({w[1] for w in words}) == 1 and not any(w[2] for w in words):
        return words[0][1]
    return ", ".join(f"{el} {st}{lack}" for el, st, lack in words)


def network_analysis_parts(results: dict, catalogue,
                           serial_correction=None) -> "pd.DataFrame":
    """The numbers behind :func:`network_analysis_table`, in no unit of display.

    `serial_correction`: ``"hamed_rao"`` adds ``{el}_p_hamed_rao`` (trends.csv's
    ``p_value_hamed_rao``: the annual test's p with the variance correction of Hamed and
    Rao 1998 for serially correlated years; NaN where no test) and
    ``{el}_p_hamed_rao_held`` (True where that p is held at the smallest p any order of
    the values allows, trends.csv's ``p_min_exact``) per element; None (the default)
    leaves them out.

    Returns
    -------
    DataFrame
        site, receptor; per element ``{el}_slope_kg_ha_yr`` (Sen slope [kg ha-1 yr-1 per
        yr], NaN without a slope), ``{el}_p``, ``{el}_valid``, ``{el}_n_years`` (NaN
        without a trend row), ``{el}_method_changes`` (the changes of method the trend's
        years cross, trends.csv's ``method_changes``); ``ex_acidity_eq_ha_yr``,
        ``ex_nutrient_n_eq_ha_yr``
        [eq ha-1 yr-1], ``exceedance_status`` of the span (exceedance.csv's status: a
        partial total counts as ``flagged`` there; "no critical loads" without them) and
        ``exceedance_note`` (its note in exceedance.csv); ``totals_status``: the budget's
        own status of the span's S and N totals (:func:`totals_status`, ``S complete, N
        partial (no NO2)``), the table's "status of the totals".
    """
    import pandas as pd

    from ..analysis.exceedance import NO_CRITICAL_LOADS, exceedance_table
    from ..analysis.trends import P_HELD, change_notes, trend_table
    rows = []
    for site, res in results.items():
        own = catalogue[site].land_use
        row = {"site": site, "receptor": own}
        years = res.table[(res.table["period"].astype(str) != "span")
                          & (res.table["receptor"] == own) & (res.table["pathway"] == "total")
                          & (res.table["species"] == "all")]
        tr = trend_table(years, changes=change_notes([catalogue[site]]),
                         serial_correction=serial_correction)
        tr = tr[tr["values"] == "all"] if len(tr) else tr
        for el in ("S", "N"):
            t = tr[tr["element"] == el] if len(tr) else tr
            r = t.iloc[0] if len(t) else {}
            row[f"{el}_slope_kg_ha_yr"] = float(r.get("sen_slope_per_yr", np.nan))
            row[f"{el}_p"] = float(r.get("p_value", np.nan))
            row[f"{el}_valid"] = bool(r.get("valid", False))
            row[f"{el}_n_years"] = float(r.get("n_years", np.nan))
            if serial_correction:
                row[f"{el}_p_hamed_rao"] = float(r.get("p_value_hamed_rao", np.nan))
                # held at the smallest p any order of the values allows (trends.csv's
                # p_min_exact; its note says so): the correction asked for less.  Not
                # p == p_min: the plain exact p of a monotone series is that p too
                row[f"{el}_p_hamed_rao_held"] = P_HELD.split("{")[0] in str(r.get("note", ""))
            changes = r.get("method_changes", "")
            row[f"{el}_method_changes"] = changes if isinstance(changes, str) else ""
        ex = exceedance_table(res, catalogue)
        ex = ex[(ex["site"] == site) & (ex["receptor"] == own) & (ex["period"] == "span")]
        if len(ex) and ex.iloc[0]["note"] != NO_CRITICAL_LOADS:
            e = ex.iloc[0]
            row.update(ex_acidity_eq_ha_yr=e["ex_acidity_eq_ha_yr"],
                       ex_nutrient_n_eq_ha_yr=e["ex_nutrient_n_eq_ha_yr"],
                       exceedance_status=e["status"], exceedance_note=e["note"])
        else:
            row.update(ex_acidity_eq_ha_yr=np.nan, ex_nutrient_n_eq_ha_yr=np.nan,
                       exceedance_status="no critical loads",
                       exceedance_note="no critical loads for this receptor")
        row["totals_status"] = totals_status(res.table, own)
        rows.append(row)
    return pd.DataFrame(rows)


def partial_statement(statement: str, names=("acidity", "nutrient-N")) -> str:
    """The what-if `statement` of a partial deposition (a lower bound): "There is no
    acidity exceedance." said plainly contradicted the line above it ("not determined")
    and the Monte Carlo probability of exceedance beside it; it becomes "no exceedance
    of the deposition as measured", and a closing sentence says the cuts may be larger.
    `names`: the exceedances that rest on the partial total (nutrient N rests on N alone,
    so a partial S leaves its statement as it is)."""
    for name in names:
        statement = statement.replace(
            f"There is no {name} exceedance.",
            f"No {name} exceedance of the deposition as measured, which is partial: not "
            "determined (the whole deposition may exceed).")
    return statement + (" The deposition is partial (a lower bound), so the cuts needed may "
                        "be larger.")
