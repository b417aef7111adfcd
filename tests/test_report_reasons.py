"""The run folder says why input rows were flagged: report.html lists the ledger's reasons
beside its counts (a user of `workbench run` saw 'met.csv 9240 0 9240 0' and a missing dry
deposition with no reason anywhere in the outputs; only `workbench check` printed it)."""
import html
import re

import pandas as pd

from workbench.cli import main

import test_budget as tb


def test_report_lists_reasons_of_flagged_met_rows(tmp_path):
    scenario = tb._write(tmp_path)
    met = pd.read_csv(tmp_path / "met.csv")
    met.loc[5, "temperature [degC]"] = -999.0              # one hour with a missing-value code
    met.loc[9, "wind_speed [m/s]"] = 99.0
    met.to_csv(tmp_path / "met.csv", index=False)
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    text = html.unescape((out / "report.html").read_text(encoding="utf-8"))
    part = text[text.index("<h2>Input rows"):]
    assert "Reasons of the flagged and rejected rows" in part
    assert "temperature -999 degC looks like a missing-value code (masked)" in part
    assert "wind_speed outside 0..75 m/s (masked)" in part


def test_report_without_flags_has_no_reason_table(tmp_path):
    scenario = tb._write(tmp_path)
    # the fixture's Na of 0.0 reads as a non-detect (flagged, docs/data_formats.md): a
    # measured trace of sodium keeps this run free of flags
    precip = scenario.parent / "precip.csv"
    precip.write_text(re.sub(r",0\.0$", ",0.1", precip.read_text(), flags=re.M))
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    text = (out / "report.html").read_text(encoding="utf-8")
    assert "<h2>Input rows" in text and "Reasons of the flagged" not in text
