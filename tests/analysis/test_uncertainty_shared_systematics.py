"""Systematic errors shared between sites and between a site's parts, by hand.

Four factors of the Monte Carlo (docs/methods_uncertainty.md, "Laboratories shared by
sites" and after): a laboratory named in the site catalogue whose calibration bias is
one draw per analyte for every site (and for a site's air and precipitation) it
analyses; a filter pack's gas filter sharing its particle filter's draw
(``lab_bias_filter_pack``); a site's own Vd factor (``vd_site_gsd``); the bulk
collector's ``bulk_wet_factor`` drawn (``bulk_factor_rel_sd``).

An invented network (``Threlkeld Test Moss``, ``Garsdale Test Rigg``, ``Ousby Test
Flat``: one year 2019, 52 equal weekly samples a site, a fixed Vd) is written to a
temporary folder and run in process; every factor is off but the one a test names.
The expected spreads come from the law of propagation of uncertainty for correlated
input quantities (JCGM 100:2008, "GUM", 5.2.2, eq. (13); equation number from memory):

    u^2(y) = sum_i sum_j c_i c_j u(x_i) u(x_j) r(x_i, x_j),

computed here with numpy alone from the point values of the parts.  Tolerance of a
standard deviation of N draws: 5 standard errors, 5/sqrt(2 N) relative (common
practice).
"""
import dataclasses

import numpy as np
import pandas as pd
import pytest

from workbench.analysis import uncertainty as U
from workbench.pipeline import Study
from workbench.scenario import load_scenario

N = 20000
TOL = 5 / np.sqrt(2 * N)
SITES = {"threl": ("Threlkeld Test Moss", 20.0, 2.0, 1.0),
         "gars": ("Garsdale Test Rigg", 35.0, 3.0, 0.8),
         "ousby": ("Ousby Test Flat", 50.0, 1.0, 2.0)}
#: Every factor of the Monte Carlo off.
OFF = dict(vd_gsd={sp: 1.0 for sp in U.DEFAULT_VD_GSD}, air_rel_sd=0.0, precip_conc_rel_sd=0.0,
           gauge_catch_rel_sd=0.0, depth_rel_sd=0.0, censored_rel_sd=0.0, vd_fill_rel_sd=0.0,
           pwm_fill_rel_sd=0.0, lab_bias_precip_rel_sd=0.0, lab_bias_air_rel_sd=0.0,
           vd_class_fraction=0.0, vd_site_gsd=1.0, lab_bias_filter_pack=False,
           bulk_factor_rel_sd=0.0)


def _site(sid, extra=""):
    name = SITES[sid][0]
    return f"""[[site]]
id = "{sid}"
name = "{name}"
latitude = 54.0
longitude = 5.0
elevation_m = 20.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = 0
{extra}
"""


