"""Precipitation-weighted means, completeness and wet fluxes, worked by hand.

The expected values are computed in each test from first principles (sums of
concentration x depth, shares of hours, unit factors); the molar mass of sulfur
and nitrogen comes from the periodictable package (an outside reference).
Definitions: PWM = sum(C_i P_i) / sum(P_i), free acidity averaged as [H+]
(WMO GAW Report No. 160, 2004, from memory); flux = PWM x total gauge
precipitation of the period (common practice).
"""
import numpy as np
import pandas as pd
import periodictable
import pytest
from wet.wet_samples import make_met, make_samples, week

from workbench import periods as P
from workbench.wet import WetOptions, screen, to_table, wet_deposition
from workbench.wet.pwm import precipitation_weighted_mean

IONS = ("SO4", "NO3", "NH4")
M_S = periodictable.S.mass / 1000.0     # kg/mol
M_N = periodictable.N.mass / 1000.0
M2_PER_HA = 1e4


def balanced(so4, no3, nh4):
    """Composition whose free acidity closes the balance: H+ = 2 SO4 + NO3 - NH4 (umol/L)."""
    h = 2 * so4 + no3 - nh4
    return dict(SO4=so4, NO3=no3, NH4=nh4, pH=-np.log10(h * 1e-6))


def hand_worked_rows():
    # Weekly samples starting 29 Dec 2020; S0 and S4 straddle month ends,
    # S3 is a dry week, S5 is contaminated (flag contaminated: gauge counts, chemistry not).
    spec = [("2020-12-29", 21.0, balanced(20, 30, 25), ""),
            ("2021-01-05", 10.0, balanced(40, 50, 30), ""),
            ("2021-01-12", 30.0, balanced(10, 15, 20), ""),
            ("2021-01-19", 0.0, {}, ""),
            ("2021-01-26", 14.0, balanced(25, 20, 40), ""),
            ("2021-02-02", 20.0, balanced(60, 60, 10), "contaminated")]
    rows = []
    for start, depth, chem, flags in spec:
        s, e = week(start)
        rows.append(dict(start=s, end=e, gauge_depth=depth, sample_depth=depth, flags=flags,
                         **chem))
    return rows, spec


def _expected_month(spec, shares):
    """sum(C P f), sum(P f) over valid samples, and sum(P f) over all, per ion."""
    num = {ion: 0.0 for ion in IONS + ("H",)}
    den = total = 0.0
    for (start, depth, chem, flags), f in zip(spec, shares):
        total += depth * f
        if chem and not flags:
            den += depth * f
            for ion in IONS:
                num[ion] += chem[ion] * depth * f
            num["H"] += 10 ** -chem["pH"] * 1e6 * depth * f
    return num, den, total


