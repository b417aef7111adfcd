"""The drawn gas/particle split of a filter pack's pairs (``[uncertainty]
pair_shift_nitrate``, ``pair_shift_ammonium``).

The tiny invented site of tiny_site.py with pNO3, NH3 and pNH4 added at fixed Vd, so
that every dry component is sum_n C_n Vd t_n / M (t = 7 d per weekly sample, the whole
of February 2021 covered).  Molar masses from periodictable (a general-purpose
reference library); the uniform distribution's quantiles from scipy.stats.uniform.
"""
import dataclasses

import numpy as np
import pandas as pd
import periodictable as pt
import pytest
from scipy import stats

from analysis.tiny_site import OFF
from workbench.analysis import noise as N
from workbench.analysis import pairnoise as PN
from workbench.analysis import uncertainty as U
from workbench.analysis.layer import linear_layer
from workbench.budget import COMPONENTS
from workbench.errors import ScenarioError
from workbench.pipeline import Study
from workbench.scenario import load_scenario

PNO3 = [2.0, 1.0, 3.0, 0.5]            # ug/m3, invented
NH3 = [4.0, 6.0, 2.0, 5.0]
PNH4 = [1.0, 1.5, 0.5, 2.0]
VD = {"pNO3": 0.2, "NH3": 1.2, "pNH4": 0.25}      # cm/s, fixed (tiny: HNO3 2.5)
T = 7 * 86400.0                                     # s per weekly sample


def _m(formula):
    """Molar mass [kg/mol] (periodictable)."""
    return pt.formula(formula).mass * 1e-3


def _hand(conc, vd_cm_s, formula):
    """sum_n C_n Vd t / M [mol m-2] of C in ug/m3."""
    return sum(c * 1e-9 / _m(formula) for c in conc) * vd_cm_s * 1e-2 * T


@pytest.fixture(scope="module")
def pairs(tiny, tmp_path_factory):
    sc, _, _, _ = tiny
    src = sc.path.parent
    d = tmp_path_factory.mktemp("pairs")
    for name in ("sites.toml", "precip.csv", "met.csv"):
        (d / name).write_text((src / name).read_text())
    air = pd.read_csv(src / "air.csv", comment="#")
    air["pNO3 [ug/m3]"], air["NH3 [ug/m3]"], air["pNH4 [ug/m3]"] = PNO3, NH3, PNH4
    (d / "air.csv").write_text("# reference_state: ambient\n" + air.to_csv(index=False))
    fixed = "".join(f"{k} = {v}\n" for k, v in VD.items())
    (d / "scenario.toml").write_text(sc.path.read_text().replace(
        "[dry.fixed_velocity]\n", "[dry.fixed_velocity]\n" + fixed))
    return d


def _run(d, split="measured"):
    vsc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(vsc)
    bud = dataclasses.replace(vsc.options["budget"], pair_split=split)
    res = study.run(vsc.options["wet"], vsc.options["dry"], bud, vsc.fixed_velocity,
                    "month", "2021-02-01", "2021-03-01")
    return study, res


def _j(sp):
    return [c[1:] for c in COMPONENTS].index(("dry", sp))


def _draws(study, res, opt, n_years=1):
    lay = linear_layer(res, study, pair_shift=opt.shifts_pairs)
    ds = lay.budget
    noise = U.site_noise(lay.sites[0], opt, opt.draws, n_years, 1, (opt.seed, "quill"), 2021,
                         (ds["period_start"].values, ds["period_end"].values))
    PN.with_pair_shift(noise, lay.sites[0], opt, (opt.seed, "quill"), n_years, 2021)
    r = list(ds["receptor"].values).index("grass")
    return U.component_draws(lay, 0, noise, 2021)[:, r, 0], noise, lay


def _point(res, sp):
    return float(res.budget["deposition"].sel(site="quill", receptor="grass").isel(
        period=0).values[_j(sp)])


def test_the_point_budget_is_the_hand_sum(pairs):
    study, res = _run(pairs)
    assert _point(res, "pNO3") == pytest.approx(_hand(PNO3, 0.2, "NO3"), rel=1e-9)
    assert _point(res, "HNO3") == pytest.approx(
        _hand([0.4, 0.8, 0.5, 0.3], 2.5, "HNO3"), rel=1e-9)
    assert _point(res, "NH3") == pytest.approx(_hand(NH3, 1.2, "NH3"), rel=1e-9)
    assert _point(res, "pNH4") == pytest.approx(_hand(PNH4, 0.25, "NH4"), rel=1e-9)


