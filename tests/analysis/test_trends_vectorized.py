"""trend_table builds its series from one index of all series (no pandas call per
series); its table must equal, value for value, the table built one series at a time with
a groupby and a pivot per series (the former implementation, kept here as the
reference).  The statistics themselves are checked against pymannkendall in
test_trends.py and test_trend_table.py."""
import numpy as np
import pandas as pd
import pytest

from workbench.analysis.trends import (KEYS, VARIANTS, _dl_note, _row, mann_kendall,
                                       seasonal_kendall, trend_table)


def _reference(year_rows, month_rows=None, dl_notes=None, min_years=10, alpha=0.05):
    """trends.csv built per series (a groupby, a sort and a pivot table per series)."""
    dl_notes = dl_notes or {}
    rows = []
    y = year_rows[year_rows["period"].astype(str) != "span"].copy()
    y["year"] = pd.DatetimeIndex(y["period_start"]).year
    for key, g in y.groupby(KEYS, sort=False):
        g = g.sort_values("year", kind="stable")
        years = g["year"].to_numpy()
        x = g["flux_kg_ha_yr"].to_numpy(float)
        status = g["status"].astype(str).to_numpy()
        dl = _dl_note(dl_notes, *key[:1], *key[2:])
        for variant, keep in VARIANTS.items():
            use = np.isin(status, keep) & np.isfinite(x)
            left = pd.Series(status[~use]).value_counts()
            out_years = {s: " ".join(sorted(str(y) for y in years[~use][status[~use] == s]))
                         for s in left.index}
            excluded = ("years left out: " + ", ".join(f"{n} {s} ({out_years[s]})"
                                                       for s, n in left.items())
                        if len(left) else "")
            r = mann_kendall(np.where(use, x, np.nan), years.astype(float), alpha)
            gap = sorted(set(range(years.min(), years.max() + 1)) - set(years.tolist()))
            rows.append(_row(key, "annual", variant, years[use], r, min_years,
                             np.median(x[use]) if use.any() else np.nan, excluded, dl,
                             x[use].min() if use.any() else np.nan,
                             "no row for " + " ".join(map(str, gap)) if gap else ""))
    if month_rows is not None and len(month_rows):
        m = month_rows[month_rows["period"].astype(str) != "span"].copy()
        ps = pd.DatetimeIndex(m["period_start"])
        m["year"], m["month"] = ps.year, ps.month
        for key, g in m.groupby(KEYS, sort=False):
            dl = _dl_note(dl_notes, *key[:1], *key[2:])
            for variant, keep in VARIANTS.items():
                ok = g["status"].astype(str).isin(keep) & np.isfinite(g["flux_kg_ha_yr"])
                grid = g[ok].pivot_table(index="year", columns="month", values="flux_kg_ha_yr")
                grid = grid.reindex(columns=range(1, 13))
                full_years = sorted(set(g["year"]))
                grid = grid.reindex(full_years)
                r = seasonal_kendall(grid.to_numpy(float), np.asarray(full_years, float),
                                     True, alpha)
                used = grid.index[grid.notna().any(axis=1)].to_numpy()
                n_out = int((~ok).sum())
                rows.append(_row(key, "monthly", variant, used, r, min_years,
                                 float(np.nanmedian(grid.to_numpy())) if used.size else np.nan,
                                 f"{n_out} months left out by status" if n_out else "", dl,
                                 np.nanmin(grid.to_numpy()) if used.size else np.nan))
    return pd.DataFrame(rows)


def _random_rows(seed, monthly):
    """Invented budget rows: 4 sites x 2 receptors x 3 species, 1 to 15 years with gaps,
    tied values (rounded), NaN fluxes, mixed statuses, rows shuffled, a span row."""
    rng = np.random.default_rng(seed)
    parts = []
    for site in ("alpha", "bravo", "charlie", "delta"):
        for receptor in ("grass", "forest"):
            for element, pathway, species in (("S", "wet", "SO4"), ("N", "dry", "NH3"),
                                              ("N", "total", "all")):
                n = int(rng.choice([1, 2, 3, 6, 12, 15]))
                years = np.sort(rng.choice(np.arange(2000, 2020), n, replace=False))
                if monthly:
                    months = rng.choice(np.arange(1, 13), (n, 12)) if rng.random() < 0.5 \
                        else np.tile(np.arange(1, 13), (n, 1))
                    keep = rng.random((n, 12)) > 0.2
                    start = [f"{yy}-{mm:02d}-01" for yy, row, k in zip(years, months, keep)
                             for mm, kk in zip(row, k) if kk]
                else:
                    start = [f"{yy}-01-01" for yy in years]
                k = len(start)
                x = np.round(rng.normal(5.0, 1.0, k), 1)         # ties
                x[rng.random(k) < 0.1] = np.nan
                status = rng.choice(["complete", "complete", "complete", "filled",
                                     "flagged", "missing"], k)
                parts.append(pd.DataFrame({
                    "site": site, "receptor": receptor, "element": element,
                    "pathway": pathway, "species": species,
                    "period": [s[:7] if monthly else s[:4] for s in start],
                    "period_start": pd.to_datetime(start), "flux_kg_ha_yr": x,
                    "status": status}))
    rows = pd.concat(parts, ignore_index=True)
    span = rows.iloc[:1].assign(period="span")
    rows = pd.concat([rows.sample(frac=1.0, random_state=seed), span], ignore_index=True)
    return rows


@pytest.mark.parametrize("seed", [0, 1, 2, 3])
def test_vectorized_table_equals_the_per_series_table(seed):
    years = _random_rows(seed, monthly=False)
    months = _random_rows(seed + 100, monthly=True)
    notes = {("bravo", "SO4"): "detection limit of SO4 changed (years with a new set of "
                               "limits: 2011)"}
    got = trend_table(years, months, notes, min_years=5)
    want = _reference(years, months, notes, min_years=5)
    assert len(got) == len(want) > 0
    assert (got["series"] == "monthly").any() and (got["n_years"] < 3).any()
    assert got["note"].str.contains("years left out").any()
    assert got["note"].str.contains("months left out").any()
    pd.testing.assert_frame_equal(got, want, check_exact=True)


def test_rows_without_a_key_are_left_out_as_in_groupby():
    years = _random_rows(5, monthly=False)
    years.loc[years.index[:3], "species"] = np.nan
    pd.testing.assert_frame_equal(trend_table(years), _reference(years), check_exact=True)


def test_a_year_twice_in_a_series_is_tested_one_series_at_a_time():
    """Two rows of one year in a series (not the table of a run, but a table a user may
    pass) make the annual rows one series at a time; same table."""
    years = _random_rows(6, monthly=False)
    first = years[years["period"] != "span"].iloc[0]
    years = pd.concat([years, first.to_frame().T.astype(years.dtypes)], ignore_index=True)
    pd.testing.assert_frame_equal(trend_table(years, min_years=3),
                                  _reference(years, min_years=3), check_exact=True)


def test_lean_budget_rows_are_the_trend_columns_of_the_full_table(analysis_run):
    """budget_table(lean=True) has the columns a trend reads, the same rows in the same
    order as the full table; trends from either are the same."""
    from workbench.tables import budget_table
    _, result, _ = analysis_run
    full, lean = budget_table(result.years), budget_table(result.years, lean=True)
    pd.testing.assert_frame_equal(lean, full[list(lean.columns)], check_exact=True)
    pd.testing.assert_frame_equal(trend_table(lean), trend_table(full), check_exact=True)
