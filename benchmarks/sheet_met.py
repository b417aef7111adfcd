"""Reading the hourly met of a network written as a spreadsheet export (every cell quoted,
CRLF line ends), against the same file written plainly.

    python benchmarks/sheet_met.py                         # 100 site-years, this checkout
    python benchmarks/sheet_met.py --roots /work/main .    # an older checkout beside

The met CSV of :func:`network.make_network` (N/2 invented sites, 2 years each) is
written twice into a temporary folder, gzipped: plainly, and as a sheet saved as CSV
with every cell (header included) in quotes and CRLF line ends (and with ``--padded``
a third time, with a blank on each side of every comma; with ``--notes`` plainly with a
quoted column of text holding a comma; with ``--numbered`` plainly with station numbers
``0001``, ``0002``... as site ids, in a catalogue of its own).  Each read is
:func:`workbench.io.met.read_met` in a fresh Python process with the package of one
checkout (``--roots``, each put first on ``PYTHONPATH``; ``met_read_child.py``),
which reports its wall time (the read alone), its CPU time (user + system of all its
threads, the read alone) and its peak resident memory (``VmHWM``).  The reads alternate
between the checkouts, ``--repeat`` times each.  Nothing is asserted; on a shared machine compare the CPU
times and the peaks, and print the load.
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

def write_inputs(folder, site_years):
    """(sites.toml, plain met.csv.gz, quoted CRLF met.csv.gz, padded met.csv.gz, noted
    met.csv.gz) of `site_years` (padded: a blank on each side of every comma, ``3.2 ,
    4.1``; noted: a last column ``notes`` of quoted text with a comma in every row)."""
    from network import make_network
    make_network(folder, site_years // 2, years=2)
    plain = Path(folder) / "met.csv.gz"
    sheet = Path(folder) / "sheet_met.csv.gz"
    padded = Path(folder) / "padded_met.csv.gz"
    noted = Path(folder) / "noted_met.csv.gz"
    with gzip.open(plain, "rt", encoding="utf-8") as src, \
            gzip.open(sheet, "wt", encoding="utf-8", compresslevel=1, newline="") as out, \
            gzip.open(padded, "wt", encoding="utf-8", compresslevel=1) as pad, \
            gzip.open(noted, "wt", encoding="utf-8", compresslevel=1) as note:
        header = True
        for ln in src:
            ln = ln.rstrip("\n")
            out.write((ln if ln.startswith("#") else '"' + ln.replace(",", '","') + '"')
                      + "\r\n")
            pad.write((ln if ln.startswith("#") else ln.replace(",", " , ")) + "\n")
            if not ln.startswith("#"):
                ln += ",notes" if header else ',"gauge read, late"'
                header = False
            note.write(ln + "\n")
    return Path(folder) / "sites.toml", plain, sheet, padded, noted


def write_numbered(folder, sites, plain):
    """(sites.toml, met.csv.gz) of the network with station numbers as site ids
    (``0001``...): zero-padded numbers, as monitoring networks number their stations."""
    import re
    text = Path(sites).read_text(encoding="utf-8")
    ids = re.findall(r'^id = "([^"]+)"', text, flags=re.M)
    new = {s: f"{k + 1:04d}" for k, s in enumerate(ids)}
    text = re.sub(r'^id = "([^"]+)"', lambda m: f'id = "{new[m.group(1)]}"', text, flags=re.M)
    out_sites = Path(folder) / "numbered_sites.toml"
    out_sites.write_text(text, encoding="utf-8")
    out_met = Path(folder) / "numbered_met.csv.gz"
    with gzip.open(plain, "rt", encoding="utf-8") as src, \
            gzip.open(out_met, "wt", encoding="utf-8", compresslevel=1) as out:
        for ln in src:
            site, sep, rest = ln.partition(",")
            out.write((new.get(site, site) + sep + rest) if sep else ln)
    return out_sites, out_met


def _load():
    return " ".join(f"{x:.2f}" for x in os.getloadavg())


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--site-years", type=int, default=100)
    ap.add_argument("--roots", nargs="+", default=[str(ROOT)],
                    help="checkouts whose package reads (each first on PYTHONPATH)")
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--plain", action="store_true", help="also read the plain file")
    ap.add_argument("--padded", action="store_true",
                    help="also read the file with blanks around the cells")
    ap.add_argument("--notes", action="store_true",
                    help="also read the file with a quoted notes column holding commas")
    ap.add_argument("--numbered", action="store_true",
                    help="also read the plain file with station numbers as site ids")
    args = ap.parse_args(argv)
    results = []
    with tempfile.TemporaryDirectory(prefix="workbench-sheet-") as tmp:
        sites, plain, sheet, padded, noted = write_inputs(tmp, args.site_years)
        files = [("quoted CRLF", sheet, sites)] + ([("plain", plain, sites)] if args.plain else []) \
            + ([("padded", padded, sites)] if args.padded else []) \
            + ([("notes", noted, sites)] if args.notes else [])
        if args.numbered:
            files.append(("numbered", *reversed(write_numbered(tmp, sites, plain))))
        for k in range(args.repeat):
            for root in args.roots:
                for what, met, cat in files:
                    before = _load()
                    got = read_once(Path(root).resolve(), met, cat)
                    got.update(root=root, file=what, load_before=before, load_after=_load())
                    results.append(got)
                    print(f"{root:>24} {what:>12}: wall {got['wall']:6.2f} s, CPU "
                          f"{got['cpu']:6.2f} s, peak {got['peak_mb']:7.0f} MB, "
                          f"{got['rows']} rows (load {before} -> {got['load_after']})",
                          flush=True)
    return results


if __name__ == "__main__":
    main()
