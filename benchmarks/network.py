"""Wall time and peak memory of ``workbench run`` on generated networks of N site-years.

    python benchmarks/network.py                      # 10 and 100 site-years
    python benchmarks/network.py --sizes 10 100 1000 --max 1000
    python benchmarks/network.py --profile 100        # cProfile of one 100-site-year run
    python benchmarks/network.py --block-sites 5 --workers 2   # blocks of sites on dask

Inputs are generated into a temporary folder: N/Y invented sites (ids ``n0000``...)
with Y years each (``--years``, default 2; a size N must be a multiple of Y).  Site i is a
copy of demo site i mod 4 (its catalogue entry with the new id and name, its hourly
met, weekly precipitation and weekly air rows of the years 2016 onwards, sampler ids
renamed ``<id>-P1``...), so every file has the layout of the demo and N/Y sites.
The demo's deliberate problems are copied with the rows (the run handles them).

Each size runs ``workbench run SCENARIO --out DIR --quiet`` end to end (reading,
screening, velocities, budget, writing the run folder) in a fresh Python process,
which reports its wall time (from the start of the command, imports excluded), its CPU
time (user + system, imports included: on a shared machine the steadier number) and its
peak resident memory, with the load average of the machine before and after the run.
The peak is the run's own high-water mark (``VmHWM``, per phase, see :class:`_Phases`),
not ``ru_maxrss``: on Linux a child started by fork + exec inherits in ``ru_maxrss`` the
parent's peak at the fork, here the generated inputs (``ru_maxrss`` is printed beside it).
The phase in which the peak was reached is printed ("peak reached in").  One run per size: timings of a
loaded machine are only indicative.  Sizes above ``--max`` (default 1000) are reported
"not run"; a size whose estimated memory (:data:`BASE_MB` + :data:`MB_PER_SITE_YEAR`
per site-year) exceeds 80 % of the available memory is also not run.  A network of more
than 20 sites runs in blocks of sites (``workbench run`` does so without flags).
Nothing is asserted.
"""
from __future__ import annotations

import argparse
import cProfile
import gzip
import io
import json
import os
import pstats
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_data"
#: Estimated peak memory: a base and a share per site-year [MB] (runs in blocks of sites
#: of 2026-12-02: about 0.5 GB at 10 site-years, 1.3 GB at 1,000 by ``ru_maxrss``, the
#: run's own peak 0.76 GB; the whole run of 2026-12-01 took 56 MB per site-year).
BASE_MB = 700.0
MB_PER_SITE_YEAR = 2.0
FIRST_YEAR = 2016


def _toml_load(path):
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    with open(path, "rb") as f:
        return tomllib.load(f)


def _rows_by_site(lines, years, time_col):
    """Header/comment lines, and data lines by site within the first `years` years."""
    head, by_site, header = [], {}, None
    hi = f"{FIRST_YEAR + years}-01-01"
    for ln in lines:
        if header is None and (ln.startswith("#") or not ln.strip()):
            head.append(ln)
            continue
        if header is None:
            header = ln.rstrip("\n").split(",")
            idx = header.index(time_col)
            head.append(ln)
            continue
        cells = ln.split(",", idx + 1)
        if cells[idx][:10] < hi:
            by_site.setdefault(cells[0], []).append(ln)
    return head, by_site, header


def make_network(out_dir, n_sites, years=2) -> Path:
    """Write sites.toml, met.csv.gz, precipitation.csv, air.csv and scenario.toml.

    Parameters
    ----------
    out_dir : path
    n_sites : int
        Number of invented sites.
    years : int
        Years of record per site (from 2016), at most the demo's 8.

    Returns
    -------
    Path
        The scenario file.
    """
    import tomli_w
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    cat = _toml_load(DEMO / "sites.toml")
    templates = cat["site"]
    ids = [f"n{i:04d}" for i in range(n_sites)]
    sites = []
    for i, sid in enumerate(ids):
        s = dict(templates[i % len(templates)])
        s["id"], s["name"] = sid, f"Generated site {i}"
        sites.append(s)
    (out / "sites.toml").write_bytes(tomli_w.dumps({"site": sites}).encode("utf-8"))

    def copy(src_lines, time_col, sampler):
        head, by_site, header = _rows_by_site(src_lines, years, time_col)
        j = header.index("sampler_id") if sampler else None
        buf = io.StringIO()
        buf.writelines(head)
        for i, sid in enumerate(ids):
            for ln in by_site[templates[i % len(templates)]["id"]]:
                cells = ln.split(",")
                cells[0] = sid
                if j is not None and cells[j]:
                    cells[j] = f"{sid}-{cells[j].split('-', 1)[-1]}"
                buf.write(",".join(cells))
        return buf.getvalue()

    with gzip.open(DEMO / "met.csv.gz", "rt", encoding="utf-8") as f:
        met = copy(f, "time", False)
    with gzip.open(out / "met.csv.gz", "wt", encoding="utf-8", compresslevel=1) as f:
        f.write(met)
    for name in ("precipitation.csv", "air.csv"):
        with open(DEMO / name, encoding="utf-8") as f:
            (out / name).write_text(copy(f, "start", True), encoding="utf-8")
    text = (DEMO / "scenario.toml").read_text(encoding="utf-8")
    text = text.replace('resolution = "year"', 'resolution = "year"\n'
                        f'start = "{FIRST_YEAR}-01-01"\nend = "{FIRST_YEAR + years}-01-01"')
    (out / "scenario.toml").write_text(text, encoding="utf-8")
    return out / "scenario.toml"


