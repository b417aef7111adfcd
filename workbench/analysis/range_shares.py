"""Where a run's ranges come from, in its outputs (``[uncertainty] explain_ranges``):
range_shares.csv and the report's table of the largest factors per site.

The numbers are those of :func:`.variance_shares.variance_shares` (docs/methods_uncertainty.md,
"Where a range's width comes from"), for every period of the budget and for the span
(the span's mean yearly rate, as budget.csv's ``span`` rows), with the run's own draws
and seed: the ``all`` rows hold the quantiles of budget.csv.  Nothing is cached here
by hand: the linear layer reads the study's cached stages, a run computes the shares
once and keeps them on its result for the writers, and an app's shares of one site are
the stage ``range_shares`` of its session's graph (:func:`site_shares`: keyed by the
declared ``[uncertainty]`` fields, the site's study and the run's budget).

Units: ``alone_p05`` ... ``alone_p95`` [kg ha-1 of S or N per period; kg ha-1 yr-1 for
the span], shares [1].
"""
from __future__ import annotations

import dataclasses
import html

import numpy as np
import pandas as pd

from ..graph import Node, input_node, stage
from ..species import SPECIES
from .uncertainty_options import UncertaintyOptions
from .variance_shares import COLUMNS, variance_shares

#: The totals whose shares the run writes (:data:`.quantile_tables.TOTALS`).
TOTALS = ("S_dry", "N_dry", "S_total", "N_total")
#: The totals of the report's table, and how it names them.
REPORT_TOTALS = {"N_dry": "dry N", "S_dry": "dry S"}
#: Factors per site, receptor and total in the report's table.
REPORT_TOP = 3
#: Below this log-variance share a factor is not shown in the report [1].
REPORT_MIN_SHARE = 0.01
#: What to read from the report's table (one sentence).
READ_TEXT = ("Read it as where a range's width comes from: the factor with the largest "
             "share is the one whose option (its GSD or relative SD in [uncertainty]) "
             "narrows the range if it can be narrowed; a factor with a small share changes "
             "little however well it is known.")


def of_own_element(shares: pd.DataFrame) -> pd.DataFrame:
    """`shares` without the rows of a Vd species' part (``vd_gsd.<species>``) under a
    total of the other element (an NH3 part of dry S: share 0, as the function computes
    the parts of both elements for every total); the sums are unchanged (the parts are
    not counted in them)."""
    species = shares["factor"].astype(str).str.split(".", n=1).str[1]
    element = species.map(lambda sp: getattr(SPECIES.get(sp), "element", None)
                          if isinstance(sp, str) else None)
    other = species.notna() & (element != shares["total"].astype(str).str[0])
    return shares[~other]


#: The ``[uncertainty]`` fields the shares depend on (every one but ``explain_ranges``,
#: which asks for them in a run).
SHARE_FIELDS = tuple(f.name for f in dataclasses.fields(UncertaintyOptions)
                     if f.name != "explain_ranges")


@stage("range_shares", reads={"uncertainty": SHARE_FIELDS})
def _site_shares_stage(o, study, run, site, overrides):
    """each drawn factor's share of one site's Monte Carlo ranges, every period and total
    (analysis.range_shares.site_shares: an app's button; variance_shares)"""
    opt = UncertaintyOptions(**{n: getattr(o.uncertainty, n) for n in SHARE_FIELDS})
    return of_own_element(variance_shares(run, study, opt, "budget", sites=[site],
                                          totals=TOTALS, overrides=overrides)
                          ).reset_index(drop=True)


def site_shares(graph, study, result, site, options, overrides=None) -> pd.DataFrame:
    """The shares of one site's ranges in every period of `result` (the stage
    ``range_shares`` of `graph`: asked again with the same options, study and run, the
    table is not computed again).

    Parameters
    ----------
    graph : workbench.graph.Graph
        The graph of `study` (an app's session graph).
    study : workbench.pipeline.Study
    result : workbench.pipeline.Result
        A run of `study` (its ``keys["budget"]`` names its budget in the graph).
    site : str
    options : UncertaintyOptions
        With ``draws`` >= 2.
    overrides : dict, optional
        The site overrides `result` was run with.

    Returns
    -------
    pandas.DataFrame
        :data:`.variance_shares.COLUMNS` of the site (``which="budget"``: each period of
        `result` [kg ha-1]).
    """
    return graph.run("range_shares", options={"uncertainty": options},
                     deps={"study": input_node("study", study.token, study),
                           "run": Node(result.keys["budget"], result)},
                     params={"site": str(site), "overrides": overrides or {}}).value


