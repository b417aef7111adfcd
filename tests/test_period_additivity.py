"""Budgets over months, seasons, hydrological years and custom spans against the
calendar year: what adds up, what does not, and why (docs/budget.md, "Periods other
than the calendar year").

Reference values are computed independently with pandas: each sample (or air period)
is spread uniformly over its hours on an hourly index and the hours are summed with
``resample``/``groupby`` over the calendar (pandas' own month, quarter-from-December and
year anchors), not with :mod:`workbench.periods`.  The share-of-hours rule itself is
docs/methods_wet.md section 4 (our choice, stated there); uniform rain within a sample
is what it assumes.
"""
import numpy as np
import pandas as pd
import pytest
from wet.wet_samples import make_samples

from workbench import periods as P
from workbench.dryflux import period_deposition, to_periods
from workbench.wet import screen, wet_deposition

IONS = ("SO4", "NO3", "NH4")
H = pd.Timedelta(hours=1)


def _bal(so4, no3, nh4):
    """Composition whose free acidity closes the balance (umol/L)."""
    return dict(SO4=so4, NO3=no3, NH4=nh4, pH=-np.log10((2 * so4 + no3 - nh4) * 1e-6))


def _weekly(start="2020-12-01T09:00", end="2023-01-10", flags=None):
    """Weekly samples changed on Tuesdays at 09:00 UTC; every depth and SO4 differ."""
    rows, t, k = [], pd.Timestamp(start), 0
    flags = flags or {}
    while t < pd.Timestamp(end):
        r = dict(start=str(t), end=str(t + pd.Timedelta(days=7)),
                 gauge_depth=1.0 + (7 * k) % 11, **_bal(8.0 + (5 * k) % 13, 20.0, 10.0))
        if str(t) in flags:
            r["flags"] = flags[str(t)]
        rows.append(r)
        t, k = t + pd.Timedelta(days=7), k + 1
    return rows


def _hourly_reference(rows):
    """Hourly depth [mm] and SO4 amount [mol m-2] of the samples, each spread evenly
    over its hours (pandas; independent of workbench.periods)."""
    parts = []
    for r in rows:
        idx = pd.date_range(r["start"], r["end"], freq="h", inclusive="left")
        n = len(idx)
        parts.append(pd.DataFrame({"P": r["gauge_depth"] / n,
                                   "D": r["gauge_depth"] * r["SO4"] * 1e-6 / n}, index=idx))
    return pd.concat(parts)


@pytest.mark.parametrize("resolution, rule", [("month", "MS"), ("season", "QS-DEC"),
                                              ("year", "YS"), ("hydro_year", "YS-OCT")])
