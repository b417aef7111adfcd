"""The explorer computes a year from a subset of the inputs (the year with
SUBSET_MARGIN_DAYS of met on each side); its first hour must see the true previous
hour's rain (the surface wetness rule, docs/methods_dry.md section 8), so the year's
hourly velocities equal those of the whole-record run bit for bit, and its dry
deposition to rounding."""
import warnings

import numpy as np
import pytest

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def two_years(tmp_path_factory):
    from workbench.ui.session import Session
    path = write_demo_subset(tmp_path_factory.mktemp("year_edge"), ("ridge",), 2020, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return Session.open(path)


def test_explorer_year_equals_the_whole_record_run(two_years):
    s = two_years
    args = s.baseline.run_args()
    whole = s.study.run(resolution="year", start="2020-01-01", end="2022-01-01", **args)
    year = s.run(s.baseline, "ridge", 2021, 2021, "year")
    t0, t1 = np.datetime64("2021-01-01T01:00"), np.datetime64("2022-01-01T00:00")
    a = year.velocities.sel(time=slice(t0, t1))
    b = whole.velocities.sel(site=a["site"].values, receptor=a["receptor"].values,
                             time=slice(t0, t1))
    assert a.sizes["time"] == 8760
    for v in ("surface_wet", "vd_SO2", "vd_HNO3", "vd_pSO4"):
        np.testing.assert_array_equal(a[v].values, b[v].transpose(*a[v].dims).values,
                                      err_msg=v)
    ya = year.table
    yb = whole.table
    keep = ["site", "receptor", "element", "species", "pathway", "flux_kg_ha", "vd_coverage"]
    ra = ya[(ya["period"] == "2021") & (ya["pathway"] == "dry")][keep]
    rb = yb[(yb["period"] == "2021") & (yb["pathway"] == "dry")][keep]
    assert len(ra)
    m = ra.merge(rb, on=keep[:5], suffixes=("", "_whole"))
    assert len(m) == len(ra)
    # the hourly inputs are the same bits; the sums over a year of the subset's and of the
    # whole record's samples differ in their order only (rounding, about 1e-14)
    np.testing.assert_allclose(m["flux_kg_ha"].to_numpy(float),
                               m["flux_kg_ha_whole"].to_numpy(float), rtol=1e-12, atol=0)
    np.testing.assert_array_equal(m["vd_coverage"].to_numpy(float),
                                  m["vd_coverage_whole"].to_numpy(float))
