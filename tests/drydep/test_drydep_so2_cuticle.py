"""The dry SO2 cuticle of Erisman, van Pul & Wyers (1994) (`[dry] so2_cuticle`).

Reference values: R_w = 25000 exp(-0.0693 RH) s/m below RH 81.3 %, 0.58e12 exp(-0.278 RH)
at and above, 500 s/m below -1 degC, RH in percent (Erisman, van Pul & Wyers 1994,
Atmos. Environ. 28, 2595; constants from memory, as in the module).  The expected numbers
below are that formula worked by hand (a pocket calculator's exp).
"""
import dataclasses

import numpy as np
import pytest
import xarray as xr

from drydep.dry_synthetic import make_met, make_surfaces
from workbench.drydep import DryOptions, erisman1994, velocities
from workbench.drydep import wesely1989 as w
from workbench.drydep import zhang2003 as z
from workbench.drydep.gas import CanopyState

T_MILD = 283.15            # 10 degC [K]


# --- the resistance against hand values -----------------------------------------------------
@pytest.mark.parametrize("rh, expected", [
    (0.30, 25000.0 * np.exp(-0.0693 * 30.0)),      # 3125.6 s/m
    (0.50, 781.83),                                 # 25000 e^-3.465, by hand
    (0.70, 25000.0 * np.exp(-0.0693 * 70.0)),      # 195.5 s/m
    (0.80, 97.79),                                  # 25000 e^-5.544, by hand
    (0.813, 88.67),                                 # the upper branch at the junction, by hand
    (0.90, 7.896),                                  # 0.58e12 e^-25.02, by hand
    (1.00, 0.58e12 * np.exp(-27.8)),                # 0.49 s/m
])
def test_external_leaf_resistance_by_hand_erisman1994(rh, expected):
    got = float(erisman1994.so2_external_leaf_resistance(rh, T_MILD))
    assert got == pytest.approx(expected, rel=2e-4)


def test_branches_meet_at_81_3_percent_erisman1994():
    """Both branches give about 89 s/m at RH 81.3 % (89.35 and 88.67 s/m by hand):
    the recalled constants agree with each other to 0.8 %."""
    below = float(erisman1994.so2_external_leaf_resistance(0.813 - 1e-9, T_MILD))
    at = float(erisman1994.so2_external_leaf_resistance(0.813, T_MILD))
    assert below == pytest.approx(25000.0 * np.exp(-0.0693 * 81.3), rel=1e-6)
    assert at == pytest.approx(0.58e12 * np.exp(-0.278 * 81.3), rel=1e-9)
    assert abs(below - at) / at < 0.01
    # monotone fall with humidity across the junction
    r = erisman1994.so2_external_leaf_resistance(np.linspace(0.2, 1.0, 801), T_MILD)
    assert np.all(np.diff(r) < 0.0)


def test_frozen_surfaces_and_missing_inputs():
    # 500 s/m below -1 degC (Erisman et al. 1994, from memory), whatever the humidity
    t = np.array([271.15, 272.14, 272.15, 272.16])
    r = erisman1994.so2_external_leaf_resistance(np.array([0.5, 0.95, 0.5, 0.5]), t)
    assert r[0] == 500.0 and r[1] == 500.0
    assert r[2] == pytest.approx(781.83, rel=2e-4) and r[3] == r[2]   # -1 degC is not frozen
    assert np.isnan(erisman1994.so2_external_leaf_resistance(np.nan, T_MILD))
    assert np.isnan(erisman1994.so2_external_leaf_resistance(0.5, np.nan))


def test_input_types():
    rh = np.array([[0.5, 0.9]])
    want = erisman1994.so2_external_leaf_resistance(rh, T_MILD)
    da = xr.DataArray(rh, dims=("site", "time"))
    got = erisman1994.so2_external_leaf_resistance(da, T_MILD)
    assert isinstance(got, xr.DataArray)
    np.testing.assert_allclose(got.values, want, rtol=1e-15)
    lazy = erisman1994.so2_external_leaf_resistance(da.chunk({"time": 1}), T_MILD)
    assert lazy.chunks is not None
    np.testing.assert_allclose(lazy.values, want, rtol=1e-15)
    assert isinstance(erisman1994.so2_external_leaf_resistance(0.5, T_MILD), float | np.floating)


