"""The "gas schemes" tab of the site explorer: both published gas schemes side by side.

Two published surface-resistance schemes for gases (Wesely 1989; Zhang et al. 2003),
both defensible, give different deposition velocities for the same surface and hour.
The tab shows, for the site, receptor and years on screen and the assumptions in
force, the seasonal mean Vd of each gas under both schemes, the budget under the other
scheme minus the budget under the chosen one, and one sentence stating the spread.

The other scheme is computed only while the tab is open (the explorer draws the open
tab only), so the explorer's other tabs cost what they cost without it.
"""
from __future__ import annotations

import html

import ipywidgets as widgets

from . import figures, figures_schemes as fs
from .figures_curves import fitted_layout
from .controls import figure_widget, refresh, table_html
from .figure_open import page
from ..species import AIR_GASES
from .palette import TEMPLATE

#: Text of the tab before it is first opened.
NOT_YET = "opens with the tab (computes the other gas scheme)"
#: What the tab is about, above its figures.
CAPTION = ("Two published gas schemes, both defensible, give different deposition "
           "velocities for the same surface and hour; the spread below is a structural "
           "uncertainty of dry deposition that no option within one scheme shows.")
#: Which scheme the budget uses (filled when the tab is drawn): the figures name the
#: schemes, so the caption names them too (a bare "A" and "B" matched nothing on screen).
CHOSEN = ("The budget uses <b>{chosen}</b> (the scenario's <code>[dry] gas_scheme</code>); "
          "<b>{other}</b> is computed beside it, and the differences are {other} minus "
          "{chosen}.")


class SchemeTab:
    """The page of the tab and how to draw it for an explorer.

    Parameters
    ----------
    app : workbench.ui.apps.SiteExplorer
        Gives the session, settings, site, receptor, years, unit and its last run.
    width : int
        Width of the figures [px] (the explorer's :data:`~workbench.ui.apps.FIGURE_WIDTH`).

    Attributes
    ----------
    figs : dict
        ``vd`` (seasonal Vd by scheme) and ``budget`` (B minus A) FigureWidgets.
    sentence_w, table_w : ipywidgets.HTML
        The sentence on the spread and the table of both budgets.
    page : ipywidgets.VBox
    table : pandas.DataFrame or None
        The last budget table of :func:`figures_schemes.scheme_budget_table`.
    runs : dict
        scheme -> Result of the last drawing.
    """

    def __init__(self, app, width=660):
        self.app = app
        self.width = width
        empty = {"data": [], "layout": {"title": {"text": NOT_YET}, "width": width,
                                        "height": 200}}
        self.figs = {"vd": figure_widget(figures.from_spec(empty, TEMPLATE)),
                     "budget": figure_widget(figures.from_spec(empty, TEMPLATE))}
        self.sentence_w = widgets.HTML("")
        self.sentence_w.add_class("wb-scheme-spread")
        self.chosen_w = widgets.HTML("")
        self.chosen_w.add_class("wb-scheme-chosen")
        self.table_w = widgets.HTML("")
        self.page = widgets.VBox([widgets.HTML(f"<p style='max-width:{width}px'>{CAPTION}</p>"),
                                  self.chosen_w, self.sentence_w, page(self.figs["vd"]),
                                  page(self.figs["budget"]),
                                  self.table_w])
        self.table = None
        self.runs = {}
        self._drawn = None

    def _key(self):
        a = self.app
        return (a.settings.key(), a.site, a.years, a.receptor_w.value, a.unit_w.value)

    def current(self) -> bool:
        """Whether the figures show the explorer's present state (drawn, and for the
        site, receptor, years, unit and assumptions on screen)."""
        return self._drawn is not None and self._drawn == self._key()

    def figures(self) -> dict:
        """``{"gas schemes Vd": ..., "gas schemes budget": ...}`` when :meth:`current`,
        else empty: a tab never drawn, or drawn for another state, has nothing to write
        (its figures would be named by a state they do not show)."""
        if not self.current():
            return {}
        return {"gas schemes Vd": self.figs["vd"], "gas schemes budget": self.figs["budget"]}

    def export_note(self) -> str:
        """Why the tab's figures are not in an export (empty when they are)."""
        if self._drawn is None:
            return "the gas-schemes figures are written once that tab has been opened"
        if not self.current():
            return ("the gas-schemes figures show an earlier state: open that tab to "
                    "redraw them, then export")
        return ""

    def _sized(self, spec):
        """`spec` at the tab's width, its title fitted to it as the explorer's other
        figures (:func:`workbench.ui.figures_curves.fitted_layout`)."""
        return {**spec, "layout": fitted_layout(spec.get("layout", {}), self.width)}

    def draw(self, force=False):
        """Compute the other scheme (cached by the session) and update the page."""
        a = self.app
        key = self._key()
        if not force and key == self._drawn:
            return
        site, rec, unit = a.site, a.receptor_w.value, a.unit_w.value
        years = a._span()                           # "2021", "2019–2021": in the titles
        self.runs = a.session.run_schemes(a.settings, site, *a.years, rec, chosen=a.result)
        chosen, *others = list(self.runs)          # the chosen scheme first
        self.chosen_w.value = (f"<p style='max-width:{self.width}px'>"
                               + CHOSEN.format(chosen=html.escape(chosen),
                                               other=html.escape(", ".join(others))) + "</p>")
        vel = {s: r.velocities for s, r in self.runs.items()}
        if any(v is None for v in vel.values()):
            vd_spec = {"data": [], "layout": {"title": {
                "text": "no deposition velocities (fixed or no met)"}}}
        else:
            start, end = a.session.bounds(*a.years)
            vd_spec = fs.scheme_vd_spec({s: fs.in_years(v, start, end) for s, v in vel.items()},
                                        site, rec, period=years)
        refresh(self.figs["vd"], self._sized(vd_spec))
        self.table = fs.scheme_budget_table({s: r.years for s, r in self.runs.items()},
                                            site, rec, unit)
        refresh(self.figs["budget"], self._sized(fs.budget_change_spec(self.table, site, rec,
                                                                        unit, years)))
        sentence = fs.spread_sentence(self.table, unit)
        fixed = [g for g in AIR_GASES if g in a.settings.fixed_velocity]
        if fixed:       # a fixed Vd replaces both schemes: a 0 % there says nothing
            gases = [g for g in self.table.index if g.startswith("dry ") and g[4:] in AIR_GASES]
            left = [g[4:] for g in gases if g[4:] not in fixed]
            sentence += (f" The Vd of {', '.join(fixed)} is fixed (what-ifs), the same under "
                         "both schemes: " + (f"only {', '.join(left)} compare the schemes."
                                             if left else "no gas compares the schemes."))
        self.sentence_w.value = f"<b>{html.escape(sentence)}</b>"
        shown = self.table.drop(columns="element").reset_index(names=f"[{unit}]")
        # units in square brackets as every other heading ("percent (%)" stood apart,
        # and the difference's unit was only in the first column's heading)
        self.table_w.value = table_html(shown.rename(columns={
            "difference": f"difference [{unit}]", "percent": "difference [%]",
            "percent_note": "note"}), fill=True)
        self._drawn = key
