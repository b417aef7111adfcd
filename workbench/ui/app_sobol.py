"""The Sobol explorer: global sensitivity of a site's totals, beside a tornado.

Sobol indices (:func:`workbench.analysis.sensitivity.sobol`) and the one-at-a-time
tornado of the chosen site, receptor and years, with the factors and ranges of the
scenario's ``[sensitivity]`` section; the app's progress bar counts the engine runs in
words ("engine runs for the Sobol indices: 40 of 100", :meth:`Progress.counted`), and a
line of the app keeps the counts of the last analysis.
"""
from __future__ import annotations

import dataclasses
import html

import ipywidgets as widgets
import pandas as pd

from .figure_open import PAGE_FIGURE_WIDTH, page
from .controls import fit_options_width
from .controls import (Progress, SavedText, caution_box, figure_widget, open_with_progress,
                       refresh)
from .figures_sensitivity import sensitivity_figure
from .session import Session

#: Base samples N offered (powers of 2; N (k + 2) evaluations for k factors).
SAMPLES = (16, 32, 64, 128, 256)
#: The outputs offered: label -> (element, quantity).
OUTPUT_CHOICES = {"N total": ("N", "total"), "N dry": ("N", "dry"), "N wet": ("N", "wet"),
                  "S total": ("S", "total"), "S dry": ("S", "dry"), "S wet": ("S", "wet"),
                  "potential acidity": ("S+N", "potential_acidity")}


def factors_html(opt) -> str:
    """The factors of `opt` with their ranges and what each varies [HTML].  Before, the
    line read "Factors and ranges" and gave the names alone."""
    from ..analysis.sensitivity_design import factor_text, range_text
    items = "; ".join(f"<code>{html.escape(n)}</code> {html.escape(range_text(n, r))} "
                      f"({html.escape(factor_text(n))})" for n, r in opt.factors.items())
    return ("<p>Factors and ranges (uniform), from the scenario's <code>[sensitivity]</code> "
            f"section: {items}. Each other factor stays at its base (1, or the "
            "scenario's value).</p>")


