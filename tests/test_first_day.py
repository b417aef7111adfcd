"""What a new user trips on first, tried as one on a fresh clone (README, "Quick start
on the command line"): the demo scenario typed in another folder, a mistyped scenario
or input name, the help of each command, what ``workbench compare`` and ``workbench
verify`` print on an 80-column terminal, and what ``make_grid.py`` says it wrote.

Each refusal is one located line ``error: ...`` (never a traceback) that says what to
do; each console line fits 79 columns (tests/test_console_width.py, the same rule).
"""
import re
from pathlib import Path

import pytest

from workbench.cli import build_parser, main

import test_budget as tb

WIDTH = 79


def _error_line(capsys) -> str:
    err = capsys.readouterr().err
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    assert "Traceback" not in err
    return lines[0]


def test_the_demo_scenario_typed_in_another_folder_says_what_to_do(tmp_path, monkeypatch,
                                                                    capsys):
    """Old code: ``error: .../demo_data/scenario.toml: scenario file not found, expected
    an existing TOML file`` (true, but not what to do: the README's commands are typed
    in the repository folder; ``workbench demo`` runs from any)."""
    monkeypatch.chdir(tmp_path)
    assert main(["check", "demo_data/scenario.toml"]) == 2
    line = _error_line(capsys)
    assert f"{tmp_path.resolve() / 'demo_data' / 'scenario.toml'}: scenario file not found" \
        in line
    assert f"(no folder {tmp_path.resolve() / 'demo_data'})" in line
    assert "`workbench demo` runs the bundled demo from any folder" in line


def test_a_mistyped_scenario_name_gets_the_nearest_file(tmp_path, capsys):
    """Old code: no hint of the file beside it (``scenario.tml`` for scenario.toml)."""
    scenario = tb._write(tmp_path)
    assert main(["check", str(scenario.with_name("scenario.tml"))]) == 2
    line = _error_line(capsys)
    assert line.endswith("scenario file not found, expected an existing TOML file "
                         "(did you mean 'scenario.toml'?)")
    assert "workbench demo" not in line           # not the demo's path: no demo hint


def test_a_missing_input_says_where_a_relative_path_was_looked_for(tmp_path, capsys):
    """Old code: ``got 'ari.csv', expected a path relative to the scenario file, or
    absolute``: neither the folder it was looked for in nor the file meant."""
    scenario = tb._write(tmp_path)
    text = scenario.read_text()
    assert '"air.csv"' in text
    scenario.write_text(text.replace('"air.csv"', '"ari.csv"'))
    assert main(["check", str(scenario)]) == 2
    line = _error_line(capsys)
    assert "column 'inputs.air': input file does not exist: got 'ari.csv'" in line
    assert (f"(did you mean 'air.csv'?; looked for {tmp_path.resolve() / 'ari.csv'})"
            in line)


def test_an_absolute_input_path_of_a_missing_folder_says_so(tmp_path, capsys):
    scenario = tb._write(tmp_path)
    gone = tmp_path / "exports" / "air.csv"
    scenario.write_text(scenario.read_text().replace('"air.csv"', f'"{gone.as_posix()}"'))
    assert main(["check", str(scenario)]) == 2
    line = _error_line(capsys)
    assert line.endswith(f"or absolute (no folder {gone.parent})")
    assert "looked for" not in line               # absolute: the path given is the one


def _subcommands():
    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    return sub.choices


@pytest.mark.parametrize("name", sorted(_subcommands()))
def test_every_argument_of_every_command_says_what_it_is(name):
    """Old code: ``workbench check --help`` listed ``scenario`` with no word on it, and
    ``compare`` its ``run_a``/``run_b`` alike."""
    parser = _subcommands()[name]
    for action in parser._actions:
        if action.dest == "help":
            continue
        assert action.help, (name, action.dest)
    text = parser.format_help()
    assert all(len(ln) <= WIDTH for ln in text.splitlines()), text


def test_sensitivity_help_says_what_its_folder_options_do():
    """Old code: ``--out`` "created if needed", ``--overwrite`` "replace files in a
    non-empty folder"; the command writes its folder whole or not at all and
    ``--overwrite`` replaces it whole, as ``workbench run`` (runfolder.RunFolder)."""
    parser = _subcommands()["sensitivity"]
    helps = {a.dest: a.help for a in parser._actions}
    assert helps["out"] == _help_of("run", "out")
    assert helps["overwrite"] == _help_of("run", "overwrite")


def _help_of(command, dest):
    return next(a.help for a in _subcommands()[command]._actions if a.dest == dest)


