"""Readers of gridded inputs in CF NetCDF (or zarr stores of the same layout): hourly
met and air concentrations on (time, y, x) and a land-use grid of our receptor classes
(docs/data_formats.md, "Gridded fields").

:func:`open_grid` checks the three files (dimensions, units, coordinates, land-use
codes) from their metadata and the small 2-D fields, without reading the hourly
arrays; :func:`read_block` then reads one block of cells and hands it on in the
site layout of the readers of :mod:`workbench.io`: each cell is a site (a
:class:`~workbench.io.sites.Site` of the cell's class, latitude, longitude and
heights), the met on (``site``, ``time``) in SI units and the air on ``period``, so
that the engine functions of the site pipeline run on it unchanged.  Units are
converted here, once, with pint (:mod:`workbench.units`).

Where the parts are: opening the files, a variable's values, heights, dims, latitude
and longitude, times and units in :mod:`workbench.grid_read`; :class:`Grid`,
:func:`open_grid` and :func:`describe` in :mod:`workbench.grid_check`; a block of cells
(:func:`cut`, :func:`block_catalogue`, :func:`read_block`, :func:`check_cells`) in
:mod:`workbench.grid_cells`.  This module re-exports them all, so that
``workbench.grid_io.<name>`` keeps working.
"""
from __future__ import annotations

# the checked grid (defined here before)
from .grid_check import (Grid, _check, _land_use, _same_grid, _template,  # noqa: F401
                         describe, open_grid)
# a block of cells in the site layout (defined here before)
from .grid_cells import (CHECK_CELL_HOURS, _air_block, _block_values,  # noqa: F401
                         _check_cells, _window, block_catalogue, cell_ids, check_cells,
                         cut, read_block)
# opening the files and reading their axes (defined here before)
from .grid_read import (AIR_SPECIES, HOUR, LAND_FIELDS, _UNIT_TEXT, GridError,  # noqa: F401
                        _air_times, _convert_met, _grid_dims, _height, _lat_lon,
                        _met_times, _open, read_values)
