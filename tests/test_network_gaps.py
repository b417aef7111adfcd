"""Gaps of a network's samplers reach the user: a collector out of service for 14 weeks,
a filter pack for 10 weeks, a met mast for 5 weeks (benchmarks/analyst_network.py, 4
sites x 2 years with the gaps on v02, v03, v04 in 2017).

Nothing is flagged or rejected (the rows are absent), so before these notes the air gap
showed only as an ``air_coverage`` of 0.81 in budget.csv and quality.csv, with status
``complete`` (above ``min_air_coverage`` = 0.75, docs/budget.md), and neither
``workbench check`` nor report.html said it.  The expected fractions are worked by hand:
10 weeks = 1,680 h of 8,760 h in 2017."""
import html
import re

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from workbench.cli import main, run_scenario
from workbench.io.samplegaps import interval_gaps, sampling_gap_notes
from tiny_inputs import make_analyst_network

GAPS = {"precip_gap": 1, "air_gap": 2, "met_gap": 3}


@pytest.fixture(scope="module")
def scenario(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("gaps")
    return make_analyst_network(tmp / "in", n_sites=4, years=2,
                                             imperfections=GAPS)


@pytest.fixture(scope="module")
def run(scenario, tmp_path_factory):
    out = tmp_path_factory.mktemp("gaps_out") / "out"
    written, result, study = run_scenario(scenario, out, quiet=True)
    return result, out


def test_check_names_the_weeks_without_samples(scenario, capsys):
    assert main(["check", str(scenario)]) == 0
    out = capsys.readouterr().out
    notes = " ".join(out.split("\nnotes:\n", 1)[1].split())     # the words, unwrapped
    assert re.search(r"precipitation v02-\w+: 14 weeks without samples \(1 gap; longest 14 "
                     r"weeks from 2017-03-", notes), notes
    assert re.search(r"air v03-\w+: 10 weeks without samples \(1 gap; longest 10 weeks "
                     r"from 2017-0[78]-", notes), notes
    assert "met v04: 840 missing hours in 1 gap;" in notes      # 35 days x 24 h
    assert not re.search(r"(air|precipitation) v01\b", notes)   # no gap, no note


def test_every_met_record_is_a_whole_number_of_years(scenario, run):
    """The run's years are UTC, the invented met is labelled by the END of the hour in
    local standard time (UTC+1): 2016-2017 is the hours ending 2016-01-01T01:00 to
    2018-01-01T00:00 UTC, 8,784 + 8,760 (2016 a leap year; common practice).  The
    generator cut the local labels at local midnight, so every site lacked the last
    2 hours of 2017 (UTC) and had one of 2015; the mast gap of v04 is cut by UTC days
    as well."""
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    met = Study.from_scenario(load_scenario(scenario)).inputs.met
    t = pd.DatetimeIndex(met["time"].values)
    assert (t[0], t[-1], len(t)) == (pd.Timestamp("2016-01-01T01:00"),
                                     pd.Timestamp("2018-01-01T00:00"), 8784 + 8760)
    present = met["row_present"].to_pandas()           # (site, time)
    assert present.loc["v01"].all()
    # the mast of v04 down for 35 whole days: 840 hours, the first ending 01:00 UTC
    gap = t[~present.loc["v04"].to_numpy()]
    assert len(gap) == 840 and gap[0] == pd.Timestamp("2017-01-10T01:00")
    assert gap[-1] == pd.Timestamp("2017-02-14T00:00")
    result, _ = run
    t = result.table
    dry = t[(t["pathway"] == "dry") & (t["species"] == "SO2") & (t["period"] == "2017")]
    # every hour of 2017 with a modelled Vd at the sites without a met gap (1 - 2/8760
    # before)
    assert (dry[dry["site"].isin(["v01", "v02", "v03"])]["vd_coverage"] == 1.0).all()


def test_gaps_lower_the_coverage_and_reach_the_report(run):
    result, out = run
    t = result.table
    dry = t[(t["pathway"] == "dry") & (t["species"] == "SO2") & (t["period"] == "2017")]
    row = dry[dry["site"] == "v03"].iloc[0]
    # 1 - 1680/8760 = 0.8082: counted, and above min_air_coverage 0.75 -> complete
    assert row["air_coverage"] == pytest.approx(1 - 1680 / 8760, abs=2e-4)
    assert row["status"] == "complete"
    met = dry[dry["site"] == "v04"].iloc[0]
    # 840 h filled of 8,760: 9.6 % filled, not more than 10 % (min_vd_coverage 0.9)
    # -> still complete
    ref = dry[dry["site"] == "v01"].iloc[0]["vd_coverage"]
    assert ref - met["vd_coverage"] == pytest.approx(840 / 8760, abs=2e-4)
    assert met["status"] == "complete"
    q = pd.read_csv(out / "quality.csv")
    q = q[(q["site"] == "v03") & (q["period"].astype(str) == "2017")]
    assert q["air_coverage_SO2"].iloc[0] == pytest.approx(1 - 1680 / 8760, abs=2e-4)
    text = html.unescape((out / "report.html").read_text(encoding="utf-8"))
    assert re.search(r"air v03-\w+: 10 weeks without samples", text)
    assert re.search(r"precipitation v02-\w+: 14 weeks without samples", text)
    assert "met v04: 840 missing hours" in text
    # the report's coverage table lists the three gapped site-years, not the full one
    sec = text[text.index("<h2>Sampling coverage</h2>"):]
    sec = sec[:sec.index("<h2>", 5)]
    cells = [re.sub(r"<[^>]+>", "", r).split("\n") for r in re.findall(r"<tr>(.*?)</tr>", sec,
                                                                       flags=re.S)]
    rows = [r for r in ([c.strip() for c in r if c.strip()] for r in cells)
            if r and r[0].startswith("v")]
    assert [r[:2] for r in rows] == [["v02", "2017"], ["v03", "2017"], ["v04", "2017"]], rows
    assert rows[0][2] == "71%"        # 39 of 52 weeks' hours: 0.712 (wet_coverage_fraction)
    assert rows[1][3] == "81%"        # 1 - 1680/8760 (every species: none named)
    # 1 - 840/8760, with the met gap behind it (five weeks: said on the complete rows)
    assert rows[2][4] == "90% (no met row in 840 h)"


def test_budget_rows_note_the_gap_of_their_own_component(run):
    """Each component row of a site-period with a week or more not covered says so in
    its note, whatever its status (docs/budget.md): the 10 weeks of v03's filter pack
    on its air rows only (its wet rows and the other sites' air rows are full), the
    collector's 14 weeks plus one lost sample on v02's wet rows; a row of a full
    period says nothing."""
    result, _ = run
    t = result.table
    t = t[t["period"] == "2017"]
    note = t.set_index(["site", "pathway", "species"])["note"].groupby(level=[0, 1, 2]).first()
    air = "10 weeks without a usable air sample (air coverage 80.8 % of the period)"
    for sp in ("SO2", "HNO3", "NH3"):
        assert note[("v03", "dry", sp)] == air
        assert "without a usable" not in note[("v01", "dry", sp)]
    assert t[(t["site"] == "v03") & (t["species"] == "SO2")]["status"].eq("complete").all()
    assert not note[("v03", "wet", "SO4")]
    # v02: 14 weeks of the gap and the planted lost sample of the demo's copy (15 weeks:
    # 1 - 15 x 168/8760 = 71.2 %, below the 90 % minimum): the failed criterion gives the
    # share once, with its minimum; the gap note said it again ("precipitation: 15 weeks
    # without a usable sample (71.2 % of the period's hours covered)"); it names what is
    # not covered: the sample left out (168/8760 = 1.9 %) and the 14 weeks without any
    # (2352/8760 = 26.8 %)
    v02 = note[("v02", "wet", "SO4")]
    assert ("sample coverage below minimum (71.2 % of the period; minimum 90 %), not "
            "covered: 168 h (1.9 %) of sample 2017-") in v02
    assert v02.endswith(", 2352 h (26.8 %) without any sample")
    assert v02.count("71.2 %") == 1 and "without a usable" not in v02
    # (v01 has the same one week: 1 - 168/8760 = 98.1 %)
    assert note[("v01", "wet", "SO4")] == ("1 week without a usable precipitation sample "
                                           "(sample coverage 98.1 % of the period)")


def test_gap_note_rule():
    from workbench.budgetstatus import sampling_gap_note
    cov = np.array([[1.0, 1 - 167 / 8760, 1 - 168 / 8760, 0.5, np.nan, 0.0, 0.5]])
    st = np.array([["complete"] * 5 + ["missing", "flagged"]], dtype=object)
    note = np.array([[""] * 6 + ["a reason"]], dtype=object)
    out = sampling_gap_note(note, st, cov, np.full(7, 8760.0)[None, :], "air")
    assert out[0, :3].tolist() == ["", "", "1 week without a usable air sample (air coverage "
                                   "98.1 % of the period)"]
    assert out[0, 3].startswith("26.1 weeks") and out[0, 4] == "" and out[0, 5] == ""
    assert out[0, 6].startswith("a reason; 26.1 weeks")


def test_gap_note_not_beside_the_failed_coverage():
    """A note that already gives the coverage as the failed criterion ("sample coverage
    below minimum (65.5 % ...)") gets no gap note: it said the same share twice, in two
    phrasings; a note failing on another criterion still gets it."""
    from workbench.budgetstatus import sampling_gap_note
    from workbench.wet.deposition import COVERAGE_SHORT
    failed = f"{COVERAGE_SHORT} (65.5 % of the period; minimum 90 %)"
    note = np.array([failed, "gauge record below minimum (80.0 % of the period; minimum 90 %)"],
                    dtype=object)
    cov = np.array([0.655, 0.95])
    out = sampling_gap_note(note, np.array(["flagged", "flagged"], dtype=object), cov,
                            np.full(2, 8760.0), "precipitation", stated_by=COVERAGE_SHORT)
    assert out[0] == failed
    assert out[1].endswith("; 2.6 weeks without a usable precipitation sample (sample "
                           "coverage 95.0 % of the period)")


def test_coverage_table_rule():
    from workbench.report_coverage import coverage_gaps
    t = pd.DataFrame({"site": ["a", "a", "b", "b", "a"],
                      "period": ["2017", "2017", "2017", "2017", "span"],
                      "air_coverage": [0.96, 0.94, 0.99, float("nan"), 0.1],
                      "vd_coverage": [1.0, 1.0, 0.951, 1.0, 0.1]})
    g = coverage_gaps(t)
    assert g["site"].tolist() == ["a"] and g["air_coverage"].tolist() == [0.94]


def _ds(starts, days, site="s1", sampler="s1-F1"):
    s = np.array(starts, dtype="datetime64[ns]")
    e = s + np.array([np.timedelta64(int(d * 86400), "s") for d in days])
    n = len(s)
    return xr.Dataset({"site": ("period", [site] * n), "start": ("period", s),
                       "end": ("period", e), "sampler_id": ("period", [sampler] * n)})


def test_gap_rule_on_hand_made_records():
    weekly = [f"2020-01-{d:02d}" for d in (1, 8, 15, 29)]          # the week of the 22nd lost
    notes = sampling_gap_notes(_ds(weekly, [7] * 4), "air")
    assert notes == ["air s1-F1: 1 week without samples (1 gap; longest 1 week from "
                     "2020-01-22 to 2020-01-29 UTC)"]
    # changeovers of an hour are no gap; overlapping samples are merged
    s = np.array(["2020-01-01", "2020-01-08T01", "2020-01-10"], dtype="datetime64[ns]")
    e = np.array(["2020-01-08", "2020-01-15", "2020-01-12"], dtype="datetime64[ns]")
    assert interval_gaps(s, e, np.timedelta64(1, "D")) == []
    assert sampling_gap_notes(_ds(s.astype(str), [7, 7, 2]), "air") == []
