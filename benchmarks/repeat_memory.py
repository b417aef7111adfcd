"""Peak memory of comparing a site met file's repeated time steps (a year given twice),
whole against in blocks (workbench.io.metaxes.check_repeats).

    python benchmarks/repeat_memory.py                        # 1,000 sites x 8,760 h, twice
    python benchmarks/repeat_memory.py --sites 200 --hours 2000
    python benchmarks/repeat_memory.py --old /tmp/old-checkout  # also an older checkout

An invented NetCDF met file (site, time) with ``--variables`` float64 variables and a
year of hours written twice (the second copy repeats the first exactly) is made in a
temporary folder.  Each comparison runs in a fresh Python process
(:func:`~workbench.io.metaxes.check_repeats` along time, the file opened lazily as the
NetCDF met reader opens it) and reports the peak of the allocations traced by
``tracemalloc`` (numpy's included) above the start, its peak resident memory
(``VmHWM``), its wall time, and a digest of the kept, dropped and repeated positions;
then a value of one repeated step is changed and the located error of each setting is
compared.  Settings: ``whole`` (one block holding every repeat: the comparison as it
was, reading the repeated steps of every site at once), ``default``
(:data:`~workbench.io.metaxes.REPEAT_BLOCK_VALUES`) and, with ``--old``, the
``check_repeats`` of another checkout.  Nothing is asserted; numbers go into
docs/performance.md.
"""
from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

_CHILD = r"""
import hashlib, json, resource, sys, time, tracemalloc
import numpy as np, xarray as xr
from workbench.errors import InputError
from workbench.grid_read import read_values
from workbench.io.metaxes import check_repeats
path, block = sys.argv[1], sys.argv[2]
kw = {} if block == "old" else {"block_values": int(block)}
with xr.open_dataset(path) as raw:
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        got = check_repeats(raw, __import__("pathlib").Path(path), "time", read_values, **kw)
        digest = hashlib.sha256(b"".join(np.asarray(a, np.int64).tobytes()
                                         for a in got)).hexdigest()[:16]
    except InputError as exc:
        digest = str(exc).replace(path, "met.nc")
    wall = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
hwm = next(int(ln.split()[1]) for ln in open("/proc/self/status") if ln.startswith("VmHWM"))
print(json.dumps({"traced_mb": peak / 2**20, "hwm_mb": hwm / 1024, "wall_s": wall,
                  "result": digest}))
"""


def write_file(path: Path, sites: int, hours: int, variables: int, conflict=False):
    """The invented met file: `hours` hours written twice; `conflict`: one value of
    the last repeated step changed."""
    import numpy as np
    import xarray as xr
    rng = np.random.default_rng(5)
    t = np.arange(hours).astype("timedelta64[h]") + np.datetime64("2031-01-01T01:00", "ns")
    names = ["temperature", "wind_speed", "relative_humidity", "pressure"][:variables]
    units = {"temperature": "K", "wind_speed": "m s-1", "relative_humidity": "1",
             "pressure": "Pa"}
    data = {}
    for n in names:
        v = rng.random((sites, hours))
        v[rng.random(v.shape) < 0.01] = np.nan                 # gaps repeat as gaps
        v = np.concatenate([v, v], axis=1)
        if conflict and n == names[-1]:
            v[sites // 2, -1] += 1.0
        data[n] = (("site", "time"), v, {"units": units[n]})
        del v
    ds = xr.Dataset(data, coords={"site": [f"s{i:04d}" for i in range(sites)],
                                  "time": np.concatenate([t, t])})
    ds.to_netcdf(path, engine="scipy")


def run(path, block, root):
    env = {**os.environ, "PYTHONPATH": str(Path(root).resolve())}
    # run from the file's folder: `python -c` puts the working folder first on the
    # path, which would import this checkout's package whatever PYTHONPATH says
    out = subprocess.run([sys.executable, "-c", _CHILD, str(path), str(block)], env=env,
                         capture_output=True, text=True, check=True, cwd=Path(path).parent)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sites", type=int, default=1000)
    ap.add_argument("--hours", type=int, default=8760)
    ap.add_argument("--variables", type=int, default=2, choices=(1, 2, 3, 4))
    ap.add_argument("--old", type=Path, help="an older checkout (its check_repeats)")
    a = ap.parse_args(argv)
    sys.path.insert(0, str(ROOT))
    from workbench.io.metaxes import REPEAT_BLOCK_VALUES
    settings = [("whole", 10**15, ROOT), ("default", REPEAT_BLOCK_VALUES, ROOT)]
    if a.old:
        settings.insert(0, ("old checkout", "old", a.old.resolve()))
    rows = {}
    with tempfile.TemporaryDirectory() as tmp:
        for case, conflict in (("exact repeat", False), ("one value differs", True)):
            path = Path(tmp) / "met.nc"
            write_file(path, a.sites, a.hours, a.variables, conflict)
            for name, block, root in settings:
                rows[(case, name)] = run(path, block, root)
            path.unlink()
    print(f"{a.sites} sites x {a.hours} h given twice, {a.variables} float64 variables; "
          f"the repeated steps of one variable, every site = "
          f"{a.sites * a.hours * 8 / 2**20:.0f} MB a side")
    print(f"{'case':<19} {'setting':<13} {'traced MB':>9} {'VmHWM MB':>9} {'wall s':>7}  "
          "result")
    for (case, name), r in rows.items():
        res = r["result"] if len(r["result"]) < 20 else r["result"][:60] + "..."
        print(f"{case:<19} {name:<13} {r['traced_mb']:9.1f} {r['hwm_mb']:9.1f} "
              f"{r['wall_s']:7.2f}  {res}")
    for case in ("exact repeat", "one value differs"):
        same = len({r["result"] for (c, _), r in rows.items() if c == case}) == 1
        w, d = rows[(case, "whole")], rows[(case, "default")]
        line = (f"{case}: results identical across settings: {same}; traced peak whole / "
                f"default = {w['traced_mb'] / d['traced_mb']:.1f}x, VmHWM "
                f"{w['hwm_mb'] / d['hwm_mb']:.2f}x")
        if (case, "old checkout") in rows:
            o = rows[(case, "old checkout")]
            line += (f"; old / default = {o['traced_mb'] / d['traced_mb']:.1f}x traced, "
                     f"VmHWM {o['hwm_mb'] / d['hwm_mb']:.2f}x")
        print(line)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
