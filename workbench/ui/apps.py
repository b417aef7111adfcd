"""ipywidgets apps composed from the figures: site explorer, sensitivity, network.

Each app is a ``VBox`` (display it as the last line of a cell) built on a
:class:`~workbench.ui.session.Session`.  A change of a control recomputes only the
stages that the assumption touches (the study caches the others: a wet option never
recomputes Vd) and copies the new figures into the displayed ``FigureWidget`` objects
in batched updates.
"""
from __future__ import annotations

import html
import time
from pathlib import Path

import ipywidgets as widgets

from . import figures, figures_dry, figures_wet
from .assumptions import ASSUMPTIONS, Settings
from .controls import fit_options_width
from .controls import (Progress, SavedText, caution_box, figure_widget, make_control,
                       open_with_progress, refresh, set_quietly, table_html, wrap_labels_style)
from .figure_open import NARROW_OUTPUT_PX, PAGE_FIGURE_WIDTH, page  # noqa: F401
from .figure_period import span_label
from .figures_curves import fitted_layout
from .scheme_tab import SchemeTab
from .session import Session, output_dir
from .palette import TEMPLATE
from .summaries import (UNITS, change_line, component_rates, excluded_samples,
                        mean_totals, nh3_line, no_effect_text)
from .summaries_budget import gap_lines     # the total rows' notes, no whole table

#: Tabs of the site explorer below the budget: name -> what the figure needs.
TABS = ("monthly fluxes", "deposition velocity", "resistances", "ion balance",
        "capture efficiency", "excluded samples", "gas schemes")
#: Tabs drawn only when opened (the other gas scheme is computed for them).
LAZY_TABS = ("gas schemes",)
#: Titles of the velocity tabs when no velocities were computed.
NO_VELOCITIES = {"deposition velocity": "no deposition velocities (fixed or no met)",
                 "resistances": "no resistances (fixed velocities or no met)"}
# NARROW_OUTPUT_PX, the output area beside JupyterLab's open file browser [px], the
# narrowest area the explorer is made to fit: defined in figure_open beside
# PAGE_FIGURE_WIDTH (the other apps' figures) and imported above.
#: What a tab's border and padding take of that width [px] (measured likewise).
TAB_PADDING_PX = 36
#: Width of the explorer's figures [px]: they fit a tab in the narrowest output area.
#: plotly 7.1's FigureWidget does not follow its box: a figure without a width drew at
#: plotly's fallback of 700 px in a box of 532 px (seen in chromium), and toggling the
#: file browser or resizing the window did not redraw it; so the width is set.
FIGURE_WIDTH = NARROW_OUTPUT_PX - TAB_PADDING_PX - 12
#: Width of the assumptions' column [px] (never more than the output area).
ASSUMPTIONS_WIDTH = 460


def column_layouts() -> dict:
    """Layouts of the explorer's two columns and of its path boxes: none wider than the
    output area.

    Defect: with JupyterLab's file browser open the output area of a 1,000 px window
    is 568 px wide, and the figure column (at least 690 px) and its 660 px figures ran
    past it (the legends cut).  The figure column now asks for :data:`FIGURE_WIDTH`
    but shrinks to the area; the figures are :data:`FIGURE_WIDTH` wide, and their boxes
    (:func:`workbench.ui.figure_open.page`) scroll rather than cut in a narrower area."""
    return {"assumptions": widgets.Layout(width=f"{ASSUMPTIONS_WIDTH}px", max_width="100%"),
            "figures": widgets.Layout(flex=f"1 1 {FIGURE_WIDTH + 30}px", min_width="0",
                                      max_width="100%"),
            "path": widgets.Layout(width=f"{ASSUMPTIONS_WIDTH - 20}px", max_width="100%")}
#: Gases whose resistances may be shown.
GASES = ("SO2", "HNO3", "NH3", "NO2")


