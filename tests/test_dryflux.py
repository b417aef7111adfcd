"""Dry flux integration over sampling periods, checked by arithmetic."""
import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.dryflux import DryFluxOptions, fill_diurnal, period_deposition, to_periods
from workbench.periods import make_periods


def _vd(values, start="2021-01-01T01:00", sites=("a",), receptors=("grass",)):
    values = np.asarray(values, float)
    t = pd.date_range(start, periods=values.shape[-1], freq="h").values
    data = np.broadcast_to(values, (len(sites), len(receptors), values.shape[-1])).copy()
    return xr.DataArray(data, dims=("site", "receptor", "time"),
                        coords={"site": list(sites), "receptor": list(receptors), "time": t})


def _air(rows, species="SO2", quantity="amount_density"):
    df = pd.DataFrame(rows, columns=["site", "start", "end", "value"])
    n = len(df)
    ds = xr.Dataset({
        "site": ("period", df["site"].values.astype(str)),
        "start": ("period", pd.to_datetime(df["start"]).values),
        "end": ("period", pd.to_datetime(df["end"]).values),
        "line": ("period", np.arange(n) + 2),
        "sampler_id": ("period", np.full(n, "s1")),
        species: ("period", df["value"].values.astype(float), {"quantity": quantity}),
        f"{species}_censored": ("period", np.zeros(n, bool)),
        f"{species}_detection_limit": ("period", np.full(n, np.nan)),
    })
    return ds


def test_constant_vd_weekly_by_arithmetic():
    """C = 1e-8 mol/m3 for a week at Vd = 0.005 m/s: D = C Vd 7 x 86400 s (arithmetic)."""
    hours = 24 * 14
    vd = _vd(np.full(hours, 0.005))
    air = _air([("a", "2021-01-01T00:00", "2021-01-08T00:00", 1e-8),
                ("a", "2021-01-08T00:00", "2021-01-15T00:00", 2e-8)])
    rows, cs = period_deposition(air, "SO2", vd, None)
    np.testing.assert_allclose(rows["deposition"].values[:, 0],
                               [1e-8 * 0.005 * 7 * 86400, 2e-8 * 0.005 * 7 * 86400])
    np.testing.assert_allclose(rows["mean_vd"].values[:, 0], 0.005)


def test_mean_of_conductances_not_of_resistances():
    """The period Vd is the mean of hourly Vd (0.01 and 0.001 -> 0.0055), not
    1/mean(1/Vd) (-> 0.00182): conductances average, resistances do not (common practice)."""
    vd = _vd(np.tile([0.01, 0.001], 12 * 7))
    air = _air([("a", "2021-01-01T00:00", "2021-01-08T00:00", 1.0)])
    rows, _ = period_deposition(air, "SO2", vd, None)
    assert rows["mean_vd"].values[0, 0] == pytest.approx(0.0055)


def test_missing_week_scales_by_coverage():
    """Three of four weeks measured in a 28-day period: D = (sum of three) x 4/3, coverage 0.75."""
    vd = _vd(np.full(24 * 28, 0.002), start="2021-02-01T01:00")
    air = _air([("a", "2021-02-01", "2021-02-08", 1e-8), ("a", "2021-02-08", "2021-02-15", 1e-8),
                ("a", "2021-02-22", "2021-03-01", 4e-8)])
    rows, cs = period_deposition(air, "SO2", vd, None)
    periods = make_periods("2021-02-01", "2021-03-01", "month")
    out = to_periods(rows, cs, ["a"], periods, vd["time"].values)
    week = 0.002 * 7 * 86400
    expected = (1e-8 + 1e-8 + 4e-8) * week * 4 / 3
    assert out["deposition"].values[0, 0, 0] == pytest.approx(expected)
    assert out["coverage"].values[0, 0] == pytest.approx(0.75)


def test_straddling_period_split_by_vd():
    """A period across a month boundary is split by the sum of hourly Vd in each part:
    Vd 0.004 in the first 24 h and 0.001 in the next 48 h -> shares 1/3 and 2/3... by Vd:
    24*0.004 = 0.096 vs 48*0.001 = 0.048 -> 2/3 and 1/3 (arithmetic)."""
    vd = _vd(np.r_[np.full(24, 0.004), np.full(48, 0.001)], start="2021-01-31T01:00")
    air = _air([("a", "2021-01-31T00:00", "2021-02-03T00:00", 1e-8)])
    rows, cs = period_deposition(air, "SO2", vd, None)
    periods = make_periods("2021-01-01", "2021-03-01", "month")
    out = to_periods(rows, cs, ["a"], periods, vd["time"].values)
    total = rows["deposition"].values[0, 0]
    jan_cov, feb_cov = out["covered_hours"].values[0]
    assert (jan_cov, feb_cov) == (24, 48)
    # scaled to whole months: covered share times hours ratio
    assert out["deposition"].values[0, 0, 0] == pytest.approx(total * 2 / 3 * 744 / 24)
    assert out["deposition"].values[0, 0, 1] == pytest.approx(total * 1 / 3 * 672 / 48)


