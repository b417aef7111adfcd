"""The linear layer: the per-sample pieces add up to the budget they were taken from.

On a copy of the invented demo (one site-year, monthly periods, so that weekly samples
straddle month ends): the dry contributions of every sampling period sum to each dry
component, the wet weights to the precipitation and the weighted concentrations to
the PWMs (an identity of the budget's own definitions, docs/budget.md and
docs/methods_wet.md; common practice).
"""
import numpy as np
import pytest

from ui.demo_subset import write_demo_subset
from workbench.analysis.layer import linear_layer
from workbench.budget import COMPONENTS
from workbench.pipeline import Study
from workbench.scenario import load_scenario

# sites of the demo catalogue without data in the copy: all-NaN completeness slices in
# the budget (their status already says "missing")
pytestmark = pytest.mark.filterwarnings("ignore:All-NaN slice encountered:RuntimeWarning")


@pytest.fixture(scope="module")
def monthly(tmp_path_factory):
    sc = load_scenario(write_demo_subset(tmp_path_factory.mktemp("layer"), ("ridge",), 2021, 2021))
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"], sc.fixed_velocity,
                    "month")
    return sc, study, res, linear_layer(res, study)


def test_dry_pieces_add_up_to_the_components(monthly):
    _, _, res, lay = monthly
    k = list(res.budget["site"].values).index("ridge")
    dep = res.budget["deposition"].values[k]                       # (R, P, C)
    seen = 0
    for j, (_, path, sp) in enumerate(COMPONENTS):
        if path != "dry" or sp not in lay.sites[k].dry:
            continue
        pieces = lay.sites[k].dry[sp]
        ok = np.isfinite(dep[..., j])
        np.testing.assert_allclose(pieces.contrib.sum(0).T[ok], dep[..., j][ok], rtol=1e-12)
        assert (pieces.contrib != 0).any(axis=(1, 2)).all()        # only rows that count
        seen += 1
    assert seen >= 5


def test_wet_pieces_give_the_precipitation_and_the_pwms(monthly):
    sc, study, res, lay = monthly
    k = list(res.budget["site"].values).index("ridge")
    w = lay.sites[k].wet
    n_p = res.budget.sizes["period"]
    wet = study.wet(sc.options["wet"], res.periods).sel(site="ridge")
    np.testing.assert_allclose(np.bincount(w.period, w.weight, n_p), wet["precipitation"].values,
                               rtol=1e-12)
    filled = wet["filled"].values
    for ion in ("SO4", "NO3", "NH4"):
        num = np.bincount(w.period, w.weight * w.conc[ion], n_p)
        den = np.bincount(w.period, w.weight * w.valid[ion], n_p)
        ref = wet[f"pwm_{ion}"].values
        ok = ~filled & np.isfinite(ref)
        np.testing.assert_allclose(num[ok] / den[ok], ref[ok], rtol=1e-12)
