"""Scenario files: round trip of every option set, and the docs list every option."""
import dataclasses
from pathlib import Path

import pytest

from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.scenario import load_scenario, save_scenario, option_sections
from workbench.wet import WetOptions

DEMO = Path(__file__).resolve().parent.parent / "demo_data"


def test_round_trip(tmp_path):
    sc0 = load_scenario(DEMO / "scenario.toml")
    wet = dataclasses.replace(WetOptions(), detection_limit="zero", capture_rain=(0.6, 1.3))
    dry = DryOptions(wetness_rule="always_wet", seasonal_category=3)
    spec = dataclasses.replace(dry.particle_modes["pNO3"], fine_fraction=0.2)
    dry = dataclasses.replace(dry, particle_modes={**dry.particle_modes, "pNO3": spec})
    bud = BudgetOptions(sulfate_basis="total", bulk_correction="scale_wet", pair_split="all_gas")
    path = save_scenario(tmp_path / "mine.toml", inputs=sc0.input_paths(),
                         period={"resolution": "month", "start": "2020-01-01", "end": "2021-01-01"},
                         options={"wet": wet, "dry": dry, "budget": bud},
                         fixed_velocity={"SO2": 0.4}, site_overrides={"ridge": {"roughness_length_m": 1.1}})
    sc = load_scenario(path)
    assert sc.options["wet"] == wet
    assert sc.options["dry"] == dry
    assert sc.options["budget"] == bud
    assert sc.fixed_velocity == {"SO2": 0.4}
    assert sc.data["sites"] == {"ridge": {"roughness_length_m": 1.1}}
    assert sc.data["period"]["resolution"] == "month"
    assert sc.input_paths() == sc0.input_paths()


def test_docs_list_every_option():
    text = (Path(__file__).resolve().parent.parent / "docs" / "scenario.md").read_text()
    missing = [f"{sec}.{f.name}" for sec, cls in option_sections().items()
               for f in dataclasses.fields(cls) if f"`{f.name}`" not in text]
    assert not missing, f"options not documented in docs/scenario.md: {missing}"


def test_option_tables_are_current(tmp_path, monkeypatch):
    """docs/scenario.md's option tables match the dataclasses (regenerate with
    `python docs/make_option_tables.py`)."""
    import importlib.util
    docs = Path(__file__).resolve().parent.parent / "docs"
    spec = importlib.util.spec_from_file_location("mot", docs / "make_option_tables.py")
    mot = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mot)
    text = (docs / "scenario.md").read_text()
    for name, cls in option_sections().items():
        assert mot.table(name, cls) in text, f"[{name}] table out of date"


# ----------------------------------------------------------------- bad scenarios
from workbench.errors import InputError, ScenarioError  # noqa: E402

_TINY = Path(__file__).resolve().parent


def _scenario(tmp_path, body, encoding="utf-8", prefix=b""):
    import sys
    sys.path.insert(0, str(_TINY))
    from tiny_inputs import SITES
    (tmp_path / "s.toml").write_text(SITES)
    p = tmp_path / "sc.toml"
    p.write_bytes(prefix + ('[inputs]\nsites = "s.toml"\n' + body).encode(encoding))
    return p


