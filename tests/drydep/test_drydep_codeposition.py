"""SO2-NH3 co-deposition (`[dry] so2_codeposition`): the published relation, its use by
both gas schemes, and the hourly NH3/SO2 ratio taken from the sampling periods.

Reference values: R_ns(SO2) = 11.84 exp(1.1 a_SN) RH^-1.67, a_SN = SO2/NH3 molar,
bounded to 10-1000 s/m (Simpson et al. 2012, Atmos. Chem. Phys. 12, 7825, after Fowler
et al. 2001; coefficients from memory, as in the module).  The expected numbers below
are that formula worked by hand.
"""
import dataclasses
import math

import numpy as np
import pandas as pd
import pytest
import xarray as xr

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, codeposition, velocities


@pytest.mark.parametrize("ratio, rh, expected", [
    (1.0, 0.8, 11.84 * math.exp(1.1) * 0.8 ** -1.67),       # 51.63 s/m
    (2.0, 0.9, 11.84 * math.exp(0.55) * 0.9 ** -1.67),      # 24.47 s/m
    (0.5, 0.7, 11.84 * math.exp(2.2) * 0.7 ** -1.67),       # 193.9 s/m
    (5.0, 0.6, 11.84 * math.exp(0.22) * 0.6 ** -1.67),      # 34.2 s/m
])
def test_rns_formula_values_simpson2012(ratio, rh, expected):
    got = float(codeposition.nonstomatal_resistance(ratio, rh))
    assert got == pytest.approx(expected, rel=1e-12)
    assert 10.0 < got < 1000.0


def test_rns_bounds_and_limits():
    # no NH3: a_SN infinite -> the upper bound; no SO2 (ratio inf) at RH 1 -> 11.84
    assert float(codeposition.nonstomatal_resistance(0.0, 0.8)) == 1000.0
    assert float(codeposition.nonstomatal_resistance(0.1, 0.8)) == 1000.0   # e^11 above
    assert float(codeposition.nonstomatal_resistance(np.inf, 1.0)) == pytest.approx(11.84)
    assert np.isnan(codeposition.nonstomatal_resistance(np.nan, 0.8))
    assert np.isnan(codeposition.nonstomatal_resistance(1.0, np.nan))


def test_rns_falls_monotonically_with_the_ratio():
    ratio = np.geomspace(0.05, 100.0, 400)
    for rh in (0.4, 0.7, 0.95):
        r = codeposition.nonstomatal_resistance(ratio, rh)
        assert np.all(np.diff(r) <= 0.0)
        inside = (r > 10.0) & (r < 1000.0)
        assert inside.sum() > 100 and np.all(np.diff(r[inside]) < 0.0)
    # and with humidity at a fixed ratio
    r_rh = codeposition.nonstomatal_resistance(1.0, np.linspace(0.3, 1.0, 50))
    assert np.all(np.diff(r_rh) < 0.0)


@pytest.fixture(scope="module")
def synthetic():
    surf = make_surfaces()
    return surf, make_met(surf, hours=24 * 30, seed=11)


