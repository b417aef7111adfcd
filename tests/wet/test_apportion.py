"""How a sample's rain and deposition are shared among months, seasons and years, and
what the completeness of a period makes of dry weeks, rows without chemistry and absent
rows.

Expected values are hand arithmetic from the definitions of docs/methods_wet.md
(section 4: a straddling sample is shared by its share of hours, UTC; section 5:
D = PWM x P; section 7: gauge and coverage fractions) and the Gregorian calendar
(366 days in 2024, 29 days in February 2024). Molar masses of S and N: IUPAC standard
atomic weights (abridged), S 32.06 and N 14.007 g/mol (from memory).
"""
import numpy as np
import pandas as pd
import pytest
from wet.wet_samples import make_met, make_samples, week

from workbench import periods as P
from workbench.budget import annual_factor
from workbench.wet import screen, wet_deposition

IONS = ("SO4", "NO3", "NH4")


def _bal(so4, no3, nh4):
    """Composition whose free acidity closes the balance: H+ = 2 SO4 + NO3 - NH4 (umol/L)."""
    return dict(SO4=so4, NO3=no3, NH4=nh4, pH=-np.log10((2 * so4 + no3 - nh4) * 1e-6))


def test_sample_across_new_year_is_shared_by_hours_and_years_add_up():
    # Weekly samples changed on Tuesdays at 09:00 UTC, 1 Dec 2020 - 4 Jan 2022; the one of
    # 29 Dec 2020 09:00 - 5 Jan 2021 09:00 (14 mm, SO4 30 umol/L) has 63 of its 168 hours
    # in 2020 (29 Dec 09:00 - 1 Jan 00:00 = 2 d 15 h) and 105 in 2021.
    rows, t, k = [], pd.Timestamp("2020-12-01T09:00"), 0
    while t < pd.Timestamp("2022-01-04"):
        depth = 14.0 if t == pd.Timestamp("2020-12-29T09:00") else 3.0 + k % 5
        so4 = 30.0 if depth == 14.0 else 10.0 + k % 7
        rows.append(dict(start=str(t), end=str(t + pd.Timedelta(days=7)), gauge_depth=depth,
                         **_bal(so4, 20.0, 10.0)))
        t, k = t + pd.Timedelta(days=7), k + 1
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)),
                         P.make_periods("2020-01-01", "2023-01-01", "year"))
    # 2020: the four December weeks before it (k = 0..3: 3, 4, 5, 6 mm) + 14 x 63/168
    p2020 = 3 + 4 + 5 + 6 + 14 * 63 / 168
    assert wet["precipitation"].sel(period="2020").item() == pytest.approx(p2020)   # 23.25 mm
    d2020 = (3 * 10 + 4 * 11 + 5 * 12 + 6 * 13 + 14 * 63 / 168 * 30) * 1e-6     # mol m-2
    assert wet["dep_SO4"].sel(period="2020").item() == pytest.approx(d2020)
    # every sample valid: the years together hold exactly the samples' rain and sulfate
    # (the last week, 28 Dec 2021 09:00 - 4 Jan 2022 09:00, gives 81 of its 168 h to 2022)
    total_p = sum(r["gauge_depth"] for r in rows)
    total_d = sum(r["gauge_depth"] * r["SO4"] * 1e-6 for r in rows)
    assert np.nansum(wet["precipitation"].values) == pytest.approx(total_p, rel=1e-12)
    assert np.nansum(wet["dep_SO4"].values) == pytest.approx(total_d, rel=1e-12)
    assert np.nansum(wet["dep_SO4_kg_ha"].values) == pytest.approx(total_d * 32.06e-3 * 1e4,
                                                                   rel=1e-4)
    # 2021 is wholly covered (every one of its 8760 h); 2020 and 2022 are not
    assert wet["coverage_fraction"].sel(period="2021").item() == pytest.approx(1.0)
    assert wet["status"].sel(period="2021").item() == "complete"
    assert wet["coverage_fraction"].sel(period="2020").item() == pytest.approx(
        (30 * 24 + 15) / 8784)                                 # 1 Dec 09:00 - 1 Jan; leap
    # months: the same sample gives 63/168 of its rain to December, 105/168 to January
    m = wet_deposition(screen(make_samples(rows, ions=IONS)),
                       P.make_periods("2020-12-01", "2021-02-01", "month"))
    assert m["precipitation"].sel(period="2020-12").item() == pytest.approx(p2020)
    # January: 105 h of it, the weeks of 5, 12, 19 Jan (k = 5, 6, 7: 3, 4, 5 mm) and
    # 135 of 168 h of the week of 26 Jan 09:00 - 2 Feb 09:00 (k = 8: 6 mm)
    jan = 14 * 105 / 168 + 3 + 4 + 5 + 6 * 135 / 168
    assert m["precipitation"].sel(period="2021-01").item() == pytest.approx(jan)


