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
    """The lines of `text` wider than NOTE_WIDTH that are not a path on a line of its
    own (with at most a short label before it, as ``scenario: PATH``)."""
    bad = []
    for line in text.splitlines():
        if len(line) <= NOTE_WIDTH:
            continue
        words = line.split()
        path = words[-1] if words else ""
        if os.path.exists(path) and len(line) - len(path) <= len("scenario: "):
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
