"""Demo numbers of docs/methods_uncertainty.md measured on the whole demo network
(demo_data/scenario.toml, yearly periods), recomputed here so that a change of the
engine or of the draws that moves one fails until the sentence is re-measured:

- "Shared systematic errors", the re-measured column "now (defaults)" of the table of
  the network's sum (benchmarks/uncertainty_network.py: 2,000 draws, seed 12345, the
  span mean of each site's own surface and their sum, eq/ha/yr, 5-95 % and width over
  median), computed with the benchmark's own functions;
- the same section, the demo at its defaults re-measured (the same 2,000 draws): the
  5-95 % of the S or N total of 2020 and of the span of five site / receptor pairs;
- "A drawn gas/particle split", the 200 draws of `workbench run` (seed 12345) with and
  without ``pair_shift_nitrate = pair_shift_ammonium = [-0.3, 0.0]``: the ridge's
  conifer forest's dry N of 2016, its brackets and its 5 / 50 / 95 %, and the S ranges
  identical.

The reference is the engine itself (measured numbers, not checks of a method; the
method's checks are in tests/analysis/). Numbers as written (Python's format, common
practice).
"""
from __future__ import annotations

import dataclasses
import re

import numpy as np
import pytest

from script_modules import bench_script as _bench_script
from doc_sections import flat_section


@pytest.fixture(scope="module")
def draws2000(demo_year_run):
    """The Monte Carlo of the whole demo at its defaults, 2,000 draws, seed 12345."""
    from workbench.analysis.montecarlo import monte_carlo
    sc, study, res = demo_year_run
    opt = dataclasses.replace(sc.options["uncertainty"], draws=2000, seed=12345)
    return monte_carlo(res, study, opt)


@pytest.fixture(scope="module")
def network(demo_year_run, draws2000):
    """label -> (5 %, 50 %, 95 %) [eq/ha/yr] of the network's sum ("S", "N") and of each
    site's own surface ("ridge S", ...), 2,000 draws, seed 12345."""
    _, study, _ = demo_year_run
    bench = _bench_script("uncertainty_network")
    q = draws2000
    sites, _, draws = bench.own_surface_span_draws(q, study.catalogue())
    out = {}
    for e in ("s", "n"):
        out[e.upper()] = bench.interval(np.nansum(draws[e], 1))
        for k, s in enumerate(sites):
            out[f"{s} {e.upper()}"] = bench.interval(draws[e][:, k])
    return out


def test_the_network_sum_re_measured(network):
    text = flat_section("*Measured* (`benchmarks/uncertainty_network.py`, 2000 draws",
                        "### Correlation structure")
    m = re.search(r'the column "now \(defaults\)" reads: network sum S ([\d.]+)-([\d.]+) '
                  r'\(([\d.]+)\), N ([\d.]+)-([\d.]+) \(([\d.]+)\), ridge S ([\d.]+)-([\d.]+) '
                  r'\(([\d.]+)\), farm N ([\d.]+)-([\d.]+) \(([\d.]+), unchanged\)', text)
    assert m, "the re-measured sentence of the network's sum"
    written = [m.groups()[i:i + 3] for i in range(0, 12, 3)]
    for label, (lo, hi, width) in zip(("S", "N", "ridge S", "farm N"), written):
        a, mid, b = network[label]
        assert (f"{a:.1f}", f"{b:.1f}", f"{(b - a) / mid:.3f}") == (lo, hi, width), \
            f"re-measure {label}: {a:.1f}-{b:.1f} ({(b - a) / mid:.3f})"


