"""A total that fails completeness is never shown like a complete one.

A demo copy whose mere site loses its precipitation samples (gauge and chemistry) from
1 July of its last year, 2023: that year's wet components fail the gauge record's
minimum (90 % of the period, `[wet] min_gauge_fraction`), and so do its S and N totals.
Before, summary.csv wrote them `flagged`, the word of a passing total with kept flagged
samples too (ridge 2020 in the demo), with no column saying which; `workbench run`
printed no line for them; report.html marked both `f`; the notebooks' tables and the
site budget's change line said `flagged`.
"""
import contextlib
import io
import re
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

DEMO = Path(__file__).resolve().parents[1] / "demo_data"
CUT = "2023-07-01"


def _copy(dest: Path, cut: bool) -> Path:
    dest.mkdir(parents=True)
    for name in ("scenario.toml", "sites.toml", "air.csv", "met.csv.gz", "precipitation.csv"):
        shutil.copy(DEMO / name, dest / name)
    if cut:
        p = pd.read_csv(dest / "precipitation.csv", dtype=str, keep_default_na=False)
        p[~((p["site"] == "mere") & (p["start"] >= CUT))].to_csv(
            dest / "precipitation.csv", index=False)
    return dest / "scenario.toml"


def _run(scenario: Path, out: Path) -> str:
    from workbench.cli import main
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    return buf.getvalue()


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """The cut demo and the plain demo, each run once: (folder, stdout) of each."""
    root = tmp_path_factory.mktemp("failing")
    cut = _run(_copy(root / "cut", True), root / "cut_run")
    plain = _run(_copy(root / "plain", False), root / "plain_run")
    return (root / "cut_run", cut), (root / "plain_run", plain)


def _gauge_share_by_hand(site: str, year: int) -> float:
    """Share of the year's hours inside a sample with a gauge depth [1] in the cut
    copy: the union of the samples' intervals clipped to the year, hour by hour (the
    gauge record's completeness, the share of the period covered: common practice,
    docs/methods_wet.md section 7)."""
    p = pd.read_csv(DEMO / "precipitation.csv")
    p = p[(p["site"] == site) & p["gauge_depth [mm]"].notna() & (p["start"] < CUT)]
    first, after = pd.Timestamp(f"{year}-01-01"), pd.Timestamp(f"{year + 1}-01-01")
    hours = pd.date_range(first, after, freq="h", inclusive="left")
    covered = np.zeros(len(hours), bool)
    for s, e in zip(pd.to_datetime(p["start"]), pd.to_datetime(p["end"])):
        covered |= (hours >= s) & (hours < e)
    return covered.mean()


def test_summary_says_which_totals_fail_and_why(runs):
    (cut, _), (plain, _) = runs
    s = pd.read_csv(cut / "summary.csv", dtype={"period": str}, keep_default_na=False)
    mere = s[(s["site"] == "mere") & (s["period"] == "2023")]
    assert len(mere) == 2                                   # wetland and water
    share = 100 * _gauge_share_by_hand("mere", 2023)
    assert abs(share - 51.1) < 0.05                         # the cut: half a year and a bit
    for e, species in (("S", "SO4"), ("N", "NO3 NH4")):
        assert (mere[f"{e}_total_passes"].astype(str) == "False").all()
        assert (mere[f"{e}_total_status"] == "flagged").all()     # kept as it was
        why = mere[f"{e}_total_completeness_failure"].unique()
        assert list(why) == [f"{species}: gauge record below minimum ({share:.1f} % of "
                             "the period; minimum 90 %)"], why
        # its annual rate is still written (a column users read), now beside the flag
        assert np.isfinite(mere[f"{e}_total_kg_ha_yr"].astype(float)).all()
    # the wet chain's period says the same (its precipitation_mm is half a year's)
    assert (mere["wet_passes"].astype(str) == "False").all()
    assert set(mere["wet_completeness_failure"]) == {
        f"gauge record below minimum ({share:.1f} % of the period; minimum 90 %)"}
    # the earlier years of mere pass, with no reason
    before = s[(s["site"] == "mere") & (s["period"] != "2023")]
    assert (before["S_total_passes"].astype(str) == "True").all()
    assert (before["S_total_completeness_failure"] == "").all()
    # flagged but passing (kept flagged samples at ridge in 2020): told apart
    ridge = s[(s["site"] == "ridge") & (s["period"] == "2020")]
    assert (ridge["S_total_status"] == "flagged").all()
    assert (ridge["S_total_passes"].astype(str) == "True").all()
    assert (ridge["S_total_completeness_failure"] == "").all()
    assert (ridge["wet_status"] == "flagged").all()
    assert (ridge["wet_passes"].astype(str) == "True").all()
    # budget.csv's total rows carry the same words beside their `passes`
    b = pd.read_csv(cut / "budget.csv", dtype={"period": str}, keep_default_na=False)
    tot = b[(b["site"] == "mere") & (b["period"] == "2023") & (b["pathway"] == "total")
            & (b["species"] == "all")]
    assert (tot["passes"].astype(str) == "False").all()
    assert set(tot["completeness_failure"]) == set(mere["S_total_completeness_failure"]) | set(
        mere["N_total_completeness_failure"])


