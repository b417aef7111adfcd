"""Plausibility flags: values that cannot be right are masked, every row stays in the
ledger with its reason, and repeats of a row are dropped or refused."""
import numpy as np
import pytest

from workbench.io import read_air, read_met, read_precipitation, read_sites
from workbench.io.plausible import AIR_RANGES, as_ugm3, air_checks, sentinel_mask

from tiny_inputs import AIR, PRECIP, SITES, met_text


@pytest.fixture
def cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _ledger_reasons(led):
    return dict(zip(led.table["line"], zip(led.table["status"], led.table["reason"])))


def test_sentinel_in_precipitation_is_masked_and_flagged(tmp_path, cat):
    """NH4 = 9999 (a missing-value code) is not a concentration: masked, row flagged."""
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace(",25.0,", ",9999,", 1).replace("+00:00,,20.0,", "+00:00,,-999,"))
    ds, led = read_precipitation(p, cat)
    assert np.isnan(ds["NH4"].values[0]) and not ds["NH4_censored"].values[0]
    r = _ledger_reasons(led)
    assert r[2] == ("flagged", "NH4 9999 looks like a missing-value code (masked)")
    assert r[5][0] == "flagged"
    assert "gauge depth -999 looks like a missing-value code (masked)" in r[5][1]
    assert np.isnan(ds["gauge_depth"].values[-1])
    assert led.check_balanced()


def test_sentinel_in_air(tmp_path, cat):
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace(",1.5,1.2,", ",-9999,1.2,"))
    ds, led = read_air(p, cat)
    assert np.isnan(ds["NH3"].values[0])
    assert _ledger_reasons(led)[3] == ("flagged", "NH3 -9999 looks like a missing-value code (masked)")


def test_whole_sampler_in_ng_per_m3(tmp_path, cat):
    """SO2 of one filter pack typed in ng/m3 under a ug/m3 header (2100 ng/m3 = 2.1
    ug/m3): every value of that sampler masked with the unit-slip hint; the other
    sampler is untouched."""
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace("fp1,2.0,", "fp1,2100,").replace("fp1,<0.1,", "fp1,1800,"))
    ds, led = read_air(p, cat)
    assert np.isnan(ds["SO2"].values[:2]).all() and ds["SO2"].values[2] > 0
    r = _ledger_reasons(led)
    hint = ("SO2 values look 1000x too high at this sampler: ng/m3 written under a ug/m3 "
            "header? (masked)")
    assert r[3] == ("flagged", hint) and r[4] == ("flagged", hint)
    assert r[5] == ("accepted", "")


def test_single_value_above_range(tmp_path, cat):
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace("fp1,2.0,0.1,", "fp1,2.0,75,"))
    ds, led = read_air(p, cat)
    assert np.isnan(ds["HNO3"].values[0])
    assert _ledger_reasons(led)[3] == ("flagged", "HNO3 above the plausible 50 ug/m3 (masked)")


def test_negative_beyond_blank_tolerance(tmp_path, cat):
    """-0.3 ug/m3 pSO4 is a blank-subtraction result (censored); -40 is not (masked)."""
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace("1.5,1.2,5.0", "1.5,-0.3,5.0").replace("1.0,1.0,4.0", "1.0,-40,4.0"))
    ds, led = read_air(p, cat)
    assert ds["pSO4_censored"].values[0] and not ds["pSO4_censored"].values[1]
    r = _ledger_reasons(led)
    assert r[3] == ("flagged", "pSO4 negative (censored)")
    assert "pSO4 negative beyond the blank tolerance -0.5 ug/m3 (masked)" in r[4][1]


def test_exact_repeat_dropped_with_ledger_entry(tmp_path, cat):
    """The same row uploaded twice (1.5 and 1.50 are the same value) is used once."""
    p = tmp_path / "p.csv"
    row = PRECIP.splitlines()[1].replace(",1.5,", ",1.50,")
    p.write_text(PRECIP + row + "\n")
    ds, led = read_precipitation(p, cat)
    assert ds.sizes["sample"] == 4
    assert _ledger_reasons(led)[6] == ("rejected", "exact repeat of an earlier line (dropped)")
    assert "p.csv: 1 exact repeat dropped: line 6 repeats line 2" in led.notes
    assert led.check_balanced()


def test_collocated_samplers_stay(tmp_path, cat):
    """Two named samplers over one period at one site are collocated: both kept."""
    p = tmp_path / "a.csv"
    p.write_text(AIR + "beta,2020-01-07T09:00,2020-01-14T09:00,fp3,3.4,0.3,,2.2,,\n")
    ds, led = read_air(p, cat)
    assert sorted(ds["sampler_id"].values[ds["site"].values == "beta"]) == ["fp2", "fp3"]
    assert (led.table["status"] != "rejected").all()


