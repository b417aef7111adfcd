"""The sensitivity explorer and the network overview (see :mod:`workbench.ui.apps`)."""
from __future__ import annotations

import html

import ipywidgets as widgets
import numpy as np
import pandas as pd

from ..ranking import EVERY_COMPONENT
from . import figures
from .assumptions import ASSUMPTIONS, Settings
from .controls import fit_options_width
from .figure_open import PAGE_FIGURE_WIDTH, page
from .controls import (Progress, SavedText, caution_box, figure_widget, open_with_progress,
                       refresh, table_html, wrap_labels_style)
from .session import Session
from .summaries import (UNITS, network_ranking, network_span, network_table,
                        total_heading)

#: Default number of values of a swept number.
SWEEP_STEPS = 6
#: Most values of a swept number.
MAX_STEPS = 15
#: Assumption swept when the explorer opens (a budget-stage one: no Vd recomputed).
FIRST_SWEEP = "fixed_velocity.SO2"
#: Width of each ranking of the network overview [px]: two fit side by side in the
#: output area of a 1,600 px window beside JupyterLab's file browser.
RANKING_WIDTH = 540


def sweep_values(a, low=None, high=None, steps=SWEEP_STEPS) -> list:
    """Values of an assumption to sweep: its choices, or `steps` numbers low..high."""
    if a.kind in ("choice", "bool"):
        return a.values
    lo, hi = (a.sweep if low is None else (low, high))
    return [float(v) for v in np.round(np.linspace(lo, hi, int(steps)), 6)]


def _decimals(x: float, most: int = 6) -> int:
    """Fewest decimals that write `x` exactly (at most `most`)."""
    return next((d for d in range(most + 1) if abs(round(x, d) - x) < 1e-12), most)


def range_grid(bounds) -> tuple:
    """Step and readout format of the range slider of a number with `bounds`.

    A slider's values are its minimum plus whole steps: with a minimum off the step's
    grid (z0: 0.0001 m by 0.01 m) the handles stood at 1.0001 and 2.0001 m while the
    readout, two decimals, said "0.00 - 2.00".  The step is made fine enough for the
    minimum to lie on it, and the readout shows as many decimals as the step.

    Parameters
    ----------
    bounds : (float, float, float)
        ``(min, max, step)`` of the assumption (:attr:`Assumption.bounds`).

    Returns
    -------
    (float, str)
        The slider's step and its ``readout_format``.

    >>> range_grid((0.0, 10.0, 0.01))
    (0.01, '.2f')
    >>> range_grid((0.0001, 5.0, 0.01))
    (0.0001, '.4f')
    >>> range_grid((1.0, 20.0, 0.5))
    (0.5, '.1f')
    """
    lo, _, step = bounds
    digits = max(_decimals(lo), _decimals(step))
    k = lo / step
    if abs(k - round(k)) > 1e-9:              # the minimum is off the step's grid
        step = 10.0 ** -digits
    return step, f".{digits}f"


def shown_value(a, value):
    """A value of an assumption as its control names it: a choice's label ("half the
    limit"), "yes"/"no" for a yes-or-no one (the figure and note said True/False),
    else the value itself."""
    if a.kind in ("choice", "bool") and value is not None:
        return {v: label for label, v in a.choices}.get(value, value)
    return value