BAD_SCENARIOS = {
    "misspelt_site_id": ("[sites.alpah]\ncanopy_height_m = 0.2\n",
                         "line 3, column 'sites.alpah': unknown site id: got 'alpah', expected a "
                         "site of s.toml: alpha, beta (did you mean 'alpha'?)"),
    "unknown_override_key": ("[sites.alpha]\ncanopy_hieght_m = 0.2\n",
                             "line 4, column 'sites.alpha.canopy_hieght_m': unknown key, expected "
                             "one of canopy_height_m"),
    "number_as_text": ("[sites.alpha]\ncanopy_height_m = \"0.2 m\"\n",
                       "line 4, column 'sites.alpha.canopy_height_m': wrong type: got '0.2 m', "
                       "expected a number (canopy height of the site's surface [m]); write the "
                       "number alone, without quotes, in the unit the key names"),
    "override_roughness_zero": ("[sites.beta]\nroughness_length_m = 0.0\n",
                                "line 4, column 'sites.beta.roughness_length_m': roughness length "
                                "not positive: got '0.0', expected z0 > 0 m"),
    # a forest's canopy (a grass canopy of 16 m is refused first as a height in cm)
    "override_canopy_above_mast": ("[sites.beta]\ncanopy_height_m = 40.0\n",
                                   "line 4, column 'sites.beta.canopy_height_m': anemometer at or "
                                   "below the displacement height (with wind_height_m = 30.0 from "
                                   "s.toml): got '40.0', expected wind_height_m 30 m above the "
                                   "displacement height d = 30.9 m"),
    "override_slope_95": ("[sites.alpha]\nterrain_slope_deg = 95\n",
                          "line 4, column 'sites.alpha.terrain_slope_deg': terrain slope outside "
                          "0-90 degrees: got '95'"),
    "override_unknown_land_use": ("[sites.alpha]\nmet_land_use = \"lawn\"\n",
                                  "line 4, column 'sites.alpha.met_land_use': unknown land-use "
                                  "class: got 'lawn'"),
    "period_end_before_start": ("[period]\nstart = \"2020-06-01\"\nend = \"2020-01-01\"\n",
                                "line 5, column 'period.end': period end not after its start: got "
                                "'2020-01-01', expected a time after start = 2020-06-01"),
    "period_bad_date": ("[period]\nstart = \"2020-13-01\"\n",
                        "line 4, column 'period.start': not a date: got '2020-13-01', expected "
                        "an ISO 8601 date"),
    "period_day_first": ("[period]\nend = \"31/12/2020\"\n",
                         "line 4, column 'period.end': not a date: got '31/12/2020'"),
    "unknown_gas_in_dry_gases": ("[dry]\ngases = [\"SO2\", \"H2S\"]\n",
                                 "line 4, column 'dry.gases': unknown gas: got 'H2S', expected "
                                 "one of SO2, HNO3"),
    "unknown_roughness_class": ("[dry]\nroughness = {grassland = [0.1, 0.05]}\n",
                                "line 4, column 'dry.roughness': unknown land-use class: got "
                                "'grassland', expected one of conifer_forest"),
    "ion_for_air_species": ("[budget]\npreferred_method = {NH4 = \"passive\"}\n",
                            "line 4, column 'budget.preferred_method': unknown air species: got "
                            "'NH4', expected one of SO2"),
    "unknown_gas": ("[dry.fixed_velocity]\nSO3 = 0.5\n",
                    "line 4, column 'dry.fixed_velocity.SO3': unknown species, expected one of "
                    "SO2"),
    # a fixed Vd typed in mm/s (50 for 5 cm/s): above the aerodynamic limit, refused
    "fixed_vd_too_large": ("[dry.fixed_velocity]\nSO2 = 50\n",
                           "line 4, column 'dry.fixed_velocity.SO2': out of range: got '50', "
                           "expected a deposition velocity of 0 to 10 cm/s"),
    # [dry] so2_cuticle: a misspelt value is one located message with the nearest choice
    "so2_cuticle_misspelt": ("[dry]\nso2_cuticle = \"erisman94\"\n",
                             "line 4, column 'dry.so2_cuticle': invalid value (unknown "
                             "so2_cuticle 'erisman94'; use one of scheme, erisman1994 (did "
                             "you mean 'erisman1994'?))"),
    # [dry] particle_settling: a misspelt value, a value of the wrong type
    "particle_settling_misspelt": ("[dry]\nparticle_settling = \"stoke\"\n",
                                   "line 4, column 'dry.particle_settling': invalid value "
                                   "(unknown particle_settling 'stoke'; use one of stokes, clift_gauvin "
                                   "(did you mean 'stokes'?))"),
    "particle_settling_not_text": ("[dry]\nparticle_settling = 1\n",
                                   "line 4, column 'dry.particle_settling'"),
    "fixed_vd_negative": ("[dry.fixed_velocity]\nSO2 = -0.5\n",
                          "line 4, column 'dry.fixed_velocity.SO2': out of range: got '-0.5'"),
}


@pytest.mark.parametrize("case", list(BAD_SCENARIOS), ids=list(BAD_SCENARIOS))
def test_bad_scenario(tmp_path, case):
    body, fragment = BAD_SCENARIOS[case]
    p = _scenario(tmp_path, body)
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, "), msg
    assert fragment in msg, msg


