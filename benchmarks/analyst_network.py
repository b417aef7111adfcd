"""An invented network as an analyst has one: about 30 sites over 10 years, with gaps.

    python benchmarks/analyst_network.py --out DIR               # 30 sites x 10 years
    python benchmarks/analyst_network.py --out DIR --sites 8 --years 3

Writes ``sites.toml``, ``precipitation.csv``, ``air.csv``, ``met.csv.gz`` and
``scenario.toml`` into DIR (and, for the demo's 8 years or more, the demo generator's
own files of a year more into ``DIR/_base``).  Every name is invented.

Site ``i`` copies the rows of demo site ``i mod 4`` (``demo_data/make_demo.py``, run
for ``--years`` + 1 years when the bundled 8 are too few), under an invented id and name,
with seeded differences so that the sites do not tie:

- concentrations in air scaled by a factor of the site (0.6-1.6);
- the precipitation depth (gauge, sample volume and the hourly met precipitation)
  scaled by a factor of the site (0.8-1.2); rain chemistry unchanged;
- coordinates, elevation and critical loads moved a little.

and the imperfections of a real network (:data:`IMPERFECTIONS` says which site has
which, printed by the command):

- ``late_start``: a site that opened three years after the others (no rows before);
- ``no_nh3``: a site whose filter pack has no NH3 stage (NH3 column empty);
- ``precip_gap``: a collector out of service for 14 weeks (rows absent);
- ``air_gap``: a filter pack out of service for 10 weeks (rows absent);
- ``met_gap``: a mast down for 5 weeks (hours absent);
- ``closed``: a site closed one year before the end of the record;
- ``no_data``: a site listed in sites.toml before its first record (no row anywhere).

The deliberate problems of the demo (``planted_problems.json``) come with the rows of
each copy, so a network run meets each one several times, as a real network would.
"""
from __future__ import annotations

import argparse
import gzip
import subprocess
import sys
from datetime import datetime, timedelta
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_data"
FIRST_YEAR = 2016
DEMO_YEARS = 8
SEED = 20261203

#: Invented name parts of the sites (no real place is meant).
_FIRST = ["Brack", "Cul", "Dorn", "Eld", "Fenn", "Garth", "Hob", "Ivel", "Kell", "Lorr",
          "Marn", "Nether", "Oss", "Pell", "Quarn", "Rusk", "Stav", "Thorn", "Umber",
          "Vend", "Wisk", "Yarl", "Zell", "Ast", "Bryn", "Corm", "Drey", "Esk", "Frith",
          "Gorm", "Hask", "Irl"]
_SECOND = ["wick", "stead", "holme", "by", "thwaite", "ford", "ness", "dale"]
_KIND = {"ridge": "plantation", "fell": "fell", "mere": "moss", "farm": "grange"}

#: Imperfection -> index of the site that has it (for the default 30 sites; smaller
#: networks keep those whose site exists).
IMPERFECTIONS = {"late_start": 5, "no_nh3": 9, "precip_gap": 13, "air_gap": 17,
                 "met_gap": 22, "closed": 26, "no_data": 29}


def _toml_load(path):
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    with open(path, "rb") as f:
        return tomllib.load(f)


def base_folder(out: Path, years: int) -> Path:
    """The demo files with more than `years` years: the bundled ones, or made by
    ``demo_data/make_demo.py --years`` (one year more) into ``out/_base``.  The demo's
    years are local (UTC+1): the last hour of a UTC year is in the local year after."""
    if years < DEMO_YEARS:
        return DEMO
    base = out / "_base"
    if not (base / "met.csv.gz").exists():
        subprocess.run([sys.executable, str(DEMO / "make_demo.py"), "--out", str(base),
                        "--years", str(years + 1)], check=True, cwd=str(ROOT),
                       stdout=subprocess.DEVNULL)
    return base


def _scale(cell: str, factor: float, decimals: int) -> str:
    """A numeric cell times `factor`, written with `decimals`; other cells unchanged."""
    try:
        v = float(cell)
    except ValueError:
        return cell
    return f"{v * factor:.{decimals}f}"


