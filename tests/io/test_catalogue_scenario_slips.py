"""Field slips of the site catalogue, its critical loads, the scenario file and the
headers of the data files (docs/data_formats.md, "Catalogue, critical-load and scenario
slips (a fifth audit)"; invented sites "alpha" and "beta" of tiny_inputs).

Each case was read before as a silent wrong number, a wrong cause or advice that does
not work; the tests say what it was.
"""
from __future__ import annotations

import pytest

from tiny_inputs import PRECIP, SITES, alpha_site, located_error
from workbench.errors import InputError, ScenarioError
from workbench.io import read_met, read_precipitation, read_sites
from workbench.scenario import load_scenario


# ------------------------------------------------------------ a height in a header
@pytest.mark.parametrize("header, unit", [("wind_speed [m/s]", "10 m"),
                                          ("temperature [degC]", "2 m")])
def test_a_height_in_a_met_header_is_not_called_a_scaled_unit(files, cat, header, unit):
    # before: "a scaled unit: multiply the values by 10 and write 'm'" for a wind speed
    p = files["met"]
    name = header.split(" [")[0]
    p.write_text(p.read_text().replace(header, f"{name} [{unit}]"))
    msg = located_error(read_met, p, cat)
    assert f"column '{name} [{unit}]'" in msg, msg
    assert "a scaled unit" not in msg and "multiply" not in msg, msg
    assert f"'{unit}' is a height, not a unit (the measurement height written in " \
           "the header?): write the column's unit alone in the brackets" in msg, msg


def test_a_height_in_the_gauge_header_is_not_called_tenths(write, cat):
    # before: "a scaled unit: multiply the values by 10 and write 'm'"
    p = write("p.csv", PRECIP.replace("gauge_depth [mm]", "gauge_depth [10 m]"))
    msg = located_error(read_precipitation, p, cat)
    assert "a scaled unit" not in msg and "'10 m' is a height, not a unit" in msg, msg


@pytest.mark.parametrize("unit, k", [("0.1 mm", "0.1"), ("1/10 mm", "0.1"), ("0.2 mm", "0.2")])
def test_a_count_of_tenths_of_mm_keeps_its_advice(write, cat, unit, k):
    p = write("p.csv", PRECIP.replace("gauge_depth [mm]", f"gauge_depth [{unit}]"))
    msg = located_error(read_precipitation, p, cat)
    assert f"a scaled unit: multiply the values by {k} and write 'mm'" in msg, msg


# ------------------------------------------------------------ the site catalogue
def _sites(tmp_path, text):
    p = tmp_path / "sites.toml"
    p.write_text(text, encoding="utf-8")
    return p


