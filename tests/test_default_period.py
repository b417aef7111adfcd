"""The default reporting span (a scenario without ``[period] start`` or ``end``): the
calendar years of the record, without a year it reaches into by a few days only.

Before (b2c1625) the default end was the end of the last sample: the invented Haddermoor
network's last weekly sample (and its hourly air and met) ran to 2022-01-04, and 2022
became a period of its own in budget.csv, summary.csv, exceedance.csv, report.html and
the network overview (flagged, but a year a scientist reads as one of the record).  Now
every output stops at 2022-01-01 and the run notes say which days were left out, why,
and how to keep them.
"""
from __future__ import annotations

import json
import warnings

import numpy as np
import pandas as pd
import pytest

from haddermoor_net import make_haddermoor
from workbench.periods import EDGE_YEAR_DAYS, default_span, excluded_record_notes


def _d(text):
    return np.datetime64(text, "ns")


def _days(span):
    return tuple(str(t)[:16] for t in span)


@pytest.mark.parametrize("record, expected", [
    # the tail of the last weekly sample (and of hourly air) into a new year: left out
    (("2021-10-05T09:00", "2022-01-04T10:00"), ("2021-10-05T09:00", "2022-01-01T00:00")),
    # the head of a first sample begun on 29 December: left out
    (("2015-12-29T14:00", "2023-12-28T14:00"), ("2016-01-01T00:00", "2023-12-28T14:00")),
    # a sample ending at midnight of 1 January ends in the year before: nothing to cut
    (("2016-01-07T14:00", "2024-01-01T00:00"), ("2016-01-07T14:00", "2024-01-01T00:00")),
    # a site closed in June: a partial year, kept (completeness flags it)
    (("2016-01-07T14:00", "2021-06-30T00:00"), ("2016-01-07T14:00", "2021-06-30T00:00")),
    # one sample over New Year: no year of its own on either side, the whole span stays
    (("2021-12-28T00:00", "2022-01-04T00:00"), ("2021-12-28T00:00", "2022-01-04T00:00")),
])
def test_default_span_leaves_out_a_few_days_year(record, expected):
    assert _days(default_span(_d(record[0]), _d(record[1]))) == expected


def test_the_edge_is_a_month():
    """EDGE_YEAR_DAYS (a month, our choice) decides: 31 days into a year are cut, 32
    days are a partial year that stays."""
    assert EDGE_YEAR_DAYS == 31
    s = _d("2021-03-01")
    assert _days(default_span(s, _d("2022-02-01")))[1] == "2022-01-01T00:00"
    assert _days(default_span(s, _d("2022-02-02")))[1] == "2022-02-02T00:00"


def test_notes_say_the_days_left_out_and_how_to_keep_them():
    notes = excluded_record_notes(_d("2015-12-29"), _d("2022-01-04T10:00"))
    assert len(notes) == 2
    assert notes[0].startswith("period: the default [period] end is 2022-01-01: the record "
                               "reaches 3.4 days into 2022 (to 2022-01-04T10:00 UTC")
    assert 'give [period] end = "2023-01-01" to keep them' in notes[0]
    assert 'give [period] start = "2015-01-01" to keep them' in notes[1]
    # a start given in the scenario: no note of the default start
    assert len(excluded_record_notes(_d("2015-12-29"), _d("2022-01-04"), use_start=False)) == 1
    assert excluded_record_notes(_d("2016-01-07"), _d("2023-12-28")) == []


@pytest.fixture(scope="module")
def tail_run(tmp_path_factory):
    """(scenario, run folder, result, study): the Haddermoor network from 2021-10-05,
    13 weeks (to 2022-01-04), no [period] start or end."""
    from workbench.cli import run_scenario
    root = tmp_path_factory.mktemp("tail")
    scenario = make_haddermoor(root, start="2021-10-05T09:00", weeks=13, period=False)
    out = root / "run"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        _, result, study = run_scenario(scenario, out, quiet=True)
    return scenario, out, result, study


def test_no_output_holds_the_few_days_year(tail_run):
    _, out, result, study = tail_run
    assert study.record_span()[1] > _d("2022-01-04")          # the record does reach 2022
    for name in ("budget.csv", "summary.csv", "exceedance.csv", "precipitation_annual.csv"):
        frame = pd.read_csv(out / name, dtype={"period": str})
        col = "period" if "period" in frame else "year"
        periods = set(frame[col].astype(str)) - {"span"}
        assert periods == {"2021"}, (name, periods)
    budget = pd.read_csv(out / "budget.csv")
    assert budget["period_end"].max() == "2022-01-01T00:00"
    assert [str(p) for p in result.years["period"].values] == ["2021"]


def test_the_left_out_days_are_said_in_every_record_of_the_run(tail_run, capsys):
    from workbench.cli import main, run_span_notes
    scenario, out, result, study = tail_run
    said = "the default [period] end is 2022-01-01: the record reaches 3.4 days into 2022"
    assert any(said in n for n in result.notes)
    prov = json.loads((out / "provenance.json").read_text())
    assert any(said in n for n in prov["run_notes"])
    assert said in (out / "report.html").read_text(encoding="utf-8")
    assert any(said in line for line in run_span_notes(scenario, result.table, None, study))
    assert main(["check", str(scenario), "--quiet"]) == 0
    printed = " ".join(capsys.readouterr().out.split())  # the words, lines unwrapped (console_lines)
    assert "periods: 1 year period from 2021-01-01" in printed
    assert "note: " + said in printed


def test_blocks_take_the_same_default(tail_run):
    """A run in blocks of sites builds its periods from the same default span and says
    the same note (workbench.blocks.run_blocks)."""
    from workbench.blocks import run_blocks
    scenario, _, result, study = tail_run
    from workbench.scenario import load_scenario
    o = load_scenario(scenario).options
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        blocks = run_blocks(study, o["wet"], o["dry"], o["budget"], block_sites=1, threads=1)
    assert [str(p) for p in blocks.years["period"].values] == ["2021"]
    assert [n for n in blocks.notes if "default [period]" in n] == \
        [n for n in result.notes if "default [period]" in n]


def test_the_apps_years_follow_the_default_span(tail_run):
    """The apps' years (Session.years: the network overview, the explorers' year
    controls) stop with the default span too."""
    from workbench.ui.session import Session
    scenario = tail_run[0]
    assert Session.open(scenario).years == (2021, 2021)