class SensitivityExplorer(SavedText, widgets.VBox):
    """Pick one assumption and a range; see how each total responds.

    The baseline (the scenario's setting) is marked; for a number left to the model
    (a fixed velocity not set, the catalogue's roughness) the baseline is drawn as the
    totals of that run.

    Attributes
    ----------
    table : pandas.DataFrame
        The last sweep (``value, total, rate, status``).
    fig : plotly.graph_objects.FigureWidget
    """

    title = "Sensitivity explorer"

    def shown_what(self) -> str:
        try:
            return f"{self.site_w.value} · {self.key_w.value}"
        except AttributeError:          # while being built
            return ""

    @classmethod
    def from_scenario(cls, scenario_path, **kw) -> "SensitivityExplorer":
        return open_with_progress(cls, scenario_path, **kw)

    def __init__(self, session: Session, site=None, years=None, key=FIRST_SWEEP,
                 unit="kg/ha/yr", progress=None, run=True):
        self.session = session
        self.settings: Settings = session.baseline
        first, last = session.years
        site = site or session.sites[0]
        years = tuple(years) if years else (session.site_years(site)[1],) * 2
        self.progress = progress or Progress()
        self.site_w = widgets.Dropdown(options=session.site_options(), value=site,
                                       description="site")
        fit_options_width(self.site_w)          # names whole: "v01 · Brackwick plantation"
        self.receptor_w = widgets.Dropdown(options=session.receptors(site), description="receptor")
        self.years_w = widgets.IntRangeSlider(value=years, min=first, max=last, description="years",
                                              continuous_update=False,
                                              layout=widgets.Layout(width="360px"))
        self.unit_w = widgets.Dropdown(options=list(UNITS), value=unit, description="unit")
        self.key_w = widgets.Dropdown(options=[(f"{a.group}: {a.label}", k) for k, a in ASSUMPTIONS.items()],
                                      value=key, description="assumption",
                                      layout=widgets.Layout(width="560px", max_width="100%"),
                                      style={"description_width": "90px"})
        self.range_w = widgets.FloatRangeSlider(description="range", continuous_update=False,
                                                layout=widgets.Layout(width="560px", max_width="100%"),
                                                style={"description_width": "90px"})
        self.steps_w = widgets.IntSlider(value=SWEEP_STEPS, min=2, max=MAX_STEPS, description="values")
        self.run_w = widgets.Button(description="Run sweep", icon="play", button_style="primary")
        self.note_w = widgets.HTML("")
        self.table_w = widgets.HTML("")
        self.table = pd.DataFrame(columns=["value", "total", "rate", "status"])
        # a width of its own: beside an open file browser plotly drew it at 700 px
        self.fig = figure_widget(figures.sensitivity_curves(self.table, "", None, unit)
                                 .update_layout(width=PAGE_FIGURE_WIDTH))
        self.fig.add_class("wb-sensitivity")
        self._set_range()
        self.key_w.observe(lambda c: self._set_range(), "value")
        self.site_w.observe(self._on_site, "value")
        self.run_w.on_click(lambda _: self.run())
        self.unit_w.observe(lambda c: self.run(), "value")
        self.shown = ""        # what the figure shows (assumption, site, receptor, years)
        self._moved = ""       # the sentence saying the years moved into a site's record
        for w in (self.site_w, self.receptor_w, self.years_w, self.key_w, self.range_w,
                  self.steps_w):
            w.observe(self._stale, "value")
        self.years_w.add_class("wb-years")
        head = widgets.HBox([self.site_w, self.receptor_w, self.years_w, self.unit_w],
                            layout=widgets.Layout(flex_flow="row wrap"))   # none squeezed
        super().__init__([widgets.HTML("<h3>Sensitivity explorer</h3>"), wrap_labels_style(),
                          caution_box(), head,
                          self.key_w, widgets.HBox([self.range_w, self.steps_w],
                                                   layout=widgets.Layout(flex_flow="row wrap")),
                          widgets.HBox([self.run_w, self.progress]), self.note_w, page(self.fig),
                          self.table_w])
        from .export_controls import FigureExport      # every figure as PNG/SVG/HTML
        self.figure_export = FigureExport(lambda: {"curves": self.fig}, "sensitivity")
        self.children = (*self.children, self.figure_export)
        if run:
            self.run()

    def _set_range(self):
        a = ASSUMPTIONS[self.key_w.value]
        numeric = a.kind in ("float", "optional_float")
        self.range_w.layout.display = "" if numeric else "none"
        self.steps_w.layout.display = "" if numeric else "none"
        if numeric:
            lo, hi, _ = a.bounds
            step, fmt = range_grid(a.bounds)
            w = self.range_w
            if lo > w.max:
                w.max, w.min = hi, lo
            else:
                w.min, w.max = lo, hi
            w.step, w.readout_format = step, fmt
            w.value = a.sweep

    def _on_site(self, change):
        self.receptor_w.options = self.session.receptors(self.site_w.value)
        self.receptor_w.value = self.receptor_w.options[0]
        # years outside the site's record (opened late, closed early): moved inside it
        years, moved = self.session.years_for(self.site_w.value, self.years_w.value)
        self._moved = moved      # kept in the progress line until the next sweep
        if moved:
            self.years_w.value = years
            self.progress.step(moved, 0.0)

    def _stale(self, change=None):
        """A control of the sweep changed after the last sweep: the figure stays as it
        was until "Run sweep", so the progress line says what it still shows."""
        if self.shown:
            lead = f"{self._moved}; " if self._moved else ""
            self.progress.step(f"{lead}changed: press Run sweep (the figure shows {self.shown})",
                               0.0)

    def run(self):
        """Sweep the chosen assumption and redraw."""
        a = ASSUMPTIONS[self.key_w.value]
        site, rec, unit = self.site_w.value, self.receptor_w.value, self.unit_w.value
        years = tuple(self.years_w.value)
        self._moved = ""
        lo, hi = self.range_w.value if a.kind in ("float", "optional_float") else (None, None)
        values = sweep_values(a, lo, hi, self.steps_w.value)
        base = a.get(self.settings, site)
        source = ""
        known = self.session.in_force(a.key, self.settings, site) if base is None else None
        if known is not None and known[0] is not None:   # z0 in force: its totals are the
            base, source = known                         # baseline's, drawn as a star
        swept = list(values)
        if base is not None and base not in values:
            values = sorted(values + [base]) if a.kind != "choice" else values
        self.progress.start(f"sweeping {a.label}" + (" (recomputes Vd each time)" if a.stage == "dry" else ""))
        self.table = self.session.sweep(a.key, values, self.settings, site, *years, rec, unit,
                                        progress=self.progress.step)
        shown, base_shown = self.table, base       # a choice by its label, as in its control
        if a.kind in ("choice", "bool"):       # yes/no, not True/False
            shown = self.table.assign(value=self.table["value"].map(lambda v: shown_value(a, v)))
            base_shown = shown_value(a, base)
        model = None
        if base is None:         # left to the model: that run's totals, a line per panel
            b = self.session.sweep(a.key, [None], self.settings, site, *years, rec, unit)
            model = {el: float(b.loc[b["total"] == f"{el}_total", "rate"].iloc[0])
                     for el in ("S", "N")}
        fig = figures.sensitivity_curves(shown, a.label, base_shown, unit,
                                         model_baseline=model)
        span = f"{years[0]}" if years[0] == years[1] else f"{years[0]}-{years[1]}"
        self.shown = f"{a.label} · {site} · {rec} · {span}"
        title = f"Sensitivity of the totals to {self.shown}"
        if len(title) > figures.TITLE_CHARS:     # the where and when on a line of their own
            title = (figures.wrap_text(f"Sensitivity of the totals to {a.label}",
                                       figures.TITLE_CHARS) + f"<br>{site} · {rec} · {span}")
        fig.update_layout(title=title, margin=dict(t=figures.title_room(title)),
                          width=PAGE_FIGURE_WIDTH)
        if base is None:
            self.note_w.value = "Baseline: left to the model or the catalogue (dotted line)."
        else:
            self.note_w.value = f"Baseline: {html.escape(str(base_shown))} (star)." if not source \
                else f"Baseline: {base:.3g}, in force ({html.escape(source)}) (star)."
        if len(values) > len(swept):     # the star is a point of its own on the curves
            outside = not swept[0] <= base <= swept[-1]
            self.note_w.value += (f" Drawn: the {len(swept)} values swept, "
                                  f"{swept[0]:g} to {swept[-1]:g}, and the baseline"
                                  + (" (outside that range)." if outside else "."))
        self.note_w.value += self._no_effect_note(a, values, site, years, rec)
        refresh(self.fig, fig)
        show = shown.pivot_table(index="value", columns="total", values="rate", sort=False)
        notes = {name: figures.status_note(g["status"], g.get("missing", ()))
                 for name, g in shown.groupby("total", sort=False)}
        # every number its unit, and a total that is not whole says so in its heading
        show.columns = [f"{total_heading(c, unit)}{notes.get(c, '')}" for c in show.columns]
        show.columns.name = None
        by_value = sweep_statuses(shown)
        if by_value.nunique() > 1:     # which value each status is at, not only that one is
            show["status of the totals"] = by_value.reindex(show.index).to_numpy()
        self.table_w.value = table_html(show.reset_index().rename(
            columns={"value": a.label if "[" in a.label else f"{a.label} (setting)"}),
            fill=True)       # a wide table scrolls in the column (its last column was cut)
        self.progress.done("sweep done")
        return self.table


    def _no_effect_note(self, a, values, site, years, rec) -> str:
        """Why no total moved over the sweep (:mod:`workbench.ui.no_effect`), as text to
        add to the note; empty when a total moved."""
        from .no_effect import no_effect_text
        from .summaries import component_rates
        rates = self.table.pivot_table(index="value", columns="total", values="rate",
                                       sort=False).to_numpy(float)
        if len(values) < 2 or not np.isfinite(rates).all() or np.ptp(rates, axis=0).any():
            return ""
        by_value = sweep_statuses(self.table)
        if by_value.nunique() > 1:       # the numbers stay, their standing does not
            moved = "; ".join((f"at {v:g}: {st}" if isinstance(v, (int, float))
                               and a.kind != "bool" else f"at {shown_value(a, v)}: {st}")
                              for v, st in by_value.items()
                              if st != by_value.mode().iloc[0])
            return " " + html.escape(
                f"{a.label}: the totals' numbers stay the same over the sweep, their status "
                f"changes ({moved}; the table's last column).")
        res = self.session.run(a.set(self.settings, site, values[0]), site, *years, "year",
                               rec)              # a run of the sweep: the session has it
        b = self.settings.budget
        text = no_effect_text(a.key, a.label, component_rates(res.years, site, rec),
                              self.session.study.catalogue()[site].collector,
                              b.bulk_correction, b.pair_split, b.sulfate_basis)
        return " " + html.escape(text.replace(
            "no effect on the totals", "no effect over the sweep on the totals"))