def test_wet_periods_match_pandas_resample_when_every_sample_is_valid(resolution, rule):
    """Every sample valid: precipitation and SO4 deposition of each month, season (DJF
    with the December before), year and hydrological year equal pandas' resample of the
    hourly spread, and the periods add up to the samples' totals (mass and depth kept)."""
    rows = _weekly()
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2020-10-01", "2023-01-10", resolution))
    ref = _hourly_reference(rows).resample(rule).sum()
    ref.index = ref.index.values.astype("datetime64[ns]")
    got = pd.DataFrame({"P": wet["precipitation"].values[0], "D": wet["dep_SO4"].values[0]},
                       index=wet["period_start"].values).dropna()
    ref = ref.reindex(got.index).fillna(0.0)
    np.testing.assert_allclose(got["P"], ref["P"], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(got["D"], ref["D"], rtol=1e-12, atol=1e-18)
    total_p = sum(r["gauge_depth"] for r in rows)
    total_d = sum(r["gauge_depth"] * r["SO4"] * 1e-6 for r in rows)
    assert got["P"].sum() == pytest.approx(total_p, rel=1e-12)
    assert got["D"].sum() == pytest.approx(total_d, rel=1e-12)


def test_months_add_up_to_their_year_only_where_the_same_samples_are_used():
    """sum_i c_i d_i is additive: the months of 2021 hold the year's SO4 exactly when
    every sample is valid.  With one contaminated week the year's PWM stands for the
    lost week's rain over the whole year, each month's over that month only: the sums
    differ (docs/methods_wet.md section 5), while the precipitation still adds up."""
    months = P.make_periods("2021-01-01", "2022-01-01", "month")
    year = P.make_periods("2021-01-01", "2022-01-01", "year")
    for flags, same in (({}, True), ({"2021-03-09 09:00:00": "contaminated"}, False)):
        sc = screen(make_samples(_weekly(flags=flags), ions=IONS))
        m, y = wet_deposition(sc, months), wet_deposition(sc, year)
        assert m["precipitation"].values.sum() == pytest.approx(
            y["precipitation"].item(), rel=1e-12)
        if same:
            assert m["dep_SO4"].values.sum() == pytest.approx(y["dep_SO4"].item(), rel=1e-12)
        else:
            assert m["dep_SO4"].values.sum() != pytest.approx(y["dep_SO4"].item(), rel=1e-6)


def test_djf_takes_the_december_before_and_partial_seasons_are_flagged():
    """2021-DJF = 1 Dec 2020 - 1 Mar 2021 (2160 h); a record from 5 January 2021 to
    28 December 2021 leaves 2021-DJF and 2022-DJF partial: both flagged with their
    share, never complete-looking (hours by hand: 5 Jan 09:00 is 4 d 9 h = 105 h
    after 1 Jan, so 2021-DJF has 2160 - 744 - 105 = 1311 h covered)."""
    rows = _weekly("2021-01-05T09:00", "2021-12-22")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2021-01-05", "2021-12-29", "season"))
    assert wet["period"].values.tolist() == ["2021-DJF", "2021-MAM", "2021-JJA",
                                             "2021-SON", "2022-DJF"]
    assert str(wet["period_start"].values[0])[:10] == "2020-12-01"
    assert wet["period_hours"].values[0] == 90 * 24
    assert wet["coverage_fraction"].values[0, 0] == pytest.approx(1311 / 2160)
    status = wet["status"].values[0].tolist()
    assert status[0] == status[-1] == "flagged"
    assert status[1:4] == ["complete"] * 3
    assert "sample coverage below minimum (60.7 % of the period" in \
        wet["completeness_reasons"].values[0, 0]


def test_sample_ending_at_midnight_of_the_first_is_counted_once():
    """A sample ending at 2021-02-01 00:00 UTC (end exclusive) is January's alone; the
    next one from that instant is February's: no hour in both, none lost."""
    rows = [dict(start="2021-01-25T00:00", end="2021-02-01T00:00", gauge_depth=7.0,
                 **_bal(10, 20, 10)),
            dict(start="2021-02-01T00:00", end="2021-02-08T00:00", gauge_depth=3.0,
                 **_bal(20, 20, 10))]
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2021-01-01", "2021-03-01", "month"))
    assert wet["precipitation"].values[0].tolist() == [7.0, 3.0]
    assert wet["n_samples"].values[0].tolist() == [1, 1]
    split = P.split_intervals([r["start"] for r in rows], [r["end"] for r in rows],
                              P.make_periods("2021-01-01", "2021-03-01", "month"))
    assert split["hours"].tolist() == [168.0, 168.0]
    assert split["period"].tolist() == [0, 1]


@pytest.mark.parametrize("resolution", ["month", "season", "year", "hydro_year"])
def test_hours_of_the_periods_are_the_hours_attributed(resolution):
    """End-labelled hourly records of 2020-11-01 01:00 ... 2023-01-01 00:00 UTC (a
    local-standard-time record at UTC+1 converted to UTC, so that its hours do not start
    at a period edge in local time): every hour lands in one period, each period gets its
    length in hours, the hour ending at 00:00 on the 1st goes to the month before
    (pandas' resample with label 'right' as reference)."""
    local = pd.date_range("2020-11-01T02:00", "2023-01-01T01:00", freq="h")   # UTC+1
    times = (local - H).values                                                # UTC ends
    per = P.make_periods("2020-11-01", "2023-01-01", resolution)
    k = P.assign_hours(times, per)
    assert (k >= 0).all()
    counts = np.bincount(k, minlength=len(per))
    inside = (per["start"] >= pd.Timestamp("2020-11-01")) & (per["end"] <= pd.Timestamp("2023-01-01"))
    np.testing.assert_array_equal(counts[inside.values], per["hours"].values[inside.values])
    assert counts.sum() == len(times)
    ref = pd.Series(1, index=pd.DatetimeIndex(times) - H).resample("MS").sum()
    if resolution == "month":
        np.testing.assert_array_equal(counts, ref.values)


def _dry(rows_air, vd_value_fn, start, hours):
    import xarray as xr
    t = pd.date_range(start, periods=hours, freq="h")
    vd_vals = vd_value_fn(t)
    vd = xr.DataArray(np.asarray(vd_vals, float)[None, None, :], dims=("site", "receptor", "time"),
                      coords={"site": ["a"], "receptor": ["grass"], "time": t.values})
    df = pd.DataFrame(rows_air, columns=["start", "end", "value"])
    n = len(df)
    air = xr.Dataset({
        "site": ("period", np.full(n, "a")),
        "start": ("period", pd.to_datetime(df["start"]).values),
        "end": ("period", pd.to_datetime(df["end"]).values),
        "line": ("period", np.arange(n) + 2), "sampler_id": ("period", np.full(n, "s1")),
        "SO2": ("period", df["value"].values.astype(float), {"quantity": "amount_density"}),
        "SO2_censored": ("period", np.zeros(n, bool)),
        "SO2_detection_limit": ("period", np.full(n, np.nan))})
    return air, vd


def test_dry_months_add_up_to_the_year_when_covered_and_not_across_a_gap():
    """Weekly SO2 with an hourly Vd of a diurnal cycle over 2021: the months' dry flux
    (each weekly flux split by the sum of Vd in each part) adds up to the year's, and
    each month equals a pandas groupby of the hourly C x Vd x 3600 s.  With a week
    missing, each period scales its own flux by its own covered hours (docs/budget.md,
    "Reporting periods"): the months no longer add up to the year."""
    def vd_fn(t):
        return 0.002 + 0.004 * np.clip(np.sin((t.hour.values - 6) / 24 * 2 * np.pi), 0, None)
    weeks = pd.date_range("2020-12-29T09:00", "2022-01-04T09:00", freq="7D")
    conc = 1e-8 * (1 + (np.arange(len(weeks) - 1) % 5))
    rows = list(zip(weeks[:-1].astype(str), weeks[1:].astype(str), conc))
    start, hours = "2020-12-29T01:00", 24 * 375
    months = P.make_periods("2021-01-01", "2022-01-01", "month")
    year = P.make_periods("2021-01-01", "2022-01-01", "year")

    air, vd = _dry(rows, vd_fn, start, hours)
    r, cs = period_deposition(air, "SO2", vd, None)
    tt = vd["time"].values
    dm = to_periods(r, cs, ["a"], months, tt)["deposition"].values[0, 0]
    dy = to_periods(r, cs, ["a"], year, tt)["deposition"].values[0, 0]
    assert dm.sum() == pytest.approx(dy[0], rel=1e-12)
    # pandas reference: hour ending t has its middle at t - 30 min; C of the week holding it
    t = pd.DatetimeIndex(tt)
    mid = t - pd.Timedelta(minutes=30)
    wk = np.searchsorted(weeks.values, mid.values, side="right") - 1
    c = np.where((wk >= 0) & (wk < len(conc)), conc[np.clip(wk, 0, len(conc) - 1)], np.nan)
    flux = pd.Series(c * vd.values[0, 0] * 3600.0, index=mid)
    ref = flux[(mid >= "2021-01-01") & (mid < "2022-01-01")].resample("MS").sum()
    np.testing.assert_allclose(dm, ref.values, rtol=1e-10)

    gap = [x for x in rows if x[0] != "2021-03-09 09:00:00"]
    assert len(gap) == len(rows) - 1
    air, vd = _dry(gap, vd_fn, start, hours)
    r, cs = period_deposition(air, "SO2", vd, None)
    dm = to_periods(r, cs, ["a"], months, tt)["deposition"].values[0, 0]
    dy = to_periods(r, cs, ["a"], year, tt)["deposition"].values[0, 0]
    assert dm.sum() != pytest.approx(dy[0], rel=1e-6)


def test_month_with_one_contaminated_week_names_the_week_and_its_share():
    """March 2021 (744 h) with the week of 9-16 March (168 h) contaminated: coverage
    576/744 = 77.4 % < 90 %, and the reason names the week, its line, its share of the
    month (168/744 = 22.6 %) and why it is not used (before: the share alone)."""
    rows = _weekly(flags={"2021-03-09 09:00:00": "contaminated"})
    line = 2 + [r["start"] for r in rows].index("2021-03-09 09:00:00")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2021-01-01", "2022-01-01", "month"))
    march = wet.sel(site="A", period="2021-03")
    assert march["coverage_fraction"].item() == pytest.approx(576 / 744)
    assert march["status"].item() == "flagged"
    reason = march["completeness_reasons"].item()
    assert reason.startswith(
        "sample coverage below minimum (77.4 % of the period; minimum 90 %), not covered: "
        f"168 h (22.6 %) of sample 2021-03-09 line {line} (excluded: flag contaminated")
    # a month that passes says nothing of the kind; the split of the reasons keeps it whole
    assert "not covered" not in wet.sel(site="A", period="2021-04")["completeness_reasons"].item()
    from workbench.budgetstatus_notes import split_notes
    assert split_notes(reason)[0].endswith("visibly contaminated)")
