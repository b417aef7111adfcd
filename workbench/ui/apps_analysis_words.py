"""What the critical-loads explorer writes: the what-if path as a table with its
headings, an exceedance in words (a lower bound on a partial deposition), the warning
of a total not complete and the Monte Carlo range in words.

Part of :mod:`workbench.ui.apps_analysis` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..analysis.exceedance import not_determined
from ..analysis.whatif import percent_up
from .summaries import RANKABLE, total_rates
from .summaries_budget import gap_note  # noqa: F401  (defined here before)


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
    missed; a flagged one is read with care; one failing completeness is named with the
    first criterion failed (it read "flagged", as a total passing with kept flagged
    samples).  Empty text when both are complete."""
    t = total_rates(years_ds, site, receptor, [str(period)])
    t = t[t["pathway"] == "total"]
    out = []
    failing = False
    for _, r in t.iterrows():
        fails = not bool(r["passes"]) and r["status"] != "missing"
        if r["status"] in RANKABLE and not fails:
            continue
        failing |= fails
        what = f"{r['element']} total " + (f"fails completeness ({r['failure'] or 'budget.csv'})"
                                           if fails else r["status"])
        if r["missing"].strip():
            what += f" (no {', '.join(r['missing'].split())})"
        out.append(what)
    if not out:
        return ""
    return (f"Read with care: {'; '.join(out)} in {period}. A partial total leaves out "
            "species without data, so the deposition and its exceedance may be higher; "
            + ("a total failing completeness is no whole figure for the year, nor is its "
               "exceedance; " if failing else "")
            + "a flagged one has components flagged (site budget explorer, budget.csv notes).")


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
