"""The Monte Carlo's share of gap-filled Vd per sampling period is the budget's.

The budget reckons the hours behind a reporting period's flux whose Vd is not modelled
(filled from the diurnal cycle, or missing and taken as the sampling period's mean)
with :func:`workbench.drycomponents.covered_filled_share`.  The linear layer of the
Monte Carlo used to keep its own share per sampling period (filled hours over the whole
sampling period, the hours without any Vd left out, the same share in every reporting
period the sample straddles).  Now both read
:func:`workbench.drycomponents.row_filled_hours`; the test rebuilds the budget's
share from each sampling period alone and compares.
"""
import numpy as np

from workbench.analysis.layer import linear_layer
from workbench.drycomponents import covered_filled_share
from workbench.dryflux import period_axes
from workbench.periods import hour_bounds


def test_layer_filled_share_is_the_budgets_per_row_and_period(analysis_run):
    _, result, study = analysis_run
    lay = linear_layer(result, study, "years")
    o = result.options
    rows = study.dry_rows(o["dry"], o["budget"], o.get("fixed_velocity"), None,
                          o.get("receptors"))
    axes = period_axes(result.periods if result.years is result.budget
                       else study.periods("year", None, None, o["wet"].hydro_start_month))
    pa, pb = hour_bounds(rows["times"], axes.start, axes.end)
    row_sites = list(rows["sites"])
    checked = some_filled = straddling = 0
    for k, s in enumerate(str(v) for v in lay.budget["site"].values):
        for sp, pieces in lay.sites[k].dry.items():
            r = rows["species"][sp]
            _, c_fill = rows["vd_cum"][sp]
            assert pieces.filled.shape == pieces.contrib.shape          # (n, P, R)
            for n, i in enumerate(pieces.row_id):
                one = slice(i, i + 1)
                want = covered_filled_share(r["site_index"][one], r["a"][one], r["b"][one],
                                            c_fill, pa, pb, r.get("cn"))
                want = want[row_sites.index(s)].T                       # (P, R)
                got = pieces.filled[n]
                has = np.isfinite(want)
                np.testing.assert_allclose(got[has], want[has], rtol=1e-12, atol=1e-15)
                checked += 1
                some_filled += bool((want[has] > 0).any())
                straddling += int(has.any(axis=1).sum() > 1)
    # the data exercise the case: rows with filled hours, rows across a year's end
    assert checked > 100 and some_filled > 0 and straddling > 0


def test_budget_share_is_the_sum_of_the_rows(analysis_run):
    """covered_filled_share is the hour-weighted sum of row_filled_hours (one source)."""
    from workbench.drycomponents import row_filled_hours
    _, result, study = analysis_run
    o = result.options
    rows = study.dry_rows(o["dry"], o["budget"], o.get("fixed_velocity"), None,
                          o.get("receptors"))
    axes = period_axes(result.periods)
    pa, pb = hour_bounds(rows["times"], axes.start, axes.end)
    for sp, r in rows["species"].items():
        c_fill = rows["vd_cum"][sp][1]
        share = covered_filled_share(r["site_index"], r["a"], r["b"], c_fill, pa, pb, r.get("cn"))
        part, hours = row_filled_hours(r["site_index"], r["a"], r["b"], c_fill, pa, pb,
                                       r.get("cn"))
        for s in np.unique(r["site_index"]):
            m = r["site_index"] == s
            h = hours[m].sum(0)[:, None]                                 # (P, 1)
            with np.errstate(invalid="ignore", divide="ignore"):
                want = np.where(h > 0, part[m].sum(0) / h, np.nan).T      # (R, P)
            np.testing.assert_allclose(share[s], want, rtol=1e-12, equal_nan=True)
