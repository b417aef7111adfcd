"""Peak Python memory (tracemalloc) of the met row checks on one grid block's worth of
cell-hours (880,000 rows, one row flagged): `python benchmarks/metcheck_memory.py .`
(the argument is the repository to import the workbench from). A measurement, not a test.
"""
import sys, tracemalloc, numpy as np, pandas as pd
sys.path.insert(0, sys.argv[1])
from workbench.io import metchecks
from types import SimpleNamespace
n = 880_000
t = (np.datetime64("2022-01-01T01:00") + np.arange(n) % 8760 * np.timedelta64(1, "h")).astype("datetime64[ns]")
sites = np.repeat(np.array([f"c{i:03d}" for i in range(n // 8760 + 1)], dtype=object), 8760)[:n]
cat = {s: SimpleNamespace(latitude=54.0, longitude=-2.0, elevation_m=200.0, utc_offset_h=0.0,
                          mast_height_m=10.0, z0_m=0.03) for s in set(sites)}
rng = np.random.default_rng(1)
values = {"temperature": 280 + rng.normal(0, 5, n), "relative_humidity": rng.uniform(0.4, 1.0, n),
          "wind_speed": rng.uniform(0.5, 8, n), "pressure": np.full(n, 99000.0)}
values["wind_speed"][5] = 250.0      # one flagged row
tracemalloc.start()
r, v = metchecks.run_row_checks(values, sites, t, cat, {"wind_speed": "m/s", "temperature": "K",
                                "relative_humidity": "%", "pressure": "Pa"})
cur, peak = tracemalloc.get_traced_memory()
print("peak MB", round(peak / 1e6), "flagged rows", int((r != "").sum()))
