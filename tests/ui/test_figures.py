"""Figures and the tables behind them: every plotted number traced to its source.

Sources: the budget rows of :func:`workbench.tables.budget_table` (the run's CSV);
molar masses from ``periodictable`` (IUPAC standard atomic weights); the ion-balance
tiers of WMO GAW Report No. 160 (2004), Section 8 (from memory, as in the wet
options); hand-built velocity and resistance series.
"""
import numpy as np
import pandas as pd
import periodictable
import pytest
import xarray as xr

from workbench.ui import figures, figures_dry, figures_wet, summaries
from workbench.ui.palette import STATUS_OPACITY, STATUS_PATTERN


@pytest.fixture(scope="module")
def result(session):
    return session.run(session.baseline, "ridge", 2021, 2021, "month")


def _bars(fig):
    return {tr.name: tr for tr in fig.data if tr.type == "bar"}


def test_budget_bars_match_the_budget_rows(result):
    """Each bar is the component's flux_kg_ha_yr row of budget.csv (same run)."""
    from workbench.tables import budget_table
    rows = budget_table(result.years)
    rows = rows[(rows["site"] == "ridge") & (rows["receptor"] == "grass") & (rows["species"] != "all")]
    fig = figures.budget_bars(result.years, "ridge", "grass")
    bars = _bars(fig)
    assert len(bars) == 10
    for _, r in rows.iterrows():
        y = bars[f"{r['pathway']} {r['species']}"].y[0]
        if np.isfinite(r["flux_kg_ha_yr"]):
            assert y == pytest.approx(r["flux_kg_ha_yr"], rel=1e-12)
        else:
            assert y is None


def test_budget_bars_in_equivalents_use_the_molar_masses(result):
    """kg S -> eq: x 2 eq/mol / M(S); kg N -> eq: x 1 eq/mol / M(N) (periodictable)."""
    kg = _bars(figures.budget_bars(result.years, "ridge", "conifer_forest", None, "kg/ha/yr"))
    eq = _bars(figures.budget_bars(result.years, "ridge", "conifer_forest", None, "eq/ha/yr"))
    keq = _bars(figures.budget_bars(result.years, "ridge", "conifer_forest", None, "keq/ha/yr"))
    g_per_kg = 1000.0
    assert eq["wet SO4"].y[0] == pytest.approx(kg["wet SO4"].y[0] * 2 * g_per_kg / periodictable.S.mass,
                                               rel=1e-3)
    assert eq["wet NO3"].y[0] == pytest.approx(kg["wet NO3"].y[0] * g_per_kg / periodictable.N.mass,
                                               rel=1e-3)
    assert keq["dry NH3"].y[0] == pytest.approx(eq["dry NH3"].y[0] / 1000.0, rel=1e-12)


def test_budget_bars_show_status_by_opacity_and_pattern(result):
    ds = result.years.copy(deep=True)
    st = ds["status"].values
    st[0, :, 0, 1] = "flagged"          # dry SO2 at every receptor
    ds["status"] = (ds["status"].dims, st)
    bar = _bars(figures.budget_bars(ds, "ridge", "conifer_forest"))["dry SO2"]
    assert bar.marker.opacity[0] == STATUS_OPACITY["flagged"] < 1
    assert bar.marker.pattern.shape[0] == STATUS_PATTERN["flagged"] != ""
    assert "flagged" in bar.customdata[0]


def test_budget_bars_one_bar_per_element_and_year(result):
    fig = figures.budget_bars(result.years, "ridge", "grass")
    s_tot, n_tot = [t for t in fig.data if t.name == "total"]     # one per element's panel
    assert list(s_tot.x) == ["2021"] and list(n_tot.x) == ["2021"]
    assert (s_tot.xaxis, n_tot.xaxis) == ("x", "x2") and s_tot.yaxis == n_tot.yaxis == "y"
    assert n_tot.showlegend is False                 # one legend entry for both
    t = summaries.total_rates(result.years, "ridge", "grass")
    s_total = t[(t["total"] == "S_total")]["value"].iloc[0]
    assert s_tot.y[0] == pytest.approx(s_total)


def test_monthly_amounts_are_amounts_not_rates(result):
    """A month's amount x (hours in the year / hours in the month) is its yearly rate."""
    m = summaries.monthly_amounts(result.budget, "ridge", "grass")
    rates = summaries.total_rates(result.budget, "ridge", "grass")
    jan = m[(m["period"] == "2021-01") & (m["element"] == "S") & (m["pathway"] == "wet")]["value"].iloc[0]
    jan_rate = rates[(rates["period"] == "2021-01") & (rates["total"] == "S_wet")]["value"].iloc[0]
    assert jan_rate == pytest.approx(jan * 8760 / 744)
    fig = figures.monthly_fluxes(result.budget, "ridge", "grass")
    assert [t.name for t in fig.data] == ["S wet", "S dry", "N wet", "N dry"]
    assert fig.data[0].y[0] == pytest.approx(jan)