def test_complete_rows_are_unaffected(runs):
    """Every site but mere, and mere's earlier years, read as in the plain demo; the
    plain demo's totals all pass (none printed as failing)."""
    (cut, _), (plain, plain_out) = runs
    a = pd.read_csv(cut / "summary.csv", dtype={"period": str}, keep_default_na=False)
    b = pd.read_csv(plain / "summary.csv", dtype={"period": str}, keep_default_na=False)
    keep = ~((a["site"] == "mere") & (a["period"] == "2023"))
    pd.testing.assert_frame_equal(a[keep].reset_index(drop=True),
                                  b[keep.to_numpy()].reset_index(drop=True))
    assert (b["S_total_passes"].astype(str) == "True").all()
    assert (b["N_total_passes"].astype(str) == "True").all()
    assert "fail completeness" not in plain_out and "fails completeness" not in plain_out


def test_run_prints_the_failing_site_year(runs):
    (_, out), _ = runs
    lines = out.splitlines()
    head = [i for i, x in enumerate(lines) if "fails completeness" in x]
    assert len(head) == 1 and lines[head[0]].startswith("1 site-year fails completeness")
    # each line wrapped for an 80-column terminal: the block read back as one text
    block = lines[head[0]:]
    block = block[:next((i for i, x in enumerate(block) if i and not x.startswith("  ")),
                        len(block))]
    text = " ".join(" ".join(block).split())
    assert text.endswith(": mere 2023: S N: gauge record below minimum (51.1 % of the "
                         "period; minimum 90 %)")
    assert any(x.startswith("  mere 2023: S N:") for x in block)
    start = next(i for i, x in enumerate(lines) if x.startswith("budgets per site"))
    counts = " ".join(" ".join(lines[start:head[0]]).split())
    assert "(2 failing completeness)" in counts          # of the flagged: mere's 2 surfaces


def test_failing_lines_are_capped():
    """A big network gets a count and a few names, not one line per row."""
    from workbench.cli import failing_lines
    n = 13
    t = pd.DataFrame({"site": [f"s{i:02d}" for i in range(n)], "period": "2023",
                      "species": "all", "pathway": "total", "element": "S",
                      "status": "flagged", "passes": False,
                      "completeness_failure": "SO4: gauge record below minimum (40.0 % of "
                                              "the period; minimum 90 %)"})
    t = pd.concat([t, t.assign(site="ok", passes=True, completeness_failure="")])
    lines = failing_lines(t, shown=8)
    assert lines[0].startswith("13 site-years fail completeness")
    assert len(lines) == 1 + 8 + 1
    assert lines[1] == "  s00 2023: S: gauge record below minimum (40.0 % of the period; minimum 90 %)"
    assert lines[-1] == "  and 5 more, see summary.csv"
    assert failing_lines(t[t["passes"]]) == []


