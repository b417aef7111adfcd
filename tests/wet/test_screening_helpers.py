"""Small helpers of the screening against pandas, the general-purpose reference.

Reference: pandas ``groupby(...).transform("median" | "sum" | "count")``, whose NaN
rules the helper keeps (a site without a finite value: NaN median, zero sum and count).
"""
import numpy as np
import pandas as pd
import pytest

from workbench.wet.screening import _flag_table, _site_stat


@pytest.mark.parametrize("how", ["median", "sum", "count"])
def test_site_statistic_equals_pandas_groupby_transform(how):
    rng = np.random.default_rng(3)
    values = rng.normal(size=40)
    values[rng.random(40) < 0.3] = np.nan
    sites = rng.choice(["a", "b", "c"], size=40)
    values[sites == "c"] = np.nan                     # one site without any value
    ref = pd.Series(values).groupby(pd.Series(sites)).transform(how).to_numpy(dtype=float)
    np.testing.assert_allclose(_site_stat(values, sites, how), ref, rtol=1e-14)  # summation order


def test_flag_table_returns_fresh_arrays():
    text = np.array(["", "X1, zz", None, np.nan], dtype=object)
    first, unknown = _flag_table(text)
    assert unknown.tolist() == [False, True, False, False]
    for v in first.values():
        v[:] = True                                   # a caller may write into them
    again, _ = _flag_table(text)
    assert not any(v[0] for v in again.values())
