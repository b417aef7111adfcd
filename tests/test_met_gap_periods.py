"""A met variable without values for part of the record names itself in the budget row
of each period it leaves filled, partial or missing (docs/budget.md, "Met gaps per
period").

Before, the reason named the met variable only where it had no value in the WHOLE
record; a wind sensor dead for six weeks left the year's dry rows ``filled`` with an
empty note, and a month without any wind speed ``filled`` with no word of why.  The
invented network of benchmarks/analyst_network.py (2 sites x 1 year, no planted
imperfection) gets six weeks of blank wind speed at v02: 2016-03-01T01:00 to
2016-04-12T00:00 in the met's labels, 42 days x 24 h = 1,008 h; March (UTC) holds
744 of them, April 263 and February 1 (the labels are hour ends in UTC+1: the
label 2016-03-01T01:00 is the hour ending 00:00 UTC, the last of February).
"""
import gzip

import numpy as np
import pandas as pd
import pytest

from workbench.cli import run_scenario
from tiny_inputs import make_analyst_network

WIND_GAP = ("2016-03-01T01:00", "2016-04-12T00:00")      # inclusive labels, 1,008 rows
#: Eight weeks without wind speed (56 d x 24 h = 1,344 rows) at v01 of a two-year record:
#: the diurnal fill draws on the other year's spring, so the Vd of 15.6 % of 2016's hours
#: behind the flux is filled and the year's dry rows, and its S and N totals, read
#: ``filled``.
FILL_GAP = ("2016-03-01T01:00", "2016-04-26T00:00")


def _blank_wind(path, site, lo, hi):
    with gzip.open(path, "rt", encoding="utf-8") as f:
        lines = f.readlines()
    header = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    col = lines[header].rstrip("\n").split(",").index("wind_speed [m/s]")
    n = 0
    for i in range(header + 1, len(lines)):
        cells = lines[i].rstrip("\n").split(",")
        if cells[0] == site and lo <= cells[1] <= hi:
            cells[col] = ""
            lines[i] = ",".join(cells) + "\n"
            n += 1
    with gzip.open(path, "wt", encoding="utf-8", compresslevel=1) as f:
        f.writelines(lines)
    return n


def _blank_nh3(path, site, month):
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    header = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    col = lines[header].rstrip("\n").split(",").index("NH3 [ug/m3]")
    n = 0
    for i in range(header + 1, len(lines)):
        cells = lines[i].rstrip("\n").split(",")
        if cells[0] == site and cells[1].startswith(month):
            cells[col] = ""
            lines[i] = ",".join(cells) + "\n"
            n += 1
    path.write_text("".join(lines), encoding="utf-8")
    return n


def make_filled_year(folder):
    """The invented network (1 site, 2016-2017) with :data:`FILL_GAP` planted at v01:
    a yearly S and N total of 2016 that is ``filled``; returns the scenario path."""
    scen = make_analyst_network(folder, n_sites=1, years=2, imperfections={})
    assert _blank_wind(scen.parent / "met.csv.gz", "v01", *FILL_GAP) == 1344
    return scen


