"""A particulate Na below detection behind the non-sea-salt pSO4 (docs/budget.md,
"Components and units"; docs/methods_uncertainty.md).

The rule is the project's rule for every air value below detection: it enters with the
substitute of ``[budget] air_censored`` (half the detection limit by default, common
practice), and the Monte Carlo draws it with ``censored_rel_sd`` around that substitute
(1/sqrt(3): a value uniform between 0 and the limit, common practice).  Before, a pNa
written ``<0.5`` entered as 0 (its week's total pSO4 stood for the non-sea-salt part)
without a word, and its error was not drawn.

The tiny site of tests/test_budget.py: pSO4 2.0 ug/m3 and pNa 1.0 ug/m3 every week of
February 2021 at Vd 0.2 cm/s; pNa ``<0.5`` in two weeks.  Expected values by hand:
nss pSO4 = pSO4 - 0.0605 pNa (Keene et al. 1986, from memory), molar masses IUPAC
(from memory: SO4 96.056, Na 22.990 g/mol, S 32.06).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))
sys.path.insert(0, str(Path(__file__).parent / "analysis"))

CENSORED_WEEKS = (1, 3)
WEEK = 0.2e-2 * 7 * 86400                        # m of air through a week at 0.2 cm/s
SO4 = 2.0e-6 / 96.056                            # mol/m3
KG_S = 32.06e-3 * 1e4                            # mol/m2 -> kg S/ha


def _site(tmp_path, censored=None):
    from test_budget import _with_particles
    sc = _with_particles(tmp_path)
    text = sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"')
    if censored:
        text = text.replace('sulfate_basis = "nss"',
                            f'sulfate_basis = "nss"\nair_censored = "{censored}"')
    sc.write_text(text)
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    for w in CENSORED_WEEKS:
        lines[2 + w] = lines[2 + w].rsplit(",", 1)[0] + ",<0.5"
    air.write_text("\n".join(lines) + "\n")
    return sc


def _seasalt(na_ug):
    return 0.121 / 2 * na_ug * 1e-6 / 22.990 * WEEK * KG_S      # kg S/ha of one week


@pytest.mark.parametrize("censored,na_sub", [(None, 0.25), ("limit", 0.5), ("zero", 0.0)])
def test_a_censored_pna_takes_the_substitute_of_air_censored(tmp_path, censored, na_sub):
    from test_budget import _get

    from workbench.cli import run_scenario
    written, _, _ = run_scenario(_site(tmp_path, censored), tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    by_hand = 4 * SO4 * WEEK * KG_S - sum(
        _seasalt(na_sub if w in CENSORED_WEEKS else 1.0) for w in range(4))
    assert row["flux_kg_ha"] == pytest.approx(by_hand, rel=1e-3)
    # said, not flagged: a value below detection is a measurement, as for every species
    assert row["status"] == "complete"
    words = {None: "half the detection limit", "limit": "the detection limit", "zero": "0"}
    assert ("pNa below detection in 2 of 4 pSO4 samples (from 2021-02-08, 2021-02-22): "
            f"their sea-salt sulfate from {words[censored]} (air_censored)") in row["note"]
    assert "pNa missing" not in row["note"]


def test_a_site_without_censored_pna_says_nothing_of_it(tmp_path):
    from test_budget import _get, _with_particles

    from workbench.cli import run_scenario
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    assert "below detection" not in str(row["note"])


def test_the_monte_carlo_draws_a_censored_pna(tmp_path):
    """Only the censored values err (``censored_rel_sd`` 0.3, so that the cut at 0 is
    reached in 0.04 % of the draws; every other spread 0).  A draw is
    sum_n T_n - e_n S_n with e_n = 1 + 0.3 z_n for the two censored weeks, 1 for the
    others: by hand its standard deviation is 0.3 sqrt(2) S_c, S_c the sea-salt sulfate
    of a censored week (half the limit, 0.25 ug/m3), and its mean the point.  Tolerance
    5 standard errors of a standard deviation of N draws, 5/sqrt(2 N) (common practice).
    The old code drew no error for it (and took it as 0)."""
    from tiny_site import OFF

    from workbench.analysis import uncertainty as U
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    s = load_scenario(_site(tmp_path))
    study = Study.from_scenario(s)
    res = study.run(s.options["wet"], s.options["dry"], s.options["budget"], s.fixed_velocity,
                    "month", "2021-02-01", "2021-03-01")
    n = 20000
    opt = U.UncertaintyOptions(draws=n, seed=5, **{**OFF, "censored_rel_sd": 0.3})
    lay = U.linear_layer(res, study)
    k = list(lay.budget["site"].values).index("alpha")
    noise = U.site_noise(lay.sites[k], opt, n, 1, 1, (opt.seed, "alpha"), 2021)
    comp = U.component_draws(lay, k, noise, 2021)
    j = [c[1:] for c in U.COMPONENTS].index(("dry", "pSO4"))
    draws = comp[:, 0, 0, j] * KG_S
    sd = 0.3 * np.sqrt(2) * _seasalt(0.25)
    assert draws.std() == pytest.approx(sd, rel=5 / np.sqrt(2 * n))
    point = res.budget["deposition"].values[k, 0, 0, j] * KG_S
    assert draws.mean() == pytest.approx(point, abs=5 * sd / np.sqrt(n))
    # the range of budget.csv's row holds it too (5-95 %: 2 x 1.6449 sd, normal quantile)
    q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=4000, seed=5,
                                                      **{**OFF, "censored_rel_sd": 0.3}))
    dep = q.budget["deposition"].sel(site="alpha", component="S/dry/pSO4").isel(period=0)
    kg = dep.values[:, 0] * KG_S
    assert kg[2] - kg[0] == pytest.approx(2 * 1.6449 * sd, rel=0.08)
