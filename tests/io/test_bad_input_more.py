"""More bad input, written from mistakes that happen with field data: spreadsheet
exports, re-uploads, wrong encodings, broken archives, NetCDF from another tool, site
geometry typed in the wrong unit.

Each case builds a small broken file and asserts that one InputError names the file,
the line (where a file has lines), the column or key, the value as written, and what
was expected.  The sites, samplers and values are invented.
"""
import gzip
import re

import numpy as np
import pytest

from workbench.errors import InputError
from workbench.io import read_air, read_met, read_precipitation, read_sites

from tiny_inputs import AIR, PRECIP, SITES, met_text

P_LINES = PRECIP.splitlines()
A_LINES = AIR.splitlines()


def _text(base, *edits):
    for old, new in edits:
        assert old in base, old
        base = base.replace(old, new, 1)
    return base


# --------------------------------------------------------------------- CSV cases
# id -> (reader, file name, content (str or bytes), [fragments of the message])
CSV_CASES = {
    "semicolon_export": (
        read_precipitation, "p.csv",
        "\n".join(ln.replace(",", ";") for ln in P_LINES).replace("12.0", "12,0"),
        ["p.csv, line 1: semicolon-separated header", "got 'site;start;end;",
         "expected comma-separated values with a decimal point"]),
    "tab_export": (
        read_air, "a.csv", "\n".join(ln.replace(",", "\t") for ln in A_LINES),
        ["a.csv, line 2: tab-separated header", "got 'site\\tstart", "expected comma-separated"]),
    "decimal_comma_quoted": (
        read_precipitation, "p.csv", _text(PRECIP, (",12.0,", ',"12,0",')),
        ["p.csv, line 2, column 'gauge_depth [mm]': text in a numeric column (a decimal "
         "comma? write a decimal point, e.g. '1.5'): got '12,0'",
         "expected a number"]),
    "excel_date_serial": (
        read_precipitation, "p.csv", _text(PRECIP, ("2020-01-07T09:00,2020-01-14T09:00,w1",
                                                    "43837.375,2020-01-14T09:00,w1")),
        ["p.csv, line 2, column 'start': not an ISO 8601 timestamp (an Excel date serial",
         "got '43837.375'", "expected a timestamp such as 2020-01-09T14:00"]),
    "excel_date_serial_air_end": (
        read_air, "a.csv", _text(AIR, ("2020-01-14T09:00,fp2", "43844.375,fp2")),
        ["a.csv, line 5, column 'end': not an ISO 8601 timestamp (an Excel date serial",
         "got '43844.375'", "expected a timestamp"]),
    "impossible_calendar_date": (
        read_precipitation, "p.csv", _text(PRECIP, ("2020-01-21T09:00,2020-01-28", "2020-02-30T09:00,2020-01-28")),
        ["p.csv, line 4, column 'start': not an ISO 8601 timestamp: got '2020-02-30T09:00'",
         "expected a timestamp"]),
    # a header line repeated as written is dropped with a note (tests/io/test_file_twice.py);
    # one that differs from the header (here its units) is refused with this hint
    "repeated_header_line": (
        read_precipitation, "p.csv", "\n".join(P_LINES[:3] + [P_LINES[0].replace(
            "[mg/L]", "[umol/L]")] + P_LINES[3:]) + "\n",
        ["p.csv, line 4, column 'site': site not in the catalogue (a repeated header line?",
         "got 'site'", "expected one of alpha, beta"]),
    "spreadsheet_totals_row": (
        read_precipitation, "p.csv", PRECIP + "Total,,,,37.0,,,,,,,,,\n",
        ["p.csv, line 6, column 'site': site not in the catalogue (a totals or summary row",
         "got 'Total'", "expected one of alpha, beta"]),
    "corrected_reexport_beside_original": (
        read_precipitation, "p.csv", PRECIP + _text(P_LINES[1], (",1.5,", ",1.9,")) + "\n",
        ["p.csv, line 6, column 'SO4 [mg/L]': duplicate upload: same site, sampler and sample "
         "period as line 2, with other values: got '1.9'", "expected one row per site, sampler "
         "and period (line 2 has '1.5')"]),
    "reexport_without_sampler_id": (
        read_precipitation, "p.csv", PRECIP + _text(P_LINES[1], (",w1,", ",,"), (",4.8,", ",4.9,")) + "\n",
        ["p.csv, line 6, column 'pH': duplicate upload", "got '4.9'", "(line 2 has '4.8')"]),
    "reexport_with_utc_offset": (
        read_precipitation, "p.csv",
        PRECIP + _text(P_LINES[1], ("2020-01-07T09:00,2020-01-14T09:00",
                                    "2020-01-07T08:00Z,2020-01-14T08:00Z"), (",20.0,", ",21.0,")) + "\n",
        ["p.csv, line 6, column 'conductivity [uS/cm]': duplicate upload", "got '21.0'",
         "(line 2 has '20.0')"]),
    "air_reexport": (
        read_air, "a.csv", AIR + _text(A_LINES[4], (",2.0,", ",2.4,")) + "\n",
        ["a.csv, line 6, column 'pSO4 [ug/m3]': duplicate upload: same site, sampler and air "
         "period as line 5", "got '2.4'", "(line 5 has '2.0')"]),
    "latin1_csv_comment": (
        read_precipitation, "p.csv", ("# note: lab at 5 \u00b0C\n" + PRECIP).encode("latin-1"),
        ["p.csv, line 1: file is not UTF-8 text (byte 0xb0 at byte offset 17)",
         "got '# note: lab at 5 \u00b0C'", "save as UTF-8"]),
    "latin1_micro_sign_in_unit": (
        read_air, "a.csv", AIR.replace("SO2 [ug/m3]", "SO2 [\u00b5g/m3]").encode("latin-1"),
        ["a.csv, line 2: file is not UTF-8 text (byte 0xb5", "got 'site,start,end,sampler_id,SO2",
         "expected a UTF-8 CSV file"]),
    "latin1_degree_sign_in_met": (
        read_met, "m.csv", met_text(n_hours=3).replace("[degC]", "[\u00b0C]").encode("latin-1"),
        ["m.csv, line 2: file is not UTF-8 text (byte 0xb0", "got 'site,time,wind_speed",
         "save as UTF-8"]),
    "truncated_gzip": (
        read_met, "m.csv.gz", gzip.compress(met_text(n_hours=48).encode())[:400],
        ["m.csv.gz: not a readable gzip file (", "expected a complete .gz file"]),
    "plain_text_named_gz": (
        read_precipitation, "p.csv.gz", PRECIP.encode(),
        ["p.csv.gz: not a readable gzip file (Not a gzipped file", "expected a complete .gz file"]),
    "workbook_renamed_csv": (
        read_air, "a.csv", b"PK\x03\x04\x14\x00\x06\x00" + b"\x00" * 40,
        ["a.csv: a spreadsheet workbook, not a CSV text file", "expected the sheet exported as CSV"]),
    "misspelt_species_zero_for_o": (
        read_air, "a.csv", AIR.replace("SO2 [ug/m3]", "S02 [ug/m3]"),
        ["a.csv, line 2, column 'S02 [ug/m3]': unknown species: got 'S02'",
         "expected one of SO2, HNO3", "(did you mean 'SO2'?)"]),
    "misspelt_ion_zero_for_o": (
        read_precipitation, "p.csv", PRECIP.replace("SO4 [mg/L]", "S04 [mg/L]"),
        ["p.csv, line 1, column 'S04 [mg/L]': unknown species: got 'S04'",
         "(did you mean 'SO4'?)"]),
    "precipitation_ion_in_air_file": (
        read_air, "a.csv", AIR.replace("pSO4 [ug/m3]", "SO4 [ug/m3]"),
        ["a.csv, line 2, column 'SO4 [ug/m3]': species not measured in air files: got 'SO4'",
         "(did you mean 'pSO4'?)"]),
    "gas_in_precipitation_file": (
        read_precipitation, "p.csv", PRECIP.replace("SO4 [mg/L]", "SO2 [mg/L]"),
        ["p.csv, line 1, column 'SO2 [mg/L]': species not measured in precipitation files: "
         "got 'SO2'", "expected one of SO4, NO3"]),
    "liquid_unit_for_a_gas": (
        read_air, "a.csv", AIR.replace("NH3 [ug/m3]", "NH3 [mg/L]"),
        ["a.csv, line 2, column 'NH3 [mg/L]': a liquid concentration unit in an air file: "
         "got 'mg/L', expected an air concentration unit such as ug/m3 or ppb"]),
    "quote_left_open": (
        read_precipitation, "p.csv", _text(PRECIP, (",12.0,", ',"12.0,')),
        ["p.csv, line 2: a quote opened and not closed: got 'alpha,2020-01-07T09:00,",
         'expected quotes in pairs ("...") around a cell']),
    "quotes_swallowing_a_line": (
        read_precipitation, "p.csv", _text(PRECIP, (",12.0,", ',"12.0,'), (",5.1,12.0,", ',5.1,12.0",')),
        ["p.csv, line 2, column 'gauge_depth [mm]': a quote opened and not closed (the cell "
         "runs over several lines): got '12.0,11.0,4.8", 'expected quotes in pairs']),
    "overflowing_number": (
        read_precipitation, "p.csv", _text(PRECIP, (",12.0,", ",1e400,")),
        ["p.csv, line 2, column 'gauge_depth [mm]': not a finite number: got '1e400'",
         "expected a finite number"]),
    "year_typed_2202": (
        read_air, "a.csv", _text(AIR, ("2020-01-14T09:00,fp1,2.0", "2202-01-14T09:00,fp1,2.0")),
        ["a.csv, line 3, column 'end': timestamp outside the years 1900-2099 (a typing slip",
         "got '2202-01-14T09:00'", "expected a timestamp in 1900-2099"]),
    "empty_site_cell": (
        read_precipitation, "p.csv", _text(PRECIP, ("alpha,2020-01-21", ",2020-01-21")),
        ["p.csv, line 4, column 'site': site not in the catalogue (an empty site cell): got ''",
         "expected one of alpha, beta"]),
    "met_semicolon_export": (
        read_met, "m.csv", met_text(n_hours=3).replace(",", ";"),
        ["m.csv, line 2: semicolon-separated header", "expected comma-separated"]),
    # (an exact repeat is dropped, tests/io/test_file_twice.py: here one value differs)
    "met_duplicate_hour_second_site_block": (
        read_met, "m.csv", met_text(n_hours=4) + "\n".join(met_text(n_hours=4).splitlines()[3:4])
        .replace(",1010.0,", ",1010.4,") + "\n",
        ["m.csv, line 7, column 'time': duplicate hourly timestamp: got '2020-01-07T02:00'",
         "expected one row per site and hour (also on line 4, which has 'pressure [hPa]' "
         "'1010.0' where this line has '1010.4')"]),
}


