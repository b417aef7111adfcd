"""Draws of the net NH3 exchange (``nh3_treatment = "bidirectional"``) where it is an emission.

One year of the demo's farm (invented; tests/ui/demo_subset.py) with an invented, very
large stomatal emission potential of crops (Gamma_s 50,000), so that the net exchange
of 2023 is an emission (net < 0).  The net is B - E: a deposition part B = sum of
C vd over the samples, linear in the concentration C, and an emission part E from the
compensation point, which holds no C.  So a concentration error of relative size x
moves the net by x B (the law of propagation for a linear function, JCGM 100:2008,
5.1.2; common practice), not by x (B - E).  B is found by hand from the engine itself:
the budget run again with every NH3 concentration times 1.1 gives net' = net + 0.1 B.

The draws used to scale the net by the relative error of the deposition-only rows:
with a net emission a higher concentration then made a larger emission (the draws
anti-correlated with the concentration's calibration), and the spread was 0.1 |B - E|
instead of 0.1 B.
"""
import types
import warnings

import numpy as np
import pandas as pd
import pytest

from analysis.tiny_site import OFF
from ui.demo_subset import study_and_args, write_demo_subset
from workbench.analysis import uncertainty as U

GAMMA = 50000.0
N_DRAWS = 4000
SD = 0.1


def _farm(d, nh3_scale=1.0):
    sc = write_demo_subset(d, ("farm",), 2023, 2023)
    text = sc.read_text()
    sc.write_text(text.replace("[budget]", '[dry]\nnh3_treatment = "bidirectional"\n'
                               f"nh3_emission_potential = {{ crops = {GAMMA} }}\n\n[budget]"))
    if nh3_scale != 1.0:
        lines = (d / "air.csv").read_text().splitlines(keepends=True)
        head = [ln for ln in lines if ln.startswith("#")]
        a = pd.read_csv(d / "air.csv", comment="#", dtype=str, keep_default_na=False)
        v = pd.to_numeric(a["NH3 [ug/m3]"], errors="coerce")
        a["NH3 [ug/m3]"] = np.where(v.notna(), (v * nh3_scale).map("{:.6g}".format), a["NH3 [ug/m3]"])
        (d / "air.csv").write_text("".join(head) + a.to_csv(index=False))
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    return study, res


def _net(res):
    y = res.years
    return float(y["nh3_net"].sel(site="farm", receptor="crops").values[0])


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    return (_farm(tmp_path_factory.mktemp("nh3net")),
            _farm(tmp_path_factory.mktemp("nh3net_up"), 1.1))


def _draws(study, res, opt):
    lay = U.linear_layer(res, study, "years")
    ds = lay.budget
    k = list(ds["site"].values).index("farm")
    r = list(ds["receptor"].values).index("crops")
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, "farm"), 2023,
                         (ds["period_start"].values, ds["period_end"].values))
    comp = U.component_draws(lay, k, noise, 2023)
    names = [c[1:] for c in U.COMPONENTS]
    return (comp[:, r, 0, names.index(("dry", "NH3"))],
            comp[:, r, 0, names.index(("dry", "pNH4"))]
            / ds["deposition"].values[k, r, 0, names.index(("dry", "pNH4"))])


def test_the_net_is_an_emission_and_b_is_found_by_hand(runs):
    (_, res), (_, up) = runs
    net, b = _net(res), (_net(up) - _net(res)) / 0.1
    assert res.years.attrs["nh3_figure"] == "net"
    assert net < 0 < b                       # an emission; the deposition part > 0


def test_every_factor_off_draws_the_net(runs):
    (study, res), _ = runs
    nh3, _ = _draws(study, res, U.UncertaintyOptions(draws=5, seed=3, **OFF))
    assert nh3 == pytest.approx(np.full(5, _net(res)), rel=1e-9)


def test_a_concentration_error_moves_the_net_by_its_deposition_part(runs):
    (study, res), (_, up) = runs
    net, b = _net(res), (_net(up) - _net(res)) / 0.1
    opt = U.UncertaintyOptions(draws=N_DRAWS, seed=3,
                               **{**OFF, "lab_bias_air_rel_sd": SD, "lab_bias_filter_pack": True})
    nh3, factor = _draws(study, res, opt)     # NH3 shares pNH4's calibration draw
    # the draws lie on net + B (f - 1), f the calibration factor of the draw
    slope, intercept = np.polyfit(factor, nh3, 1)
    assert slope == pytest.approx(b, rel=1e-3)
    assert intercept + slope == pytest.approx(net, rel=1e-3)
    # their spread is SD B (a normal factor cut at 0 only 10 SD below its mean)
    assert nh3.std() == pytest.approx(SD * b, rel=5 / np.sqrt(2 * N_DRAWS))
    assert np.corrcoef(factor, nh3)[0, 1] > 0.99