def _velocities(values_by_local_hour, utc_offset_h=1, days=365):
    """Hourly vd_SO2, ra, rb_SO2, rc_SO2 whose value depends on the local hour only."""
    t = pd.date_range("2021-01-01T01:00", periods=24 * days, freq="h")
    local_hour = ((t - pd.Timedelta(30, "min")) + pd.Timedelta(utc_offset_h, "h")).hour.to_numpy()
    v = np.asarray(values_by_local_hour, float)[local_hour]
    arr = lambda a: (("site", "receptor", "time"), a[None, None, :])
    return xr.Dataset({"vd_SO2": arr(v), "ra": arr(np.full(v.shape, 20.0)),
                       "rb_SO2": arr(np.full(v.shape, 10.0)), "rc_SO2": arr(1.0 / v - 30.0)},
                      coords={"site": ["a"], "receptor": ["grass"], "time": t.values})


def test_diurnal_velocity_by_local_hour():
    """Vd = 0.002 m/s at night, 0.01 m/s from 10 to 14 local: the cycle in cm/s."""
    per_hour = np.where((np.arange(24) >= 10) & (np.arange(24) <= 14), 0.01, 0.002)
    vel = _velocities(per_hour, utc_offset_h=1)
    t = summaries.diurnal_velocity(vel, "a", "grass", ["SO2"], utc_offset_h=1)
    jja = t[t["season"] == "JJA"].set_index("hour")["value"]
    assert jja[12] == pytest.approx(1.0) and jja[3] == pytest.approx(0.2)
    assert jja.idxmax() in range(10, 15)
    fig = figures_dry.velocity_diurnal(vel, "a", "grass", ["SO2"], utc_offset_h=1)
    assert len(fig.data) == 4                     # one per season
    assert max(fig.data[2].y) == pytest.approx(1.0)


def test_resistance_medians_add_up():
    """Ra + Rb + Rc = 1 / Vd hour by hour, so the medians of the sum are 1 / Vd."""
    per_hour = np.linspace(0.002, 0.012, 24)
    vel = _velocities(per_hour, utc_offset_h=0)
    t = summaries.resistance_medians(vel, "a", "grass", "SO2", 0)
    tot = t[(t["resistance"] == "total") & (t["season"] == "MAM")].set_index("hour")["value"]
    np.testing.assert_allclose(tot.to_numpy(), 1.0 / per_hour, rtol=1e-9)
    ra = t[(t["resistance"] == "ra")]["value"]
    assert (ra == 20.0).all()
    fig = figures_dry.resistance_breakdown(vel, "a", "grass", "SO2", 0)
    assert fig.layout.yaxis.type == "log" and len(fig.data) == 16


def test_ion_balance_envelope_edge_by_hand():
    """GAW tiers (WMO GAW Report No. 160, 2004, from memory): |ID| <= 60 % up to CE + AN
    = 50 ueq/L.  At CE + AN = 40 the upper edge is CE = 40 x 1.6 / 2 = 32, AN = 8."""
    tiers = ((50.0, 60.0), (100.0, 30.0), (500.0, 15.0), (np.inf, 10.0))
    an, ce = figures_wet.ion_balance_envelope(tiers, 1000.0)
    n = len(an) // 2
    s = an[:n] + ce[:n]
    i = np.argmin(abs(s - 40.0))
    assert ce[i] / s[i] == pytest.approx(0.8) and an[i] / s[i] == pytest.approx(0.2)
    j = np.argmin(abs(s - 600.0))
    assert ce[j] / s[j] == pytest.approx(0.55)     # 10 % tier: (1 + 0.1) / 2


def test_ion_balance_points_are_the_screened_sums(result):
    fig = figures_wet.ion_balance(result.screened, "ridge")
    used = [t for t in fig.data if t.name.startswith("used")][0]
    scr = result.screened
    m = (scr["status"].values == "used") & np.isfinite(scr["cation_sum"].values)
    np.testing.assert_allclose(np.sort(used.y), np.sort(scr["cation_sum"].values[m]))
    cap = figures_wet.capture_efficiency(result.screened, "ridge")
    assert cap.layout.xaxis.type == "log"


def test_excluded_samples_table_has_every_reason(result):
    t = summaries.excluded_samples(result.screened, "ridge")
    scr = result.screened
    assert len(t) == int(np.isin(scr["status"].values, ["excluded", "flagged"]).sum())
    assert (t["reasons"] != "").all()
    counts = summaries.reason_counts(result.screened, "ridge")
    assert counts["samples"].sum() >= len(t)


