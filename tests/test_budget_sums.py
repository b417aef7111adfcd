"""The budget's sums and the Monte Carlo's sums of the same components are one
computation: :func:`workbench.budget.add_totals` + :func:`workbench.budget.derived`
and :func:`workbench.analysis.sitedraws.totals_of` give the same numbers to the bit,
NaN where every part is NaN (never 0 for nothing)."""
import numpy as np
import xarray as xr

from workbench.analysis.sitedraws import totals_of
from workbench.budget import COMPONENTS, add_totals, derived, sum_present


def _budget(dep):
    dims = ("site", "receptor", "period", "component")
    status = np.where(np.isfinite(dep), "complete", "missing").astype(object)
    ds = xr.Dataset(
        {"deposition": (dims, dep), "status": (dims, status),
         "completeness": (dims, np.where(np.isfinite(dep), 1.0, np.nan))},
        coords={"site": ["a", "b"], "receptor": ["r"], "period": ["p1", "p2", "p3"],
                "component": [f"{e}/{p}/{s}" for e, p, s in COMPONENTS],
                "element": ("component", [c[0] for c in COMPONENTS]),
                "pathway": ("component", [c[1] for c in COMPONENTS]),
                "species": ("component", [c[2] for c in COMPONENTS])})
    return add_totals(ds)


def test_budget_and_draw_totals_agree():
    rng = np.random.default_rng(7)
    dep = rng.lognormal(-9, 1, (2, 1, 3, len(COMPONENTS)))
    species = [c[2] for c in COMPONENTS]
    dep[0, 0, 0, :] = np.nan                                   # nothing at all
    dep[0, 0, 1, [species.index(s) for s in ("NO3", "HNO3", "pNO3", "NO2")]] = np.nan
    dep[1, 0, 2, ::2] = np.nan                                 # some parts missing
    ds = _budget(dep)
    der = derived(ds)
    draws = totals_of(dep)
    totals = list(ds["total"].values)
    for name in totals:
        np.testing.assert_array_equal(draws[name],
                                      ds["total_deposition"].values[..., totals.index(name)])
    from workbench.units import element_deposition_in
    np.testing.assert_array_equal(element_deposition_in(draws["oxidized_N"], "N", "eq_ha"),
                                  der["oxidized_N_eq_ha"].values)
    np.testing.assert_array_equal(element_deposition_in(draws["reduced_N"], "N", "eq_ha"),
                                  der["reduced_N_eq_ha"].values)
    np.testing.assert_array_equal(draws["potential_acidity"],
                                  der["potential_acidity_eq_ha"].values)
    # every part NaN: NaN, not 0
    assert np.isnan(draws["S_total"][0, 0, 0]) and np.isnan(draws["oxidized_N"][0, 0, 1])
    assert np.isnan(der["potential_acidity_eq_ha"].values[0, 0, 0])


def test_sum_present_nan_only_when_nothing():
    v = np.array([[np.nan, np.nan], [0.0, np.nan], [1.0, 2.0]])
    out = sum_present(v)
    assert np.isnan(out[0]) and out[1] == 0.0 and out[2] == 3.0
    assert np.isnan(sum_present(np.empty((2, 0)))).all()