def _available_mb():
    try:
        for ln in Path("/proc/meminfo").read_text().splitlines():
            if ln.startswith("MemAvailable:"):
                return int(ln.split()[1]) / 1024.0
    except OSError:
        pass
    return float("inf")


def child(scenario, out_dir, extra=()):
    """Run ``workbench run`` in this process; print wall time [s] and peak RSS [MB] as JSON.

    `extra` are further ``workbench run`` arguments (``--block-sites``, ``--workers``).
    The worker processes of a local cluster are children of this process: their CPU
    time and the largest peak RSS among them are reported as ``children_*``.
    """
    import resource
    sys.path.insert(0, str(ROOT))
    from workbench.cli import main as cli
    phases = _Phases()
    t = time.perf_counter()
    try:
        code = cli(["run", str(scenario), "--out", str(out_dir), "--quiet", *extra])
    finally:
        phases.stop()
    wall = time.perf_counter() - t
    use = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    # ru_maxrss of a child started by fork + exec keeps the parent's peak at the fork (Linux
    # carries the old address space's high-water mark over exec): with the inputs of
    # 1,000 site-years generated in the parent, that was the parent's 1.18 GB, not the
    # run's.  The run's own peak is the largest per-phase high-water mark (VmHWM).
    own = phases.peak_mb if phases.hwm else None
    print(json.dumps({"exit_code": code, "wall_s": wall, "cpu_s": use.ru_utime + use.ru_stime,
                      "peak_rss_mb": own if own is not None else use.ru_maxrss / 1024.0,
                      "ru_maxrss_mb": use.ru_maxrss / 1024.0,
                      "children_cpu_s": kids.ru_utime + kids.ru_stime,
                      "children_peak_rss_mb": kids.ru_maxrss / 1024.0, "run_args": list(extra),
                      "phases": phases.table(), "peak_phase": phases.peak_phase,
                      "peak_phase_mb": round(phases.peak_mb, 1)}))


