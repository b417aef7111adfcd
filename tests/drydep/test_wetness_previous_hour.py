"""The rain rule of the surface wetness needs the previous hour's rain
(docs/methods_dry.md section 8).  Where it is unknown (the record's first hour, or an
hour after a missing one) this hour's rain alone decides and a dry outcome is marked
(``wetness_source`` 5); an hour whose own rain is missing stays unknown.  Wherever the
time axis is cut (dask chunks, a record starting later, site blocks), each hour must see
its true previous hour: the numbers do not depend on the chunking."""
import numpy as np
import pytest
import xarray as xr

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep import wetness as w

OPT = DryOptions(gases=("SO2",), particles=("pSO4",), wetness_rule="inferred")


def test_rain_rule_truth_table():
    # (now, before) -> wet; common practice: rain this or the previous hour
    now = np.array([0.0, 0.0, 0.4, 0.0, 0.4, np.nan, np.nan])
    before = np.array([0.0, 0.3, 0.0, np.nan, np.nan, 0.0, np.nan])
    got = w.rain_wet(now, before)
    np.testing.assert_array_equal(got, [0.0, 1.0, 1.0, 0.0, 1.0, np.nan, np.nan])
    np.testing.assert_array_equal(w.previous_unknown(now, before),
                                  [False, False, False, True, True, False, False])


def test_dry_outcome_without_previous_hour_is_marked():
    rain = w.rain_wet(np.array([0.0, 0.0, 0.5]), np.array([np.nan, 0.0, np.nan]))
    dew = np.array([0.0, 0.0, 0.0])
    assumed = w.previous_unknown(np.array([0.0, 0.0, 0.5]), np.array([np.nan, 0.0, np.nan]))
    wet, kind, src = w.wetness("inferred", rain, dew, None, assumed)
    np.testing.assert_array_equal(wet, [0.0, 0.0, 1.0])
    np.testing.assert_array_equal(kind, [0.0, 0.0, 2.0])
    np.testing.assert_array_equal(src, [5.0, 3.0, 1.0])
    assert "previous hour" in w.SOURCE[5]


@pytest.fixture(scope="module")
def case():
    surfaces = make_surfaces()
    met = make_met(surfaces, hours=24 * 6, seed=21)
    met["relative_humidity"] = xr.full_like(met["relative_humidity"], 0.5)  # no dew
    p = met["precipitation"].values
    p[:] = 0.0
    p[:, 0] = 0.0                   # the record's first hour: dry, nothing before it
    p[:, 46] = 1.2                  # rain in the last hour of a 47-hour chunk ...
    p[:, 70] = np.nan               # a missing hour: its own rain unknown ...
    p[:, 71] = 0.0                  # ... and the hour after it is dry
    met["precipitation"] = (met["precipitation"].dims, p)
    return surfaces, met


def test_first_hour_and_hour_after_gap_are_modelled(case):
    surfaces, met = case
    ds = velocities(met, surfaces, OPT)
    src, wet = ds["wetness_source"].values, ds["surface_wet"].values
    for t in (0, 71):               # previous hour's rain unknown: dry, marked
        assert (wet[..., t] == 0).all() and (src[..., t] == 5).all(), t
        assert np.isfinite(ds["vd_SO2"].values[..., t]).all(), t
        assert np.isfinite(ds["vd_pSO4"].values[..., t]).all(), t
    assert np.isnan(wet[..., 70]).all()          # own met missing: stays unknown
    assert src.dtype == np.int8 and (src[..., 70] == -1).all()     # -1: unknown
    assert np.isnan(ds["vd_SO2"].values[..., 70]).all()
    assert (wet[..., 47] == 1).all()             # rain the hour before
    assert (src == 5).sum() == 2 * src[..., 0].size


@pytest.mark.parametrize("chunk", [47, 24])
def test_chunked_in_time_equals_whole_bit_for_bit(case, chunk):
    # 47: a chunk starts the hour after the rain; 24: chunks start at midnight
    surfaces, met = case
    whole = velocities(met, surfaces, OPT)
    lazy = velocities(met.chunk({"time": chunk}), surfaces, OPT).compute()
    xr.testing.assert_identical(whole, lazy)
    assert lazy["wetness_source"].dtype == np.int8      # the lazy template's dtype too
    assert (whole["surface_wet"].values[..., 47] == 1).all()


def test_record_starting_later_equals_the_whole_record_after_its_first_hour(case):
    # a record cut at hour 47 knows no previous hour there (the rule for a first hour);
    # every later hour is the whole record's, bit for bit
    surfaces, met = case
    whole = velocities(met, surfaces, OPT)
    part = velocities(met.isel(time=slice(47, None)), surfaces, OPT)
    later = whole.isel(time=slice(48, None))
    for name in ("surface_wet", "wetness_source", "vd_SO2", "vd_pSO4"):
        np.testing.assert_array_equal(part[name].values[..., 1:], later[name].values,
                                      err_msg=name)
    assert (part["wetness_source"].values[..., 0] == 5).all()


def test_a_gap_in_the_time_axis_is_no_previous_hour(case):
    # a row left out of the time axis: the row before is two hours back, not the hour
    # before; its rain must not wet the hour after the gap (before: it did)
    surfaces, met = case
    met = met.copy(deep=True)
    p = met["precipitation"].values
    p[:, 100] = 2.0                  # rain two hours before hour 102
    p[:, 101:104] = 0.0
    met["precipitation"] = (met["precipitation"].dims, p)
    cut = met.isel(time=np.r_[0:101, 102:met.sizes["time"]])   # hour 101 left out
    for m in (cut, cut.chunk({"time": 30})):
        ds = velocities(m, surfaces, OPT).compute()
        t = int(np.flatnonzero(ds["time"].values == met["time"].values[102])[0])
        assert (ds["surface_wet"].values[..., t] == 0).all()
        assert (ds["wetness_source"].values[..., t] == 5).all()
        assert (ds["surface_wet"].values[..., t - 1] == 1).all()   # the rain's own hour
