"""The drawn gas/particle split of the ammonium pair under the bidirectional NH3
exchange (``[uncertainty] pair_shift_ammonium``, ``[dry] nh3_treatment =
"bidirectional"``).

One year (2021) of the demo's ridge site (invented; tests/ui/demo_subset.py), whose
filter pack samples NH3 and pNH4 over the same weeks.  Its NH3 and pNH4 columns are
written in umol/m3 (from the demo's ug/m3 with the molar masses of periodictable), so
that a share moved from one member to the other is a plain sum of the two columns in
mol.  ``nh3_cuticle = "scheme"``: the deposition-only Vd of NH3 is then the scheme's
and differs from the Vd of the exchange (under the humidity cuticle the two are the
same resistances, and the old path was right by chance).

The reference is the engine itself run again on the changed air: a share s > 0 of
pNH4 taken as NH3 is the air with NH3 + s pNH4 and (1 - s) pNH4; s < 0 the air with
(1 + s) NH3 and pNH4 - s NH3.  The net flux of the single-layer canopy compensation
point model (Sutton et al. 1998, Atmos. Environ. 32, 473-480, from memory) is linear
in the air concentration chi_a for a fixed canopy state, F = g_ab (chi_a - chi_c) =
chi_a V_d - E, so the draws, which never re-run the model, must give that run's net
flux to rounding (1e-9 relative).  Before, a share of pNH4 moved into NH3 was
deposited with the deposition-only Vd of NH3 (21 % below the re-run's net NH3 here).
"""
import dataclasses
import warnings

import numpy as np
import pandas as pd
import periodictable as pt
import pytest

from analysis.tiny_site import OFF
from ui.demo_subset import study_and_args, write_demo_subset
from workbench.analysis import pairnoise as PN
from workbench.analysis import uncertainty as U
from workbench.drydep import nh3_bidirectional as B
from workbench.errors import ScenarioError
from workbench.scenario import load_scenario

SITE, REC, YEAR = "ridge", "conifer_forest", 2021
UP, DOWN = 0.4, -0.3


def _write(d, shift=0.0, treatment="bidirectional", extra=""):
    """The ridge's 2021 with NH3 and pNH4 in umol/m3, a share `shift` moved."""
    sc = write_demo_subset(d, (SITE,), YEAR, YEAR)
    sc.write_text(sc.read_text().replace(
        "[budget]", f'[dry]\nnh3_treatment = "{treatment}"\nnh3_cuticle = "scheme"\n'
        f"{extra}\n[budget]"))
    lines = (d / "air.csv").read_text().splitlines(keepends=True)
    head = [ln for ln in lines if ln.startswith("#")]
    a = pd.read_csv(d / "air.csv", comment="#", dtype=str, keep_default_na=False)
    # ug/m3 over g/mol is umol/m3 (periodictable's molar masses)
    nh3 = pd.to_numeric(a.pop("NH3 [ug/m3]"), errors="coerce") / pt.formula("NH3").mass
    nh4 = pd.to_numeric(a.pop("pNH4 [ug/m3]"), errors="coerce") / pt.formula("NH4").mass
    if shift > 0:
        nh3, nh4 = nh3 + shift * nh4, (1 - shift) * nh4
    elif shift < 0:
        nh3, nh4 = (1 + shift) * nh3, nh4 - shift * nh3
    for col, v in (("NH3 [umol/m3]", nh3), ("pNH4 [umol/m3]", nh4)):
        a[col] = v.map(lambda x: "" if np.isnan(x) else repr(float(x)))
    (d / "air.csv").write_text("".join(head) + a.to_csv(index=False))
    return sc


def _run(sc):
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return study, study.run(*args)


def _j(sp):
    return [c[1:] for c in U.COMPONENTS].index(("dry", sp))


def _point(res, sp):
    return float(res.years["deposition"].sel(site=SITE, receptor=REC).values[0, _j(sp)])


