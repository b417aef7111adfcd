"""Bad input: one InputError whose message names file, line, column, value, expectation.

Each case writes a small broken file and asserts the whole message, so that a change
of wording is a deliberate change of the public interface.
"""
import pytest

from workbench.errors import InputError
from workbench.io import read_air, read_met, read_precipitation, read_sites
from workbench.landuse import LAND_USE

from tiny_inputs import PRECIP, SITES, met_text

HEAD = PRECIP.splitlines()[0]
ROW = "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,11.0,4.8,20.0,1.5,0.3,25.0,1.0,0.6,"


def _precip(write, rows, head=HEAD):
    return write("p.csv", head + "\n" + "\n".join(rows) + "\n")


@pytest.fixture
def cat(write):
    return read_sites(write("sites.toml", SITES))


def _raises(fn, *args, match):
    with pytest.raises(InputError) as exc:
        fn(*args)
    msg = str(exc.value)
    assert match in msg, msg
    return exc.value


def test_missing_required_column(write, cat):
    p = _precip(write, [ROW.replace(",12.0,", ",")], head=HEAD.replace("gauge_depth [mm],", ""))
    e = _raises(read_precipitation, p, cat, match="p.csv, line 1, column 'gauge_depth': "
                "missing required column, expected a column named 'gauge_depth'")
    assert e.line == 1


def test_unknown_unit(write, cat):
    p = _precip(write, [ROW], head=HEAD.replace("SO4 [mg/L]", "SO4 [mg/furlong]"))
    _raises(read_precipitation, p, cat, match="p.csv, line 1, column 'SO4 [mg/furlong]': "
            "unknown or dimensionally wrong unit")


def test_dimensionally_wrong_unit(write, cat):
    p = _precip(write, [ROW], head=HEAD.replace("gauge_depth [mm]", "gauge_depth [kg]"))
    _raises(read_precipitation, p, cat, match="column 'gauge_depth [kg]': unknown or "
            "dimensionally wrong unit")


def test_mixing_ratio_in_precipitation(write, cat):
    p = _precip(write, [ROW], head=HEAD.replace("SO4 [mg/L]", "SO4 [ppb]"))
    _raises(read_precipitation, p, cat, match="column 'SO4 [ppb]': unknown or dimensionally "
            "wrong unit (a mixing ratio): got 'ppb', expected amount density")


