"""A run folder handed to a colleague: the same files from another folder, a record
that says what made it (provenance.json, report.html), ``workbench verify`` and
``workbench compare`` (docs/run_folder.md)."""
import html
import json
import re
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.cli import main

import test_budget as tb

#: The minute report.html was written ("written 2026-12-03 19:35 UTC").
WRITTEN = re.compile(r"written \d{4}-\d\d-\d\d \d\d:\d\d UTC")


def _project(folder: Path, extra: str = "") -> Path:
    """The tiny scenario and its inputs in `folder` (a project of analyst A)."""
    folder.mkdir(parents=True)
    scen = tb._write(folder)
    if extra:
        scen.write_text(scen.read_text() + extra)
    return scen


def _run(scen, out, *more) -> Path:
    assert main(["run", str(scen), "--out", str(out), "--quiet", *more]) == 0
    return Path(out)


def _said(capsys) -> str:
    """What a command printed, its line breaks and indents as single spaces: the
    console wraps a long line for an 80-column terminal (``workbench verify`` too), and
    these tests read a line whole."""
    return " ".join(capsys.readouterr().out.split())


@pytest.fixture
def two_places(tmp_path, monkeypatch):
    """The same project run by A in one folder and by B from a copy elsewhere, B
    working in yet another folder."""
    a = _project(tmp_path / "ann" / "study")
    run_a = _run(a, tmp_path / "ann" / "study_runs" / "base")
    copy = tmp_path / "bert" / "home" / "unpacked"
    shutil.copytree(a.parent, copy)
    monkeypatch.chdir(tmp_path / "bert")
    run_b = _run(Path("home/unpacked/scenario.toml"), tmp_path / "bert" / "runs" / "base")
    return tmp_path, run_a, run_b


def test_a_copy_run_elsewhere_writes_the_same_tables_and_report(two_places):
    """Old code: input_rows.csv, report.html and the notes named A's absolute paths, so
    a colleague's rerun differed in them (and report.html in plotly's random ids)."""
    tmp, run_a, run_b = two_places
    for name in ("budget.csv", "summary.csv", "samples.csv", "input_rows.csv"):
        assert (run_a / name).read_bytes() == (run_b / name).read_bytes(), name
    rows = pd.read_csv(run_a / "input_rows.csv")
    assert set(rows["file"]) == {"precip.csv", "air.csv", "met.csv"}   # as in [inputs]
    ra, rb = ((r / "report.html").read_text() for r in (run_a, run_b))
    assert str(tmp) not in ra and str(tmp) not in rb
    assert WRITTEN.sub("", ra) == WRITTEN.sub("", rb)
    assert 'id="figure-1"' in ra                      # numbered figures, not random ids
    for run in (run_a, run_b):
        prov = json.loads((run / "provenance.json").read_text())
        assert prov["inputs"]["air"]["in_scenario_folder"] == "air.csv"
        assert prov["inputs"]["air"]["path"].startswith(str(tmp))   # where it was, too
        assert not any(str(tmp) in n for n in prov["input_notes"] + prov["run_notes"])


def test_provenance_records_the_resolution_the_run_used(tmp_path):
    """Old code: `--resolution` changed the periods, but provenance.json recorded the
    scenario's own resolution, so a colleague rerunning from it got other periods."""
    scen = _project(tmp_path / "p")
    scen.write_text(scen.read_text().replace('resolution = "month"', 'resolution = "year"'))
    run = _run(scen, tmp_path / "run", "--resolution", "month")
    prov = json.loads((run / "provenance.json").read_text())
    periods = pd.read_csv(run / "summary.csv", dtype={"period": str})["period"]
    assert set(periods) == {"2021-02"}                                 # months were made
    assert prov["scenario"]["period"]["resolution"] == "month"
    assert prov["command_line_overrides"] == {"period.resolution": "month"}