def test_mixing_ratio_uses_hourly_air_density():
    """1 ppb at T and p: D = chi p/(R T) Vd dt (ideal gas, CODATA R via scipy)."""
    from scipy.constants import R
    hours = 24
    vd = _vd(np.full(hours, 0.003))
    t = vd["time"].values
    temp = np.linspace(270, 290, hours)
    met = xr.Dataset({"temperature": (("site", "time"), temp[None]),
                      "pressure": (("site", "time"), np.full((1, hours), 95000.0))},
                     coords={"site": ["a"], "time": t})
    air = _air([("a", "2021-01-01T00:00", "2021-01-02T00:00", 1e-9)], quantity="mixing_ratio")
    rows, _ = period_deposition(air, "SO2", vd, met)
    expected = np.sum(1e-9 * 95000.0 / (R * temp) * 0.003 * 3600)
    assert rows["deposition"].values[0, 0] == pytest.approx(expected, rel=1e-8)


def test_fill_diurnal_same_month():
    """A missing hour takes the mean of the same hour of day in the same month."""
    base = np.tile(np.r_[np.full(12, 0.001), np.full(12, 0.006)], 31)
    vd = _vd(base, start="2021-01-01T01:00")
    holed = vd.copy()
    holed[0, 0, 24 * 10 + 15] = np.nan
    filled, was = fill_diurnal(holed)
    assert bool(was[0, 0, 24 * 10 + 15]) and int(was.sum()) == 1
    assert filled[0, 0, 24 * 10 + 15] == pytest.approx(base[24 * 10 + 15])


def test_diurnal_profile_sensitivity():
    """With C higher by day when Vd is higher by day, the flux rises (covariance term)."""
    vd = _vd(np.tile(np.r_[np.full(12, 0.001), np.full(12, 0.009)], 7))
    air = _air([("a", "2021-01-01T00:00", "2021-01-08T00:00", 1e-8)])
    base, _ = period_deposition(air, "SO2", vd, None)
    prof = np.r_[np.full(12, 0.5), np.full(12, 1.5)]  # hours 0-11 low, 12-23 high (UTC)
    opt = DryFluxOptions(diurnal_profile={"SO2": list(prof)})
    alt, _ = period_deposition(air, "SO2", vd, None, opt)
    # hour-of-day of each hour's midpoint: first 12 hours are 00..11 -> Vd 0.001 x 0.5
    expected = 1e-8 * (12 * 0.001 * 0.5 + 12 * 0.009 * 1.5) / 24 * 7 * 86400
    assert alt["deposition"].values[0, 0] == pytest.approx(expected)
    assert alt["deposition"].values[0, 0] > base["deposition"].values[0, 0]


def test_period_beyond_the_met_record_is_shared_by_real_hours():
    """An air period starting a day before the met record: its hours outside the record
    take the mean Vd of its hours inside, so the split follows the real overlap."""
    vd = _vd(np.full(24 * 6, 0.004), start="2021-01-01T01:00")   # met from Jan 1
    air = _air([("a", "2020-12-31T00:00", "2021-01-07T00:00", 1e-8)])  # 1 day in 2020
    rows, cs = period_deposition(air, "SO2", vd, None)
    years = make_periods("2020-01-01", "2022-01-01", "year")
    out = to_periods(rows, cs, ["a"], years, vd["time"].values)
    assert out["covered_hours"].values[0].tolist() == [24, 144]
    d = rows["deposition"].values[0, 0]
    # 2021 holds 6/7 of the sample, scaled to the year's 8760 h from 144 covered hours
    assert out["deposition"].values[0, 0, 1] == pytest.approx(d * 6 / 7 * 8760 / 144)


def test_fill_diurnal_falls_back_to_all_years():
    """A month of one year with no valid Vd takes the same (month, hour) of other years."""
    t = pd.date_range("2020-01-01T01:00", "2022-01-01T00:00", freq="h")
    hour = (t - pd.Timedelta("30min")).hour.to_numpy()
    base = np.where(hour < 12, 0.001, 0.005)
    vd = _vd(base, start="2020-01-01T01:00")
    holed = vd.copy()
    march_2021 = (t.year == 2021) & (t.month == 3)
    holed[0, 0, march_2021] = np.nan
    filled, was = fill_diurnal(holed)
    assert int(was.sum()) == march_2021.sum()
    np.testing.assert_allclose(filled[0, 0, march_2021], base[march_2021])


