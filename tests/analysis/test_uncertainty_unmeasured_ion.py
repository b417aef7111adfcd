"""An ion never measured at a site stays missing in the Monte Carlo draws: the draws
scale the point value, so they are NaN where the budget's value is NaN, never 0
(common practice: an unmeasured quantity is unknown, not zero)."""
import numpy as np
import pandas as pd

from analysis.tiny_site import OFF, make_tiny
from workbench.analysis import uncertainty as U
from workbench.pipeline import Study
from workbench.scenario import load_scenario


def test_a_never_measured_ion_draws_missing_not_zero(tmp_path):
    make_tiny(tmp_path)
    p = pd.read_csv(tmp_path / "precip.csv")
    p["NH4 [umol/L]"] = np.nan                  # NH4 never analysed at the site
    p.to_csv(tmp_path / "precip.csv", index=False)
    sc = load_scenario(tmp_path / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "month", "2021-02-01", "2021-03-01")
    j = next(j for j, c in enumerate(U.COMPONENTS) if c[2] == "NH4" and c[1] == "wet")
    k = next(k for k, c in enumerate(U.COMPONENTS) if c[2] == "SO4" and c[1] == "wet")
    point = res.budget["deposition"].values[0, 0, 0]
    assert np.isnan(point[j]) and np.isfinite(point[k]) and point[k] > 0
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=50, seed=1,
                                                       **{**OFF, "depth_rel_sd": 0.2}))
    dep = q.budget["deposition"].values             # (quantile, site, receptor, period, C)
    assert np.isnan(dep[:, 0, 0, 0, j]).all()         # missing in every quantile, not 0
    assert np.isfinite(dep[:, 0, 0, 0, k]).all()
    assert dep[0, 0, 0, 0, k] < point[k] < dep[-1, 0, 0, 0, k]   # the depth error spreads SO4
