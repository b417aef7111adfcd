"""Temperature units of a NetCDF or zarr met written as UDUNITS-2 spells them.

CF takes its ``units`` strings from UDUNITS-2, which accepts ``Celsius``,
``degrees_Celsius``, ``degree_C``, ``deg_C``, ``degC`` (names compared case-blind) and
the symbols ``°C`` and ``℃``; pint alone knew only some, so a met file whose temperature
said ``units = "Celsius"`` was refused as an unknown unit.  The reference is cfunits
(the test extra's CF checker's units library, a wrapper of the UDUNITS-2 C library and
its database): every spelling it accepts as a temperature we accept with the same
value, and what it refuses stays a located error.
"""
from __future__ import annotations

import numpy as np
import pytest

from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.sites import read_sites
from workbench.units import _UDUNITS_TEMPERATURE, convert_plain, parse_unit

cfunits = pytest.importorskip("cfunits", reason="the reference needs cfunits (test extra, "
                              "with the UDUNITS-2 C library)")

#: Spellings that are not UDUNITS-2 temperatures (typos, blanks, bare letters).
NOT_UDUNITS = ("Celcius", "deg C", "degrees C", "C", "F", "centigrade", "degrees",
               "celsius_degree")


def _spellings():
    out = set()
    for k in _UDUNITS_TEMPERATURE:
        out |= {k, k.upper(), k.title()}
    return sorted(out)


@pytest.mark.parametrize("text", _spellings() + list(NOT_UDUNITS))
def test_accepted_exactly_as_udunits_accepts(text):
    """Reference: cfunits (UDUNITS-2): accepted iff it is a temperature there, and 20 in
    it is the same number of kelvin."""
    ref = cfunits.Units(text)
    udunits_temperature = bool(ref.isvalid and ref.equivalent(cfunits.Units("K")))
    try:
        unit = parse_unit(text)[0]
        ours = unit.dimensionality == parse_unit("K")[0].dimensionality
    except ValueError:
        ours = False
    assert ours == udunits_temperature, text
    if ours:
        want = float(cfunits.Units.conform(20.0, ref, cfunits.Units("K")))
        assert float(convert_plain(20.0, text, "K")) == pytest.approx(want, abs=1e-9), text


def _nc_met(files, tmp_path, unit, name="met.nc"):
    cat = read_sites(files["sites"])
    met, _ = read_met(files["met"], cat)
    nc = met.drop_vars("row_present").copy()
    nc["temperature"] = nc["temperature"] - 273.15
    nc["temperature"].attrs["units"] = unit
    nc.to_netcdf(tmp_path / name, engine="scipy")
    return tmp_path / name, cat, met


@pytest.mark.parametrize("unit", ["Celsius", "celsius", "degree_Celsius", "degrees_Celsius",
                                  "degC", "deg_C", "degree_C", "degrees_C", "DEGC", "℃"])
def test_netcdf_met_in_celsius_spellings(files, tmp_path, unit):
    """Before: 'Celsius', 'degrees_Celsius', 'deg_C', 'degree_C', 'degrees_C', 'DEGC'
    and '℃' were refused (unknown unit); now each reads as degC."""
    p, cat, met = _nc_met(files, tmp_path, unit)
    back, led = read_met(p, cat)
    np.testing.assert_allclose(back["temperature"].values, met["temperature"].values,
                               rtol=1e-6)
    assert led.check_balanced()


def test_zarr_met_in_celsius(files, tmp_path):
    pytest.importorskip("zarr", reason="zarr stores need the zarr extra")
    import warnings
    p, cat, met = _nc_met(files, tmp_path, "degrees_Celsius")
    import xarray as xr
    with xr.open_dataset(p) as ds, warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ds.load().to_zarr(tmp_path / "met.zarr", mode="w")
    back, _ = read_met(tmp_path / "met.zarr", cat)
    np.testing.assert_allclose(back["temperature"].values, met["temperature"].values,
                               rtol=1e-6)


def test_degree_blank_celsius_is_an_angle_times_a_temperature_in_udunits():
    """UDUNITS-2 reads 'degree Celsius' (with a blank) as the product of the plane angle
    degree and the degree Celsius: 20 of it is 0.349 K.rad (cfunits), not 293.15 K.  We
    refuse it (below) rather than follow a reading its writer cannot have meant."""
    ref = cfunits.Units("degree Celsius")
    assert float(cfunits.Units.conform(20.0, ref, cfunits.Units("K"))) == pytest.approx(
        20 * np.pi / 180)
    with pytest.raises(ValueError):
        convert_plain(20.0, "degree Celsius", "K")


@pytest.mark.parametrize("unit", ["Celcius", "deg C", "degrees C", "degree Celsius"])
def test_invalid_spelling_refused_with_its_place(files, tmp_path, unit):
    p, cat, _ = _nc_met(files, tmp_path, unit)
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, column 'temperature': unknown or dimensionally wrong unit")
    assert f"got '{unit}'" in msg
    assert "expected a unit convertible to K" in msg
    assert "degree_Celsius" in msg           # the spellings to write