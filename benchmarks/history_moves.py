"""How the long-record site's yearly rows move with the engine's history rules.

Run once with the code to compare on ``PYTHONPATH`` and once with this branch:

    PYTHONPATH=/path/to/old python benchmarks/history_moves.py --out old.csv
    PYTHONPATH=$PWD python benchmarks/history_moves.py --out new.csv
    python benchmarks/history_moves.py --compare old.csv new.csv

Scenarios on the invented long record (tests/longrecord_data.py, 1998-2022, its
forest clear-felled on 2014-04-01):

- ``declared``: the record as tests/test_long_record.py reads it, ``met_land_use =
  "grass"`` given (the mast stays grass), no collector change;
- ``mast``: no ``met_land_use`` and a 25 m tower (the mast stood over the forest until
  the felling), and the collector changed from wet-only to bulk on 2014-07-01 (a
  weekly sample holds that day) with ``bulk_correction = "scale_wet"`` (0.8);
- ``boundary``: as ``declared``, the collector changed on 2014-07-02 (the day one weekly
  sample ends and the next starts), ``scale_wet`` 0.8.

Writes per scenario and year the grass row's dry S, dry N, wet S and wet N
[kg ha-1] and the wet rows' status.
"""
from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

import pandas as pd

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

BASE = """\
[[site]]
id = "haugh"
name = "Corrie Haugh"
latitude = 55.31
longitude = 6.42
elevation_m = 240.0
land_use = "grass"
canopy_height_m = 0.15
wind_height_m = {wind}
sampler_height_m = 2.0
utc_offset_h = 0
{mast}collector = "{collector}"
receptors = ["conifer_forest"]

[[site.change]]
date = 2014-04-01
what = "land_use"
from = "conifer_forest"
to = "grass"
note = "forest clear-felled"
"""
COLLECTOR = """
[[site.change]]
date = 2014-07-01
what = "collector"
from = "wet_only"
to = "bulk"
"""
SCENARIOS = {
    "declared": (BASE.format(wind="10.0", mast='met_land_use = "grass"\n',
                             collector="wet_only"), ""),
    "mast": (BASE.format(wind="25.0", mast="", collector="bulk") + COLLECTOR,
             '\n[budget]\nbulk_correction = "scale_wet"\nbulk_wet_factor = 0.8\n'),
    "boundary": (BASE.format(wind="10.0", mast='met_land_use = "grass"\n', collector="bulk")
                 + COLLECTOR.replace("2014-07-01", "2014-07-02"),
                 '\n[budget]\nbulk_correction = "scale_wet"\nbulk_wet_factor = 0.8\n'),
}


def rows() -> pd.DataFrame:
    from longrecord_data import make_long_record

    from workbench.comparison import run as run_compared
    from workbench.preflight import prepare
    from workbench.tables import budget_table
    out = []
    for name, (sites, budget) in SCENARIOS.items():
        d = Path(tempfile.mkdtemp(prefix=f"history-{name}-"))
        sc_path = make_long_record(d, sites_text=sites, split_units=False)
        sc_path.write_text(sc_path.read_text() + budget)
        prep = prepare(sc_path)
        sc, study, o = prep.scenario, prep.study, prep.scenario.options
        p = sc.data["period"]
        res = run_compared(study, o["wet"], o["dry"], o["budget"], sc.fixed_velocity,
                           p["resolution"], p["start"], p["end"])
        t = budget_table(res.years)
        t = t[(t["site"] == "haugh") & (t["receptor"] == "grass") & (t["species"] == "all")
              & t["pathway"].isin(["dry", "wet"])]
        for _, r in t.iterrows():
            out.append({"scenario": name, "year": str(r["period"]), "element": r["element"],
                        "pathway": r["pathway"], "kg_ha": r["flux_kg_ha"],
                        "status": r["status"]})
    return pd.DataFrame(out)


def compare(old: Path, new: Path) -> pd.DataFrame:
    a = pd.read_csv(old, dtype={"year": str})
    b = pd.read_csv(new, dtype={"year": str})
    m = a.merge(b, on=["scenario", "year", "element", "pathway"], suffixes=("_old", "_new"))
    m["change_pct"] = 100 * (m["kg_ha_new"] - m["kg_ha_old"]) / m["kg_ha_old"]
    return m


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out")
    ap.add_argument("--compare", nargs=2)
    a = ap.parse_args(argv)
    if a.compare:
        m = compare(Path(a.compare[0]), Path(a.compare[1]))
        moved = m[(m["change_pct"].abs() > 0.005) | (m["status_old"] != m["status_new"])]
        print(moved.to_string(index=False, float_format=lambda x: f"{x:.4g}"))
        return 0
    rows().to_csv(a.out, index=False)
    return 0


if __name__ == "__main__":
    sys.exit(main())
