"""Where the shown Monte Carlo range comes from: a button and a table under the range
of an app (the critical-loads explorer), each drawn factor's share of the range of the
chosen site, receptor, year and total.

The shares cost about the Monte Carlo again per drawn factor, so they are computed on
demand (the button), once per site, years and options: the app's ``compute`` runs the
``range_shares`` stage of its session's graph
(:func:`workbench.analysis.range_shares.site_shares`), which keeps them.  Switching the
receptor, the year or the total only picks other rows of that table.
"""
from __future__ import annotations

import html

import ipywidgets as widgets
import numpy as np
import pandas as pd

from ..analysis.range_shares import READ_TEXT, of_own_element
from ..analysis.sensitivity_design import factor_label
from ..units import element_deposition_in
from .controls import table_html

#: The totals offered, as shown -> ``total`` of the shares.
TOTAL_CHOICES = (("dry N", "N_dry"), ("dry S", "S_dry"), ("total N", "N_total"),
                 ("total S", "S_total"))
#: The names of the rows that are no factor.
ROW_NAMES = {"all": "every factor (the range shown)",
             "together": "the factors together (no one factor alone)"}
#: The button's text.
BUTTON_TEXT = "Where does the range come from?"
#: Said before the button is pressed (the cost in words).
HINT = ("Each drawn factor's share of the range of the site, receptor, year and total "
        "shown: press the button (it draws the site once more per factor, about as long "
        "as the Monte Carlo again for each).")


def shares_display(shares: pd.DataFrame, receptor, period, total, eq=False) -> pd.DataFrame:
    """The rows of one receptor, period and total as the table shows them.

    Parameters
    ----------
    shares : DataFrame
        :data:`workbench.analysis.variance_shares.COLUMNS` of one site.
    receptor, period : str
    total : str
        ``S_dry``, ``N_dry``, ``S_total`` or ``N_total``.
    eq : bool
        The quantiles in equivalents (eq/ha, eq/ha/yr) instead of kg of the element:
        the critical-loads explorer's unit (its table read "kg N/ha" under a range
        written in eq/ha/yr).

    Returns
    -------
    pandas.DataFrame
        ``factor`` in words with its unit
        (:func:`workbench.analysis.sensitivity_design.factor_label`; a Vd species' part
        as "of which <species>", the species of the total's element only), ``option``
        (the factor's key in ``[uncertainty]``, "" for the rows of no factor), the shares of the
        log-variance and of the variance [1], the 5, 50 and 95 % of the total with that
        factor alone drawn [the unit of `shares`, in the headings]; the factors by
        log-variance share, largest first, between the ``all`` and ``together`` rows.
    """
    s = shares[(shares["receptor"] == receptor) & (shares["period"].astype(str) == str(period))
               & (shares["total"] == total)]
    if s.empty:
        return pd.DataFrame()
    unit = str(s["unit"].iloc[0]).replace(" ha-1", "/ha").replace(" yr-1", "/yr")
    unit = f"kg {total[0]}/ha" if unit == "kg/ha" else f"kg {total[0]}/ha/yr"
    scale = 1.0
    if eq:      # eq per kg of the element: 2 eq per mol of S, 1 per mol of N
        scale = float(element_deposition_in(1.0, total[0], "eq_ha")
                      / element_deposition_in(1.0, total[0], "kg_ha"))
        unit = unit.replace(f"kg {total[0]}/", "eq/")
    s = of_own_element(s)            # a Vd species' part of the total's element only
    named = s["factor"].isin(list(ROW_NAMES))
    part = s["part_of"].fillna("").astype(str) != ""
    main = s[~named & ~part].sort_values("log_variance_share", ascending=False, kind="stable")
    rows = [s[s["factor"] == "all"]]
    for _, r in main.iterrows():           # each factor, then its species' parts
        rows.append(main.loc[[r.name]])
        parts = s[part & (s["part_of"] == r["factor"])]
        rows.append(parts.sort_values("log_variance_share", ascending=False, kind="stable"))
    rows.append(s[s["factor"] == "together"])
    s = pd.concat(rows)
    label = [ROW_NAMES.get(f, f"  of which {f.split('.', 1)[1]}" if of else factor_label(f))
             for f, of in zip(s["factor"], s["part_of"].fillna("").astype(str))]
    return pd.DataFrame({
        "factor": label,
        # the option's key beside its words, so that a user finds it in [uncertainty]
        "option": ["" if f in ROW_NAMES else f for f in s["factor"]],
        "share of the log-variance": np.round(s["log_variance_share"].to_numpy(float), 3),
        "share of the variance": np.round(s["variance_share"].to_numpy(float), 3),
        f"5 % alone [{unit}]": np.round(scale * s["alone_p05"].to_numpy(float), 3),
        f"50 % alone [{unit}]": np.round(scale * s["alone_p50"].to_numpy(float), 3),
        f"95 % alone [{unit}]": np.round(scale * s["alone_p95"].to_numpy(float), 3)})