def sweep_statuses(table: pd.DataFrame) -> pd.Series:
    """The status of the totals at each value of a sweep, in words.

    Parameters
    ----------
    table : DataFrame
        :meth:`Session.sweep` rows (``value``, ``total`` such as ``S_total``, ``status``).

    Returns
    -------
    Series
        By value (in the sweep's order): ``"complete"`` where every total is whole
        (complete or filled; ``"filled"`` where one is filled), else the totals that are
        not, with their status (``"S total flagged, N total flagged"``).
    """
    rows = table[table["total"].astype(str).str.endswith("_total")]
    out = {}
    for value, g in rows.groupby("value", sort=False):
        bad = [f"{str(t).replace('_', ' ')} {st}" for t, st in zip(g["total"], g["status"])
               if st not in figures.WHOLE]
        out[value] = (", ".join(bad) if bad else
                      "filled" if (g["status"] == "filled").any() else "complete")
    return pd.Series(out, dtype=object)


#: Headings of the network's trend and exceedance table as shown (the frame keeps the
#: column names of the handover tables: ``S_trend``, ``ex_acidity_eq_ha_yr``...).
ANALYSIS_HEADINGS = {"S_trend": "S trend", "N_trend": "N trend",
                     "ex_acidity_eq_ha_yr": "acidity exceedance",
                     "ex_nutrient_n_eq_ha_yr": "nutrient-N exceedance",
                     "totals_status": "status of the totals",
                     "exceedance_note": "exceedance note"}