def test_the_demo_ranges_at_its_defaults_re_measured(demo_year_run, draws2000):
    """"Re-measured on 2026-12-05 with the current engine ...": the 5-95 % of the S or N
    total of 2020 and of the span mean [kg/ha/yr] of five site / receptor pairs."""
    from workbench.analysis import uncertainty as U
    _, _, res = demo_year_run
    t = U.add_quantiles(res.table, draws2000, res.budget["annual_factor"].values)
    t = t[(t["pathway"] == "total") & (t["species"] == "all")].set_index(
        ["site", "receptor", "element", "period"])

    def rng(site, rec, element, period):
        r = t.loc[(site, rec, element, period)]
        return f"{r['flux_kg_ha_yr_p05']:.2f}-{r['flux_kg_ha_yr_p95']:.2f}"

    def both(site, rec, element):
        return rng(site, rec, element, "2020"), rng(site, rec, element, "span")
    text = flat_section("*Measured* (the engine of that change, not re-measured since",
                        "### Correlation structure")
    want = ("Re-measured on 2026-12-05 with the current engine (held by "
            "tests/test_docs_uncertainty_network.py): ridge / conifer forest S %s in 2020, "
            "%s the span; N %s and %s; fell / grass S %s, %s; mere / wetland S %s, %s; "
            "farm / crops N %s, %s (" % (*both("ridge", "conifer_forest", "S"),
                                          *both("ridge", "conifer_forest", "N"),
                                          *both("fell", "grass", "S"),
                                          *both("mere", "wetland", "S"),
                                          *both("farm", "crops", "N")))
    assert want in text, f"re-measure:\n{want}"


@pytest.fixture(scope="module")
def pair_shift(demo_year_run):
    """budget.csv's rows with their quantiles (200 draws, seed 12345), without and with
    the drawn split [-0.3, 0.0] of both pairs."""
    from workbench.analysis import uncertainty as U
    from workbench.analysis.montecarlo import monte_carlo
    sc, study, res = demo_year_run
    out = {}
    for label, shift in (("without", (0.0, 0.0)), ("with", (-0.3, 0.0))):
        opt = dataclasses.replace(sc.options["uncertainty"], draws=200, seed=12345,
                                  pair_shift_nitrate=shift, pair_shift_ammonium=shift)
        q = monte_carlo(res, study, opt)
        out[label] = U.add_quantiles(res.table, q, res.budget["annual_factor"].values)
    return out


def test_the_ridge_conifer_under_a_drawn_split(demo_year_run, pair_shift):
    _, _, res = demo_year_run
    text = flat_section("**The range.** Off by default", "### Velocities that depend on")

    def row(t):
        t = t[(t["site"] == "ridge") & (t["receptor"] == "conifer_forest")
              & (t["period"].astype(str) == "2016") & (t["element"] == "N")
              & (t["pathway"] == "dry") & (t["species"] == "all")]
        assert len(t) == 1
        return t.iloc[0]
    d = res.derived.to_dataframe().reset_index()
    d = d[(d["site"] == "ridge") & (d["receptor"] == "conifer_forest")
          & (d["period"].astype(str) == "2016")].iloc[0]
    w, wo = row(pair_shift["with"]), row(pair_shift["without"])

    def q(r):
        return " / ".join(f"{r[f'flux_kg_ha_{p}']:.2f}" for p in ("p05", "p50", "p95"))
    want = (f"the N dry deposition of the ridge site's conifer forest in 2016 "
            f"({w['flux_kg_ha']:.2f} kg/ha, bracket {d['dry_N_all_particle_kg_ha']:.2f} all "
            f"particle to {d['dry_N_all_gas_kg_ha']:.2f} all gas) has the 5 / 50 / 95 % "
            f"{q(w)} kg/ha, against {q(wo)} without the shift; the S ranges are identical")
    assert want in text, f"re-measure:\n{want}"


def test_the_s_ranges_are_identical(pair_shift):
    cols = ["flux_kg_ha_p05", "flux_kg_ha_p50", "flux_kg_ha_p95"]
    w, wo = pair_shift["with"], pair_shift["without"]
    s = (w["element"] == "S").to_numpy()
    assert s.sum() > 0 and np.isfinite(w.loc[s, cols].to_numpy(float)).any()
    np.testing.assert_array_equal(w.loc[s, cols].to_numpy(float),
                                  wo.loc[s, cols].to_numpy(float))
    n = (w["element"] == "N").to_numpy()
    assert not np.allclose(w.loc[n, cols].to_numpy(float), wo.loc[n, cols].to_numpy(float),
                           equal_nan=True)