class SobolExplorer(SavedText, widgets.VBox):
    """Sobol bars and a tornado for one site, receptor and span of years.

    Attributes
    ----------
    sobol, tornado : pandas.DataFrame
        The last analysis (:func:`~workbench.analysis.sensitivity.sobol`,
        :func:`~workbench.analysis.sensitivity.tornado`), one row per year.
    fig : plotly.graph_objects.FigureWidget
    """

    title = "Sobol indices and tornado"

    def shown_what(self) -> str:
        try:
            return f"{self.site_w.value} · {self.receptor_w.value}"
        except AttributeError:          # while being built
            return ""

    @classmethod
    def from_scenario(cls, scenario_path, **kw) -> "SobolExplorer":
        return open_with_progress(cls, scenario_path, **kw)

    def __init__(self, session: Session, site=None, receptor=None, years=None, output="N total",
                 samples=None, progress=None, run=True):
        self.session = session
        self.settings = session.baseline
        first, last = session.years
        session.check_site(site)
        site = site or session.sites[0]
        years = tuple(years) if years else (session.site_years(site)[1],) * 2
        opt = session.scenario.options["sensitivity"]
        self.progress = progress or Progress()
        self.site_w = widgets.Dropdown(options=session.site_options(), value=site,
                                       description="site")
        fit_options_width(self.site_w)          # names whole: "v01 · Brackwick plantation"
        recs = session.receptors(site)
        self.receptor_w = widgets.Dropdown(options=recs, value=receptor or recs[0],
                                           description="receptor")
        self.years_w = widgets.IntRangeSlider(value=years, min=first, max=last,
                                              description="years", continuous_update=False,
                                              layout=widgets.Layout(width="360px"))
        self.year_w = widgets.Dropdown(description="shown", options=[])
        self.output_w = widgets.Dropdown(options=list(OUTPUT_CHOICES), value=output,
                                         description="total")
        self.samples_w = widgets.Dropdown(options=SAMPLES, value=samples or (
            opt.samples if opt.samples in SAMPLES else 64), description="base samples")
        # "N" alone (SALib's name) read as nitrogen beside "total: N total"
        self.samples_w.tooltip = "N of the Saltelli sampling (SALib): more samples, more engine runs"
        self.run_w = widgets.Button(description="Run analysis", icon="play",
                                    button_style="primary")
        self.bar_w = widgets.Label("")
        self.note_w = widgets.HTML(factors_html(opt))
        self.sobol = pd.DataFrame()
        self.tornado = pd.DataFrame()
        self.idle_w = widgets.HTML("")       # factors without effect here, and why
        self.shown = None      # (site, receptor, years) of the last analysis
        self._moved = ""       # the sentence saying the years moved into a site's record
        self.fig = figure_widget(self._figure())
        self.site_w.observe(self._on_site, "value")
        for w in (self.site_w, self.receptor_w, self.years_w, self.samples_w):
            w.observe(self._stale, "value")
        self.run_w.on_click(lambda _: self.run())
        for w in (self.output_w, self.year_w):
            w.observe(lambda c: self._draw(), "value")
        self.years_w.add_class("wb-years")
        head = widgets.HBox([self.site_w, self.receptor_w, self.years_w],
                            layout=widgets.Layout(flex_flow="row wrap"))
        from .controls import wrap_labels_style
        super().__init__([widgets.HTML("<h3>Sobol indices and tornado</h3>"), wrap_labels_style(),
                          caution_box(),
                          head, widgets.HBox([self.output_w, self.year_w, self.samples_w]),
                          widgets.HBox([self.run_w, self.progress]), self.note_w, self.bar_w,
                          self.idle_w, page(self.fig)])
        from .controls import fit_descriptions
        fit_descriptions(self)                # "base samples" was cut to "base sam..."
        from .export_controls import FigureExport      # every figure as PNG/SVG/HTML
        self.figure_export = FigureExport(lambda: {"indices": self.fig}, "sobol")
        self.children = (*self.children, self.figure_export)
        if run:
            self.run()

    def _on_site(self, change):
        self.receptor_w.options = self.session.receptors(self.site_w.value)
        self.receptor_w.value = self.receptor_w.options[0]
        # years outside the site's record (opened late, closed early): moved inside it
        years, moved = self.session.years_for(self.site_w.value, self.years_w.value)
        self._moved = moved      # kept in the progress line until the next analysis
        if moved:
            self.years_w.value = years
            self.progress.step(moved, 0.0)

    def _stale(self, change=None):
        """A control of the analysis changed after the last run: the figure keeps the
        last run's site, receptor and years until "Run analysis", and says so."""
        if self.shown:
            site, rec, (y0, y1) = self.shown
            lead = f"{self._moved}; " if self._moved else ""
            self.progress.step(f"{lead}changed: press Run analysis (the figure shows "
                               f"{site} · {rec} · {y0 if y0 == y1 else f'{y0}-{y1}'})", 0.0)

    def _figure(self):
        el, quantity = OUTPUT_CHOICES[self.output_w.value]
        site, receptor = self.shown[:2] if self.shown else (self.site_w.value,
                                                            self.receptor_w.value)
        cols = ["site", "receptor", "period", "element", "quantity", "factor"]
        sob = self.sobol if len(self.sobol) else pd.DataFrame(
            columns=cols + ["S1", "S1_conf", "ST", "ST_conf", "note"])
        tor = self.tornado if len(self.tornado) else pd.DataFrame(
            columns=cols + ["low", "high", "base", "output_low", "output_high", "output_base",
                            "unit", "note"])
        # a width of its own: beside an open file browser plotly drew it at 700 px
        return sensitivity_figure(sob, tor, site, receptor, self.year_w.value, el,
                                  quantity).update_layout(width=PAGE_FIGURE_WIDTH)

    def _draw(self):
        refresh(self.fig, self._figure())

    def _idle_text(self, site, rec, y0, y1) -> str:
        """Which factors moved nothing at this site and why (a species not measured, a
        particle caught by a bulk collector): their bars are empty, not small."""
        from .no_effect import idle_factors_text
        from .summaries import component_rates
        res = self.session.run(self.settings, site, y0, y1, "year", rec)
        return idle_factors_text(self.tornado, component_rates(res.years, site, rec))

    def run(self):
        """Compute the indices and the tornado of the chosen site, receptor and years."""
        from ..analysis import sensitivity as S
        site, rec = self.site_w.value, self.receptor_w.value
        y0, y1 = self.years_w.value
        self._moved = ""
        study = self.session.study_for(site, y0, y1)
        start, end = self.session.bounds(y0, y1)
        st = self.settings.for_site(site)        # its study holds this site only
        opt = dataclasses.replace(self.session.scenario.options["sensitivity"],
                                  samples=int(self.samples_w.value), sites=(site,),
                                  receptors=(rec,))
        # the bulk collector's factor where the site has bulk samples under scale_wet
        opt = S.with_bulk_factor(opt, st.budget, study.catalogue(st.overrides))
        base = {"wet": st.wet, "dry": st.dry, "budget": st.budget,
                "fixed_velocity": dict(st.fixed_velocity)}
        kw = {"resolution": "year", "start": start, "end": end, "receptors": [rec],
              "overrides": st.overrides}
        self.bar_w.value = ""
        counts = {}

        def counted(what, span):      # the count in words, in the progress bar and bar_w
            def say(text):
                counts[what] = text
                self.bar_w.value = "; ".join(counts.values())
            return lambda items: self.progress.counted(items, what, span, echo=say)
        self.progress.start("Sobol analysis")
        self.sobol = S.sobol(study, base, opt, kw,
                             counted("engine runs for the Sobol indices", (0.05, 0.8)))
        self.tornado = S.tornado(study, base, opt, kw,
                                 counted("engine runs for the tornado", (0.8, 1.0)))
        self.shown = (site, rec, (y0, y1))
        from ..analysis.sensitivity_design import SAMPLES_ENOUGH
        few = ""
        if opt.samples < SAMPLES_ENOUGH:      # a first look: say so beside the bars
            few = (f"Caution: N = {opt.samples} base samples is below {SAMPLES_ENOUGH}: the "
                   "indices are a first look, not a ranking (the error bars show how wide). ")
        self.idle_w.value = html.escape(few + self._idle_text(site, rec, y0, y1))
        years = sorted(set(self.sobol["period"].astype(str))) or [str(y1)]
        self.year_w.options = years
        self.year_w.value = years[-1]
        self._draw()
        self.progress.done("analysis done")
        return self.sobol

