"""A gauge depth written as the gauge's running total (a bucket or counter read and not
emptied between samples) instead of each sample's own depth (docs/data_formats.md, "A
seventh audit"; workbench/io/gaugetotal.py).  Invented site "alpha" of tiny_inputs.

Before, the totals were read as the samples' depths: the wet deposition of the year
many times too high, without a word.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.io import read_precipitation, read_sites

HEAD = ("site,start,end,sampler_id,gauge_depth [mm],sample_depth [mm],pH,"
        "SO4 [mg/L],NO3_as_N [mg/L],NH4 [ueq/L],Cl [mg/L],Na [mg/L],flags\n")


def _weekly_depths(n, seed=3):
    rng = np.random.default_rng(seed)
    return np.round(np.where(rng.random(n) < 0.3, 0.0, rng.gamma(0.8, 18.0, n)), 1)


def _precip(gauge, sample):
    t = pd.date_range("2020-01-07T09:00", periods=len(gauge) + 1, freq="7D")
    chem = ["4.8,1.5,0.3,25.0,1.0,0.6," if s > 0 else ",,,,,," for s in sample]
    rows = [f"alpha,{t[i]:%Y-%m-%dT%H:%M},{t[i + 1]:%Y-%m-%dT%H:%M},w1,{g:.1f},{s:.1f},{c}"
            for i, (g, s, c) in enumerate(zip(gauge, sample, chem))]
    return HEAD + "\n".join(rows) + "\n"


@pytest.mark.parametrize("empty_at", [None, 150.0])
def test_a_gauge_running_total_is_masked_with_its_reason(write, cat, empty_at):
    depth = _weekly_depths(30)
    total = np.cumsum(depth) if empty_at is None else np.cumsum(depth) % empty_at
    ds, led = read_precipitation(write("p.csv", _precip(total, depth * 0.9)), cat)
    # before: gauge_depth read as written, up to the whole record's sum in one week
    assert np.isnan(ds["gauge_depth"].values).all()
    assert np.allclose(ds["sample_depth"].values, np.round(depth * 0.9, 1))  # as read
    note = [n for n in led.notes if "running total" in n]
    assert len(note) == 1 and note[0].startswith(
        "p.csv: gauge_depth at site 'alpha', sampler 'w1' looks like the gauge's running "
        "total, not each sample's own depth: it rises from one sample to the next ") and \
        note[0].endswith(": 30 samples masked (lines 2-31)"), led.notes
    why = led.table["reason"]
    assert why.str.contains("looks like the gauge's running total").all()
    assert why.str.contains(r"\(masked\); gauge depth missing").all()


def test_separate_depths_are_not_judged_a_running_total(write, cat):
    depth = _weekly_depths(30)
    ds, led = read_precipitation(write("p.csv", _precip(depth, depth * 0.9)), cat)
    assert np.allclose(ds["gauge_depth"].values, depth)
    assert not [n for n in led.notes if "running total" in n]


def test_the_demo_network_has_no_running_total():
    root = Path(__file__).resolve().parents[2] / "demo_data"
    ds, led = read_precipitation(root / "precipitation.csv", read_sites(root / "sites.toml"))
    assert not [n for n in led.notes if "running total" in n]
    assert np.isfinite(ds["gauge_depth"].values).mean() > 0.9


def test_no_false_alarm_on_invented_records_and_running_totals_found():
    # the measurement of the module docstring on fewer records: weekly depths of a
    # gamma distribution (shape 0.8), 0-85 % dry weeks, a seasonal cycle up to 90 %;
    # each record a sampler of its own in one call
    from workbench.io.gaugetotal import running_totals
    rng = np.random.default_rng(11)
    depth, total, sampler, start, wanted = [], [], [], [], set()
    for n in (12, 26, 52, 156):
        for dry in (0.0, 0.3, 0.6, 0.85):
            for season in (0.0, 0.9):
                for k in range(10):
                    t = np.arange(n)
                    mean = 15 * (1 + season * np.sin(2 * np.pi * t / 52))
                    g = np.round(np.where(rng.random(n) < dry, 0.0,
                                          rng.gamma(0.8, mean / 0.8)), 1)
                    name = f"{n}-{dry}-{season}-{k}"
                    depth.append(g)
                    total.append(np.cumsum(g) % 200.0)
                    sampler.append(np.full(n, name))
                    start.append(t.astype("datetime64[W]"))
                    # enough wet weeks for 10 rises: the docstring's "all found"
                    if (n >= 26 and dry <= 0.3) or (n >= 52 and dry <= 0.6) or n >= 156:
                        wanted.add(name)
    sampler, start = np.concatenate(sampler), np.concatenate(start)
    site, lines = np.full(len(sampler), "a"), np.arange(len(sampler)) + 2
    judged = running_totals("p.csv", site, sampler, start, np.concatenate(depth), lines)[0]
    assert not judged.any()
    found = running_totals("p.csv", site, sampler, start, np.concatenate(total), lines)[0]
    assert set(sampler[found]) >= wanted and len(wanted) == 180


def test_a_short_record_is_not_judged(write, cat):
    depth = _weekly_depths(9) + 1.0
    ds, led = read_precipitation(write("p.csv", _precip(np.cumsum(depth), depth)), cat)
    assert np.isfinite(ds["gauge_depth"].values).all()
