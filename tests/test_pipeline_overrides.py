"""What-if site overrides given in code are checked as the scenario's are."""
import pytest

from workbench.errors import InputError


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    import test_budget as tb
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc = load_scenario(tb._write(tmp_path_factory.mktemp("ov")))
    return Study.from_scenario(sc)


@pytest.mark.parametrize("override, column, fragment", [
    ({"alpha": {"roughness_length_m": 0.0}}, "sites.alpha.roughness_length_m",
     "roughness length not positive"),
    ({"alpha": {"roughness_length_m": -0.1}}, "sites.alpha.roughness_length_m",
     "roughness length not positive"),
    ({"alpha": {"terrain_slope_deg": 95.0}}, "sites.alpha.terrain_slope_deg", "0-90"),
    ({"alhpa": {"canopy_height_m": 0.2}}, "sites.alhpa", "did you mean 'alpha'?"),
])
def test_impossible_what_if_override_is_a_located_error(study, override, column, fragment):
    with pytest.raises(InputError) as exc:
        study.catalogue(override)
    text = str(exc.value)
    assert f"column '{column}'" in text and fragment in text and "what-if" in text


def test_plausible_override_is_applied(study):
    cat = study.catalogue({"alpha": {"roughness_length_m": 0.5}})
    assert cat["alpha"].roughness_length_m == 0.5