@pytest.fixture(scope="module")
def scenario(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("metgap")
    scen = make_analyst_network(tmp / "in", n_sites=2, years=1, imperfections={})
    assert _blank_wind(scen.parent / "met.csv.gz", "v02", *WIND_GAP) == 1008
    # the other direction: the met whole, the filter pack of v01 running, its NH3 blank
    # in the five weekly samples starting in June (2016-06-02 to 2016-07-07 local)
    assert _blank_nh3(scen.parent / "air.csv", "v01", "2016-06") == 5
    return scen


_TABLES = {}          # the budget table of each resolution, run once per module


def _dry(scenario, tmp_path_factory, resolution, species="SO2"):
    if resolution not in _TABLES:
        out = tmp_path_factory.mktemp(f"metgap_{resolution}") / "out"
        _, result, _ = run_scenario(scenario, out, quiet=True, resolution=resolution)
        _TABLES[resolution] = result.table
    t = _TABLES[resolution]
    return t[(t["pathway"] == "dry") & (t["species"] == species)].groupby(
        ["site", "period"]).first()


def test_a_year_scaled_up_over_a_dead_wind_sensor_names_it(scenario, tmp_path_factory):
    """One year of record: the diurnal fill has no other March to draw on, so the
    samples inside the gap have no Vd and no flux; the year's flux is scaled up from
    90.6 % of its hours (98.2 % sampled) and passes (min_air_coverage 0.75) as
    ``complete``, with an empty note before."""
    dry = _dry(scenario, tmp_path_factory, "year")
    row = dry.loc[("v02", "2016")]
    assert row["status"] == "complete"
    assert row["flux_coverage"] == pytest.approx(0.9055, abs=1e-4)
    assert row["note"] == (
        "flux known for part of the sampled hours only (90.6 % of the period with a flux, "
        "98.2 % sampled; Vd or air density missing in the others); met gaps in the period "
        "(of its 8784 h): wind speed without a value in 1008 h")
    # the site without the gap: complete, nothing said of its met
    full = dry.loc[("v01", "2016")]
    assert full["status"] == "complete" and "met gaps" not in str(full["note"])
    assert "flux known" not in str(full["note"])


def test_each_month_names_its_own_hours_without_wind(scenario, tmp_path_factory):
    """March: no wind speed in any of its 744 h, a flux only in the sample that reaches
    into February (9.7 % of the month): flagged; April: 263 h, the samples' mean Vd
    standing in for 36.5 % of the hours behind the flux: filled.  Before, March said
    "flux known for part of the sampled hours only (Vd or air density missing in the
    others)" and April nothing."""
    dry = _dry(scenario, tmp_path_factory, "month")
    v02 = dry.xs("v02")
    notes = v02["note"].fillna("")
    assert v02["status"]["2016-03"] == "flagged"
    assert notes["2016-03"].endswith("met gaps in the period (of its 744 h): wind speed "
                                     "without a value in 744 h")
    assert v02["status"]["2016-04"] == "filled"
    assert notes["2016-04"] == (
        "deposition velocity not modelled in 36.5 % of the hours behind the flux (filled "
        "from the diurnal cycle or the sample mean; more than 10 %); met gaps in the "
        "period (of its 720 h): wind speed without a value in 263 h")
    # February's one hour leaves it complete: no note; May has no gap
    assert notes["2016-02"] == "" and notes["2016-05"] == ""
    assert not dry.xs("v01")["note"].fillna("").str.contains("met gaps").any()


def test_check_names_the_species_blank_while_its_sampler_ran(scenario, capsys):
    """The filter pack ran (its rows hold SO2, HNO3...), its NH3 was blank for five
    weeks: no gap of the sampler, so ``workbench check`` said nothing before; the NH3
    rows of the budget said only "5 weeks without a usable air sample"."""
    from workbench.cli import main
    assert main(["check", str(scenario)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert ("air v01-F1: NH3 without a value in 5 weeks of its samples (1 gap; longest 5 "
            "weeks from 2016-06-02T14:00 to 2016-07-07T14:00 UTC)") in out
    assert "v01-F1: SO2" not in out and "v02-F1: NH3" not in out
    # and the wind gap of v02 is dated (it was a count of hours with a value alone)
    assert ("wind speed has a value in 7776 (none for 1008 h from 2016-03-01T00:00 UTC)"
            in out), out


def test_budget_row_names_the_sampler_and_dates_of_a_blank_species(scenario,
                                                                   tmp_path_factory):
    """The NH3 rows of v01 said "5.9 weeks without a usable air sample (...)" (the year:
    the five blank weeks and the network's own changeovers) with no word of which
    sampler or when: the input notes held both.  Now each row whose period the stretch overlaps names them; the other
    species of the filter pack and the site without the gap say nothing of it."""
    gap = ("NH3 blank in the samples of v01-F1 from 2016-06-02T14:00 to "
           "2016-07-07T14:00 UTC")
    year = _dry(scenario, tmp_path_factory, "year", "NH3").loc[("v01", "2016")]
    assert year["status"] != "missing"
    assert year["note"] == ("5.9 weeks without a usable air sample (air coverage 88.6 % "
                            "of the period); " + gap)
    month = _dry(scenario, tmp_path_factory, "month", "NH3").xs("v01")["note"].fillna("")
    assert month["2016-06"].endswith(gap) and month["2016-07"].endswith(gap)
    assert not month.drop(["2016-06", "2016-07", "span"]).str.contains("blank in").any()
    assert not _dry(scenario, tmp_path_factory, "year", "SO2")["note"].fillna(
        "").str.contains("blank in").any()
    assert "blank in" not in str(_dry(scenario, tmp_path_factory, "year", "NH3").loc[
        ("v02", "2016"), "note"])


def test_species_gap_rule_on_hand_made_samples():
    """A species blank inside the sampler's record is said; blank where the sampler has
    no row (a gap of the sampler), or where another sampler of the site has it, or in a
    sampler that never measures it, is not."""
    import xarray as xr
    from workbench.io.samplegaps import species_gap_notes
    w = np.timedelta64(7, "D")
    t0 = np.datetime64("2020-01-02T14:00", "ns")
    st = t0 + w * np.array([0, 1, 2, 3, 4, 5, 6, 8, 9, 0, 1, 2, 3])    # S1: no row week 7
    site = np.array(["a"] * 9 + ["b"] * 4)
    smp = np.array(["S1"] * 9 + ["S2"] * 4)
    nh3 = np.array([1, 1, np.nan, np.nan, 1, 1, 1, 1, 1, 1, np.nan, 1, 1], float)
    so2 = np.where(smp == "S2", np.nan, 1.0)
    ds = xr.Dataset({"site": ("period", site), "start": ("period", st),
                     "end": ("period", st + w), "sampler_id": ("period", smp),
                     "NH3": ("period", nh3, {"quantity": "amount_density"}),
                     "SO2": ("period", so2, {"quantity": "amount_density"})})
    notes = species_gap_notes(ds)
    assert notes == ["air S1: NH3 without a value in 2 weeks of its samples (1 gap; longest "
                     "2 weeks from 2020-01-16T14:00 to 2020-01-30T14:00 UTC)",
                     "air S2: NH3 without a value in 1 week of its samples (1 gap; longest "
                     "1 week from 2020-01-09T14:00 to 2020-01-16T14:00 UTC)"]
    # another sampler of site a with NH3 in those weeks: no gap of the species there
    extra = xr.Dataset({"site": ("period", ["a", "a"]),
                        "start": ("period", st[2:4]), "end": ("period", st[2:4] + w),
                        "sampler_id": ("period", ["P1", "P1"]),
                        "NH3": ("period", [1.0, 1.0], {"quantity": "amount_density"}),
                        "SO2": ("period", [np.nan, np.nan], {"quantity": "amount_density"})})
    both = xr.concat([ds, extra], dim="period")
    assert [n for n in species_gap_notes(both) if n.startswith("air S1")] == []


def test_dry_status_names_the_period_gaps():
    """The rule on arrays: a filled component says its filled share and the period's
    gaps; one without any Vd in the period names them in place of "check the met
    record"; one flagged for its air coverage adds them; a complete one says nothing."""
    from workbench.budget_options import BudgetOptions
    from workbench.budgetstatus_dry import dry_status
    gaps = "met gaps in the period (of its 744 h): wind speed without a value in 744 h"
    yes = np.ones(4, bool)
    cov = np.array([1.0, 1.0, 0.5, 1.0])
    vd = np.array([0.2, 0.0, 1.0, 1.0])
    filled = np.array([0.8, 0.0, 0.0, 0.0])
    fc = np.array([1.0, 0.0, 0.5, 1.0])
    st, _, note = dry_status(cov, vd, filled, fc, yes, yes, False, BudgetOptions(),
                             met_gaps=np.array([gaps, gaps, gaps, ""], object))
    assert st.tolist() == ["filled", "missing", "flagged", "complete"]
    assert note[0] == ("deposition velocity not modelled in 80.0 % of the hours behind the "
                       "flux (filled from the diurnal cycle or the sample mean; more than "
                       "10 %); " + gaps)
    assert note[1] == "no deposition velocity for any hour of the period: " + gaps
    assert note[2].endswith(gaps)
    assert note[3] == ""
    # a complete component with a week or more of met gaps in its period says them (as
    # the notes of sampling gaps), one with less does not
    week = "met gaps in the period (of its 8760 h): no met row in 168 h"
    st, _, note = dry_status(np.ones(2), np.full(2, 0.98), np.full(2, 0.02), np.ones(2),
                             np.ones(2, bool), np.ones(2, bool), False, BudgetOptions(),
                             met_gaps=np.array([week, week], object),
                             met_gap_h=np.array([168, 167]))
    assert st.tolist() == ["complete", "complete"]
    assert note.tolist() == [week, ""]


def test_gap_hours_per_period_by_hand():
    """Runs of hours against period bounds: the overlap, and the hours of a period off
    the met's time axis counted as without a row."""
    from workbench.drymetgaps import met_gap_hours, met_gap_words
    from workbench.io.metgaps import gap_runs
    import xarray as xr
    t = pd.date_range("2020-01-01T01:00", periods=48, freq="h").values
    wind = np.ones((1, 48))
    wind[0, 10:30] = np.nan                   # 20 h: 14 on day one, 6 on day two
    rows = np.ones((1, 48), bool)
    rows[0, 40:44] = False                    # 4 h without a row on day two
    met = xr.Dataset({"row_present": (("site", "time"), rows),
                      "wind_speed": (("site", "time"), wind),
                      "temperature": (("site", "time"), np.ones((1, 48)))},
                     coords={"site": ["a"], "time": t})
    runs = gap_runs(met, ["a"], ("wind_speed", "temperature"))
    starts = np.array(["2020-01-01", "2020-01-02", "2020-01-03"], "datetime64[ns]")
    ends = np.array(["2020-01-02", "2020-01-03", "2020-01-04"], "datetime64[ns]")
    c = met_gap_hours(runs, t, starts, ends, np.array([24, 24, 24]), 1, 3)
    assert c[0, 0].tolist() == [0, 4, 24]      # no row; day three off the axis
    assert c[0, 1].tolist() == [14, 6, 0]      # wind speed among the hours with a row
    assert c[0, 2].tolist() == [0, 0, 0]
    w = met_gap_words(c, np.array([24, 24, 24]), ("wind_speed", "temperature"))
    assert w[0, 1] == ("met gaps in the period (of its 24 h): no met row in 4 h; wind "
                       "speed without a value in 6 h")


def test_both_rows_of_a_split_pair_name_the_blank_stretch(scenario, tmp_path_factory):
    """``pair_split = "all_particle"``: the pNH4 row holds NH3 + pNH4 at the particle Vd,
    its air coverage the weaker member's, so the month of NH3 blank in v01's filter
    pack drives its number; its note said "5.9 weeks without a usable air sample" with
    no sampler nor dates (they were on the NH3 row only, which the split sets to 0).
    Now both rows of the pair name the stretch; the site without it names none."""
    gap = ("NH3 blank in the samples of v01-F1 from 2016-06-02T14:00 to "
           "2016-07-07T14:00 UTC")
    split = scenario.parent / "scenario_all_particle.toml"
    split.write_text(scenario.read_text(encoding="utf-8").replace(
        "[budget]\n", '[budget]\npair_split = "all_particle"\n'), encoding="utf-8")
    assert 'pair_split = "all_particle"' in split.read_text(encoding="utf-8")
    _, result, _ = run_scenario(split, tmp_path_factory.mktemp("split") / "out",
                                quiet=True, resolution="year")
    t = result.table
    dry = t[(t["pathway"] == "dry") & (t["period"] == "2016")].groupby(
        ["site", "species"]).first()
    into, zero = dry.loc[("v01", "pNH4")], dry.loc[("v01", "NH3")]
    assert into["status"] != "missing" and zero["flux_kg_ha_yr"] == 0.0
    assert into["air_coverage"] == pytest.approx(0.886, abs=1e-3)    # NH3's, the weaker
    assert "5.9 weeks without a usable air sample" in into["note"]
    assert gap in into["note"] and gap in zero["note"]
    assert "blank in" not in str(dry.loc[("v02", "pNH4"), "note"])
    assert "blank in" not in str(dry.loc[("v02", "NH3"), "note"])


def test_console_names_the_filled_years(tmp_path_factory):
    """``workbench run`` counted "3 filled" for the S and N totals of 2016 (its Vd filled
    over eight weeks without wind speed) and named no site nor year; it now names them,
    within 79 columns (tests/test_console_width.py)."""
    import contextlib
    import io
    from workbench.cli import main
    from test_console_width import _too_wide
    tmp = tmp_path_factory.mktemp("filledrun")
    scen = make_filled_year(tmp / "in")
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["run", str(scen), "--out", str(tmp / "out"), "--quiet"]) == 0
    text = out.getvalue()
    said = " ".join(text.split())
    assert ("S: 3 complete, 3 filled (v01 2016 in 3 receptors); N: 3 complete, 3 filled "
            "(v01 2016 in 3 receptors)") in said, text
    assert _too_wide(text) == []


def test_a_component_failing_air_coverage_and_flux_hours_names_both(tmp_path_factory):
    """v01 of a one-year record without its air samples of January to March (air
    coverage 73.3 %, minimum 75 %) and without wind speed for 40 days of summer (no
    other summer to fill the Vd from: a flux in 67.6 % of the year).  Before, the dry
    rows' completeness_failure named the air coverage alone, and so did the totals,
    the console and the span row; the lower share of hours with a flux was in the note
    in other words only ("flux known for part of the sampled hours only")."""
    from workbench.cli_status import failing_lines
    tmp = tmp_path_factory.mktemp("bothfail")
    scen = make_analyst_network(tmp / "in", n_sites=1, years=1, imperfections={})
    air = scen.parent / "air.csv"
    lines = air.read_text(encoding="utf-8").splitlines(keepends=True)
    kept = [ln for ln in lines if ln.startswith("#") or not (
        ln.startswith("v01,") and ln.split(",")[1][:7] in ("2016-01", "2016-02", "2016-03"))]
    assert len(lines) - len(kept) == 13
    air.write_text("".join(kept), encoding="utf-8")
    assert _blank_wind(scen.parent / "met.csv.gz", "v01", "2016-07-01T01:00",
                       "2016-08-10T00:00") == 960
    _, result, _ = run_scenario(scen, tmp / "out", quiet=True, resolution="year")
    t = result.table
    both = ("air coverage below minimum (73.3 % of the period; minimum 75 %), hours with "
            "a known flux below minimum (67.6 % of the period; minimum 75 %)")
    so2 = t[(t["species"] == "SO2") & (t["period"] == "2016")].iloc[0]
    assert so2["air_coverage"] == pytest.approx(0.7334, abs=1e-4)
    assert so2["flux_coverage"] == pytest.approx(0.6760, abs=1e-4)
    assert not so2["passes"] and so2["completeness_failure"] == both
    total = t[(t["pathway"] == "total") & (t["element"] == "S") & (t["period"] == "2016")]
    assert (total["completeness_failure"] == "SO2 pSO4: " + both).all()
    said = failing_lines(t)
    assert "  v01 2016: S N: " + both in said, said
    # a flux share equal to the air coverage (no sampled hour without a flux) is the
    # same share: said once
    from workbench.budget_options import BudgetOptions
    from workbench.budgetstatus_dry import dry_failure_words
    once = dry_failure_words(np.array([0.7, 0.7]), np.array([0.7, 0.5]),
                             np.array([True, False]), BudgetOptions())
    assert once.tolist() == [
        "air coverage below minimum (70.0 % of the period; minimum 75 %)",
        "air coverage below minimum (70.0 % of the period; minimum 75 %), hours with a "
        "known flux below minimum (50.0 % of the period; minimum 75 %)"]