def test_change_line_format():
    a = pd.DataFrame({"value": [8.3, 20.0], "status": ["complete", "partial"]},
                     index=["S_total", "N_total"])
    b = pd.DataFrame({"value": [7.9, 20.0], "status": ["complete", "partial"]},
                     index=["S_total", "N_total"])
    line = summaries.change_line(a, b)
    assert line == ("S total 8.3 -> 7.9 kg/ha/yr, -4.8 %; "
                    "N total 20.0 -> 20.0 kg/ha/yr, +0.0 % (partial)")
    # more decimals until the two numbers differ
    c = b.assign(value=[7.94, 20.0])
    d = b.assign(value=[7.91, 20.0])
    assert summaries.change_line(c, d, totals=("S_total",)).startswith("S total 7.94 -> 7.91")


def test_partial_totals_are_never_ranked():
    table = pd.DataFrame({
        "site": ["a", "a", "b", "b", "c", "c"], "receptor": "grass",
        "period": ["2020", "2021"] * 3, "element": "N",
        "value": [10.0, 12.0, 30.0, 31.0, 20.0, 22.0],
        "status": ["complete", "complete", "partial", "complete", "complete", "filled"],
        "missing": ["", "", "NO2", "", "", ""]})
    table["rankable"] = table["status"].isin(summaries.RANKABLE)
    span = pd.DataFrame({"site": ["a", "b", "c"], "receptor": "grass", "element": "N",
                         "flux_kg_ha_yr": [11.0, 30.5, 21.0],
                         "status": ["complete", "partial", "filled"],
                         "missing_components": ["", "NO2", ""], "years_used": "2020 2021"})
    r = summaries.network_ranking(span, "N")
    full = r[r["group"] == "every component"]
    assert list(full["site"]) == ["c", "a"] and list(full["rank"]) == ["1", "2"]
    assert list(r.loc[r["group"] == "partial: without NO2", "site"]) == ["b"]
    fig = figures.network_ranking_bars(r, "N")
    assert not any("b" in y for y in fig.data[0].y)
    assert list(fig.data[1].y) == ["1 · b (without NO2)"]
    tot = figures.network_totals(table)
    b_open = [t for t in tot.data if t.name == "b " + figures.OPEN_NAME and t.xaxis == "x2"][0]
    assert b_open.marker.symbol == "circle-open" and b_open.y[0] == 30.0


@pytest.mark.parametrize("how", ["mean", "median"])
def test_hour_season_statistic_equals_pandas_groupby(how):
    """Reference: pandas groupby(["season", "hour"]).mean() / .median() (NaN skipped,
    empty slots not listed)."""
    rng = np.random.default_rng(11)
    n = 3000
    hour = rng.integers(0, 24, n)
    season = rng.choice(["DJF", "MAM", "JJA", "SON"], n)
    values = rng.lognormal(size=n)
    values[rng.random(n) < 0.2] = np.nan
    values[(season == "JJA") & (hour == 5)] = np.nan            # an empty slot
    got = summaries._by_hour_season(values, hour, season, how)
    frame = pd.DataFrame({"season": season, "hour": hour, "v": values}).dropna()
    g = frame.groupby(["season", "hour"])["v"]
    ref = (g.median() if how == "median" else g.mean()).rename("value").reset_index()
    ref["n"] = g.size().to_numpy()
    ref["season"] = pd.Categorical(ref["season"], ["DJF", "MAM", "JJA", "SON"], ordered=True)
    ref = ref.sort_values(["season", "hour"]).reset_index(drop=True)
    assert len(got) == len(ref) == 95
    assert (got["season"].astype(str).to_numpy() == ref["season"].astype(str).to_numpy()).all()
    np.testing.assert_array_equal(got["hour"].to_numpy(), ref["hour"].to_numpy())
    np.testing.assert_array_equal(got["n"].to_numpy(), ref["n"].to_numpy())
    np.testing.assert_allclose(got["value"].to_numpy(), ref["value"].to_numpy(), rtol=1e-13)