def test_option_values():
    assert DryOptions().so2_cuticle == "scheme"
    assert DryOptions(so2_cuticle="erisman1994").so2_cuticle == "erisman1994"
    with pytest.raises(ValueError, match="so2_cuticle 'erisman94'.*did you mean 'erisman1994'"):
        DryOptions(so2_cuticle="erisman94")


# --- inside the schemes ---------------------------------------------------------------------
def _state(rule, kind=0.0, temperature=T_MILD, rh=0.6, land=("grass", "conifer_forest", "water")):
    return CanopyState(np.array(land, dtype=object)[None, :, None], 1.0, 400.0, temperature, kind,
                       relative_humidity=rh, ustar=0.4, lai=3.0, cos_zenith=0.6,
                       so2_cuticle=rule)


def test_wesely_dry_cuticle_replaced_and_rc_rebuilt():
    """Dry hour, summer (category 1): SO2's r_lu becomes R_w and R_c the parallel sum of
    Wesely's Eq. 2 with it; water (no cuticle) keeps its R_c; other gases are untouched."""
    gases = ("SO2", "O3", "HNO3", "NH3", "NO2")
    own = w.surface_resistances(gases, _state("scheme"))
    eri = w.surface_resistances(gases, _state("erisman1994"))
    rw = 25000.0 * np.exp(-0.0693 * 60.0)                    # 392.0 s/m
    up = eri["SO2"]["upper_canopy"].ravel()
    assert up[0] == pytest.approx(rw, rel=1e-12) and up[1] == pytest.approx(rw, rel=1e-12)
    assert np.isinf(up[2])
    p = eri["SO2"]
    g = (1 / (p["stomatal"] + p["mesophyll"]) + 1 / p["upper_canopy"]
         + 1 / (p["convection"] + p["lower_canopy"]) + 1 / (p["canopy_transfer"] + p["ground"]))
    np.testing.assert_allclose(p["rc"], 1 / g, rtol=1e-12)
    assert np.all(p["rc"].ravel()[:2] < own["SO2"]["rc"].ravel()[:2])
    assert p["rc"].ravel()[2] == own["SO2"]["rc"].ravel()[2]
    for gas in gases[1:]:
        np.testing.assert_array_equal(eri[gas]["rc"], own[gas]["rc"])


@pytest.mark.parametrize("kind", [1.0, 2.0])
def test_wet_hours_keep_the_schemes_wet_rules(kind):
    for scheme in (w, z):
        own = scheme.surface_resistances(("SO2",), _state("scheme", kind=kind))["SO2"]
        eri = scheme.surface_resistances(("SO2",), _state("erisman1994", kind=kind))["SO2"]
        np.testing.assert_array_equal(eri["rc"], own["rc"])


def test_zhang_dry_cuticle_replaced_for_so2_only():
    """Zhang: SO2's R_cut becomes R_w in a dry hour (no snow, above -1 degC); NH3 and HNO3,
    scaled from SO2's reference cuticle (alpha 1 and 10), keep the scheme's."""
    gases = ("SO2", "NH3", "HNO3", "O3", "NO2")
    own = z.surface_resistances(gases, _state("scheme"))
    eri = z.surface_resistances(gases, _state("erisman1994"))
    rw = 25000.0 * np.exp(-0.0693 * 60.0)
    cut = eri["SO2"]["cuticle"].ravel()
    assert cut[0] == pytest.approx(rw, rel=1e-12) and cut[1] == pytest.approx(rw, rel=1e-12)
    assert np.isinf(cut[2])
    p = eri["SO2"]
    g = ((1 - p["stomatal_blocking"]) / (p["stomatal"] + p["mesophyll"]) + 1 / p["cuticle"]
         + 1 / (p["canopy_transfer"] + p["ground"]))
    np.testing.assert_allclose(p["rc"], 1 / g, rtol=1e-12)
    for gas in gases[1:]:
        np.testing.assert_array_equal(eri[gas]["rc"], own[gas]["rc"])


def test_frozen_hour_takes_500_in_both_schemes():
    cold = 268.15                                            # -5 degC
    up = w.surface_resistances(("SO2",), _state("erisman1994", temperature=cold,
                                                 land=("conifer_forest",)))["SO2"]
    cut = z.surface_resistances(("SO2",), _state("erisman1994", temperature=cold,
                                                  land=("conifer_forest",)))["SO2"]
    assert float(up["upper_canopy"].ravel()[0]) == 500.0
    assert float(cut["cuticle"].ravel()[0]) == 500.0


