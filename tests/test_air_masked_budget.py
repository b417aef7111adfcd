"""A species measured at a site whose every value the air reader masked (a sampler
judged in ng/m3 under a ug/m3 header), through the budget: its rows say it was measured
and masked, with the flag, not "not measured at the site"; its values below detection
('<limit', a limit 1000x too high there) are masked with it, never kept as a detection
limit (docs/data_formats.md section 3, "Plausibility of air concentrations").

The tiny site of tests/test_budget.py (February 2021, four weekly samples, fixed Vd)
with an NH3 column; every expectation follows from the rules (common practice: a
sampler whose values lie above the species' maximum and come back into range at
1/1000 is in the unit 1000x smaller; SI prefixes).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))

HINT = ("NH3 values look 1000x too high at this sampler: ng/m3 written under a ug/m3 "
        "header?")


def _run(tmp_path, nh3):
    """budget.csv of the tiny site with NH3 [ug/m3] column cells `nh3` (as typed) and
    NH3 at a fixed Vd of 1 cm/s; also budget.nc's note variable and the ledger rows."""
    import xarray as xr
    from test_budget import _write

    from workbench.cli import run_scenario
    sc = _write(tmp_path)
    sc.write_text(sc.read_text().replace("SO2 = 0.5", "SO2 = 0.5\nNH3 = 1.0"))
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[1] += ",NH3 [ug/m3]"
    lines[2:] = [ln + f",{x}" for ln, x in zip(lines[2:], nh3)]
    air.write_text("\n".join(lines) + "\n")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    with xr.open_dataset(written["budget.nc"]) as ds:
        nc = ds.load()
    rows = pd.read_csv(written["input_rows.csv"]) if "input_rows.csv" in written else None
    return table, nc, rows


def _nh3(table):
    from test_budget import _get
    return _get(table, "N", "dry", "NH3")


def test_a_sampler_masked_whole_is_measured_and_masked_not_unmeasured(tmp_path):
    """NH3 of a clean site in ng/m3 (1.5, 2.2, 1.8, 1.2 ug/m3 written 1500...): every
    value masked with the hint.  Before, the budget's row said "not measured at the site
    (no valid concentration)", as for a species no one sampled."""
    table, nc, _ = _run(tmp_path, ["1500", "2200", "1800", "1200"])
    row = _nh3(table)
    assert row["status"] == "missing" and np.isnan(row["flux_kg_ha"])
    assert row["note"] == f"measured, every value masked: {HINT}"
    assert "not measured" not in row["note"]
    # budget.nc holds the same note
    notes = {str(x) for x in np.asarray(nc["note"].values).ravel()}
    assert f"measured, every value masked: {HINT}" in notes
    # the other dry species of the site keep their numbers
    from test_budget import _get
    assert _get(table, "S", "dry", "SO2")["status"] == "complete"


def test_a_species_not_sampled_still_reads_not_measured(tmp_path):
    """An NH3 column left empty at the site: nothing was measured, the note says so."""
    table, _, _ = _run(tmp_path, ["", "", "", ""])
    row = _nh3(table)
    assert row["status"] == "missing"
    assert row["note"] == "not measured at the site (no valid concentration)"


def test_a_value_below_detection_at_a_sampler_in_ng_per_m3_is_masked_too(tmp_path):
    """'<300' at the same sampler is 0.3 ug/m3 written in ng/m3: read as a limit of 300
    ug/m3 it entered the budget at half that, 150 ug/m3 of NH3 for a week, 1000x too
    high (before: the NH3 row had a number from that limit alone).  Now it is masked with
    the same flag: the row is missing, measured and masked, with no number."""
    table, nc, _ = _run(tmp_path, ["1500", "<300", "2200", "1200"])
    row = _nh3(table)
    assert row["status"] == "missing" and np.isnan(row["flux_kg_ha"]), row.to_dict()
    assert row["note"] == f"measured, every value masked: {HINT}"
    from test_budget import _get
    tot = _get(table, "N", "total", "all")
    assert "NH3" in str(tot["missing_components"]).split()


