"""The transfer of u* per receptor or per site (DryOptions.ustar_transfer_receptor, the
site's ``ustar_transfer`` table): each receptor takes the numbers of the whole-run
transfer it names, the others are untouched, bad values are located errors.

The two transfers themselves are checked in tests/surface and
tests/drydep/test_drydep_particles_demo.py; here only the choice per receptor.
"""
from dataclasses import replace

import numpy as np
import pytest

from drydep.dry_synthetic import ONE_SITE_TOML, make_met, make_surfaces
from workbench.drydep import DryOptions, velocities
from workbench.drydep.receptors import receptor_transfers
from workbench.errors import InputError

SITE = ONE_SITE_TOML + 'receptors = ["deciduous_forest"]\n'


@pytest.fixture(scope="module")
def runs():
    surf = make_surfaces()
    met = make_met(surf, hours=24 * 20, seed=3)
    opt = DryOptions(particles=("pSO4",), gases=("SO2", "HNO3"), components=False)
    drag = velocities(met, surf, opt)
    blend = velocities(met, surf, replace(opt, ustar_transfer="blending_height"))
    return surf, met, opt, drag, blend


def _same(a, b):
    for v in ("friction_velocity", "ra", "vd_SO2", "vd_HNO3", "vd_pSO4"):
        np.testing.assert_array_equal(a[v].values, b[v].values)


def test_site_and_class_key_moves_that_receptor_only(runs):
    surf, met, opt, drag, blend = runs
    key = dict(site="bramble_moor", receptor="deciduous_forest")
    one = velocities(met, surf, replace(opt, 
        ustar_transfer_receptor={"bramble_moor/deciduous_forest": "blending_height"}))
    _same(one.sel(**key), blend.sel(**key))
    assert not np.allclose(drag["friction_velocity"].sel(**key),
                           blend["friction_velocity"].sel(**key))
    rest = one.drop_sel(receptor="deciduous_forest")
    _same(rest, drag.drop_sel(receptor="deciduous_forest"))


def test_class_key_and_precedence(runs):
    surf, met, opt, drag, blend = runs
    over = {"conifer_forest": "blending_height", "alder_hill/conifer_forest": "drag_law"}
    ds = velocities(met, surf, replace(opt, ustar_transfer_receptor=over))
    _same(ds.sel(site="alder_hill", receptor="conifer_forest"),
          drag.sel(site="alder_hill", receptor="conifer_forest"))
    _same(ds.sel(site="bramble_moor", receptor="conifer_forest"),
          blend.sel(site="bramble_moor", receptor="conifer_forest"))
    # the other way round: blending height by default, the drag law for one class
    back = velocities(met, surf, replace(opt, ustar_transfer="blending_height",
                                                 ustar_transfer_receptor={"grass": "drag_law"}))
    _same(back.sel(receptor="grass"), drag.sel(receptor="grass"))
    _same(back.sel(receptor="water"), blend.sel(receptor="water"))


def test_site_table_between_the_option_keys():
    surf = make_surfaces()
    table = np.full((surf.sizes["site"], surf.sizes["receptor"]), "", dtype=object)
    r = list(surf["receptor"].values)
    table[1, r.index("crops")] = "blending_height"
    surf = surf.assign(ustar_transfer=(("site", "receptor"), table))
    got = receptor_transfers(surf, r, DryOptions())
    assert got[1, r.index("crops")] == "blending_height"
    assert set(got[0]) == {"drag_law"}
    got = receptor_transfers(surf, r, DryOptions(ustar_transfer_receptor={"crops": "drag_law"}))
    assert got[1, r.index("crops")] == "blending_height"          # the site's table wins
    got = receptor_transfers(surf, r, DryOptions(
        ustar_transfer_receptor={"bramble_moor/crops": "drag_law"}))
    assert got[1, r.index("crops")] == "drag_law"                 # "<site>/<class>" wins


