"""The same study under every gas surface-resistance scheme, side by side.

The choice of gas scheme is a structural uncertainty of dry deposition: two published
schemes, both defensible, give different Vd for the same surface and hour.  With
``[dry] compare_schemes = true`` a run computes the budget once per scheme of
:data:`workbench.drydep.gas.SCHEMES` (the chosen one first) and budget.csv carries
every scheme's rows with a ``scheme`` column; every other output (budget.nc,
velocities.nc, the report) is that of the chosen scheme.
"""
from __future__ import annotations

import dataclasses

import pandas as pd

#: Gases whose Vd the scheme changes (particles do not depend on the gas scheme).
COMPARED_GASES = ("SO2", "HNO3", "NH3", "NO2", "O3")


def schemes_in_order(dry_options) -> list:
    """The chosen scheme first, then the other registered ones."""
    from .drydep.gas import SCHEMES
    return [dry_options.gas_scheme] + [s for s in SCHEMES if s != dry_options.gas_scheme]


def run(study, wet_options=None, dry_options=None, budget_options=None, fixed_velocity=None,
        resolution="year", start=None, end=None):
    """``study.run(...)``; with ``dry_options.compare_schemes`` also under the other schemes.

    Parameters
    ----------
    study : workbench.pipeline.Study
    wet_options, dry_options, budget_options, fixed_velocity, resolution, start, end
        As for :meth:`workbench.pipeline.Study.run`.

    Returns
    -------
    workbench.pipeline.Result
        The chosen scheme's result; when schemes are compared its ``table`` holds the
        rows of every scheme, with a ``scheme`` column (the chosen scheme's rows first).
    """
    from .drydep import DryOptions
    dry_options = dry_options or DryOptions()
    args = (wet_options, dry_options, budget_options, fixed_velocity, resolution, start, end)
    result = study.run(*args)
    if not dry_options.compare_schemes:
        return result
    tables = []
    for scheme in schemes_in_order(dry_options):
        if scheme == dry_options.gas_scheme:
            table = result.table
        else:
            other = dataclasses.replace(dry_options, gas_scheme=scheme)
            table = study.run(wet_options, other, *args[2:]).table
        tables.append(table.assign(scheme=scheme))
    result.table = pd.concat(tables, ignore_index=True)   # replaces the cached property
    return result


def chosen_scheme(result):
    """(result showing the chosen gas scheme only, every scheme's table or None).

    With ``[dry] compare_schemes`` the result's table holds the rows of every scheme
    (:func:`workbench.comparison.run_compared`); the report's tables are those of the
    chosen scheme, and the other schemes appear in their own section only."""
    import copy
    t = result.table
    if "scheme" not in t:
        return result, None
    dry = result.options.get("dry")
    chosen = getattr(dry, "gas_scheme", None) or str(t["scheme"].iloc[0])
    view = copy.copy(result)
    view.table = t[t["scheme"] == chosen].drop(columns="scheme").reset_index(drop=True)
    return view, t


def annual_vd_table(velocities_by_scheme: dict, gases=COMPARED_GASES) -> pd.DataFrame:
    """Mean Vd over the record by site, receptor, gas and scheme [cm s-1].

    Parameters
    ----------
    velocities_by_scheme : dict
        scheme -> velocities Dataset (:func:`workbench.drydep.velocities`), vd in [m s-1].
    gases : sequence of str

    Returns
    -------
    pandas.DataFrame
        Columns site, receptor, species, scheme, vd_cm_s, hours (hours with a value);
        active receptors only.
    """
    rows = []
    for scheme, ds in velocities_by_scheme.items():
        active = ds["active"].values
        for g in gases:
            vd = ds[f"vd_{g}"]
            mean = vd.mean("time").values * 100.0
            n = vd.notnull().sum("time").values
            for i, s in enumerate(ds["site"].values):
                for j, r in enumerate(ds["receptor"].values):
                    if active[i, j]:
                        rows.append((str(s), str(r), g, scheme, float(mean[i, j]), int(n[i, j])))
    return pd.DataFrame(rows, columns=["site", "receptor", "species", "scheme", "vd_cm_s",
                                       "hours"])