def test_netcdf_all_nan_records_in_ledger(tmp_path, cat):
    """A NetCDF record with every variable NaN is rejected in the ledger, with a reason."""
    (tmp_path / "m.csv").write_text(met_text(n_hours=6))
    met, _ = read_met(tmp_path / "m.csv", cat)
    nc = met.drop_vars("row_present")
    for v in nc.data_vars:
        nc[v][:, 2] = np.nan
    nc.to_netcdf(tmp_path / "m.nc", engine="scipy")
    back, led = read_met(tmp_path / "m.nc", cat)
    assert len(led.table) == 6 and led.check_balanced()
    r = _ledger_reasons(led)
    assert r[3] == ("rejected", "all variables missing (NaN) in the record")
    assert not back["row_present"].values[0, 2] and back["row_present"].values[0, 3]


def test_met_csv_row_without_values_rejected(tmp_path, cat):
    lines = met_text(n_hours=4).splitlines()
    cells = lines[3].split(",")
    lines[3] = ",".join(cells[:2] + [""] * (len(cells) - 2))
    (tmp_path / "m.csv").write_text("\n".join(lines) + "\n")
    _, led = read_met(tmp_path / "m.csv", cat)
    assert _ledger_reasons(led)[4] == ("rejected", "no values in the row")


def test_sentinel_list():
    assert sentinel_mask([-999, -999.0, 9999, 99999, -99, -9999.9, 0.999, 999.5, 1]).tolist() == \
        [True, True, True, True, True, True, False, False, False]


def test_ppb_to_ugm3_reference():
    """1 ppb SO2 at 20 degC and 1013.25 hPa is 2.66 ug/m3: the conversion factor stated
    for that reference condition in air-quality practice (value from memory); the molar
    mass is checked against the molmass package (a general reference library)."""
    from molmass import Formula
    ug = float(as_ugm3(np.array([1e-9]), "mixing_ratio", "SO2")[0])
    assert ug == pytest.approx(2.66, abs=0.01)
    assert ug == pytest.approx(1e-9 * 101325 / (8.314462618 * 293.15) * Formula("SO2").mass * 1e6,
                               rel=1e-4)


def test_every_range_has_a_source():
    for sp, (hi, tol, src) in AIR_RANGES.items():
        assert hi > 0 and tol > 0 and len(src) > 10, sp


def test_slip_needs_the_whole_sampler():
    """One high value among normal ones is 'above the plausible', not a unit slip."""
    v = np.array([2.0, 3.0, 900.0, 2.5])
    bad, why = air_checks("SO2", v, np.zeros(4, bool), np.array(["a"] * 4))
    assert bad.tolist() == [False, False, True, False]
    assert why[2] == "SO2 above the plausible 500 ug/m3 (masked)"


def test_docs_carry_the_ranges_table():
    """docs/data_formats.md shows the ranges the code uses, with their sources."""
    from pathlib import Path
    from workbench.io.plausible import ranges_table
    doc = (Path(__file__).resolve().parents[2] / "docs" / "data_formats.md").read_text()
    assert ranges_table() in doc


@pytest.mark.parametrize("old, new, hint", [
    ("SO2 [ug/m3]", "SO2 [mg/m3]", "SO2 values look 1000x too high at this sampler: ug/m3 "
     "written under a mg/m3 header? (masked)"),
    ("NO2 [ppb]", "NO2 [ppm]", "NO2 values look 1000x too high at this sampler: ppb "
     "written under a ppm header? (masked)"),
])
def test_unit_slip_hint_names_the_header_unit(tmp_path, cat, old, new, hint):
    """ug/m3 values under a mg/m3 header, ppb values under a ppm header: the hint names
    the unit 1000x smaller than the header's (before, it said "mg/m3 read as ug/m3",
    the wrong way round: such values would be 1000x too low)."""
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace(old, new))
    ds, led = read_air(p, cat)
    sp = new.split(" ")[0]
    assert np.isnan(ds[sp].values[:2]).all()
    reasons = {x for _, r in _ledger_reasons(led).values() for x in r.split("; ")}
    assert {x for x in reasons if "too high" in x} == {hint}


def test_a_slipped_sampler_loses_its_values_below_the_maximum_too(tmp_path, cat):
    """SO2 of one filter pack in ng/m3 under a ug/m3 header: 2100 and 1800 lie above
    the 500 ug/m3 maximum, 300 (0.3 ug/m3) below it.  The sampler is judged in ng/m3 as
    a whole, so the 300 is 1000x too high as well; before, it stayed in the data as
    300 ug/m3 of SO2 without a flag, a silently plausible-looking number."""
    p = tmp_path / "a.csv"
    p.write_text(AIR.replace("fp1,2.0,", "fp1,2100,").replace("fp1,<0.1,", "fp1,1800,")
                 + "alpha,2020-01-21T09:00,2020-01-28T09:00,fp1,300,0.2,1.0,1.0,4.0,filter pack\n")
    ds, led = read_air(p, cat)
    so2 = dict(zip(ds["line"].values.tolist(), ds["SO2"].values.tolist()))
    assert np.isnan([so2[3], so2[4], so2[6]]).all() and so2[5] > 0, so2
    hint = ("SO2 values look 1000x too high at this sampler: ng/m3 written under a ug/m3 "
            "header? (masked)")
    r = _ledger_reasons(led)
    assert r[3] == r[4] == r[6] == ("flagged", hint), r
    assert r[5] == ("accepted", "")


