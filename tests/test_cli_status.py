"""What ``workbench run`` prints at its end (workbench/cli_status.py): the run's notes,
which report.html ("Notes") and provenance.json (``run_notes``) carry, are printed on
the console too, after the files and the status counts, once each, wrapped for an
80-column terminal, with or without ``--quiet`` (README: ``--quiet`` hides the progress
only).  Before, a command-line user never read them: the note that one weekly sample
decides a month (workbench/period_notes.py) was in the two files only."""
import json

import pytest

import test_budget as tb
from workbench.cli import main

MONTH_NOTE = "completeness of month periods: one precipitation sample"


def _words(text):
    return " ".join(text.split())


def _printed_notes(out):
    """The notes under the console's heading, each joined back into one line."""
    head = 'notes of the run (report.html, "Notes"; provenance.json, run_notes):'
    assert out.count(head) == 1, out
    notes = []
    for line in out.split(head)[1].splitlines()[1:]:
        if line.startswith("  - "):
            notes.append(line[4:])
        elif line.startswith("    "):
            notes[-1] += " " + line.strip()
        else:
            break
    return notes


@pytest.mark.parametrize("quiet", [True, False])
def test_a_monthly_run_prints_its_notes_after_the_summary(tmp_path, capsys, quiet):
    scenario = tb._write(tmp_path)                 # weekly samples, monthly periods
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out)] + (["--quiet"] if quiet else [])) == 0
    printed = capsys.readouterr().out
    notes = _printed_notes(printed)
    prov = json.loads((out / "provenance.json").read_text())
    # every note of provenance.json, word for word, once
    assert notes == [_words(n) for n in prov["run_notes"]]
    assert any(n.startswith(MONTH_NOTE) for n in notes)
    assert sum(MONTH_NOTE in line for line in printed.splitlines()) == 1
    # after the files written and the status counts
    lines = printed.splitlines()
    head = next(i for i, x in enumerate(lines) if x.startswith("notes of the run"))
    assert head > next(i for i, x in enumerate(lines) if x.startswith("budgets per site"))
    assert head > lines.index("  provenance.json")
    # wrapped for an 80-column terminal
    # (the block ends at the next heading: the input notes follow it, whose line of
    # `workbench check <scenario>` holds the long path of the test's folder, tests/
    # test_cli_input_notes.py)
    size = next((i for i, x in enumerate(lines[head + 1:]) if not x.startswith("  ")),
                len(lines) - head - 1)
    block = lines[head:head + 1 + size]
    assert max(len(x) for x in block) < 80
    assert len(block) > 3                            # the note is longer than one line


def test_a_yearly_run_without_notes_prints_no_heading(tmp_path, capsys):
    scenario = tb._write(tmp_path)
    scenario.write_text(scenario.read_text().replace('resolution = "month"',
                                                     'resolution = "year"'))
    scenario.write_text(scenario.read_text().replace('end = "2021-03-01"',
                                                     'end = "2022-01-01"').replace(
        'start = "2021-02-01"', 'start = "2021-01-01"'))
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    assert json.loads((out / "provenance.json").read_text())["run_notes"] == []
    assert "notes of the run" not in printed


def test_a_note_already_said_is_not_said_again():
    """The days a default span leaves out are printed by run_span_notes ("note: the
    default [period] end ..."); the same run note is not printed a second time."""
    from workbench.cli_status import run_note_lines
    left = "period: the default [period] end is 2022-01-01: the record reaches 3.4 days"
    said = ["note: " + left.removeprefix("period: ")]
    assert run_note_lines([left], said=said) == []
    other = "NH3 and pNH4 at farm: the ammonium bracket is combined across samplers"
    lines = run_note_lines([left, other, other], said=said)
    assert lines[1:] == ["  - " + other]


