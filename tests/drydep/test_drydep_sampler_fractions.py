"""Coarse fraction of a particle species per sampler (`[dry] sampler_coarse_fraction`):
the hours of that sampler's rows take its fraction, every other hour the site's rule."""
import numpy as np
import pandas as pd
import pytest
import xarray as xr

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, particle_fractions, velocities


def _air(rows):
    df = pd.DataFrame(rows, columns=["site", "start", "end", "sampler_id", "pNO3"])
    ds = xr.Dataset({c: ("period", df[c].to_numpy()) for c in ("site", "sampler_id", "pNO3")})
    for c in ("start", "end"):
        ds[c] = ("period", pd.to_datetime(df[c]).to_numpy())
    ds["pNO3_censored"] = ("period", np.zeros(len(df), bool))
    return ds


def test_option_is_checked():
    with pytest.raises(ValueError, match="<site>/<sampler_id>"):
        DryOptions(sampler_coarse_fraction={"pm10": {"pNO3": 0.3}})
    with pytest.raises(ValueError, match="fraction 0-1"):
        DryOptions(sampler_coarse_fraction={"a/pm10": {"pNO3": 1.3}})
    with pytest.raises(ValueError, match="particle species"):
        DryOptions(sampler_coarse_fraction={"a/pm10": {"NO3": 0.3}})


def test_rows_of_a_sampler_set_its_hours():
    times = pd.date_range("2021-01-01T01:00", periods=72, freq="h").to_numpy()
    air = _air([("a", "2021-01-01T00:00", "2021-01-02T00:00", "tsp", 1.0),
                ("a", "2021-01-02T00:00", "2021-01-03T00:00", "pm25", 1.0),
                ("b", "2021-01-01T00:00", "2021-01-04T00:00", "pm25", 1.0)])
    opt = DryOptions(sampler_coarse_fraction={"a/pm25": {"pNO3": 0.0}, "a/tsp": {"pNO3": 0.6}})
    got = particle_fractions.hourly_sampler_fractions(air, times, ["a", "b"], opt)
    assert set(got) == {"pNO3"}
    f = got["pNO3"]
    np.testing.assert_array_equal(f[0, :24], 0.6)
    np.testing.assert_array_equal(f[0, 24:48], 0.0)
    assert np.isnan(f[0, 48:]).all() and np.isnan(f[1]).all()     # b's sampler not named
    assert particle_fractions.hourly_sampler_fractions(air, times, ["a"], DryOptions()) == {}


def test_engine_uses_the_samplers_fraction_in_its_hours():
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 6, seed=3)
    n_s, n_t = met.sizes["site"], met.sizes["time"]
    hourly = np.full((n_s, n_t), np.nan)
    hourly[0, 48:96] = 0.7                                 # one site, two days
    opt = DryOptions(gases=(), particles=("pNO3",))
    with_sampler = velocities(met.assign(coarse_fraction_pNO3=(("site", "time"), hourly)),
                              surf, opt)
    default = velocities(met, surf, opt)
    site_07 = velocities(met, surf.assign(coarse_fraction_pNO3=(
        "site", np.array([0.7] + [np.nan] * (n_s - 1)))), opt)
    vd = with_sampler["vd_pNO3"].values
    np.testing.assert_allclose(vd[0, :, 48:96], site_07["vd_pNO3"].values[0, :, 48:96],
                               rtol=1e-12)
    np.testing.assert_array_equal(vd[0, :, :48], default["vd_pNO3"].values[0, :, :48])
    np.testing.assert_array_equal(vd[1:], default["vd_pNO3"].values[1:])
    assert (vd[0, :, 48:96] > default["vd_pNO3"].values[0, :, 48:96]).all()   # 0.7 > 0.2
    assert "sampler_coarse_fraction" in with_sampler["vd_pNO3"].attrs["coarse_fraction_source"]
