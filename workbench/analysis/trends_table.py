"""``trends.csv``, the table of a run (:func:`trend_table`): a trend per site,
receptor, element, pathway and species.  All series are indexed at once (one groupby
for the series, one for the monthly grids) and every series' statistics computed in one
batch (:mod:`.trends_batch`); a series with two rows in one year goes one at a time
through :mod:`.trends_stats`.  :mod:`.trends` re-exports these names.
"""
from __future__ import annotations

import numpy as np

from .trend_changes import _change_columns
from .trends_batch import exact_min_p
from .trends_notes import P_HELD, _dl_note, _flags, _gap_notes, _left_out_notes, _note
from .trends_stats import ALPHA, MIN_YEARS, _hamed_rao, mann_kendall

# ------------------------------------------------------------------ the table of a run
TREND_COLUMNS = ("site", "receptor", "element", "pathway", "species", "series", "n_years",
                 "first_year", "last_year", "test", "tau", "p_value", "sen_slope_per_yr",
                 "sen_slope_pct_per_yr", "valid", "note")
#: Statuses of a year (or month) whose value enters a trend, per variant of the values.
VARIANTS = {"all": ("complete", "filled"), "without_filled": ("complete",)}
KEYS = ["site", "receptor", "element", "pathway", "species"]


#: Columns of trends.csv with ``serial_correction="hamed_rao"`` (annual rows; NaN on
#: the monthly rows, whose test has the Hirsch-Slack correction): column -> field of
#: :func:`.trends_batch.hamed_rao_batch` as stored beside the plain statistics.
HAMED_RAO_COLUMNS = {"hamed_rao_factor": "hr_factor", "var_s_hamed_rao": "hr_var_s",
                     "z_hamed_rao": "hr_z", "p_value_hamed_rao": "hr_p_value",
                     "p_min_exact": "hr_p_min"}


#: Values of ``serial_correction`` of :func:`trend_table`.
SERIAL_CORRECTIONS = (None, "hamed_rao")


def _row(key, series, variant, years, r, min_years, median, excluded, dl, vmin=np.nan,
         gaps=""):
    valid = r.n >= min_years and np.isfinite(r.p_value)
    pct = (100.0 * r.slope / median if median and np.isfinite(median) and median != 0
           and not vmin < 0 else np.nan)
    return {**dict(zip(KEYS, key)), "series": series, "n_years": r.n,
            "first_year": int(min(years)) if len(years) else None,
            "last_year": int(max(years)) if len(years) else None,
            "test": "mann_kendall" if series == "annual" else "seasonal_kendall_hirsch_slack",
            "tau": r.tau, "p_value": r.p_value, "sen_slope_per_yr": r.slope,
            "sen_slope_pct_per_yr": pct, "valid": bool(valid),
            "note": _note(variant, r.n < min_years, min_years, excluded, dl,
                          _flags(r.n, r.var_s, vmin, gaps, median)),
            "values": variant, "s": r.s, "var_s": r.var_s, "z": r.z,
            "slope_low_per_yr": r.slope_low, "slope_high_per_yr": r.slope_high,
            "intercept": r.intercept, "unit": "kg ha-1 yr-1", "method_changes": ""}


def _series_index(frame):
    """The series of a budget table: their keys (in order of first appearance, as
    ``groupby(KEYS, sort=False)``), the series code of each row (-1: a key is missing,
    the row is in no series, as in ``groupby``) and a stable order of the rows by series
    and period start."""
    import pandas as pd
    g = frame.groupby(KEYS, sort=False)
    code = g.ngroup().to_numpy()
    code = np.where(pd.isna(code), -1, code).astype(np.int64)
    first = pd.DataFrame({"c": code}).drop_duplicates("c")
    first = first[first["c"] >= 0].sort_values("c")
    keys = list(frame.iloc[first.index.to_numpy()][KEYS].itertuples(index=False, name=None))
    start = pd.DatetimeIndex(frame["period_start"]).to_numpy()
    order = np.lexsort((start, code))
    order = order[code[order] >= 0]
    return keys, code, order


