"""input_rows.csv and the notes in provenance.json: every input row of a run accounted
for in the run folder itself (report.html shows the same counts)."""
import json
import re
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
    assert list(rows.columns) == ["file", "status", "reason", "rows", "lines"]
    totals = rows[rows["reason"] == ""].groupby("file")["rows"].sum()
    assert len(totals) == 3                                   # precipitation, air, met
    for name, n in totals.items():                           # read = every data line
        assert n == _data_lines(scen.parent / name), name     # named as in [inputs]
    rej = rows[rows["file"].str.endswith("precip.csv") & (rows["status"] == "rejected")]
    assert rej["rows"].tolist() == [1, 1]                     # the total, then its reason
    assert rej["reason"].iloc[1] == "exact repeat of an earlier line (dropped)"
    last = len(lines) + 1                                      # the repeat's line number
    assert rej["lines"].tolist() == ["", f"line {last}"]
    prov = json.loads((out / "provenance.json").read_text())
    assert "input_rows.csv" in prov["outputs"]
    assert isinstance(prov["input_notes"], list) and isinstance(prov["run_notes"], list)
    pair = f"line {last} repeats line {last - 1}"          # which line repeats which
    assert any(n.endswith(f"precip.csv: 1 exact repeat dropped: {pair}")
               for n in prov["input_notes"])
    report = (out / "report.html").read_text()
    assert pair in report and f"line {last}</td>" in report


def _doubled(path: Path) -> tuple[int, int]:
    """Append every data row of a file again; returns (data rows, first repeat's line)."""
    text = path.read_text().splitlines()
    body = [ln for ln in text if ln.strip() and not ln.startswith("#")][1:]   # no header
    head = len(text) - len(body)                      # header and comment lines
    path.write_text("\n".join(text + body) + "\n")
    return len(body), head + len(body) + 1


def test_check_groups_the_repeats_of_a_doubled_upload(tmp_path, capsys):
    """A doubled air file and a doubled precipitation file: one reason line each in
    ``workbench check``, with the count of the repeats and their line numbers; the
    notes say which line repeats which."""
    scen = tb._write(tmp_path)
    n_air, first_air = _doubled(scen.parent / "air.csv")
    n_pr, first_pr = _doubled(scen.parent / "precip.csv")
    assert n_air > 2 and n_pr > 2
    assert main(["check", str(scen), "--quiet"]) == 0
    out = capsys.readouterr().out
    reasons = out.split("reasons:")[1].split("notes:")[0]
    # one entry per reason, wrapped under a hanging indent: its lines joined again
    entries = re.sub(r"\n    (?=\S)", " ", reasons).splitlines()
    repeat = [ln for ln in entries if "exact repeat" in ln]
    assert len(repeat) == 2, repeat                   # one entry per file
    for name, n, first in (("air.csv", n_air, first_air), ("precip.csv", n_pr, first_pr)):
        ln, = [r for r in repeat if name in r]
        assert "exact repeat of an earlier line (dropped)" in ln
        assert f" {n} " in ln and f"lines {first}-{first + n - 1}" in ln
        assert (f"{name}: {n} exact repeats dropped: lines {first}-{first + n - 1} repeat "
                f"lines {first - n}-{first - 1}") in " ".join(out.split())    # unwrapped
    assert "exact repeat of line" not in out


def test_the_dropped_repeats_of_a_doubled_file_have_the_repeat_as_their_reason(
        tmp_path, capsys):
    """The demo's precipitation file pasted after itself: the dropped repeats kept the
    reasons of the lines they repeat, and ``workbench check`` read "55 rows rejected ...
    PO4 below detection", as if detection had been the cause.  Now a repeat's reason is
    the repeat alone (the line it repeats holds the others, flagged); every row is
    counted once."""
    import shutil

    from workbench.cli import DEMO_SCENARIO
    from workbench.io.samples import read_precipitation
    from workbench.io.sites import read_sites
    folder = tmp_path / "demo"
    shutil.copytree(DEMO_SCENARIO.parent, folder)
    n, first = _doubled(folder / "precipitation.csv")
    assert main(["check", str(folder / "scenario.toml"), "--quiet"]) == 0
    out = capsys.readouterr().out
    reasons = out.split("reasons:")[1].split("notes:")[0]
    entries = re.sub(r"\n    (?=\S)", " ", reasons).splitlines()
    rejected = [ln for ln in entries if "precipitation.csv" in ln and " rejected" in ln]
    assert rejected == [f"  precipitation.csv: {n} rows rejected, lines {first}-"
                        f"{first + n - 1}: exact repeat of an earlier line (dropped)"], rejected
    # the lines repeated keep their reasons, flagged (the demo has PO4 below detection)
    assert any("flagged" in ln and "PO4 below detection" in ln for ln in entries)
    # the ledger: each row once, the repeats rejected with the one reason
    cat = read_sites(folder / "sites.toml")
    _, ledger = read_precipitation(folder / "precipitation.csv", cat)
    s = ledger.summary()
    assert int(s["read"].sum()) == 2 * n and int(s["rejected"].sum()) == n
    assert ledger.check_balanced()
    r = ledger.reasons()
    rej = r[r["status"] == "rejected"]
    assert rej["reason"].tolist() == ["exact repeat of an earlier line (dropped)"]
    assert rej["rows"].tolist() == [n]