def test_hand_worked_pwm_and_flux_with_dry_week_and_straddling_sample():
    rows, spec = hand_worked_rows()
    table = P.make_periods("2020-12-01", "2021-03-01", "month")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), table)
    # January: S0 has 4 of its 7 days in January, S4 has 6 of 7.
    num, den, total = _expected_month(spec, [4 / 7, 1, 1, 1, 6 / 7, 0])
    jan = wet.sel(site="A", period="2021-01")
    assert total == pytest.approx(21 * 4 / 7 + 10 + 30 + 14 * 6 / 7)        # 64 mm
    assert jan["precipitation"].item() == pytest.approx(total)
    for ion in IONS:
        pwm_umol = num[ion] / den
        assert jan[f"pwm_{ion}"].item() * 1000 == pytest.approx(pwm_umol)
        flux_mol_m2 = pwm_umol * 1e-3 * total * 1e-3        # mol m-3 x m
        assert jan[f"dep_{ion}"].item() == pytest.approx(flux_mol_m2)
    so4_flux = num["SO4"] / den * 1e-3 * total * 1e-3
    assert jan["dep_SO4_kg_ha"].item() == pytest.approx(so4_flux * M_S * M2_PER_HA, rel=1e-3)
    assert jan["dep_SO4_eq_ha"].item() == pytest.approx(so4_flux * 2 * M2_PER_HA)
    n_flux = (num["NO3"] + num["NH4"]) / den * 1e-6 * total
    assert (jan["dep_NO3_kg_ha"] + jan["dep_NH4_kg_ha"]).item() == \
        pytest.approx(n_flux * M_N * M2_PER_HA, rel=1e-3)
    h_pwm = num["H"] / den
    assert jan["pH_pwm"].item() == pytest.approx(-np.log10(h_pwm * 1e-6))
    assert jan["dep_H_eq_ha"].item() == pytest.approx(h_pwm * 1e-6 * total * M2_PER_HA)
    # completeness: January wholly covered (the dry week counts), all rain valid
    assert jan["gauge_fraction"].item() == pytest.approx(1.0)
    assert jan["coverage_fraction"].item() == pytest.approx(1.0)
    assert jan["valid_precip_fraction"].item() == pytest.approx(1.0)
    assert jan["n_samples"].item() == 5 and jan["n_dry"].item() == 1
    assert jan["n_valid"].item() == 4
    assert jan["status"].item() == "complete"
    # February: S4's last day (2 mm, valid) and S5 (20 mm, contaminated)
    feb = wet.sel(site="A", period="2021-02")
    num_f, den_f, total_f = _expected_month(spec, [0, 0, 0, 0, 1 / 7, 1])
    assert feb["precipitation"].item() == pytest.approx(total_f)             # 22 mm
    assert feb["pwm_SO4"].item() * 1000 == pytest.approx(25.0)
    assert feb["dep_SO4"].item() == pytest.approx(25.0 * 1e-3 * total_f * 1e-3)
    assert feb["valid_precip_fraction"].item() == pytest.approx(2 / 22)
    assert feb["gauge_fraction"].item() == pytest.approx(8 * 24 / (28 * 24))
    assert feb["coverage_fraction"].item() == pytest.approx(24 / (28 * 24))
    assert feb["status"].item() == "flagged"
    assert "valid-chemistry precipitation below minimum" in feb["completeness_reasons"].item()
    # December: 3 of S0's 7 days
    dec = wet.sel(site="A", period="2020-12")
    assert dec["precipitation"].item() == pytest.approx(21 * 3 / 7)
    assert dec["coverage_fraction"].item() == pytest.approx(3 / 31)


def test_straddling_sample_split_by_hourly_precipitation():
    # All of S4's hourly rain fell on 1 February: with straddle="met" it goes to February.
    rows, spec = hand_worked_rows()
    rain_feb1 = lambda t: np.where((t > pd.Timestamp("2021-02-01")) &
                                   (t <= pd.Timestamp("2021-02-02")), 1.0, 0.0)
    met = make_met(["A"], "2020-12-20", "2021-03-01", precipitation=rain_feb1)
    table = P.make_periods("2021-01-01", "2021-03-01", "month")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), table,
                         WetOptions(straddle="met"), met=met)
    # S0 has no hourly rain in its window: falls back to the share of hours
    assert wet["precipitation"].sel(period="2021-01").item() == pytest.approx(12 + 10 + 30)
    assert wet["precipitation"].sel(period="2021-02").item() == pytest.approx(14 + 20)
    assert wet.attrs["straddle_split_by_met"] == 2


def test_pwm_pH_of_pH4_and_pH5_is_not_4_5():
    # [H+] = (1e-4 + 1e-5)/2 mol/L -> pH 4.26 (averaging pH would give 4.5)
    rows = []
    for start, pH in (("2021-03-01", 4.0), ("2021-03-08", 5.0)):
        s, e = week(start)
        rows.append(dict(start=s, end=e, gauge_depth=8.0, pH=pH, SO4=20))
    wet = wet_deposition(screen(make_samples(rows, ions=("SO4",))), "month")
    expected = -np.log10((1e-4 + 1e-5) / 2)
    assert wet["pH_pwm"].item() == pytest.approx(expected)
    assert abs(wet["pH_pwm"].item() - 4.5) > 0.2
    h = precipitation_weighted_mean(10.0 ** -np.array([4.0, 5.0]), np.array([8.0, 8.0]))
    assert -np.log10(h) == pytest.approx(expected)