def _table_rows(keys, series, stats_by_variant, min_years, excluded, dl, gaps=None) -> dict:
    """Columns of trends.csv for every series and variant (series-major, variants in the
    order of :data:`VARIANTS`), as :func:`_row` makes them one at a time."""
    n_keys, variants = len(keys), list(VARIANTS)

    def order(a):                     # series-major: series 0 all, series 0 without, ...
        return np.stack([np.asarray(a[v]) for v in variants], axis=1).reshape(-1)
    st = {f: order({v: stats_by_variant[v][f] for v in variants})
          for f in stats_by_variant[variants[0]]}
    key_cols = list(zip(*keys)) if keys else [()] * len(KEYS)
    cols = {k: np.repeat(np.asarray(key_cols[i], dtype=object), len(variants))
            for i, k in enumerate(KEYS)}
    n = st["n"].astype(np.int64)
    valid = (n >= min_years) & np.isfinite(st["p_value"])
    variant = np.tile(np.asarray(variants, dtype=object), n_keys)
    exc = order(excluded)
    dl_rep = np.repeat(np.asarray(dl, dtype=object), len(variants))
    gap_rep = np.repeat(np.asarray(gaps if gaps is not None else [""] * n_keys, dtype=object),
                        len(variants))
    notes = [_note(va, few, min_years, ex, d, _flags(k, v, m, g, md))
             for va, few, ex, d, k, v, m, g, md
             in zip(variant.tolist(), (n < min_years).tolist(), exc.tolist(), dl_rep.tolist(),
                    n.tolist(), st["var_s"].tolist(), st["min"].tolist(), gap_rep.tolist(),
                    st["median"].tolist())]
    med = st["median"]
    with np.errstate(invalid="ignore", divide="ignore"):
        pct = np.where(np.isfinite(med) & (med != 0) & ~(st["min"] < 0),
                       100.0 * st["slope"] / np.where(med != 0, med, 1.0), np.nan)

    def year(v):
        if np.isnan(v).all():
            return np.full(v.shape, None, dtype=object)
        return v.astype(np.int64) if not np.isnan(v).any() else v
    cols.update({"series": np.full(n.size, series, dtype=object), "n_years": n,
                 "first_year": year(st["t_first"]), "last_year": year(st["t_last"]),
                 "test": np.full(n.size, "mann_kendall" if series == "annual"
                                 else "seasonal_kendall_hirsch_slack", dtype=object),
                 "tau": st["tau"], "p_value": st["p_value"], "sen_slope_per_yr": st["slope"],
                 "sen_slope_pct_per_yr": pct, "valid": valid,
                 "note": np.asarray(notes, dtype=object), "values": variant, "s": st["s"],
                 "var_s": st["var_s"], "z": st["z"], "slope_low_per_yr": st["slope_low"],
                 "slope_high_per_yr": st["slope_high"], "intercept": st["intercept"],
                 "unit": np.full(n.size, "kg ha-1 yr-1", dtype=object),
                 "method_changes": np.full(n.size, "", dtype=object)})
    if "hr_p_value" in st:
        cols.update({c: st[k] for c, k in HAMED_RAO_COLUMNS.items()})
        for i in np.flatnonzero(st["hr_p_held"].astype(bool)):
            cols["note"][i] += "; " + P_HELD.format(p_min=st["hr_p_min"][i], n=int(n[i]),
                                                    raw=st["hr_p_raw"][i])
    return cols


