"""Are two run folders the same?  Every file compared byte for byte.

    python benchmarks/same_run.py RUN_A RUN_B

Used to hold a change that should change no number (e.g. a faster blocks phase) to
the run folder of the code before it: run ``workbench run`` with each code into its
own folder, then compare.  Only what differs between two runs of the *same* code is
masked first: the run's UTC time stamps (``2026-12-03T00:21:44Z``: provenance.json, the
NetCDF history; ``written 2026-12-03 00:21 UTC`` in report.html), plotly's random ids of
figures (UUID4; report.html numbers its own) and the checksums of the other files in
provenance.json (``output_sha256``: they change with those stamps, and each file is
compared here itself).  Prints each file that differs (or is missing on one side); exit
status 1 if any does.  ``workbench compare RUN_A RUN_B`` compares the options, inputs and
budget totals of two run folders instead (docs/run_folder.md).
"""
from __future__ import annotations

import re
import sys
from pathlib import Path

#: A run's time stamp (UTC, ISO 8601 with a Z).
STAMP = re.compile(rb"20\d\d-\d\d-\d\dT\d\d:\d\d:\d\d(?:\.\d+)?Z")
#: The minute report.html was written.
WRITTEN = re.compile(rb"written \d{4}-\d\d-\d\d \d\d:\d\d UTC")
#: The checksums of the other files of a run, in provenance.json.
OUTPUT_SUMS = re.compile(rb'"output_sha256": \{[^}]*\}')
#: A random UUID4 (plotly's div ids).
UUID4 = re.compile(rb"[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}")


def masked(data: bytes) -> bytes:
    """`data` with time stamps, UUID4s and output checksums replaced by fixed markers.

    >>> masked(b'"started": "2026-12-03T00:21:44Z", id="91afb1bb-3862-44e1-b645-8a57acb38aaa"')
    b'"started": "<utc>", id="<uuid>"'
    >>> masked(b'written 2026-12-03 00:21 UTC; "output_sha256": {"a.csv": "9f0e"}')
    b'<written>; <output_sha256>'
    """
    data = OUTPUT_SUMS.sub(b"<output_sha256>", WRITTEN.sub(b"<written>", data))
    return UUID4.sub(b"<uuid>", STAMP.sub(b"<utc>", data))


def differing(a, b) -> list:
    """Files of run folders `a` and `b` that differ (after :func:`masked`) or exist on
    one side only, as ``(relative path, reason)``; empty when the runs are the same."""
    a, b = Path(a), Path(b)
    fa = {p.relative_to(a) for p in a.rglob("*") if p.is_file()}
    fb = {p.relative_to(b) for p in b.rglob("*") if p.is_file()}
    out = [(str(p), f"only in {a if p in fa else b}") for p in sorted(fa ^ fb)]
    for p in sorted(fa & fb):
        x, y = (a / p).read_bytes(), (b / p).read_bytes()
        if x != y and masked(x) != masked(y):
            out.append((str(p), f"differs ({len(x)} and {len(y)} bytes)"))
    return out


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if len(argv) != 2:
        print(__doc__.strip().splitlines()[2].strip(), file=sys.stderr)
        return 2
    bad = differing(*argv)
    n = sum(1 for p in Path(argv[0]).rglob("*") if p.is_file())
    for name, why in bad:
        print(f"{name}: {why}")
    print(f"{n} files of {argv[0]} compared with {argv[1]}: {len(bad)} differ")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