class _Plan:
    """Per generated site: template, id, factors and the imperfection windows."""

    def __init__(self, n_sites, years, templates, imperfections=None):
        rng = np.random.default_rng(SEED)
        self.lo, self.hi = f"{FIRST_YEAR}-01-01", f"{FIRST_YEAR + years}-01-01"
        self.ids = [f"v{i + 1:02d}" for i in range(n_sites)]
        self.template = [templates[i % len(templates)]["id"] for i in range(n_sites)]
        self.air = rng.uniform(0.6, 1.6, n_sites)
        self.wet = rng.uniform(0.8, 1.2, n_sites)
        self.jitter = rng.uniform(-0.15, 0.15, (n_sites, 2))
        self.cl = rng.uniform(0.8, 1.25, n_sites)
        chosen = IMPERFECTIONS if imperfections is None else imperfections
        self.which = {k: i for k, i in chosen.items() if i < n_sites}
        mid = FIRST_YEAR + years // 2
        #: rows of site i with start in [lo, hi) are dropped, per file kind
        self.drop = {k: {} for k in ("precipitation", "air", "met")}
        for kind in ("precipitation", "air", "met"):
            for k, i in self.which.items():
                if k == "late_start":
                    self.drop[kind][i] = ("0000", f"{FIRST_YEAR + min(3, years - 1)}-01-01")
                elif k == "closed" and years > 1:
                    self.drop[kind][i] = (f"{FIRST_YEAR + years - 1}-01-01", "9999")
                elif k == "no_data":
                    self.drop[kind][i] = ("0000", "9999")
        if "precip_gap" in self.which:
            self.drop["precipitation"][self.which["precip_gap"]] = (f"{mid}-03-01",
                                                                   f"{mid}-06-07")
        if "air_gap" in self.which:
            self.drop["air"][self.which["air_gap"]] = (f"{mid}-08-01", f"{mid}-10-10")
        if "met_gap" in self.which:
            self.drop["met"][self.which["met_gap"]] = (f"{mid}-01-10", f"{mid}-02-14")

    def dropped(self, kind, i, when):
        lo_hi = self.drop[kind].get(i)
        return (when >= self.hi or when < self.lo
                or (lo_hi is not None and lo_hi[0] <= when < lo_hi[1]))


def _names(n_sites, templates):
    return [f"{_FIRST[i % len(_FIRST)]}{_SECOND[(i * 3) % len(_SECOND)]} "
            f"{_KIND.get(templates[i % len(templates)]['id'], 'site')}"
            + (f" {i // len(_FIRST) + 1}" if i >= len(_FIRST) else "") for i in range(n_sites)]


def _hour_day(label: str, shift_h: float) -> str:
    """Day (``YYYY-MM-DD``, UTC) in which the hour of a met row starts.

    The met time is the END of the hour in the site's local standard time, so the hour
    starts ``shift_h`` = utc_offset_h + 1 hours before the label in UTC: at UTC+1 the
    row labelled ``2018-01-01T01:00`` is the last hour of 2017 (UTC), the run's periods
    being in UTC.
    """
    h = int(label[11:13]) + int(label[14:16]) / 60 - shift_h
    if 0 <= h < 24:                       # the same day: no date arithmetic (most rows)
        return label[:10]
    t = datetime.fromisoformat(label[:16]) - timedelta(hours=shift_h)
    return t.date().isoformat()


def _copy_rows(lines, plan, kind, edit, utc_offset_h=None):
    """Header and comment lines as they are; each data row once per generated site of
    its template, through ``edit(cells, i)``, unless the plan drops it: by the local
    day its sample starts, for met by the UTC day its hour starts (`utc_offset_h`:
    template id -> hours), so that a year of met ends with the hour ending at
    midnight UTC of 1 January, as the run's periods (UTC) do."""
    out, header, by_template = [], None, {}
    for ln in lines:
        if header is None:
            out.append(ln)
            if not (ln.startswith("#") or not ln.strip()):
                header = ln.rstrip("\n").split(",")
            continue
        by_template.setdefault(ln.split(",", 1)[0], []).append(ln)
    tcol = header.index("time" if kind == "met" else "start")
    for i, sid in enumerate(plan.ids):
        shift = (utc_offset_h or {}).get(plan.template[i], 0.0) + 1.0
        for ln in by_template.get(plan.template[i], []):
            cells = ln.rstrip("\n").split(",")
            when = _hour_day(cells[tcol], shift) if kind == "met" else cells[tcol][:10]
            if plan.dropped(kind, i, when):
                continue
            cells[0] = sid
            edit(cells, i, header)
            out.append(",".join(cells) + "\n")
    return "".join(out)