def _draws(study, res, opt, share=None):
    """Component draws (D, C) of the ridge's conifer forest in 2021; `share` (D,)
    replaces the drawn share of the ammonium pair."""
    lay = U.linear_layer(res, study, "years", pair_shift=opt.shifts_pairs)
    ds = lay.budget
    k = list(ds["site"].values).index(SITE)
    noise = U.site_noise(lay.sites[k], opt, opt.draws, 1, 1, (opt.seed, SITE), YEAR,
                         (ds["period_start"].values, ds["period_end"].values))
    PN.with_pair_shift(noise, lay.sites[k], opt, (opt.seed, SITE), 1, YEAR)
    if share is not None:
        noise.pair_shift["ammonium"].share = np.asarray(share, float)[:, None]
    r = list(ds["receptor"].values).index(REC)
    return U.component_draws(lay, k, noise, YEAR)[:, r, 0], lay, k


@pytest.fixture(scope="module")
def ridge(tmp_path_factory):
    runs = {s: _run(_write(tmp_path_factory.mktemp(f"bd{s}"), s)) for s in (0.0, UP, DOWN)}
    return runs


def test_the_model_s_net_flux_is_linear_in_the_air_concentration():
    """F = g_ab (chi_a - chi_c), chi_c the weighted mean of chi_a, chi_s and 0
    (Sutton et al. 1998, from memory): for a fixed canopy state it is chi_a V_d - E
    with V_d and E of :func:`exchange`, so a change d of chi_a changes F by d V_d."""
    rng = np.random.default_rng(4)
    ra, rb = rng.uniform(5, 200, 50), rng.uniform(5, 80, 50)
    r_s = np.where(rng.random(50) < 0.3, np.inf, rng.uniform(50, 2000, 50))
    r_w = rng.uniform(B.R_W_MIN, B.R_W_MAX, 50)
    chi_s, chi_a, d = (rng.uniform(0, 4e-7, 50), rng.uniform(0, 6e-7, 50),
                       rng.uniform(-2e-7, 2e-7, 50))
    vd, e = B.exchange(ra, rb, r_s, r_w, chi_s)

    def f(c):
        return (c - B.canopy_concentration(c, ra, rb, r_s, r_w, chi_s)) / (ra + rb)
    np.testing.assert_allclose(f(chi_a), chi_a * vd - e, rtol=1e-9, atol=1e-22)
    np.testing.assert_allclose(f(chi_a + d) - f(chi_a), d * vd, rtol=1e-9, atol=1e-22)


def test_by_hand_the_shifted_net_flux_is_that_of_the_model_on_the_changed_air(ridge):
    """Sum over the hours of 2021 of chi_a' V_d - E, chi_a' the shifted NH3 of the
    sample holding each hour (hours ending in (start, end]) and V_d, E the model's
    hourly output on the measured air: the net NH3 of the run on the changed air."""
    study, res = ridge[0.0]
    vd = study.velocities(res.options["dry"])
    v = vd["vd_NH3_bidirectional"].sel(site=SITE, receptor=REC).values
    e = vd["nh3_emission_flux"].sel(site=SITE, receptor=REC).values
    t = vd["time"].values
    air = study.inputs.air
    at = (air["site"].values == SITE) & np.isfinite(air["NH3"].values)
    nh3, nh4 = air["NH3"].values[at], air["pNH4"].values[at]           # [mol m-3]
    y = (t > np.datetime64(f"{YEAR}-01-01")) & (t <= np.datetime64(f"{YEAR + 1}-01-01"))
    assert np.isfinite(v[y]).all() and np.isfinite(e[y]).all()
    for s in (UP, DOWN):
        shifted = nh3 + s * nh4 if s > 0 else (1 + s) * nh3
        chi = np.full(len(t), np.nan)
        for t0, t1, c in zip(air["start"].values[at], air["end"].values[at], shifted):
            chi[(t > t0) & (t <= t1)] = c
        assert np.isfinite(chi[y]).all()
        hand = np.sum((chi * v - e)[y]) * 3600.0
        assert hand == pytest.approx(_point(ridge[s][1], "NH3"), rel=1e-9)