def test_leap_day_sample_and_a_sample_across_the_end_of_february_2024():
    # 28 Feb 12:00 - 1 Mar 12:00 2024 (48 h, 8 mm): 36 h in February (28th 12 h + 29th),
    # 12 h in March; by season the same split, DJF 2024 / MAM 2024
    rows = [dict(start="2024-02-28T12:00", end="2024-03-01T12:00", gauge_depth=8.0,
                 **_bal(20, 20, 10))]
    sc = screen(make_samples(rows, ions=IONS))
    m = wet_deposition(sc, "month")
    assert m["period_hours"].values.tolist() == [29 * 24, 31 * 24]
    assert m["precipitation"].values[0].tolist() == pytest.approx([6.0, 2.0])
    s = wet_deposition(sc, "season")
    assert s["period"].values.tolist() == ["2024-DJF", "2024-MAM"]
    assert s["precipitation"].values[0].tolist() == pytest.approx([6.0, 2.0])
    y = wet_deposition(sc, "year")
    assert y["period_hours"].item() == 366 * 24
    assert y["coverage_fraction"].item() == pytest.approx(48 / 8784)


@pytest.mark.parametrize("first_month", [1, 2, 3, 10])
def test_yearly_rate_of_a_whole_hydrological_year_is_its_deposition(first_month):
    # a hydrological year is a year: its deposition per year is its deposition, whether
    # it holds 29 February (366 days) or not; with a first month of February the year
    # "HY2025" runs 1 Feb 2024 - 1 Feb 2025 and holds 29 Feb 2024
    p = P.make_periods("2023-03-01", "2025-06-01", "hydro_year", hydro_start_month=first_month)
    np.testing.assert_array_equal(annual_factor(p), np.ones(len(p)))
    # so is a custom range of one year holding 29 February 2024 (8784 h, labelled by
    # nothing: its start year 2023 has 8760 h)
    one = P.make_periods(None, None, "custom", ranges=[("2023-07-01", "2024-07-01", "Y")])
    assert annual_factor(one).tolist() == [1.0]
    # a month keeps the length of its year: February 2024 -> 8784 / 696
    months = P.make_periods("2024-02-01", "2024-03-01", "month")
    assert annual_factor(months).tolist() == pytest.approx([8784 / 696])


