"""One read of a met file in a fresh Python process with the package of one checkout,
shared by ``met_twice.py`` and ``sheet_met.py`` (not a script of its own).

:func:`read_once` runs :func:`workbench.io.met.read_met` in a child process whose
``PYTHONPATH`` (and working folder) is the checkout's root, and returns what the child
reports: its wall time and CPU time (user + system of all its threads, the read
alone), its peak resident memory (``VmHWM``), the ledger's rows and the sites read;
with ``traced=True`` instead the peak of the allocations traced by ``tracemalloc``
(numpy's and pandas' included; tracing slows the read, so it is a read of its own);
with ``spy=True`` also whether the chunked reader kept the file (``fast``).  The
child's package must be the checkout's (an error otherwise).
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

_CHILD = r"""
import json, resource, sys, time
met, sites, mode, spy = sys.argv[1:5]
from workbench.io.met import read_met
from workbench.io.sites import read_sites
cat = read_sites(sites)
fast = []
if spy == "spy":
    import workbench.io.metfast as metfast
    orig = metfast.read_met_csv_fast
    def chunked(*a, **k):
        got = orig(*a, **k)
        fast.append(got is not None)
        return got
    metfast.read_met_csv_fast = chunked
if mode == "traced":
    import tracemalloc
    tracemalloc.start()
    ds, ledger = read_met(met, cat)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    out = {"traced_mb": peak / 2**20}
else:
    r0, t0 = resource.getrusage(resource.RUSAGE_SELF), time.perf_counter()
    ds, ledger = read_met(met, cat)
    wall = time.perf_counter() - t0
    r1 = resource.getrusage(resource.RUSAGE_SELF)
    cpu = (r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime)
    hwm = next(int(ln.split()[1]) for ln in open("/proc/self/status")
               if ln.startswith("VmHWM"))
    out = {"wall": wall, "cpu": cpu, "peak_mb": hwm / 1024, "rows": ledger.rows(),
           "sites": int(ds.sizes["site"])}
import workbench
out["package"] = workbench.__file__
if fast:
    out["fast"] = fast[0]
print(json.dumps(out))
"""


def read_once(root, met, sites, traced=False, spy=False) -> dict:
    """What one read of `met` (with the catalogue `sites`) by the package of the checkout
    `root` reports (see the module docstring)."""
    root = Path(root).resolve()
    env = dict(os.environ, PYTHONPATH=str(root))
    # run from the root: ``python -c`` puts the working folder first on sys.path
    out = subprocess.run([sys.executable, "-c", _CHILD, str(met), str(sites),
                          "traced" if traced else "timed", "spy" if spy else "-"],
                         env=env, capture_output=True, text=True, check=True, cwd=str(root))
    got = json.loads(out.stdout.strip().splitlines()[-1])
    if not Path(got["package"]).resolve().is_relative_to(root):
        raise SystemExit(f"the read for {root} imported {got['package']}")
    return got
