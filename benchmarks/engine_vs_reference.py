"""Throughput of the engine against its two references (benchmarks/reference_chain.py).

    python benchmarks/engine_vs_reference.py                 # 1 and 100 site-years
    python benchmarks/engine_vs_reference.py --sizes 1 --scalar-sites 1 --days 20

The engine is ``workbench.drydep.velocities`` with the gas SO2 and the particle pSO4
only (its fine mode, fraction 1: the mode of the references), ``components=False``.
The references compute the same SO2 and particle numbers from the engine's mast u*
and H, cloud cover, season and wetness (see reference_chain.py); the engine does
that work as well (sun, the mast's surface layer, season, wetness, the output
Dataset), so the comparison favours the references.

Inputs: one site-year of the invented demo (default ridge 2021: 3 receptors); N
site-years are N copies of it with invented site ids, temperature perturbed by
N(0, 0.5 K) and wind speed by a factor 1 + N(0, 0.05) (seeded), so that the copies
differ.  The engine and the numba kernel are timed ``--repeat`` times each (default
3), wall clock and CPU time of the process, and the best run counts (the machine is shared: the best run is the
one least disturbed); the engine's first call of each size is printed as well (it
pays for fresh memory: on a virtual machine whose transparent huge pages are on
``madvise``, numpy's huge-page advice can make that first touch cost seconds of
system time, see the environment variable NUMPY_MADVISE_HUGEPAGE).  The numba kernel
is compiled before it is timed; the scalar loop runs once on the first
``--scalar-sites`` sites of the set only (its rate does not depend on the set size).
Printed: site-receptor-hours per second (and site-hours per second) of each, the
ratios engine/scalar and engine/numba, and the load average of the machine before
and after each size.  Nothing is asserted.

The engine runs its cache-sized blocks on ``--threads`` threads (default: 1 and the
engine's own setting, ``workbench.get_threads()``, i.e. ``WORKBENCH_THREADS`` or the
usable cores up to 4); it is timed once per thread count (the first count's rates are
the ``engine_*`` keys, every count's under ``engine_by_threads``).  The references
run on one thread.  A threaded engine gains in wall time only (its CPU time adds up
over the threads), and only when the machine has a free core: the CPU-time rates
then tell the work per element, the wall rates the time a user waits.  A control probe (:func:`control_probe`, two
threads of numpy against one) before and after each size tells whether a second core
was free.  On several threads a call of many sites runs whole site blocks of the
engine on the threads (docs/engine.md "Threads").
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))


def control_probe(repeat=1500):
    """Speed-up of two threads over one on a fixed numpy task [-] (a free-core check).

    ``np.log(np.exp(x))`` on 32,768 floats (256 kB), `repeat` times twice: on one
    thread, then on two threads at once (numpy releases the interpreter lock in
    these loops).  About 2 when a second core is free, about 1 when it is not (the
    other tenants of a shared machine need not show in the load average).
    """
    import threading
    x = np.random.default_rng(0).random(32768) + 0.5

    def work():
        for _ in range(repeat):
            np.log(np.exp(x))
    t = time.perf_counter()
    work()
    work()
    one = time.perf_counter() - t
    t = time.perf_counter()
    other = threading.Thread(target=work)
    other.start()
    work()
    other.join()
    return one / (time.perf_counter() - t)


def site_years(met, surf, n, seed=11):
    """`n` perturbed copies of the one-site `met` and `surf`, site ids ``t000``... [SI]."""
    ids = [f"t{i:03d}" for i in range(n)]
    rng = np.random.default_rng(seed)
    m = met.isel(site=[0] * n).assign_coords(site=ids)
    s = surf.isel(site=[0] * n).assign_coords(site=ids)
    shape = (n, m.sizes["time"])
    dims = ("site", "time")
    m = m.transpose("site", "time", ...)
    m["temperature"] = (dims, m["temperature"].values + rng.normal(0.0, 0.5, shape))
    m["wind_speed"] = (dims, m["wind_speed"].values * np.maximum(
        1.0 + rng.normal(0.0, 0.05, shape), 0.5))
    return m, s


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--data", default=str(ROOT / "demo_data"),
                    help="directory with sites.toml and met.csv.gz")
    ap.add_argument("--site", default="ridge")
    ap.add_argument("--year", type=int, default=2021)
    ap.add_argument("--days", type=int, default=None, help="only the first DAYS of the year")
    ap.add_argument("--sizes", type=int, nargs="+", default=[1, 100], help="site-years")
    ap.add_argument("--scalar-sites", type=int, default=2)
    ap.add_argument("--repeat", type=int, default=3, help="runs of the engine and the kernel")
    ap.add_argument("--threads", type=int, nargs="+", default=None,
                    help="engine threads to time (default: 1 and workbench.get_threads())")
    ap.add_argument("--json", default=None)
    args = ap.parse_args(argv)

    from workbench.optional import MissingExtraError, require
    try:                              # one line naming the extra, before any reading
        require("numba")
    except MissingExtraError as exc:
        raise SystemExit(f"error: {exc}") from None

    import reference_chain as rc
    import workbench
    from workbench.drydep import DryOptions, velocities
    from workbench.io import read_met, read_sites

    warnings.simplefilter("ignore", RuntimeWarning)
    data = Path(args.data)
    cat = read_sites(data / "sites.toml")
    met, _ = read_met(data / "met.csv.gz", cat)
    end = (np.datetime64(f"{args.year}-01-01") + np.timedelta64(args.days, "D")
           if args.days else np.datetime64(f"{args.year + 1}-01-01"))
    met = met.sel(site=[args.site]).sel(time=slice(np.datetime64(f"{args.year}-01-01T01"), end))
    met = met[[v for v in met.data_vars if v in (
        "wind_speed", "temperature", "relative_humidity", "solar_radiation", "precipitation",
        "pressure", "cloud_cover", "friction_velocity", "sensible_heat_flux", "surface_wet",
        "snow_cover")]].load()
    surf = cat.surfaces().sel(site=[args.site])
    surf = surf.sel(receptor=surf["receptor"].values[surf["active"].values[0]])  # its own
    opt = DryOptions(gases=("SO2",), particles=("pSO4",), components=False,
                     ustar_transfer="blending_height")  # the references' transfer
    kernel = rc.numba_kernel()
    t = time.perf_counter()
    small = rc.prepare(met.isel(time=slice(0, 48)), surf, opt,
                       velocities(met.isel(time=slice(0, 48)), surf, opt))
    rc.run_numba(small)
    compile_s = time.perf_counter() - t
    thread_counts = list(dict.fromkeys(args.threads or [1, workbench.get_threads()]))
    rows = []
    for n in args.sizes:
        m, s = site_years(met, surf, n)
        n_r = s.sizes["receptor"]
        cells = n * n_r * m.sizes["time"]
        load_before = os.getloadavg()
        probe_before = control_probe()
        by_threads = {}
        for n_threads in thread_counts:
            workbench.set_threads(n_threads)
            t, c = time.perf_counter(), time.process_time()
            eng = velocities(m, s, opt)
            t_first = t_eng = time.perf_counter() - t
            c_eng = time.process_time() - c
            for _ in range(args.repeat - 1):
                del eng
                t, c = time.perf_counter(), time.process_time()
                eng = velocities(m, s, opt)
                t_eng = min(t_eng, time.perf_counter() - t)
                c_eng = min(c_eng, time.process_time() - c)
            by_threads[n_threads] = (t_eng, c_eng, t_first)
        workbench.set_threads(None)
        t_eng, c_eng, t_first = by_threads[thread_counts[0]]
        prep = rc.prepare(m, s, opt, eng)
        del eng
        nw = rc.node_work(prep[4])
        t_nb = c_nb = np.inf
        for _ in range(args.repeat):
            out = np.empty(prep[0][10].shape + (len(rc.OUTPUTS),))
            t, c = time.perf_counter(), time.process_time()
            kernel(*prep, nw, out)
            t_nb = min(t_nb, time.perf_counter() - t)
            c_nb = min(c_nb, time.process_time() - c)
            del out
        k = min(args.scalar_sites, n)
        sub = rc.prepare(m.isel(site=slice(0, k)), s.isel(site=slice(0, k)), opt,
                         velocities(m.isel(site=slice(0, k)), s.isel(site=slice(0, k)), opt))
        t, c = time.perf_counter(), time.process_time()
        rc.run_scalar(sub)
        t_sc = time.perf_counter() - t
        c_sc = time.process_time() - c
        cells_sc = k * n_r * m.sizes["time"]
        row = {"site_years": n, "receptors": n_r, "hours": m.sizes["time"],
               "engine_cells_per_s": cells / t_eng, "numba_cells_per_s": cells / t_nb,
               "engine_first_call_cells_per_s": cells / t_first, "repeat": args.repeat,
               "load_average_before": load_before, "load_average_after": os.getloadavg(),
               "probe_before": probe_before, "probe_after": control_probe(),
               "scalar_cells_per_s": cells_sc / t_sc, "scalar_sites_timed": k,
               "engine_s": t_eng, "numba_s": t_nb, "scalar_s": t_sc,
               "engine_cpu_s": c_eng, "numba_cpu_s": c_nb, "scalar_cpu_s": c_sc}
        row["engine_by_threads"] = {
            nt: {"threads": nt, "cells_per_s": cells / w, "cpu_cells_per_s": cells / cp,
                "first_call_cells_per_s": cells / f, "over_scalar": (cells / w) / row[
                    "scalar_cells_per_s"], "over_numba": t_nb / w,
                "cpu_over_scalar": (c_sc / cells_sc) / (cp / cells), "cpu_over_numba": c_nb / cp}
            for nt, (w, cp, f) in by_threads.items()}
        row["engine_threads"] = thread_counts[0]
        row["usable_cores"] = workbench.threads.usable_cores()
        row["engine_over_scalar"] = row["engine_cells_per_s"] / row["scalar_cells_per_s"]
        row["engine_over_numba"] = row["engine_cells_per_s"] / row["numba_cells_per_s"]
        # the same ratios on CPU time (steadier than wall time on a shared machine)
        row["cpu_engine_over_scalar"] = (c_sc / cells_sc) / (c_eng / cells)
        row["cpu_engine_over_numba"] = c_nb / c_eng
        rows.append(row)
        print(f"{n} site-year(s) x {n_r} receptors x {m.sizes['time']} h "
              f"({cells} site-receptor-hours):")
        for who in ("engine", "numba", "scalar"):
            r = row[f"{who}_cells_per_s"]
            print(f"  {who:<7} {r / 1e6:9.4f} M site-receptor-hours/s "
                  f"({r / n_r / 1e6:8.4f} M site-hours/s)"
                  + (f"  [timed on {k} site(s)]" if who == "scalar" else ""))
        print(f"  (engine, first call of this size: {cells / t_first / 1e6:.4f} M/s)")
        print(f"  CPU time: engine {cells / c_eng / 1e6:.4f}, numba {cells / c_nb / 1e6:.4f}, "
              f"scalar {cells_sc / c_sc / 1e6:.4f} M/s; engine/scalar "
              f"{row['cpu_engine_over_scalar']:.1f} x, engine/numba "
              f"{row['cpu_engine_over_numba']:.3f} x")
        for nt, e in row["engine_by_threads"].items():
            print(f"  engine on {nt} thread(s): wall {e['cells_per_s'] / 1e6:.4f} M/s "
                  f"(x{e['over_scalar']:.1f} scalar, x{e['over_numba']:.3f} numba), CPU time "
                  f"{e['cpu_cells_per_s'] / 1e6:.4f} M/s (x{e['cpu_over_scalar']:.1f}, "
                  f"x{e['cpu_over_numba']:.3f}); first call {e['first_call_cells_per_s'] / 1e6:.4f}")
        print(f"  load average before {' '.join(f'{x:.2f}' for x in load_before)}, after "
              f"{' '.join(f'{x:.2f}' for x in row['load_average_after'])}; control probe "
              f"(2 threads / 1, about 2 with a free core) before {probe_before:.2f} x, "
              f"after {row['probe_after']:.2f} x")
        print(f"  engine/scalar {row['engine_over_scalar']:.1f} x   "
              f"engine/numba {row['engine_over_numba']:.3f} x   (numba/engine "
              f"{1 / row['engine_over_numba']:.2f} x)")
    print(f"numba compile (once, not in the rates): {compile_s:.1f} s")
    result = {"rows": rows, "numba_compile_s": compile_s,
              "numpy_madvise_hugepage": os.environ.get("NUMPY_MADVISE_HUGEPAGE", "default")}
    if args.json:
        Path(args.json).write_text(json.dumps(result, indent=2), encoding="utf-8")
    return result


if __name__ == "__main__":
    main()