def test_dry_week_row_without_chemistry_and_absent_row_count_differently():
    # Four weeks from Tue 1 June 2021 (a 28-day custom period). Week 4 differs:
    # dry (0 mm): counted in the gauge record and in the coverage;
    # gauge 6 mm but no chemistry: gauge yes, coverage no; the rain counts in P;
    # no row at all: neither.
    def run(last):
        rows = []
        for k in range(3):
            s, e = week(pd.Timestamp("2021-06-01") + pd.Timedelta(days=7 * k))
            rows.append(dict(start=s, end=e, gauge_depth=10.0, **_bal(20, 20, 10)))
        if last is not None:
            s, e = week("2021-06-22")
            rows.append(dict(start=s, end=e, **last))
        per = P.make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-06-29", "4wk")])
        return wet_deposition(screen(make_samples(rows, ions=IONS)), per).isel(site=0, period=0)
    dry, nochem, absent = run(dict(gauge_depth=0.0)), run(dict(gauge_depth=6.0)), run(None)
    assert (dry["gauge_fraction"].item(), dry["coverage_fraction"].item()) == (1.0, 1.0)
    assert (nochem["gauge_fraction"].item(), nochem["coverage_fraction"].item()) == (1.0, 0.75)
    assert (absent["gauge_fraction"].item(), absent["coverage_fraction"].item()) == (0.75, 0.75)
    assert dry["status"].item() == "complete"
    assert nochem["status"].item() == absent["status"].item() == "flagged"
    # rain: 30 mm, 36 mm (6 mm without chemistry still falls), 30 mm over 3/4 of the time
    assert [dry["precipitation"].item(), nochem["precipitation"].item(),
            absent["precipitation"].item()] == pytest.approx([30.0, 36.0, 30.0])
    assert nochem["valid_precip_fraction"].item() == pytest.approx(30 / 36)
    # flux: PWM 20 umol/L x the period's rain (the valid chemistry stands for all of it)
    assert nochem["dep_SO4"].item() == pytest.approx(20e-6 * 36)
    assert "sample coverage below minimum" in nochem["completeness_reasons"].item()
    assert "gauge record below minimum" in absent["completeness_reasons"].item()
    assert "gauge record" not in nochem["completeness_reasons"].item()


def test_yearly_rate_of_a_clipped_year_still_scales_to_its_year():
    # a calendar year cut to 1 Mar - 1 Jan 2024 (306 days) scales by 366 / 306
    p = P.make_periods("2024-03-01", "2025-01-01", "year", clip=True)
    assert p["hours"].tolist() == [306 * 24]
    assert annual_factor(p).tolist() == pytest.approx([366 / 306])


PRECIP_AS_ELEMENT = """\
site,start,end,gauge_depth [mm],sample_volume [mL],collector_area [cm2],pH,SO4_as_S [mg/L],NO3_as_N [mg/L],NH4_as_N [mg/L]
beta,2021-06-01T00:00,2021-06-08T00:00,10,180,200,4.0,1.0,1.0,0.5
beta,2021-06-08T00:00,2021-06-15T00:00,5,95,200,5.0,<0.1,0.1,<0.02
"""


@pytest.mark.parametrize("treatment, factor", [("half", 0.5), ("limit", 1.0), ("zero", 0.0)])
def test_mg_element_per_litre_times_mm_is_a_hundredth_of_kg_per_ha(tmp_path, treatment,
                                                                    factor):
    # 1 mg/L x 1 mm = 1 g/m3 x 1e-3 m = 1 mg/m2 = 0.01 kg/ha (of the element the column is
    # written as); censored values enter as factor x limit for S and N alike
    # (docs/methods_wet.md 3.1). 180 mL over 200 cm2 = 9 mm in the collector.
    from tiny_inputs import SITES

    from workbench.io import read_precipitation, read_sites
    from workbench.wet import WetOptions
    (tmp_path / "sites.toml").write_text(SITES)
    (tmp_path / "p.csv").write_text(PRECIP_AS_ELEMENT)
    samples, _ = read_precipitation(tmp_path / "p.csv", read_sites(tmp_path / "sites.toml"))
    assert samples["sample_depth"].values.tolist() == pytest.approx([9.0, 4.75])
    opt = WetOptions(detection_limit=treatment)
    sc = screen(samples, opt)
    assert sc["status"].values.tolist() == ["used", "used"]
    per = P.make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-06-15", "2wk")])
    wet = wet_deposition(sc, per, opt).isel(site=0, period=0)
    assert wet["dep_SO4_kg_ha"].item() == pytest.approx((1.0 * 10 + factor * 0.1 * 5) * 0.01,
                                                        rel=1e-12)
    assert wet["dep_NO3_kg_ha"].item() == pytest.approx((1.0 * 10 + 0.1 * 5) * 0.01, rel=1e-12)
    assert wet["dep_NH4_kg_ha"].item() == pytest.approx((0.5 * 10 + factor * 0.02 * 5) * 0.01,
                                                        rel=1e-12)
    assert wet["ion_n_censored"].sel(ion=["SO4", "NO3", "NH4"]).values.tolist() == [1, 0, 1]