def _error(tmp_path, text) -> str:
    p = _sites(tmp_path, text)
    with pytest.raises(InputError) as exc:
        read_sites(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line "), msg
    return msg


def test_a_monthly_lai_stored_x10_is_refused(tmp_path):
    # before: read as written, a grass of LAI 20-40 (the dry deposition's stomata x10)
    lai = "lai = [20, 20, 22, 26, 32, 38, 40, 38, 32, 26, 22, 20]\n"
    msg = _error(tmp_path, alpha_site() + lai)
    assert "line 13, column 'lai': leaf-area index larger than any canopy's" in msg, msg
    assert "40 is 4" in msg and "a percent: 0.4" in msg, msg


def test_lai_max_as_a_percent_is_refused(tmp_path):
    msg = _error(tmp_path, alpha_site() + "lai_min = 60\nlai_max = 240\n")
    assert "line 14, column 'lai_max': leaf-area index larger than any canopy's: got " \
           "'240'" in msg and "a percent: 2.4" in msg, msg


def test_an_lai_between_the_densest_stands_and_the_limit_is_noted(tmp_path):
    cat = read_sites(_sites(tmp_path, alpha_site() + "lai_min = 2.0\nlai_max = 16.0\n"))
    assert any("lai_max reaches 16, above 12 m2 m-2" in n for n in cat.notes), cat.notes
    assert max(cat["alpha"].lai) == pytest.approx(16.0)        # used as written


def test_a_negative_lai_min_says_negative(tmp_path):
    # before: "lai_min above lai_max: got '-0.6'"
    msg = _error(tmp_path, alpha_site() + "lai_min = -0.6\nlai_max = 2.4\n")
    assert "column 'lai_min': negative leaf-area index: got '-0.6'" in msg, msg


@pytest.mark.parametrize("land_use, height, metres", [("grass", "12.0", "0.12"),
                                                      ("crops", "60.0", "0.6")])
def test_a_short_canopy_in_cm_is_refused_at_its_line(tmp_path, land_use, height, metres):
    # before: grass 12 m tall read with two hints and a wind-unit flag (knots?) at every
    # hour; crops 60 m: "anemometer at or below the displacement height" at wind_height_m
    text = alpha_site().replace('land_use = "grass"', f'land_use = "{land_use}"').replace(
        "canopy_height_m = 0.1", f"canopy_height_m = {height}")
    msg = _error(tmp_path, text)
    assert f"line 8, column 'canopy_height_m': canopy too tall for the class " \
           f"'{land_use}': got '{height}'" in msg, msg
    assert f"({height.split('.')[0]} cm is {metres} m)" in msg, msg


def test_a_tall_grass_within_its_class_is_read(tmp_path):
    text = alpha_site().replace("canopy_height_m = 0.1", "canopy_height_m = 2.5")
    assert read_sites(_sites(tmp_path, text))["alpha"].canopy_height_m == 2.5


def test_a_coarse_fraction_in_quotes_says_so(tmp_path):
    # before: "bad coarse fraction: got 'pNO3 = 0.3', expected a mass fraction from 0 to 1"
    msg = _error(tmp_path, alpha_site() + 'coarse_fraction = {pNO3 = "0.3"}\n')
    assert "wrong type in coarse_fraction: got \"pNO3 = '0.3'\", expected a number from " \
           "0 to 1 without quotes" in msg, msg


def test_a_coarse_fraction_in_percent_gets_the_fraction(tmp_path):
    msg = _error(tmp_path, alpha_site() + "coarse_fraction = {pNO3 = 30}\n")
    assert "(a percent? 30 % is pNO3 = 0.3)" in msg, msg


@pytest.mark.parametrize("code", ["-999", "-9999.0"])
def test_a_missing_value_code_as_a_critical_load(tmp_path, code):
    # before: "negative value" only
    msg = _error(tmp_path, alpha_site() + f"\n[site.critical_loads]\ncl_nut_n = {code}\n")
    assert "looks like a missing-value code" in msg and "leave the key out" in msg, msg


# ------------------------------------------------------------ the scenario
def _scenario(tmp_path, body, sites="s.toml"):
    (tmp_path / "s.toml").write_text(SITES)
    p = tmp_path / "sc.toml"
    p.write_text(f'[inputs]\nsites = "{sites}"\n' + body)
    return p


def _scenario_error(p) -> str:
    with pytest.raises((ScenarioError, InputError)) as exc:
        load_scenario(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line "), msg
    return msg


@pytest.mark.parametrize("value, reading", [('"true"', '("true" is true)'),
                                            ("1", "(1 is true)"), ('"no"', '("no" is false)')])
def test_a_boolean_of_another_type_gets_what_toml_reads(tmp_path, value, reading):
    # before: "expected a boolean like the default False", which TOML refuses
    msg = _scenario_error(_scenario(tmp_path, f"[dry]\ncompare_schemes = {value}\n"))
    assert "a boolean like the default false; write true or false, lower case, without " \
           f"quotes {reading}" in msg, msg


def test_a_capital_boolean_is_named_in_the_toml_error(tmp_path):
    msg = _scenario_error(_scenario(tmp_path, "[dry]\ncompare_schemes = True\n"))
    assert "line 4: invalid TOML" in msg and "write true or false, lower case" in msg, msg


def test_a_bare_word_is_named_in_the_toml_error(tmp_path):
    msg = _scenario_error(_scenario(tmp_path, "[period]\nresolution = year\n"))
    assert 'write text in quotes: resolution = "year"' in msg, msg


def test_an_input_written_from_the_current_folder(tmp_path, monkeypatch):
    # before: "expected a path relative to the scenario file, or absolute" only
    (tmp_path / "run").mkdir()
    p = _scenario(tmp_path / "run", "")
    sites = tmp_path / "run" / "s.toml"
    p.write_text('[inputs]\nsites = "run/s.toml"\n')
    monkeypatch.chdir(tmp_path)
    msg = _scenario_error(p)
    assert "line 2, column 'inputs.sites': input file does not exist: got 'run/s.toml'" in msg
    assert f"looked for {tmp_path / 'run' / 'run' / 's.toml'})" in msg, msg
    assert f"'run/s.toml' exists from the current folder ({sites}), but paths are read " \
           "from the scenario file's folder: write 's.toml'" in msg, msg


def test_an_input_that_is_a_folder(tmp_path):
    # before: "<folder>: is a directory, expected a file", without the scenario's line
    msg = _scenario_error(_scenario(tmp_path, "", sites="."))
    assert "line 2, column 'inputs.sites': a folder, not a file: got '.'" in msg, msg


@pytest.mark.parametrize("text, iso", [("01/02/2021", "2021-02-01 if day first, "
                                        "2021-01-02 if month first"),
                                       ("31.12.2021", "2021-12-31 (day first; no month 31)")])
def test_a_period_date_in_day_month_order_gets_its_readings(tmp_path, text, iso):
    msg = _scenario_error(_scenario(tmp_path, f'[period]\nstart = "{text}"\n'))
    assert f"not a date: got '{text}'" in msg and iso in msg, msg



# ------------------------------------------------------------ more of the same files
@pytest.mark.parametrize("unit, same", [("molc/ha/yr", "eq/ha/yr"), ("eq ha-1 yr-1", "eq/ha/yr"),
                                        ("keq/ha/a", "keq/ha/yr"), ("meq m-2 yr-1", "meq/m2/yr")])
def test_a_critical_load_unit_written_another_way_gets_its_spelling(tmp_path, unit, same):
    # before: molc/ha/yr (the same as eq/ha/yr) got "did you mean 'kg/ha/yr'?", 62-71 x off
    msg = _error(tmp_path, alpha_site() + f'\n[site.critical_loads]\nunit = "{unit}"\n'
                 "cl_nut_n = 700.0\n")
    assert f"column 'unit': unknown unit of critical loads: got '{unit}'" in msg, msg
    assert f"(did you mean '{same}'? the same unit written another way)" in msg, msg


def test_a_critical_load_key_given_twice_says_so(tmp_path):
    msg = _error(tmp_path, alpha_site() + "\n[site.critical_loads]\ncl_nut_n = 700.0\n"
                 "cl_nut_n = 700.0\n")
    assert "line 16: invalid TOML" in msg and "a key given twice in one table" in msg, msg


def test_a_critical_load_table_given_twice_says_so(tmp_path):
    block = "\n[site.critical_loads]\ncl_nut_n = 700.0\n"
    msg = _error(tmp_path, alpha_site() + block + block)
    assert "invalid TOML" in msg and "a table given twice" in msg, msg


def test_an_air_period_with_its_end_at_its_start(write, cat):
    # before: "end before start" for a period of length 0 (one hourly label in both)
    from tiny_inputs import AIR
    from workbench.io import read_air
    p = write("a.csv", AIR.replace("alpha,2020-01-07T09:00,2020-01-14T09:00",
                                   "alpha,2020-01-07T09:00,2020-01-07T09:00"))
    msg = located_error(read_air, p, cat)
    assert "column 'end': end equal to start (a period of length 0): got " \
           "'2020-01-07T09:00'" in msg and "one time label per row" in msg, msg


def test_a_critical_load_with_a_decimal_comma_says_so(tmp_path):
    # before: "invalid TOML (Expected newline or end of document after a statement ...)"
    msg = _error(tmp_path, alpha_site() + "\n[site.critical_loads]\ncl_nut_n = 714,5\n")
    assert "line 15: invalid TOML" in msg and "a decimal comma? write 714.5" in msg, msg
