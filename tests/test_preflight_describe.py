"""``workbench check``'s periods line.  A two-month scenario at resolution "month" said
"2 month periods from ... (1 years)": the count was of the calendar years the whole-span
totals average, which the line did not say (found on an invented two-month site)."""
from types import SimpleNamespace

import pandas as pd

from workbench import preflight
from workbench.preflight import Prepared


def _describe(monkeypatch, starts, resolution, years):
    monkeypatch.setattr(preflight, "span_notes", lambda *a, **k: [])
    monkeypatch.setattr(preflight, "coverage_notes", lambda *a, **k: [])
    monkeypatch.setattr(preflight, "no_vd_sites", lambda *a, **k: {})  # reads the met
    starts = pd.to_datetime(starts)
    periods = pd.DataFrame({"start": starts[:-1], "end": starts[1:]})
    sc = SimpleNamespace(data={"period": {"resolution": resolution}}, fixed_velocity={})
    study = SimpleNamespace(inputs=None, span_notes=lambda *a: [])
    prep = Prepared(scenario=sc, study=study, periods=periods,
                    years=list(range(years)), receptors=["moorland"])
    return prep.describe().splitlines()[0]


def test_periods_line_says_what_the_year_count_is(monkeypatch):
    line = _describe(monkeypatch, ["2021-03-01", "2021-04-01", "2021-05-01"], "month", 1)
    # minutes and UTC, as the lines of the inputs (it read "2021-03-01 00:00:00")
    assert line == ("periods: 2 month periods from 2021-03-01T00:00 to 2021-05-01T00:00 "
                    "UTC; whole-span totals over 1 calendar year"), line
    assert "(1 years)" not in line
    line = _describe(monkeypatch, ["2016-01-01", "2017-01-01", "2018-01-01"], "year", 2)
    assert line.endswith("whole-span totals over 2 calendar years"), line