def test_report_marks_a_failing_total_apart(runs):
    (cut, _), _ = runs
    html = (cut / "report.html").read_text()
    failing = re.findall(r"<td>[0-9.,]+ x( p)?</td>", html)
    assert len(failing) == 4                  # mere: 2 surfaces x S and N, in 2023
    assert re.search(r"<td>[0-9.,]+ f</td>", html)          # ridge 2020: flagged, passing
    assert "<b>x</b> fails completeness" in html


def test_notebook_summaries_say_fails_completeness(runs):
    """The tables behind the notebooks (total_rates, mean_totals) and the site budget's
    change line and hover, read from budget.nc of the cut run."""
    from workbench.ui.summaries import mean_totals, total_rates
    from workbench.ui.summaries_change import change_line
    from workbench.ui.figures import budget_bars
    (cut, _), _ = runs
    with xr.open_dataset(cut / "budget.nc") as ds:
        ds = ds.load()
    t = total_rates(ds, "mere", "water")
    t23 = t[(t["period"] == "2023") & (t["pathway"] == "total")]
    assert not t23["passes"].any()
    assert t23["failure"].str.contains("gauge record below minimum").all()
    assert t[(t["period"] == "2022") & (t["pathway"] == "total")]["passes"].all()
    line = change_line(None, mean_totals(ds, "mere", "water", ["2023"]))
    assert "S total" in line and "(fails completeness)" in line
    assert "flagged" not in line
    assert "fails completeness" not in change_line(None, mean_totals(ds, "mere", "water",
                                                                      ["2022"]))
    fig = budget_bars(ds, "mere", "water", ["2022", "2023"])
    # one trace of totals per element's panel
    hover = [x for d in fig.data if d.name == "total" for x in d.customdata]
    assert sum("fails completeness: SO4: gauge record" in h for h in hover) == 1
    assert not any("fails completeness" in h for h in hover if " 2022:" in h)


def test_network_table_writes_the_reason_whole():
    """The notebook's table of totals (a ShownTable marked ``whole_text``) writes the
    reason with its minimum; pandas cut text cells at 50 characters, leaving "fails:
    SO4: gauge record below minimum (51.1 %..." without the minimum."""
    from workbench.ui.shown_table import ShownTable
    why = "fails: SO4: gauge record below minimum (51.1 % of the period; minimum 90 %)"
    t = ShownTable({"S total [kg/ha/yr]": [3.0], "S completeness": [why]})
    assert why not in t._repr_html_()                      # pandas' default cut
    t.attrs["whole_text"] = True
    assert why in t._repr_html_() and why in repr(t)
    assert "3.00" in t._repr_html_()                       # the numbers as before


def test_derived_sums_say_which_fail_and_why(runs):
    """Oxidized N, reduced N and the potential acidity of summary.csv and budget.nc pass
    only where every part they sum passes; where not, the first failing part's reason
    (after the parts failing for it). Before, they had a status (`flagged`) only."""
    (cut, _), (plain, _) = runs
    s = pd.read_csv(cut / "summary.csv", dtype={"period": str}, keep_default_na=False)
    mere = s[(s["site"] == "mere") & (s["period"] == "2023")]
    share = 100 * _gauge_share_by_hand("mere", 2023)
    gauge = f"gauge record below minimum ({share:.1f} % of the period; minimum 90 %)"
    # the parts of each sum in their order (docs/budget.md): the wet ions fail, the dry
    # parts pass (the air record is whole)
    for name, parts in (("oxidized_N", "NO3"), ("reduced_N", "NH4"),
                        ("potential_acidity", "SO4 NO3 NH4")):
        assert (mere[f"{name}_passes"].astype(str) == "False").all(), name
        assert set(mere[f"{name}_completeness_failure"]) == {f"{parts}: {gauge}"}
        assert (mere[f"{name}_status"] == "flagged").all()            # kept as it was
    # flagged but passing (ridge 2020) and every other row: passes, no reason
    rest = s[~((s["site"] == "mere") & (s["period"] == "2023"))]
    ridge = s[(s["site"] == "ridge") & (s["period"] == "2020")]
    assert (ridge["potential_acidity_status"] == "flagged").all()
    for name in ("oxidized_N", "reduced_N", "potential_acidity"):
        assert (rest[f"{name}_passes"].astype(str) == "True").all(), name
        assert (rest[f"{name}_completeness_failure"] == "").all()
    p = pd.read_csv(plain / "summary.csv", keep_default_na=False)
    assert (p["potential_acidity_passes"].astype(str) == "True").all()
    # budget.nc: the same variables, the same words
    recs = list(mere["receptor"])                                  # wetland and water
    with xr.open_dataset(cut / "budget.nc") as ds:
        at = {"site": "mere", "receptor": recs}
        assert ds["oxidized_N_passes"].sel(**at, period="2023").values.tolist() == [0, 0]
        assert ds["oxidized_N_passes"].sel(**at, period="2022").values.tolist() == [1, 1]
        assert set(ds["reduced_N_completeness_failure"].sel(
            **at, period="2023").values.astype(str)) == {f"NH4: {gauge}"}