def make_analyst_network(out_dir, n_sites=30, years=10, imperfections=None) -> Path:
    """Write the invented network of `n_sites` sites over `years` years into `out_dir`.

    Parameters
    ----------
    out_dir : path
        Folder written (created).
    n_sites : int
        Number of invented sites (ids ``v01``, ``v02``...).
    years : int
        Years of record from 2016.
    imperfections : dict, optional
        Imperfection -> index of the site that has it (default :data:`IMPERFECTIONS`);
        a small network for a test can put the gaps on its first sites.

    Returns
    -------
    Path
        The scenario file.
    """
    import tomli_w
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    base = base_folder(out, years)
    templates = _toml_load(base / "sites.toml")["site"]
    plan = _Plan(n_sites, years, templates, imperfections)
    names = _names(n_sites, templates)
    sites = []
    for i, sid in enumerate(plan.ids):
        s = dict(templates[i % len(templates)])
        s["id"], s["name"] = sid, names[i]
        s["latitude"] = round(s["latitude"] + plan.jitter[i, 0], 3)
        s["longitude"] = round(s["longitude"] + plan.jitter[i, 1], 3)
        s["elevation_m"] = round(s["elevation_m"] * (1 + plan.jitter[i, 0]), 0)
        if "critical_loads" in s:
            s["critical_loads"] = {k: round(v * plan.cl[i], 0)
                                   for k, v in s["critical_loads"].items()}
        sites.append(s)
    (out / "sites.toml").write_bytes(
        ("# Invented network of the analyst benchmark (benchmarks/analyst_network.py).\n"
         + tomli_w.dumps({"site": sites})).encode("utf-8"))

    def sampler(cells, i, header):
        j = header.index("sampler_id")
        if cells[j]:
            cells[j] = f"{plan.ids[i]}-{cells[j].split('-', 1)[-1]}"

    def precip(cells, i, header):
        sampler(cells, i, header)
        for col, dec in (("gauge_depth [mm]", 1), ("sample_volume [mL]", 0)):
            j = header.index(col)
            cells[j] = _scale(cells[j], plan.wet[i], dec)

    no_nh3 = plan.which.get("no_nh3")

    def air(cells, i, header):
        sampler(cells, i, header)
        for j, col in enumerate(header):
            if col.endswith("[ug/m3]") or col.endswith("[ppb]"):
                cells[j] = _scale(cells[j], plan.air[i], 2)
        if i == no_nh3:
            cells[header.index("NH3 [ug/m3]")] = ""
            cells[header.index("method_NH3")] = ""

    def met(cells, i, header):
        j = header.index("precipitation [mm]")
        cells[j] = _scale(cells[j], plan.wet[i], 1)

    # a farm copy without an NH3 stage has only the monthly passive rows left to drop
    with open(base / "precipitation.csv", encoding="utf-8") as f:
        (out / "precipitation.csv").write_text(_copy_rows(f, plan, "precipitation", precip),
                                               encoding="utf-8")
    with open(base / "air.csv", encoding="utf-8") as f:
        text = _copy_rows(f, plan, "air", air)
    if no_nh3 is not None:       # rows that held NH3 only (passive samplers) go with it
        keep = [ln for ln in text.splitlines(keepends=True)
                if not ln.startswith(f"{plan.ids[no_nh3]},")
                or any(c for c in ln.split(",")[4:11])]
        text = "".join(keep)
    (out / "air.csv").write_text(text, encoding="utf-8")
    with gzip.open(base / "met.csv.gz", "rt", encoding="utf-8") as f:
        text = _copy_rows(f, plan, "met", met,
                          {t["id"]: float(t.get("utc_offset_h", 0.0)) for t in templates})
    with gzip.open(out / "met.csv.gz", "wt", encoding="utf-8", compresslevel=1) as f:
        f.write(text)
    scen = (DEMO / "scenario.toml").read_text(encoding="utf-8").replace(
        'resolution = "year"', f'resolution = "year"\nstart = "{FIRST_YEAR}-01-01"\n'
        f'end = "{FIRST_YEAR + years}-01-01"').replace(
        "demo network (made by make_demo.py)",
        "analyst network (made by benchmarks/analyst_network.py)")
    (out / "scenario.toml").write_text(scen, encoding="utf-8")
    return out / "scenario.toml"


def describe(n_sites=30, years=10, imperfections=None) -> str:
    """Which site has which imperfection, as text."""
    ids = [f"v{i + 1:02d}" for i in range(n_sites)]
    chosen = IMPERFECTIONS if imperfections is None else imperfections
    return "; ".join(f"{k}: {ids[i]}" for k, i in chosen.items() if i < n_sites)


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, required=True)
    ap.add_argument("--sites", type=int, default=30)
    ap.add_argument("--years", type=int, default=10)
    args = ap.parse_args(argv)
    scen = make_analyst_network(args.out, args.sites, args.years)
    print(f"{scen} ({args.sites} sites x {args.years} years; {describe(args.sites, args.years)})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
