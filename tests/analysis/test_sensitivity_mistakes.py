"""Mistakes a first-time user makes in ``[sensitivity]``: each gives one located message
(file, the line of the entry at fault, its key, what was expected) or a flagged result.

A trial by a student checking a site budget: a factor name misspelt, a range written
high-low, a class of the roughness factor misspelt, 100 base samples.  Before, a
misspelt factor was reported on the line of ``sites`` (column ``sensitivity.sites``), a
bad range on the ``[sensitivity.factors]`` header, ``z0_gras`` was taken and gave indices
of 0 at every cell (a complete-looking "no effect"), and 100 samples said only "must be
a power of 2".
"""
import pytest

from workbench.analysis.sensitivity_options import SensitivityOptions
from workbench.errors import ScenarioError
from workbench.scenario import validate

HEAD = """[inputs]
sites = "sites.toml"

[sensitivity]
sites = ["fell"]
"""


def _error(tmp_path, text):
    path = tmp_path / "scenario.toml"
    path.write_text(text)
    import tomllib
    with pytest.raises(ScenarioError) as err:
        validate(tomllib.loads(text), path=path, text=text, require_inputs=False)
    return err.value, text.splitlines()


@pytest.mark.parametrize("entry, problem", [
    ("vd_S02 = [0.5, 2.0]", "unknown sensitivity factor 'vd_S02'"),
    ("vd_SO2 = [2.0, 0.5]", "0 <= low < high"),
    ("vd_SO2 = [1.0, 1.0]", "not given low = high"),
    ("vd_SO2 = [-0.5, 1.5]", "0 <= low < high"),
    ("z0_gras = [0.01, 0.05]", "unknown land-use class in factor 'z0_gras'"),
    ("wetness_rule = [\"met\", \"wet\"]", "must list 2 or more"),
    # a class without a canopy: the bidirectional model leaves it deposition-only, so
    # an explicit range had no effect and was taken without a note (as `[]` is refused)
    ("nh3_gamma_water = [0.5, 2]", "a multiplier of it has nothing to act on"),
    ("nh3_gamma_snow_ice = [0.5, 2.0]", "a multiplier of it has nothing to act on"),
    ("nh3_gamma_barren = []", "a multiplier of it has nothing to act on"),
])
def test_a_bad_factor_is_placed_on_its_own_line(tmp_path, entry, problem):
    text = HEAD + "\n[sensitivity.factors]\ngauge_catch = [0.9, 1.1]\n" + entry + "\n"
    err, lines = _error(tmp_path, text)
    name = entry.split(" =")[0]
    assert lines[err.line - 1] == entry                      # the factor's line
    assert err.column == f"sensitivity.factors.{name}"
    assert problem in str(err) and str(tmp_path / "scenario.toml") in str(err)


def test_a_bad_factor_of_an_inline_table_is_placed_on_the_factors_line(tmp_path):
    text = HEAD + "factors = { gauge_catch = [0.9, 1.1], vd_S02 = [0.5, 2.0] }\n"
    err, lines = _error(tmp_path, text)
    assert lines[err.line - 1].startswith("factors = {")
    assert err.column == "sensitivity.factors.vd_S02"


@pytest.mark.parametrize("name, meant", [("vd_S02", "vd_SO2"), ("z0_gras", "z0_grass"),
                                         ("gauge_catc", "gauge_catch"),
                                         ("rc_scale_S02", "rc_scale_SO2"),
                                         ("nh3_gamma_crop", "nh3_gamma_crops")])
def test_a_misspelt_factor_names_the_one_meant(name, meant):
    with pytest.raises(ValueError, match=f"did you mean '{meant}'"):
        SensitivityOptions(factors={"air_conc": (0.9, 1.1), name: (0.5, 2.0)})
    from workbench.analysis.sensitivity_options import factor_names
    assert meant in factor_names()


def test_z0_of_a_class_not_in_the_table_is_refused():
    with pytest.raises(ValueError, match="unknown land-use class in factor 'z0_lawn'"):
        SensitivityOptions(factors={"air_conc": (0.9, 1.1), "z0_lawn": (0.01, 0.1)})
    SensitivityOptions(factors={"air_conc": (0.9, 1.1), "z0_grass": (0.01, 0.1)})


@pytest.mark.parametrize("n, near", [(100, "64 or 128"), (3, "2 or 4"), (1, "2"), (0, "2"),
                                     (1000, "512 or 1024")])
def test_samples_not_a_power_of_two_names_the_nearest(tmp_path, n, near):
    err, lines = _error(tmp_path, HEAD + f"samples = {n}\n")
    assert lines[err.line - 1] == f"samples = {n}" and err.column == "sensitivity.samples"
    assert f"must be a power of 2 (e.g. {near};" in str(err)


def test_a_roughness_or_gamma_factor_of_a_class_the_site_lacks_says_so(tiny):
    """The tiny site is grass only: ``z0_crops`` and ``nh3_gamma_crops`` have nothing to
    act on there.  Before, their indices and tornado ends were 0 with an empty note, as
    a measured nil effect; now the note says the site has no crops surface."""
    from workbench.analysis import sensitivity as S
    sc, study, _, _ = tiny
    opt = SensitivityOptions(samples=4, seed=1, factors={
        "vd_SO2": (0.5, 1.5), "z0_crops": (0.05, 0.2), "z0_grass": (0.01, 0.05)})
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}
    kw = {"resolution": "month", "start": "2021-02-01", "end": "2021-03-01"}
    for frame in (S.sobol(study, base, opt, kw), S.tornado(study, base, opt, kw)):
        crops = frame[frame["factor"] == "z0_crops"]
        assert len(crops) and crops["note"].str.startswith(
            "no effect: the site has no crops surface (its classes: grass").all()
        grass = frame[frame["factor"] == "z0_grass"]
        assert not grass["note"].str.contains("has no grass surface").any()
    assert S.row_note("nh3_gamma_crops", "N", "dry", ({}, {}), classes=("grass",)) == (
        "no effect: the site has no crops surface (its classes: grass)")
    assert S.row_note("nh3_gamma_grass", "N", "dry", ({}, {}), classes=("grass",)) == ""


def test_a_site_written_as_text_not_a_list_shows_the_list(tmp_path):
    """``sites = "fell"``: the message read "expected a array like the default ()"
    (Python's empty tuple, and "a array")."""
    text = HEAD.replace('sites = ["fell"]', 'sites = "fell"')
    err, lines = _error(tmp_path, text)
    assert lines[err.line - 1] == 'sites = "fell"' and err.column == "sensitivity.sites"
    assert str(err).endswith("wrong type: got 'fell', expected an array like the default [] "
                             '(e.g. ["fell"])')