def _run(scenario, out):
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    return out


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    """Two runs of the tiny project with one option changed, in deep folders (the
    console names their paths whole)."""
    base = tmp_path_factory.mktemp("first_day") / ("a-rather-long-project-folder-name" * 2)
    base.mkdir()
    scenario = tb._write(base)
    a = _run(scenario, base / "runs" / "base-run-with-the-default-options")
    text = scenario.read_text()
    assert "SO2 = 0.5" in text
    scenario.write_text(text.replace("SO2 = 0.5", "SO2 = 0.8"))
    b = _run(scenario, base / "runs" / "second-run-with-a-faster-SO2-velocity")
    return a, b


def test_compare_fits_80_columns(two_runs, tmp_path, capsys):
    """Old code: the lines A:/B: with their folders, the differing scenario and the table
    of differing totals ran to 85-170 columns."""
    a, b = two_runs
    capsys.readouterr()
    table = tmp_path / "changes.csv"
    assert main(["compare", str(a), str(b), "--csv", str(table)]) == 1
    out = capsys.readouterr().out
    long = [ln for ln in out.splitlines() if len(ln) > WIDTH and " " in ln.strip()]
    assert not long, long
    # every fact still there: both folders whole, the option, the totals' table
    assert str(a.resolve()) in out.split() and str(b.resolve()) in out.split()
    assert "dry.fixed_velocity.SO2: 0.5 in A, 0.8 in B" in out
    assert "change_kg_ha_yr" in out and "a_status" in out
    assert f"every differing total: {table.resolve()}" in " ".join(out.split())


def test_compare_of_the_same_totals_says_the_csv_holds_no_rows(two_runs, tmp_path, capsys):
    """Old code: "every differing total: FILE" for a file of the header line alone."""
    a, _ = two_runs
    capsys.readouterr()
    table = tmp_path / "none.csv"
    assert main(["compare", str(a), str(a), "--csv", str(table)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert f"no total differs: {table.resolve()} (caution: none.CAUTION.txt) holds the " \
           "header line only" in out
    assert table.read_text().count("\n") == 1


def test_verify_fits_80_columns(two_runs, capsys):
    a, _ = two_runs
    capsys.readouterr()
    assert main(["verify", str(a)]) == 1      # the scenario was edited after run A
    out = capsys.readouterr().out
    long = [ln for ln in out.splitlines() if len(ln) > WIDTH and " " in ln.strip()]
    assert not long, long


def test_make_grid_says_what_it_wrote_and_what_comes_next(tmp_path, capsys):
    """Old code: printed the scenario path alone."""
    from workbench.grid_demo import main as make_grid
    out = tmp_path / "demo-grid"
    assert make_grid(["--out", str(out)]) == 0
    text = capsys.readouterr().out
    # a longer line holds one path alone (a path is never cut), as a shell reads it
    long = [ln for ln in text.splitlines() if len(ln) > WIDTH
            and not re.fullmatch(r" +(--out )?\S+( \\)?", ln)]
    assert not long, text
    named = set(re.findall(r"^ {4}(\S+)$", text, flags=re.M))
    assert named == {p.name for p in out.iterdir()} == {"scenario.toml", "met.nc", "air.nc",
                                                        "land_use.nc"}
    command = " ".join(text.split("into a new folder):", 1)[1].replace("\\\n", " ").split())
    assert command == f"workbench grid {out.resolve() / 'scenario.toml'} --out " \
        f"{tmp_path.resolve() / 'grid-maps'}"
    # the command as printed runs (its arguments parse)
    args = build_parser().parse_args(command.split()[1:])
    assert args.scenario == out.resolve() / "scenario.toml"


def test_make_grid_refuses_a_folder_not_empty_as_workbench_run_does(tmp_path, capsys):
    """Old code: make_grid.py wrote its four files into any folder, beside (or over)
    another run's.  Now the folder is treated as `workbench run` treats --out
    (workbench/runfolder.py): refused with one located message unless --overwrite,
    which replaces it whole."""
    from workbench.grid_demo import main as make_grid
    out = tmp_path / "maps"
    out.mkdir()
    (out / "budget.csv").write_text("another run's file\n")
    assert make_grid(["--out", str(out)]) == 2
    err = capsys.readouterr().err
    said = " ".join(err.split())
    assert said == (f"error: output folder {out.resolve()} is not empty: use --overwrite "
                    "to replace it whole, or choose a new folder"), err
    assert all(len(ln) <= WIDTH or " " not in ln.strip() for ln in err.splitlines()), err
    assert [p.name for p in out.iterdir()] == ["budget.csv"]
    assert (out / "budget.csv").read_text() == "another run's file\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["maps"]     # no leftover sibling
    # --overwrite: the folder replaced whole, no file of the other run left
    assert make_grid(["--out", str(out), "--overwrite"]) == 0
    assert sorted(p.name for p in out.iterdir()) == ["air.nc", "land_use.nc", "met.nc",
                                                      "scenario.toml"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["maps"]
