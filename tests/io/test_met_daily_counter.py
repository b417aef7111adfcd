"""Hourly met precipitation written as a gauge counter restarted each day (the day's
running total, back to 0 at midnight) is named and masked (workbench/io/metcounter.py).
Before, one demo site of four was masked as `looks cumulative` and at the others the
gauge comparison flagged 1,236 samples while the met's values stayed in use."""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.io import load_inputs, read_met, read_sites

from tiny_inputs import ledger_reasons

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
COL = "precipitation [mm]"


def _daily_counter(met, start_h=0):
    """The day's running total, restarted at `start_h` (file's clock: labels end the hour)."""
    day = (pd.to_datetime(met["time"]) - pd.Timedelta(hours=start_h, minutes=1)).dt.floor("D")
    out = met.copy()
    out[COL] = met.groupby([met["site"], day])[COL].cumsum().round(1)
    return out


def _write(path, met):
    path.write_text("# time_label: end\n" + met.to_csv(index=False))
    return path


@pytest.fixture(scope="module")
def demo_met():
    return pd.read_csv(DEMO / "met.csv.gz", comment="#")


@pytest.mark.parametrize("start_h", [0, 9])
def test_daily_counter_named_and_masked(tmp_path, demo_met, start_h):
    met = demo_met[demo_met["time"] < "2016-04-01"].reset_index(drop=True)
    ds, led = read_met(_write(tmp_path / "met.csv", _daily_counter(met, start_h)),
                       read_sites(DEMO / "sites.toml"))
    reasons = [r for r in ledger_reasons(led) if "precipitation" in r]
    assert len(reasons) == 4                                   # one per site
    for site in ("ridge", "fell", "mere", "farm"):
        (r,) = [x for x in reasons if f"at site {site}" in x]
        assert r.startswith("column precipitation [mm] at site")
        assert "restarted each day" in r and r.endswith("(masked)")
        assert f"the hour ending {(start_h + 1) % 24:02d}:00" in r
    assert not any("looks cumulative" in r for r in reasons)
    assert np.isnan(ds["precipitation"].values).all()          # excluded, not differenced


def test_hourly_amounts_pass(tmp_path, demo_met):
    met = demo_met[demo_met["time"] < "2016-04-01"].reset_index(drop=True)
    _, led = read_met(_write(tmp_path / "met.csv", met), read_sites(DEMO / "sites.toml"))
    assert not [r for r in ledger_reasons(led) if "precipitation" in r]


def test_gauge_comparison_no_longer_judges_the_counter(tmp_path, demo_met):
    # the whole demo: before, 1,236 samples got the gauge comparison's flag
    met = _write(tmp_path / "met.csv", _daily_counter(demo_met))
    inp = load_inputs(DEMO / "sites.toml", precipitation=DEMO / "precipitation.csv", met=met)
    reasons = ledger_reasons(inp.ledger)
    assert not [r for r in reasons if "far from the gauge depth" in r]
    assert len([r for r in reasons if "restarted each day" in r]) == 4


def test_a_days_total_in_one_hour_is_not_named_a_counter(tmp_path, demo_met):
    # each day's total written at 09:00 only, 0 in the other hours: its falls come at one
    # hour too (10:00), but from a lone value, not from a total held for hours
    met = demo_met[demo_met["time"] < "2016-04-01"].reset_index(drop=True)
    t = pd.to_datetime(met["time"])
    day = (t - pd.Timedelta(hours=9, minutes=1)).dt.floor("D")
    total = met.groupby([met["site"], day])[COL].transform("sum").round(1)
    met[COL] = np.where(t.dt.hour == 9, total, 0.0)
    _, led = read_met(_write(tmp_path / "met.csv", met), read_sites(DEMO / "sites.toml"))
    assert not [r for r in ledger_reasons(led) if "restarted each day" in r]