def test_derived_status_of_parts_by_hand():
    """derived_status on a hand-made table of one site-period: a missing part is named
    missing, not failing; a flagged part that passes (kept flagged samples) keeps the
    sum passing; the first failing part in the order of the sum gives the words."""
    from workbench.budget import derived_status
    rows = {"SO4": ("flagged", True, ""), "SO2": ("complete", True, ""),
            "pSO4": ("complete", True, ""),
            "NO3": ("complete", True, ""), "HNO3": ("flagged", False, "air record short"),
            "pNO3": ("flagged", False, "air record short"), "NO2": ("missing", False, ""),
            "NH4": ("flagged", False, "gauge record short"), "NH3": ("complete", True, ""),
            "pNH4": ("complete", True, "")}
    t = pd.DataFrame([{"site": "a", "receptor": "grass", "period": "2023", "species": sp,
                       "status": st, "passes": ok, "completeness_failure": why}
                      for sp, (st, ok, why) in rows.items()])
    d = derived_status(t).iloc[0]
    assert d["oxidized_N_status"] == "flagged"
    assert d["oxidized_N_missing_components"] == "NO2"
    assert not d["oxidized_N_passes"]
    assert d["oxidized_N_completeness_failure"] == "HNO3 pNO3: air record short"
    assert not d["reduced_N_passes"]
    assert d["reduced_N_completeness_failure"] == "NH4: gauge record short"
    # S parts pass (SO4 flagged but passing): the first failing part is HNO3
    assert d["potential_acidity_completeness_failure"] == "HNO3 pNO3: air record short"
    t2 = t.assign(passes=t["status"] != "missing", completeness_failure="")
    d2 = derived_status(t2).iloc[0]
    assert d2["oxidized_N_passes"] and d2["potential_acidity_passes"]
    assert d2["oxidized_N_completeness_failure"] == ""
    assert d2["oxidized_N_status"] == "flagged"                     # the status as before


def test_network_lines_set_failing_totals_apart():
    """For a network above the size threshold, the closing lines of `workbench run` named
    a total failing completeness "flagged (read with care ...)", beside the lines saying
    it fails completeness; it now has a line of its own."""
    from workbench.cli import site_status_lines
    t = pd.DataFrame({"site": ["s1", "s2", "s3"], "period": "2023", "species": "all",
                      "pathway": "total", "element": "S", "status": "flagged",
                      "passes": [True, False, False], "missing_components": ""})
    lines = site_status_lines(t, min_sites=1)
    care = [x for x in lines if "read with care" in x]
    failing = [x for x in lines if "failing completeness" in x]
    assert care == ["  S flagged, passing completeness (read with care: report.html says "
                    "why): 1 site: s1"]
    assert len(failing) == 1 and failing[0].endswith(": 2 sites: s2, s3")
    assert failing[0].startswith("  S failing completeness")
    # a table without `passes` (an older budget.csv) reads as before
    old = site_status_lines(t.drop(columns="passes"), min_sites=1)
    assert any("flagged" in x and "s1, s2, s3" in x for x in old)
