"""The met's hourly precipitation against the gauge depth of each precipitation sample,
and the notes of a unit slip between the two records.

Part of :mod:`workbench.io.metchecks` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np
import pandas as pd


def gauge_comparison(met, samples, low=0.5, high=2.0, min_depth_mm=2.0):
    """Compare hourly met precipitation summed over each sample with its gauge depth.

    Parameters
    ----------
    met : xarray.Dataset
        Hourly met (site, time) with ``precipitation`` [mm], ``time`` = end of hour.
    samples : xarray.Dataset
        Precipitation samples (dim ``sample``).
    low, high : float
        Accepted range of the ratio met / gauge [-] (common practice: a factor of two);
        a ratio on a bound (to the rounding of :data:`workbench.wet.qa.THRESHOLD_RTOL`)
        is inside.
    min_depth_mm : float
        Smaller depths are not judged [mm]; a depth equal to it (to rounding) is.

    Returns
    -------
    pandas.DataFrame
        ``line, site, start, end, gauge_depth, met_depth, met_hours_missing, ratio,
        judged`` (every met hour present and a depth of at least `min_depth_mm`),
        ``suspicious`` for every sample of a site that has met.
    """
    sites = samples["site"].values.astype(str)
    have = np.isin(sites, met["site"].values.astype(str))
    out = pd.DataFrame({"line": samples["line"].values[have], "site": sites[have],
                        "start": samples["start"].values[have], "end": samples["end"].values[have],
                        "gauge_depth": samples["gauge_depth"].values[have]})
    if out.empty:
        return out.assign(met_depth=[], met_hours_missing=[], ratio=[], suspicious=[])
    from ..wet.hourly import site_positions, window_sums
    total, n_valid, n_hours = window_sums(met["precipitation"],
                                          site_positions(out["site"], met["site"].values),
                                          out["start"].to_numpy(), out["end"].to_numpy())
    out["met_depth"] = total
    out["met_hours_missing"] = n_hours - n_valid
    with np.errstate(divide="ignore", invalid="ignore"):
        out["ratio"] = out["met_depth"] / out["gauge_depth"]
    from ..wet.qa import at_least, outside_band      # on a bound in the decimals typed:
    deepest = np.maximum(out["gauge_depth"], out["met_depth"]).to_numpy()   # judged, inside
    out["judged"] = (out["met_hours_missing"] == 0).to_numpy() & at_least(deepest, min_depth_mm)
    out["suspicious"] = out["judged"].to_numpy() & outside_band(out["ratio"].to_numpy(), low, high)
    return out


#: Unit factors between two depth records (met / gauge) that a slip makes, with words
#: and a further question (pint's definitions: 1 inch = 25.4 mm, 1 cm = 10 mm).
DEPTH_SLIPS = ((25.4, "inch and mm", ""),
               (10.0, "cm and mm", " Or tenths of mm (a count of 0.1 mm) taken for mm?"))
#: Samples of a site that must be compared before a slip is named, the share of them
#: that must be far from their gauge, and how near the median ratio must come to a
#: factor [1] (our choice).
SLIP_MIN_SAMPLES, SLIP_SHARE, SLIP_RTOL = 8, 0.5, 0.1


def gauge_slip_notes(gc, file_name: str) -> list[str]:
    """A note per site whose samples mostly fail the gauge comparison by a unit factor.

    Parameters
    ----------
    gc : pandas.DataFrame
        :func:`gauge_comparison`'s table.
    file_name : str
        The met file's name.

    Returns
    -------
    list of str
        e.g. ``met.csv: precipitation at fell: 40 of 41 samples far from their gauge depth,
        median met/gauge 0.039, near 1/25.4: inch and mm mixed between the met's
        precipitation and the gauge depths?``; the values are not changed.
    """
    from ..wet.qa import outside_band
    if gc is None or gc.empty:
        return []
    judged = gc[gc["judged"] & np.isfinite(gc["ratio"]) & (gc["ratio"] > 0)]
    notes = []
    for site, g in judged.groupby("site", sort=False):
        n_bad = int(g["suspicious"].sum())
        if len(g) < SLIP_MIN_SAMPLES or n_bad <= SLIP_SHARE * len(g):
            continue
        med = float(np.median(g["ratio"]))
        for factor, words, more in DEPTH_SLIPS:
            for f, text in ((factor, f"{factor:g}"), (1 / factor, f"1/{factor:g}")):
                if not outside_band(np.array([med / f]), 1 - SLIP_RTOL, 1 + SLIP_RTOL)[0]:
                    notes.append(f"{file_name}: precipitation at {site}: {n_bad} of {len(g)} "
                                 f"samples far from their gauge depth, median met/gauge "
                                 f"{med:.3g}, near {text}: {words} mixed between the met's "
                                 f"precipitation and the gauge depths?{more}")
    return notes