def test_report_lists_the_uncertainty_options_not_the_draws(tmp_path):
    """Old code: with [uncertainty] draws, the report's "Options in force" held the
    printed xarray Datasets of the draws instead of the draws' options."""
    scen = _project(tmp_path / "p", "\n[uncertainty]\ndraws = 20\nseed = 7\n")
    run = _run(scen, tmp_path / "run")
    page = (run / "report.html").read_text()
    block = re.search(r"Options in force.*?<pre>(.*?)</pre>", page, re.S).group(1)
    opts = json.loads(html.unescape(block))
    assert opts["uncertainty"]["draws"] == 20 and opts["uncertainty"]["seed"] == 7
    assert "xarray.Dataset" not in page


def test_provenance_holds_environment_and_output_checksums(tmp_path):
    from workbench.writers import sha256
    run = _run(_project(tmp_path / "p"), tmp_path / "run")
    prov = json.loads((run / "provenance.json").read_text())
    assert set(prov["output_sha256"]) == set(prov["outputs"]) - {"provenance.json"}
    for name, digest in prov["output_sha256"].items():
        assert sha256(run / name) == digest, name
    assert {"python", "numpy", "pandas", "xarray"} <= set(prov["environment"])
    assert prov["inputs"]["met"]["from_run_folder"] == "../p/met.csv"


# ---------------------------------------------------------------------- workbench verify

def test_verify_finds_the_inputs_of_a_project_moved_whole(tmp_path, capsys):
    scen = _project(tmp_path / "ann" / "study")
    _run(scen, scen.parent / "runs" / "base")
    moved = tmp_path / "bert" / "study"
    shutil.move(str(tmp_path / "ann"), str(tmp_path / "bert"))        # A's path is gone
    assert not scen.exists()
    assert main(["verify", str(moved / "runs" / "base")]) == 0
    out = _said(capsys)
    assert f"scenario: {moved / 'scenario.toml'}: as at the run" in out
    assert "input met (met.csv): as at the run" in out
    assert "result: the run folder matches its scenario and inputs" in out