def test_paths_are_relative_to_the_scenario_and_never_broken(tmp_path):
    from workbench.cli_status import run_note_lines
    base = tmp_path / "study"
    path = str(base / "data" / ("a-very-long-folder-name-" * 4) / "air.csv")
    lines = run_note_lines([f"air: {path} holds a sampler with one sample"], base=base)
    body = "".join(x.strip() for x in lines[1:])
    assert str(base) not in body
    assert "data/" + "a-very-long-folder-name-" * 4 + "/air.csv" in body   # one piece


def test_a_network_groups_the_notes_that_differ_by_site_only():
    """As report.html groups its notes for more than 8 sites (report_network)."""
    from workbench.cli_status import run_note_lines
    sites = [f"s{i:02d}" for i in range(10)]
    notes = [f"NH3 and pNH4 at {s}: the bracket is combined across samplers" for s in sites]
    lines = run_note_lines(notes, sites)
    joined = _words(" ".join(lines[1:]))
    assert len([x for x in lines if x.startswith("  - ")]) == 1
    assert "the same at 9 more sites: s01, s02" in joined
    # a few sites: each note as written
    assert len([x for x in run_note_lines(notes[:3], sites[:3]) if x.startswith("  - ")]) == 3


def test_the_demo_prints_its_notes_before_the_report_line(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    printed = capsys.readouterr().out
    notes = _printed_notes(printed)
    prov = json.loads((tmp_path / "run" / "provenance.json").read_text())
    assert notes == [_words(n) for n in prov["run_notes"]] and notes
    assert printed.index("notes of the run") < printed.index("report: ")


def test_the_closing_counts_are_wrapped_with_their_words_kept(tmp_path, capsys):
    """The status counts (and the lines on totals failing completeness, on the span and
    on the sites not complete) were printed as one line each, up to 180 characters on
    the demo, which a terminal wraps mid-word; they are wrapped to 79 characters as the
    run's notes, with the same words.  Here the counts of a monthly run are 80
    characters long (one more than fits)."""
    import pandas as pd

    from workbench.cli import failing_lines, status_lines
    scenario = tb._write(tmp_path)                 # weekly samples, monthly periods
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    lines = capsys.readouterr().out.splitlines()
    t = pd.read_csv(out / "budget.csv", dtype={"period": str}, keep_default_na=False)
    said = status_lines(t, None) + failing_lines(t)
    assert max(len(x) for x in said) > 79            # one line each, as the files read
    start = next(i for i, x in enumerate(lines) if x.startswith("budgets per site"))
    end = next(i for i, x in enumerate(lines) if x.startswith("notes of the run"))
    block = lines[start:end]
    assert max(len(x) for x in block) <= 79
    assert _words("\n".join(block)) == _words("\n".join(said))
    assert all(x.startswith("  ") for x in block[1:])          # a hanging indent


def test_console_lines_break_at_spaces_only_under_a_hanging_indent():
    """Each line of failing_lines and site_status_lines (a network of 12 sites, one
    failing total with a long reason) wrapped to 79 characters: its words in order,
    none split, each continuation two spaces deeper than its line; a path longer than
    a line stands whole on a line of its own."""
    import pandas as pd

    from workbench.cli_status import console_lines, failing_lines, site_status_lines
    sites = [f"station-{i:02d}" for i in range(12)]
    why = ("SO4: sample coverage below minimum (77.4 % of the period; minimum 90 %), not "
           "covered: 168 h (22.6 %) of sample 2017-07-13 line 497 (excluded: "
           "contamination screen: biological (K, NH4, PO4 high))")
    t = pd.DataFrame({"site": sites, "period": "2023", "species": "all", "pathway": "total",
                      "element": "S", "status": "partial", "passes": True,
                      "missing_components": "pSO4", "completeness_failure": ""})
    t.loc[0, ["status", "passes", "completeness_failure"]] = ["flagged", False, why]
    path = "/data/" + "a-very-long-folder-name-" * 4 + "/air.csv"
    for lines in (failing_lines(t), site_status_lines(t, min_sites=1), ["note: " + path]):
        assert max(len(x) for x in lines) > 79
        for line in lines:
            wrapped = console_lines([line])
            indent = len(line) - len(line.lstrip(" "))
            assert wrapped[0].startswith(line[:indent + 1])
            assert all(w.startswith(" " * (indent + 2)) and w[indent + 2] != " "
                       for w in wrapped[1:])
            assert [w for x in wrapped for w in x.split()] == line.split()
            assert all(len(x) <= 79 or x.split() == [path] for x in wrapped)
    assert console_lines(["note: " + path]) == ["note:", "  " + path]


#: The demo's note on monthly periods (`workbench run demo_data/scenario.toml
#: --resolution month`), as provenance.json's run_notes holds it: at 79 characters the
#: console printed "[wet] period_fill =" at a line's end and "seasonal" on the next,
#: and "[budget]" apart from "min_air_coverage = 0.75".
DEMO_MONTH_NOTES = [
    "completeness of month periods: one precipitation sample (the median, 168 h) is "
    "25.0 % of the shortest period (2017-02, 672 h), more than the 10 % a period may "
    "miss under [wet] min_coverage_fraction = 0.9: one such sample not used "
    "(contaminated, lost) fails the period, where it is 1.9 % of a year. The rule is "
    "the same for every period. To judge these periods less strictly, lower [wet] "
    "min_coverage_fraction (to 0.75 or less to let one such sample go), or fill a "
    "failing period's PWM with [wet] period_fill = \"seasonal\" (the site's multi-year "
    "PWM of its season, marked filled) (docs/budget.md, \"Periods other than the "
    "calendar year\")",
    "completeness of month periods: one air sample of sampler FRM-N1 (the median, 744 "
    "h) is as long as the shortest period (2017-02, 672 h) or longer: one such sample "
    "not used (contaminated, lost) leaves the periods it spans without a concentration "
    "for much of their hours, short of [budget] min_air_coverage = 0.75 unless that is "
    "set very low (docs/budget.md, \"Periods other than the calendar year\")",
]
DEMO_OPTIONS = ["[wet] min_coverage_fraction = 0.9:", "[wet] min_coverage_fraction",
                "[wet] period_fill = \"seasonal\"", "[budget] min_air_coverage = 0.75"]


@pytest.mark.parametrize("width", range(44, 100, 5))   # 79 among them
def test_an_option_and_its_value_stay_on_one_line(width):
    """``[section] key = value`` (a quoted value whole) is never cut across lines: a
    reader copies it into the scenario as printed.  Only the breaks move: the words are
    those of the note, and no line is longer than `width`."""
    from workbench.cli_status import console_lines, run_note_lines
    lines = run_note_lines(DEMO_MONTH_NOTES, width=width)[1:]
    assert max(len(x) for x in lines) <= width
    assert _words(" ".join(lines)) == _words(" ".join("- " + n for n in DEMO_MONTH_NOTES))
    for option in DEMO_OPTIONS:
        assert any(option in x for x in lines), (option, lines)
    assert not any(x.rstrip().endswith(("=", "[wet]", "[budget]")) for x in lines), lines
    for line in console_lines(["  " + n for n in DEMO_MONTH_NOTES], width=width):
        assert not line.rstrip().endswith(("=", "[wet]", "[budget]")), line


def test_a_monthly_run_prints_no_option_apart_from_its_value(tmp_path, capsys):
    """End to end on a monthly run: every line of the notes at most 79 characters, and
    every ``[section] key = value`` of the run's notes whole on one printed line."""
    import re
    scenario = tb._write(tmp_path)                 # weekly samples, monthly periods
    out = tmp_path / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    lines = printed.split("notes of the run")[1].splitlines()[1:]
    lines = lines[:next((i for i, x in enumerate(lines) if not x.startswith("  ")),
                        len(lines))]
    assert lines and max(len(x) for x in lines) <= 79
    notes = json.loads((out / "provenance.json").read_text())["run_notes"]
    options = re.findall(r'\[\w+\] \w+ = (?:"[^"]*"|[^\s"]+)', " ".join(notes))
    assert options
    for option in options:
        assert any(option in x for x in lines), option