def test_labels_with_summer_and_winter_offsets_across_the_clock_change(tmp_path):
    # Local labels with their offsets: 25 Oct 2020 09:00+02:00 (07:00 UTC) to 1 Nov 2020
    # 09:00+01:00 (08:00 UTC) is 169 h, not 168; 161 of them fall in October (to 1 Nov
    # 00:00 UTC). Rows are given out of order; the reader and the chain do not mind.
    from tiny_inputs import SITES

    from workbench.io import read_precipitation, read_sites
    text = ("site,start,end,gauge_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],NH4 [umol/L]\n"
            "alpha,2020-11-01T09:00+01:00,2020-11-08T09:00+01:00,7,4.5,10,11.6,10\n"
            "alpha,2020-10-25T09:00+02:00,2020-11-01T09:00+01:00,16.9,4.5,10,11.6,10\n")
    (tmp_path / "sites.toml").write_text(SITES)
    (tmp_path / "p.csv").write_text(text)
    samples, _ = read_precipitation(tmp_path / "p.csv", read_sites(tmp_path / "sites.toml"))
    hours = (samples["end"] - samples["start"]).values / np.timedelta64(1, "h")
    assert hours.tolist() == [168.0, 169.0]
    wet = wet_deposition(screen(samples), "month")
    assert wet["precipitation"].sel(period="2020-10").item() == pytest.approx(16.9 * 161 / 169)
    assert wet["precipitation"].sel(period="2020-11").item() == pytest.approx(16.9 * 8 / 169 + 7)


def test_row_order_changes_nothing():
    # the same samples in another order (two sites, a collocated sampler, censored values,
    # an excluded sample, weeks across month and year ends) give the same numbers
    rng = np.random.default_rng(7)
    rows = []
    for site in ("A", "B"):
        t, k = pd.Timestamp("2020-11-24T09:00"), 0
        while t < pd.Timestamp("2021-03-10"):
            depth = float(rng.choice([0.0, 2.5, 8.0, 13.0]))
            r = dict(site=site, start=str(t), end=str(t + pd.Timedelta(days=7)),
                     gauge_depth=depth, sample_depth=0.95 * depth,
                     **(_bal(10 + k, 20, 10) if depth > 0 else {}))
            r["flags"] = "contaminated" if k % 6 == 3 else ""
            if k % 7 == 5:
                r["censored"] = {"SO4": 2.0}
            rows.append(r)
            t, k = t + pd.Timedelta(days=7), k + 1
        rows.append(dict(site=site, sampler_id="X", start="2021-01-05T09:00",
                         end="2021-01-12T09:00", gauge_depth=9.0, **_bal(30, 20, 10)))
    ds = make_samples(rows, ions=IONS)
    perm = rng.permutation(ds.sizes["sample"])
    shuffled = ds.isel(sample=perm).assign_coords(sample=np.arange(ds.sizes["sample"]))
    a, b = screen(ds), screen(shuffled)
    np.testing.assert_array_equal(a["status"].values[perm], b["status"].values)
    for res in ("month", "season", "year"):
        wa, wb = wet_deposition(a, res), wet_deposition(b, res)
        for v in wa.data_vars:
            if wa[v].dtype.kind == "f":
                np.testing.assert_allclose(wa[v].values, wb[v].values, rtol=1e-12, err_msg=v)
            else:
                np.testing.assert_array_equal(wa[v].values, wb[v].values, err_msg=v)
        assert wa.attrs == wb.attrs