def test_week_without_vd_adds_no_hours_and_a_month_without_vd_is_nan():
    """Four weekly concentrations; Vd missing (NaN, unfillable) through the second week:
    that week adds neither deposition nor hours, so the month is the three other weeks
    x 4/3 (arithmetic), with concentration coverage 1 and flux hours 3/4.  With no Vd
    at all the month is NaN, never 0."""
    from workbench.dryflux import share_to_periods
    hours = 24 * 28
    v = np.full(hours, 0.002)
    v[24 * 7:24 * 14] = np.nan
    vd = _vd(v, start="2021-02-01T01:00")
    air = _air([("a", f"2021-02-{d:02d}", f"2021-02-{d + 7:02d}" if d < 22 else "2021-03-01",
                 1e-8) for d in (1, 8, 15, 22)])
    periods = make_periods("2021-02-01", "2021-03-01", "month")
    rows, cs = period_deposition(air, "SO2", vd, None)
    assert np.isnan(rows["deposition"].values[1, 0])
    out = to_periods(rows, cs, ["a"], periods, vd["time"].values)
    week = 1e-8 * 0.002 * 7 * 86400
    assert out["deposition"].values[0, 0, 0] == pytest.approx(3 * week * 4 / 3)
    assert out["coverage"].values[0, 0] == pytest.approx(1.0)
    r = {k: rows[k].values for k in ("hour_start", "hour_end", "deposition", "start", "end")}
    _, _, _, flux_h = share_to_periods(np.zeros(4, int), r["hour_start"], r["hour_end"],
                                       r["deposition"], cs, 1, periods, vd["time"].values,
                                       r["start"], r["end"])
    assert flux_h[0, 0, 0] == pytest.approx(21 * 24)
    none = _vd(np.full(hours, np.nan), start="2021-02-01T01:00")
    rows, cs = period_deposition(air, "SO2", none, None)
    out = to_periods(rows, cs, ["a"], periods, none["time"].values)
    assert np.isnan(out["deposition"].values[0, 0, 0])
    assert out["coverage"].values[0, 0] == pytest.approx(1.0)


def test_cumulative_is_the_concatenated_cumsum():
    """The in-place cumulative sum equals zero + np.cumsum of the finite values, bit for
    bit (the same additions in the same order), for float64 and float32 input."""
    import numpy as np
    from workbench.dryflux import _cumulative
    rng = np.random.default_rng(1)
    for x in (rng.normal(size=(3, 4, 1000)), rng.normal(size=(2, 50)).astype(np.float32),
              np.zeros((2, 0))):
        if x.size:
            x[..., ::7] = np.nan
        z = np.zeros(x.shape[:-1] + (1,))
        ref = np.concatenate([z, np.cumsum(np.where(np.isfinite(x), x, 0.0), axis=-1)], -1)
        got = _cumulative(x)
        assert got.dtype == ref.dtype == np.float64 and got.shape == ref.shape
        np.testing.assert_array_equal(got, ref)


def test_cumulative_of_all_finite_values_and_with_a_given_mask():
    """Without NaN the sum runs on the values themselves; a mask handed in gives the
    same numbers as the one computed inside (bit for bit)."""
    from workbench.dryflux import _cumulative
    rng = np.random.default_rng(2)
    x = rng.normal(size=(3, 2, 500))
    z = np.zeros(x.shape[:-1] + (1,))
    np.testing.assert_array_equal(_cumulative(x), np.concatenate([z, np.cumsum(x, -1)], -1))
    x[0, 1, 3] = np.nan
    np.testing.assert_array_equal(_cumulative(x, np.isfinite(x)), _cumulative(x))


def test_count_cumulative_as_the_cumulative_of_the_float_mask():
    """The cumulative count of a mask equals the cumulative sum of the mask as 0/1
    floats, and counts by hand (a leading zero, then 1, 1, 2, ...)."""
    from workbench.dryflux import _count_cumulative, _cumulative
    rng = np.random.default_rng(3)
    for mask in (rng.random((4, 3, 777)) < 0.3, np.ones((2, 5), bool), np.zeros((2, 0), bool)):
        got = _count_cumulative(mask)
        assert got.dtype == np.float64 and got.shape == mask.shape[:-1] + (mask.shape[-1] + 1,)
        np.testing.assert_array_equal(got, _cumulative(mask.astype(float)))
    np.testing.assert_array_equal(_count_cumulative(np.array([[True, False, True, True]])),
                                  [[0.0, 1.0, 1.0, 2.0, 3.0]])


@pytest.mark.parametrize("gap", [False, True])
def test_deposition_rows_count_hours_with_and_without_gaps(gap):
    """The hours of Vd counted in each period: b - a when every hour has a Vd, else the
    finite hours only (the count by hand)."""
    from workbench.dryflux import deposition_rows
    times = np.datetime64("2020-01-01T01:00") + np.arange(48) * np.timedelta64(1, "h")
    vd = np.full((2, 2, 48), 0.01)
    if gap:
        vd[1, 0, 10:15] = np.nan                 # 5 hours of site 1, receptor 0
    starts = np.array(["2020-01-01T00:00", "2020-01-01T00:00", "2020-01-02T00:00"],
                      dtype="datetime64[ns]")
    ends = starts + np.timedelta64(24, "h")
    r = deposition_rows(np.array([1.0, 2.0, 3.0]), "amount_density", np.array([0, 1, 1]),
                        starts, ends, times, vd)
    want = np.full((3, 2), 24.0)
    if gap:
        want[1, 0] = 19.0
    assert r["n_valid"].dtype == np.float64
    np.testing.assert_array_equal(r["n_valid"], want)
    np.testing.assert_allclose(r["mean_eff"], 0.01, rtol=1e-12)
