"""Maps of a gridded run (``grid.nc`` of ``workbench grid``).

Pure functions: the output Dataset in, a plotly spec (plain JSON) or figure out.  The
map is drawn on the grid's own coordinates (projected x and y in km, or longitude and
latitude), one square per cell, with the cell's latitude, longitude and class in the
hover text; cells without a value are left blank.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .figures import from_spec

#: Colour scales: sequential, colour-blind safe (plotly's built-in names).
SCALES = {"dry": "Viridis", "vd": "Cividis"}
#: Attribute of the maps that names what they show instead of the scenario asked for
#: (set by :func:`open_maps`); the title of every map carries it.
SHOWN_INSTEAD = "workbench_shown_instead"
#: Factor and unit of the colour bar per kind of variable.
DISPLAY = {"dry": (1.0, "kg/ha"), "vd": (100.0, "cm/s"), "flux": (1.0, "-")}


def _axes(ds):
    """(y name, x name, y values, x values, axis titles) of the map."""
    ydim, xdim = [d for d in ds["land_use"].dims]
    y, x = ds[ydim].values.astype(float), ds[xdim].values.astype(float)
    sn = ds[xdim].attrs.get("standard_name", "")
    if sn == "projection_x_coordinate" and ds[xdim].attrs.get("units") == "m":
        return y / 1e3, x / 1e3, f"{ydim} [km]", f"{xdim} [km]"
    return y, x, f"{ydim} [{ds[ydim].attrs.get('units', '')}]", \
        f"{xdim} [{ds[xdim].attrs.get('units', '')}]"


def _aux(ds, standard_name, shape):
    for name in ds.variables:
        if ds[name].attrs.get("standard_name") == standard_name:
            return np.broadcast_to(ds[name].values, shape)
    return np.full(shape, np.nan)


#: The problem of a bad ``PERIOD``: a variable of the notebook, not a column of a file
#: (the message said "column 'PERIOD'").
NO_PERIOD = "PERIOD (set in the notebook's first cell): no such reporting period"


def period_position(ds, period) -> int:
    """Position of reporting period `period` (a position, negative from the end, or a
    label) in ``grid.nc`` `ds`.

    Raises
    ------
    InputError
        Naming the notebook's ``PERIOD`` and the periods there are (an ``IndexError``
        or ``ValueError`` traceback before).
    """
    labels = [str(v) for v in ds["period"].values]
    n = len(labels)
    listed = ", ".join(f"{i} ('{lab}')" for i, lab in enumerate(labels[:12]))
    listed += ", ..." if n > 12 else ""
    expected = f"a position 0 to {n - 1} or a label of the {n} period(s): {listed}"
    if isinstance(period, str) and not period.strip().lstrip("-").isdigit():
        if period.strip() in labels:
            return labels.index(period.strip())
        raise InputError(NO_PERIOD, value=period,
                         expected=expected)
    try:
        k = int(period)
    except (TypeError, ValueError):
        raise InputError(NO_PERIOD, value=period,
                         expected=expected) from None
    if not -n <= k < n:
        raise InputError(NO_PERIOD, value=period,
                         expected=expected)
    return k % n


def grid_map_spec(ds, variable: str = "dry_N", period: int | str = 0) -> dict:
    """Spec of a map of one output variable for one reporting period.

    Parameters
    ----------
    ds : xarray.Dataset
        ``grid.nc`` of a gridded run.
    variable : str
        ``dry_N``, ``dry_S``, ``dry_<species>`` [kg/ha of the element] or
        ``vd_<species>`` [drawn in cm/s].
    period : int or str
        Position or label of the period.

    Returns
    -------
    dict
        ``{"data": [heatmap], "layout": {...}}``.
    """
    if variable not in ds or ds[variable].ndim != 3:   # land_use: a map without periods
        raise InputError(f"{variable!r} is not in the grid output; choose one of "
                         + ", ".join(v for v in ds.data_vars if ds[v].ndim == 3))
    k = period_position(ds, period)
    kind = variable.split("_")[0]
    factor, unit = DISPLAY.get(kind, (1.0, ds[variable].attrs.get("units", "")))
    if kind == "dry" and variable[4:] in ("N", "S"):     # say the element: kg N/ha
        unit = f"kg {variable[4:]}/ha"
    z = ds[variable].values[k] * factor
    y, x, ytitle, xtitle = _axes(ds)
    shape = z.shape
    lat, lon = _aux(ds, "latitude", shape), _aux(ds, "longitude", shape)
    codes = ds["land_use"].values
    meanings = str(ds["land_use"].attrs.get("flag_meanings", "")).split()
    values = list(np.asarray(ds["land_use"].attrs.get("flag_values", []), int))
    names = np.array([meanings[values.index(int(c))] if np.isfinite(c) and int(c) in values
                      else "no class" for c in codes.reshape(-1)], object).reshape(shape)
    custom = np.stack([lat, lon, names], -1).tolist()
    if kind == "vd":
        what = f"deposition velocity of {variable[3:]} (period mean)"
    else:
        what = ds[variable].attrs.get("long_name", variable).split(" over the period")[0]
    trace = {"type": "heatmap", "x": x.tolist(), "y": y.tolist(),
             "z": [[None if not np.isfinite(v) else float(v) for v in row] for row in z],
             "colorscale": SCALES.get(kind, "Viridis"),
             "colorbar": {"title": {"text": unit}}, "customdata": custom,
             "hovertemplate": "lat %{customdata[0]:.3f}, lon %{customdata[1]:.3f}<br>"
             "%{customdata[2]}<br>" + f"{variable}: " + "%{z:.3g} " + unit + "<extra></extra>"}
    title = f"{what}, {ds['period'].values[k]}"
    if ds.attrs.get(SHOWN_INSTEAD):          # the user's scenario had no grid: say so
        title += f"<br><sup>{ds.attrs[SHOWN_INSTEAD]}</sup>"
    layout = {"title": {"text": title},
              "xaxis": {"title": {"text": xtitle}, "constrain": "domain"},
              "yaxis": {"title": {"text": ytitle}, "scaleanchor": "x", "scaleratio": 1},
              "height": 460, "width": 560}
    return {"data": [trace], "layout": layout}


def grid_map(ds, variable: str = "dry_N", period: int | str = 0):
    """The plotly figure of :func:`grid_map_spec`."""
    return from_spec(grid_map_spec(ds, variable, period))


def open_maps(scenario=None):
    """The maps of a gridded run for the notebook (:func:`workbench.grid_demo.open_run`).

    A scenario without a ``[grid]`` section (e.g. a site network) gets the invented demo
    grid, as ``open_run`` does, and the maps say so in every title: the printed line
    above them was easy to miss, and the maps read as the scenario's own.

    Parameters
    ----------
    scenario : path, optional
        A scenario file, or the ``grid.nc`` of a finished ``workbench grid`` run or its
        folder (opened as it is), found beside the notebook as
        :func:`~workbench.ui.notebook_paths.grid_path` says; None or ``"demo"``: the
        invented demo grid.

    Returns
    -------
    xarray.Dataset
        ``grid.nc``, loaded.
    """
    from ..grid_demo import open_run
    from ..scenario import load_scenario
    from .controls import short_errors
    from .notebook_paths import grid_path
    short_errors()                         # a bad path or input: its one located line
    scenario = grid_path(scenario)         # None: the demo grid
    finished = scenario is not None and (scenario.is_dir() or scenario.suffix == ".nc")
    instead = ""
    if scenario is not None and not finished and \
            load_scenario(scenario).given.get("grid") is None:
        instead = (f"invented demo grid: {scenario} has no [grid] section")
        scenario_run = None
    else:
        scenario_run = scenario
    ds = open_run(scenario_run)
    if instead:
        print(f"{scenario} has no [grid] section: showing the invented demo grid instead")
        ds.attrs[SHOWN_INSTEAD] = instead
    return ds
