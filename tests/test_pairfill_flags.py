"""A pair not computed, in an integer flag variable with an "unknown" flag (CF 1.8
section 3.5: ``flag_values`` paired in order with the words of ``flag_meanings``), holds
that flag's value: ``wetness_source`` is int8 in memory with -1 unknown, and 0 is a real
code there ("met file").  The generic fill of an integer (0) would have said "met file"
for a receptor a block does not have; an outer ``xr.concat`` would have made the int8
codes float with NaN."""
import numpy as np
import xarray as xr

from workbench.blockreduce import _assembled, _concat, _on_receptors, _reindexed
from workbench.drydep.wetness import source_attrs, source_codes
from workbench.pairfill import fill_value

ATTRS = {"units": "1", "long_name": "source of the wetness", **source_attrs()}


def _block(sites, receptors, value):
    codes = np.full((len(sites), len(receptors), 3), value, np.int8)
    return xr.Dataset({"wetness_source": (("site", "receptor", "time"), codes, ATTRS),
                       "vd_SO2": (("site", "receptor", "time"),
                                  np.ones(codes.shape), {"units": "m s-1"})},
                      coords={"site": list(sites), "receptor": list(receptors),
                              "time": np.arange(3)})


def test_fill_value_of_a_flag_variable_is_its_unknown_code():
    assert fill_value(np.int8, ATTRS) == -1
    assert fill_value(np.int8) == 0 and fill_value(np.int8, {"units": "1"}) == 0
    assert np.isnan(fill_value(np.float64, ATTRS))


def test_source_codes_int8_with_minus_one_for_unknown():
    got = source_codes(np.array([0.0, np.nan, 5.0]))
    assert got.dtype == np.int8 and got.tolist() == [0, -1, 5]
    assert source_codes(got) is not got and source_codes(got).tolist() == [0, -1, 5]
    da = source_codes(xr.DataArray([np.nan, 2.0]).chunk())         # dask-backed stays lazy
    assert da.dtype == np.int8 and da.compute().values.tolist() == [-1, 2]


def test_blocks_on_the_network_receptors_keep_int8_and_fill_minus_one():
    receptors = ["grass", "lake", "forest"]
    a, b = _block(["s1"], ["grass"], 3), _block(["s2"], ["lake", "forest"], 0)
    for way in (_on_receptors, _reindexed):
        got = way(a, receptors)["wetness_source"]
        assert got.dtype == np.int8, way
        assert (got.sel(receptor=["lake", "forest"]).values == -1).all(), way
        assert (got.sel(receptor="grass").values == 3).all(), way
    whole = _assembled([a, b], receptors, ["s1", "s2"])["wetness_source"]
    assert whole.dtype == np.int8
    assert (whole.sel(site="s1", receptor="lake").values == -1).all()
    assert (whole.sel(site="s2", receptor="lake").values == 0).all()   # a real 0 stays


def test_outer_concat_keeps_int8_and_fills_minus_one():
    # the xarray way of _concat (blocks of another layout; "outer" along sample):
    # int8 with a missing label became float64 with NaN
    a = _block(["s1"], ["grass"], 2).rename(site="sample")
    b = _block(["s2"], ["grass"], 1).rename(site="sample").assign_coords(time=[1, 2, 3])
    got = _concat([a, b], "sample")["wetness_source"]
    assert got.dtype == np.int8
    assert (got.sel(sample="s1", time=3).values == -1).all()
    assert (got.sel(sample="s2", time=0).values == -1).all()
