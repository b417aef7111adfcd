"""The former sample-by-sample move of a gas/particle pair (the package's ``_pair_air``
until ``pair_split`` was built from each member's own rows), kept here as the reference
where both members are on every sample: there the two must agree to rounding
(deposition is linear in the concentration)."""
from __future__ import annotations

import numpy as np
import xarray as xr

from workbench.budget import PAIRS


def sample_by_sample_move(air: xr.Dataset, pair: str, into: str) -> xr.Dataset:
    """Air with both members of `pair` added into `into`, sample by sample (NaN where
    a sample lacks either member), and the other member 0."""
    gas, part = PAIRS[pair]
    n = air.sizes["period"]
    g = air[gas].values if gas in air else np.full(n, np.nan)
    p = air[part].values if part in air else np.full(n, np.nan)
    total = np.where(np.isfinite(g) & np.isfinite(p), g + p, np.nan)
    other = part if into == gas else gas
    new = {into: xr.Variable(("period",), total,
                             dict(air[into].attrs if into in air else air[other].attrs)),
           f"{into}_censored": xr.Variable(("period",), np.zeros(n, bool)),
           f"{into}_detection_limit": xr.Variable(("period",), np.full(n, np.nan))}
    if f"{other}_method" in air and f"{into}_method" not in air:
        new[f"{into}_method"] = air[f"{other}_method"].variable
    if other in air:
        new[other] = (air[other] * 0.0).variable
    return air.assign(new)