def annual_vd_by_year(velocities, names=COMPARED_GASES):
    """Mean Vd by calendar year (UTC) over each full year of the record [cm s-1].

    A year counts when every one of its hours is on the time axis: the hour-ending
    stamps from Y-01-01T01:00 to (Y+1)-01-01T00:00 UTC (the hour stamped 00:00 on
    1 January belongs to the year before, :func:`workbench.periods.assign_hours`).
    Within a full year the mean takes the hours with a value (a gap in one site's
    record leaves its other hours in), and ``hours_<name>`` says how many there were.

    Parameters
    ----------
    velocities : xarray.Dataset
        From :func:`workbench.drydep.velocities`: ``vd_<name>`` (site, receptor, time)
        [m s-1] on an hourly axis ``time`` (end of the hour, UTC), ``active``
        (site, receptor) optional.
    names : sequence of str
        The species whose ``vd_<name>`` is averaged (gases or particles).

    Returns
    -------
    xarray.Dataset
        ``vd_<name>`` (year, site, receptor) [cm s-1], NaN where the receptor is not
        active; ``hours_<name>`` (year, site, receptor) hours with a value [h];
        coordinate ``year`` (the full years, ascending); attribute
        ``incomplete_years``: "YYYY (n of N h)" for each year the axis touches but does
        not cover.

    Raises
    ------
    ValueError
        When the time axis is not strictly increasing or covers no full year.
    """
    import numpy as np
    import xarray as xr

    from .periods import assign_hours, make_periods
    t = np.asarray(velocities["time"].values, dtype="datetime64[ns]")
    if len(t) == 0 or np.any(np.diff(t) <= np.timedelta64(0, "ns")):
        raise ValueError("annual_vd_by_year needs a strictly increasing time axis "
                         "(hour-ending stamps, UTC)")
    hour = np.timedelta64(1, "h")
    periods = make_periods(t[0] - hour, t[-1], "year")
    where = assign_hours(t, periods, label="end")
    present = np.bincount(where[where >= 0], minlength=len(periods))
    needed = periods["hours"].to_numpy().round().astype(int)
    full = present == needed
    years = periods["year"].to_numpy()
    incomplete = [f"{y} ({n} of {m} h)" for y, n, m, f in zip(years, present, needed, full)
                  if not f]
    if not full.any():
        raise ValueError("annual_vd_by_year: the time axis "
                         f"{str(t[0])[:16]} to {str(t[-1])[:16]} covers no full calendar "
                         f"year (UTC); years touched: {', '.join(incomplete)}")
    keep = np.flatnonzero((where >= 0) & full[np.clip(where, 0, None)])
    # the full years are runs of consecutive hours: sums over each run (no loop over hours)
    label = years[where[keep]]
    first = np.flatnonzero(np.r_[True, label[1:] != label[:-1]])
    active = velocities["active"] if "active" in velocities else True
    out = {}
    for name in names:
        vd = velocities[f"vd_{name}"].where(active).transpose(..., "time")
        values = np.asarray(vd.values, dtype=float)[..., keep]
        valid = np.isfinite(values)
        total = np.add.reduceat(np.where(valid, values, 0.0), first, axis=-1)
        count = np.add.reduceat(valid, first, axis=-1)
        with np.errstate(invalid="ignore", divide="ignore"):
            mean = np.where(count > 0, total / count, np.nan) * 100.0
        dims = vd.dims[:-1]
        coords = {d: vd[d].values for d in dims if d in vd.coords}
        coords["year"] = label[first]
        mean = xr.DataArray(mean, dims=dims + ("year",), coords=coords,
                            attrs={"units": "cm s-1", "long_name": f"annual mean Vd of {name}"})
        hours = xr.DataArray(count, dims=dims + ("year",), coords=coords,
                             attrs={"units": "h", "long_name": "hours with a value"})
        out[f"vd_{name}"] = mean.transpose("year", ...)
        out[f"hours_{name}"] = hours.transpose("year", ...)
    return xr.Dataset(out, attrs={"incomplete_years": "; ".join(incomplete)})