def test_zero_mm_month_is_complete_with_zero_flux_and_empty_month_is_missing():
    rows = []
    for k in range(4):                       # March: four dry weeks and a dry 3 days
        s, e = week(pd.Timestamp("2021-03-01") + pd.Timedelta(days=7 * k))
        rows.append(dict(start=s, end=e, gauge_depth=0.0))
    rows.append(dict(start="2021-03-29", end="2021-04-01", gauge_depth=0.0))
    s, e = week("2021-05-03")                # nothing in April; one wet week in May
    rows.append(dict(start=s, end=e, gauge_depth=5.0, **balanced(20, 20, 10)))
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), "month")
    assert wet["period"].values.tolist() == ["2021-03", "2021-04", "2021-05"]
    mar, apr = wet.sel(period="2021-03"), wet.sel(period="2021-04")
    assert mar["status"].item() == "complete"
    assert mar["precipitation"].item() == 0.0 and mar["dep_SO4"].item() == 0.0
    assert np.isnan(mar["pwm_SO4"].item())
    assert apr["status"].item() == "missing"
    assert np.isnan(apr["precipitation"].item()) and np.isnan(apr["dep_SO4"].item())
    assert apr["completeness_reasons"].item() == "no samples"
    assert wet.attrs["periods_by_status"] == \
        '{"complete": 1, "flagged": 1, "filled": 0, "missing": 1}'


def test_seasonal_fill_of_a_failed_month():
    # Monthly samples over three years; July 2022 is contaminated (flag contaminated), so its
    # valid-precipitation fraction is 0 and it is filled with the multi-year JJA PWM.
    rows, jja = [], []
    starts = pd.date_range("2021-01-01", "2024-01-01", freq="MS")
    for k, (s, e) in enumerate(zip(starts[:-1], starts[1:])):
        depth = 20.0 + 7 * (k % 5)
        so4 = 10.0 + 3 * (k % 7)
        bad = s == pd.Timestamp("2022-07-01")
        rows.append(dict(start=str(s), end=str(e), gauge_depth=depth,
                         flags="contaminated" if bad else "",
                         **balanced(so4, 20, 10)))
        if s.month in (6, 7, 8) and not bad:
            jja.append((so4, depth))
    expected = sum(c * p for c, p in jja) / sum(p for _, p in jja)
    sc = screen(make_samples(rows, ions=IONS))
    plain = wet_deposition(sc, "month")
    assert plain.sel(period="2022-07")["status"].item() == "flagged"
    assert np.isnan(plain.sel(period="2022-07")["pwm_SO4"].item())
    wet = wet_deposition(sc, "month", WetOptions(period_fill="seasonal"))
    jul = wet.sel(site="A", period="2022-07")
    assert jul["status"].item() == "filled" and bool(jul["filled"].item())
    assert jul["pwm_SO4"].item() * 1000 == pytest.approx(expected)
    depth = rows[18]["gauge_depth"]
    assert jul["dep_SO4"].item() == pytest.approx(expected * 1e-3 * depth * 1e-3)
    assert wet.attrs["periods_filled"] == 1
    assert (wet["status"] == "filled").sum().item() == 1


def test_year_flux_is_annual_pwm_times_annual_precipitation():
    # With an excluded sample, the sum of the monthly fluxes differs from the annual
    # flux (each month scales its own PWM by its own precipitation).
    rows = []
    for k, (so4, depth, flags) in enumerate([(10, 10, ""), (40, 30, "contaminated"), (20, 20, "")]):
        s = pd.Timestamp(f"2021-{k + 1:02d}-01")
        e = s + pd.offsets.MonthBegin(1)
        rows.append(dict(start=str(s), end=str(e), gauge_depth=depth, flags=flags,
                         **balanced(so4, 20, 10)))
    sc = screen(make_samples(rows, ions=IONS))
    months = wet_deposition(sc, "month")
    year = wet_deposition(sc, P.make_periods(None, None, "custom",
                                             ranges=[("2021-01-01", "2021-04-01", "Q1")]))
    annual_pwm = (10 * 10 + 20 * 20) / 30 * 1e-3
    assert year["pwm_SO4"].item() == pytest.approx(annual_pwm)
    assert year["dep_SO4"].item() == pytest.approx(annual_pwm * 60e-3)
    monthly_sum = np.nansum(months["dep_SO4"].values)
    assert monthly_sum == pytest.approx((10 * 10 + 20 * 20) * 1e-6)
    assert monthly_sum != pytest.approx(year["dep_SO4"].item())


