"""Draws of the net NH3 exchange under ``[budget] pair_split`` where it is an emission.

One year of the demo's farm (invented; tests/ui/demo_subset.py) with an invented, very
large stomatal emission potential of crops (Gamma_s 50,000), so that the net exchange
of 2023 is an emission, as in tests/analysis/test_uncertainty_nh3_net.py.

* ``pair_split = "all_gas"`` moves pNH4 into the NH3 exchange: the net is
  B_NH3 + B_pNH4 - E, the deposition parts linear in the two concentrations, E from
  the compensation point without any concentration.  So a calibration error of
  relative size x shared by NH3 and pNH4 (a filter pack's gas filter analysed as its
  particle's ion, ``lab_bias_filter_pack``) moves the net by x (B_NH3 + B_pNH4) (the
  law of propagation for a linear function, JCGM 100:2008, 5.1.2; common practice).
  B = B_NH3 + B_pNH4 is found by hand from the engine itself: the budget run again
  with every NH3 and pNH4 value times 1.1 gives net' = net + 0.1 B.
* ``pair_split = "all_particle"`` leaves the exchange C(NH3) = 0: the net is -E, so a
  Vd factor F of NH3 makes it -F E (F log-normal, GSD ``vd_gsd.NH3``).

Before, the pair-split path scaled the net by the relative error of the deposition-only
rows: under all_gas the draws fell with a higher concentration (slope net < 0, not B),
and under all_particle the NH3 rows were gone and the net was a constant.
"""
import dataclasses
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


def _scale(d, columns, factor):
    lines = (d / "air.csv").read_text().splitlines(keepends=True)
    head = [ln for ln in lines if ln.startswith("#")]
    a = pd.read_csv(d / "air.csv", comment="#", dtype=str, keep_default_na=False)
    for col in columns:
        v = pd.to_numeric(a[col], errors="coerce")
        a[col] = np.where(v.notna(), (v * factor).map("{:.6g}".format), a[col])
    (d / "air.csv").write_text("".join(head) + a.to_csv(index=False))


def _farm(d, how, scale=1.0):
    sc = write_demo_subset(d, ("farm",), 2023, 2023)
    sc.write_text(sc.read_text().replace(
        "[budget]", '[dry]\nnh3_treatment = "bidirectional"\n'
        f"nh3_emission_potential = {{ crops = {GAMMA} }}\n\n[budget]"))
    if scale != 1.0:
        _scale(d, ("NH3 [ug/m3]", "pNH4 [ug/m3]"), scale)
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(args[0], args[1], dataclasses.replace(args[2], pair_split=how),
                        *args[3:])
    return study, res


def _net(res):
    return float(res.years["nh3_net"].sel(site="farm", receptor="crops").values[0])


@pytest.fixture(scope="module")
def all_gas(tmp_path_factory):
    return (_farm(tmp_path_factory.mktemp("gas"), "all_gas"),
            _farm(tmp_path_factory.mktemp("gas_up"), "all_gas", 1.1))


@pytest.fixture(scope="module")
def all_particle(tmp_path_factory):
    return _farm(tmp_path_factory.mktemp("particle"), "all_particle")


def _draws(study, res, opt, what="NH3"):
    lay = U.linear_layer(res, study, "years")
    ds = lay.budget
    k = list(ds["site"].values).index("farm")
    r = list(ds["receptor"].values).index("crops")
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, "farm"), 2023,
                         (ds["period_start"].values, ds["period_end"].values))
    comp = U.component_draws(lay, k, noise, 2023)
    j = [c[1:] for c in U.COMPONENTS].index(("dry", what))
    return comp[:, r, 0, j], lay, k


def test_all_gas_moves_pnh4_into_an_emitting_exchange(all_gas):
    (study, res), (_, up) = all_gas
    net, b = _net(res), (_net(up) - _net(res)) / 0.1
    assert res.years.attrs["nh3_figure"] == "net"
    assert net < 0 < b
    # the NH3 component's rows are both members', with their deposition parts
    _, lay, k = _draws(study, res, U.UncertaintyOptions(draws=2, **OFF))
    pc = lay.sites[k].dry["NH3"]
    assert {i[0] for i in pc.ident} == {"NH3", "pNH4"}
    assert pc.exchange is not None
    members = np.array([i[0] for i in pc.ident])
    assert (pc.emission[members == "pNH4"] == 0).all()        # pNH4 emits nothing


def test_all_gas_every_factor_off_draws_the_net(all_gas):
    (study, res), _ = all_gas
    nh3, *_ = _draws(study, res, U.UncertaintyOptions(draws=5, seed=3, **OFF))
    assert nh3 == pytest.approx(np.full(5, _net(res)), rel=1e-9)


def test_all_gas_a_shared_calibration_moves_the_net_by_both_deposition_parts(all_gas):
    """The draws lie on net + B (f - 1), f the shared calibration factor (pNH4's, as the
    filter pack's NH3 takes it): slope B > 0.  The old path gave slope net < 0."""
    (study, res), (_, up) = all_gas
    net, b = _net(res), (_net(up) - _net(res)) / 0.1
    opt = U.UncertaintyOptions(draws=N_DRAWS, seed=3,
                               **{**OFF, "lab_bias_air_rel_sd": SD, "lab_bias_filter_pack": True})
    nh3, lay, k = _draws(study, res, opt)
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, "farm"), 2023)
    f = noise.lab_air["pNH4"][:, 0, 0]                # one laboratory period
    assert np.array_equal(noise.lab_air["NH3"], noise.lab_air["pNH4"])
    slope, intercept = np.polyfit(f, nh3, 1)
    assert slope == pytest.approx(b, rel=1e-3)
    assert intercept + slope == pytest.approx(net, rel=1e-3)
    assert nh3.std() == pytest.approx(SD * b, rel=5 / np.sqrt(2 * N_DRAWS))


def test_all_particle_the_net_is_minus_e_with_its_vd_factor(all_particle):
    """Under all_particle the net is -E (no NH3 in the exchange); with the NH3 Vd factor
    alone drawn (log-normal, GSD 2) the draws are -F E = net F: ln(draw / net) has the
    SD ln 2.  The old path held no NH3 rows there and drew the net as a constant."""
    study, res = all_particle
    net = _net(res)
    assert net < 0
    opt = U.UncertaintyOptions(draws=N_DRAWS, seed=5,
                               **{**OFF, "vd_gsd": {**OFF["vd_gsd"], "NH3": 2.0}})
    nh3, lay, k = _draws(study, res, opt)
    pc = lay.sites[k].dry["NH3"]
    assert (pc.exchange == 0).all() and pc.emission.sum() > 0
    assert (nh3 < 0).all()
    lnf = np.log(nh3 / net)
    assert lnf.std() == pytest.approx(np.log(2.0), rel=5 / np.sqrt(2 * N_DRAWS))
    assert abs(lnf.mean()) < 5 * np.log(2.0) / np.sqrt(N_DRAWS)
    # the calibration of the air changes nothing: no concentration in -E
    opt = U.UncertaintyOptions(draws=50, seed=5, **{**OFF, "lab_bias_air_rel_sd": SD,
                                                     "air_rel_sd": SD})
    nh3, *_ = _draws(study, res, opt)
    assert nh3 == pytest.approx(np.full(50, net), rel=1e-12)