@pytest.mark.parametrize("s", [UP, DOWN])
def test_a_drawn_share_gives_the_net_exchange_of_the_changed_air(ridge, s):
    """Every other error off: each draw is the re-run's budget (NH3 net, pNH4, dry N).
    The old path gave NH3 at s = 0.4 21 % below the re-run's (the deposition-only Vd)."""
    study, res = ridge[0.0]
    _, shifted = ridge[s]
    assert res.years.attrs["nh3_figure"] == "net"
    opt = U.UncertaintyOptions(draws=4, seed=3, **OFF, pair_shift_ammonium=[s, s])
    comp, _, _ = _draws(study, res, opt)
    for sp in ("NH3", "pNH4", "HNO3", "pNO3"):
        np.testing.assert_allclose(comp[:, _j(sp)], _point(shifted, sp), rtol=1e-9)
    n_dry = float(shifted.years["total_deposition"].sel(site=SITE, receptor=REC, total="N_dry")
                  .values[0])
    np.testing.assert_allclose(U.totals_of(comp)["N_dry"], n_dry, rtol=1e-9)


def test_a_share_of_0_leaves_the_draws_bit_for_bit(ridge):
    """With every error on (the defaults): the draws whose share is 0 are those without
    the shift, bit for bit; the others moved; [0, 0] draws as without the option."""
    study, res = ridge[0.0]
    base = U.UncertaintyOptions(draws=6, seed=11)
    off, _, _ = _draws(study, res, base)
    on = dataclasses.replace(base, pair_shift_ammonium=(-0.5, 0.5))
    share = np.array([0.0, 0.3, 0.0, -0.2, 0.0, 1.0])
    comp, _, _ = _draws(study, res, on, share)
    zero = share == 0
    assert np.array_equal(comp[zero], off[zero])
    assert not np.array_equal(comp[~zero][:, _j("NH3")], off[~zero][:, _j("NH3")])
    same, _, _ = _draws(study, res, dataclasses.replace(base, pair_shift_ammonium=(0, 0)))
    assert np.array_equal(same, off)


def test_deposition_only_keeps_the_bracket_rows(tmp_path):
    """Under ``"deposition_only"`` the moved pNH4 keeps the deposition-only Vd of NH3
    (the bracket's rows, as before), which is then the model in force: the draws give
    the run on the changed air too."""
    study, res = _run(_write(tmp_path / "a", treatment="deposition_only"))
    _, shifted = _run(_write(tmp_path / "b", UP, treatment="deposition_only"))
    assert res.years.attrs["nh3_figure"] == "deposition_only"
    opt = U.UncertaintyOptions(draws=3, seed=3, **OFF, pair_shift_ammonium=[UP, UP])
    comp, _, _ = _draws(study, res, opt)
    for sp in ("NH3", "pNH4"):
        np.testing.assert_allclose(comp[:, _j(sp)], _point(shifted, sp), rtol=1e-9)
    rows = study.dry_rows(res.options["dry"], res.options["budget"])
    assert "nh3_exchange" not in rows


ACID = "nh3_acid_ratio_from_air = true\n"


@pytest.mark.parametrize("key", ["pair_shift_ammonium", "pair_shift_nitrate"])
def test_the_acid_ratio_from_the_air_is_refused_on_the_key_s_line(tmp_path, key):
    """With the acid ratio of the air the exchange's Vd and emission depend on NH3 and
    HNO3 (not linear, not exact on the layer): one located message at check time."""
    sc = _write(tmp_path, extra=ACID)
    sc.write_text(sc.read_text() + f"\n[uncertainty]\ndraws = 10\n{key} = [-0.3, 0.0]\n")
    with pytest.raises(ScenarioError) as err:
        load_scenario(sc)
    msg = str(err.value)
    line = sc.read_text().splitlines().index(f"{key} = [-0.3, 0.0]") + 1
    assert f"line {line}" in msg and f"uncertainty.{key}" in msg and str(sc) in msg
    assert "nh3_acid_ratio_from_air" in msg and "cannot be exact" in msg
    # the same scenario without the shift, or with a fixed acid ratio, loads
    sc.write_text(sc.read_text().replace(f"{key} = [-0.3, 0.0]", f"{key} = [0, 0]"))
    load_scenario(sc)


def test_the_acid_ratio_from_the_air_is_refused_by_monte_carlo(tmp_path):
    study, res = _run(_write(tmp_path, extra=ACID))
    opt = U.UncertaintyOptions(draws=3, pair_shift_ammonium=[0.1, 0.2])
    with pytest.raises(ValueError, match="nh3_acid_ratio_from_air"):
        U.monte_carlo(res, study, opt)
