"""A particulate sulfate below detection beside a measured pNa, on the non-sea-salt
basis (docs/budget.md, "Components and units"; docs/methods_uncertainty.md).

The total pSO4 of such a week lies between its sea-salt sulfate S = 0.0605 pNa and the
detection limit L, so its non-sea-salt part lies between 0 and max(0, L - S): that is
the limit of the non-sea-salt part, and the week takes the ``[budget] air_censored``
substitute of it (half by default, common practice), 0 where S reaches L.  Before, the
week entered with half of L itself, sea salt included (its censored total stood for
its non-sea-salt part), without a word.

The tiny site of tests/test_budget.py: pSO4 2.0 ug/m3 and pNa 1.0 ug/m3 every week of
February 2021 at Vd 0.2 cm/s; pSO4 ``<LIMIT`` in two weeks.  By hand: the seawater
ratio SO4/Na = 0.121 in equivalents, 0.0605 mol/mol (Keene et al. 1986, Table 1, from
memory, as workbench.wet.seasalt), molar masses IUPAC (from memory: SO4 96.056, Na
22.990, S 32.06 g/mol).
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
KG_S = 32.06e-3 * 1e4                            # mol/m2 -> kg S/ha
SEASALT = 0.0605 * 1.0e-6 / 22.990               # mol/m3 of sea-salt sulfate, pNa 1 ug/m3


def _so4(ug):
    return ug * 1e-6 / 96.056                    # mol/m3


def _site(tmp_path, limit=2.0, censored=None):
    from test_budget import _with_particles
    sc = _with_particles(tmp_path)
    text = sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"')
    if censored:
        text = text.replace('sulfate_basis = "nss"',
                            f'sulfate_basis = "nss"\nair_censored = "{censored}"')
    sc.write_text(text)
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    assert lines[1].endswith(",pSO4 [ug/m3],pNa [ug/m3]")
    for w in CENSORED_WEEKS:
        head, _, na = lines[2 + w].rsplit(",", 2)
        lines[2 + w] = f"{head},<{limit},{na}"
    air.write_text("\n".join(lines) + "\n")
    return sc


@pytest.mark.parametrize("limit,censored,factor", [(2.0, None, 0.5), (2.0, "limit", 1.0),
                                                   (2.0, "zero", 0.0), (0.2, None, 0.5)])
def test_the_sea_salt_comes_off_a_censored_pso4(tmp_path, limit, censored, factor):
    from test_budget import _get

    from workbench.cli import run_scenario
    written, _, _ = run_scenario(_site(tmp_path, limit, censored), tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    measured = (_so4(2.0) - SEASALT) * WEEK * KG_S                 # kg S/ha of one week
    cens = factor * max(_so4(limit) - SEASALT, 0.0) * WEEK * KG_S
    by_hand = 2 * measured + 2 * cens
    assert row["flux_kg_ha"] == pytest.approx(by_hand, rel=1e-3)
    if limit == 2.0 and factor == 0.5:
        # the number of before: half the limit itself, sea salt included
        old = 2 * measured + 2 * 0.5 * _so4(limit) * WEEK * KG_S
        assert row["flux_kg_ha"] != pytest.approx(old, rel=1e-2)      # 4.6 % above
    if limit == 0.2:                  # S = 0.253 ug/m3 of sulfate reaches the limit
        assert cens == 0.0
    assert row["status"] == "complete"          # said, not flagged (a measurement)
    words = {None: "half the detection limit", "limit": "the detection limit", "zero": "0"}
    assert ("pSO4 below detection in 2 of 4 pSO4 samples (from 2021-02-08, 2021-02-22): "
            f"their non-sea-salt pSO4 from {words[censored]} (air_censored) of the limit "
            "less the sea-salt sulfate of their pNa") in row["note"], row["note"]


def test_on_the_total_basis_a_censored_pso4_keeps_its_substitute(tmp_path):
    from test_budget import _get

    from workbench.cli import run_scenario
    sc = _site(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "nss"', 'sulfate_basis = "total"'))
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    row = _get(pd.read_csv(written["budget.csv"]), "S", "dry", "pSO4")
    by_hand = (2 * _so4(2.0) + 2 * 0.5 * _so4(2.0)) * WEEK * KG_S
    assert row["flux_kg_ha"] == pytest.approx(by_hand, rel=1e-3)
    assert "pSO4 below detection" not in str(row["note"])


def test_the_monte_carlo_draws_the_nss_substitute_alone(tmp_path):
    """Only the censored values err (``censored_rel_sd`` 0.3; every other spread 0):
    a censored week is its non-sea-salt substitute c times 1 + 0.3 z, with no sea-salt
    part of its own, so the draws' SD is 0.3 sqrt(2) c (c = (L - S) / 2 over the
    week) and their mean the point.  The old code drew 0.3 sqrt(2) times half of L,
    sea salt included, and its layer held a sea-salt part that had never been taken
    off.  Tolerance 5/sqrt(2 N) relative (common practice)."""
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
    c = 0.5 * (_so4(2.0) - SEASALT) * WEEK * KG_S
    sd = 0.3 * np.sqrt(2) * c
    assert draws.std() == pytest.approx(sd, rel=5 / np.sqrt(2 * n))
    point = res.budget["deposition"].values[k, 0, 0, j] * KG_S
    assert draws.mean() == pytest.approx(point, abs=5 * sd / np.sqrt(n))