def test_unset_leaves_the_dataset_and_numbers_alone(runs, tmp_path):
    from workbench.io.sites import read_sites
    (tmp_path / "sites.toml").write_text(SITE)
    assert "ustar_transfer" not in read_sites(tmp_path / "sites.toml").surfaces()
    surf, met, opt, drag, _ = runs
    _same(velocities(met, surf, replace(opt, ustar_transfer_receptor={})), drag)


@pytest.mark.parametrize("over, fragment", [
    ({"woodlot": "blending_height"}, "ustar_transfer_receptor: 'woodlot'"),
    ({"grass": "blending"}, "ustar_transfer_receptor: 'grass' = 'blending'"),
    ({"a/b/grass": "drag_law"}, "ustar_transfer_receptor"),
])
def test_bad_option_values(over, fragment):
    with pytest.raises(ValueError, match=fragment):
        DryOptions(ustar_transfer_receptor=over)


def test_sites_toml_table_reaches_the_surfaces(tmp_path):
    from workbench.io.sites import read_sites
    f = tmp_path / "sites.toml"
    f.write_text(SITE + '\n[site.ustar_transfer]\ndeciduous_forest = "blending_height"\n')
    cat = read_sites(f)
    assert cat.ustar_transfer() == {"a/deciduous_forest": "blending_height"}
    surf = cat.surfaces()
    assert surf["ustar_transfer"].sel(site="a", receptor="deciduous_forest") == "blending_height"
    assert surf["ustar_transfer"].sel(site="a", receptor="grass") == ""


@pytest.mark.parametrize("extra, fragment", [
    ('conifer_forest = "drag_law"', "line 14.*a surface the site does not have.*conifer_forest"),
    ('deciduous_forest = "blend"', "line 14.*unknown transfer of u\\*.*blending_height"),
])
def test_sites_toml_errors_are_located(tmp_path, extra, fragment):
    from workbench.io.sites import read_sites
    f = tmp_path / "sites.toml"
    f.write_text(SITE + f"\n[site.ustar_transfer]\n{extra}\n")
    with pytest.raises(InputError, match=fragment):
        read_sites(f)


def test_scenario_site_override_reaches_the_engine(tmp_path):
    from workbench.io.sites import read_sites
    from workbench.pipeline import Study
    from workbench.scenario import SITE_OVERRIDES
    assert "ustar_transfer" in SITE_OVERRIDES
    (tmp_path / "sites.toml").write_text(SITE)

    class _Inputs:
        catalogue = read_sites(tmp_path / "sites.toml")
    study = Study(_Inputs(), {"a": {"ustar_transfer": {"deciduous_forest": "blending_height"}}})
    surf = study.surfaces()
    got = receptor_transfers(surf, list(surf["receptor"].values), DryOptions())
    assert dict(zip(surf["receptor"].values, got[0])) == {
        "grass": "drag_law", "deciduous_forest": "blending_height"}


@pytest.mark.parametrize("body, fragment", [
    ('[dry.ustar_transfer_receptor]\n"alpha/grass" = "woodlot"\n',
     "line 3, column 'dry.ustar_transfer_receptor': invalid value"),
    ('[sites.alpha]\nustar_transfer = {deciduous_forest = "drag_law"}\n',
     "line 4, column 'sites.alpha.ustar_transfer': ustar_transfer for a surface the site "
     "does not have"),
    ('[sites.alpha]\nustar_transfer = {conifer_forest = "blend"}\n',
     "line 4, column 'sites.alpha.ustar_transfer': unknown transfer of u*"),
])
def test_scenario_errors_are_located(tmp_path, body, fragment):
    import sys
    from pathlib import Path
    from workbench.errors import ScenarioError
    from workbench.scenario import load_scenario
    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
    from tiny_inputs import SITES
    (tmp_path / "s.toml").write_text(SITES)
    p = tmp_path / "sc.toml"
    p.write_text('[inputs]\nsites = "s.toml"\n' + body)
    with pytest.raises((ScenarioError, InputError)) as exc:
        load_scenario(p)
    assert fragment in str(exc.value), str(exc.value)
