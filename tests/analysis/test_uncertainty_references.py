"""The Monte Carlo against outside references: a product of log-normal factors against
the analytic log-normal moments and scipy.stats.lognorm, the reported quantiles
against numpy and the sample-quantile definition written out, and the seed's draws
repeated by another process with another string hashing.

References (beside each check): the log-normal moments E[X] = exp(mu + s^2/2),
Var[X] = (exp(s^2) - 1) exp(2 mu + s^2) and the product of independent log-normals
being log-normal with the sum of the log-variances (Aitchison and Brown 1957, The
Lognormal Distribution, from memory; scipy.stats.lognorm, a general-purpose reference
library); the sample quantile of numpy's default method, definition 7 of Hyndman and
Fan (1996), Am. Stat. 50, 361-365 (from memory): h = (n - 1) p, x_(floor h) +
(h - floor h) (x_(floor h + 1) - x_(floor h)) on the sorted draws.

Tolerances from the number of draws (common practice): 5 standard errors.
"""
import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from analysis.tiny_site import OFF
from workbench.analysis import uncertainty as U

N = 40000


def _j(species, path):
    return next(j for j, c in enumerate(U.COMPONENTS) if c[2] == species and c[1] == path)


@pytest.mark.parametrize("kappa", [0.0, 0.5])
def test_a_product_of_lognormal_factors_has_the_analytic_moments(tiny, kappa):
    """Dry SO2 of the tiny site with its Vd model factor F (GSD 1.5, a share kappa of
    its own part drawn per land-use class) and the site's own Vd factor F_s (GSD 1.3),
    every other error off: D / D0 = F F_s, log-normal with s^2 = ln^2 1.5 + ln^2 1.3
    (a product of independent log-normals), median 1.  Mean, variance and the 5, 50
    and 95 % quantiles against the closed forms (Aitchison and Brown 1957, from
    memory) and scipy.stats.lognorm."""
    _, _, res, lay = tiny
    opt = U.UncertaintyOptions(draws=N, seed=21, **{
        **OFF, "vd_gsd": {**OFF["vd_gsd"], "SO2": 1.5}, "vd_site_gsd": 1.3,
        "vd_class_fraction": kappa})
    noise = U.site_noise(lay.sites[0], opt, N, 1, 1, (21, "quill"), 2021)
    comp = U.component_draws(lay, 0, noise, 2021)[:, 0, 0, :]
    j = _j("SO2", "dry")
    x = comp[:, j] / res.budget["deposition"].values[0, 0, 0, j]
    s2 = np.log(1.5) ** 2 + np.log(1.3) ** 2
    ref = stats.lognorm(s=np.sqrt(s2), scale=1.0)
    mean, var = np.exp(s2 / 2), (np.exp(s2) - 1) * np.exp(s2)
    assert ref.mean() == pytest.approx(mean, rel=1e-12)         # the closed forms = scipy's
    assert ref.var() == pytest.approx(var, rel=1e-12)
    assert abs(x.mean() - mean) < 5 * np.sqrt(var / N)
    m4 = np.mean((x - x.mean()) ** 4)
    assert abs(x.var(ddof=1) - var) < 5 * np.sqrt((m4 - x.var() ** 2) / N)
    # the log is normal: its variance is the sum of the two log-variances
    lx = np.log(x)
    assert abs(lx.var(ddof=1) - s2) < 5 * s2 * np.sqrt(2 / N)
    for q in (0.05, 0.5, 0.95):
        se = np.sqrt(q * (1 - q) / N) / stats.norm.pdf(stats.norm.ppf(q)) * np.sqrt(s2)
        assert abs(np.log(np.quantile(x, q) / ref.ppf(q))) < 5 * se


def _type7(x, p):
    """Definition 7 of Hyndman and Fan (1996), written out (from memory)."""
    xs = np.sort(x, axis=0)
    h = (xs.shape[0] - 1) * p
    lo = int(np.floor(h))
    hi = min(lo + 1, xs.shape[0] - 1)
    return xs[lo] + (h - lo) * (xs[hi] - xs[lo])


def test_the_reported_quantiles_are_the_quantiles_of_the_draws(tiny):
    """`monte_carlo`'s 5, 50 and 95 % of every component and total are the sample
    quantiles of the site's draws (drawn again here from the same streams), by numpy and
    by the definition written out; the draws are every default factor's."""
    _, study, res, lay = tiny
    n = 501
    opt = U.UncertaintyOptions(draws=n, seed=8)
    mc = U.monte_carlo(res, study, opt)
    ds = lay.budget
    noise = U.site_noise(lay.sites[0], opt, n, 1, ds.sizes["period"], (8, "quill"), 2021,
                         (ds["period_start"].values, ds["period_end"].values))
    comp = U.component_draws(lay, 0, noise, 2021)                 # (D, R, P, C)
    tot = U.totals_of(comp)
    got = mc.budget["deposition"].values                           # (q, S, R, P, C)
    for k, q in enumerate(U.QUANTILES):
        want = _type7(comp, q)
        np.testing.assert_allclose(got[k, 0], want, rtol=1e-12, equal_nan=True)
        np.testing.assert_allclose(got[k, 0], np.quantile(comp, q, axis=0), rtol=1e-12,
                                   equal_nan=True)
        for name in ("S_dry", "S_total", "N_total"):
            t = mc.budget["total_deposition"].sel(total=name).values[k, 0]
            np.testing.assert_allclose(t, _type7(tot[name], q), rtol=1e-12, equal_nan=True)


SCRIPT = """
import json
import sys
sys.path.insert(0, {tests!r})
from pathlib import Path
from analysis.tiny_site import make_tiny
from workbench.analysis import uncertainty as U
_, study, res, _ = make_tiny(Path({d!r}))
mc = U.monte_carlo(res, study, U.UncertaintyOptions(draws=200, seed=77))
v = mc.budget["total_deposition"].values.ravel()
print(json.dumps([None if x != x else x for x in v.tolist()]))
"""


def test_a_seed_repeats_its_draws_in_other_processes(tmp_path):
    """The streams are named by the seed, the site id and the sample (their texts by
    their UTF-8 bytes, not by Python's hash): two processes with different
    PYTHONHASHSEED give the same quantiles bit for bit (common practice: a seeded
    Monte Carlo repeats)."""
    tests = str(Path(__file__).resolve().parents[1])
    outs = []
    for i, hs in enumerate(("1", "2")):
        d = tmp_path / f"p{i}"
        d.mkdir()
        env = {**os.environ, "PYTHONHASHSEED": hs}
        r = subprocess.run([sys.executable, "-c", SCRIPT.format(tests=tests, d=str(d))],
                           capture_output=True, text=True, env=env, check=True)
        outs.append(r.stdout.strip().splitlines()[-1])
    assert outs[0] == outs[1]
    assert any(x is not None for x in json.loads(outs[0]))