def test_slip_masks_every_value_of_the_sampler_alone():
    """air_checks: at a sampler judged in the smaller unit every positive value is
    masked with the hint (one 2.5 ng/m3 too); another sampler's values stay."""
    v = np.array([2100.0, 1800.0, 2.5, 2.0, 3.0])
    groups = np.array(["a", "a", "a", "b", "b"])
    bad, why = air_checks("SO2", v, np.zeros(5, bool), groups, unit="ug/m3")
    assert bad.tolist() == [True, True, True, False, False]
    assert why[2] == why[0] and "look 1000x too high" in why[2]


def test_nh3_of_a_clean_site_in_ng_per_m3_is_a_slip_though_most_values_stay_in_range():
    """NH3 of a grassland in ng/m3 under a ug/m3 header (0.2-3 ug/m3 read as 200-3000):
    with the wide NH3 maximum (1000 ug/m3) only a third lie above it, so "more than half
    above" missed the slip; those were masked as "above the plausible", the other two
    thirds read 1000x too high without a flag.  Now a quarter or more above the maximum,
    every one of them back in range at 1/1000, masks the whole sampler with the hint."""
    rng = np.random.default_rng(3)
    v = np.exp(rng.normal(np.log(800.0), 0.6, 40))       # ng/m3 of a clean site
    assert 0.25 <= (v > 1000).mean() <= 0.5
    groups = np.array(["fell"] * 40 + ["ridge"] * 4)
    v = np.r_[v, [1.1, 0.9, 1.4, 1.2]]
    bad, why = air_checks("NH3", v, np.zeros(44, bool), groups, unit="ug/m3")
    assert bad[:40].all() and not bad[40:].any()
    assert set(why[:40]) == {"NH3 values look 1000x too high at this sampler: ng/m3 "
                             "written under a ug/m3 header? or a sampler in a source's "
                             "plume? then write source_plume = [\"NH3\"] for its site in "
                             "sites.toml (masked)"}


@pytest.mark.parametrize("high", [
    [1200.0] * 7 + [900.0] * 13,              # 7 above: under the floor of 8 values
    [1200.0] * 8 + [900.0] * 30,              # 8 of 38 above: under a quarter
    [1200.0] * 9 + [2.0e6] + [900.0] * 20,    # one far too high even at 1/1000
])
def test_a_few_high_weeks_of_a_livestock_site_stay_above_the_plausible(high):
    """NH3 beside housing, some hundreds of ug/m3 with some weeks above the maximum:
    those are masked as above the plausible, the rest kept (no unit slip)."""
    v = np.array(high)
    bad, why = air_checks("NH3", v, np.zeros(len(v), bool), np.array(["farm"] * len(v)))
    assert bad.tolist() == (v > 1000).tolist()
    assert "look 1000x" not in " ".join(why)


def _lognormal_weeks(median, sigma, n):
    """`n` weekly values [ug/m3] at the quantiles (i + 0.5)/n of a log-normal of this
    median and log sd (scipy.stats.norm.ppf): a year without sampling noise."""
    from scipy.stats import norm
    return median * np.exp(sigma * norm.ppf((np.arange(n) + 0.5) / n))


def test_a_sampler_beside_livestock_housing_with_a_quarter_above_stays_in_ug():
    """NH3 beside livestock housing: weekly median 400 ug/m3, log sd 1.5 (the plume in
    some weeks, the area's level in others), 52 weeks: 27 % above the 1000 ug/m3
    maximum, every one back in range at 1/1000.  Before, the quarter rule masked the
    whole year as ng/m3; its low weeks (5th percentile 34 ug/m3) show a real site: only
    the values above the maximum are masked, as above the plausible."""
    v = _lognormal_weeks(400.0, 1.5, 52)
    assert 0.25 <= (v > 1000).mean() < 0.5 and np.quantile(v, 0.05) < 100
    bad, why = air_checks("NH3", v, np.zeros(52, bool), np.array(["farm"] * 52),
                          unit="ug/m3")
    assert bad.tolist() == (v > 1000).tolist()
    assert "look 1000x" not in " ".join(why)


def test_a_clean_site_in_ng_per_m3_keeps_its_flag_with_the_low_value_floor():
    """The same share above the maximum from a clean site in ng/m3 (median 0.8 ug/m3,
    log sd 0.6, the demo's spread): its lowest weeks stay above 100 as read, so the
    sampler is masked whole with the hint."""
    v = _lognormal_weeks(0.8, 0.6, 52) * 1000.0
    assert 0.25 <= (v > 1000).mean() < 0.5 and np.quantile(v, 0.05) >= 100
    bad, why = air_checks("NH3", v, np.zeros(52, bool), np.array(["fell"] * 52),
                          unit="ug/m3")
    assert bad.all() and all("look 1000x too high" in w for w in why)
