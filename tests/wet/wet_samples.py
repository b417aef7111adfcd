"""Builders of synthetic inputs for the wet-deposition tests.

They produce the in-memory layout of ``docs/data_model.md`` (dim ``sample`` for
precipitation samples; dims ``site``, ``time`` = end of hour for meteorology), so
the tests do not depend on the file readers.  Ion concentrations are given in
umol/L for readability and converted with the package's unit layer.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from workbench.species import PRECIP_IONS
from workbench.units import to_amount

DEFAULTS = {"site": "A", "flags": "", "sampler_id": "", "gauge_depth": np.nan,
            "sample_depth": np.nan, "pH": np.nan, "conductivity": np.nan}


def make_samples(rows, ions=PRECIP_IONS) -> xr.Dataset:
    """Sample Dataset from a list of dicts.

    Each dict has ``start`` and ``end`` (text or datetime), optional ``site``,
    ``flags``, ``gauge_depth`` [mm], ``sample_depth`` [mm] (defaults to the gauge
    depth), ``pH``, ``conductivity`` [uS/cm], ions in umol/L (missing -> NaN), and
    ``censored`` = {ion: detection limit in umol/L or None}.
    """
    n = len(rows)
    data = {}
    for key, default in DEFAULTS.items():
        data[key] = [r.get(key, default) for r in rows]
    data["sample_depth"] = [r.get("sample_depth", r.get("gauge_depth", np.nan)) for r in rows]
    ds = xr.Dataset(coords={"sample": np.arange(n)})
    ds["site"] = ("sample", np.array(data["site"], dtype=object))
    ds["start"] = ("sample", pd.to_datetime([str(r["start"]) for r in rows], format="ISO8601").values)
    ds["end"] = ("sample", pd.to_datetime([str(r["end"]) for r in rows], format="ISO8601").values)
    ds["line"] = ("sample", np.arange(2, n + 2))
    ds["sampler_id"] = ("sample", np.array(data["sampler_id"], dtype=object))
    ds["flags"] = ("sample", np.array(data["flags"], dtype=object))
    ds["gauge_depth"] = ("sample", np.array(data["gauge_depth"], float), {"units": "mm"})
    ds["sample_depth"] = ("sample", np.array(data["sample_depth"], float), {"units": "mm"})
    ds["pH"] = ("sample", np.array(data["pH"], float), {"units": "1"})
    ds["conductivity"] = ("sample", np.array(data["conductivity"], float), {"units": "uS cm-1"})
    for ion in ions:
        umol = np.array([r.get(ion, np.nan) for r in rows], float)
        cens = np.array([ion in r.get("censored", {}) for r in rows], bool)
        dl = np.array([np.nan if r.get("censored", {}).get(ion) is None
                       else r["censored"][ion] for r in rows], float)
        ds[ion] = ("sample", to_amount(umol, "umol/L", ion)[0], {"units": "mol m-3"})
        ds[f"{ion}_censored"] = ("sample", cens)
        ds[f"{ion}_detection_limit"] = ("sample", to_amount(dl, "umol/L", ion)[0],
                                        {"units": "mol m-3"})
    return ds


def make_met(sites, start, end, temperature=283.15, precipitation=0.0) -> xr.Dataset:
    """Hourly met Dataset (time = end of hour) with constant or callable fields.

    `temperature` [K] and `precipitation` [mm per hour] may be scalars or functions
    of the hour-end times (a DatetimeIndex) returning arrays.
    """
    times = pd.date_range(pd.Timestamp(start) + pd.Timedelta("1h"), end, freq="h")
    def field(f):
        v = f(times) if callable(f) else np.full(len(times), float(f))
        return np.broadcast_to(np.asarray(v, float), (len(sites), len(times))).copy()
    return xr.Dataset({"temperature": (("site", "time"), field(temperature), {"units": "K"}),
                       "precipitation": (("site", "time"), field(precipitation), {"units": "mm"})},
                      coords={"site": list(sites), "time": times.values})


def week(start, days=7):
    """(start, end) texts of a sampling interval of `days` days from `start`."""
    s = pd.Timestamp(start)
    return str(s), str(s + pd.Timedelta(days=days))
