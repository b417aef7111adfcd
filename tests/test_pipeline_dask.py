"""A study on dask-backed (chunked) met: the same numbers, the engine run once.

Before, every stage that read the velocities re-ran the whole chunked engine (21 task
graph computations for a site-year, 35x the time of the numpy run).
"""
import dataclasses
import warnings
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("dask")

from workbench.pipeline import Study  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_data" / "scenario.toml"


def test_chunked_met_gives_the_numbers_of_in_memory_met_with_one_engine_run():
    from dask.callbacks import Callback

    import workbench.drydep.core as core
    from workbench.scenario import load_scenario
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        whole = Study.from_scenario(load_scenario(DEMO))
    inputs = whole.inputs.subset(["ridge"], np.datetime64("2021-01-01"),
                                 np.datetime64("2021-05-01"))
    plain = Study(inputs, whole.site_overrides)
    lazy = Study(dataclasses.replace(inputs, met=inputs.met.chunk({"time": 24 * 30})),
                 whole.site_overrides)
    runs = {"hourly": 0}
    real = core._hourly

    def counting(*args, **kwargs):
        runs["hourly"] += 1
        return real(*args, **kwargs)

    class Computes(Callback):
        n = 0

        def _start(self, dsk):
            Computes.n += 1

    a = plain.run(start="2021-01-01", end="2021-05-01", resolution="month")
    core._hourly, runs["hourly"] = counting, 0
    try:
        with Computes(), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            b = lazy.run(start="2021-01-01", end="2021-05-01", resolution="month")
    finally:
        core._hourly = real
    n_chunks = len(lazy.inputs.met.chunks["time"])
    assert runs["hourly"] <= n_chunks + 1        # each chunk once (+ the template probe)
    assert not b.velocities.chunks                # computed once, held by the stage
    ta, tb = a.table, b.table
    num = ta.select_dtypes("number").columns
    np.testing.assert_allclose(tb[num].to_numpy(float), ta[num].to_numpy(float),
                               rtol=1e-12, equal_nan=True)
    assert (ta["status"] == tb["status"]).all()