def _write(d, extra=None, budget=""):
    """The network in `d`; `extra` site id -> keys and tables added to its [[site]]."""
    d.mkdir(parents=True, exist_ok=True)
    (d / "sites.toml").write_text("".join(_site(s, (extra or {}).get(s, "")) for s in SITES))
    b = pd.date_range("2019-01-01", periods=52, freq="7D")
    ends = list(b[1:]) + [pd.Timestamp("2020-01-01")]
    prec = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],"
            "NO3 [umol/L],NH4 [umol/L]"]
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for sid, (_, so4, so2, pso4) in SITES.items():
        for s, e in zip(b, ends):
            s, e = f"{s:%Y-%m-%dT%H:%M}", f"{e:%Y-%m-%dT%H:%M}"
            prec.append(f"{sid},{s},{e},10.0,9.5,4.6,{so4},15.0,12.0")
            air.append(f"{sid},{s},{e},{so2},{pso4},0.5")
    (d / "precip.csv").write_text("\n".join(prec) + "\n")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range("2019-01-01T01:00", "2020-01-01T00:00", freq="h")
    pd.concat([pd.DataFrame({"site": sid, "time": t.strftime("%Y-%m-%dT%H:%M"),
                             "wind_speed [m/s]": 3.0, "temperature [degC]": 8.0,
                             "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                             "precipitation [mm]": 0.1, "pressure [hPa]": 1012.0})
               for sid in SITES]).to_csv(d / "met.csv", index=False)
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "2019-01-01"
end = "2020-01-01"
resolution = "year"

[budget]
sulfate_basis = "total"
{budget}

[dry.fixed_velocity]
SO2 = 0.7
pSO4 = 0.15
HNO3 = 2.2
""")
    return d / "scenario.toml"


def _draws(path, **on):
    """(S total draws (D, site) [eq ha-1 yr-1], the point parts (site, component)
    [mol m-2], components, sites) of the year 2019 on the grass receptor."""
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    opt = U.UncertaintyOptions(draws=N, seed=7, **{**OFF, **on})
    q = U.monte_carlo(res, study, opt)
    sites = [str(s) for s in q.total_draws["site"].values]
    s_tot = q.total_draws["s_dep_eq_ha_yr"].sel(receptor="grass", period="2019").values
    point = res.years["deposition"].sel(receptor="grass").isel(period=0).values
    comps = [f"{p}:{sp}" for _, p, sp in U.COMPONENTS]
    return s_tot, point, comps, sites


def _part(point, comps, name):
    return point[:, comps.index(name)]


def _gum_sd(x, u_rel, groups):
    """u(y) of y = sum of the parts x (c_i = 1) with relative standard uncertainties
    `u_rel` and r(i, j) = 1 where `groups` agree, else 0 (JCGM 100:2008, 5.2.2)."""
    x, u_rel, g = (np.asarray(v).ravel() for v in (x, u_rel, groups))
    u = x * u_rel
    r = (g[:, None] == g[None, :]).astype(float)
    return float(np.sqrt(u @ r @ u))


@pytest.fixture(scope="module")
def shared_lab(tmp_path_factory):
    """Every site's precipitation and air analysed by laboratory ``lab-k``."""
    extra = {s: 'laboratory = "lab-k"\nair_laboratory = "lab-k"\n' for s in SITES}
    return _write(tmp_path_factory.mktemp("shared"), extra)


@pytest.fixture(scope="module")
def own_labs(tmp_path_factory):
    return _write(tmp_path_factory.mktemp("own"))


def test_a_shared_laboratory_adds_its_sites_linearly(shared_lab, own_labs):
    """The precipitation laboratory's bias alone (relative SD 0.1): the network's S is
    sum_i (wet_i + dry_i), the wet parts carrying u = 0.1 wet_i.  One laboratory for
    all (r = 1): u(y) = 0.1 sum_i wet_i, the errors add linearly; a laboratory of each
    site's own (r = 0): 0.1 sqrt(sum_i wet_i^2).  Relative SDs are compared, so the
    unit (mol S against eq) drops out.  On the old code every site drew its own bias
    (and the catalogue refused ``laboratory``)."""
    for path, shared in ((shared_lab, True), (own_labs, False)):
        s, point, comps, sites = _draws(path, lab_bias_precip_rel_sd=0.1)
        wet = _part(point, comps, "wet:SO4")
        dry = _part(point, comps, "dry:SO2") + _part(point, comps, "dry:pSO4")
        net = s.sum(1)
        groups = np.zeros(len(sites)) if shared else np.arange(len(sites))
        want = _gum_sd(wet, 0.1, groups) / (wet + dry).sum()
        got = net.std() / net.mean()
        assert got == pytest.approx(want, rel=TOL), (shared, got, want)
    # the two readings differ by far more than the tolerance
    assert _gum_sd(wet, 0.1, np.zeros(3)) / _gum_sd(wet, 0.1, np.arange(3)) > 1 + 20 * TOL


def test_air_and_precipitation_of_one_laboratory_share_the_sulfate_draw(shared_lab):
    """Both laboratory spreads 0.1, air and precipitation at ``lab-k``, the filter pack
    sharing: at a site, wet SO4, dry SO2 and dry pSO4 are all analysed as sulfate by
    one laboratory, one draw (r = 1): u(S_i) = 0.1 S_i, and the network's S adds every
    site's linearly.  Without the filter-pack sharing SO2 has a draw of its own, shared
    by the sites (one laboratory): GUM with two groups."""
    s, point, comps, sites = _draws(shared_lab, lab_bias_precip_rel_sd=0.1,
                                    lab_bias_air_rel_sd=0.1, lab_bias_filter_pack=True)
    wet, so2, pso4 = (_part(point, comps, c) for c in ("wet:SO4", "dry:SO2", "dry:pSO4"))
    tot = wet + so2 + pso4
    for k in range(len(sites)):
        assert s[:, k].std() / s[:, k].mean() == pytest.approx(0.1, rel=TOL)
    net = s.sum(1)
    assert net.std() / net.mean() == pytest.approx(0.1, rel=TOL)
    s2, *_ = _draws(shared_lab, lab_bias_precip_rel_sd=0.1, lab_bias_air_rel_sd=0.1,
                    lab_bias_filter_pack=False)
    x = np.concatenate([wet + pso4, so2])
    groups = np.r_[np.zeros(3), np.ones(3)]
    want = _gum_sd(x, 0.1, groups) / tot.sum()
    net2 = s2.sum(1)
    assert net2.std() / net2.mean() == pytest.approx(want, rel=TOL)
    assert want < 0.1 * (1 - 3 * TOL)            # the two readings are told apart


def test_the_filter_pack_shares_one_draw_at_a_site_of_its_own(own_labs):
    """The air laboratory's bias alone (relative SD 0.1), a laboratory of the site's
    own: dry S = SO2 + pSO4.  ``lab_bias_filter_pack`` true: one draw (r = 1), u = 0.1
    of the dry S; false: two (r = 0), 0.1 sqrt(SO2^2 + pSO4^2) as before."""
    for pack in (True, False):
        s, point, comps, sites = _draws(own_labs, lab_bias_air_rel_sd=0.1,
                                        lab_bias_filter_pack=pack)
        so2, pso4 = _part(point, comps, "dry:SO2"), _part(point, comps, "dry:pSO4")
        tot = so2 + pso4 + _part(point, comps, "wet:SO4")
        for k in range(len(sites)):
            want = _gum_sd([so2[k], pso4[k]], 0.1, [0, 0] if pack else [0, 1]) / tot[k]
            assert s[:, k].std() / s[:, k].mean() == pytest.approx(want, rel=TOL), (pack, k)


def test_a_sites_own_vd_factor(own_labs):
    """``vd_site_gsd`` 1.5 alone: each site's dry S (SO2 and pSO4 alike) times one
    log-normal of log-sd ln 1.5, so its S total's 5 and 95 % are wet + dry 1.5^(-+1.645)
    (the quantiles of a monotone function, common practice); the sites' factors are
    independent (correlation within 5/sqrt(N) of 0).  The old code had no such factor."""
    s, point, comps, sites = _draws(own_labs, vd_site_gsd=1.5)
    wet = _part(point, comps, "wet:SO4")
    dry = _part(point, comps, "dry:SO2") + _part(point, comps, "dry:pSO4")
    z = 1.6448536                                        # the 95 % of N(0, 1)
    for k in range(len(sites)):
        q = np.quantile(s[:, k], [0.05, 0.95]) / np.median(s[:, k])
        want = (wet[k] + dry[k] * 1.5 ** np.array([-z, z])) / (wet[k] + dry[k])
        np.testing.assert_allclose(q, want, rtol=0.02)
    r = np.corrcoef(s.T)
    assert np.abs(r[np.triu_indices(3, 1)]).max() < 5 / np.sqrt(N)


def test_the_bulk_factor_is_drawn_on_the_bulk_part(tmp_path):
    """``bulk_correction = "scale_wet"``, ``bulk_factor_rel_sd`` 0.1 alone.  A bulk
    site all year: its wet S carries u = 0.1 wet.  A site whose collector changed on 2
    July 2019 (26 of its 52 equal samples under bulk, s = 1/2 of the unscaled
    deposition): the budget's wet is D0 (1 - s (1 - f)), f = 0.8, its bulk part
    b = s f / (1 - s (1 - f)) = 0.4 / 0.9, so u = 0.1 b wet (docs/budget.md, "Bulk
    collectors").  A wet-only site: no spread.  The old code did not draw the factor."""
    extra = {"threl": 'collector = "bulk"\n',
             "gars": 'collector = "bulk"\n[[site.change]]\ndate = 2019-07-02\n'
                     'what = "collector"\nfrom = "wet_only"\nto = "bulk"\n'}
    path = _write(tmp_path / "bulk", extra, 'bulk_correction = "scale_wet"')
    s, point, comps, sites = _draws(path, bulk_factor_rel_sd=0.1)
    wet = _part(point, comps, "wet:SO4")
    tot = wet + _part(point, comps, "dry:SO2") + _part(point, comps, "dry:pSO4")
    b = {"threl": 1.0, "gars": 0.5 * 0.8 / (1 - 0.5 * 0.2), "ousby": 0.0}
    for k, sid in enumerate(sites):
        want = 0.1 * b[sid] * wet[k] / tot[k]
        assert s[:, k].std() / s[:, k].mean() == pytest.approx(want, rel=TOL, abs=1e-12), sid


#: The network of the pinned file: a gauge and a laboratory change at ``gars``.
PINNED_CHANGES = {"gars": '[[site.change]]\ndate = 2019-07-02\nwhat = "gauge"\n'
                          '[[site.change]]\ndate = 2019-04-01\nwhat = "laboratory"\n'}


def _cli_quantiles(d, uncertainty):
    import os
    import subprocess
    import sys
    path = _write(d, PINNED_CHANGES)
    path.write_text(path.read_text() + "\n[uncertainty]\ndraws = 2000\nseed = 11\n" + uncertainty)
    subprocess.run([sys.executable, "-m", "workbench", "run", str(path), "--out", str(d / "run")],
                   check=True, capture_output=True, env=dict(os.environ), timeout=900)
    return pd.read_csv(d / "run" / "budget.csv", dtype=str, keep_default_na=False, comment="#")


def test_new_factors_off_print_the_old_digits(tmp_path):
    """With the new factors off (``vd_site_gsd = 1``, ``lab_bias_filter_pack = false``,
    ``bulk_factor_rel_sd = 0``, no laboratory ids) every quantile budget.csv prints is
    the old code's, digit for digit (pinned regression values, labelled as such in the
    file); with the defaults they move (the test can fail)."""
    from pathlib import Path
    pinned = pd.read_csv(Path(__file__).with_name("pinned_quantiles_before_shared_systematics.csv"),
                         dtype=str, keep_default_na=False, comment="#")
    keys = ["site", "receptor", "period", "element", "pathway", "species"]
    got = _cli_quantiles(tmp_path / "off", "vd_site_gsd = 1.0\nlab_bias_filter_pack = false\n"
                                           "bulk_factor_rel_sd = 0.0\n")
    got = got[pinned.columns].sort_values(keys).reset_index(drop=True)
    want = pinned.sort_values(keys).reset_index(drop=True)
    pd.testing.assert_frame_equal(got, want)
    now = _cli_quantiles(tmp_path / "defaults", "")[pinned.columns].sort_values(keys)
    assert not now.reset_index(drop=True).equals(want)