@pytest.mark.parametrize("case", list(CSV_CASES), ids=list(CSV_CASES))
def test_csv_bad_input(tmp_path, case):
    reader, name, content, fragments = CSV_CASES[case]
    (tmp_path / "s.toml").write_text(SITES)
    cat = read_sites(tmp_path / "s.toml")
    p = tmp_path / name
    if isinstance(content, bytes):
        p.write_bytes(content)
    else:
        p.write_text(content, encoding="utf-8")
    with pytest.raises(InputError) as exc:
        reader(p, cat)
    msg = str(exc.value)
    assert msg.startswith(str(p)), msg
    for f in fragments:
        assert f in msg, f"{f!r} not in {msg!r}"
    assert exc.value.expected, msg


# --------------------------------------------------------------------- site catalogue
_ALPHA_TAIL = ('wind_height_m = 10.0\nsampler_height_m = 3.0\nutc_offset_h = 1\n'
               'receptors = ["conifer_forest"]\n')
_FELLED = ('\n[[site.change]]\ndate = 2015-01-01\nwhat = "land_use"\nfrom = "conifer_forest"\n'
           'to = "grass"\n')
SITE_CASES = {
    "roughness_zero": (("utc_offset_h = 0\n", "utc_offset_h = 0\nroughness_length_m = 0.0\n"),
                       "line 29, column 'roughness_length_m': roughness length not positive: "
                       "got '0.0', expected z0 > 0 m"),
    "displacement_above_anemometer": (
        ("utc_offset_h = 0\n", "utc_offset_h = 0\ndisplacement_height_m = 32.0\n"),
        "line 29, column 'displacement_height_m': anemometer at or below the displacement "
        "height: got '32.0', expected wind_height_m 30 m above the displacement height d = 32 m"),
    "anemometer_below_forest_d": (
        ("wind_height_m = 30.0", "wind_height_m = 12.0"),
        "line 26, column 'wind_height_m': anemometer at or below the displacement height: "
        "got '12.0', expected wind_height_m 12 m above the displacement height d = 15.4 m"),
    # the rule named is the forest's (Raupach: d = 0.772 h), not "d/h = 2/3"
    "anemometer_below_forest_d_names_its_rule": (
        ("wind_height_m = 30.0", "wind_height_m = 12.0"),
        "d = 15.4 m of the mast's surface 'deciduous_forest' (d = 0.772 h, the rule of class "
        "'deciduous_forest', docs/methods_dry_particles.md section 3, unless "
        "displacement_height_m is given)"),
    "anemometer_inside_z0": (
        ("utc_offset_h = 1\n", "utc_offset_h = 1\nroughness_length_m = 12.0\n"),
        "line 9, column 'wind_height_m': anemometer within the roughness length above d: "
        "got '10.0', expected wind_height_m - d"),
    # no met_land_use: the mast follows the land use, so before the change it stood over
    # the forest (class defaults: d = 11.6 m, z0 = 1.09 m), named with the period
    "anemometer_below_d_of_an_earlier_class": (
        (_ALPHA_TAIL, _ALPHA_TAIL + _FELLED),
        "line 17, column 'change.from': anemometer at or below the displacement height of "
        "the mast's surface before a land-use change: got 'conifer_forest', expected "
        "wind_height_m 10 m above the displacement height d = 11.6 m of the mast's surface "
        "'conifer_forest' until 2015-01-01 (class defaults; met_land_use is not given, so "
        "the mast follows the site's land use), or met_land_use = the class that stood "
        "under the mast"),
    "anemometer_inside_z0_of_an_earlier_class": (
        (_ALPHA_TAIL, _ALPHA_TAIL.replace("10.0", "12.0") + _FELLED),
        "line 17, column 'change.from': anemometer within the roughness length above d of "
        "the mast's surface before a land-use change: got 'conifer_forest', expected "
        "wind_height_m - d (0.418 m) larger than z0 = 1.09 m of 'conifer_forest' until "
        "2015-01-01, or met_land_use given"),
    "slope_95_degrees": (("utc_offset_h = 0\n", "utc_offset_h = 0\nterrain_slope_deg = 95\n"),
                         "line 29, column 'terrain_slope_deg': terrain slope outside 0-90 "
                         "degrees: got '95', expected an angle in degrees from 0 to below 90"),
    "forest_canopy_zero": (("canopy_height_m = 20.0", "canopy_height_m = 0.0"),
                           "line 25, column 'canopy_height_m': canopy height 0 for a forest: "
                           "got '0.0', expected the mean tree height in m (default for "
                           "deciduous_forest: 18 m)"),
    "canopy_in_centimetres": (("canopy_height_m = 20.0", "canopy_height_m = 2000.0"),
                              "line 25, column 'canopy_height_m': canopy taller than any tree: "
                              "got '2000.0', expected a height below 120 m (a height in feet"),
    "elevation_in_feet": (("elevation_m = 400.0", "elevation_m = 31000.0"),
                          "line 23, column 'elevation_m': elevation out of range: got "
                          "'31000.0', expected -450 to 9000 m above sea level (a height in feet?)"),
    "utc_offset_minutes_as_decimals": (("utc_offset_h = 1\n", "utc_offset_h = 1.3\n"),
                                       "line 11, column 'utc_offset_h': UTC offset not a whole "
                                       "quarter hour: got '1.3', expected hours in steps of 0.25"),
    "longitude_out_of_range": (("longitude = 6.0", "longitude = 600.0"),
                               "line 22, column 'longitude': longitude out of range: got "
                               "'600.0', expected -180 to 180 degrees"),
    "collector_without_underscore": (("utc_offset_h = 0\n", 'utc_offset_h = 0\ncollector = "wetonly"\n'),
                                     "line 29, column 'collector': unknown collector: got "
                                     "'wetonly', expected 'wet_only' or 'bulk' (did you mean "
                                     "'wet_only'?)"),
    "height_as_text": (("wind_height_m = 30.0", 'wind_height_m = "30 m"'),
                       "line 26, column 'wind_height_m': wrong type: got '30 m', expected a "
                       "number (height of the wind measurement [m]); write the number alone, "
                       "without quotes, in the unit the key names"),
    "receptor_not_a_class": (('receptors = ["conifer_forest"]', 'receptors = ["forest"]'),
                             "line 12, column 'receptors': unknown land-use class: got 'forest'"),
    # accepted before: each exceedance.csv row of the receptor came four times
    "receptor_named_twice": (('receptors = ["conifer_forest"]',
                              'receptors = ["conifer_forest", "conifer_forest"]'),
                             "line 12, column 'receptors': receptor named twice in receptors: "
                             "got 'conifer_forest', expected each surface once (receptors = "
                             '["conifer_forest"])'),
}