def _annual_columns(y, dl_notes, min_years, alpha, serial=None):
    """Mann-Kendall columns of :func:`trend_table`: the (series, year) grid of every
    series at once (:func:`.trends_batch.mann_kendall_batch`)."""
    import pandas as pd
    from .trends_batch import hamed_rao_batch, mann_kendall_batch
    keys, code, order = _series_index(y)
    code = code[order]
    year = pd.DatetimeIndex(y["period_start"]).year.to_numpy()[order]
    x = y["flux_kg_ha_yr"].to_numpy(float)[order]
    status = y["status"].astype(str).to_numpy()[order]
    all_years, yi = np.unique(year, return_inverse=True)
    if np.any(np.bincount(code * all_years.size + yi, minlength=len(keys) * all_years.size)
              > 1):
        return None                                  # a year twice in a series
    stats, excluded = {}, {}
    for variant, keep in VARIANTS.items():
        use = np.isin(status, keep) & np.isfinite(x)
        grid = np.full((len(keys), all_years.size), np.nan)
        grid[code[use], yi[use]] = x[use]
        stats[variant] = mann_kendall_batch(grid, all_years.astype(float), alpha)
        if serial == "hamed_rao":
            hr = hamed_rao_batch(grid, all_years.astype(float), stats[variant], alpha)
            stats[variant].update({f"hr_{k}": v for k, v in hr.items()})
        excluded[variant] = _left_out_notes(code[~use], status[~use], len(keys),
                                            year[~use])
    dl = [_dl_note(dl_notes, *k[:1], *k[2:]) for k in keys]
    return _table_rows(keys, "annual", stats, min_years, excluded, dl,
                       _gap_notes(code, year, len(keys)))


def _annual_rows_per_series(y, dl_notes, min_years, alpha, serial=None):
    """The annual rows one series at a time (a series with two rows in one year)."""
    import pandas as pd
    keys, code, order = _series_index(y)
    year = pd.DatetimeIndex(y["period_start"]).year.to_numpy()[order]
    x_all = y["flux_kg_ha_yr"].to_numpy(float)[order]
    status_all = y["status"].astype(str).to_numpy()[order]
    bounds = np.searchsorted(code[order], np.arange(len(keys) + 1))
    rows = []
    for c, key in enumerate(keys):
        sl = slice(bounds[c], bounds[c + 1])
        years, x, status = year[sl], x_all[sl], status_all[sl]
        dl = _dl_note(dl_notes, *key[:1], *key[2:])
        gaps = _gap_notes(np.zeros(years.size, np.int64), years, 1)[0]
        for variant, keep in VARIANTS.items():
            use = np.isin(status, keep) & np.isfinite(x)
            excluded = _left_out_notes(np.zeros(int((~use).sum()), np.int64), status[~use], 1,
                                       years[~use])[0]
            r = mann_kendall(np.where(use, x, np.nan), years.astype(float), alpha)
            rows.append(_row(key, "annual", variant, years[use], r, min_years,
                             np.median(x[use]) if use.any() else np.nan, excluded, dl,
                             np.min(x[use]) if use.any() else np.nan, gaps))
            if serial == "hamed_rao":
                factor, var_s, z, raw = _hamed_rao(np.where(use, x, np.nan),
                                                   years.astype(float), alpha)
                p_min = exact_min_p(x[use])
                held = bool(np.isfinite(raw) and raw < p_min)
                rows[-1].update(zip(HAMED_RAO_COLUMNS, (factor, var_s, z,
                                                        p_min if held else raw, p_min)))
                if held:
                    rows[-1]["note"] += "; " + P_HELD.format(p_min=p_min, n=int(use.sum()),
                                                             raw=raw)
    return rows