def test_text_in_numeric_column(write, cat):
    p = _precip(write, [ROW.replace(",4.8,", ",acid,")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'pH': text in a numeric "
            "column: got 'acid', expected a number (or empty, NA, N/A, NaN or - for missing)")


def test_negative_depth(write, cat):
    p = _precip(write, [ROW.replace(",12.0,", ",-2,")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'gauge_depth [mm]': "
            "negative depth: got '-2', expected a depth >= 0")


def test_end_before_start(write, cat):
    p = _precip(write, [ROW.replace("2020-01-14T09:00", "2020-01-06T09:00")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'end': end before start: "
            "got '2020-01-06T09:00', expected a time after the start 2020-01-07T09:00")


def test_overlapping_samples(write, cat):
    second = ROW.replace("2020-01-07T09:00,2020-01-14T09:00", "2020-01-13T09:00,2020-01-20T09:00")
    p = _precip(write, [ROW, second])
    _raises(read_precipitation, p, cat, match="p.csv, line 3, column 'start': overlapping "
            "samples from the same sampler: got '2020-01-13T09:00', expected a start at or "
            "after the end 2020-01-14T09:00 of the sample on line 2")


def test_overlapping_air_periods_same_species(write, cat):
    p = write("a.csv", "# reference_state: ambient\nsite,start,end,sampler_id,SO2 [ug/m3]\n"
              "alpha,2020-01-01T00:00,2020-01-08T00:00,s,1\n"
              "alpha,2020-01-07T00:00,2020-01-14T00:00,s,1\n")
    _raises(read_air, p, cat, match="a.csv, line 4, column 'start': overlapping SO2 periods "
            "from the same sampler")


def test_duplicate_hourly_timestamp(write, cat):
    text = met_text(n_hours=3)
    lines = text.splitlines()
    # (an exact repeat is dropped, tests/io/test_file_twice.py: here one value differs)
    p = write("m.csv", "\n".join(lines + [lines[-1].replace(",1010.0,", ",1010.2,")]) + "\n")
    _raises(read_met, p, cat, match="m.csv, line 6, column 'time': duplicate hourly timestamp: "
            "got '2020-01-07T03:00', expected one row per site and hour (also on line 5, "
            "which has 'pressure [hPa]' '1010.0' where this line has '1010.2')")


def test_site_not_in_catalogue(write, cat):
    p = _precip(write, [ROW.replace("alpha", "gamma")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'site': site not in the "
            "catalogue: got 'gamma', expected one of alpha, beta")


def test_unknown_land_use(write):
    p = write("s.toml", SITES.replace('land_use = "grass"', 'land_use = "grassland"'))
    _raises(read_sites, p, match="s.toml, line 7, column 'land_use': unknown land-use class: "
            "got 'grassland', expected one of conifer_forest")


def test_unknown_land_use_suggests(write):
    p = write("s.toml", SITES.replace('land_use = "grass"', 'land_use = "gras"'))
    _raises(read_sites, p, match="(did you mean 'grass'?)")


def test_ph_out_of_range(write, cat):
    p = _precip(write, [ROW.replace(",4.8,", ",15.2,")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'pH': pH outside 0-14 "
            "(H+ in ueq/L or umol/L under the pH header? 15.2 ueq/L is pH 4.82: write pH = "
            "6 - log10(H+)): got '15.2', expected a pH between 0 and 14")
    p = _precip(write, [ROW.replace(",4.8,", ",-0.2,")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'pH': pH outside 0-14: "
            "got '-0.2', expected a pH between 0 and 14")


def test_empty_file(write, cat):
    p = write("p.csv", "")
    _raises(read_precipitation, p, cat, match="p.csv: empty file, expected a header line and data rows")


def test_header_only(write, cat):
    p = write("p.csv", HEAD + "\n")
    _raises(read_precipitation, p, cat, match="p.csv, line 1: no data rows")


def test_bad_timestamp(write, cat):
    p = _precip(write, [ROW.replace("2020-01-07T09:00", "07/01/2020 09:00")])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'start': not an ISO 8601 "
            "timestamp (a date in day/month or month/day order? write year-month-day: "
            "2020-01-07T09:00 if day first, 2020-07-01T09:00 if month first): got "
            "'07/01/2020 09:00'")


def test_unknown_flag_code(write, cat):
    p = _precip(write, [ROW + "Q"])
    _raises(read_precipitation, p, cat, match="p.csv, line 2, column 'flags': unknown flag code: got 'Q'")


def test_met_not_on_the_hour(write, cat):
    text = met_text(n_hours=3).replace("T02:00", "T02:30")
    p = write("m.csv", text)
    _raises(read_met, p, cat, match="m.csv, line 4, column 'time': timestamp not on the hour: "
            "got '2020-01-07T02:30'")


def test_met_missing_unit(write, cat):
    text = met_text(n_hours=3).replace("wind_speed [m/s]", "wind_speed")
    p = write("m.csv", text)
    _raises(read_met, p, cat, match="m.csv, line 2, column 'wind_speed': column has no unit, "
            "expected a unit in square brackets")


def test_air_without_reference_state(write, cat):
    p = write("a.csv", "site,start,end,SO2 [ug/m3]\nalpha,2020-01-01T00:00,2020-01-08T00:00,1\n")
    _raises(read_air, p, cat, match="a.csv, line 1, column 'reference_state': reference state "
            "of mass concentrations not stated")


def test_two_columns_for_one_species(write, cat):
    p = _precip(write, [ROW + ",1.0"], head=HEAD + ",SO4_as_S [mg/L]")
    _raises(read_precipitation, p, cat, match="column 'SO4_as_S [mg/L]': two columns for one "
            "species, expected one column for SO4 (already given as 'SO4 [mg/L]')")


def test_sites_wrong_type(write):
    p = write("s.toml", SITES.replace("latitude = 52.0", 'latitude = "52 N"'))
    _raises(read_sites, p, match="s.toml, line 4, column 'latitude': wrong type: got '52 N', "
            "expected a number (degrees north, -90..90)")


def test_sites_unknown_key(write):
    p = write("s.toml", SITES.replace("utc_offset_h = 1", "utc_offset_h = 1\nwind_hieght_m = 3"))
    _raises(read_sites, p, match="column 'wind_hieght_m': unknown key, expected one of the "
            "documented site keys (did you mean 'wind_height_m'?)")


def test_sites_missing_key(write):
    p = write("s.toml", SITES.replace('elevation_m = 20.0\n', "", 1))
    _raises(read_sites, p, match="s.toml, line 1, column 'elevation_m': missing required key")


def test_sites_duplicate_id(write):
    p = write("s.toml", SITES.replace('id = "beta"', 'id = "alpha"'))
    _raises(read_sites, p, match="column 'id': duplicate site id: got 'alpha'")


def test_sites_id_with_a_trailing_blank(write):
    """'beta ' in the catalogue: refused there, not as 'beta' missing from a data file."""
    p = write("s.toml", SITES.replace('id = "beta"', 'id = "beta "'))
    _raises(read_sites, p, match="s.toml, line 19, column 'id': site id with blanks at its "
            "ends: got 'beta ', expected an id without leading or trailing blanks (the data "
            "files' cells are read stripped, so 'beta' there would never match it)")


def test_sites_id_starting_with_a_hash(write):
    """'#beta': refused in the catalogue, since a data-file line starting with '#' is a
    comment or a '# key: value' line and its rows would never be read as data."""
    p = write("s.toml", SITES.replace('id = "beta"', 'id = "#beta"'))
    _raises(read_sites, p, match="s.toml, line 19, column 'id': site id starting with '#': "
            "got '#beta', expected an id starting with a letter or digit (a data file's line "
            "starting with '#' is a comment or a '# key: value' line, so a row of '#beta' "
            "would never be read as data); e.g. 'beta'")


def test_invalid_toml(write):
    p = write("s.toml", SITES.replace('name = "Alpha Test Field"', 'name = Alpha'))
    _raises(read_sites, p, match="s.toml, line 3: invalid TOML")


def test_file_not_found(tmp_path, cat):
    _raises(read_precipitation, tmp_path / "nope.csv", cat, match="nope.csv: file not found")


def test_malformed_row(write, cat):
    p = _precip(write, [ROW + ",extra,fields"])
    _raises(read_precipitation, p, cat, match="p.csv, line 2: malformed CSV row")


def test_blanks_at_cell_edges_are_stripped_and_inner_ones_kept(tmp_path):
    """Cells are stripped where a blank touches a comma, a quote or a line end; a
    blank inside a cell (a date and time) stays."""
    from workbench.io.table import RawTable
    p = tmp_path / "t.csv"
    p.write_text('site,when,value\nridge ,2021-01-01 01:00,"1.5 "\n  mere,2021-01-01 02:00,\t2\n')
    tab = RawTable.read(p)
    assert list(tab.text("site")) == ["ridge", "mere"]
    assert list(tab.text("when")) == ["2021-01-01 01:00", "2021-01-01 02:00"]
    assert list(tab.numbers("value")) == [1.5, 2.0]
    p.write_text("site,value\nridge,1.5\nmere,2\n")
    assert list(RawTable.read(p).numbers("value")) == [1.5, 2.0]


@pytest.mark.parametrize("lines, match", [
    ('met_wind_unit = "knot"',
     "s.toml, line 12, column 'met_wind_unit': unknown wind unit in met_wind_unit: got 'knot', "
     'expected one of "knots", "mph", "km/h" (the unit the met file\'s wind speed is written '
     "in where its header says m/s) (did you mean 'knots'?)"),
    ('met_precipitation = "counter"',
     "s.toml, line 12, column 'met_precipitation': unknown form in met_precipitation: got "
     '\'counter\', expected "hourly" (each hour\'s amount, the default) or "daily_counter" '
     "(the day's running total, restarted each day) (did you mean 'daily_counter'?)"),
    ('met_precipitation = "daily_counter"\nmet_counter_restart_hour = 24',
     "s.toml, line 13, column 'met_counter_restart_hour': restart hour out of range: got '24', "
     "expected a whole hour of the day from 0 to 23 (the file's clock: 0 for a counter "
     "restarted at midnight, 9 at 09:00)"),
    ("met_counter_restart_hour = 9",
     "s.toml, line 12, column 'met_counter_restart_hour': met_counter_restart_hour without a "
     "daily counter: got '9', expected met_precipitation = \"daily_counter\" beside it (the "
     "hour is that counter's restart)"),
    ('met_precipitation = "daily_counter"\nmet_counter_restart_hour = 9.0',
     "s.toml, line 13, column 'met_counter_restart_hour': wrong type: got '9.0', expected a "
     "whole number (hour of the day (0-23, the file's clock) at which a daily counter "
     "restarts (met_precipitation = 'daily_counter'); default: the hour its falls come at)"),
])
def test_sites_met_writing_keys(write, lines, match):
    """How a site's met file is written (met_wind_unit, met_precipitation,
    met_counter_restart_hour): one located message per wrong value."""
    p = write("s.toml", SITES.replace("utc_offset_h = 1", "utc_offset_h = 1\n" + lines, 1))
    _raises(read_sites, p, match=match)


def test_scenario_met_writing_key_points_to_sites_toml(write):
    """The keys describe the file, read before any run: not a scenario override."""
    from workbench.errors import WorkbenchError
    from workbench.scenario import load_scenario
    write("sites.toml", SITES)
    s = write("scenario.toml", '[inputs]\nsites = "sites.toml"\n\n[sites.alpha]\n'
              'met_wind_unit = "knots"\n')
    with pytest.raises(WorkbenchError) as exc:
        load_scenario(s)
    msg = str(exc.value)
    assert "line 5, column 'sites.alpha.met_wind_unit': unknown key" in msg, msg
    assert msg.endswith("; how a site's met file is written is said in the site catalogue "
                        "only (sites.toml), read with the file before any run"), msg


@pytest.mark.parametrize("value, hint", [
    ('"52.0"', "; write the number without quotes"),
    ("\"52°30'N\"", "; write decimal degrees (52°30' is 52.5)"),
])
def test_sites_wrong_type_hints(write, value, hint):
    p = write("s.toml", SITES.replace("latitude = 52.0", f"latitude = {value}"))
    _raises(read_sites, p, match="expected a number (degrees north, -90..90)" + hint)


@pytest.mark.parametrize("typo, meant", [("grasland", "grass"), ("Grass", "grass"),
                                         ("conifer", "conifer_forest")])
def test_land_use_suggestion_reads_as_meant(write, typo, meant):
    """Before, 'grasland' suggested 'moorland' (nearer by difflib's ratio)."""
    p = write("s.toml", SITES.replace('land_use = "grass"', f'land_use = "{typo}"'))
    _raises(read_sites, p, match=f"(did you mean {meant!r}?)")


@pytest.mark.parametrize("written, cls", [("heathland", "moorland"), ("heath", "moorland"),
                                          ("pasture", "grass"), ("bog", "wetland"),
                                          ("lake", "water")])
def test_unknown_land_use_names_the_class_that_covers_it(write, written, cls):
    """A new analyst's "heathland" was answered "did you mean 'wetland'?" (the nearest
    spelling); the class whose description (workbench/landuse.py) covers the word is
    named now."""
    p = write("s.toml", SITES.replace('land_use = "grass"', f'land_use = "{written}"'))
    msg = str(_raises(read_sites, p, match=f"got '{written}', expected one of "))
    assert msg.endswith(f"(did you mean '{cls}'? its class covers {LAND_USE[cls][0]})"), msg


@pytest.mark.parametrize("header, written, factor", [
    ("SO2 [ug S/m3]", "SO2_as_S [ug/m3]", "2"),
    ("SO2-S [ug/m3]", "SO2_as_S [ug/m3]", "2"),
    ("S-SO2 [ug/m3]", "SO2_as_S [ug/m3]", "2"),
    ("SO2 [ugS/m3]", "SO2_as_S [ug/m3]", "2"),
])
def test_air_gas_element_word_in_header(write, cat, header, written, factor):
    """A gas on the element basis written with the element beside the species or in the
    unit: before, 'unknown species ... (did you mean 'SO2'?)' or 'not a concentration',
    and writing the hint ('SO2 [ug/m3]') read the amounts of S 2 x too low in silence.
    Factor: molar masses SO2 64.06, S 32.06 g/mol (periodictable, checked in
    tests/io/test_element_basis_slips.py)."""
    from tiny_inputs import AIR
    p = write("a.csv", AIR.replace("SO2 [ug/m3]", header))
    _raises(read_air, p, cat, match=(
        f"a.csv, line 2, column '{header}': SO2 on the element basis (S) written in a form "
        f"not read: got '{header}', expected '{written}' (the element basis goes in the name "
        f"as '_as_S'); do not drop the S: under 'SO2 [ug/m3]' amounts of S are read "
        f"{factor} x too low"))


@pytest.mark.parametrize("header, written, factor", [
    ("NH4-N [mg/L]", "NH4_as_N [mg/L]", "1.29"),
    ("NH4 [mg N/L]", "NH4_as_N [mg/L]", "1.29"),
    ("NH4 [mg/L as N]", "NH4_as_N [mg/L]", "1.29"),
])
def test_precipitation_ion_element_word_in_header(write, cat, header, written, factor):
    """The same in a precipitation file (ammonium as N: 18.04 / 14.01 g/mol)."""
    p = _precip(write, [ROW], head=HEAD.replace("NH4 [ueq/L]", header))
    _raises(read_precipitation, p, cat, match=(
        f"column '{header}': NH4 on the element basis (N) written in a form not read: got "
        f"'{header}', expected '{written}'"))
    _raises(read_precipitation, p, cat, match=f"amounts of N are read {factor} x too low")


def test_precipitation_ion_element_word_in_an_amount_header(write, cat):
    """In ueq/L the basis changes no number: the header to write is the ion's own."""
    p = _precip(write, [ROW], head=HEAD.replace("NH4 [ueq/L]", "NH4-N [ueq/L]"))
    _raises(read_precipitation, p, cat, match=(
        "column 'NH4-N [ueq/L]': NH4 on the element basis (N) written in a form not read: "
        "got 'NH4-N [ueq/L]', expected 'NH4 [ueq/L]' (an amount or a mixing ratio is the "
        "same number on either basis: 1 mol NH4 holds 1 mol N)"))
