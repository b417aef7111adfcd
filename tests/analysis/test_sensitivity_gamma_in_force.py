"""The ``nh3_gamma_<class>`` factor follows the Gamma_s in force.

The factor is a multiplier of the class's stomatal emission potential wherever it is in
force: the class default, the scenario's ``[dry] nh3_emission_potential`` (by class or
``"<site>/<class>"``) or the site's own value in sites.toml.  Before, it was Gamma_s
itself, its ``[]`` range the class default times/over the GSD, and a site's own value
won over it: on a grass site given Gamma_s = 2000 (grazed grass) the factor explored
17-150 around the grass default 50 at no effect, the tornado's two ends equal.
"""
import dataclasses

import numpy as np
import pandas as pd
import pytest

from workbench.analysis import sensitivity as S
from workbench.analysis.sensitivity_options import SensitivityOptions

pytest.importorskip("SALib")

KW = {"resolution": "month", "start": "2021-02-01", "end": "2021-03-01"}
SITE_GAMMA = 2000.0          # invented: a grazed grass site (docs: 500-2000 for such grass)


def _variant(tiny, tmp_path, site_gamma=None):
    """The tiny site with NH3 measured, sun and warmth (an emission part), the NH3 Vd
    from the engine; optionally its own Gamma_s for grass in sites.toml."""
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc, _, _, _ = tiny
    src = sc.path.parent
    for name in ("sites.toml", "precip.csv", "scenario.toml"):
        (tmp_path / name).write_text((src / name).read_text())
    if site_gamma is not None:
        with open(tmp_path / "sites.toml", "a") as f:
            f.write(f"\n[site.nh3_emission_potential]\ngrass = {site_gamma}\n")
    air = pd.read_csv(src / "air.csv", comment="#")
    air["NH3 [ug/m3]"] = [4.0, 6.0, 2.0, 5.0]                 # invented
    (tmp_path / "air.csv").write_text("# reference_state: ambient\n" + air.to_csv(index=False))
    met = pd.read_csv(src / "met.csv")
    hour = pd.to_datetime(met["time"]).dt.hour
    met["solar_radiation [W/m2]"] = np.where((hour >= 8) & (hour <= 16), 500.0, 0.0)
    met["temperature [degC]"] = 15.0
    met.to_csv(tmp_path / "met.csv", index=False)
    vsc = load_scenario(tmp_path / "scenario.toml")
    # the scenario's own bidirectional exchange (the factor keeps the scenario's
    # nh3_treatment: under deposition-only it has no effect)
    base = {"wet": vsc.options["wet"], "dry": dataclasses.replace(
                vsc.options["dry"], seasonal_category=1, nh3_treatment="bidirectional"),
            "budget": vsc.options["budget"],
            "fixed_velocity": {k: v for k, v in vsc.fixed_velocity.items() if k != "NH3"}}
    return Study.from_scenario(vsc), base


def _n_dry(study, base, gamma: dict):
    """N dry of a plain bidirectional run with `gamma` as the scenario's potentials."""
    from workbench.analysis.layer import linear_layer
    from workbench.units import element_deposition_in
    dry = dataclasses.replace(base["dry"], nh3_treatment="bidirectional",
                              nh3_emission_potential=gamma)
    res = study.run(base["wet"], dry, base["budget"], base["fixed_velocity"], **KW)
    tot = S.linear_outputs(linear_layer(res, study), 0, {}, 1)
    return float(element_deposition_in(tot["N_dry"][0, 0, 0], "N", "kg_ha"))


def test_the_gamma_factor_scales_a_site_s_own_value(tiny, tmp_path):
    study, base = _variant(tiny, tmp_path, SITE_GAMMA)
    opt = SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_grass": []})
    lo, hi = opt.factors["nh3_gamma_grass"]
    t = S.tornado(study, base, opt, KW)
    row = t[(t["element"] == "N") & (t["quantity"] == "dry")
            & (t["factor"] == "nh3_gamma_grass")].iloc[0]
    # the ends are the site's 2000 times/over the GSD, not the grass default 50's
    assert row["output_high"] == pytest.approx(
        _n_dry(study, base, {"quill/grass": SITE_GAMMA * hi}), rel=1e-9)
    assert row["output_low"] == pytest.approx(
        _n_dry(study, base, {"quill/grass": SITE_GAMMA * lo}), rel=1e-9)
    assert row["output_high"] < row["output_low"]              # more emission, less net
    assert (row["low"], row["high"]) == (str(lo), str(hi))


def test_the_gamma_factor_scales_the_scenario_s_override(tiny, tmp_path):
    study, base = _variant(tiny, tmp_path)
    base["dry"] = dataclasses.replace(base["dry"], nh3_emission_potential={"grass": 800.0})
    opt = SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_grass": (0.5, 2.0)})
    t = S.tornado(study, base, opt, KW)
    row = t[(t["element"] == "N") & (t["quantity"] == "dry")
            & (t["factor"] == "nh3_gamma_grass")].iloc[0]
    assert row["output_high"] == pytest.approx(_n_dry(study, base, {"grass": 1600.0}),
                                               rel=1e-9)
    assert row["output_low"] == pytest.approx(_n_dry(study, base, {"grass": 400.0}),
                                              rel=1e-9)


def test_scaled_gamma_multiplies_every_key_of_the_class_once():
    got = S.scaled_gamma({"grass": 800.0, "farm/grass": 1500.0, "farm/crops": 900.0},
                         {"grass": 2.0}, {"fell/grass": 300.0, "farm/grass": 99.0})
    # the scenario's key wins over the catalogue's, as in the velocities stage
    assert got == {"fell/grass": 600.0, "farm/grass": 3000.0, "farm/crops": 900.0,
                   "grass": 1600.0}
    assert S.scaled_gamma({}, {"crops": 0.5}) == {"crops": 500.0}   # the class default 1000


def test_an_absolute_gamma_range_is_refused_as_a_multiplier():
    """An old-style range of Gamma_s values (e.g. crops 300-3000) is refused with the
    multiplier meant, not taken as 300-3000 times the value in force."""
    with pytest.raises(ValueError, match=r"nh3_gamma_crops = \[300, 3000\]: a multiplier"):
        SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_crops": (300, 3000)})


def test_the_record_says_the_factor_is_a_multiplier_of_the_value_in_force():
    from workbench.analysis.sensitivity_design import design
    opt = SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_grass": []})
    d = design(opt, {})
    assert d["factors"]["nh3_gamma_grass"]["varies"].startswith(
        "a multiplier of the stomatal NH3 emission potential Gamma_s of the class grass "
        "in force at each site")
    assert d["factors"]["nh3_gamma_grass"]["range"] == [0.333, 3.0]
