"""The per-sample random errors of the Monte Carlo are named by the sample itself (site
id, sampler id, start), not by its place in the run: a run over 2016-2023 and a run
over 2019-2021 (input files cut to those years) draw the same errors for the samples
they share, and so the same quantiles for a year they share (docs/methods_uncertainty.md,
"Correlation structure").

An invented single site with fixed deposition velocities and weekly samples whose
values come from a seeded generator (invented data); nothing else differs between the
two runs, so a common year's point budget is the same and its quantiles must be too.
"""
import numpy as np
import pandas as pd
import pytest

from analysis.tiny_site import SITES, VD
from workbench.analysis import uncertainty as U
from workbench.analysis.layer import linear_layer, sample_identity
from workbench.pipeline import Study
from workbench.scenario import load_scenario

WEEKS = pd.date_range("2015-12-28", "2024-01-08", freq="7D")    # Mondays


def _write(d, lo, hi, start, end):
    """The scenario of the samples that overlap [lo, hi), run over [start, end)."""
    d.mkdir()
    (d / "sites.toml").write_text(SITES)
    rng = np.random.default_rng(42)                  # invented values, the same in both
    n = len(WEEKS) - 1
    gauge = rng.uniform(2, 30, n)
    so4, no3, nh4 = (rng.uniform(5, 40, n) for _ in range(3))
    so2, pso4, hno3 = rng.uniform(0.5, 4, n), rng.uniform(0.5, 3, n), rng.uniform(0.1, 1, n)
    keep = [i for i in range(n) if WEEKS[i + 1] > pd.Timestamp(lo) and WEEKS[i] < pd.Timestamp(hi)]
    prec = ["site,start,end,gauge_depth [mm],sample_depth [mm],pH,SO4 [umol/L],NO3 [umol/L],"
            "NH4 [umol/L]"]
    air = ["# reference_state: ambient", "site,start,end,SO2 [ug/m3],pSO4 [ug/m3],HNO3 [ug/m3]"]
    for i in keep:
        s, e = f"{WEEKS[i]:%Y-%m-%dT%H:%M}", f"{WEEKS[i + 1]:%Y-%m-%dT%H:%M}"
        h = max(2 * so4[i] + no3[i] - nh4[i], 1.0)
        prec.append(f"quill,{s},{e},{gauge[i]:.2f},{gauge[i] * 0.95:.2f},"
                    f"{-np.log10(h * 1e-6):.4f},{so4[i]:.2f},{no3[i]:.2f},{nh4[i]:.2f}")
        air.append(f"quill,{s},{e},{so2[i]:.3f},{pso4[i]:.3f},{hno3[i]:.3f}")
    (d / "precip.csv").write_text("\n".join(prec) + "\n")
    (d / "air.csv").write_text("\n".join(air) + "\n")
    t = pd.date_range(WEEKS[0] + pd.Timedelta("1h"), WEEKS[-1], freq="h")
    pd.DataFrame({"site": "quill", "time": t.strftime("%Y-%m-%dT%H:%M"),
                  "wind_speed [m/s]": 3.0, "temperature [degC]": 8.0,
                  "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": 0.0,
                  "precipitation [mm]": 0.1, "pressure [hPa]": 1012.0}).to_csv(
        d / "met.csv", index=False)
    fixed = "\n".join(f"{k} = {v}" for k, v in VD.items())
    (d / "scenario.toml").write_text(f"""
[inputs]
sites = "sites.toml"
precipitation = "precip.csv"
air = "air.csv"
met = "met.csv"

[period]
start = "{start}"
end = "{end}"
resolution = "year"

[budget]
sulfate_basis = "total"

[dry.fixed_velocity]
{fixed}
""")
    sc = load_scenario(d / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "year", start, end)
    return study, res


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    d = tmp_path_factory.mktemp("keyed")
    return (_write(d / "long", "2016-01-01", "2024-01-01", "2016-01-01", "2024-01-01"),
            _write(d / "short", "2019-01-01", "2022-01-01", "2019-01-01", "2022-01-01"))


OPT = U.UncertaintyOptions(draws=200, seed=7, censored_rel_sd=0.5, vd_fill_rel_sd=0.3)


def _noise(study, res):
    lay = linear_layer(res, study, "years")
    y0 = int(lay.period_year.min())
    b = lay.budget
    noise = U.site_noise(lay.sites[0], OPT, OPT.draws, int(lay.period_year.max()) - y0 + 1,
                         b.sizes["period"], (OPT.seed, "quill"), y0,
                         (b["period_start"].values, b["period_end"].values))
    return lay.sites[0], noise


def test_a_sample_draws_the_same_errors_in_a_shorter_run(two_runs):
    (s_long, r_long), (s_short, r_short) = two_runs
    (lay_l, n_l), (lay_s, n_s) = _noise(s_long, r_long), _noise(s_short, r_short)
    # the wet samples: the short run holds 157 of the long run's 418 weeks
    ids_l, ids_s = lay_l.wet.ident, lay_s.wet.ident
    assert len(ids_s) < len(ids_l) / 2
    col = {x: j for j, x in enumerate(ids_l)}
    at = [col[x] for x in ids_s]                      # every short-run sample is in both
    np.testing.assert_array_equal(n_s.depth, n_l.depth[:, at])
    for ion in ("SO4", "NO3", "NH4"):
        np.testing.assert_array_equal(n_s.pconc[ion], n_l.pconc[ion][:, at])
    # the air samples of each dry species
    for sp in ("SO2", "pSO4", "HNO3"):
        col = {x: j for j, x in enumerate(lay_l.dry[sp].ident)}
        at = [col[x] for x in lay_s.dry[sp].ident]
        np.testing.assert_array_equal(n_s.air[sp], n_l.air[sp][:, at])
    # and they are draws, not ones (the test would pass with every factor off)
    assert n_s.depth.std() > 0.01 and n_s.air["SO2"].std() > 0.01


def test_a_common_year_has_the_same_quantiles(two_runs):
    (s_long, r_long), (s_short, r_short) = two_runs
    ql = U.monte_carlo(r_long, s_long, OPT, years_only=True).years
    qs = U.monte_carlo(r_short, s_short, OPT, years_only=True).years
    for year in ("2019", "2020", "2021"):
        a, b = ql.sel(period=year), qs.sel(period=year)
        # the point budget of the year is the same in both runs (nothing else differs)
        np.testing.assert_allclose(r_short.years["deposition"].sel(period=year).values,
                                   r_long.years["deposition"].sel(period=year).values,
                                   rtol=1e-12)
        # matrix products over more (zero) rows may round in the last bit
        for v in ("deposition", "total_deposition"):
            np.testing.assert_allclose(b[v].values, a[v].values, rtol=1e-10, err_msg=year)
        assert (a["total_deposition"].sel(quantile=0.95) >
                a["total_deposition"].sel(quantile=0.05)).any()


def test_duplicate_samples_get_their_own_identity():
    t = np.array(["2020-01-06", "2020-01-06", "2020-01-13"], dtype="datetime64[ns]")
    ids = sample_identity(np.array(["a", "a", "a"]), t)
    assert len(set(ids)) == 3 and [x[-1] for x in ids] == [0, 1, 0]
    assert sample_identity(np.array(["a", "b"]), t[:2], np.array(["SO2", "SO2"]))[1] == \
        ("SO2", "b", int(t[1].astype(np.int64)), 0)