@pytest.mark.parametrize("case", list(SITE_CASES), ids=list(SITE_CASES))
def test_site_geometry_errors(tmp_path, case):
    (old, new), fragment = SITE_CASES[case]
    p = tmp_path / "s.toml"
    p.write_text(_text(SITES, (old, new)))
    with pytest.raises(InputError) as exc:
        read_sites(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, "), msg
    assert fragment in msg, msg


SITE_HINTS = {
    "anemometer_below_canopy_top": (("wind_height_m = 30.0", "wind_height_m = 18.0"),
                                    "site 'beta': the anemometer (18 m) is below the canopy top (20 m)"),
    "grass_canopy_zero": (("canopy_height_m = 0.1", "canopy_height_m = 0.0"),
                          "site 'alpha': canopy_height_m is 0 for the vegetated class 'grass'"),
    "steep_slope_percent": (("utc_offset_h = 0\n", "utc_offset_h = 0\nterrain_slope_deg = 60\n"),
                            "terrain_slope_deg 60 is steeper than 45 degrees: a percent grade"),
    "sampler_in_canopy": (("sampler_height_m = 25.0", "sampler_height_m = 5.0"),
                          "site 'beta': the air sampler inlet (5 m) is at or below the "
                          "displacement height (15.4 m)"),
    "anemometer_below_canopy_of_an_earlier_class": (
        (_ALPHA_TAIL, _ALPHA_TAIL.replace("10.0", "14.0") + _FELLED),
        "site 'alpha': the anemometer (14 m) is below the canopy top (15 m) of the mast's "
        "surface 'conifer_forest' until 2015-01-01"),
    "position_placeholder": (("latitude = 52.0\nlongitude = 5.0", "latitude = 0\nlongitude = 0"),
                             "site 'alpha': latitude and longitude are both 0: a placeholder?"),
}


@pytest.mark.parametrize("case", list(SITE_HINTS), ids=list(SITE_HINTS))
def test_site_geometry_hints(tmp_path, case):
    """Doubtful (not impossible) geometry is read, with a hint in the catalogue notes."""
    (old, new), fragment = SITE_HINTS[case]
    p = tmp_path / "s.toml"
    p.write_text(_text(SITES, (old, new)))
    cat = read_sites(p)
    assert any(fragment in n for n in cat.notes), cat.notes
    assert all(n.startswith("s.toml, site ") for n in cat.notes)


def test_clean_catalogue_has_no_hints(tmp_path):
    p = tmp_path / "s.toml"
    p.write_text(SITES)
    assert read_sites(p).notes == []


# --------------------------------------------------------------------- TOML files
def test_sites_latin1(tmp_path):
    p = tmp_path / "s.toml"
    p.write_bytes(SITES.replace("Beta Test Wood", "Beta B\u00e4ck Wood").encode("latin-1"))
    with pytest.raises(InputError) as exc:
        read_sites(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 20: not UTF-8 text (byte 0xe4 at byte offset"), msg
    assert "got 'name = \"Beta B\u00e4ck Wood\"'" in msg
    assert "save as UTF-8" in msg


def test_sites_with_byte_order_mark_is_read(tmp_path):
    p = tmp_path / "s.toml"
    p.write_bytes(b"\xef\xbb\xbf" + SITES.encode())
    assert read_sites(p).ids == ["alpha", "beta"]


@pytest.mark.parametrize("nest", ["[" * 3000 + "]" * 3000, "{a = " * 3000 + "1" + "}" * 3000])
def test_sites_deeply_nested(tmp_path, nest):
    p = tmp_path / "s.toml"
    p.write_text(SITES + f"lai = {nest}\n")
    with pytest.raises(InputError) as exc:
        read_sites(p)
    assert str(exc.value) == (f"{p}: TOML nested too deeply to read, expected tables and "
                              "arrays nested a few levels at most")


# --------------------------------------------------------------------- NetCDF met
def _nc(tmp_path, edit=None, name="met.nc"):
    """Write the tiny met as NetCDF (dims site, time; CF units), after `edit`."""
    (tmp_path / "s.toml").write_text(SITES)
    cat = read_sites(tmp_path / "s.toml")
    (tmp_path / "m.csv").write_text(met_text(n_hours=6))
    met, _ = read_met(tmp_path / "m.csv", cat)
    nc = met.drop_vars("row_present")
    if edit is not None:
        nc = edit(nc)
    nc.to_netcdf(tmp_path / name, engine="scipy")
    return tmp_path / name, cat


def _with_height(ds):
    return ds.assign(wind_speed=ds["wind_speed"].expand_dims(height=[2.0, 10.0], axis=2))


def _collapsed(ds):
    return ds.assign_coords(time=np.full(ds.sizes["time"], ds["time"].values[0]))


def _half_hours(ds):
    return ds.assign_coords(time=ds["time"].values + np.timedelta64(30, "m"))


def _no_units(ds):
    ds["temperature"].attrs.pop("units")
    return ds


def _kelvin_as_kg(ds):
    ds["pressure"].attrs["units"] = "kg"
    return ds


def _undecoded_time(ds):
    return ds.assign_coords(time=np.arange(ds.sizes["time"], dtype=float))


NC_CASES = {
    "extra_dimension": (_with_height, "column 'wind_speed': variable on other dimensions: "
                        "got '(site, time, height)', expected dims (site, time) only"),
    "missing_variable": (lambda ds: ds.drop_vars("pressure"),
                         "column 'pressure': missing required variable, expected a variable "
                         "named 'pressure'"),
    "missing_units": (_no_units, "column 'temperature': variable has no units attribute, "
                      "expected a CF 'units' attribute convertible to K"),
    "wrong_units": (_kelvin_as_kg, "column 'pressure': unknown or dimensionally wrong unit"),
    "collapsed_time_axis": (_collapsed, "column 'wind_speed': duplicate hourly timestamp with "
                            "another value (site 'alpha', time 2020-01-07T00:00:00: time index "
                            "1 repeats time index 0): got '3.5 m s-1', expected one value per "
                            "site and hour (time index 0 has wind_speed 3.0 m s-1 where time "
                            "index 1 has 3.5 m s-1); keep the corrected time step only"),
    "half_hour_stamps": (_half_hours, "column 'time': timestamp not on the hour (site 'alpha', "
                         "time index 0): got '2020-01-07T00:30:00', expected hourly timestamps"),
    "site_misspelt": (lambda ds: ds.assign_coords(site=["alpah"]),
                      "column 'site': site not in the catalogue: got 'alpah', expected one of "
                      "alpha, beta (did you mean 'alpha'?)"),
    "time_not_decoded": (_undecoded_time, "column 'time': time not decoded as dates: got "
                         "'float64 (no units)', expected a CF time coordinate"),
    "station_instead_of_site": (lambda ds: ds.rename(site="station"),
                                "column 'site': missing dimension: got 'station, time', "
                                "expected dims (site, time)"),
}


@pytest.mark.parametrize("case", list(NC_CASES), ids=list(NC_CASES))
def test_netcdf_bad_input(tmp_path, case):
    edit, fragment = NC_CASES[case]
    p, cat = _nc(tmp_path, edit)
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, "), msg
    assert fragment in msg, msg


def test_netcdf_not_netcdf(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    cat = read_sites(tmp_path / "s.toml")
    p = tmp_path / "met.nc"
    p.write_text(met_text(n_hours=3))
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    assert re.match(rf"{re.escape(str(p))}: cannot open NetCDF \(.+\), expected a NetCDF file$",
                    str(exc.value)), str(exc.value)


def test_netcdf_single_level_is_dropped_with_a_note(tmp_path):
    """A variable on (site, time, height) with one height is that variable, noted."""
    p, cat = _nc(tmp_path, lambda ds: ds.assign(
        wind_speed=ds["wind_speed"].expand_dims(height=[10.0], axis=2)))
    met, led = read_met(p, cat)
    assert met["wind_speed"].dims == ("site", "time")
    assert "met.nc: single-level dimension dropped from wind_speed (height)" in led.notes
