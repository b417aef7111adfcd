"""A small copy of the demo scenario: some sites and years of the invented demo network.

The notebooks and apps are tested on this copy so that a test reads one site-year of
hourly data instead of the whole record.  Rows are kept as written (same header,
comment lines, units); only rows of other sites and far-off times are left out.
"""
from __future__ import annotations

import gzip
import shutil
from pathlib import Path

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
#: Margin kept around the years so that samples straddling New Year stay whole [days].
MARGIN_DAYS = 10


def _keep_rows(lines, sites, lo, hi, time_cols):
    """Header and comment lines, and rows of `sites` whose time columns touch [lo, hi)."""
    out, header = [], None
    for ln in lines:
        if ln.startswith("#") or not ln.strip():
            out.append(ln)
            continue
        if header is None:
            header = ln.rstrip("\n").split(",")
            idx = [header.index(c) for c in time_cols]
            out.append(ln)
            continue
        cells = ln.split(",", max(idx) + 1)
        if cells[0] not in sites:
            continue
        times = [cells[i][:16] for i in idx]
        if times[0] < hi and times[-1] >= lo:
            out.append(ln)
    return out


def write_demo_subset(out_dir, sites=("ridge",), first_year=2021, last_year=2021) -> Path:
    """Write a scenario with only `sites` and the years `first_year`..`last_year`.

    Returns
    -------
    Path
        The new scenario file (its inputs sit beside it).
    """
    import datetime as dt
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    lo = (dt.datetime(first_year, 1, 1) - dt.timedelta(days=MARGIN_DAYS)).strftime("%Y-%m-%dT%H:%M")
    hi = (dt.datetime(last_year + 1, 1, 1) + dt.timedelta(days=MARGIN_DAYS)).strftime("%Y-%m-%dT%H:%M")
    sites = set(sites)
    shutil.copy(DEMO / "sites.toml", out / "sites.toml")
    for name, cols in (("precipitation.csv", ("start", "end")), ("air.csv", ("start", "end"))):
        lines = (DEMO / name).read_text(encoding="utf-8").splitlines(keepends=True)
        (out / name).write_text("".join(_keep_rows(lines, sites, lo, hi, cols)), encoding="utf-8")
    with gzip.open(DEMO / "met.csv.gz", "rt", encoding="utf-8") as f:
        met = _keep_rows(f, sites, lo, hi, ("time",))
    with gzip.open(out / "met.csv.gz", "wt", encoding="utf-8") as f:
        f.write("".join(met))
    text = (DEMO / "scenario.toml").read_text(encoding="utf-8")
    text = text.replace('resolution = "year"', f'resolution = "year"\nstart = "{first_year}-01-01"\n'
                        f'end = "{last_year + 1}-01-01"')
    (out / "scenario.toml").write_text(text, encoding="utf-8")
    return out / "scenario.toml"


def study_and_args(scenario_file):
    """The prepared :class:`workbench.pipeline.Study` of `scenario_file` and the
    positional arguments of its ``Study.run`` (options, fixed Vd, resolution, period)."""
    from workbench.preflight import prepare
    from workbench.scenario import load_scenario
    sc = load_scenario(scenario_file)
    o, p = sc.options, sc.data["period"]
    args = (o["wet"], o["dry"], o["budget"], sc.fixed_velocity, p["resolution"], p["start"],
            p["end"])
    return prepare(sc).study, args


def write_gap_site(out_dir, site="ridge", year=2021, drop=("NH3 [ug/m3]", "method_NH3"),
                   collector="bulk") -> Path:
    """One demo site and year whose air file lacks the columns `drop` (a species not
    measured at all) and whose precipitation comes from a `collector` ("bulk": the
    budget's ``bulk_correction`` of the demo scenario applies).  Returns the scenario."""
    import re
    sc = write_demo_subset(out_dir, (site,), year, year)
    out = sc.parent
    text = (out / "sites.toml").read_text(encoding="utf-8")
    blocks = text.split("[[site]]")
    keep = [b for b in blocks[1:] if re.search(rf'^id = "{site}"', b, re.M)]
    body = re.sub(r'^collector = ".*"$', f'collector = "{collector}"', keep[0], flags=re.M)
    (out / "sites.toml").write_text(blocks[0] + "[[site]]" + body, encoding="utf-8")
    lines = (out / "air.csv").read_text(encoding="utf-8").splitlines(keepends=True)
    rows, idx = [], None
    for ln in lines:
        if ln.startswith("#") or not ln.strip():
            rows.append(ln)
            continue
        cells = ln.rstrip("\n").split(",")
        if idx is None:
            idx = {cells.index(c) for c in drop if c in cells}
        rows.append(",".join(c for j, c in enumerate(cells) if j not in idx) + "\n")
    (out / "air.csv").write_text("".join(rows), encoding="utf-8")
    return sc
