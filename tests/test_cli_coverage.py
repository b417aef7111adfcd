"""A reporting span the inputs do not cover: `check` and `run` say so, and `run` ends
with the status counts of its budgets (before, a span of years without any data wrote
twelve files of missing budgets and printed only their names)."""
import numpy as np
import pandas as pd

from workbench.cli import main, status_lines
from workbench.preflight import coverage_notes, input_spans
from workbench.io import load_inputs

import test_budget as tb


def _span(path, start, end, resolution="month"):
    text = path.read_text()
    text = text.replace('start = "2021-02-01"', f'start = "{start}"')
    text = text.replace('end = "2021-03-01"', f'end = "{end}"')
    text = text.replace('resolution = "month"', f'resolution = "{resolution}"')
    path.write_text(text)
    return path


def test_check_warns_when_the_span_holds_none_of_the_inputs(tmp_path, capsys):
    sc = _span(tb._write(tmp_path), "2019-01-01", "2020-01-01", "year")
    assert main(["check", str(sc), "--quiet"]) == 0
    out = " ".join(capsys.readouterr().out.split())  # the words, lines unwrapped (console_lines)
    for role in ("precipitation", "air", "met"):
        assert (f"warning: the reporting span 2019-01-01 to 2020-01-01 holds none of the "
                f"{role} (") in out
    assert out.rstrip().endswith("the scenario can be run, but every budget would be "
                                 "missing (above)")


def test_run_says_every_budget_is_missing(tmp_path, capsys):
    sc = _span(tb._write(tmp_path), "2019-01-01", "2020-01-01", "year")
    assert main(["run", str(sc), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "budgets per site, receptor and period (total, summary.csv): " in out
    # alpha, one surface (the counts wrapped for an 80-column terminal: read their words)
    assert "summary.csv): S: 1 missing; N: 1 missing" in " ".join(out.split())
    assert "warning: every budget is missing" in out
    assert "holds none of the met" in out


def test_partly_covered_span_gets_a_note_and_the_counts(tmp_path, capsys):
    sc = _span(tb._write(tmp_path), "2020-10-01", "2021-03-01")
    assert main(["check", str(sc), "--quiet"]) == 0
    out = " ".join(capsys.readouterr().out.split())  # the words, lines unwrapped (console_lines)
    assert "note: the met covers 2021-02-01 to 2021-03-01 UTC: periods before 2021-02-01 " \
        "lack it" in out
    assert out.rstrip().endswith("the scenario can be run")
    assert main(["run", str(sc), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "missing" in out and "warning: every budget is missing" not in out


def test_covered_span_has_no_note(tmp_path, capsys):
    sc = tb._write(tmp_path)
    assert main(["check", str(sc), "--quiet"]) == 0
    out = " ".join(capsys.readouterr().out.split())  # the words, lines unwrapped (console_lines)
    assert "warning:" not in out and "note: the" not in out


def test_coverage_notes_by_hand(tmp_path):
    """The spans: samples from the first start to the last end; met from the start of
    its first hour (the first label is the end of an hour) to its last label."""
    tb._write(tmp_path)
    from workbench.scenario import load_scenario
    sc = load_scenario(tmp_path / "scenario.toml")
    inputs = load_inputs(**{k: v for k, v in sc.input_paths().items()})
    spans = input_spans(inputs)
    assert spans["met"][0] == np.datetime64("2021-02-01T00:00")
    assert spans["met"][1] == np.datetime64("2021-03-01T00:00")
    assert coverage_notes(inputs, "2021-02-01", "2021-03-01") == []
    # 31 days of slack: a span ending 30 days after the met is no note, 40 days is
    assert not [n for n in coverage_notes(inputs, "2021-02-01", "2021-03-31") if "met" in n]
    assert [n for n in coverage_notes(inputs, "2021-02-01", "2021-04-10") if "met" in n]


def test_status_lines_count_each_element():
    t = pd.DataFrame({"period": ["2021", "2022", "span", "2021", "2022"],
                      "species": "all", "pathway": "total",
                      "element": ["S", "S", "S", "N", "N"],
                      "status": ["complete", "missing", "complete", "partial", "partial"]})
    assert status_lines(t, None) == [
        "budgets per site, receptor and period (total, summary.csv): S: 1 complete, "
        "1 missing; N: 2 partial"]
    t["element"] = t["element"].map({"S": "N", "N": "S"})          # S first, always
    assert status_lines(t, None)[0].endswith("S: 2 partial; N: 1 complete, 1 missing")