def test_verify_names_what_changed_after_the_run(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    run = _run(scen, tmp_path / "run")
    scen.write_text(scen.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    air = scen.parent / "air.csv"
    air.write_text(air.read_text().replace("2.0,0.5", "2.1,0.5", 1))
    (scen.parent / "met.csv").rename(scen.parent / "met_old.csv")
    with open(run / "budget.csv", "a") as f:
        f.write("edited by hand\n")
    assert main(["verify", str(run)]) == 1
    out = _said(capsys)
    assert "budget.csv was changed after the run" in out
    assert re.search(r"scenario: \S+: differs from the run \(sha256", out)
    assert "option budget.sulfate_basis: total at the run, nss now" in out
    assert f"input air (air.csv): {air} differs from the run" in out
    assert f"input met (met.csv): not found (looked at {scen.parent / 'met.csv'})" in out


def test_verify_with_another_scenario_and_a_missing_input(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    run = _run(scen, tmp_path / "run")
    (scen.parent / "air.csv").unlink()
    assert main(["verify", str(run)]) == 1
    out = _said(capsys)
    assert "input air (air.csv): not found (looked at" in out
    copy = _project(tmp_path / "q")                   # the same files elsewhere
    assert main(["verify", str(run), "--scenario", str(copy)]) == 0
    assert f"scenario: {copy}: as at the run" in _said(capsys)


def test_verify_accepts_the_command_line_resolution(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    scen.write_text(scen.read_text().replace('resolution = "month"', 'resolution = "year"'))
    run = _run(scen, tmp_path / "run", "--resolution", "month")
    assert main(["verify", str(run)]) == 0
    assert "option period.resolution: month at the run, set on the command line" in \
        capsys.readouterr().out


def test_verify_and_check_of_what_is_not_a_run_folder(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    assert main(["verify", str(scen.parent)]) == 2
    err = capsys.readouterr().err
    assert err.strip() == (f"error: {scen.parent}: no provenance.json, so not a finished "
                           "run folder (`workbench run` writes it last)")
    run = _run(scen, tmp_path / "run")
    assert main(["check", str(run)]) == 2
    assert "is a run folder, not a scenario: `workbench verify" in capsys.readouterr().err


def test_verify_of_a_run_folder_without_output_checksums(tmp_path, capsys):
    """A run folder of an earlier version (no output_sha256) is checked for the rest."""
    run = _run(_project(tmp_path / "p"), tmp_path / "run")
    prov = json.loads((run / "provenance.json").read_text())
    del prov["output_sha256"]
    (run / "provenance.json").write_text(json.dumps(prov))
    assert main(["verify", str(run)]) == 0
    assert "outputs: not checked" in capsys.readouterr().out


# ---------------------------------------------------------------------- workbench compare

def test_compare_lists_the_option_and_the_totals_that_changed(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    run_a = _run(scen, tmp_path / "a")
    scen.write_text(scen.read_text().replace("SO2 = 0.5", "SO2 = 0.8"))
    run_b = _run(scen, tmp_path / "b")
    table = tmp_path / "changes.csv"
    assert main(["compare", str(run_a), str(run_b), "--csv", str(table)]) == 1
    out = capsys.readouterr().out
    assert "options (1 differs):\n  dry.fixed_velocity.SO2: 0.5 in A, 0.8 in B" in out
    assert "inputs (by their SHA-256):\n  scenario: different files" in out
    diff = pd.read_csv(table, dtype={"period": str})
    # only the S dry and S total change, by the Vd ratio on the SO2 part (dry S is SO2
    # alone here: no particle sulfate measured)
    assert set(zip(diff["element"], diff["pathway"])) == {("S", "dry"), ("S", "total")}
    ta = pd.read_csv(run_a / "budget.csv", dtype={"period": str})
    so2 = ta[(ta["species"] == "SO2")].set_index("period")["flux_kg_ha_yr"]
    dry = diff[diff["pathway"] == "dry"].set_index("period")
    for period, row in dry.iterrows():
        assert row["change_kg_ha_yr"] == pytest.approx(so2[period] * (0.8 / 0.5 - 1), rel=1e-9)


def test_compare_of_a_rerun_elsewhere_finds_nothing(two_places, capsys):
    _, run_a, run_b = two_places
    assert main(["compare", str(run_a), str(run_b)]) == 0
    out = capsys.readouterr().out
    assert "options: the same" in out and "inputs: the same files (SHA-256)" in out
    assert "shared totals are the same" in out


def test_compare_of_other_periods_says_so(tmp_path, capsys):
    scen = _project(tmp_path / "p")
    run_a = _run(scen, tmp_path / "a")
    run_b = _run(scen, tmp_path / "b", "--resolution", "season")
    assert main(["compare", str(run_a), str(run_b)]) == 1
    out = capsys.readouterr().out
    assert "period.resolution: month in A, season in B" in out
    assert "only in A" in out and "only in B" in out


def test_an_input_edited_while_the_run_reads_it_is_named(tmp_path, monkeypatch, capsys):
    """Old code: provenance.json took the checksums at the end, so an input edited after
    it was read (in an editor, while a run or an app session was open) was recorded as
    the file the numbers came from.  Seen in the trial: a run that read an edited
    air.csv recorded the checksum of the file restored before the run ended."""
    from workbench import writers
    scen = _project(tmp_path / "p")
    air = scen.parent / "air.csv"
    first_name, first_writer = writers.OUTPUT_STEPS[0]

    def edit_then_write(result, study, scenario, path):
        air.write_text(air.read_text() + "\n")         # someone saves the file meanwhile
        return first_writer(result, study, scenario, path)
    monkeypatch.setattr(writers, "OUTPUT_STEPS",
                        [(first_name, edit_then_write)] + writers.OUTPUT_STEPS[1:])
    run = _run(scen, tmp_path / "run")
    err = capsys.readouterr().err
    assert ("warning: " + str(air) + " changed after the run read it") in err
    prov = json.loads((run / "provenance.json").read_text())
    assert prov["inputs"]["air"].get("changed_after_read") is True
    assert "changed_after_read" not in prov["inputs"]["met"]
    assert any(n.startswith("air.csv changed after the run read it") for n in prov["run_notes"])
    assert main(["verify", str(run)]) == 1
    assert "input air (air.csv): changed after the run read it" in capsys.readouterr().out


def test_budget_differences_counts_tolerance_missing_values_and_status(tmp_path):
    """Unit check of :func:`workbench.runcompare.budget_differences` on hand-made tables
    (values invented): a change within `rtol` is equal, a total missing in one run
    (empty) differs, a status change alone differs, rows of one run only are counted."""
    from workbench.runcompare import budget_differences
    head = "site,receptor,period,element,pathway,species,flux_kg_ha_yr,status\n"
    rows_a = ["s1,grass,2020,S,total,all,10.0,complete", "s1,grass,2020,N,total,all,5.0,complete",
              "s1,grass,2020,N,dry,all,2.0,complete", "s1,grass,2020,S,dry,all,1.0,complete",
              "s1,grass,2020,S,dry,SO2,1.0,complete", "s1,grass,2021,S,total,all,3.0,complete"]
    rows_b = ["s1,grass,2020,S,total,all,10.000001,complete", "s1,grass,2020,N,total,all,,missing",
              "s1,grass,2020,N,dry,all,2.0,flagged", "s1,grass,2020,S,dry,all,1.0,complete",
              "s1,grass,2020,S,dry,SO2,1.5,complete"]
    for name, rows in (("a", rows_a), ("b", rows_b)):
        (tmp_path / name).mkdir()
        (tmp_path / name / "budget.csv").write_text(head + "\n".join(rows) + "\n")
    exact, counts = budget_differences(tmp_path / "a", tmp_path / "b")
    assert counts == {"shared": 4, "only_a": 1, "only_b": 0}     # species SO2 not a total
    assert list(zip(exact["element"], exact["pathway"])) == [("N", "total"), ("S", "total"),
                                                              ("N", "dry")]
    loose, _ = budget_differences(tmp_path / "a", tmp_path / "b", rtol=1e-6)
    assert list(zip(loose["element"], loose["pathway"])) == [("N", "total"), ("N", "dry")]
    assert loose["b_status"].tolist() == ["missing", "flagged"]


def file_sha256(path) -> str:
    """SHA-256 of a file (hashlib, FIPS 180-4), independent of the package's own."""
    import hashlib
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def _same_size_edit(path: Path, old: str, new: str):
    """Replace `old` by `new` (same length) in `path`, keeping its size and its
    modification time (os.utime back to the time read before the edit)."""
    import os
    assert len(old) == len(new)
    st = os.stat(path)
    text = path.read_text()
    assert old in text
    path.write_text(text.replace(old, new, 1))
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns))
    after = os.stat(path)
    assert (after.st_size, after.st_mtime_ns) == (st.st_size, st.st_mtime_ns)


@pytest.mark.parametrize("role, name, old, new", [
    ("air", "air.csv", "2.0,0.5", "2.1,0.5"),
    ("met", "met.csv", ",", ",")])                      # the met: one digit, below
def test_an_edit_that_keeps_size_and_mtime_is_caught_by_content(tmp_path, monkeypatch, capsys,
                                                                  role, name, old, new):
    """Old code: the stamp was size + modification time, so an edit that kept both (a
    digit changed for another, the time set back by a sync tool or os.utime) was not
    seen, and provenance.json recorded the checksum of the edited file as the one the
    numbers came from.  Now the readers hash the very bytes they parse."""
    from workbench import writers
    scen = _project(tmp_path / "p")
    path = scen.parent / name
    if role == "met":                                   # change one digit of a value
        text = path.read_text()
        line = text.splitlines()[3]
        digit = next(i for i in range(len(line) - 1, 0, -1) if line[i].isdigit())
        old, new = line, line[:digit] + str((int(line[digit]) + 1) % 10) + line[digit + 1:]
    before = file_sha256(path)
    first_name, first_writer = writers.OUTPUT_STEPS[0]

    def edit_then_write(result, study, scenario, out):
        _same_size_edit(path, old, new)                 # saved meanwhile, time set back
        return first_writer(result, study, scenario, out)
    monkeypatch.setattr(writers, "OUTPUT_STEPS",
                        [(first_name, edit_then_write)] + writers.OUTPUT_STEPS[1:])
    run = _run(scen, tmp_path / "run")
    assert ("warning: " + str(path) + " changed after the run read it") in capsys.readouterr().err
    prov = json.loads((run / "provenance.json").read_text())
    rec = prov["inputs"][role]
    assert rec.get("changed_after_read") is True
    assert rec["sha256"] == before != rec["sha256_now"] == file_sha256(path)
    others = [r for k, r in prov["inputs"].items() if k not in (role, "scenario")]
    assert others and not any(r.get("changed_after_read") for r in others)
    assert main(["verify", str(run)]) == 1
    assert f"input {role} ({name}): changed after the run read it" in capsys.readouterr().out


def test_the_recorded_checksum_is_of_the_bytes_parsed(tmp_path):
    """Each input's digest comes from the bytes its reader parsed (one read), equal to
    the file's SHA-256 when nothing changed."""
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    scen = _project(tmp_path / "p")
    study = Study.from_scenario(load_scenario(scen))
    stamps = study.inputs.stamps
    assert set(stamps) == set(study.inputs.paths)
    for role, p in study.inputs.paths.items():
        assert stamps[role] == file_sha256(p), role


# ------------------------------------------------------------- gzip inputs: content, not bytes
def _gzip_met(scen: Path, level: int = 9, mtime: int = 0) -> Path:
    """met.csv of the tiny project as met.csv.gz (the scenario names it)."""
    import gzip
    raw = (scen.parent / "met.csv").read_bytes()
    gz = scen.parent / "met.csv.gz"
    gz.write_bytes(gzip.compress(raw, compresslevel=level, mtime=mtime))
    (scen.parent / "met.csv").unlink()
    scen.write_text(scen.read_text().replace('"met.csv"', '"met.csv.gz"'))
    return gz


def test_verify_a_gzip_input_compressed_again_is_not_a_change(tmp_path, capsys):
    """The same met content compressed again (other level, other header time: other
    bytes) verifies; an edit of the content does not (the old code called both
    "differs")."""
    import gzip
    scen = _project(tmp_path / "p")
    gz = _gzip_met(scen)
    run = _run(scen, tmp_path / "run")
    rec = json.loads((run / "provenance.json").read_text())["inputs"]["met"]
    raw = gzip.decompress(gz.read_bytes())
    import hashlib
    assert rec["content_sha256"] == hashlib.sha256(raw).hexdigest()
    before = gz.read_bytes()
    gz.write_bytes(gzip.compress(raw, compresslevel=1, mtime=12345))
    assert gz.read_bytes() != before
    assert main(["verify", str(run)]) == 0
    out = _said(capsys)
    assert ("input met (met.csv.gz): as at the run (compressed again: other bytes, the "
            "same content; content_sha256)") in out
    lines = raw.decode().splitlines()
    lines[5] = lines[5][:-1] + ("1" if lines[5][-1] != "1" else "2")     # one digit edited
    gz.write_bytes(gzip.compress(("\n".join(lines) + "\n").encode(), mtime=0))
    assert main(["verify", str(run)]) == 1
    out = _said(capsys)
    assert f"input met (met.csv.gz): {gz} differs from the run (content sha256" in out


def test_verify_a_gzip_input_of_a_run_folder_with_byte_checksums_only(tmp_path, capsys):
    """A run folder written before content_sha256 (bytes only) still verifies its
    unchanged gzip input, and says why a recompressed one cannot be told from an edit."""
    import gzip
    scen = _project(tmp_path / "p")
    gz = _gzip_met(scen)
    run = _run(scen, tmp_path / "run")
    prov = json.loads((run / "provenance.json").read_text())
    del prov["inputs"]["met"]["content_sha256"]
    del prov["input_checksums"]
    (run / "provenance.json").write_text(json.dumps(prov))
    assert main(["verify", str(run)]) == 0
    assert "input met (met.csv.gz): as at the run" in _said(capsys)
    gz.write_bytes(gzip.compress(gzip.decompress(gz.read_bytes()), compresslevel=1, mtime=7))
    assert main(["verify", str(run)]) == 1
    assert ("the run records the checksum of the compressed bytes only, so a file compressed "
            "again cannot be told from an edited one") in _said(capsys)


def test_compare_goes_by_the_content_of_gzip_inputs(tmp_path, capsys):
    """Two runs of one met content compressed two ways: the same inputs for compare."""
    import gzip
    scen = _project(tmp_path / "p")
    gz = _gzip_met(scen)
    run_a = _run(scen, tmp_path / "a")
    gz.write_bytes(gzip.compress(gzip.decompress(gz.read_bytes()), compresslevel=1, mtime=7))
    run_b = _run(scen, tmp_path / "b")
    pa = json.loads((run_a / "provenance.json").read_text())["inputs"]["met"]
    pb = json.loads((run_b / "provenance.json").read_text())["inputs"]["met"]
    assert pa["sha256"] != pb["sha256"]
    main(["compare", str(run_a), str(run_b)])
    out = capsys.readouterr().out
    assert "met: different files" not in out
    assert "inputs: the same files (SHA-256)" in out


def _hand_run(folder: Path, rows) -> Path:
    """A run folder of hand-made budget totals (values invented) and the least
    provenance.json compare reads."""
    folder.mkdir()
    head = "site,receptor,period,element,pathway,species,flux_kg_ha_yr,status\n"
    (folder / "budget.csv").write_text(head + "\n".join(rows) + "\n")
    (folder / "provenance.json").write_text(json.dumps(
        {"version": "0", "inputs": {}, "outputs": ["budget.csv"], "scenario": {}}))
    return folder


def test_compare_gives_no_percent_of_a_zero_negative_or_missing_first_value(tmp_path, capsys):
    """Review of the run comparison: a total of 0 in the first run gave
    ``change_percent`` inf (console "+inf", CSV "inf"); one below 0 (net NH3 emission)
    a percent of its magnitude.  Now NaN with the reason in ``percent_note`` (CSV) and
    in the console's table.  By hand: 4 -> 5 is +25 %.  Old code: inf, and no
    percent_note column."""
    a = _hand_run(tmp_path / "a", [
        "s1,grass,2020,S,total,all,4.0,complete", "s1,grass,2020,S,dry,all,0.0,complete",
        "s1,grass,2020,N,dry,all,-2.0,complete", "s1,grass,2020,N,wet,all,,missing"])
    b = _hand_run(tmp_path / "b", [
        "s1,grass,2020,S,total,all,5.0,complete", "s1,grass,2020,S,dry,all,0.3,complete",
        "s1,grass,2020,N,dry,all,-1.0,complete", "s1,grass,2020,N,wet,all,3.0,complete"])
    table = tmp_path / "changes.csv"
    assert main(["compare", str(a), str(b), "--csv", str(table)]) == 1
    out = capsys.readouterr().out
    assert "inf" not in out
    diff = pd.read_csv(table, keep_default_na=False, na_values={
        c: [""] for c in ("a_kg_ha_yr", "b_kg_ha_yr", "change_kg_ha_yr", "change_percent")})
    got = diff.set_index(["element", "pathway"])
    assert got.loc[("S", "total"), "change_percent"] == pytest.approx(25.0, rel=1e-12)
    assert got.loc[("S", "total"), "percent_note"] == ""
    assert np.isnan(got.loc[("S", "dry"), "change_percent"])
    assert got.loc[("S", "dry"), "percent_note"] == "no percent: the first run's value is 0"
    assert got.loc[("N", "dry"), "change_kg_ha_yr"] == pytest.approx(1.0)
    assert np.isnan(got.loc[("N", "dry"), "change_percent"])
    assert got.loc[("N", "dry"), "percent_note"] == ("no percent: the first run's value is "
                                                     "below 0, a net emission")
    assert np.isnan(got.loc[("N", "wet"), "change_percent"])
    assert got.loc[("N", "wet"), "percent_note"] == "no percent: the first run's value is missing"
    assert not np.isinf(diff["change_percent"]).any()
    # the console's table says the same words
    for words in ("no percent: the first run's value is 0",
                  "no percent: the first run's value is below 0, a net emission",
                  "no percent: the first run's value is missing", "+25.00"):
        assert words in out, words
