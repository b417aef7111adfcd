"""The wet deposition chain checked by hand: samples -> screen -> periods -> PWM -> flux.

Every expected value is worked out in the test from the rule it checks, never by calling
the code under test for it:

* SI arithmetic: 1 mg/L = 1 g/m3; 1 mm = 1e-3 m; 1 ha = 1e4 m2; 1 umol/L = 1e-3 mol/m3.
  So 1 mg/L x 1 mm = 1e-3 kg/m3 x 1e-3 m = 1e-6 kg/m2 = 0.01 kg/ha.
* Molar masses from the IUPAC standard atomic weights (abridged table, conventional
  values; from memory): S 32.06, N 14.007, O 15.999, H 1.008, Na 22.990 g/mol, so
  SO4 96.056, NO3 62.004, NH4 18.039 g/mol.
* Equivalents: 2 eq per mol of sulfate (and of S as sulfate), 1 per mol of nitrate,
  ammonium and N (common practice).
* The rules of docs/methods_wet.md (sections named beside each test) and the Gregorian
  calendar (February 2024 has 29 days, the year 2024 has 8784 h).
* Seawater: Keene et al. (1986), J. Geophys. Res. 91(D6), 6647, Table 1, SO4/Na 0.121
  eq/eq; cross-check with the reference composition of Millero et al. (2008), Deep-Sea
  Res. I 55, 50, Na 0.4689 and SO4 0.02824 mol/kg (both from memory).

Sites, dates and concentrations are invented.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from wet.wet_samples import make_samples, week

from workbench import periods as P
from workbench.budget import BudgetOptions
from workbench.budgetstatus import wet_component
from workbench.units import deposition_in, to_amount
from workbench.wet import WetOptions, qa, screen, wet_deposition

S, N, O, H, NA = 32.06, 14.007, 15.999, 1.008, 22.990        # g/mol, IUPAC (from memory)
M_SO4, M_NO3, M_NH4 = S + 4 * O, N + 3 * O, N + 4 * H        # 96.056, 62.004, 18.039
KG_HA_PER_MG_L_MM = 1e-3 * 1e-3 * 1e4                         # kg/m3 * m * m2/ha = 0.01
IONS = ("SO4", "NO3", "NH4", "Na")


def _one(rows, ranges, ions=IONS, **opt):
    """Screen `rows` and return the wet Dataset of the custom `ranges` (site A)."""
    o = WetOptions(**opt)
    per = P.make_periods(None, None, "custom", ranges=ranges)
    scr = screen(make_samples(rows, ions=ions), o)
    return scr, wet_deposition(scr, per, o)


def _cell(wet, period, site="A"):
    return wet.sel(site=site, period=period)


def _weeks(first, depths, **chem):
    """Consecutive weekly rows from `first` with the given gauge depths [mm]."""
    rows = []
    for k, d in enumerate(depths):
        s, e = week(pd.Timestamp(first) + pd.Timedelta(days=7 * k))
        rows.append(dict(start=s, end=e, gauge_depth=d, **chem))
    return rows


# ----------------------------------------------------------------- units (sections 1, 5)
def test_one_mg_per_litre_over_one_mm_is_a_hundredth_kg_per_ha_of_s_and_n():
    # 1 mg/L of S (as sulfate), of N as nitrate and of N as ammonium, in one 1 mm sample:
    # each deposits 0.01 kg of its element per hectare
    assert KG_HA_PER_MG_L_MM == pytest.approx(0.01)
    umol = {"SO4": 1000 / S, "NO3": 1000 / N, "NH4": 1000 / N}      # umol of ion per L
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=1.0, **umol)]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")], ions=("SO4", "NO3", "NH4"))
    c = _cell(wet, "wk")
    for ion in ("SO4", "NO3", "NH4"):
        assert c[f"dep_{ion}_kg_ha"].item() == pytest.approx(0.01, rel=1e-12), ion
    # 1 mg/L of the sulfate ion itself is 32.06/96.056 mg/L of S: 0.003338 kg S/ha per mm
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=1.0, SO4=1000 / M_SO4)]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")], ions=("SO4",))
    assert _cell(wet, "wk")["dep_SO4_kg_ha"].item() == pytest.approx(0.01 * S / M_SO4, rel=1e-12)
    # in equivalents: 1 mmol/m2 of sulfate is 2e-3 eq/m2 = 20 eq/ha
    assert deposition_in(1e-3, "SO4", "eq_ha") == pytest.approx(20.0)


@pytest.mark.parametrize("ion, basis, mass, eq_per_mol", [
    ("SO4", None, M_SO4, 2), ("SO4", "S", S, 2),
    ("NO3", None, M_NO3, 1), ("NO3", "N", N, 1),
    ("NH4", None, M_NH4, 1), ("NH4", "N", N, 1)])
def test_ueq_per_litre_and_mg_per_litre_convert_through_the_equivalent_weight(
        ion, basis, mass, eq_per_mol):
    # 1 mg/L (of the ion, or of its element) = 1000 / M umol/L = 1000 z / M ueq/L:
    # SO4 20.82, S 62.38, NO3 16.13, NH4 55.44, N 71.39 ueq/L
    amount = to_amount(1.0, "mg/L", ion, basis=basis)[0]              # mol m-3 of the ion
    assert float(amount) == pytest.approx(1.0 / mass, rel=1e-12)
    assert float(qa.ueq_per_litre(amount, ion)) == pytest.approx(1000 * eq_per_mol / mass,
                                                                  rel=1e-12)
    back = to_amount(1000 * eq_per_mol / mass, "ueq/L", ion)[0]
    assert float(back) == pytest.approx(float(amount), rel=1e-12)


# ----------------------------------------------------------------- PWM (section 5)
def test_precipitation_weighted_mean_over_unequal_depths_and_its_flux():
    # three weeks of 10, 30 and 5 mm; SO4 20, 40, 80 umol/L; NO3 10, 5, 50 umol/L;
    # pH 4.0, 5.0, 4.5
    rows = _weeks("2021-03-01", [10.0, 30.0, 5.0])
    for r, so4, no3, ph in zip(rows, (20, 40, 80), (10, 5, 50), (4.0, 5.0, 4.5)):
        r.update(SO4=so4, NO3=no3, pH=ph)
    _, wet = _one(rows, [("2021-03-01", "2021-03-22", "3wk")])
    c = _cell(wet, "3wk")
    p = 10 + 30 + 5
    so4 = (10 * 20 + 30 * 40 + 5 * 80) / p                 # 40 umol/L (plain mean: 46.7)
    no3 = (10 * 10 + 30 * 5 + 5 * 50) / p                  # 11.11 umol/L
    assert c["precipitation"].item() == pytest.approx(p)
    assert c["pwm_SO4"].item() == pytest.approx(so4 * 1e-3)           # mol m-3
    assert c["pwm_NO3"].item() == pytest.approx(no3 * 1e-3)
    # D = C P: 40e-3 mol/m3 x 45e-3 m = 1.8e-3 mol/m2 = 0.577 kg S/ha = 36 eq/ha
    assert c["dep_SO4"].item() == pytest.approx(so4 * 1e-3 * p * 1e-3)
    assert c["dep_SO4_kg_ha"].item() == pytest.approx(so4 * 1e-3 * p * 1e-3 * S * 1e-3 * 1e4)
    assert c["dep_SO4_eq_ha"].item() == pytest.approx(so4 * 1e-3 * p * 1e-3 * 2 * 1e4)
    assert c["dep_NO3_kg_ha"].item() == pytest.approx(no3 * 1e-3 * p * 1e-3 * N * 1e-3 * 1e4)
    # the free acidity is averaged as H+, not as pH: 100, 10, 31.62 umol/L
    h = (10 * 100 + 30 * 10 + 5 * 10 ** (6 - 4.5)) / p
    assert c["pH_pwm"].item() == pytest.approx(-np.log10(h * 1e-6), abs=1e-9)
    assert c["status"].item() == "complete"


# ----------------------------------------------------------------- depth (sections 3.6, 6)
def test_the_gauge_depth_weighs_the_sample_and_a_disagreeing_collector_flags_it():
    # gauge 10 mm, collector 4 mm: ratio 0.4 below the range of an unknown type
    # (0.5-1.2); the sample is kept and flagged, and its weight is the gauge's 10 mm
    rows = _weeks("2021-03-01", [10.0, 10.0], SO4=30)
    rows[1].update(sample_depth=4.0, SO4=60)
    scr, wet = _one(rows, [("2021-03-01", "2021-03-15", "2wk")])
    assert scr["capture_ratio"].values[1] == pytest.approx(0.4)
    assert scr["status"].values.tolist() == ["used", "flagged"]
    c = _cell(wet, "2wk")
    assert c["precipitation"].item() == pytest.approx(20.0)          # gauges, not 14 mm
    assert c["pwm_SO4"].item() == pytest.approx((10 * 30 + 10 * 60) / 20 * 1e-3)
    assert c["status"].item() == "flagged"
    assert c["flagged_precip_fraction"].item() == pytest.approx(0.5)


def test_a_gauge_of_0_mm_under_a_wet_collector_is_not_a_dry_week():
    # Five weeks of 10 mm gauge / 9 mm collector (ratio 0.9), then a week whose gauge
    # says 0 mm while the collector holds 9 mm of analysed rain. The gauge missed the
    # rain (blocked funnel): the week is not dry. Its depth is filled from the collector
    # by the site's median capture ratio, 9 / 0.9 = 10 mm (section 6), and it is flagged.
    rows = _weeks("2021-03-01", [10.0] * 5 + [0.0], SO4=30)
    for r in rows:
        r["sample_depth"] = 9.0
    rows[-1]["SO4"] = 60
    scr, wet = _one(rows, [("2021-03-01", "2021-04-12", "6wk")])
    assert scr["status"].values[-1] != "dry"
    assert scr["gauge_depth_used"].values[-1] == pytest.approx(9.0 / 0.9)
    assert scr["gauge_source"].values[-1] == "collector"
    assert scr["status"].values[-1] == "flagged"
    assert "gauge 0 mm under a wet collector" in scr["reasons"].values[-1]
    c = _cell(wet, "6wk")
    assert c["precipitation"].item() == pytest.approx(60.0)
    assert c["pwm_SO4"].item() == pytest.approx((50 * 30 + 10 * 60) / 60 * 1e-3)
    assert c["status"].item() == "flagged"
    # without enough capture ratios to fill it, the week has no depth: excluded, a gap
    # in the gauge record, never 0 mm of rain
    scr, wet = _one(rows[-2:], [(rows[-2]["start"], rows[-1]["end"], "2wk")])
    assert scr["status"].values.tolist() == ["used", "excluded"]
    c = wet.isel(site=0, period=0)
    assert c["gauge_fraction"].item() == pytest.approx(0.5)
    assert c["status"].item() == "flagged"


@pytest.mark.parametrize("gauge, collector, failed", [
    (0.3, 8.0, True),      # ratio 26.7: the brief's week; a 0.3 mm reading is no dry week
    (0.2, 1.0, True),      # ratio 5, the collector at the 1 mm minimum
    (0.9, 1.08, False),    # ratio 1.2, the upper end of the range (equal passes)
    (0.8, 1.0, True),      # ratio 1.25, just above the range
    (0.9, 1.0, False),     # ratio 1.11, inside the range: the gauge stands
])
def test_a_gauge_far_below_a_wet_collector_is_taken_as_failed(gauge, collector, failed):
    # Section 3.8: a measured gauge depth below capture_min_depth (1 mm, where the
    # capture ratio is not judged) beside a collector of at least 1 mm is taken as
    # failed when collector / gauge exceeds the upper end of the capture range (1.2 for
    # an unknown precipitation type), as a 0 mm gauge is; filled from the collector by
    # the site's median capture ratio 9 / 10 = 0.9 and flagged.
    rows = _weeks("2021-03-01", [10.0] * 5 + [gauge], SO4=30)
    for r in rows[:-1]:
        r["sample_depth"] = 9.0
    rows[-1].update(sample_depth=collector, SO4=60)
    scr, wet = _one(rows, [("2021-03-01", "2021-04-12", "6wk")])
    ratio = collector / gauge
    assert failed == (ratio > 1.2 * (1 + 1e-9))
    if failed:
        assert scr["gauge_source"].values[-1] == "collector"
        assert scr["gauge_depth_used"].values[-1] == pytest.approx(collector / 0.9)
        assert scr["status"].values[-1] == "flagged"
        assert "gauge far below a wet collector" in scr["reasons"].values[-1]
        assert scr["qa_gauge_low_wet"].values[-1]
        assert not scr["qa_gauge_zero_wet"].values[-1]
        depth = 50 + collector / 0.9
    else:
        assert scr["gauge_source"].values[-1] == "measured"
        assert scr["gauge_depth_used"].values[-1] == gauge
        assert scr["capture_check"].values[-1] == "not evaluated"     # below 1 mm
        assert scr["status"].values[-1] == "used"
        depth = 50 + gauge
    c = _cell(wet, "6wk")
    assert c["precipitation"].item() == pytest.approx(depth)
    assert c["pwm_SO4"].item() == pytest.approx((50 * 30 + (depth - 50) * 60) / depth * 1e-3)


def test_the_far_below_rule_keeps_small_and_judged_pairs():
    # a collector below 1 mm beside a small gauge (dew, condensation): kept as measured;
    # a gauge of 1 mm or more is judged by the capture check itself (ratio 8 above range:
    # flagged, the gauge kept, section 3.6), not by this rule
    for gauge, collector, check in ((0.3, 0.9, "not evaluated"), (1.0, 8.0, "high")):
        rows = _weeks("2021-03-01", [10.0] * 5 + [gauge], SO4=30)
        for r in rows[:-1]:
            r["sample_depth"] = 9.0
        rows[-1]["sample_depth"] = collector
        scr, _ = _one(rows, [("2021-03-01", "2021-04-12", "6wk")])
        assert scr["gauge_source"].values[-1] == "measured"
        assert scr["gauge_depth_used"].values[-1] == gauge
        assert scr["capture_check"].values[-1] == check
        assert not scr["qa_gauge_low_wet"].values[-1]
    assert qa.gauge_under_wet_collector(np.array([0.0]), np.array([1.0]), 1.0, 1.2)[0]
    assert not qa.gauge_under_wet_collector(np.array([np.nan]), np.array([8.0]), 1.0, 1.2)[0]


# ----------------------------------------------------------------- periods (section 4)
def test_a_weekly_sample_across_31_december_is_shared_by_hours():
    # Mon 28 Dec 2020 00:00 - Mon 4 Jan 2021 00:00 UTC: 96 h in 2020, 72 h in 2021;
    # 14 mm of SO4 50 umol/L -> 8 mm and 6 mm; D = 50e-3 mol/m3 x 8e-3 m = 4e-4 mol/m2
    rows = [dict(start="2020-12-28", end="2021-01-04", gauge_depth=14.0, SO4=50)]
    for res, labels in (("year", ("2020", "2021")), ("month", ("2020-12", "2021-01"))):
        per = P.make_periods("2020-12-01", "2021-02-01", res)
        wet = wet_deposition(screen(make_samples(rows, ions=IONS)), per)
        first, second = (_cell(wet, lab) for lab in labels)
        assert first["precipitation"].item() == pytest.approx(14.0 * 96 / 168)
        assert second["precipitation"].item() == pytest.approx(14.0 * 72 / 168)
        assert first["dep_SO4"].item() == pytest.approx(50e-3 * 8e-3)
        assert first["dep_SO4_kg_ha"].item() + second["dep_SO4_kg_ha"].item() == \
            pytest.approx(50e-3 * 14e-3 * S * 1e-3 * 1e4)


def test_leap_february_and_leap_year_hours():
    # weekly samples from Mon 29 Jan 2024; the one of Mon 26 Feb - Mon 4 Mar 2024 (21 mm)
    # has 4 days in the 29-day February and 3 in March: 12 mm and 9 mm
    rows = _weeks("2024-01-01", [7.0] * 8 + [21.0] + [7.0] * 43, SO4=20)
    per = P.make_periods("2024-01-01", "2025-01-01", "month")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), per)
    feb, mar = _cell(wet, "2024-02"), _cell(wet, "2024-03")
    assert wet["period_hours"].sel(period="2024-02").item() == 29 * 24
    # Feb: weeks of 29 Jan (4 of its 7 days in Feb), 5, 12, 19 Feb and 4/7 of 26 Feb
    assert feb["precipitation"].item() == pytest.approx(7 * 4 / 7 + 3 * 7 + 21 * 4 / 7)
    # Mar: 3/7 of the 26 Feb sample and the weeks of 4, 11, 18 and 25 March (to 1 April)
    assert mar["precipitation"].item() == pytest.approx(21 * 3 / 7 + 4 * 7)
    assert feb["coverage_fraction"].item() == pytest.approx(1.0)
    # 52 weeks from 1 Jan 2024 end on 30 Dec 2024: 364 of the 366 days of 2024
    year = wet_deposition(screen(make_samples(rows, ions=IONS)),
                          P.make_periods("2024-01-01", "2025-01-01", "year"))
    y = _cell(year, "2024")
    assert year["period_hours"].item() == 8784
    assert y["coverage_fraction"].item() == pytest.approx(364 * 24 / 8784)
    assert y["precipitation"].item() == pytest.approx(7 * 51 + 21)
    # hydrological years from October: HY2024 (1 Oct 2023 - 1 Oct 2024) holds 29 Feb
    hy = P.make_periods("2023-10-01", "2024-10-01", "hydro_year")
    assert hy["label"].tolist() == ["HY2024"] and hy["hours"].tolist() == [366 * 24]
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), hy)
    # the record starts 1 Jan 2024, so HY2024 lacks October-December 2023 (92 days)
    # and is recorded on 366 - 92 = 274 days
    assert _cell(wet, "HY2024")["gauge_fraction"].item() == pytest.approx(
        (366 - 92) * 24 / (366 * 24))


# ----------------------------------------------------------------- gaps (sections 3.8, 7)
def test_rain_without_chemistry_counts_in_the_rain_and_fails_the_period():
    # February 2021 (four weeks from Mon 1 Feb): 10, 10, 20 (no chemistry), 10 mm
    rows = _weeks("2021-02-01", [10.0, 10.0, 20.0, 10.0], SO4=30)
    rows[2].pop("SO4")
    _, wet = _one(rows, [("2021-02-01", "2021-03-01", "feb")])
    c = _cell(wet, "feb")
    assert c["precipitation"].item() == pytest.approx(50.0)
    assert c["valid_precip_fraction"].item() == pytest.approx(30 / 50)   # below 0.7
    # the valid chemistry stands for all the rain: 30 umol/L x 50 mm
    assert c["dep_SO4"].item() == pytest.approx(30e-3 * 50e-3)
    assert c["status"].item() == "flagged" and bool(c["completeness_failed"].item())
    # the budget does not call it complete and says it fails completeness
    st, note, d, fails = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="total"),
                                       wet["status"].values.astype(object),
                                       wet["completeness_failed"].values)
    assert st[0, 0] == "flagged" and bool(fails[0, 0])
    assert "valid-chemistry precipitation below minimum" in note[0, 0]
    # no chemistry at all: no number, never 0
    for r in rows:
        r.pop("SO4", None)
        r["NO3"] = np.nan
        r["pH"] = 5.0                                 # chemistry present, but no SO4
    _, wet = _one(rows, [("2021-02-01", "2021-03-01", "feb")])
    assert np.isnan(_cell(wet, "feb")["dep_SO4"].item())
    st, note, d, fails = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="total"),
                                       wet["status"].values.astype(object),
                                       wet["completeness_failed"].values)
    assert st[0, 0] == "missing" and np.isnan(d[0, 0])


def test_values_below_detection_take_half_the_limit_by_default():
    # two 10 mm weeks, NO3 20 umol/L and "<4" umol/L
    rows = _weeks("2021-03-01", [10.0, 10.0], SO4=30)
    rows[0]["NO3"] = 20.0
    rows[1].update(NO3=4.0, censored={"NO3": 4.0})
    for how, sub in (("half", 2.0), ("limit", 4.0), ("zero", 0.0)):
        _, wet = _one(rows, [("2021-03-01", "2021-03-15", "2wk")], detection_limit=how)
        c = _cell(wet, "2wk")
        assert c["pwm_NO3"].item() == pytest.approx((10 * 20 + 10 * sub) / 20 * 1e-3), how
        assert wet["ion_n_censored"].sel(site="A", period="2wk", ion="NO3").item() == 1
    # a negative value after blank subtraction, censored without a limit: the median of
    # the limits stated for NO3 at the site (4 umol/L here) -> 2 umol/L
    rows.append(dict(zip(("start", "end"), week("2021-03-15")), gauge_depth=10.0, SO4=30,
                     NO3=-1.0, censored={"NO3": None}))
    _, wet = _one(rows, [("2021-03-01", "2021-03-22", "3wk")])
    assert _cell(wet, "3wk")["pwm_NO3"].item() == pytest.approx((200 + 20 + 20) / 30 * 1e-3)


def test_an_ion_missing_from_a_sample_is_missing_never_zero():
    # two 10 mm weeks; NH4 40 umol/L in the first, not reported in the second
    rows = _weeks("2021-03-01", [10.0, 10.0], SO4=30)
    rows[0]["NH4"] = 40.0
    rows.append(dict(site="B", start="2021-03-01", end="2021-03-08", gauge_depth=10.0,
                     SO4=30))                                       # site B: no NH4 at all
    _, wet = _one(rows, [("2021-03-01", "2021-03-15", "2wk")])
    c = _cell(wet, "2wk")
    assert c["pwm_NH4"].item() == pytest.approx(40e-3)               # not (400 + 0) / 20
    frac = wet["ion_valid_precip_fraction"].sel(site="A", period="2wk")
    assert frac.sel(ion="NH4").item() == pytest.approx(0.5)
    assert frac.sel(ion="SO4").item() == pytest.approx(1.0)
    b = _cell(wet, "2wk", "B")
    assert np.isnan(b["pwm_NH4"].item()) and np.isnan(b["dep_NH4"].item())
    st, note, d, _ = wet_component(wet, "NH4", BudgetOptions(),
                                   wet["status"].values.astype(object),
                                   wet["completeness_failed"].values)
    sites = list(wet["site"].values)
    assert st[sites.index("B"), 0] == "missing"
    assert st[sites.index("A"), 0] == "flagged"                      # NH4 for 50 % of rain
    assert "NH4 valid for 50.0 % of the precipitation only" in note[sites.index("A"), 0]


def test_an_ion_never_measured_at_a_site_is_missing_in_its_dry_months_too():
    # Site B reports no NH4 at all (site A does). Its dry April has 0 mm: 0 deposition of
    # the ions B measures, but NH4 stays unknown there, as in its wet March: a species
    # not measured at a site is missing (docs/budget.md, Status), never "0.0 complete".
    rows = [dict(site="A", start="2021-03-01", end="2021-04-01", gauge_depth=10.0, SO4=30,
                 NH4=20),
            dict(site="B", start="2021-03-01", end="2021-04-01", gauge_depth=10.0, SO4=30),
            dict(site="A", start="2021-04-01", end="2021-05-01", gauge_depth=0.0),
            dict(site="B", start="2021-04-01", end="2021-05-01", gauge_depth=0.0)]
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2021-03-01", "2021-05-01", "month"))
    assert _cell(wet, "2021-04", "A")["dep_NH4"].item() == 0.0        # measured, dry
    assert _cell(wet, "2021-04", "B")["dep_SO4"].item() == 0.0
    assert np.isnan(_cell(wet, "2021-04", "B")["dep_NH4"].item())
    assert np.isnan(_cell(wet, "2021-04", "B")["dep_NH4_kg_ha"].item())
    st, note, d, _ = wet_component(wet, "NH4", BudgetOptions(),
                                   wet["status"].values.astype(object),
                                   wet["completeness_failed"].values)
    b = list(wet["site"].values).index("B")
    assert st[b].tolist() == ["missing", "missing"]


# ----------------------------------------------------------------- collocated (section 5)
def test_collocated_samplers_average_their_depths():
    # two samplers side by side over the same week: 10 mm with SO4 20, 12 mm with SO4 30
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=10.0, SO4=20,
                 sampler_id="a"),
            dict(start="2021-03-01", end="2021-03-08", gauge_depth=12.0, SO4=30,
                 sampler_id="b")]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")])
    c = _cell(wet, "wk")
    assert c["precipitation"].item() == pytest.approx((10 + 12) / 2)   # not 22 mm
    assert c["pwm_SO4"].item() == pytest.approx((10 * 20 + 12 * 30) / 22 * 1e-3)
    assert c["dep_SO4"].item() == pytest.approx((10e-3 * 20e-3 + 12e-3 * 30e-3) / 2)
    assert c["valid_precip_fraction"].item() == pytest.approx(1.0)
    assert c["status"].item() == "complete"


def test_a_partly_collocated_sampler_averages_only_where_both_ran():
    # A weekly sampler (Mon 1 - Mon 8 March, 14 mm, SO4 20 umol/L) beside a daily one
    # that ran on the first three days only (2 mm a day, SO4 40 umol/L). With rain
    # uniform within the weekly sample (2 mm a day), the gauges are averaged where both
    # ran and the weekly one stands alone on the other four days:
    #   weekly weight 14 x (3/7 x 1/2 + 4/7 x 1) = 11 mm, daily 3 x 2 / 2 = 3 mm,
    #   P = 14 mm (both gauges agree on 2 mm a day, so the week has 14 mm).
    # (The mean multiplicity 10/7 over the week gave 14 / (10/7) + 3 = 12.8 mm.)
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=14.0, SO4=20,
                 sampler_id="wk")]
    rows += [dict(start=f"2021-03-0{d}", end=f"2021-03-0{d + 1}", gauge_depth=2.0, SO4=40,
                  sampler_id="day") for d in (1, 2, 3)]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")])
    c = _cell(wet, "wk")
    assert c["precipitation"].item() == pytest.approx(14.0)
    assert c["pwm_SO4"].item() == pytest.approx((11 * 20 + 3 * 40) / 14 * 1e-3)


def test_a_collocated_partner_with_valid_chemistry_covers_a_contaminated_sample():
    # the same week, sampler b contaminated: the week's chemistry is still known from
    # sampler a, so its rain has valid chemistry and the week is covered; the rain is
    # still the mean of the two gauges (11 mm) and the PWM that of sampler a
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=10.0, SO4=20,
                 sampler_id="a"),
            dict(start="2021-03-01", end="2021-03-08", gauge_depth=12.0, SO4=300,
                 sampler_id="b", flags="contaminated")]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")])
    c = _cell(wet, "wk")
    assert c["precipitation"].item() == pytest.approx(11.0)
    assert c["pwm_SO4"].item() == pytest.approx(20e-3)
    assert c["coverage_fraction"].item() == pytest.approx(1.0)
    assert c["valid_precip_fraction"].item() == pytest.approx(1.0)
    assert c["status"].item() == "complete"


# ----------------------------------------------------------------- trace (sections 2, 7)
def test_a_gauge_gap_is_reported_as_measured_not_scaled_up():
    # Section 7, "Gauge gaps are not scaled up": four 10 mm weeks in a 31-day March
    # leave 3 days (72 of 744 h) without a gauge record: gauge fraction 672 / 744 =
    # 0.903, above the 0.90 minimum, so the month passes with the 40 mm recorded, not
    # 40 / 0.903 = 44.3 mm; its flux is the PWM times 40 mm. (This pins the documented
    # behaviour; it is not the test of a fix.)
    rows = _weeks("2021-03-01", [10.0] * 4, SO4=30, NO3=20, NH4=25, Na=5)
    _, wet = _one(rows, [("2021-03-01", "2021-04-01", "Mar")])
    c = _cell(wet, "Mar")
    assert c["gauge_fraction"].item() == pytest.approx(672 / 744)
    assert c["status"].item() == "complete"
    assert c["precipitation"].item() == pytest.approx(40.0)
    assert c["dep_SO4"].item() == pytest.approx(30e-3 * 40e-3)       # mol/m3 x m


def test_a_trace_week_counts_in_the_time_coverage_and_weighs_by_its_rain():
    # February 2021: 10, 10, 0.2 (trace: too little water to analyse), 10 mm, SO4 30.
    # The trace week is known (the gauge measured it) and carries 0.2 of 30.2 mm: it
    # lowers the share of precipitation with valid chemistry by 0.7 %, and counts in the
    # time coverage like a dry week (as the same week written 0 mm with the flag trace).
    rows = _weeks("2021-02-01", [10.0, 10.0, 0.2, 10.0], SO4=30)
    rows[2].pop("SO4")
    rows[2]["flags"] = "trace"
    scr, wet = _one(rows, [("2021-02-01", "2021-03-01", "feb")])
    assert scr["status"].values[2] == "excluded"                     # chemistry not used
    c = _cell(wet, "feb")
    assert c["precipitation"].item() == pytest.approx(30.2)
    assert c["valid_precip_fraction"].item() == pytest.approx(30 / 30.2)
    assert c["coverage_fraction"].item() == pytest.approx(1.0)
    assert c["dep_SO4"].item() == pytest.approx(30e-3 * 30.2e-3)
    assert c["status"].item() == "complete"
    # a "trace" week with much rain (a collector that failed) is caught by its rain:
    # 20 of 50 mm without chemistry, 60 % < 70 %
    rows[2]["gauge_depth"] = 20.0
    _, wet = _one(rows, [("2021-02-01", "2021-03-01", "feb")])
    c = _cell(wet, "feb")
    assert c["coverage_fraction"].item() == pytest.approx(1.0)
    assert c["valid_precip_fraction"].item() == pytest.approx(0.6)
    assert c["status"].item() == "flagged"
    assert "valid-chemistry precipitation below minimum" in c["completeness_reasons"].item()
    # any other week without chemistry (here lost) still leaves the time uncovered
    rows[2].update(gauge_depth=0.2, flags="sample_lost")
    _, wet = _one(rows, [("2021-02-01", "2021-03-01", "feb")])
    assert _cell(wet, "feb")["coverage_fraction"].item() == pytest.approx(0.75)


# ----------------------------------------------------------------- sea salt (section 8)
def test_non_sea_salt_sulfate_from_sodium_with_the_seawater_ratio():
    # SO4/Na in seawater: 0.121 eq/eq (Keene et al. 1986) = 0.0605 mol/mol; Millero et
    # al. (2008): 0.02824 / 0.4689 = 0.0602 mol/mol, within 1 %
    r = 0.121 / 2
    assert r == pytest.approx(0.02824 / 0.4689, rel=0.01)
    # weeks of 10 mm (SO4 50, Na 400 umol/L) and 30 mm (SO4 30, Na 100 umol/L)
    rows = _weeks("2021-03-01", [10.0, 30.0])
    rows[0].update(SO4=50, Na=400)
    rows[1].update(SO4=30, Na=100)
    _, wet = _one(rows, [("2021-03-01", "2021-03-15", "2wk")])
    c = _cell(wet, "2wk")
    so4, na = (10 * 50 + 30 * 30) / 40, (10 * 400 + 30 * 100) / 40     # 35, 175 umol/L
    nss = so4 - r * na                                                # 24.41 umol/L
    # the nss part of the PWM is the PWM of the per-sample nss parts (linear)
    assert nss == pytest.approx((10 * (50 - r * 400) + 30 * (30 - r * 100)) / 40)
    assert c["pwm_nssSO4"].item() == pytest.approx(nss * 1e-3)
    assert c["dep_nssSO4_kg_ha"].item() == pytest.approx(nss * 1e-3 * 40e-3 * S * 1e-3 * 1e4)
    # Na x 100 typed in: more sea-salt sulfate than sulfate -> clipped at 0, flagged
    rows[1]["Na"] = 10000
    _, wet = _one(rows, [("2021-03-01", "2021-03-15", "2wk")])
    c = _cell(wet, "2wk")
    assert c["pwm_nssSO4"].item() == 0.0 and bool(c["nssSO4_clipped"].item())


# ----------------------------------------------------------------- bounds (section 7)
@pytest.mark.parametrize("cut_h, valid_mm, status", [
    (648, 7.0, "complete"),        # 648 / 720 h = 0.90; 7 of 10 mm = 0.70: both pass
    (647, 7.0, "flagged"),         # one hour short of the coverage
    (648, 6.9, "flagged")])        # 6.9 of 9.9 mm = 0.697 < 0.70
def test_completeness_at_its_exact_bounds(cut_h, valid_mm, status):
    # April 2021 (720 h): one used sample over its first `cut_h` hours, then a
    # contaminated sample of 3 mm to the end of the month (gauge known, chemistry not)
    t0 = pd.Timestamp("2021-04-01")
    cut = t0 + pd.Timedelta(hours=cut_h)
    rows = [dict(start=str(t0), end=str(cut), gauge_depth=valid_mm, SO4=30),
            dict(start=str(cut), end="2021-05-01", gauge_depth=3.0, SO4=30,
                 flags="contaminated")]
    _, wet = _one(rows, [("2021-04-01", "2021-05-01", "apr")])
    c = _cell(wet, "apr")
    assert c["gauge_fraction"].item() == pytest.approx(1.0)
    assert c["coverage_fraction"].item() == pytest.approx(cut_h / 720)
    assert c["valid_precip_fraction"].item() == pytest.approx(valid_mm / (valid_mm + 3.0))
    assert c["status"].item() == status
    # the gauge record at its bound: no row at all after `cut` -> gauge fraction 0.9
    _, wet = _one(rows[:1], [("2021-04-01", "2021-05-01", "apr")])
    c = _cell(wet, "apr")
    assert c["gauge_fraction"].item() == pytest.approx(cut_h / 720)
    assert c["status"].item() == ("complete" if cut_h == 648 else "flagged")


def test_a_wet_period_needs_one_valid_sample():
    # one 5 mm week, contaminated: rain but no valid sample -> flagged, flux unknown
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=5.0, SO4=30,
                 flags="contaminated")]
    _, wet = _one(rows, [("2021-03-01", "2021-03-08", "wk")])
    c = _cell(wet, "wk")
    assert "too few valid samples" in c["completeness_reasons"].item()
    assert np.isnan(c["dep_SO4"].item())


# ----------------------------------------------------------------- fills (sections 4, 7)
def test_a_failed_month_filled_with_the_seasonal_pwm_of_the_record():
    # Dec 2020: one sample, 30 mm, SO4 20; Jan 2021: 1-20 Jan, 20 mm, SO4 50, then a
    # contaminated 5 mm sample (coverage 19/31 < 0.9, gauge record whole); Feb 2021: one
    # sample, 10 mm, SO4 80 umol/L. period_fill = "seasonal": January takes the winter
    # PWM of the record's used samples other than its own (leave-one-out, 2026-12
    # 2026-12 audit; before: 40 umol/L with its own 1-20 Jan sample), (30 x 20 + 10 x 80) / 40
    # = 35 umol/L, times its own 25 mm.
    rows = [dict(start="2020-12-01", end="2021-01-01", gauge_depth=30.0, SO4=20),
            dict(start="2021-01-01", end="2021-01-20", gauge_depth=20.0, SO4=50),
            dict(start="2021-01-20", end="2021-02-01", gauge_depth=5.0, SO4=500,
                 flags="contaminated"),
            dict(start="2021-02-01", end="2021-03-01", gauge_depth=10.0, SO4=80)]
    per = P.make_periods("2020-12-01", "2021-03-01", "month")
    for fill, jan_pwm, jan_status in (("none", 50.0, "flagged"), ("seasonal", 35.0, "filled")):
        o = WetOptions(period_fill=fill)
        wet = wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o)
        jan = _cell(wet, "2021-01")
        assert jan["coverage_fraction"].item() == pytest.approx(19 / 31)
        assert jan["pwm_SO4"].item() == pytest.approx(jan_pwm * 1e-3)
        assert jan["gauge_fraction"].item() == pytest.approx(1.0)
        assert jan["dep_SO4"].item() == pytest.approx(jan_pwm * 1e-3 * 25e-3)
        assert jan["status"].item() == jan_status
        assert _cell(wet, "2020-12")["pwm_SO4"].item() == pytest.approx(20e-3)   # untouched


def test_the_seasonal_fill_does_not_make_up_for_missing_rain():
    # January 2021 with rows for 1-15 January only (14 mm, SO4 50): the gauge record
    # covers 14/31 of the month, so half of its rain is unknown. A multi-year PWM
    # replaces missing chemistry, not missing rain: the month stays flagged (fails
    # completeness) rather than "filled" (which passes), and its own PWM is kept.
    rows = [dict(start="2020-12-01", end="2021-01-01", gauge_depth=30.0, SO4=20),
            dict(start="2021-01-01", end="2021-01-15", gauge_depth=14.0, SO4=50),
            dict(start="2021-02-01", end="2021-03-01", gauge_depth=10.0, SO4=80)]
    per = P.make_periods("2020-12-01", "2021-03-01", "month")
    o = WetOptions(period_fill="seasonal")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o)
    jan = _cell(wet, "2021-01")
    assert jan["gauge_fraction"].item() == pytest.approx(14 / 31)
    assert jan["status"].item() == "flagged" and bool(jan["completeness_failed"].item())
    assert "gauge record below minimum" in jan["completeness_reasons"].item()
    assert jan["pwm_SO4"].item() == pytest.approx(50e-3)
    assert not bool(jan["filled"].item())


def test_a_sample_across_a_month_end_shared_by_its_hourly_rain():
    # 31 Mar 00:00 - 7 Apr 2021 00:00, 10 mm; the hourly gauge of the met record had 3 mm
    # in the first three hours of 31 March and 7 mm in the first seven of 1 April.
    # straddle = "hours": March gets 24/168 of 10 mm = 1.43 mm; "met": 3/10 of it = 3 mm.
    from wet.wet_samples import make_met

    def rain(t):
        first = (t > pd.Timestamp("2021-03-31")) & (t <= pd.Timestamp("2021-03-31 03:00"))
        second = (t > pd.Timestamp("2021-04-01")) & (t <= pd.Timestamp("2021-04-01 07:00"))
        return (first | second).astype(float)

    met = make_met(["A"], "2021-03-20", "2021-04-15", precipitation=rain)
    rows = [dict(start="2021-03-31", end="2021-04-07", gauge_depth=10.0, SO4=30)]
    per = P.make_periods("2021-03-01", "2021-05-01", "month")
    for how, march in (("hours", 10 * 24 / 168), ("met", 3.0)):
        o = WetOptions(straddle=how)
        wet = wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o, met=met)
        assert _cell(wet, "2021-03")["precipitation"].item() == pytest.approx(march)
        assert _cell(wet, "2021-04")["precipitation"].item() == pytest.approx(10 - march)


# ----------------------------------------------------------------- the demo file by hand
@pytest.mark.parametrize("site, year", [("farm", 2018), ("fell", 2020)])
def test_a_demo_year_recomputed_by_hand_from_the_raw_file(site, year):
    # From demo_data/precipitation.csv read with pandas: mg/L -> umol/L by the molar
    # masses above (NO3 written as N, SO4 as the ion, Na), local labels -> UTC with the
    # site's utc_offset_h = 1 (sites.toml), each sample's gauge depth shared by its hours
    # in the year, the PWM over the samples the screen kept (the only input taken from
    # the code), nss SO4 = SO4 - 0.0605 Na, flux = PWM x the year's rain.
    from pathlib import Path

    from workbench.io import read_precipitation, read_sites
    demo = Path(__file__).resolve().parents[2] / "demo_data"
    if not (demo / "precipitation.csv").exists():
        pytest.skip("demo files not made")
    raw = pd.read_csv(demo / "precipitation.csv")
    cat = read_sites(demo / "sites.toml")
    samples, _ = read_precipitation(demo / "precipitation.csv", cat)
    scr = screen(samples)
    wet = wet_deposition(scr, P.make_periods(f"{year}-01-01", f"{year + 1}-01-01", "year"))
    c = _cell(wet, str(year), site)
    kept = pd.Series(scr["used"].values.astype(bool), index=scr["line"].values)
    raw["line"] = np.arange(len(raw)) + 2                      # header is line 1
    g = raw[raw["site"] == site]
    used = kept.reindex(g["line"]).values
    s = pd.to_datetime(g["start"]) - pd.Timedelta(hours=1)
    e = pd.to_datetime(g["end"]) - pd.Timedelta(hours=1)
    y0, y1 = pd.Timestamp(f"{year}-01-01"), pd.Timestamp(f"{year + 1}-01-01")
    inside = ((np.minimum(e, y1) - np.maximum(s, y0)).dt.total_seconds().clip(lower=0)
              / (e - s).dt.total_seconds()).values
    p = g["gauge_depth [mm]"].values * inside                  # mm in the year
    no3 = g["NO3_as_N [mg/L]"].values / N * 1000               # umol/L
    so4 = g["SO4 [mg/L]"].values / M_SO4 * 1000
    na = g["Na [mg/L]"].values / NA * 1000
    rain = np.nansum(p)

    def pwm(x):
        ok = used & np.isfinite(x) & (p > 0)
        return np.sum(p[ok] * x[ok]) / np.sum(p[ok])

    assert c["precipitation"].item() == pytest.approx(rain, rel=1e-9)
    assert c["pwm_NO3"].item() == pytest.approx(pwm(no3) * 1e-3, rel=1e-9)
    assert c["dep_NO3_kg_ha"].item() == pytest.approx(pwm(no3) * 1e-3 * rain * 1e-3 * N * 10,
                                                      rel=1e-9)
    nss = pwm(so4) - 0.121 / 2 * pwm(na)
    assert c["dep_nssSO4_kg_ha"].item() == pytest.approx(nss * 1e-3 * rain * 1e-3 * S * 10,
                                                         rel=1e-9)
