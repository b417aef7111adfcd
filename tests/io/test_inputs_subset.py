"""`Inputs.subset` cuts the met time axis with a slice when the kept hours are consecutive.

The reference is the index path it replaced (the sites, then every kept hour by its
position); the met is the invented demo network's, read into memory and kept in its
on-disk store (workbench.io.metstore).  The Datasets must be identical, values and
attributes, and a met store must be read with a slice of hours (no index of every hour).
"""
from __future__ import annotations

import numpy as np
import pytest
import xarray as xr

import workbench.io.metstore as metstore
from ui.demo_subset import write_demo_subset
from workbench.io.inputs import _hours
from workbench.io.metstore import is_lazy
from workbench.scenario import load_scenario, load_scenario_inputs

SPANS = [(None, None), ("2020-03-01", "2021-02-01"), ("2020-03-01T05:30", None),
         (None, "2020-01-01"), ("2019-01-01", "2019-06-01")]     # the last: no hour


@pytest.fixture(scope="module")
def scenario(tmp_path_factory):
    return load_scenario(write_demo_subset(tmp_path_factory.mktemp("subset"),
                                           ("ridge", "mere", "fell"), 2020, 2021))


def reference_met(met, keep, start, end):
    """The met of `keep` in (start, end] as the index path cut it."""
    met = met.sel(site=[s for s in keep if s in met["site"].values])
    tsel = np.ones(met.sizes["time"], bool)
    if start is not None:
        tsel &= met["time"].values > np.datetime64(start, "ns")
    if end is not None:
        tsel &= met["time"].values <= np.datetime64(end, "ns")
    return met.isel(time=np.flatnonzero(tsel))


@pytest.mark.parametrize("lazy", [False, True])
def test_subset_met_equals_the_index_path(scenario, lazy, monkeypatch):
    if lazy:
        monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    inputs = load_scenario_inputs(scenario)
    assert is_lazy(inputs.met) == lazy
    reads = []
    read = metstore.StoreArray.__getitem__       # the key before xarray decomposes it
    monkeypatch.setattr(metstore.StoreArray, "__getitem__",
                        lambda self, key: reads.append(key.tuple) or read(self, key))
    for keep in (["mere", "ridge"], ["fell"], ["ridge", "mere", "fell"]):
        for start, end in SPANS:
            got = inputs.subset(keep, start, end)
            ref = reference_met(inputs.met, keep, start, end)
            assert got.met.sizes["site"] == len(keep)
            if start == "2019-01-01":
                assert got.met.sizes["time"] == 0
            reads.clear()
            got_met = got.met.load()
            if lazy:                    # the hours asked as a slice, not by position
                assert reads and all(isinstance(key[1], slice) for key in reads), reads
            else:
                assert not reads
            xr.testing.assert_identical(got_met, ref.load())
            for name in got.met.data_vars:
                assert got.met[name].values.flags["C_CONTIGUOUS"], name
            assert list(got.catalogue.ids) == keep


def test_hours_keeps_the_index_path_when_not_consecutive():
    t = np.array(["2020-01-01T03", "2020-01-01T01", "2020-01-01T02", "2020-01-01T04"],
                 dtype="datetime64[ns]")
    got = _hours(t, np.datetime64("2020-01-01T01", "ns"), np.datetime64("2020-01-01T03", "ns"))
    np.testing.assert_array_equal(got, [0, 2])          # hours 03 and 02, not a slice
    assert _hours(t[[1, 2, 0, 3]], t[1], t[0]) == slice(1, 3)
    assert _hours(t, np.datetime64("2021-01-01", "ns")) == slice(0, 0)
    assert _hours(t) == slice(None)


def test_subset_of_an_unsorted_time_axis_equals_the_index_path(scenario):
    inputs = load_scenario_inputs(scenario)
    met = inputs.met.isel(time=np.r_[24:48, 0:24, 48:96])      # not sorted
    import dataclasses
    shuffled = dataclasses.replace(inputs, met=met)
    t = inputs.met["time"].values
    start, end = t[10], t[40]                    # kept hours at positions 0-16 and 35-39
    got = shuffled.subset(["mere"], start, end)
    assert not isinstance(_hours(met["time"].values, start, end), slice)
    assert got.met.sizes["time"] == 30
    xr.testing.assert_identical(got.met, reference_met(met, ["mere"], start, end))