def test_dry_figures_plot_the_rows_of_their_tables(result):
    """Every plotted Vd and resistance is a row of diurnal_velocity / resistance_medians
    (the tables the figures are documented by), on the demo run."""
    vel, rec = result.velocities, str(result.velocities["receptor"].values[0])
    t = summaries.diurnal_velocity(vel, "ridge", rec, list(figures_dry.DRY_SPECIES), 1.0)
    fig = figures_dry.velocity_diurnal(vel, "ridge", rec, utc_offset_h=1.0)
    seasons = ["DJF", "MAM", "JJA", "SON"]
    for i, tr in enumerate(fig.data):
        season = seasons[i % 4]
        rows = t[(t["species"] == tr.name) & (t["season"] == season)]
        np.testing.assert_array_equal(np.asarray(tr.x), rows["hour"].to_numpy())
        np.testing.assert_allclose(np.asarray(tr.y, float), rows["value"].to_numpy(), rtol=1e-12)
        np.testing.assert_array_equal(np.asarray(tr.customdata), rows["n"].to_numpy())
    r = summaries.resistance_medians(vel, "ridge", rec, "NH3", 1.0)
    fig = figures_dry.resistance_breakdown(vel, "ridge", rec, "NH3", 1.0)
    names = list(figures_dry.RESISTANCE_NAMES)
    for i, tr in enumerate(fig.data):
        rows = r[(r["resistance"] == names[i // 4]) & (r["season"] == seasons[i % 4])]
        np.testing.assert_allclose(np.asarray(tr.y, float), rows["value"].to_numpy(), rtol=1e-12)


def test_change_line_of_a_base_of_zero_below_zero_or_missing():
    """Review of the change line: from a value below 0 (net NH3 emission) the percent
    flipped its sign (-2 -> -1, a rise of 1 and less emission, read "-50.0 %"); from 0
    or from a missing value it said nothing of the change.  Now the absolute change,
    words and the reason there is no percent (workbench.percent; by hand: -1 - -2 = +1,
    0.3 - 0 = +0.3, 0.5 - -1 = +1.5).  Old code: "-50.0 %", "" and ""."""
    idx = ["N_dry", "S_dry", "N_wet", "S_total", "N_total", "S_wet"]
    a = pd.DataFrame({"value": [-2.0, 0.0, np.nan, 8.3, -1.0, -1.0],
                      "status": "complete"}, index=idx)
    b = a.assign(value=[-1.0, 0.3, 3.0, 7.9, 0.5, -1.0])
    line = summaries.change_line(a, b, totals=tuple(idx))
    assert "%" not in line.replace("S total 8.3 -> 7.9 kg/ha/yr, -4.8 %", "")
    assert ("N dry -2.0 -> -1.0 kg/ha/yr, +1.0 kg/ha/yr (less net emission; no percent: "
            "the value before is below 0, a net emission)") in line
    assert ("S dry 0.0 -> 0.3 kg/ha/yr, +0.3 kg/ha/yr (no percent: the value before "
            "is 0)") in line
    assert "N wet n/a -> 3.0 kg/ha/yr (no percent: the value before is missing)" in line
    assert "N total -1.0 -> 0.5 kg/ha/yr, +1.5 kg/ha/yr (from net emission to net deposition" in line
    assert "S wet -1.0 -> -1.0 kg/ha/yr, no change" in line
    # the words of the percent rule are the same as compare's (workbench.percent)
    from workbench.percent import percent_change
    assert np.isnan(percent_change(-2.0, -1.0)) and np.isnan(percent_change(0.0, 0.3))


def test_nh3_line_of_a_deposition_of_zero_says_why_there_is_no_share():
    """Review of the percent sites: NH3 with no deposition at all (0) but an emission
    read "emission offsets n/a"; now the reason (no percent of a base of 0).  A
    deposition of 2 with a net of 1.5 keeps its share: 100 x 0.5 / 2 = 25 % (by hand).
    Values invented [mol m-2 per period, annual factor 1].  Old code: "offsets n/a"."""
    import xarray as xr

    def ds(only, net):
        v = lambda x: (("site", "receptor", "period"), np.full((1, 1, 1), x))  # noqa: E731
        return xr.Dataset({"nh3_deposition_only": v(only), "nh3_net": v(net),
                           "annual_factor": v(1.0)},
                          coords={"site": ["s"], "receptor": ["grass"], "period": ["2020"]},
                          attrs={"nh3_figure": "net"})
    line = summaries.nh3_line(ds(0.0, -1e-3), "s", "grass")
    assert "n/a" not in line
    assert "no share offset by emission (no percent: the deposition only is 0)" in line
    ok = summaries.nh3_line(ds(2e-3, 1.5e-3), "s", "grass")
    assert "emission offsets 25 %" in ok


def test_monthly_hover_says_why_a_month_fails(result):
    """ridge 2021-03 fails its sample coverage for one week left out (the demo's lid_open
    sample, 168 of 744 h: 77.4 %); the hover of that month says which sample and its
    share, as budget.csv's completeness_failure; a complete month says nothing more."""
    spec = figures.monthly_fluxes_spec(result.budget, "ridge", "grass")
    wet_s = spec["data"][0]
    assert wet_s["name"] == "S wet"
    assert "%{customdata[0]}%{customdata[1]}" in wet_s["hovertemplate"]
    march = wet_s["customdata"][wet_s["x"].index("2021-03-01")]
    assert march[0] == "flagged"
    words = march[1].replace("<br>", " ")
    assert "sample coverage below minimum (77.4 % of the period; minimum 90 %)" in words
    assert "168 h (22.6 %) of sample 2021-03-18" in words
    april = wet_s["customdata"][wet_s["x"].index("2021-04-01")]
    assert april == ["complete", ""]