def _with_ratio(met, value):
    return met.assign(nh3_so2_ratio=(("site", "time"),
                                     np.full((met.sizes["site"], met.sizes["time"]), value)))


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_vd_so2_rises_with_the_ratio_in_both_schemes(synthetic, scheme):
    surf, met = synthetic
    opt = DryOptions(gas_scheme=scheme, particles=(), gases=("SO2",), so2_codeposition=True)
    runs = {r: velocities(_with_ratio(met, r), surf, opt) for r in (0.2, 1.0, 3.0, 10.0)}
    off = velocities(_with_ratio(met, 10.0), surf, DryOptions(gas_scheme=scheme, particles=(),
                                                               gases=("SO2",)))
    assert "so2_codeposition_used" not in off
    for rec in ("grass", "conifer_forest", "crops"):
        means = [float(runs[r]["vd_SO2"].sel(receptor=rec).mean()) for r in sorted(runs)]
        assert all(b > a for a, b in zip(means, means[1:])), (rec, means)
        # hour by hour too (never lower at the higher ratio)
        lo, hi = runs[1.0]["vd_SO2"].sel(receptor=rec), runs[10.0]["vd_SO2"].sel(receptor=rec)
        ok = np.isfinite(lo.values) & np.isfinite(hi.values)
        assert np.all(hi.values[ok] >= lo.values[ok] * (1 - 1e-12))
    used = runs[1.0]["so2_codeposition_used"]
    # the scheme stands over non-vegetated receptors and on frozen hours
    for rec in ("water", "barren", "urban", "snow_ice"):
        np.testing.assert_array_equal(runs[1.0]["vd_SO2"].sel(receptor=rec).values,
                                      off["vd_SO2"].sel(receptor=rec).values)
        assert not used.sel(receptor=rec).any()
    cold = (met["temperature"] < codeposition.FROZEN_BELOW).broadcast_like(used)
    assert cold.any()
    assert not bool(used.where(cold, False).any())
    # the other gases do not move
    assert bool(used.sel(receptor="grass").any())


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_unknown_ratio_keeps_the_schemes_rc(synthetic, scheme):
    surf, met = synthetic
    ratio = np.full((met.sizes["site"], met.sizes["time"]), 2.0)
    ratio[:, : met.sizes["time"] // 2] = np.nan
    m = met.assign(nh3_so2_ratio=(("site", "time"), ratio))
    on = velocities(m, surf, DryOptions(gas_scheme=scheme, particles=(), gases=("SO2",),
                                        so2_codeposition=True))
    off = velocities(m, surf, DryOptions(gas_scheme=scheme, particles=(), gases=("SO2",)))
    half = dict(time=slice(0, met.sizes["time"] // 2))
    np.testing.assert_array_equal(on["vd_SO2"].isel(**half).values,
                                  off["vd_SO2"].isel(**half).values)
    assert not on["so2_codeposition_used"].isel(**half).any()
    # no ratio at all in the met: the option changes nothing
    none = velocities(met, surf, DryOptions(gas_scheme=scheme, particles=(), gases=("SO2",),
                                            so2_codeposition=True))
    np.testing.assert_array_equal(none["vd_SO2"].values,
                                  velocities(met, surf, DryOptions(
                                      gas_scheme=scheme, particles=(),
                                      gases=("SO2",)))["vd_SO2"].values)


def test_rc_keeps_the_stomatal_path():
    # Rc = 1/(g_sto + 1/R_ns) where it applies
    from workbench.drydep.gas import CanopyState
    state = CanopyState(np.array(["grass", "water"], dtype=object)[:, None], 1.0, 300.0,
                        np.array([[290.0, 290.0, 270.0]]), 0.0, relative_humidity=0.8,
                        nh3_so2_ratio=np.array([[1.0, np.nan, 1.0]]))
    g = np.full((2, 3), 1.0 / 200.0)
    rc, used = codeposition.surface_resistance(g, np.full((2, 3), 400.0), state)
    expected = 1.0 / (1.0 / 200.0 + 1.0 / (11.84 * math.exp(1.1) * 0.8 ** -1.67))
    assert rc[0, 0] == pytest.approx(expected)
    assert used.tolist() == [[True, False, False], [False, False, False]]
    assert rc[0, 1] == rc[0, 2] == rc[1, 0] == 400.0


# --- the hourly ratio from the sampling periods -------------------------------------------------
def _air(rows, quantity="amount_density", so2_quantity=None):
    df = pd.DataFrame(rows, columns=["site", "start", "end", "sampler_id", "NH3", "SO2",
                                     "SO2_censored", "SO2_detection_limit"])
    ds = xr.Dataset({c: ("period", df[c].to_numpy()) for c in df.columns})
    for c in ("start", "end"):
        ds[c] = ("period", pd.to_datetime(df[c]).to_numpy())
    ds["NH3"].attrs["quantity"] = quantity
    ds["SO2"].attrs["quantity"] = so2_quantity or quantity
    ds["NH3_censored"] = ("period", np.zeros(len(df), bool))
    return ds


def test_hourly_ratio_maps_each_period_onto_its_hours():
    times = pd.date_range("2021-01-01T01:00", periods=72, freq="h").to_numpy()
    nan = np.nan
    air = _air([
        # NH3 over the three days (one row), SO2 daily; the third SO2 day below detection
        ("a", "2021-01-01T00:00", "2021-01-04T00:00", "", 4.0, nan, False, nan),
        ("a", "2021-01-01T00:00", "2021-01-02T00:00", "", nan, 1.0, False, nan),
        ("a", "2021-01-02T00:00", "2021-01-03T00:00", "", nan, 2.0, False, nan),
        ("a", "2021-01-03T00:00", "2021-01-04T00:00", "", nan, nan, True, 0.5),
        # site b: SO2 only on day 1
        ("b", "2021-01-01T00:00", "2021-01-02T00:00", "", 1.0, 1.0, False, nan),
    ])
    r = codeposition.hourly_ratio(air, times, ["a", "b", "c"])
    assert r.shape == (3, 72)
    np.testing.assert_allclose(r[0, :24], 4.0)
    np.testing.assert_allclose(r[0, 24:48], 2.0)
    np.testing.assert_allclose(r[0, 48:], 4.0 / 0.25)      # half the detection limit
    np.testing.assert_allclose(r[1, :24], 1.0)
    assert np.isnan(r[1, 24:]).all() and np.isnan(r[2]).all()


def test_hourly_ratio_overlapping_samplers_and_units():
    times = pd.date_range("2021-01-01T01:00", periods=48, freq="h").to_numpy()
    nan = np.nan
    rows = [("a", "2021-01-01T00:00", "2021-01-03T00:00", "x", 2.0, 1.0, False, nan),
            # a second SO2 sampler over day 1 only: the budget's primary sampler is x
            ("a", "2021-01-01T00:00", "2021-01-02T00:00", "y", nan, 4.0, False, nan)]
    r = codeposition.hourly_ratio(_air(rows), times, ["a"])
    np.testing.assert_allclose(r, 2.0)
    mixed = _air(rows[:1], quantity="amount_density", so2_quantity="mixing_ratio")
    with pytest.raises(ValueError, match="temperature"):
        codeposition.hourly_ratio(mixed, times, ["a"])
    t, p = np.full((1, 48), 280.0), np.full((1, 48), 1.0e5)
    r = codeposition.hourly_ratio(mixed, times, ["a"], t, p)
    np.testing.assert_allclose(r, 2.0 / (1.0 * 1.0e5 / (8.314462618 * 280.0)))
    assert np.isnan(codeposition.hourly_ratio(None, times, ["a"])).all()


def test_study_hands_the_air_derived_hours_to_the_engine():
    # the demo: the ratio of an hour is NH3/SO2 [mol m-3] of the rows covering it, and
    # a sampler's coarse fraction reaches its hours
    from pathlib import Path
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    demo = Path(__file__).resolve().parents[2] / "demo_data"
    study = Study.from_scenario(load_scenario(demo / "scenario.toml"))
    from workbench.stages import met_with_air
    inp = study.inputs
    assert met_with_air(inp.met, inp.air, study.surfaces(), DryOptions()) is inp.met
    opt = DryOptions(so2_codeposition=True, nh3_acid_ratio_from_air=True,
                     sampler_coarse_fraction={"ridge/RDG-F1": {"pNO3": 0.45}})
    met = met_with_air(inp.met, inp.air, study.surfaces(), opt)
    air = study.inputs.air
    row = int(np.flatnonzero((air["site"].values == "ridge") & np.isfinite(air["NH3"].values)
                             & np.isfinite(air["SO2"].values)
                             & np.isfinite(air["HNO3"].values))[5])
    hour = air["start"].values[row] + np.timedelta64(5, "h")
    got = float(met["nh3_so2_ratio"].sel(site="ridge", time=hour))
    assert got == pytest.approx(float(air["NH3"][row] / air["SO2"][row]), rel=1e-9)
    acid = float(met["nh3_acid_ratio"].sel(site="ridge", time=hour))
    assert acid == pytest.approx(float((2 * air["SO2"][row] + air["HNO3"][row])
                                       / air["NH3"][row]), rel=1e-9)
    f = met["coarse_fraction_pNO3"].sel(site="ridge")
    assert float(f.sel(time=hour)) == 0.45
    assert np.isnan(met["coarse_fraction_pNO3"].sel(site="farm")).all()
    month = met.sel(time=slice("2021-06-01T01:00", "2021-07-01T00:00"))
    ds = velocities(month, study.surfaces(), dataclasses.replace(opt, particles=("pNO3",),
                                                                 gases=("SO2",)))
    assert bool(ds["so2_codeposition_used"].sel(site="ridge", receptor="grass").any())
    assert "sampler_coarse_fraction" in ds["vd_pNO3"].attrs["coarse_fraction_source"]


def test_hourly_acid_ratio_and_its_use_by_the_nh3_cuticle(synthetic):
    # AR = (2 SO2 + HNO3)/NH3 of the covering periods (Massad et al. 2010's ratio)
    times = pd.date_range("2021-01-01T01:00", periods=48, freq="h").to_numpy()
    air = _air([("a", "2021-01-01T00:00", "2021-01-03T00:00", "", 4.0, 1.0, False, np.nan)])
    air["HNO3"] = ("period", np.array([0.5]), {"quantity": "amount_density"})
    np.testing.assert_allclose(codeposition.hourly_acid_ratio(air, times, ["a", "b"])[0],
                               (2 * 1.0 + 0.5) / 4.0)
    assert np.isnan(codeposition.hourly_acid_ratio(air, times, ["a", "b"])[1]).all()
    assert np.isnan(codeposition.hourly_acid_ratio(air.drop_vars("HNO3"), times, ["a"])).all()
    # the engine: an hourly AR from the air equals the same constant option value,
    # and hours without one keep the option's
    surf, met = synthetic
    ar = np.full((met.sizes["site"], met.sizes["time"]), 0.3)
    ar[:, :100] = np.nan
    m = met.assign(nh3_acid_ratio=(("site", "time"), ar))
    base = dict(particles=(), gases=("NH3",), nh3_treatment="bidirectional")
    got = velocities(m, surf, DryOptions(nh3_acid_ratio_from_air=True, **base))
    const = velocities(met, surf, DryOptions(nh3_acid_ratio=0.3, **base))
    default = velocities(met, surf, DryOptions(**base))
    for v in ("vd_NH3", "vd_NH3_bidirectional"):
        np.testing.assert_allclose(got[v].isel(time=slice(100, None)).values,
                                   const[v].isel(time=slice(100, None)).values, rtol=1e-12)
        np.testing.assert_array_equal(got[v].isel(time=slice(0, 100)).values,
                                      default[v].isel(time=slice(0, 100)).values)
    off = velocities(m, surf, DryOptions(**base))         # option off: the ratio unused
    np.testing.assert_array_equal(off["vd_NH3"].values, default["vd_NH3"].values)