def test_the_reader_counts_a_masked_limit_as_masked_not_below_detection(tmp_path):
    """read_air: the '<300' row of the slipped sampler is masked (NaN, not censored, no
    limit) and its ledger reason is the flag, not "below detection"."""
    import json

    from workbench.io.samples import read_air
    from workbench.io.sites import read_sites
    from test_budget import SITES, WEEKS
    (tmp_path / "sites.toml").write_text(SITES)
    rows = ["# reference_state: ambient", "site,start,end,NH3 [ug/m3],SO2 [ug/m3]"]
    for i, x in enumerate(["1500", "<300", "2200", "1200"]):
        rows.append(f"alpha,{WEEKS[i]:%Y-%m-%dT%H:%M},{WEEKS[i + 1]:%Y-%m-%dT%H:%M},{x},2.0")
    (tmp_path / "air.csv").write_text("\n".join(rows) + "\n")
    ds, led = read_air(tmp_path / "air.csv", read_sites(tmp_path / "sites.toml"))
    assert np.isnan(ds["NH3"].values).all()
    assert not ds["NH3_censored"].values.any()
    assert np.isnan(ds["NH3_detection_limit"].values).all()
    r = dict(zip(led.table["line"], zip(led.table["status"], led.table["reason"])))
    assert r[4] == ("flagged", HINT + " (masked)"), r
    assert json.loads(ds.attrs["all_masked"]) == {"NH3": {"alpha": HINT}}


def test_a_limit_at_a_sampler_in_the_header_unit_stays_censored():
    """air_checks: a '<limit' of a sampler not judged in the smaller unit stays as it is
    (one value above the maximum is no slip)."""
    from workbench.io.plausible import air_checks
    v = np.array([0.8, 0.3, 1200.0, 1.1, 0.9])
    cens = np.array([False, True, False, False, False])
    bad, why = air_checks("NH3", v, cens, np.array(["a"] * 5), unit="ug/m3")
    assert bad.tolist() == [False, False, True, False, False]
    assert why[1] == ""


def test_the_site_texts_say_measured_and_masked(tmp_path):
    """The notebooks' NH3 line, the budget figure's hover and legend note and the
    no-effect text read the budget's note: "measured, every value masked", not "not
    measured" nor a bare "no figure"."""
    from workbench.ui.figures import budget_bars_spec
    from workbench.ui.no_effect import component_reason
    from workbench.ui.summaries import nh3_line
    table, nc, _ = _run(tmp_path, ["1500", "2200", "1800", "1200"])
    note = _nh3(table)["note"]
    assert component_reason(note) == "every value masked"
    assert component_reason("not measured at the site (no valid concentration)") == \
        "not measured"
    line = nh3_line(nc, "alpha", str(nc["receptor"].values[0]))
    assert line == (f"Dry NH3: measured at this site, every value masked ({HINT}); the N "
                    "totals leave it out (partial)."), line
    spec = budget_bars_spec(nc, "alpha", str(nc["receptor"].values[0]))
    legend = spec["layout"]["annotations"][0]["text"].replace("<br>", " ")
    assert "measured, every value masked: dry NH3" in legend, legend
    assert "not measured: dry pSO4" in legend          # not in the file: as before
    nh3 = next(t for t in spec["data"] if t["name"] == "dry NH3")
    hover = " ".join(map(str, nh3["customdata"])).replace("<br>", " ")
    assert "measured, every value masked: NH3 values look 1000x" in hover, hover
    # one trace of totals per element's panel: NH3 is in nitrogen's
    totals = [x for t in spec["data"] if t["name"] == "total" for x in t["customdata"]]
    assert any("measured, every value masked: NH3" in str(x).replace("<br>", " ")
               for x in totals), totals