class _Phases:
    """Wall time and largest resident memory of each phase of ``workbench run`` in this
    process: reading (``prepare``), the computation (``run_network`` or the whole run),
    and writing each file of the run folder (the names ``write_files`` reports).  A
    thread reads the resident size from ``/proc/self/statm`` every 20 ms (Linux; the
    table is empty elsewhere); the phases are marked by wrapping those functions."""

    def __init__(self):
        import threading
        import workbench.blocks as blocks
        import workbench.comparison as comparison
        import workbench.preflight as preflight
        import workbench.writers as writers
        self.name, self.rows, self.t0 = "start", {}, time.perf_counter()
        self.page = os.sysconf("SC_PAGE_SIZE") if hasattr(os, "sysconf") else 4096
        first = self._hwm_mb()             # imports and start-up, before any reset
        self.hwm = first is not None and self._reset_hwm()
        self.peak_phase, self.peak_mb = "start-up (imports)", first or 0.0
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._sample, daemon=True)
        self._thread.start()

        def wrap(mod, attr, label, progress_at=None, prefix="write"):
            fn = getattr(mod, attr)

            def marked(*a, **k):
                self.mark(label)
                if progress_at is not None:        # (keyword, position) of `progress`
                    kw, pos = progress_at
                    a = list(a)
                    inner = a[pos] if len(a) > pos else k.get(kw)
                    say = (lambda text: (self.mark(f"{prefix} {text}"), inner(text))) if inner \
                        else (lambda text: self.mark(f"{prefix} {text}"))
                    if len(a) > pos:
                        a[pos] = say
                    else:
                        k[kw] = say
                try:
                    return fn(*a, **k)
                finally:
                    self.mark("other")
            setattr(mod, attr, marked)
        wrap(preflight, "prepare", "read inputs", ("progress", 1), "read inputs:")
        wrap(blocks, "run_network", "compute (blocks)")
        wrap(comparison, "run", "compute (whole run)")
        wrap(writers, "write_files", "write run folder", ("progress", 4))

    def _rss_mb(self):
        """The high-water mark of resident memory since the last phase change [MB]
        (``VmHWM``, reset at each change by writing 5 to ``/proc/self/clear_refs``, so a
        spike shorter than the sampling interval, or one while a thread holds the GIL,
        still counts in its phase); the resident size where that cannot be reset."""
        if self.hwm:
            hwm = self._hwm_mb()
            if hwm is not None:
                return hwm
        try:
            with open("/proc/self/statm") as f:
                return int(f.read().split()[1]) * self.page / 2**20
        except OSError:
            return None

    @staticmethod
    def _hwm_mb():
        """``VmHWM`` of this process [MB], None where there is none."""
        try:
            with open("/proc/self/status") as f:
                for ln in f:
                    if ln.startswith("VmHWM:"):
                        return int(ln.split()[1]) / 1024.0
        except OSError:
            pass
        return None

    @staticmethod
    def _reset_hwm():
        """Reset the high-water mark of resident memory (Linux >= 4.0); False if not."""
        try:
            with open("/proc/self/clear_refs", "w") as f:
                f.write("5")
            return True
        except OSError:
            return False

    def _sample(self):
        while not self._stop.is_set():
            self.mark(None)
            self._stop.wait(0.02)

    def mark(self, name):
        with self._lock:
            rss, now = self._rss_mb(), time.perf_counter()
            row = self.rows.setdefault(self.name, {"wall_s": 0.0, "peak_mb": 0.0, "_t": now})
            if rss is not None:
                row["peak_mb"] = max(row["peak_mb"], rss)
                if rss > self.peak_mb:
                    self.peak_mb, self.peak_phase = rss, self.name
            if name is not None and name != self.name:
                row["wall_s"] += now - row.pop("_t")
                self.name = name
                self.rows.setdefault(name, {"wall_s": 0.0, "peak_mb": 0.0})["_t"] = now
                if self.hwm:
                    self._reset_hwm()
                rss = self._rss_mb()
                if rss is not None:
                    self.rows[name]["peak_mb"] = max(self.rows[name]["peak_mb"], rss)

    def stop(self):
        self.mark("end")
        self._stop.set()
        self._thread.join()

    def table(self):
        return {k: {"wall_s": round(v["wall_s"], 2), "peak_mb": round(v["peak_mb"], 1)}
                for k, v in self.rows.items() if k not in ("start", "end")}


def measure(size, years, work, extra=()):
    """Generate a network of `size` site-years and run it in a subprocess; the numbers."""
    n_sites = size // years
    t = time.perf_counter()
    scen = make_network(work / f"net{size}", n_sites, years)
    gen_s = time.perf_counter() - t
    load_before = _load()
    proc = subprocess.run([sys.executable, __file__, "--child", str(scen),
                           str(work / f"out{size}"), "--child-args", json.dumps(list(extra))],
                          capture_output=True, text=True, cwd=str(ROOT))
    if proc.returncode != 0:
        return {"site_years": size, "status": f"failed: {proc.stderr.strip()[-400:]}"}
    res = json.loads(proc.stdout.strip().splitlines()[-1])
    met_mb = (work / f"net{size}" / "met.csv.gz").stat().st_size / 1e6
    return {"site_years": size, "sites": n_sites, "years": years, "status": "run",
            "generate_s": gen_s, "met_csv_gz_mb": met_mb, "load_before": load_before,
            "load_after": _load(), **res}


def _load():
    """The 1-minute load average of the machine (None where there is none)."""
    try:
        return round(os.getloadavg()[0], 2)
    except OSError:
        return None


