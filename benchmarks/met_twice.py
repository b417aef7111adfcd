"""Reading the demo met pasted after itself (its data lines twice), before and after
the chunked reader dropped exact repeats itself.

    python benchmarks/met_twice.py                               # this checkout
    python benchmarks/met_twice.py --roots <old checkout> .      # an older one beside

The demo's ``met.csv.gz`` (invented network) is written into a temporary folder with
its data lines a second time after the last (``--copies 2``), gzipped.  Each read is
:func:`workbench.io.met.read_met` in a fresh Python process with the package of one
checkout (``--roots``, each put first on ``PYTHONPATH``; ``met_read_child.py``),
which reports its wall time and CPU time (the read alone), its peak resident memory
(``VmHWM``) and the peak of the allocations traced by ``tracemalloc`` (numpy's and
pandas' included; tracing slows the read, so it is a second read of its own), and
whether the chunked reader kept the file.
The reads alternate between the checkouts, ``--repeat`` times each.  Nothing is
asserted; numbers go into docs/performance.md.
"""
from __future__ import annotations

import argparse
import gzip
import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))
from met_read_child import read_once  # noqa: E402  (one read in a child process)

def write_twice(folder, copies=2):
    """The demo met with its data lines `copies` times, gzipped; its path."""
    src = ROOT / "demo_data" / "met.csv.gz"
    with gzip.open(src, "rt", encoding="utf-8") as f:
        lines = f.read().splitlines(True)
    head = next(i for i, ln in enumerate(lines) if not ln.startswith("#")) + 1
    out = Path(folder) / "met_twice.csv.gz"
    with gzip.open(out, "wt", encoding="utf-8", compresslevel=1) as g:
        g.writelines(lines)
        for _ in range(copies - 1):
            g.writelines(lines[head:])
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--roots", nargs="+", default=[str(ROOT)],
                    help="checkouts whose package reads the file (default: this one)")
    ap.add_argument("--repeat", type=int, default=3, help="reads per checkout")
    ap.add_argument("--copies", type=int, default=2, help="copies of the data lines")
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        met = write_twice(tmp, args.copies)
        sites = ROOT / "demo_data" / "sites.toml"
        print(f"load {os.getloadavg()[0]:.2f}, {os.cpu_count()} CPUs")
        args.roots = [str(Path(r).resolve()) for r in args.roots]
        got = {r: [] for r in args.roots}
        for _ in range(args.repeat):
            for r in args.roots:
                got[r].append(read_once(r, met, sites, spy=True))
        for r in args.roots:
            traced = read_once(r, met, sites, traced=True, spy=True)
            best = min(got[r], key=lambda x: x["cpu"])
            print(f"{r}: chunked reader {'kept' if best['fast'] else 'handed over'}; "
                  f"wall {min(x['wall'] for x in got[r]):.2f} s, cpu {best['cpu']:.2f} s, "
                  f"peak RSS {min(x['peak_mb'] for x in got[r]):.0f} MB, traced peak "
                  f"{traced['traced_mb']:.0f} MB, {best['rows']} ledger rows")


if __name__ == "__main__":
    main()
