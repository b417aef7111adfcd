"""input_rows.csv and the notes in provenance.json: every input row of a run accounted
for in the run folder itself (report.html shows the same counts)."""
import json
from pathlib import Path

import pandas as pd

from workbench.cli import main

import test_budget as tb


def _data_lines(path: Path) -> int:
    lines = [ln for ln in path.read_text().splitlines() if ln and not ln.startswith("#")]
    return len(lines) - 1                                   # the header


def test_run_folder_counts_every_input_row(tmp_path):
    scen = tb._write(tmp_path)
    precip = scen.parent / "precip.csv"
    lines = precip.read_text().splitlines()
    precip.write_text("\n".join(lines + [lines[-1]]) + "\n")   # a duplicated upload of a row
    out = tmp_path / "run"
    assert main(["run", str(scen), "--out", str(out), "--quiet"]) == 0
    rows = pd.read_csv(out / "input_rows.csv", keep_default_na=False)
    assert list(rows.columns) == ["file", "status", "reason", "rows"]
    totals = rows[rows["reason"] == ""].groupby("file")["rows"].sum()
    assert len(totals) == 3                                   # precipitation, air, met
    for name, n in totals.items():                           # read = every data line
        assert n == _data_lines(Path(name)), name
    rej = rows[rows["file"].str.endswith("precip.csv") & (rows["status"] == "rejected")]
    assert rej["rows"].tolist() == [1, 1]                     # the total, then its reason
    assert rej["reason"].iloc[1].startswith("exact repeat of line")
    prov = json.loads((out / "provenance.json").read_text())
    assert "input_rows.csv" in prov["outputs"]
    assert isinstance(prov["input_notes"], list) and isinstance(prov["run_notes"], list)
