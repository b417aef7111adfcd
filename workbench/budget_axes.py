"""The inputs of the budget on its own axes (sites, receptors, periods): the yearly
factor of each period, the wet and dry Datasets and the collector split put on the
budget's sites, receptors and periods (used by :func:`workbench.budget_assembly.assemble`;
re-exported by :mod:`workbench.budget`).
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .surfacehistory import describe


def annual_factor(periods: pd.DataFrame) -> np.ndarray:
    """Factor turning a period's deposition into a yearly rate [1].

    Hours in the year of the period's label (8784 in leap years) over the period's
    hours; 1 for any period of exactly one year (a calendar or hydrological year, a
    custom range from a date to the same date a year later): a whole year is its own
    yearly rate, whether it holds 29 February or not (a hydrological year's label names
    the year it ends in, which need not be the year of that February).  A custom range
    of exactly k whole years (from a date to the same date k years later) has 1/k: its
    deposition per year, whatever leap days it holds (the hours of its first year over
    its hours gave 8760 / 17544 = 0.4993 for 2023-2024; 2026-12 audit).

    >>> import pandas as pd
    >>> p = pd.DataFrame({"start": pd.to_datetime(["2023-01-01", "2024-02-01"]),
    ...                   "end": pd.to_datetime(["2025-01-01", "2024-03-01"]),
    ...                   "hours": [17544.0, 696.0], "year": [-1, -1]})
    >>> [round(float(f), 4) for f in annual_factor(p)]
    [0.5, 12.6207]
    """
    year = np.where(periods["year"].to_numpy() > 0, periods["year"].to_numpy(),
                    pd.DatetimeIndex(periods["start"]).year.to_numpy())
    leap = ((year % 4 == 0) & (year % 100 != 0)) | (year % 400 == 0)
    factor = np.where(leap, 8784.0, 8760.0) / periods["hours"].to_numpy(dtype=float)
    start = pd.DatetimeIndex(periods["start"])
    end = periods["end"].to_numpy().astype("datetime64[ns]")
    n_years = np.maximum(pd.DatetimeIndex(end).year.to_numpy() - start.year.to_numpy(), 1)
    for k in np.unique(n_years):           # over the distinct numbers of years (few)
        whole = ((n_years == k) & ((start + pd.DateOffset(years=int(k)))
                                   .to_numpy("datetime64[ns]") == end))   # not clipped
        factor = np.where(whole, 1.0 / k, factor)
    return factor



def _season_ok(dry: xr.Dataset, season_cov, periods, options):
    """(site, period, species): every season has concentrations, for year periods."""
    ok = np.ones(dry["coverage"].shape, bool)
    if options.require_all_seasons and season_cov is not None:
        is_year = periods["kind"].isin(["year", "hydro_year"]).to_numpy()
        ok[:, is_year, :] = season_cov[:, is_year, :]
    return ok



def _dry_on_receptors(dry: xr.Dataset, receptors) -> xr.Dataset:
    """`dry` on the receptor axis `receptors`, a receptor it lacks being one on which no
    velocity was computed (a pair no site of a block asks for, ``Study.run(layout=)``):
    what the dry chain gives for a pair with no Vd in any hour, so that such a pair
    reads as in a whole run (tests/test_blocks_layout.py).  Its fractions of hours with
    a Vd (``vd_coverage``, ``flux_coverage``, ``*_flux_coverage``) are 0; every other
    value NaN (dtypes of flags kept false)."""
    fill = {}
    for name, v in dry.data_vars.items():
        if "receptor" not in v.dims:
            continue
        if name in ("vd_coverage", "flux_coverage") or name.endswith("_flux_coverage"):
            fill[name] = 0.0
        elif v.dtype.kind == "b":
            fill[name] = False
    out = dry.reindex(receptor=list(receptors), fill_value={**{n: np.nan for n in dry.data_vars
                                                                 if "receptor" in dry[n].dims},
                                                              **fill})
    for name in fill:
        if dry[name].dtype.kind == "b":
            out[name] = out[name].astype(bool)
    return out



def _collector_split_on(split, sites, n_p):
    """:func:`workbench.surfacehistory.collector_split` on the budget's sites (a site
    without samples: NaN shares, not estimated), with the words of a period holding
    both collectors; None without it."""
    if split is None:
        return None
    have = {s: k for k, s in enumerate(split["sites"])}
    idx = np.array([have.get(str(s), -1) for s in sites], int)
    ok = (idx >= 0)[:, None]

    def on(a, fill):
        a = np.asarray(a)
        return np.where(ok, a[np.maximum(idx, 0)], fill)
    out = {"hour_share": on(split["hour_share"], np.nan),
           "precip_share": on(split["precip_share"], np.nan),
           "estimated": on(split["estimated"], False).astype(bool),
           "share": {sp: on(v, np.nan) for sp, v in split["share"].items()}}
    words = np.full((len(sites), n_p), "", dtype=object)
    for sid, _, changes in split.get("history", ()):
        if sid in list(sites):
            words[list(sites).index(sid)] = "collector " + describe(changes)
    out["both_words"] = words
    return out


def _wet_bulk_share(split, w, sp, options):
    """(site, period) share [1] of the wet component's deposition carried by the bulk
    samples, and its words: the samples' contributions (a period whose mean was filled
    from the climatology: their share of the precipitation; no sample: the hours)."""
    nss = sp == "SO4" and options.sulfate_basis == "nss" and "dep_nssSO4" in w.variables
    share = split["share"].get(f"nss{sp}" if nss else sp)
    if share is None:
        share = np.full(split["precip_share"].shape, np.nan)
    filled = (w.variables["filled"].values.astype(bool) if "filled" in w.variables
              else np.zeros(share.shape, bool))
    share = np.where(filled, split["precip_share"], share)
    share = np.where(np.isfinite(share), share, split["precip_share"])
    share = np.where(np.isfinite(share), share, split["hour_share"])
    return np.nan_to_num(share), "bulk samples' part of the deposition"


def _same_axis(ds: xr.Dataset, dim: str, values) -> bool:
    """The Dataset's coordinate `dim` is `values`, in order (no reindex needed)."""
    have = ds.indexes[dim]
    return len(have) == len(values) and bool((np.asarray(have, dtype=object)
                                               == np.asarray(values, dtype=object)).all())
