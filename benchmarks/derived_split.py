"""The derived sums as yearly rates in the apps: the site explorer's N split under the
budget bars and the network overview's reduced-share and acidity columns.

    python benchmarks/derived_split.py [--scenario demo_data/scenario.toml]
                                       [--site ridge] [--years 2020 2021] [--repeat 7]

Old and new in one process, alternated, best of `--repeat` (the machine is shared:
read the ratios; the load average is printed before and after):

- explorer, redraw of the same result (a unit change): the split table computed from
  scratch (``n_split_html`` of the years alone, as every redraw did before) against the
  table from the stage graph's ``year_rates`` (``Result.rates``, what the explorer reads
  now); the two HTML texts are checked equal.
- network: ``network_derived`` of every site of the scenario over the years (every
  run's sites side by side in one call) against the loop it replaced (each run's sums,
  then its rows picked site by site); *cold* with the graph left out (``Result``
  without a graph: the sums computed), *warm* from the graph (a second
  ``net.totals()``).  The frames are checked equal.
"""
from __future__ import annotations

import argparse
import dataclasses
import os
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))
from lazy_hash import best  # noqa: E402  (best-of-n wall time)


def site_loop(results, catalogue=None) -> pd.DataFrame:
    """network_derived before, word for word: each run's sums, then its rows picked
    site by site (also the reference of tests/ui/test_derived_split.py)."""
    from workbench.report_derived import derived_rates
    from workbench.tables import budget_table
    rows = []
    for r in results:
        f = derived_rates(r.years, budget_table(r.years))
        for site in r.years["site"].values.astype(str):
            if catalogue is not None and site in catalogue.ids:
                rec = catalogue[site].land_use
            else:
                act = r.years["active"].sel(site=site).values
                rec = str(r.years["receptor"].values[np.flatnonzero(act)[0]])
            rows.append(f[(f["site"] == site) & (f["receptor"] == str(rec))])
    return pd.concat(rows, ignore_index=True) if rows else pd.DataFrame()


def main(argv=None) -> dict:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    p.add_argument("--site", default="ridge")
    p.add_argument("--years", type=int, nargs=2, default=(2020, 2021))
    p.add_argument("--repeat", type=int, default=7)
    a = p.parse_args(argv)
    warnings.simplefilter("ignore", RuntimeWarning)
    from workbench.ui.apps import SiteExplorer
    from workbench.ui.derived_split import n_split_html, network_derived
    from workbench.ui.session import Session
    print(f"load average before: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    session = Session.open(a.scenario)
    app = SiteExplorer(session, site=a.site, years=tuple(a.years))
    years, rec, unit = app.result.years, app.receptor_w.value, app.unit_w.value

    def scratch():
        return n_split_html(years, a.site, rec, unit)

    def graph():
        return n_split_html(years, a.site, rec, unit, rates=app.result.rates(receptors=[rec]))
    assert scratch() == graph()
    old = new = np.inf
    for _ in range(2):                       # alternated: the load hits both alike
        old = min(old, best(scratch, a.repeat))
        new = min(new, best(graph, a.repeat))
    print(f"explorer split table, {a.site} {a.years[0]}-{a.years[1]} {rec}, a redraw: "
          f"from scratch {1e3 * old:.1f} ms, from the graph {1e3 * new:.2f} ms, "
          f"ratio {old / new:.0f}")

    cat = session.study.inputs.catalogue
    results = [session.run(session.baseline, s, *a.years, "year") for s in session.sites]
    bare = [dataclasses.replace(r, graph=None) for r in results]
    pd.testing.assert_frame_equal(network_derived(bare, cat), site_loop(results, cat))
    pd.testing.assert_frame_equal(network_derived(results, cat), site_loop(results, cat))
    loop = cold = warm = np.inf
    for _ in range(2):
        loop = min(loop, best(lambda: site_loop(results, cat), a.repeat))
        cold = min(cold, best(lambda: network_derived(bare, cat), a.repeat))
        warm = min(warm, best(lambda: network_derived(results, cat), a.repeat))
    print(f"network_derived, {len(results)} sites {a.years[0]}-{a.years[1]}: site loop "
          f"{1e3 * loop:.1f} ms, one call cold {1e3 * cold:.1f} ms (ratio {loop / cold:.1f}), "
          f"warm {1e3 * warm:.2f} ms (ratio {loop / warm:.0f})")
    print(f"load average after: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    return {"split_ratio": old / new, "network_cold_ratio": loop / cold,
            "network_warm_ratio": loop / warm}


if __name__ == "__main__":
    main()