def test_nss_sulfate_resting_on_a_tracer_measured_in_few_samples_is_flagged():
    # Four June weeks of 10 mm, SO4 30 umol/L in each; Na measured only in the first
    # (200 umol/L, a storm). The Na PWM (200) stands for all 40 mm, so
    # nss SO4 = 30 - 0.0605 x 200 = 17.9 umol/L (Keene et al. 1986 ratio, as in
    # test_seasalt.py) rests on one sample: Na is valid for 10 of 40 mm (25 %) < 70 %.
    # The budget's wet SO4 on the nss basis says so, as it does for SO4 itself.
    from workbench.budget import BudgetOptions
    from workbench.budgetstatus import wet_component
    rows = []
    for k in range(4):
        s, e = week(pd.Timestamp("2021-06-01") + pd.Timedelta(days=7 * k))
        salt = 200.0 if k == 0 else np.nan              # NaCl: the balance still closes
        chem = dict(_bal(30, 20, 10), Na=salt, Cl=salt)
        rows.append(dict(start=s, end=e, gauge_depth=10.0, **chem))
    per = P.make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-06-29", "4wk")])
    wet = wet_deposition(screen(make_samples(rows, ions=IONS + ("Na", "Cl"))), per)
    assert wet["pwm_nssSO4"].item() * 1000 == pytest.approx(30 - 0.121 / 2 * 200)
    assert wet["ion_valid_precip_fraction"].sel(ion="Na").item() == pytest.approx(0.25)
    status = wet["status"].values.astype(object)
    fail = wet["completeness_failed"].values
    assert status.tolist() == [["complete"]]
    st, note, dep, fails = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="nss"),
                                         status, fail)
    assert st.tolist() == [["flagged"]] and fails.tolist() == [[True]]
    assert "Na valid for 25.0 % of the precipitation only" in note.item()
    assert dep.item() == pytest.approx((30 - 0.121 / 2 * 200) * 1e-6 * 40)
    # on the total basis Na plays no part: complete
    st, note, _, fails = wet_component(wet, "SO4", BudgetOptions(sulfate_basis="total"),
                                       status, fail)
    assert st.tolist() == [["complete"]] and not fails.any()


def test_hourly_record_out_of_time_order_gives_the_same_sums():
    # a met Dataset built by concatenating months out of order (the second week first):
    # the sums over a window are those of the sorted record. Rain 1 mm/h in the 24 hours
    # ending 2 Mar 01:00 - 3 Mar 00:00 and 0.5 mm/h in those ending 9 Mar 01:00 - 10 Mar
    # 00:00: the week 1 - 8 Mar holds 24 mm, the week 8 - 15 Mar 12 mm.
    from workbench.wet.hourly import met_precipitation

    def rain(t):
        return np.where((t > pd.Timestamp("2021-03-02")) & (t <= pd.Timestamp("2021-03-03")),
                        1.0, np.where((t > pd.Timestamp("2021-03-09")) &
                                      (t <= pd.Timestamp("2021-03-10")), 0.5, 0.0))
    met = make_met(["A"], "2021-03-01", "2021-03-15", precipitation=rain)
    swapped = met.isel(time=np.r_[168:336, 0:168])
    starts = np.array(["2021-03-01", "2021-03-08"], "datetime64[ns]")
    ends = np.array(["2021-03-08", "2021-03-15"], "datetime64[ns]")
    for m in (met, swapped):
        assert met_precipitation(m, ["A", "A"], starts, ends).tolist() == [24.0, 12.0]
    with pytest.raises(ValueError, match="repeated"):
        met_precipitation(met.isel(time=np.r_[0:336, 5]), ["A"], starts[:1], ends[:1])