class RangeSharesPanel(widgets.VBox):
    """The button, the choice of total and the table of the shares.

    Parameters
    ----------
    compute : callable
        ``compute() -> DataFrame``: the shares of the site shown (every receptor,
        period and total), :func:`workbench.analysis.range_shares.site_shares`.
    where : callable
        ``where() -> (site, receptor, period)`` shown by the app.
    total : str
        The total first chosen (``N_dry``, ``S_dry``, ``N_total``, ``S_total``).
    eq : bool
        Quantiles in equivalents (:func:`shares_display`).

    Attributes
    ----------
    shares : DataFrame or None
        The shares of :attr:`site` (None before the button, and after the app's site or
        years change: :meth:`clear`).
    """

    def __init__(self, compute, where, total="N_dry", eq=False):
        self.compute, self.where, self.eq = compute, where, eq
        self.shares, self.site = None, None
        self.button = widgets.Button(description=BUTTON_TEXT, icon="question",
                                     layout=widgets.Layout(width="auto"))
        self.total_w = widgets.Dropdown(options=list(TOTAL_CHOICES), value=total,
                                        description="total",
                                        layout=widgets.Layout(width="220px"))
        self.note_w = widgets.HTML(f"<p><i>{html.escape(HINT)}</i></p>")
        self.table_w = widgets.HTML("")
        self.button.on_click(lambda _: self.explain())
        self.total_w.observe(lambda _: self.show(), "value")
        super().__init__([widgets.HBox([self.button, self.total_w],
                                       layout=widgets.Layout(flex_flow="row wrap")),
                          self.note_w, self.table_w],
                         layout=widgets.Layout(margin="0 0 16px 0"))   # apart from the next table
        self.add_class("wb-range-shares")

    def clear(self):
        """Forget the shares (the app shows another site or other years)."""
        self.shares, self.site = None, None
        self.show()

    def explain(self):
        """Compute the shares of the site shown (the button) and show them."""
        self.button.disabled = True
        try:
            self.shares, self.site = self.compute(), self.where()[0]
        finally:
            self.button.disabled = False
        self.show()

    def show(self):
        """The table of the receptor, year and total shown (nothing before the button)."""
        site, receptor, period = self.where()
        if self.shares is None or site != self.site:
            self.note_w.value = f"<p><i>{html.escape(HINT)}</i></p>"
            self.table_w.value = ""
            return
        shown = shares_display(self.shares, receptor, period, self.total_w.value, self.eq)
        name = dict((v, k) for k, v in TOTAL_CHOICES)[self.total_w.value]
        self.note_w.value = (
            f"<p>Each factor's share of the range of {html.escape(name)} · "
            f"{html.escape(' · '.join(map(str, (site, receptor, period))))}, and the 5-95 % "
            f"range with that factor alone drawn. {html.escape(READ_TEXT)}</p>")
        self.table_w.value = table_html(
            shown, empty=f"no range of {name} for this receptor and year (not drawn: a "
                         "total without data)", fill=True)