def _monthly_columns(month_rows, dl_notes, min_years, alpha):
    """Seasonal Kendall columns of :func:`trend_table`.  The (series, year, month) grid
    of each variant is built once for all series (one groupby); a year a series has no
    row in is NaN and enters no pair (:func:`.trends_batch.seasonal_kendall_batch`)."""
    import pandas as pd
    from .trends_batch import seasonal_kendall_batch
    m = month_rows[month_rows["period"].astype(str) != "span"]
    keys, code, _ = _series_index(m)
    ps = pd.DatetimeIndex(m["period_start"])
    year, month = ps.year.to_numpy(), ps.month.to_numpy()
    flux = m["flux_kg_ha_yr"].to_numpy(float)
    status = m["status"].astype(str).to_numpy()
    inside = code >= 0
    all_years, yi = np.unique(year, return_inverse=True)
    stats, excluded = {}, {}
    for variant, keep in VARIANTS.items():
        ok = np.isin(status, keep) & np.isfinite(flux)
        n_out = np.bincount(code[inside & ~ok], minlength=len(keys))
        sel = inside & ok          # one groupby mean of repeated months, as pivot_table
        cell = pd.DataFrame({"c": code[sel], "y": yi[sel], "m": month[sel] - 1,
                             "f": flux[sel]}).groupby(["c", "y", "m"])["f"].mean()
        grid = np.full((len(keys), all_years.size, 12), np.nan)
        grid[tuple(np.asarray(cell.index.get_level_values(i)) for i in range(3))] = cell.to_numpy()
        stats[variant] = seasonal_kendall_batch(grid, all_years.astype(float), alpha)
        del grid
        excluded[variant] = [f"{n} months left out by status" if n else "" for n in n_out]
    dl = [_dl_note(dl_notes, *k[:1], *k[2:]) for k in keys]
    return _table_rows(keys, "monthly", stats, min_years, excluded, dl)


def trend_table(year_rows, month_rows=None, dl_notes=None, min_years=MIN_YEARS,
                alpha=ALPHA, changes=None, serial_correction=None):
    """``trends.csv``: a trend per site, receptor, element, pathway and species.

    Parameters
    ----------
    year_rows : DataFrame
        budget.csv rows of calendar years (:func:`workbench.tables.budget_table` of
        ``Result.years``): ``flux_kg_ha_yr`` [kg ha-1 yr-1] and ``status``.
    month_rows : DataFrame, optional
        The same for calendar months (seasonal Kendall test on them).
    dl_notes : dict, optional
        :func:`detection_limit_notes`.
    min_years : int
        Fewest complete years of a valid trend (:data:`MIN_YEARS`).
    changes : dict, optional
        :func:`change_notes`: a row whose years cross a change of method names it in
        ``method_changes`` and in its note.
    serial_correction : {None, "hamed_rao"}
        ``"hamed_rao"`` adds, beside the plain Mann-Kendall test of each annual row, the
        test with the Hamed and Rao (1998) variance correction for serial correlation
        (:func:`hamed_rao`): the columns of :data:`HAMED_RAO_COLUMNS` (NaN on the
        monthly rows).  The default leaves the table as it was.

    Returns
    -------
    DataFrame
        :data:`TREND_COLUMNS`, then ``values`` (``all`` or ``without_filled``), S,
        Var(S), z, the slope's confidence interval, the intercept, the unit and
        ``method_changes``.  A year enters when its status is complete (or filled, for
        ``all``); the note counts the years left out by status.
    """
    import pandas as pd
    if serial_correction not in SERIAL_CORRECTIONS:
        raise ValueError(f"serial_correction {serial_correction!r}: expected one of "
                         f"{SERIAL_CORRECTIONS}")
    dl_notes = dl_notes or {}
    y = year_rows[year_rows["period"].astype(str) != "span"]
    parts = []
    annual = _annual_columns(y, dl_notes, min_years, alpha, serial_correction)
    parts.append(pd.DataFrame(annual) if annual is not None
                 else pd.DataFrame(_annual_rows_per_series(y, dl_notes, min_years, alpha,
                                                           serial_correction)))
    if month_rows is not None and len(month_rows):
        parts.append(pd.DataFrame(_monthly_columns(month_rows, dl_notes, min_years, alpha)))
    parts = [p for p in parts if len(p)]
    if not parts:
        return pd.DataFrame(columns=list(TREND_COLUMNS) + ["method_changes"])
    table = parts[0] if len(parts) == 1 else pd.concat(parts, ignore_index=True)
    if serial_correction == "hamed_rao":           # monthly rows: NaN, columns last
        table = table.reindex(columns=[c for c in table.columns if c not in
                                       HAMED_RAO_COLUMNS] + list(HAMED_RAO_COLUMNS))
    crossed, note = _change_columns(table, changes)
    return table.assign(note=note, method_changes=crossed)