@pytest.mark.parametrize("block", [None, 500])
def test_numpy_path_equals_the_general_path_under_the_option(block, monkeypatch):
    """wesely1989_numpy (what the engine runs on numpy) applies the option as the
    general path does, on random hours of every class, wet and dry, mild and frozen
    (with `block`, in blocks of that many elements, as on large arrays)."""
    from workbench.drydep import wesely1989_numpy as fast
    from workbench.surface import _array
    if block:
        monkeypatch.setattr(_array, "BLOCK_ELEMENTS", block)
    rng = np.random.default_rng(3)
    shape = (3, len(w.WESELY_CLASS), 400)
    land = np.array(list(w.WESELY_CLASS), dtype=object)[None, :, None]
    st = CanopyState(land, rng.integers(1, 6, shape).astype(float), rng.uniform(0, 900, shape),
                     rng.uniform(260.0, 305.0, shape), rng.integers(0, 3, shape).astype(float),
                     relative_humidity=rng.uniform(0.3, 1.0, shape), so2_cuticle="erisman1994")
    st.relative_humidity.flat[::53] = np.nan
    want = w.surface_resistances(("SO2", "O3"), st)
    got = fast.surface_resistances(("SO2", "O3"), st)
    for gas in ("SO2", "O3"):
        for k in want[gas]:
            a, b = np.broadcast_arrays(got[gas][k], want[gas][k])
            np.testing.assert_array_equal(np.isnan(a), np.isnan(b), err_msg=f"{gas} {k}")
            np.testing.assert_allclose(a, b, rtol=1e-14, atol=0.0, err_msg=f"{gas} {k}")
    own = fast.surface_resistances(("SO2",), dataclasses.replace(st, so2_cuticle="scheme"))
    assert not np.allclose(got["SO2"]["rc"], own["SO2"]["rc"], equal_nan=True)


# --- through velocities ---------------------------------------------------------------------
@pytest.fixture(scope="module")
def synthetic():
    surf = make_surfaces()
    return surf, make_met(surf, hours=24 * 30, seed=11)


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_option_reaches_velocities_so2_dry_hours_only(synthetic, scheme):
    surf, met = synthetic
    base = DryOptions(gas_scheme=scheme, particles=())
    own = velocities(met, surf, base)
    eri = velocities(met, surf, dataclasses.replace(base, so2_cuticle="erisman1994"))
    assert eri.attrs["so2_cuticle"] == "erisman1994" and own.attrs["so2_cuticle"] == "scheme"
    for gas in ("HNO3", "NH3", "NO2", "O3"):             # bit-identical
        np.testing.assert_array_equal(eri[f"rc_{gas}"].values, own[f"rc_{gas}"].values)
        np.testing.assert_array_equal(eri[f"vd_{gas}"].values, own[f"vd_{gas}"].values)
    wet = (own["wet_kind"] != 0).values
    a, b = eri["rc_SO2"].values, own["rc_SO2"].values
    np.testing.assert_array_equal(a[wet], b[wet])        # dew and rain: the scheme's rules
    changed = ~((a == b) | (np.isnan(a) & np.isnan(b)))
    assert changed.any() and not changed[wet].any()
    for rec in ("water", "barren", "urban", "snow_ice"):  # no cuticle: unchanged
        np.testing.assert_array_equal(eri["rc_SO2"].sel(receptor=rec).values,
                                      own["rc_SO2"].sel(receptor=rec).values)
    # dry mild hours over the conifer: R_w lowers the dry cuticle, Vd(SO2) rises
    assert float(eri["vd_SO2"].sel(receptor="conifer_forest").mean()) > \
        float(own["vd_SO2"].sel(receptor="conifer_forest").mean())


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_default_is_the_schemes_own_bit_identical(synthetic, scheme):
    surf, met = synthetic
    a = velocities(met, surf, DryOptions(gas_scheme=scheme, particles=()))
    b = velocities(met, surf, DryOptions(gas_scheme=scheme, particles=(), so2_cuticle="scheme"))
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