def profile(size, years, work, top=10):
    """cProfile of one in-process run of `size` site-years: the top lines, as text."""
    scen = make_network(work / f"prof{size}", size // years, years)
    sys.path.insert(0, str(ROOT))
    import workbench.drydep as drydep
    from workbench.cli import main as cli
    seen = []
    engine = drydep.velocities

    def recorded(met, surfaces, *a, **k):  # the size of each velocities result
        ds = engine(met, surfaces, *a, **k)
        rec = k.get("receptors")
        active = surfaces.sel(site=met["site"].values, receptor=list(rec) if rec is not None
                              else surfaces["receptor"].values)["active"].values
        seen.append((dict(ds.sizes), ds.nbytes, float(active.mean()), len(ds.data_vars)))
        return ds

    drydep.velocities = recorded
    prof = cProfile.Profile()
    t = time.perf_counter()
    prof.runcall(cli, ["run", str(scen), "--out", str(work / f"prof_out{size}"), "--quiet"])
    wall = time.perf_counter() - t
    text = []
    for key in ("cumulative", "tottime"):
        s = io.StringIO()
        pstats.Stats(prof, stream=s).strip_dirs().sort_stats(key).print_stats(top)
        text.append(f"--- sorted by {key} ---\n" + s.getvalue().split("\n\n", 1)[-1])
    drydep.velocities = engine
    for sizes, nbytes, active, n_vars in seen[:3]:
        text.append(f"velocities result: {sizes}, {n_vars} variables, {nbytes / 1e9:.2f} GB; "
                    f"share of (site, receptor) pairs the sites ask for: {active:.2f}")
    if len(seen) > 3:
        text.append(f"... {len(seen)} velocities results (blocks of sites): largest "
                    f"{max(x[1] for x in seen) / 1e9:.2f} GB, share of wanted pairs "
                    f"{min(x[2] for x in seen):.2f}-{max(x[2] for x in seen):.2f}")
    return wall, "\n".join(text)


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[10, 100], help="site-years")
    ap.add_argument("--years", type=int, default=2, help="years per site")
    ap.add_argument("--max", type=int, default=1000, help="largest size run (guard)")
    ap.add_argument("--profile", type=int, default=None, help="profile one run of this size")
    ap.add_argument("--top", type=int, default=10)
    ap.add_argument("--json", default=None)
    ap.add_argument("--block-sites", type=int, default=None,
                    help="passed to workbench run (sites per block)")
    ap.add_argument("--workers", type=int, default=None,
                    help="passed to workbench run (a local dask cluster of N processes)")
    ap.add_argument("--child", nargs=2, default=None, help=argparse.SUPPRESS)
    ap.add_argument("--child-args", default="[]", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.child:
        child(*args.child, json.loads(args.child_args))
        return None
    extra = []
    if args.block_sites:
        extra += ["--block-sites", str(args.block_sites)]
    if args.workers:
        extra += ["--workers", str(args.workers)]
    work = Path(tempfile.mkdtemp(prefix="wb-network-"))
    rows = []
    try:
        if args.profile:
            wall, text = profile(args.profile, args.years, work, args.top)
            print(f"profile of {args.profile} site-years (wall {wall:.1f} s under cProfile):")
            print(text)
            return {"profile_wall_s": wall, "profile": text}
        for size in args.sizes:
            if size % args.years:
                raise SystemExit(f"size {size} is not a multiple of --years {args.years}")
            need = BASE_MB + MB_PER_SITE_YEAR * size
            if size > args.max:
                row = {"site_years": size, "status": f"not run (above --max {args.max})"}
            elif need > 0.8 * _available_mb():
                row = {"site_years": size, "status": f"not run (needs about {need:.0f} MB, "
                       f"{_available_mb():.0f} MB available)"}
            else:
                row = measure(size, args.years, work, extra)
            rows.append(row)
            if row["status"] == "run":
                print(f"{size:5d} site-years ({row['sites']} sites x {row['years']} years): "
                      f"wall {row['wall_s']:7.1f} s, CPU {row['cpu_s']:7.1f} s, "
                      f"peak RSS {row['peak_rss_mb']:7.0f} MB "
                      f"(ru_maxrss {row.get('ru_maxrss_mb', row['peak_rss_mb']):.0f}), "
                      f"exit {row['exit_code']}  (inputs generated in {row['generate_s']:.1f} s; "
                      f"load average {row['load_before']} -> {row['load_after']})"
                      + (f"; {' '.join(extra)}: workers' CPU {row['children_cpu_s']:.1f} s, "
                         f"largest worker peak RSS {row['children_peak_rss_mb']:.0f} MB"
                         if extra else ""))
                for name, ph in row.get("phases", {}).items():
                    print(f"      {name:<36} wall {ph['wall_s']:7.2f} s, peak RSS "
                          f"{ph['peak_mb']:7.0f} MB")
                if row.get("peak_phase"):
                    print(f"      peak reached in: {row['peak_phase']} "
                          f"({row['peak_phase_mb']:.0f} MB)")
            else:
                print(f"{size:5d} site-years: {row['status']}")
    finally:
        shutil.rmtree(work, ignore_errors=True)
    if args.json:
        Path(args.json).write_text(json.dumps(rows, indent=2), encoding="utf-8")
    return rows


if __name__ == "__main__":
    main()
