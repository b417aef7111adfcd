"""Write the invented demo grid (20 x 20 cells, one month of hourly met) and its scenario.

    python demo_data/make_grid.py --out DIR

The generator is :mod:`workbench.grid_demo` (inside the package, so that an installed
copy and the notebook ``grid_maps.ipynb`` make the same grid); see its docstring for
why the grid is made on the fly rather than shipped.
"""
import sys

from workbench.grid_demo import main

if __name__ == "__main__":
    sys.exit(main())
