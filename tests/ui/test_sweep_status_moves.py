"""A sweep whose numbers stay but whose status moves says so.

Seen in JupyterLab + chromium (sensitivity notebook, demo, ridge 2023, "completeness:
gauge record [share]" from 0.5 to 1): the point at 1 was drawn open (the totals flagged
there), yet the line under the controls said "no effect over the sweep on the totals of
this site and these years", and the table's headings said "(flagged)" of every column
without saying at which value.  Expected values from the session's own sweep (the
statuses of docs/budget.md).
"""
import warnings

import pytest


@pytest.fixture(scope="module")
def app(tmp_path_factory):
    from ui.demo_subset import write_demo_subset
    from workbench.ui.apps_more import SensitivityExplorer
    from workbench.ui.session import Session
    scenario = write_demo_subset(tmp_path_factory.mktemp("ridge_2023"), ("ridge",), 2023, 2023)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SensitivityExplorer(Session.open(scenario), site="ridge",
                                   key="wet.min_gauge_fraction")


def test_a_status_that_moves_is_not_called_no_effect(app):
    import numpy as np
    app.range_w.value = (0.5, 1.0)
    app.run_w.click()
    t = app.table
    totals = t[t["total"].str.endswith("_total")]
    rates = totals.pivot_table(index="value", columns="total", values="rate")
    assert np.ptp(rates.to_numpy(), axis=0).max() == 0, "the demo's numbers stay"
    statuses = totals.groupby("value")["status"].agg(lambda s: tuple(sorted(set(s))))
    assert statuses.nunique() > 1, statuses          # the case seen: the status moves
    note = app.note_w.value
    assert "no effect" not in note, note
    assert "status changes" in note and "at 1" in note
    assert "status of the totals" in app.table_w.value
    odd = [v for v, st in statuses.items() if st != statuses.mode().iloc[0]]
    for v in odd:
        assert f"at {v:g}" in note


def test_sweep_statuses_words():
    import pandas as pd

    from workbench.ui.apps_more import sweep_statuses
    t = pd.DataFrame({"value": [1, 1, 1, 2, 2, 2],
                      "total": ["S_total", "N_total", "S_wet"] * 2,
                      "status": ["complete", "filled", "partial",
                                 "flagged", "complete", "complete"]})
    got = sweep_statuses(t)
    assert got.to_dict() == {1: "filled", 2: "S total flagged"}


def test_the_sweep_table_scrolls_in_the_column(app):
    """Seen with the status column added, 1,000 px window, file browser open: the
    table's last column was cut at the right (the table's least width widened its
    widget past the column, as the network's trend table did)."""
    import re
    app.run_w.click()
    style = re.search(r"<div style='([^']*overflow:auto[^']*)'>", app.table_w.value).group(1)
    assert "width:0;min-width:100%;" in style
