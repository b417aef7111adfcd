"""``workbench check`` and ``workbench grid`` at an 80-column terminal: every line they
print is at most 79 characters, but a file's path, which is never broken (a new user's
walkthrough found site lines of 113-139 characters, a table of reasons 167 wide and a
grid note of 545 on one line).  The width is common practice for a terminal; the
words are those of the unwrapped text."""
import os

import pytest

from workbench.cli import DEMO_SCENARIO, main
from workbench.cli_status import NOTE_WIDTH
from workbench.grid_demo import make_demo_grid


def _too_wide(text):
    """The lines of `text` wider than NOTE_WIDTH that are not a path alone on a line of
    its own (indented at most two spaces).  A label before a long path no longer
    passes: ``scenario: PATH`` of a deep folder was 120 characters on one line."""
    bad = []
    for line in text.splitlines():
        if len(line) <= NOTE_WIDTH:
            continue
        path = line.strip()
        if os.path.exists(path) and len(line) - len(path) <= 2:
            continue
        bad.append(line)
    return bad


def _words(text):
    return " ".join(text.split())


@pytest.fixture(scope="module")
def demo_check():
    import contextlib
    import io
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["check", str(DEMO_SCENARIO), "--quiet"]) == 0
    return out.getvalue()


def test_check_of_the_demo_fits_80_columns(demo_check):
    assert NOTE_WIDTH == 79
    assert _too_wide(demo_check) == []


def test_check_of_the_demo_keeps_every_fact(demo_check):
    """Each file's path whole on a line, each reason with its file, count, status and
    lines, each site's line and each note: the same words as before, only wrapped."""
    from workbench.cli import _inputs_text
    from workbench.io.inputs import load_inputs
    from workbench.scenario import load_scenario
    sc = load_scenario(DEMO_SCENARIO)
    paths = sc.input_paths()
    inp = load_inputs(paths["sites"], paths.get("precipitation"), paths.get("air"),
                      paths.get("met"))
    lines = demo_check.splitlines()
    said = _words(demo_check)
    assert _inputs_text(inp) in demo_check
    summ = inp.ledger.summary()
    for f in summ["file"]:
        assert f"  {f}" in lines                              # the path, on its own line
    for row in summ.itertuples(index=False):
        name = os.path.basename(row.file)
        assert any(ln.split() == [name, *map(str, row[1:])] for ln in lines), row
    reasons = inp.ledger.reasons()
    assert len(reasons) > 10
    for r in reasons.itertuples(index=False):
        n = int(r.rows)
        assert _words(f"{os.path.basename(r.file)}: {n} row{'s' if n != 1 else ''} "
                      f"{r.status}, {r.lines}: {r.reason}") in said, r
    for line in inp.loaded_lines():
        assert _words(line) in said
    for note in inp.ledger.notes:
        assert _words(note) in said


def test_grid_notes_of_the_demo_grid_fit_80_columns(tmp_path, capsys):
    """The demo grid's input notes on stderr while it reads (the wind note of the urban
    cell j7i12 was 545 characters on one line): wrapped, the words kept."""
    import json
    scenario = make_demo_grid(tmp_path / "in")
    assert main(["grid", str(scenario), "--out", str(tmp_path / "out"),
                 "--in-process"]) == 0
    err = capsys.readouterr().err
    assert "j7i12" in err
    assert _too_wide(err) == []
    notes = json.loads((tmp_path / "out" / "provenance.json").read_text())["notes"]
    wind = [n for n in notes if "at site j7i12" in n]
    assert wind and all(_words(n) in _words(err) for n in wind)
    assert main(["check", str(scenario)]) == 0             # the grid's own check
    out = capsys.readouterr().out
    assert "grid 20 x 20 cells" in out and _too_wide(out) == []


def _deep_demo(tmp_path):
    """The demo's files in a folder whose path alone is longer than 79 characters."""
    import shutil
    deep = (tmp_path / "a_rather_long_folder_name_for_field_data"
            / "station_exports_2016_to_2023" / "checked_copies" / "demo")
    shutil.copytree(DEMO_SCENARIO.parent, deep,
                    ignore=shutil.ignore_patterns("*.py", "__pycache__"))
    assert len(str(deep / "scenario.toml")) > NOTE_WIDTH
    return deep / "scenario.toml"


def test_check_of_a_scenario_in_a_deep_folder_fits_80_columns(tmp_path, capsys):
    """The ``scenario:`` line of a long path: the label, then the path alone on the
    next line, whole (before, one line as long as the path and its label)."""
    scenario = _deep_demo(tmp_path)
    assert main(["check", str(scenario), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert _too_wide(out) == []
    lines = out.splitlines()
    assert lines[:2] == ["scenario:", f"  {scenario}"]


def test_a_short_scenario_path_stays_on_the_label_line(tmp_path, capsys):
    from workbench.cli_status import labelled_path
    assert labelled_path("scenario:", "s.toml") == ["scenario: s.toml"]
    edge = "x" * (NOTE_WIDTH - len("scenario: "))
    assert labelled_path("scenario:", edge) == [f"scenario: {edge}"]
    assert labelled_path("scenario:", edge + "y") == ["scenario:", f"  {edge}y"]


def test_run_of_a_scenario_in_a_deep_folder_fits_80_columns(tmp_path, capsys):
    """``workbench run`` of the same: ``wrote 13 files into PATH:`` and the heading of
    the input notes, ``...; workbench check PATH):``, were each one line as long as the
    path; now the label ends its line and the path stands alone under it."""
    scenario = _deep_demo(tmp_path)
    out = scenario.parent.parent / "a_run_folder_beside_the_data"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    assert _too_wide(printed) == []
    lines = printed.splitlines()
    n = len([f for f in out.iterdir() if f.is_file()])
    assert lines[:3] == [f"wrote {n} files into:", f"  {out}", "  budget.csv"]
    head = next(i for i, x in enumerate(lines) if x.startswith("notes on the inputs ("))
    heading = _words(" ".join(lines[head:head + 3]))
    assert heading.endswith(f"workbench check of the scenario): {scenario}"), heading
    assert lines[head + 2] == f"  {scenario}"
