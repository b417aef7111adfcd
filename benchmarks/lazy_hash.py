"""Cost of hashing the lazily read inputs again after their last read.

A NetCDF or zarr met, and the met and air grids of `workbench grid`, are read in pieces
by xarray; their SHA-256 is taken before they are opened and again after the last read
(a file edited meanwhile is refused, workbench.io.readbytes.changed_while_read).  This
measures the second hash against the read (or the grid run) it follows:

    python benchmarks/lazy_hash.py [--copies 8] [--repeat 3]

- NetCDF met: the demo met (4 sites, 2016-2023) as NetCDF3, and a larger one of
  `--copies` renamed copies of the demo network (invented ids ridge_1, ...), each read
  with `read_met`; the hash alone is timed on the same file.
- grid: the invented 20 x 20 demo grid (`workbench grid`), its met and air hashed.

Prints best-of-`--repeat` wall times and the ratio hash / read.  Load: say `uptime`.
"""
from __future__ import annotations

import argparse
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import xarray as xr

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_data"


def best(fn, repeat):
    out = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return min(out)


def network(folder: Path, copies: int):
    """sites.toml and met.nc of `copies` renamed copies of the demo network."""
    from workbench.io import read_met, read_sites
    text = (DEMO / "sites.toml").read_text()
    ids = re.findall(r'^id = "([^"]+)"', text, flags=re.M)
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = read_met(DEMO / "met.csv.gz", cat)
    ds = ds.drop_vars("row_present").load()
    if copies == 1:
        (folder / "sites.toml").write_text(text)
        ds.to_netcdf(folder / "met.nc", engine="scipy")
        return folder / "sites.toml", folder / "met.nc"
    parts, mets = [], []
    for k in range(1, copies + 1):
        parts.append(re.sub(r'^id = "([^"]+)"', lambda m: f'id = "{m[1]}_{k}"', text, flags=re.M))
        mets.append(ds.assign_coords(site=[f"{s}_{k}" for s in ds["site"].values.astype(str)]))
    (folder / "sites.toml").write_text("\n".join(parts))
    xr.concat(mets, "site").to_netcdf(folder / "met.nc", engine="scipy")
    assert len(ids) * copies == len(xr.open_dataset(folder / "met.nc")["site"])
    return folder / "sites.toml", folder / "met.nc"


def met_case(folder, copies, repeat):
    from workbench.io import read_met, read_sites
    from workbench.io.readbytes import file_sha256
    sites, nc = network(folder, copies)
    cat = read_sites(sites)
    t_read = best(lambda: read_met(nc, cat), repeat)
    t_hash = best(lambda: file_sha256(nc), repeat)
    size = nc.stat().st_size / 1e6
    print(f"NetCDF met x{copies}: {size:.0f} MB; read_met {t_read:.2f} s (both hashes "
          f"included); one hash {t_hash:.3f} s = {100 * t_hash / t_read:.1f} % of the read")


def grid_case(folder, repeat):
    from workbench.io.readbytes import file_sha256
    subprocess.run([sys.executable, str(DEMO / "make_grid.py"), "--out", str(folder / "g")],
                   check=True, capture_output=True)
    scen = next((folder / "g").glob("*.toml"))
    files = [p for p in (folder / "g").iterdir() if p.suffix == ".nc" and "land" not in p.name]

    def run():
        out = folder / f"run{time.monotonic_ns()}"
        subprocess.run([sys.executable, "-m", "workbench", "grid", str(scen), "--out",
                        str(out), "--quiet", "--in-process"], check=True)
    t_run = best(run, repeat)
    t_hash = best(lambda: [file_sha256(p) for p in files], repeat)
    size = sum(p.stat().st_size for p in files) / 1e6
    print(f"demo grid: met + air {size:.0f} MB; workbench grid {t_run:.2f} s; their hash "
          f"{t_hash:.3f} s = {100 * t_hash / t_run:.2f} % of the run")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--copies", type=int, default=8)
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        for copies in (1, a.copies):
            (tmp / f"n{copies}").mkdir()
            met_case(tmp / f"n{copies}", copies, a.repeat)
        grid_case(tmp, a.repeat)


if __name__ == "__main__":
    main()