def test_a_fixed_share_moves_that_share_through_the_other_member_s_vd(pairs):
    """s = 0.3 of pNO3 was gas: HNO3 gains 0.3 x pNO3 at HNO3's Vd, pNO3 keeps 0.7;
    s = -0.25 of NH3 was particle: pNH4 gains 0.25 x NH3 at pNH4's Vd, NH3 keeps 0.75.
    Every other error off: each draw is that deterministic budget, by hand."""
    study, res = _run(pairs)
    opt = U.UncertaintyOptions(draws=5, seed=3, **OFF, pair_shift_nitrate=[0.3, 0.3],
                               pair_shift_ammonium=[-0.25, -0.25])
    comp, noise, _ = _draws(study, res, opt)
    assert set(noise.pair_shift) == {"nitrate", "ammonium"}
    hno3 = _hand([0.4, 0.8, 0.5, 0.3], 2.5, "HNO3") + 0.3 * _hand(PNO3, 2.5, "NO3")
    np.testing.assert_allclose(comp[:, _j("HNO3")], hno3, rtol=1e-9)
    np.testing.assert_allclose(comp[:, _j("pNO3")], 0.7 * _hand(PNO3, 0.2, "NO3"), rtol=1e-9)
    np.testing.assert_allclose(comp[:, _j("NH3")], 0.75 * _hand(NH3, 1.2, "NH3"), rtol=1e-9)
    np.testing.assert_allclose(comp[:, _j("pNH4")], _hand(PNH4, 0.25, "NH4")
                               + 0.25 * _hand(NH3, 0.25, "NH3"), rtol=1e-9)
    # the S components and the wet side are not touched
    base, _, _ = _draws(study, res, U.UncertaintyOptions(draws=5, seed=3, **OFF))
    for sp in ("SO2", "pSO4"):
        np.testing.assert_array_equal(comp[:, _j(sp)], base[:, _j(sp)])


def test_a_whole_share_is_the_budget_of_pair_split(pairs):
    """s = 1 moves all pNO3 into HNO3 at HNO3's Vd: the point budget of ``pair_split =
    "all_gas"``; s = -1 all NH3 into pNH4: that of ``"all_particle"``."""
    study, res = _run(pairs)
    _, gas = _run(pairs, "all_gas")
    _, part = _run(pairs, "all_particle")
    opt = U.UncertaintyOptions(draws=3, seed=3, **OFF, pair_shift_nitrate=[1, 1],
                               pair_shift_ammonium=[-1, -1])
    comp, _, _ = _draws(study, res, opt)
    np.testing.assert_allclose(comp[:, _j("HNO3")], _point(gas, "HNO3"), rtol=1e-9)
    np.testing.assert_allclose(comp[:, _j("pNO3")], 0.0, atol=1e-15)
    np.testing.assert_allclose(comp[:, _j("pNH4")], _point(part, "pNH4"), rtol=1e-9)
    np.testing.assert_allclose(comp[:, _j("NH3")], 0.0, atol=1e-15)


def test_the_drawn_shares_are_uniform_on_the_range_scipy(pairs):
    """The share recovered from the component draws (s > 0: 1 - pNO3 / P; s < 0:
    HNO3 / H - 1) against scipy.stats.uniform: a KS test, and the 5, 50, 95 %
    quantiles within 4 standard errors of an empirical quantile (common practice:
    sqrt(p (1 - p) / n) / pdf)."""
    study, res = _run(pairs)
    lo, hi, n = -0.4, 0.1, 4000
    opt = U.UncertaintyOptions(draws=n, seed=21, **OFF, pair_shift_nitrate=[lo, hi])
    comp, noise, _ = _draws(study, res, opt)
    p, h = _point(res, "pNO3"), _point(res, "HNO3")
    s = np.where(comp[:, _j("pNO3")] < p * (1 - 1e-12), 1 - comp[:, _j("pNO3")] / p,
                 comp[:, _j("HNO3")] / h - 1)
    np.testing.assert_allclose(s, noise.pair_shift["nitrate"].share[:, 0], atol=1e-9)
    ref = stats.uniform(loc=lo, scale=hi - lo)
    assert stats.kstest(s, ref.cdf).pvalue > 0.01
    for q in (0.05, 0.5, 0.95):
        se = np.sqrt(q * (1 - q) / n) / ref.pdf(ref.ppf(q))
        assert np.quantile(s, q) == pytest.approx(ref.ppf(q), abs=4 * se)
    assert "ammonium" not in noise.pair_shift            # its range is [0, 0]: not drawn