def test_scenario_latin1(tmp_path):
    p = _scenario(tmp_path, "# Auswertung f\u00fcr 2020\n", encoding="latin-1")
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 3: not UTF-8 text (byte 0xfc"), msg
    assert "got '# Auswertung f\u00fcr 2020'" in msg and "save as UTF-8" in msg


def test_scenario_with_byte_order_mark(tmp_path):
    p = _scenario(tmp_path, "[period]\nresolution = \"month\"\n", prefix=b"\xef\xbb\xbf")
    assert load_scenario(p).data["period"]["resolution"] == "month"


def test_scenario_deeply_nested(tmp_path):
    p = _scenario(tmp_path, "[sites.alpha]\nlai = " + "[" * 3000 + "]" * 3000 + "\n")
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    assert str(exc.value) == f"{p}: TOML nested too deeply to read, expected tables and arrays " \
        "nested a few levels at most"


def test_override_lai_extremes_become_monthly_lai(tmp_path):
    """lai_min/lai_max overrides are turned into the monthly lai the study applies."""
    sc = load_scenario(_scenario(tmp_path, "[sites.beta]\nlai_min = 1.0\nlai_max = 3.0\n"))
    lai = sc.data["sites"]["beta"]["lai"]
    assert len(lai) == 12 and min(lai) == pytest.approx(1.0) and max(lai) == pytest.approx(3.0)
    assert "lai_min" not in sc.data["sites"]["beta"]


def test_override_hint_reaches_the_notes(tmp_path):
    """A doubtful (not impossible) override is read, with a hint in the scenario notes."""
    sc = load_scenario(_scenario(tmp_path, "[sites.beta]\nwind_height_m = 18.0\n"))
    assert any("scenario [sites.beta]: the anemometer (18 m) is below the canopy top" in n
               for n in sc.notes), sc.notes


def test_catalogue_error_is_located_in_the_catalogue(tmp_path):
    """A bad value in the catalogue itself is reported there, not in the scenario."""
    p = _scenario(tmp_path, "[sites.alpha]\ncollector = \"bulk\"\n")
    (tmp_path / "s.toml").write_text((tmp_path / "s.toml").read_text().replace(
        "canopy_height_m = 20.0", "canopy_height_m = 0.0"))
    with pytest.raises(InputError) as exc:
        load_scenario(p)
    assert str(exc.value).startswith(f"{tmp_path / 's.toml'}, line 25, column 'canopy_height_m'")


def test_site_catalogue_given_as_the_scenario(tmp_path):
    """A user passing sites.toml where the scenario belongs is told which file to give."""
    p = tmp_path / "sites.toml"
    p.write_text((DEMO / "sites.toml").read_text())
    with pytest.raises(ScenarioError) as exc:
        load_scenario(p)
    assert "a site catalogue, not a scenario, expected the scenario file, whose [inputs] " \
        "names this catalogue as sites = ..." in str(exc.value)


# ------------------------------------------- a [period] date written with or without quotes
@pytest.mark.parametrize("written", ['start = 2020-01-01\nend = 2021-12-31',
                                     'start = "2020-01-01"\nend = "2021-12-31"'])
def test_period_date_only_end_keeps_its_last_day(tmp_path, written):
    """`end = 2021-12-31` (a TOML date, unquoted) reads as the quoted text does (the
    unquoted one was refused as "wrong type"), and a date-only end on a period's last
    day keeps that day: the periods are whole, so December runs to 2022-01-01, and the
    run note says so (docs/scenario.md, "A date as end")."""
    import numpy as np

    from workbench.periods import make_periods
    from workbench.preflight import span_notes
    sc = load_scenario(_scenario(tmp_path, f"[period]\nresolution = \"month\"\n{written}\n"))
    p = sc.data["period"]
    assert (p["start"], p["end"]) == ("2020-01-01", "2021-12-31")
    table = make_periods(p["start"], p["end"], "month")
    assert table["label"].iloc[-1] == "2021-12"
    assert table["end"].iloc[-1] == np.datetime64("2022-01-01")
    notes = span_notes(p["start"], p["end"], table["start"].iloc[0], table["end"].iloc[-1],
                       "month")
    assert notes == ["note: [period] end 2021-12-31 lies inside a month period: the budget "
                     "covers whole month periods, from 2020-01-01 to 2022-01-01 (put start and "
                     "end on the first instant of a month period; docs/scenario.md)"]


def test_period_toml_datetime_with_offset_is_utc(tmp_path):
    """An unquoted TOML date-time with an offset is taken to UTC (the budget's clock)."""
    sc = load_scenario(_scenario(tmp_path, "[period]\nstart = 2020-01-01T01:00:00+01:00\n"
                                           "end = 2021-01-01T00:00:00\n"))
    assert (sc.data["period"]["start"], sc.data["period"]["end"]) == ("2020-01-01T00:00",
                                                                      "2021-01-01T00:00")


def test_period_end_at_24_00_is_the_end_of_that_day(tmp_path):
    """`end = "2021-12-31T24:00"` (the end of the day, as the sample files' 24:00 labels
    are read) was refused as "not a date"; it is 2022-01-01T00:00."""
    sc = load_scenario(_scenario(tmp_path, "[period]\nend = \"2021-12-31T24:00\"\n"))
    assert sc.data["period"]["end"] == "2022-01-01T00:00"
    with pytest.raises(ScenarioError, match="not a date"):
        load_scenario(_scenario(tmp_path, "[period]\nend = \"2021-02-30T24:00\"\n"))
