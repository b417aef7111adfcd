"""A collector change followed sample by sample (workbench/surfacehistory.py,
``collector_split``; docs/budget.md, "Bulk collectors").

Each precipitation sample belongs to the collector in force over its dates; a period's
wet deposition is the sum of its samples' contributions, each under its own
collector's rule.  The expected numbers are worked here from the sample rows (the wet
flux of all-valid samples is the sum of concentration x depth: docs/methods_wet.md,
:math:`D_p = \\bar C_p P_p = \\sum_i C_i P_i` when every sample has valid chemistry), or
from runs of the wet chain on each collector's samples alone: never written in.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))

SITE = """\
[[site]]
id = "alpha"
name = "Alpha Test Field"
latitude = 52.0
longitude = 5.0
elevation_m = 20.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
collector = "bulk"

[[site.change]]
date = {date}
what = "collector"
from = "wet_only"
to = "bulk"
"""
# four samples covering June 2021 whole; unequal depths and concentrations so that the
# share of the deposition differs from the share of the hours (invented numbers)
# (ions balanced at pH 5: NH4 + H = 2 SO4 + NO3, so no sample is flagged)
ROWS = [("2021-06-01T00:00", "2021-06-08T00:00", 30.0, 40.0, 20.0, 90.0),
        ("2021-06-08T00:00", "2021-06-15T09:00", 5.0, 10.0, 15.0, 25.0),
        ("2021-06-15T09:00", "2021-06-22T00:00", 12.0, 60.0, 45.0, 155.0),
        ("2021-06-22T00:00", "2021-07-01T00:00", 2.0, 25.0, 10.0, 50.0)]
HEAD = "site,start,end,gauge_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],NH4 [umol/L]\n"
F = 0.8                      # bulk_wet_factor of the checks


def _june(tmp_path, date):
    """(catalogue, screened samples, June 2021 period table) of the invented site."""
    from workbench.io import read_precipitation, read_sites
    from workbench.periods import make_periods
    from workbench.wet import screen
    (tmp_path / "sites.toml").write_text(SITE.format(date=date))
    (tmp_path / "p.csv").write_text(HEAD + "".join(
        f"alpha,{a},{b},{p},5.0,{s},{n},{h}\n" for a, b, p, s, n, h in ROWS))
    cat = read_sites(tmp_path / "sites.toml")
    samples, _ = read_precipitation(tmp_path / "p.csv", cat)
    per = make_periods(None, None, "custom", ranges=[("2021-06-01", "2021-07-01", "June")])
    return cat, screen(samples), per


def _budget(cat, scr, per, correction="scale_wet"):
    from workbench.budget import BudgetOptions, assemble
    from workbench.surfacehistory import collector_history, collector_split
    from workbench.wet import WetOptions, wet_deposition
    wet = wet_deposition(scr, per, WetOptions())
    split = collector_split(scr, per, WetOptions(), None, collector_history(cat),
                            {s.id: s.collector for s in cat})
    b = assemble(wet, None, cat, per, BudgetOptions(bulk_correction=correction,
                                                    bulk_wet_factor=F, sulfate_basis="total"), ["grass"],
                 collector=split)
    return b.sel(site="alpha", receptor="grass").isel(period=0), split


def _by_hand(beta, ion):
    """sum_i (1 - (1 - F) beta_i) C_i P_i [mol m-2]: umol/L = 1e-3 mol m-3, mm = 1e-3 m."""
    col = {"SO4": 3, "NO3": 4, "NH4": 5}[ion]
    return sum((1 - (1 - F) * b) * r[col] * 1e-3 * r[2] * 1e-3 for b, r in zip(beta, ROWS))


@pytest.mark.parametrize("ion", ["SO4", "NO3", "NH4"])
def test_each_sample_under_its_own_collector(tmp_path, ion):
    """The change dated 2021-06-15: the sample ending that day at 09:00 was taken off the
    old (wet-only) collector, the one put on then is bulk.  scale_wet multiplies the
    bulk samples' contributions only: by hand from the rows (rtol 1e-12); not flagged
    (every sample under one collector); the note names both collectors.  The old rule
    (the factor on the share of June's hours after the date, 16/30) gives another
    number: the test can fail."""
    cat, scr, per = _june(tmp_path, "2021-06-15")
    b, _ = _budget(cat, scr, per)
    comp = f"{'S' if ion == 'SO4' else 'N'}/wet/{ion}"
    got = float(b["deposition"].sel(component=comp))
    want = _by_hand([0, 0, 1, 1], ion)
    np.testing.assert_allclose(got, want, rtol=1e-12)
    old = _by_hand([0, 0, 0, 0], ion) * (1 - (1 - F) * 16 / 30)
    assert abs(got - old) > 1e-3 * want
    assert str(b["status"].sel(component=comp).values) == "complete"
    note = str(b["note"].sel(component=comp).values)
    assert "collector wet_only until 2021-06-15, bulk after" in note
    assert "bulk samples' part of the deposition" in note


def test_a_sample_holding_the_change_day_is_split_by_its_hours_and_flagged(tmp_path):
    """The change dated 2021-06-10, inside the second sample (06-08 00:00 to 06-15
    09:00): that sample alone is split at 06-10 00:00 UTC by the wet chain's straddle
    rule (hours: 129 of its 177 under bulk), the others keep their collector; the row
    is flagged (an estimate) and says so."""
    cat, scr, per = _june(tmp_path, "2021-06-10")
    b, split = _budget(cat, scr, per)
    got = float(b["deposition"].sel(component="S/wet/SO4"))
    np.testing.assert_allclose(got, _by_hand([0, 129 / 177, 1, 1], "SO4"), rtol=1e-12)
    assert bool(split["estimated"][0, 0])
    assert str(b["status"].sel(component="S/wet/SO4").values) == "flagged"
    assert "collector wet_only until 2021-06-10, bulk after" in str(
        b["note"].sel(component="S/wet/SO4").values)


def test_sample_collectors_by_the_day_of_the_change():
    """A sample ending on the change day is the old collector's, one starting on it the
    new one's, one holding the whole day is shared (common practice: a collector is
    swapped between two samples)."""
    from workbench.surfacehistory import sample_collectors
    hist = (("a", "bulk", (("2021-06-15", "wet_only", "bulk"),)),)
    s = np.array(["2021-06-08T09", "2021-06-15T09", "2021-06-14T09", "2021-06-15T00",
                  "2021-06-08T09"], "datetime64[ns]")
    e = np.array(["2021-06-15T09", "2021-06-22T09", "2021-06-16T09", "2021-06-15T06",
                  "2021-06-16T00"], "datetime64[ns]")
    beta, both = sample_collectors(np.array(["a"] * 5), s, e, hist, {"a": "bulk"})
    assert both.tolist() == [False, False, True, False, False]
    assert beta[~both].tolist() == [0.0, 1.0, 1.0, 0.0]


def test_exclude_particles_takes_the_hours_the_bulk_samples_ran(tmp_path):
    """exclude_particles: the wet rows are the collectors' own (no factor), and the
    period holding a change at a sample boundary is not flagged for it."""
    cat, scr, per = _june(tmp_path, "2021-06-15")
    b, split = _budget(cat, scr, per, "exclude_particles")
    hours = (np.datetime64("2021-07-01T00:00") - np.datetime64("2021-06-15T09:00")) / \
        np.timedelta64(1, "h")
    np.testing.assert_allclose(split["hour_share"][0, 0], hours / (30 * 24), rtol=1e-12)
    np.testing.assert_allclose(float(b["deposition"].sel(component="S/wet/SO4")),
                               _by_hand([0, 0, 0, 0], "SO4"), rtol=1e-12)
    assert str(b["status"].sel(component="S/wet/SO4").values) == "complete"
    assert "collector wet_only until 2021-06-15, bulk after" in str(
        b["note"].sel(component="S/wet/SO4").values)       # its wet row names both


def test_the_period_is_the_sum_of_the_runs_of_each_collectors_samples(tmp_path):
    """Where it is exact (every sample with valid chemistry): the wet chain run on the
    wet-only samples alone plus F x the run on the bulk samples alone is the period's
    scale_wet deposition (rtol 1e-12), ion by ion."""
    from workbench.wet import WetOptions, wet_deposition
    cat, scr, per = _june(tmp_path, "2021-06-15")
    b, _ = _budget(cat, scr, per)
    a = wet_deposition(scr.isel(sample=[0, 1]), per, WetOptions()).isel(site=0, period=0)
    c = wet_deposition(scr.isel(sample=[2, 3]), per, WetOptions()).isel(site=0, period=0)
    for ion, el in (("SO4", "S"), ("NO3", "N"), ("NH4", "N")):
        want = float(a[f"dep_{ion}"]) + F * float(c[f"dep_{ion}"])
        np.testing.assert_allclose(float(b["deposition"].sel(component=f"{el}/wet/{ion}")),
                                   want, rtol=1e-12)


def test_a_sample_holding_the_change_day_is_split_by_its_met_rain_with_straddle_met(tmp_path):
    """straddle = "met" (2026-12 audit; checked by hand only before): the change dated
    2021-06-10 inside the second sample (06-08 00:00 to 06-15 09:00) splits it by its
    hourly met precipitation, not its hours. Invented met: 3 h of 1 mm ending 06-08
    01:00-03:00 (wet-only collector) and 4 h of 0.5 mm ending 06-12 01:00-04:00 (bulk),
    no rain elsewhere: 2 of its 5 mm fell under bulk, beta = 0.4 (by hours 129/177 =
    0.729). scale_wet (F = 0.8) on the bulk part of each sample, by hand from the rows
    (docs/methods_wet.md section 4: a straddling sample split by the met rain); the
    hours share, which exclude_particles reads, stays 129/177."""
    import pandas as pd
    from wet.wet_samples import make_met

    from workbench.budget import BudgetOptions, assemble
    from workbench.surfacehistory import collector_history, collector_split
    from workbench.wet import WetOptions, wet_deposition
    cat, scr, per = _june(tmp_path, "2021-06-10")
    before = pd.date_range("2021-06-08T01:00", periods=3, freq="h")
    after = pd.date_range("2021-06-12T01:00", periods=4, freq="h")

    def rain(t):
        return np.where(t.isin(before), 1.0, np.where(t.isin(after), 0.5, 0.0))
    met = make_met(["alpha"], "2021-05-31T00:00", "2021-07-02T00:00", precipitation=rain)
    o = WetOptions(straddle="met")
    wet = wet_deposition(scr, per, o, met)
    split = collector_split(scr, per, o, met, collector_history(cat),
                            {s.id: s.collector for s in cat})
    b = assemble(wet, None, cat, per, BudgetOptions(bulk_correction="scale_wet",
                                                    bulk_wet_factor=F, sulfate_basis="total"),
                 ["grass"], collector=split).sel(site="alpha", receptor="grass").isel(period=0)
    beta_met = 2.0 / (3.0 + 2.0)
    for ion, comp in (("SO4", "S/wet/SO4"), ("NO3", "N/wet/NO3"), ("NH4", "N/wet/NH4")):
        got = float(b["deposition"].sel(component=comp))
        np.testing.assert_allclose(got, _by_hand([0, beta_met, 1, 1], ion), rtol=1e-12)
        # by the hours it would be another number: the test tells the rules apart
        assert abs(got - _by_hand([0, 129 / 177, 1, 1], ion)) > 1e-4 * got
    assert bool(split["estimated"][0, 0])
    hours_bulk = (129 + ROWS_H[2] + ROWS_H[3]) / (30 * 24)   # samples 3 and 4 wholly bulk
    np.testing.assert_allclose(split["hour_share"][0, 0], hours_bulk, rtol=1e-12)
    assert str(b["status"].sel(component="S/wet/SO4").values) == "flagged"


#: hours of each sample of ROWS (from their dates, by hand)
ROWS_H = [7 * 24, 7 * 24 + 9, 6 * 24 + 15, 9 * 24]