def test_the_share_is_systematic_per_site_shared_or_each_year(pairs):
    study, res = _run(pairs)
    lay = linear_layer(res, study, pair_shift=True)
    ls = lay.sites[0]
    opt = U.UncertaintyOptions(draws=50, seed=9, pair_shift_nitrate=[-0.5, 0.5])
    key = N._stream_key((9, "quill"))
    shared = PN.pair_shift_draws(ls, opt, key, 50, 3, 2020)["nitrate"].share
    assert np.array_equal(shared[:, 0], shared[:, 2])
    each = PN.pair_shift_draws(ls, dataclasses.replace(opt, systematic_errors="each_year"),
                               key, 50, 3, 2020)["nitrate"].share
    assert not np.array_equal(each[:, 0], each[:, 1])
    # another site, another stream; the years of the run do not change a year's draw
    other = PN.pair_shift_draws(ls, opt, N._stream_key((9, "fell")), 50, 3, 2020)
    assert not np.array_equal(other["nitrate"].share[:, 0], shared[:, 0])
    later = PN.pair_shift_draws(ls, dataclasses.replace(opt, systematic_errors="each_year"),
                                key, 50, 2, 2021)["nitrate"].share
    np.testing.assert_array_equal(later[:, 0], each[:, 1])


def test_off_by_default_and_under_pair_split(pairs):
    """Default: nothing drawn, no moved rows built, the draws as before; under
    ``pair_split = "all_gas"`` the split is set there: not drawn."""
    study, res = _run(pairs)
    opt = U.UncertaintyOptions(draws=20, seed=3)
    assert not opt.shifts_pairs
    comp, noise, lay = _draws(study, res, opt)
    assert noise.pair_shift is None and not lay.sites[0].pair_moved
    q = U.monte_carlo(res, study, opt)
    assert q.pair_shift_drawn == ()
    on = dataclasses.replace(opt, pair_shift_nitrate=(-0.2, 0.0))
    assert U.monte_carlo(res, study, on).pair_shift_drawn == ("nitrate",)
    study_g, res_g = _run(pairs, "all_gas")
    _, noise_g, lay_g = _draws(study_g, res_g, on)
    assert noise_g.pair_shift is None and "nitrate" not in lay_g.sites[0].pair_moved


@pytest.mark.parametrize("value", [[0.5, 0.2], [-1.5, 0.0], [0.1], [0.0, True], "0.1"])
def test_a_bad_range_is_refused(value):
    with pytest.raises(ValueError, match=r"pair_shift_nitrate = .* must be \[low, high\] "
                                         r"with -1 <= low <= high <= 1"):
        U.UncertaintyOptions(pair_shift_nitrate=value)


@pytest.mark.parametrize("text, message", [
    ("pair_shift_nitrate = [0.3, -0.3]", "must be [low, high] with -1 <= low <= high <= 1"),
    ("pair_shift_ammonium = [0, 2]", "must be [low, high] with -1 <= low <= high <= 1"),
    ("pair_shift_nitrate = 0.3", "wrong type"),
])
def test_a_bad_range_in_a_scenario_is_located(pairs, tmp_path, text, message):
    src = (pairs / "scenario.toml").read_text()
    p = tmp_path / "scenario.toml"
    p.write_text(src.replace("[uncertainty]\n", f"[uncertainty]\n{text}\n", 1))
    for name in ("sites.toml", "precip.csv", "air.csv", "met.csv"):
        (tmp_path / name).write_text((pairs / name).read_text())
    with pytest.raises(ScenarioError) as err:
        load_scenario(p)
    msg = str(err.value)
    key = text.split(" =")[0]
    line = p.read_text().splitlines().index(text) + 1
    assert message in msg and f"uncertainty.{key}" in msg and str(p) in msg
    assert f"line {line}" in msg


def test_the_report_line_names_the_split_only_where_asked():
    from workbench.analysis import quantile_tables as QT
    on = U.UncertaintyOptions(draws=10, pair_shift_ammonium=[-0.2, 0.1])
    assert ('pair_shift_ammonium = [-0.2, 0.1] (the gas/particle split'
            in QT.draws_in_force(on))
    assert "pair_shift" not in QT.draws_in_force(U.UncertaintyOptions(draws=10))