@pytest.mark.parametrize("cell", ["trace", "T"])
def test_a_trace_typed_in_the_gauge_column_is_refused_with_the_dry_week_advice(tmp_path, cell):
    # A trace week is a measured (near) dry week, not a missing gauge reading: the error
    # says to write 0 (an empty cell would turn the week into a gap of the gauge record).
    # Written as 0 with the flag trace the week is dry and counts as covered; left empty
    # it is a gap: the four-week gauge and coverage fractions are 1 against 3/4.
    from tiny_inputs import SITES

    from workbench.errors import InputError
    from workbench.io import read_precipitation, read_sites
    (tmp_path / "sites.toml").write_text(SITES)
    cat = read_sites(tmp_path / "sites.toml")
    head = "site,start,end,gauge_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],NH4 [umol/L],flags\n"
    weeks = "".join(f"beta,2021-06-{1 + 7 * k:02d}T00:00,2021-06-{8 + 7 * k:02d}T00:00,"
                    "10,4.5,10,11.6,10,\n" for k in range(3))
    last = "beta,2021-06-22T00:00,2021-06-29T00:00,{},,,,,{}\n"
    (tmp_path / "p.csv").write_text(head + weeks + last.format(cell, "trace"))
    with pytest.raises(InputError) as err:
        read_precipitation(tmp_path / "p.csv", cat)
    assert err.value.line == 5 and err.value.column == "gauge_depth [mm]"
    assert "0 for a trace" in str(err.value) and "leave the cell empty" not in str(err.value)
    per = P.make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-06-29", "4wk")])
    got = {}
    for depth, flag in (("0", "trace"), ("", "")):
        (tmp_path / "p.csv").write_text(head + weeks + last.format(depth, flag))
        samples, _ = read_precipitation(tmp_path / "p.csv", cat)
        w = wet_deposition(screen(samples), per).isel(site=0, period=0)
        got[depth] = (w["gauge_fraction"].item(), w["coverage_fraction"].item())
    assert got == {"0": (1.0, 1.0), "": (0.75, 0.75)}


def test_partial_year_says_how_partial_in_its_reasons():
    # A record that starts on Thu 31 Dec 2020 09:00 UTC (a weekly sample spanning New
    # Year: 15 of its 168 h in 2020) and stops after 26 weeks: 2021 has
    # 26 x 168 - 15 = 4353 h of 8760 with samples, 49.7 %. By the shares of hours
    # (section 4) the year gets 153/168 of the first week's 10 mm.  Such a year must not
    # read like an annual figure: its reasons say how much of the year is behind the
    # number and what is asked (gauge 90 %, coverage 90 %; docs/methods_wet.md 7).
    # Until 2026-12 they read "gauge record below minimum" without either number.
    rows = []
    for k in range(26):
        s = pd.Timestamp("2020-12-31T09:00") + pd.Timedelta(days=7 * k)
        rows.append(dict(start=str(s), end=str(s + pd.Timedelta(days=7)), gauge_depth=10.0,
                         **_bal(20, 20, 10)))
    per = P.make_periods("2020-01-01", "2022-01-01", "year")
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), per).isel(site=0)
    y2020, y2021 = wet.isel(period=0), wet.isel(period=1)
    frac = (26 * 168 - 15) / 8760
    assert y2021["gauge_fraction"].item() == pytest.approx(frac)
    assert y2021["precipitation"].item() == pytest.approx(250.0 + 10 * 153 / 168)
    assert y2020["precipitation"].item() == pytest.approx(10 * 15 / 168)
    assert y2021["status"].item() == "flagged"
    reasons = y2021["completeness_reasons"].item()
    assert "gauge record below minimum (49.7 % of the period; minimum 90 %)" in reasons
    assert "sample coverage below minimum (49.7 % of the period; minimum 90 %)" in reasons
    # 2020 holds 15 h of samples: 0.2 % of its 8784 h
    assert "(0.2 % of the period; minimum 90 %)" in y2020["completeness_reasons"].item()
