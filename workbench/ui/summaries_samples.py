"""The samples not used as they are, and their reasons (:func:`excluded_samples`,
:func:`reason_counts`).  :mod:`.summaries` re-exports these names.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

def in_span(screened: xr.Dataset, site=None, start=None, end=None) -> np.ndarray:
    """Samples of `site` (all when None) that overlap [start, end) (bool per sample)."""
    keep = np.ones(screened.sizes["sample"], bool)
    if site is not None:
        keep &= screened["site"].values.astype(str) == site
    if start is not None:
        keep &= screened["end"].values > np.datetime64(start)
    if end is not None:
        keep &= screened["start"].values < np.datetime64(end)
    return keep


def excluded_samples(screened: xr.Dataset, site=None, statuses=("excluded", "flagged"),
                     start=None, end=None) -> pd.DataFrame:
    """Samples not used as they are, with their reasons (one row per sample).

    Only samples of `site` that overlap [`start`, `end`) when these are given.

    Returns
    -------
    pandas.DataFrame
        ``site, start, end, line, status, reasons, gauge_depth`` [mm].
    """
    if screened is None:
        return pd.DataFrame(columns=["site", "start", "end", "line", "status", "reasons",
                                     "gauge_depth"])
    frame = pd.DataFrame({
        "site": screened["site"].values.astype(str),
        "start": pd.to_datetime(screened["start"].values),
        "end": pd.to_datetime(screened["end"].values),
        "line": screened["line"].values,
        "status": screened["status"].values.astype(str),
        "reasons": screened["reasons"].values.astype(str),
        "gauge_depth": screened["gauge_depth"].values.astype(float)})
    keep = frame["status"].isin(statuses).to_numpy() & in_span(screened, site, start, end)
    order = {s: i for i, s in enumerate(statuses)}
    frame = frame[keep].copy()
    frame["_o"] = frame["status"].map(order)
    return frame.sort_values(["_o", "start"]).drop(columns="_o").reset_index(drop=True)


def reason_counts(screened: xr.Dataset, site=None, start=None, end=None) -> pd.DataFrame:
    """Samples per reason and status (a sample with two reasons counts under both).

    Returns
    -------
    pandas.DataFrame
        ``reason, status, samples``.
    """
    t = excluded_samples(screened, site, start=start, end=end)
    if t.empty:
        return pd.DataFrame(columns=["reason", "status", "samples"])
    t = t.assign(reason=t["reasons"].where(t["reasons"] != "", "(no reason given)")
                 .str.split("; ")).explode("reason")
    return (t.groupby(["reason", "status"]).size().rename("samples").reset_index()
            .sort_values("samples", ascending=False, kind="stable").reset_index(drop=True))