class SiteExplorer(SavedText, widgets.VBox):
    """Budget of one site and some years, with every assumption at hand.

    Parameters
    ----------
    session : Session
    site : str, optional
        Default: the first site with data.
    years : (int, int), optional
        First and last calendar year; default: the last year with data.
    unit : str
        A key of :data:`workbench.ui.summaries.UNITS`.
    progress : Progress, optional
        Reused for the first run (else a new one).

    Attributes
    ----------
    settings : Settings
        The settings in force.
    result : workbench.pipeline.Result
        The last run (monthly ``budget`` and yearly ``years``).
    controls : dict
        Assumption key -> widget.
    figs : dict
        Name -> FigureWidget (``budget`` and the names of :data:`TABS` but
        :data:`LAZY_TABS`).
    schemes : workbench.ui.scheme_tab.SchemeTab
        The "gas schemes" tab (its own figures, drawn when the tab is open).
    latency_s : float
        Time of the last change, from the control to the updated figures [s].
    """

    title = "Site budget explorer"

    def shown_what(self) -> str:
        try:
            return f"{self.site} · {self.receptor_w.value} · {self._span()}"
        except AttributeError:          # while being built
            return ""

    @classmethod
    def from_scenario(cls, scenario_path, **kw) -> "SiteExplorer":
        """Read a scenario (with a progress bar) and open the explorer on it."""
        return open_with_progress(cls, scenario_path, **kw)

    def __init__(self, session: Session, site=None, years=None, unit="kg/ha/yr", progress=None):
        self.session = session
        self.settings: Settings = session.baseline
        sites = session.sites
        site = site or sites[0]
        first, last = session.years
        years = tuple(years) if years else (session.site_years(site)[1],) * 2
        self.progress = progress or Progress()
        self.site_w = widgets.Dropdown(options=session.site_options(), value=site,
                                       description="site")
        fit_options_width(self.site_w)          # names whole: "v01 · Brackwick plantation"
        self.receptor_w = widgets.Dropdown(options=session.receptors(site), description="receptor")
        self.years_w = widgets.IntRangeSlider(value=years, min=first, max=last, step=1,
                                              description="years", continuous_update=False,
                                              layout=widgets.Layout(width="360px"))
        self.unit_w = widgets.Dropdown(options=list(UNITS), value=unit, description="unit")
        # it sets the gas of the "resistances" tab only: its text says so (a bare "gas"
        # under the budget read as if it changed the bars)
        self.gas_w = widgets.Dropdown(options=GASES, value=GASES[0],
                                      description="gas of the resistances tab",
                                      style={"description_width": "initial"})
        self.gas_w.add_class("wb-gas")
        for w, cls_ in ((self.site_w, "wb-site"), (self.receptor_w, "wb-receptor"),
                        (self.years_w, "wb-years"), (self.unit_w, "wb-unit")):
            w.add_class(cls_)
        self.controls = {k: make_control(a, a.get(self.settings, site),
                                         session.in_force(k, self.settings, site))
                         for k, a in ASSUMPTIONS.items()}
        self.change_w = widgets.HTML("", layout=widgets.Layout(min_height="1.6em"))
        self.change_w.add_class("wb-change")
        # why a total rests on a gap, beside the change line (a complete or filled
        # total's note was only in the budget figure's hover)
        self.gaps_w = widgets.HTML("")
        self.gaps_w.add_class("wb-gaps")
        self.nh3_w = widgets.HTML("")          # the NH3 figure used: net or deposition only
        self.bracket_w = widgets.HTML("")      # dry N against its gas/particle bracket
        self.bracket_w.add_class("wb-bracket")
        self.split_w = widgets.HTML("")        # oxidized / reduced N, potential acidity
        self.split_w.add_class("wb-n-split")
        self.message_w = widgets.HTML("")
        self.excluded_w = widgets.HTML("")
        self.monthly_w = widgets.HTML("")      # monthly completeness: strict with weekly samples
        self.latency_s = float("nan")
        self._before = None
        self._drawn = {}
        self.progress.start("first run")
        self.result = self._run()
        self.figs = {"budget": figure_widget(self._figure("budget", TEMPLATE))}
        for name in TABS:
            if name not in LAZY_TABS:
                self.figs[name] = figure_widget(self._figure(name, TEMPLATE))
                self._drawn[name] = self._tab_key(name)
        self.schemes = SchemeTab(self, FIGURE_WIDTH)
        self.figs["budget"].add_class("wb-budget")
        self._totals = self._current_totals()
        self.change_w.value = html.escape(change_line(None, self._totals, self.unit_w.value))
        self.gaps_w.value = self._gaps_html()
        self.nh3_w.value = self._nh3_html()
        self.bracket_w.value = self._bracket_html()
        self.split_w.value = self._split_html()
        self.excluded_w.value = self._excluded_html()
        self.monthly_w.value = self._monthly_html()
        # each figure in a box of its own: opened anew, it keeps its old drawing until
        # the new one has drawn, as the budget does (figure_open.page)
        pages = {n: page(self.figs.get(n)) for n in TABS}
        pages["excluded samples"] = widgets.VBox([page(self.figs["excluded samples"]),
                                                  self.excluded_w])
        pages["monthly fluxes"] = widgets.VBox([page(self.figs["monthly fluxes"]),
                                                self.monthly_w])
        pages["gas schemes"] = self.schemes.page
        self.tabs = widgets.Tab([pages[n] for n in TABS])
        self.tabs.add_class("wb-tabs")           # titles whole (WRAP_LABELS_CSS)
        for i, n in enumerate(TABS):
            self.tabs.set_title(i, n)
        self.progress.done("first run done")
        super().__init__(self._layout())
        from .export_controls import FigureExport      # every figure as PNG/SVG/HTML
        self.figure_export = FigureExport(      # named by what they show: no overwrite
            lambda: {f"{self.site} {self.receptor_w.value} {self._span()} {k}": f
                     for k, f in {**self.figs, **self.schemes.figures()}.items()},
            "site-explorer", note=self.schemes.export_note)
        self.children = (*self.children, self.figure_export)
        self._wire()

    # ------------------------------------------------------------------ layout
    def _layout(self):
        groups = {}
        for k, a in ASSUMPTIONS.items():
            groups.setdefault(a.group, []).append(self.controls[k])
        acc = widgets.Accordion([widgets.VBox(v) for v in groups.values()])
        acc.add_class("wb-assumptions")
        acc.add_class("wb-wrap-labels")          # long labels wrap, never cut
        for i, g in enumerate(groups):
            acc.set_title(i, g)
        out = output_dir()
        cols = column_layouts()
        path_layout = cols["path"]
        self.save_path_w = widgets.Text(value=str(out / "my_scenario.toml"),
                                        description="scenario file", layout=path_layout)
        self.save_w = widgets.Button(description="Save scenario", icon="save",
                                     tooltip="write the current options as a scenario TOML file",
                                     layout=widgets.Layout(width="auto"))
        self.export_path_w = widgets.Text(value=str(out / "run-folder"), description="run folder",
                                          layout=path_layout)
        self.overwrite_w = widgets.Checkbox(value=False, description="overwrite", indent=False,
                                            layout=widgets.Layout(width="auto"))
        self.export_w = widgets.Button(description="Export run folder", icon="download",
                                       tooltip="the files of `workbench run`, for this site and "
                                               "these years", layout=widgets.Layout(width="auto"))
        self.reset_w = widgets.Button(description="Reset to scenario", icon="undo",
                                      layout=widgets.Layout(width="auto"))
        buttons = widgets.VBox([self.save_path_w, self.save_w, self.export_path_w,
                                widgets.HBox([self.export_w, self.overwrite_w]),
                                self.reset_w, self.message_w])
        left = widgets.VBox([widgets.HTML("<b>Assumptions</b>"), acc, buttons],
                            layout=cols["assumptions"])
        right = widgets.VBox([self.change_w, self.gaps_w, self.nh3_w, self.bracket_w,
                              page(self.figs["budget"]), self.split_w, self.gas_w,
                              self.tabs],
                             layout=cols["figures"])
        head = widgets.HBox([self.site_w, self.receptor_w, self.years_w, self.unit_w],
                            layout=widgets.Layout(flex_flow="row wrap"))
        # the figures go under the assumptions where the window is narrow
        from .inputs_box import input_rows_box           # what became of the input rows
        return [widgets.HTML("<h3>Site budget explorer</h3>"), wrap_labels_style(), caution_box(),
                input_rows_box(self.session.study.inputs.ledger), head,
                self.progress, widgets.HBox([left, right],
                                            layout=widgets.Layout(flex_flow="row wrap"))]

    def _wire(self):
        for k, w in self.controls.items():
            w.observe(self._on_control, "value")
        self.site_w.observe(self._on_site, "value")
        self.years_w.observe(self._on_years, "value")
        self.receptor_w.observe(self._on_receptor, "value")
        self.unit_w.observe(self._on_view, "value")
        self.gas_w.observe(self._on_view, "value")
        self.tabs.observe(self._on_tab, "selected_index")
        self.save_w.on_click(lambda _: self.save_scenario(self.save_path_w.value))
        self.export_w.on_click(lambda _: self.export_run(self.export_path_w.value,
                                                         self.overwrite_w.value))
        self.reset_w.on_click(lambda _: self.reset())

    # ------------------------------------------------------------------ state
    @property
    def site(self):
        return self.site_w.value

    @property
    def years(self):
        return tuple(self.years_w.value)

    @property
    def study(self):
        """The study of the current site and years (its ``counts`` show what ran)."""
        return self.session.study_for(self.site, *self.years)

    def _monthly_shown(self):
        return TABS[self.tabs.selected_index or 0] == "monthly fluxes" if hasattr(self, "tabs") else True

    def _run(self):
        """Run at monthly resolution while the monthly tab shows (it gives the years too),
        else yearly only (faster); the receptor shown only (the numbers of the whole
        run, a third of the work for three receptors)."""
        res = "month" if self._monthly_shown() else "year"
        return self.session.run(self.settings, self.site, *self.years, res, self.receptor_w.value)

    def _span(self) -> str:
        """The years shown, as a label (``2021`` or ``2019–2021``, the en dash of the
        budget's title: the velocity tabs wrote ``2019-2021`` beside it)."""
        first, last = self.years
        return span_label([first, last])

    def rows(self):
        """The rows of budget.csv of the site and years shown, every species together
        (the notebook's last cell): shown with three significant digits (they printed
        six decimals), the values whole (:class:`~workbench.ui.shown_table.ShownTable`;
        ``app.result.table`` holds every row)."""
        from .shown_table import ShownTable
        t = self.result.table
        return ShownTable(t[(t["site"] == self.site) & (t["species"] == "all")])

    def _current_totals(self):
        return mean_totals(self.result.years, self.site, self.receptor_w.value, None,
                           self.unit_w.value)

    # ------------------------------------------------------------------ figures
    def _figure(self, name, template=None):
        """The figure of a tab: its plain JSON spec for updates (the widget keeps the
        template it was created with), or a plotly Figure with `template` to create a
        widget."""
        spec = self._spec(name)
        spec = {**spec, "layout": fitted_layout(spec.get("layout", {}), FIGURE_WIDTH)}
        return spec if template is None else figures.from_spec(spec, template)

    def _spec(self, name):
        r, site, rec, unit = self.result, self.site, self.receptor_w.value, self.unit_w.value
        off = self.session.utc_offset(site)
        bounds = self.session.bounds(*self.years)
        if name == "budget":
            from .uncertainty_band import with_range       # 5-95 % when [uncertainty] draws > 0
            return with_range(figures.budget_bars_spec(r.years, site, rec, None, unit, FIGURE_WIDTH),
                              self.study,
                              r, site, rec, unit, self.session.scenario.options.get("uncertainty"),
                              self.settings.for_site(site).overrides)
        if name == "monthly fluxes":
            if r.options.get("resolution") != "month":
                self.result = r = self.session.run(self.settings, site, *self.years, "month", rec)
            return figures.monthly_fluxes_spec(r.budget, site, rec, unit)
        if name in NO_VELOCITIES and r.velocities is None:
            return {"data": [], "layout": {"title": {"text": NO_VELOCITIES[name]}}}
        if name == "deposition velocity":
            return figures_dry.velocity_diurnal_spec(r.velocities, site, rec, utc_offset_h=off,
                                                     period=self._span())
        if name == "resistances":
            return figures_dry.resistance_breakdown_spec(r.velocities, site, rec,
                                                         self.gas_w.value, off, self._span())
        if name == "ion balance":
            return figures_wet.ion_balance_spec(r.screened, site, self.settings.wet, *bounds)
        if name == "capture efficiency":
            return figures_wet.capture_efficiency_spec(r.screened, site, self.settings.wet,
                                                       *bounds)
        if name == "excluded samples":
            return figures_wet.excluded_by_reason_spec(r.screened, site, *bounds)
        raise KeyError(name)

    def _tab_key(self, name):
        """What a tab shows, by the graph keys of the results it draws (equal keys,
        equal figures)."""
        r, rec = self.result, self.receptor_w.value
        if name == "monthly fluxes":
            return (r.keys.get("budget"), r.keys.get("years"), rec, self.unit_w.value)
        if name == "deposition velocity":
            return (r.keys.get("velocities"), rec)
        if name == "resistances":
            return (r.keys.get("velocities"), rec, self.gas_w.value)
        if name in ("ion balance", "capture efficiency"):
            return (r.keys.get("screened"), self.settings.wet.ion_balance_tiers,
                    self.settings.wet.capture_rain)
        if name == "excluded samples":
            return (r.keys.get("screened"), self.years)
        return None

    def _draw_tab(self, name, force=False):
        if name == "gas schemes":
            return self.schemes.draw()
        if name not in self.figs:
            return
        key = self._tab_key(name)
        if force or self._drawn.get(name) != key:
            refresh(self.figs[name], self._figure(name))
            if name == "excluded samples":
                self.excluded_w.value = self._excluded_html()
            if name == "monthly fluxes":
                self.monthly_w.value = self._monthly_html()
            self._drawn[name] = key

    def _gaps_html(self):
        """The notes of budget.csv's S and N total rows of each year shown that have
        one (:func:`~workbench.ui.summaries_budget.gap_lines`), under the change line:
        its totals read ``complete`` or ``filled`` (no word in the line) while resting
        on met gaps or a species blank for weeks.  Empty where no total has a note."""
        lines = gap_lines(self.result.years, self.site, self.receptor_w.value)
        return "".join(f"<div>{html.escape(x)}</div>" for x in lines)

    def _nh3_html(self):
        text = nh3_line(self.result.years, self.site, self.receptor_w.value, self.unit_w.value)
        if (self.settings.dry.nh3_treatment == "bidirectional"
                and self.settings.fixed_velocity.get("NH3") is not None):
            # the net was asked for: the sentence must not send the user back to it
            text = text.replace("'NH3 exchange' under 'ammonia' gives the net",
                                "the fixed Vd of NH3 replaces the exchange model that "
                                "gives the net")
        return html.escape(text)

    def _bracket_html(self):
        from .bracket import bracket_line
        return html.escape(bracket_line(self.result.years, self.result.year_derived, self.site,
                                        self.receptor_w.value, self.unit_w.value,
                                        self.settings.budget.pair_split))

    def _split_html(self):
        from .derived_split import n_split_html
        return n_split_html(self.result.years, self.site, self.receptor_w.value,
                            self.unit_w.value,
                            rates=self.result.rates(receptors=[self.receptor_w.value]))

    def _monthly_html(self):
        """The run notes on monthly completeness (one weekly sample fails a month, and
        the options to set; workbench/period_notes.py), under the monthly figure."""
        from ..period_notes import NOTE_START
        notes = [n for n in getattr(self.result, "notes", []) if str(n).startswith(NOTE_START)]
        return "".join(f"<p>{html.escape(str(n))}</p>" for n in notes)

    def _excluded_html(self):
        start, end = self.session.bounds(*self.years)
        t = excluded_samples(self.result.screened, self.site, start=start, end=end)
        if not t.empty:
            t = t.assign(start=t["start"].dt.strftime("%Y-%m-%d %H:%M"),
                         end=t["end"].dt.strftime("%Y-%m-%d %H:%M")).rename(
                columns={"start": "start (UTC)", "end": "end (UTC)", "line": "file line",
                         "gauge_depth": "gauge depth [mm]"})
        return table_html(t, "no sample excluded or flagged")

    def redraw(self, all_tabs=False):
        """Update the figures from the last run (all tabs, or the budget and the open tab)."""
        refresh(self.figs["budget"], self._figure("budget"))
        after = self._current_totals()
        self.change_w.value = html.escape(change_line(self._before, after, self.unit_w.value))
        self.gaps_w.value = self._gaps_html()
        self._totals = after
        self.nh3_w.value = self._nh3_html()
        self.bracket_w.value = self._bracket_html()
        self.split_w.value = self._split_html()
        names = ([n for n in TABS if n not in LAZY_TABS] if all_tabs  # those: when opened
                 else [TABS[self.tabs.selected_index or 0]])
        for name in names:
            self._draw_tab(name)

    def recompute(self, text="recomputing"):
        """Run with the current settings and update the figures."""
        t0 = time.perf_counter()
        self.progress.start(text)
        self._before = self._totals
        # the line under the figures says so while the kernel works: the last change's
        # line (or the first totals, without an arrow) read as the result of this one
        # (browser trial: the first change of a session, slower, showed the opening line)
        shown = self.change_w.value
        self.change_w.value = f"<i>{html.escape(text)}…</i>"
        # the figures to be redrawn say so in the page while the kernel computes (the
        # control already shows its new value; the figures still the old run)
        marked = [self.figs["budget"], self.figs.get(TABS[self.tabs.selected_index or 0])]
        marked = [f for f in marked if hasattr(f, "mark_updating")]
        for f in marked:
            f.mark_updating()
        try:
            try:
                self.result = self._run()
            except Exception as exc:  # shown in the app; the previous figures stay
                self.change_w.value = shown                 # and the line that goes with them
                self.message_w.value = (f"<span style='color:#D55E00'>"
                                        f"{html.escape(str(exc))}</span>")
                self.progress.step("failed", 1.0)
                raise
            self.redraw()
        finally:
            for f in marked:        # updating still while a page has not drawn the update
                f.settle()
        self.latency_s = time.perf_counter() - t0
        self.progress.done("updated")

    # ------------------------------------------------------------------ events
    def _on_control(self, change):
        key = next(k for k, w in self.controls.items() if w is change["owner"])
        a = ASSUMPTIONS[key]
        old, before = a.get(self.settings, self.site), self.settings
        self.settings = a.set(self.settings, self.site, change["new"])
        self.recompute("recomputing deposition velocities (a few seconds)" if a.stage == "dry"
                       else f"recomputing ({a.stage} stage)")
        if self._before is not None and self._before["value"].equals(self._totals["value"]):
            site = self.session.study.catalogue()[self.site]
            text = no_effect_text(
                key, a.label, component_rates(self.result.years, self.site,
                                              self.receptor_w.value),
                site.collector, self.settings.budget.bulk_correction,
                self.settings.budget.pair_split, self.settings.budget.sulfate_basis)
            if key == "dry.wetness_rule" and text.endswith("."):
                # "met" without a surface_wet column is "inferred": say so (the line
                # gave no reason and the control read as broken)
                from .no_effect import wetness_rule_reason
                met_run = (self.result if change["new"] == "met" else   # the run under "met"
                           self.session.run(before, self.site, *self.years, "year",
                                            self.receptor_w.value))
                why = wetness_rule_reason(met_run.velocities, self.site,
                                          self.receptor_w.value, old, change["new"])
                text = f"{text[:-1]} ({why})." if why else text
            self.change_w.value += html.escape(" — " + text)

    def _on_site(self, change):
        recs = self.session.receptors(self.site)
        set_quietly(self.receptor_w, None, self._on_receptor)
        self.receptor_w.options = recs
        set_quietly(self.receptor_w, recs[0], self._on_receptor)
        for k, a in ASSUMPTIONS.items():
            if k.startswith("site."):
                set_quietly(self.controls[k], a.get(self.settings, self.site), self._on_control)
        self._show_in_force()
        years, moved = self.session.years_for(self.site, self.years)
        if moved:
            set_quietly(self.years_w, years, self._on_years)
        self._totals = None
        self.recompute("new site: computing its deposition velocities")
        if moved:
            self.change_w.value += html.escape(f" — {moved}")

    def _on_years(self, change):
        self._totals = None
        self.recompute("new years: computing their deposition velocities")

    def _on_receptor(self, change):
        """Another receptor: its budget is computed (the run holds the receptor shown)."""
        if self.receptor_w.value is None:
            return
        if self.receptor_w.value in self.result.years["receptor"].values:
            return self._on_view(change)
        self._totals = None
        self.recompute(f"computing the budget over {self.receptor_w.value}")

    def _on_view(self, change):
        if self.receptor_w.value is None:
            return
        t0 = time.perf_counter()
        self._before = None
        self.redraw()
        self.latency_s = time.perf_counter() - t0

    def _on_tab(self, change):
        i = change["new"]
        if i is not None:
            self._draw_tab(TABS[i])

    # ------------------------------------------------------------------ buttons
    def reset(self):
        """Back to the scenario's settings (an earlier save's or export's message goes:
        it was about the settings left behind)."""
        self.settings = self.session.baseline
        self.message_w.value = ""
        for k, a in ASSUMPTIONS.items():
            set_quietly(self.controls[k], a.get(self.settings, self.site), self._on_control)
        self._show_in_force()
        self.recompute("reset to the scenario")

    def _show_in_force(self):
        """The site's values in force (its roughness length) beside their controls."""
        for k in ASSUMPTIONS:
            known = self.session.in_force(k, self.settings, self.site)
            if known is not None:
                self.controls[k].set_default(*known)

    def save_scenario(self, path) -> Path:
        """Save the current settings and years as a scenario file (a relative path is
        taken in :func:`~workbench.ui.session.output_dir`, never beside the notebook)."""
        path = output_dir() / Path(path).expanduser()
        try:
            p = self.session.save_scenario(path, self.settings, *self.years)
        except Exception as exc:
            self.message_w.value = f"<span style='color:#D55E00'>not saved: {html.escape(str(exc))}</span>"
            raise
        self.message_w.value = f"saved {html.escape(str(p))}"
        return p

    def export_run(self, out, overwrite=False) -> dict:
        """Export the run folder of this site and these years (a relative path is taken
        in :func:`~workbench.ui.session.output_dir`)."""
        out = output_dir() / Path(out).expanduser()
        self.progress.start("exporting the run folder")
        try:
            written = self.session.export_run(out, self.settings, self.site, *self.years,
                                              overwrite=overwrite, progress=self.progress.step)
        except Exception as exc:
            # the app's control is the "overwrite" box, not the command line's option
            text = str(exc).replace("use --overwrite", "tick 'overwrite'")
            self.message_w.value = f"<span style='color:#D55E00'>not exported: {html.escape(text)}</span>"
            self.progress.step("export failed", 1.0)
            raise
        self.progress.done("exported")
        self.message_w.value = (f"wrote {len(written)} files into "
                                f"{html.escape(str(Path(out).resolve()))}")
        return written


from .apps_more import NetworkOverview, SensitivityExplorer  # noqa: E402  (public here)

__all__ = ["SiteExplorer", "SensitivityExplorer", "NetworkOverview", "caution_box", "TABS"]