#: Columns of sentences in that table (at least WIDE_COLUMN wide: the table scrolls).
ANALYSIS_WIDE = ("S trend", "N trend", "exceedance note")


#: The network's control of the serial correction of the trends' test.
SERIAL_LABEL = "also the p for correlated years (Hamed-Rao; needs ~25 years)"
#: The line over the trend table while the corrected p is shown.
SERIAL_NOTE = ("Second p: the annual Mann-Kendall test with Var(S) corrected for "
               "serially correlated years (Hamed and Rao 1998). With fewer than about 25 "
               "years only a strong year-to-year correlation is seen, and a second p equal "
               "to the first is then no evidence that the years are independent.")


class NetworkOverview(SavedText, widgets.VBox):
    """All sites side by side: annual totals over the years and a ranking.

    One rule for both (:mod:`workbench.ranking`): a site is ranked on its whole-span
    total, the mean of the years drawn with filled markers (a flagged year, a diamond,
    used with a caution); the years drawn with open markers (partial, or failing
    completeness) are left out of it.  A partial whole-span total is ranked apart, never
    beside complete ones; a flagged one is ranked and marked "(flagged)".
    """

    title = "Network overview"

    def shown_what(self) -> str:
        try:
            return f"{self.years[0]}-{self.years[1]}"
        except AttributeError:          # while being built
            return ""

    @classmethod
    def from_scenario(cls, scenario_path, **kw) -> "NetworkOverview":
        return open_with_progress(cls, scenario_path, **kw)

    def __init__(self, session: Session, years=None, unit="kg/ha/yr", progress=None):
        self.session = session
        self.settings = session.baseline
        first, last = session.years
        self.years = tuple(years) if years else (first, last)
        self.progress = progress or Progress()
        self.unit_w = widgets.Dropdown(options=list(UNITS), value=unit, description="unit")
        self.results = {}
        sites = session.sites
        for i, site in enumerate(sites):
            self.progress.step(f"computing {site} ({i + 1} of {len(sites)})", i / len(sites))
            self.results[site] = session.run(self.settings, site, *self.years, "year")
        self.progress.done("network computed")
        self.figs = {}
        self.rankings = {}                 # element -> the ranking drawn (workbench.ranking)
        self._draw(create=True)
        self.unit_w.observe(lambda c: self._draw(), "value")
        from .apps_analysis import network_analysis_parts
        # the trends' and exceedances' numbers once; each unit formats them again
        self._analysis_parts = network_analysis_parts(self.results,
                                                      self.session.study.catalogue(),
                                                      "hamed_rao")
        # the p of the annual test corrected for correlated years (Hamed and Rao 1998),
        # beside the plain one on demand: read on records of ~25 years or more
        self.serial_w = widgets.Checkbox(
            value=False, indent=False, description=SERIAL_LABEL,
            layout=widgets.Layout(width="auto"))
        # no width of its own: the column stretches it (a 100 % width plus the widget's
        # margins ran 4 px past the app); at most the column's width less those margins
        # (beside an open file browser the table made the box wider and cut its
        # heading); a wide table scrolls inside its own box
        self.analysis_w = widgets.HTML(layout=widgets.Layout(max_width="calc(100% - 4px)"))
        self._draw_analysis()
        self.unit_w.observe(lambda c: self._draw_analysis(), "value")
        self.serial_w.observe(lambda c: self._draw_analysis(), "value")
        # the two rankings side by side where the window is wide enough, else one
        # under the other (a plot drawn in a notebook does not know its box's width);
        # each in a box of its own: a figure updating dims the figures of its box
        # (figure_open.UPDATING_CSS), and with both in one box either dimmed both; a
        # box never narrower than its figure (as the figure was: the row scrolls)
        rankings = widgets.HBox([widgets.VBox([self.figs[el]],
                                              layout=widgets.Layout(flex="0 0 auto"))
                                 for el in ("S", "N")],
                                layout=widgets.Layout(width="100%", flex_flow="row wrap"))
        from .inputs_box import input_rows_box           # what became of the input rows
        super().__init__([widgets.HTML("<h3>Network overview</h3>"), caution_box(),
                          input_rows_box(self.session.study.inputs.ledger),
                          widgets.HBox([self.unit_w, self.progress],
                                       layout=widgets.Layout(flex_flow="row wrap")),
                          # PAGE_FIGURE_WIDTH wide; a narrower area scrolls it
                          page(self.figs["totals"]),
                          rankings, self.apart_w, self.serial_w, self.analysis_w],
                         layout=widgets.Layout(width="100%"))
        self.add_class("wb-network")
        from .export_controls import FigureExport      # every figure as PNG/SVG/HTML
        self.figure_export = FigureExport(lambda: self.figs, "network")
        self.children = (*self.children, self.figure_export)

    def _draw_analysis(self):
        """The trend and exceedance table in the unit shown: slopes converted by the
        factor of a yearly rate (kg/ha/yr was kept whatever the unit control said);
        p values and years unchanged; exceedances in eq/ha/yr, the critical loads'."""
        from .apps_analysis import network_analysis_table
        unit = self.unit_w.value
        serial = self.serial_w.value
        self.analysis = network_analysis_table(self.results, None, unit,
                                               parts=self._analysis_parts, serial=serial)
        self.analysis_w.value = (f"<b>Trends of the annual totals [{html.escape(unit)} per yr] "
                                 "and critical-load exceedance of the span [eq/ha/yr]</b>"
                                 + (f"<br><i>{html.escape(SERIAL_NOTE)}</i>" if serial else "")
                                 + table_html(self.analysis.rename(columns=ANALYSIS_HEADINGS),
                                              wide=ANALYSIS_WIDE, fill=True))

    def _no_data_html(self) -> str:
        """The sites of sites.toml without any input row: named, not silently left out
        (30 sites listed, 29 drawn)."""
        none = self.session.sites_without_data()
        if not none:
            return ""
        return ("<p><b>Not computed</b> (listed in sites.toml, no precipitation, air or met "
                f"row): {html.escape(', '.join(none))}</p>")

    def table(self, unit=None) -> pd.DataFrame:
        """Annual totals of every site on its own surface (see :func:`network_table`)."""
        unit = unit or self.unit_w.value
        cat = self.session.study.inputs.catalogue
        # the years each site's whole-span total uses: the markers follow the ranking
        span = network_span(self.results.values(), cat)
        return pd.concat([network_table(r.years, cat, unit, span)
                          for r in self.results.values()], ignore_index=True)

    def totals(self, unit=None) -> pd.DataFrame:
        """The annual totals as a table to read: one row per site and year, for S and N
        the value [unit, named in the column] beside its status and the components
        without data and whether it passes completeness ("fails: " and the first
        criterion failed, with its share and minimum, where not: a flagged total may
        pass or fail), so that a partial, flagged or failing total never reads as a
        complete one.
        Shown with three significant digits (:class:`~workbench.ui.shown_table.
        ShownTable`; it printed six decimals), its values in full precision.
        """
        from .shown_table import ShownTable
        unit = unit or self.unit_w.value
        t = self.table(unit)
        # a total failing completeness: "fails: <the first criterion failed>"
        t = t.assign(completeness=np.where(t["passes"] | (t["status"] == "missing"), "passes",
                                           "fails: " + t["failure"].astype(str)))
        t["completeness"] = np.where(t["status"] == "missing", "-", t["completeness"])
        wide = t.pivot_table(index=["site", "receptor", "period"], columns="element",
                             values=["value", "status", "missing", "completeness"],
                             aggfunc="first", sort=False)
        notes = self._total_notes()
        cols = {}
        for el in ("S", "N"):
            if ("value", el) in wide:
                cols[f"{el} total [{unit}]"] = wide[("value", el)]
                cols[f"{el} status"] = wide[("status", el)]
                cols[f"{el} completeness"] = wide[("completeness", el)]
                cols[f"{el} without data"] = wide[("missing", el)].replace(
                    {"": "-", "nan": "-"}).fillna("-")
                # why: the note of budget.csv's total row (its components' gaps of the
                # period: met gaps, weeks without an air sample, a species blank)
                cols[f"{el} note"] = notes.reindex(
                    [(*k, el) for k in wide.index]).fillna("").to_numpy(dtype=object)
        # the reduced share of N and the potential acidity of the same rows, each with
        # whether it passes completeness (summary.csv's derived sums, yearly rates)
        from .derived_split import completeness_words, network_derived
        d = network_derived(self.results.values(), self.session.study.inputs.catalogue)
        if len(d):
            d = d.assign(period=d["period"].astype(str)).set_index(
                ["site", "receptor", "period"])
            d = d.reindex(pd.MultiIndex.from_arrays(
                [wide.index.get_level_values(k).astype(str) for k in range(3)]))
            cols["reduced share of N [%]"] = d["reduced_share"].to_numpy()
            cols["reduced share completeness"] = completeness_words(d, "reduced_share")
            cols["potential acidity [eq/ha/yr]"] = d["potential_acidity"].to_numpy()
            cols["potential acidity completeness"] = completeness_words(d, "potential_acidity")
        shown = ShownTable(cols)
        shown.attrs["whole_text"] = True             # the reason with its minimum, whole
        return shown

    def _total_notes(self) -> pd.Series:
        """The note of each yearly total row of budget.csv (pathway ``total``,
        species ``all``), by site, receptor, period and element: the reasons the
        budget already gives, not derived again; read from the total rows' notes
        alone (:func:`workbench.tables_budget.total_note_rows`, as the apps' gap
        lines), not from budget.csv's whole table of every site."""
        from ..tables_budget import total_note_rows
        rows = [total_note_rows(r.years) for r in self.results.values()]
        t = pd.concat(rows, ignore_index=True) if rows else pd.DataFrame()
        if not len(t):
            return pd.Series(dtype=object)
        return pd.Series(t["note"].fillna("").astype(str).to_numpy(dtype=object),
                         index=pd.MultiIndex.from_arrays(
                             [t["site"].astype(str), t["receptor"].astype(str),
                              t["period"].astype(str), t["element"].astype(str)]))

    def _draw(self, create=False):
        unit = self.unit_w.value
        t = self.table(unit)
        self.network = t
        # a width of its own: beside an open file browser plotly drew it at 700 px
        new = {"totals": figures.network_totals(t, unit, width=PAGE_FIGURE_WIDTH)}
        # the report's ranking (workbench.ranking): whole-span totals, the full ones
        # together, partial ones apart per missing set, the sites without a total last
        span = network_span(self.results.values(), self.session.study.inputs.catalogue)
        n_years = max(int(r.years.sizes.get("period", 0)) for r in self.results.values())
        apart_rows = []
        for el in ("S", "N"):
            r = network_ranking(span, el, unit, n_years, list(self.results))
            self.rankings[el] = r
            new[el] = figures.network_ranking_bars(r, el, unit).update_layout(
                width=RANKING_WIDTH)
            apart_rows.append(r[r["group"] != EVERY_COMPONENT].assign(element=el))
        apart = pd.concat(apart_rows, ignore_index=True)[
            ["element", "group", "rank", "site", "value", "status", "years used"]]
        for k, f in new.items():
            if create:
                self.figs[k] = figure_widget(f)
            else:
                refresh(self.figs[k], f)
        text = table_html(apart.rename(columns={"value": f"whole span [{unit}]"}),
                          "every site has a whole-span total holding every component")
        if create:
            self.apart_w = widgets.HTML(layout=widgets.Layout(max_width="calc(100% - 4px)"))
        self.apart_w.value = ("<b>Ranked apart (partial: without a component) or not ranked "
                              "(no year passes completeness)</b>" + text
                              + self._no_data_html())
