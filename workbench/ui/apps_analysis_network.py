"""The network overview's trend and exceedance columns, per site on its own surface
(:func:`network_analysis_table`), and the words of a partial deposition's what-if
statement shared with the critical-loads explorer.

Part of :mod:`workbench.ui.apps_analysis` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd  # noqa: F401  (the annotations name pd.DataFrame)

from ..analysis.trends import MIN_YEARS


#: The parts of a trend's note (trends.csv) that name the years it does not use.
LEFT_OUT_PARTS = ("years left out: ", "no row for ")


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
            left_out = p.get(f"{el}_left_out", "")
            left_out = f"; {left_out}" if isinstance(left_out, str) and left_out else ""
            slope = p[f"{el}_slope_kg_ha_yr"]
            if not np.isfinite(slope):                # too few years for a slope
                row[f"{el}_trend"] = f"no slope: {years_text}{left_out}"
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
                + left_out + ")")
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
    """The unit of a yearly rate of `element` as a trend's text says it
    (:func:`workbench.ui.summaries_budget.rate_unit`).

    >>> trend_unit("S", "kg/ha/yr"), trend_unit("N", "eq/ha/yr"), trend_unit("N", "mmol/m2/yr")
    ('kg S/ha/yr', 'eq/ha/yr', 'mmol N/m2/yr')
    """
    from .summaries_budget import rate_unit
    return rate_unit(element, unit)


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


def span_years(table, receptor) -> str:
    """The years behind the span's S and N totals of `receptor`, from budget.csv's span
    rows: ``years_used`` and, for each year of ``years_excluded``, the part of the
    row's note that says why it is left out (:data:`workbench.tables_span.LEFT_OUT_NOTE`:
    ``2018 left out: fails completeness (...)``).  One text where S and N use the same
    years, else one for each (``S: 2016 2017; N: 2016``).  The span exceedance said
    "the years used" without naming them.  ``""`` without a span total.

    >>> import pandas as pd
    >>> t = pd.DataFrame({"period": "span", "receptor": "lake", "pathway": "total",
    ...     "species": "all", "element": ["S", "N"], "years_used": "2016 2017",
    ...     "years_excluded": "2018",
    ...     "note": "2018 left out: missing; 2016: SO2: met gaps (a; b)"})
    >>> span_years(t, "lake")
    '2016 2017; 2018 left out: missing'
    """
    from ..budgetstatus_notes import split_notes
    if "years_used" not in table:
        return ""
    span = table[(table["period"].astype(str) == "span") & (table["receptor"] == receptor)
                 & (table["pathway"] == "total") & (table["species"] == "all")]
    words = {}
    for _, r in span.iterrows():           # the two span totals of the receptor
        used = r.get("years_used")
        used = used if isinstance(used, str) and used else "none"
        out = r.get("years_excluded")
        out = str(out).split() if isinstance(out, str) else []
        parts = split_notes(r.get("note", "") if isinstance(r.get("note"), str) else "")
        why = [next((x for x in parts if x.startswith(f"{y} left out")),
                    f"{y} left out") for y in out]
        words[str(r["element"])] = "; ".join([used, *why])
    if not words:
        return ""
    if len(set(words.values())) == 1:
        return next(iter(words.values()))
    return "; ".join(f"{el}: {w}" for el, w in sorted(
        words.items(), key=lambda kv: ("S", "N").index(kv[0]) if kv[0] in ("S", "N") else 2))


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
        without a trend row), ``{el}_left_out`` (the parts of the trend's note naming the
        years it does not use: :data:`LEFT_OUT_PARTS`), ``{el}_method_changes`` (the changes of method the trend's
        years cross, trends.csv's ``method_changes``); ``ex_acidity_eq_ha_yr``,
        ``ex_nutrient_n_eq_ha_yr``
        [eq ha-1 yr-1], ``exceedance_status`` of the span (exceedance.csv's status: a
        partial total counts as ``flagged`` there; "no critical loads" without them) and
        ``exceedance_note`` (its note in exceedance.csv, "the years used" named:
        :func:`span_years`); ``totals_status``: the budget's
        own status of the span's S and N totals (:func:`totals_status`, ``S complete, N
        partial (no NO2)``), the table's "status of the totals".
    """
    import pandas as pd

    from ..analysis.exceedance import NO_CRITICAL_LOADS, SPAN_NOTE, exceedance_table
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
            # the years the trend leaves out and those without a row, in trends.csv's
            # words ("years left out: 1 flagged (2018)"): the table said "3 complete
            # years" with no word of which year was left out
            note = r.get("note", "")
            row[f"{el}_left_out"] = "; ".join(
                part for part in (note.split("; ") if isinstance(note, str) else ())
                if part.startswith(LEFT_OUT_PARTS))
        ex = exceedance_table(res, catalogue)
        ex = ex[(ex["site"] == site) & (ex["receptor"] == own) & (ex["period"] == "span")]
        if len(ex) and ex.iloc[0]["note"] != NO_CRITICAL_LOADS:
            e = ex.iloc[0]
            # the span exceedance of "the years used": named, with those left out and
            # why (budget.csv's span rows)
            note, years = str(e["note"]), span_years(res.table, own)
            if years and SPAN_NOTE in note:
                head = SPAN_NOTE.split(", not ")[0]
                note = note.replace(head, f"{head} ({years})", 1)
            row.update(ex_acidity_eq_ha_yr=e["ex_acidity_eq_ha_yr"],
                       ex_nutrient_n_eq_ha_yr=e["ex_nutrient_n_eq_ha_yr"],
                       exceedance_status=e["status"], exceedance_note=note)
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