def range_shares(result, study, options) -> pd.DataFrame:
    """The rows of range_shares.csv: :data:`.variance_shares.COLUMNS` for every period of
    the budget and the span of each site and receptor.

    Parameters
    ----------
    result : workbench.pipeline.Result
        The run (before its quantiles are added: the Datasets are the same).
    study : workbench.pipeline.Study
    options : UncertaintyOptions
        With ``draws`` >= 2; the run's own, so the ``all`` rows are budget.csv's ranges.

    Returns
    -------
    pandas.DataFrame
        The periods' rows [kg ha-1] then the span's [kg ha-1 yr-1] of each site and
        receptor, the factors in the order of the function (``all`` first, ``together``
        last); a Vd species' part under its own element's totals only
        (:func:`of_own_element`).
    """
    parts = [variance_shares(result, study, options, which, totals=TOTALS)
             for which in ("budget", "span")]
    out = of_own_element(pd.concat(parts, ignore_index=True)).reset_index(drop=True)
    keys = out[["site", "receptor"]].drop_duplicates()
    order = {tuple(k): i for i, k in enumerate(keys.itertuples(index=False))}
    pos = pd.Series([order[(s, r)] for s, r in zip(out["site"], out["receptor"])],
                    index=out.index)
    return out.iloc[np.argsort(pos.to_numpy(), kind="stable")].reset_index(drop=True)[
        list(COLUMNS)]


def largest_factors(shares: pd.DataFrame, top: int = REPORT_TOP) -> pd.DataFrame:
    """The report's rows: per site, receptor and total of :data:`REPORT_TOTALS`, the span's
    `top` factors by log-variance share (a Vd species' part named "of which"), at least
    :data:`REPORT_MIN_SHARE`; a run without span rows (one period) has each period's.

    Returns
    -------
    pandas.DataFrame
        ``site, receptor, period, total, factor, log-variance share, 5 %, 50 %, 95 %``
        (the quantiles of the total with that factor alone drawn [kg ha-1 yr-1 for the
        span, kg ha-1 for a period]).
    """
    span = shares["period"].astype(str) == "span"
    if not span.any():                   # a run of one period has no span rows: its periods
        span = pd.Series(True, index=shares.index)
    s = shares[span & shares["total"].isin(list(REPORT_TOTALS))
               & ~shares["factor"].isin(["all", "together"])]
    s = s[s["log_variance_share"].to_numpy(float) >= REPORT_MIN_SHARE]
    s = s.assign(_t=s["total"].map({t: i for i, t in enumerate(REPORT_TOTALS)}))
    s = s.sort_values(["site", "receptor", "period", "_t", "log_variance_share"],
                      ascending=[True, True, True, True, False], kind="stable")
    s = s.groupby(["site", "receptor", "period", "_t"], sort=False).head(top)
    # a part names its whole in `part_of`; "" (or NaN, read back from range_shares.csv)
    # for a factor of its own
    part = s["part_of"].fillna("").astype(str).to_numpy() != ""
    named = [f"of which {f.split('.', 1)[1]}" if of else f
             for f, of in zip(s["factor"], part)]
    return pd.DataFrame({"site": s["site"].to_numpy(), "receptor": s["receptor"].to_numpy(),
                         "period": s["period"].astype(str).to_numpy(),
                         "total": s["total"].map(REPORT_TOTALS).to_numpy(), "factor": named,
                         "log-variance share": s["log_variance_share"].round(3).to_numpy(),
                         "5 %": s["alone_p05"].round(2).to_numpy(),
                         "50 %": s["alone_p50"].round(2).to_numpy(),
                         "95 %": s["alone_p95"].round(2).to_numpy()})


def report_section(shares, to_html) -> list:
    """HTML parts of the report: a table per site of the largest factors of its dry N
    and dry S span ranges; none when the shares were not computed (`shares` None)."""
    if shares is None:
        return []
    rows = largest_factors(shares)
    parts = ["<h2>Where the ranges' width comes from: the largest factors of dry N and "
             "dry S [kg/ha/yr]</h2>",
             "<p>Each drawn factor's share of the variance of the logarithm of the span's "
             "total, and the 5-95 % range of the total with that factor alone drawn (the "
             "other factors at their point value; range_shares.csv has every factor, "
             "period and total, docs/methods_uncertainty.md). " + html.escape(READ_TEXT)
             + " The shares explain the stated options; they do not make the ranges more "
             "certain.</p>"]
    drop = ["site"] + (["period"] if (rows["period"] == "span").all() else [])
    for site, frame in rows.groupby("site", sort=False):
        parts.append(f"<h3>{html.escape(str(site))}</h3>")
        parts.append(to_html(frame.drop(columns=drop)))
    if rows.empty:
        parts.append("<p>No factor holds 1 % or more of a dry N or dry S range.</p>")
    return parts