def test_collocated_samplers_are_averaged_not_added():
    rows = []
    for k in range(5):
        s, e = week(pd.Timestamp("2021-06-01") + pd.Timedelta(days=7 * k))
        rows.append(dict(start=s, end=e, sampler_id="P1", gauge_depth=10.0,
                         **balanced(20, 20, 10)))
        rows.append(dict(start=s, end=e, sampler_id="P2", gauge_depth=12.0,
                         **balanced(30, 20, 10)))
    period = P.make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-07-06", "wk")])
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), period)
    assert wet["precipitation"].item() == pytest.approx(5 * 11.0)
    assert wet["pwm_SO4"].item() * 1000 == pytest.approx((20 * 10 + 30 * 12) / 22)
    assert wet["coverage_fraction"].item() == pytest.approx(1.0)


def test_several_sites_and_tidy_table():
    rows = []
    for site, so4 in (("A", 20.0), ("B", 35.0)):
        for k in range(4):
            s, e = week(pd.Timestamp("2021-06-01") + pd.Timedelta(days=7 * k))
            rows.append(dict(site=site, start=s, end=e, gauge_depth=5.0 + k,
                             **balanced(so4, 20, 10)))
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), "month")
    assert wet["site"].values.tolist() == ["A", "B"]
    np.testing.assert_allclose(wet["pwm_SO4"].sel(period="2021-06").values * 1000, [20, 35])
    tab = to_table(wet)
    assert tab.columns[:10].tolist() == ["site", "period", "period_start", "period_end",
                                         "species", "pwm [mol m-3]", "pwm [ueq/L]",
                                         "deposition [mol m-2]", "deposition [eq/ha]",
                                         "deposition [kg/ha]"]
    n_species = len([v for v in wet.data_vars if v.startswith("pwm_")])
    assert len(tab) == wet.sizes["site"] * wet.sizes["period"] * n_species
    row = tab[(tab.site == "B") & (tab.period == "2021-06") & (tab.species == "SO4")].iloc[0]
    assert row["pwm [ueq/L]"] == pytest.approx(70.0)
    assert row["kg_basis"] == "S"
    assert row["deposition [kg/ha]"] == pytest.approx(
        wet["dep_SO4_kg_ha"].sel(site="B", period="2021-06").item())
    assert wet["dep_SO4_kg_ha"].attrs["units"] == "kg S ha-1"
    assert wet["dep_NH4_kg_ha"].attrs["units"] == "kg N ha-1"


def test_unscreened_or_empty_input_is_refused():
    s, e = week("2021-06-01")
    raw = make_samples([dict(start=s, end=e, gauge_depth=3.0, **balanced(20, 20, 10))],
                       ions=IONS)
    with pytest.raises(ValueError, match="call workbench.wet.screen first"):
        wet_deposition(raw, "month")
    with pytest.raises(ValueError, match="no precipitation samples"):
        wet_deposition(screen(raw).isel(sample=slice(0, 0)), "month")


def test_the_wet_chain_runs_the_function_named_for_the_pwm(monkeypatch):
    """One implementation of the method: the PWMs of `wet_deposition` are those of
    :func:`precipitation_weighted_mean` (the definition in the module docstring)."""
    import workbench.wet.deposition_pwm as dep     # where wet_deposition's PWMs look it up
    calls = []
    real = dep.precipitation_weighted_mean

    def spy(*args, **kwargs):
        calls.append(kwargs.get("groups") is not None)
        return real(*args, **kwargs)

    monkeypatch.setattr(dep, "precipitation_weighted_mean", spy)
    rows, _ = hand_worked_rows()
    scr = screen(make_samples(rows), WetOptions())
    wet_deposition(scr, P.make_periods(np.datetime64("2021-01-01"), np.datetime64("2021-03-01"),
                                       "month"), WetOptions())
    assert calls and all(calls)


def test_grouped_pwm_equals_the_plain_mean_per_group():
    """The grouped form is the plain definition applied to each group's samples."""
    rng = np.random.default_rng(3)
    c = rng.uniform(1, 50, 40)
    p = rng.uniform(0, 30, 40)
    c[::7] = np.nan
    p[::11] = np.nan
    g = rng.integers(0, 5, 40)
    got = precipitation_weighted_mean(c, p, groups=g, n_groups=6)
    for k in range(6):
        sel = g == k
        want = precipitation_weighted_mean(c[sel], p[sel]) if sel.any() else np.nan
        np.testing.assert_allclose(got[k], want, rtol=1e-13, equal_nan=True)