@pytest.mark.parametrize("scheme", ["wesely1989", "zhang2003"])
def test_codeposition_wins_where_it_applies(synthetic, scheme):
    """Both options on: the co-deposition relation where it applies (it replaces every
    non-stomatal path), this cuticle in the other hours (here: no NH3/SO2 ratio)."""
    surf, met = synthetic
    ratio = np.full((met.sizes["site"], met.sizes["time"]), 2.0)
    half = met.sizes["time"] // 2
    ratio[:, :half] = np.nan
    m = met.assign(nh3_so2_ratio=(("site", "time"), ratio))
    opt = DryOptions(gas_scheme=scheme, particles=(), gases=("SO2",))
    both = velocities(m, surf, dataclasses.replace(opt, so2_codeposition=True,
                                                   so2_cuticle="erisman1994"))
    codep = velocities(m, surf, dataclasses.replace(opt, so2_codeposition=True))
    cut = velocities(m, surf, dataclasses.replace(opt, so2_cuticle="erisman1994"))
    used = both["so2_codeposition_used"].values.astype(bool)
    assert used.any()
    np.testing.assert_array_equal(both["rc_SO2"].values[used], codep["rc_SO2"].values[used])
    np.testing.assert_array_equal(both["rc_SO2"].values[~used], cut["rc_SO2"].values[~used])
    np.testing.assert_array_equal(both["rc_SO2"].isel(time=slice(0, half)).values,
                                  cut["rc_SO2"].isel(time=slice(0, half)).values)


@pytest.mark.parametrize("kind", ["DataArray", "dask"])
def test_dataarray_and_dask_state_match_numpy(kind):
    """The general paths of both schemes on xarray (and dask-backed) hours give the numpy
    numbers under the option (receptors as a sequence along the receptor dimension)."""
    rec = ("conifer_forest", "water", "grass", "urban")
    t = np.array([283.15, 268.15, 290.0, 275.0])
    rh = np.array([0.6, 0.9, 0.85, np.nan])
    wet = np.array([0.0, 0.0, 1.0, 0.0])
    cat = np.array([1.0, 4.0, 1.0, 5.0])

    def arr(a):
        x = xr.DataArray(a, dims="time")
        return x.chunk({"time": 2}) if kind == "dask" else x
    st = CanopyState(rec, arr(cat), 300.0, arr(t), arr(wet), relative_humidity=arr(rh),
                     ustar=0.4, lai=2.0, cos_zenith=0.5, so2_cuticle="erisman1994")
    plain = CanopyState(np.array(rec, dtype=object)[:, None], cat, 300.0, t, wet,
                        relative_humidity=rh, ustar=0.4, lai=2.0, cos_zenith=0.5,
                        so2_cuticle="erisman1994")
    for scheme in (w, z):
        got = scheme.surface_resistances(("SO2",), st)["SO2"]["rc"]
        assert isinstance(got, xr.DataArray)
        want = scheme.surface_resistances(("SO2",), plain)["SO2"]["rc"]
        np.testing.assert_allclose(got.transpose("receptor", "time").values, want,
                                   rtol=1e-13)


def test_the_so2_cuticle_table_of_the_document_is_the_codes():
    """docs/methods_dry.md 9.6 shows the annual Vd(SO2) these runs give (regenerate with
    `python docs/make_vd_table.py`); the default's column is the 9.2 table's SO2."""
    import importlib.util
    from pathlib import Path
    path = Path(__file__).resolve().parents[2] / "docs" / "make_vd_table.py"
    spec = importlib.util.spec_from_file_location("make_vd_table", path)
    script = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(script)
    table = script.so2_cuticle_means()
    assert script.in_document(markers=script.CUTICLE_MARKERS) == script.so2_cuticle_tables(table)
    base = script.in_document()                # 9.2: "| site receptor | SO2 W89 | SO2 Z03 |"
    own = table[table.so2_cuticle == "scheme"]
    lines = base.splitlines()
    first = lines.index(next(x for x in lines if x.startswith("| site receptor")))
    rows = [x for x in lines[first + 2:first + 2 + len(own) // 2]]
    assert len(rows) == 10 and all(x.startswith("| ") for x in rows)
    for line in rows:
        cells = [c.strip() for c in line.strip("|").split("|")]
        site, rec = cells[0].split()
        for col, scheme in ((1, "wesely1989"), (2, "zhang2003")):
            v = own[(own.site == site) & (own.receptor == rec) & (own.scheme == scheme)]
            assert f"{float(v['vd_cm_s'].iloc[0]):.2f}" == cells[col], (site, rec, scheme)
