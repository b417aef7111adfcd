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
