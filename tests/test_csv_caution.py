"""Every CSV file the command line writes has the caution beside it, and stays plain.

The CSV outputs carried no caution (model-based, uncertain; for regulatory work follow
the methods your authority requires), while report.html and the NetCDF files did.  A
``#`` line in the CSV would break pandas (it becomes the header) and spreadsheets (a
row), so the caution stands in ``CAUTION.txt`` beside the CSV files of a run folder or a
sensitivity folder, and in ``<stem>.CAUTION.txt`` beside a CSV written alone (``workbench
compare --csv``); report.html points to it.  Each CSV is checked to read as it is: its
first line is its header.
"""
from __future__ import annotations

import csv
import json
import sys
from pathlib import Path

import pandas as pd

from workbench.cli import main
from workbench.csvcaution import CAUTION_FILE, sidecar_path
from workbench.report import CAUTION

import test_budget as tb

sys.path.insert(0, str(Path(__file__).parent / "analysis"))


def _plain(csv_path: Path):
    """The CSV reads as it is: its first line is the header pandas takes, no '#' line."""
    first = csv_path.read_text(encoding="utf-8").splitlines()[0]
    assert not first.startswith("#"), csv_path
    frame = pd.read_csv(csv_path)
    assert list(frame.columns) == next(csv.reader([first])), csv_path


def _caution_of(csv_path: Path) -> str:
    """The caution text that covers `csv_path`: the folder's file, or its own sidecar."""
    for p in (csv_path.parent / CAUTION_FILE, sidecar_path(csv_path)):
        if p.is_file():
            return p.read_text(encoding="utf-8")
    raise AssertionError(f"no caution file beside {csv_path}")


def _check_every_csv(folder: Path):
    found = sorted(folder.rglob("*.csv"))
    assert found
    for p in found:
        text = _caution_of(p)
        assert CAUTION in text
        for words in ("model-based and uncertain", "methods your authority requires"):
            assert words in text
        _plain(p)
    return found


def test_run_folder_csvs_have_the_caution_file(tmp_path, capsys):
    (tmp_path / "p").mkdir()
    scen = tb._write(tmp_path / "p")
    out = tmp_path / "run"
    assert main(["run", str(scen), "--out", str(out), "--quiet"]) == 0
    found = {p.name for p in _check_every_csv(out)}
    assert {"budget.csv", "summary.csv", "input_rows.csv"} <= found
    prov = json.loads((out / "provenance.json").read_text())
    assert CAUTION_FILE in prov["outputs"] and CAUTION_FILE in prov["output_sha256"]
    report = (out / "report.html").read_text(encoding="utf-8")
    assert "CAUTION.txt" in report
    assert main(["verify", str(out)]) == 0            # the file is one of the outputs
    capsys.readouterr()

    # compare --csv: a CSV written alone, anywhere, gets its own caution file
    table = tmp_path / "elsewhere" / "changes.csv"
    table.parent.mkdir()
    main(["compare", str(out), str(out), "--csv", str(table)])
    assert "caution: changes.CAUTION.txt" in capsys.readouterr().out
    assert sidecar_path(table).is_file()
    assert "changes.csv" in sidecar_path(table).read_text(encoding="utf-8")
    _check_every_csv(table.parent)

    # a --csv FILE in a folder that does not exist: one line whose advice names --csv
    # (it said "choose another --out", an option compare does not have), nothing written
    missing = tmp_path / "no-such-folder" / "changes.csv"
    assert main(["compare", str(out), str(out), "--csv", str(missing)]) == 2
    err = capsys.readouterr().err
    assert "a folder on the way does not exist: create it or choose another --csv" in err
    assert f"could not write {missing.resolve()}: " in err
    assert "--out" not in err and "Traceback" not in err
    assert not missing.parent.exists()


def test_sensitivity_folder_csvs_have_the_caution_file(tmp_path):
    from tiny_site import make_tiny
    (tmp_path / "mc").mkdir()
    sc, _, _, _ = make_tiny(tmp_path / "mc")
    out = tmp_path / "sens"
    assert main(["sensitivity", str(sc.path), "--out", str(out), "--quiet"]) == 0
    found = {p.name for p in _check_every_csv(out)}
    assert found == {"sensitivity.csv", "tornado.csv"}


def test_demo_folder_csvs_have_the_caution_file(tmp_path):
    out = tmp_path / "demo"
    assert main(["demo", "--out", str(out), "--quiet"]) == 0
    _check_every_csv(out)
