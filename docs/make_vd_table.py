"""Write the tables of annual Vd by species, surface and scheme in docs/methods_dry.md.

Run ``python docs/make_vd_table.py`` after a change that moves the velocities; the text
between the ``<!-- vd-table -->`` markers of docs/methods_dry.md (section 9.2) is
replaced.  The numbers are the annual means of the demo year 2021 (hourly, every hour
with a value) of :func:`workbench.drydep.velocities` on the demo scenario's met and
surfaces, for both gas schemes and both transfers of u*, every other option at its
default.  ``tests/drydep/test_drydep_schemes.py`` computes the same means for its range
checks and fails when the tables in the document are not the ones these means give.
"""
from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

DOC = Path(__file__).resolve().parent / "methods_dry.md"
DEMO = Path(__file__).resolve().parent.parent / "demo_data" / "scenario.toml"
#: The demo year of the tables and of the range checks (time stamps: end of the hour).
YEAR = ("2021-01-01T01:00", "2022-01-01T00:00")
SCHEMES = ("wesely1989", "zhang2003")
SHORT = {"wesely1989": "W89", "zhang2003": "Z03"}
GASES = ("SO2", "HNO3", "NH3", "NO2", "O3")
#: u* transfers (DryOptions.ustar_transfer): the default first.
TRANSFERS = ("drag_law", "blending_height")
#: (site, receptor) of the demo by surface group.
GROUPS = {
    "grass": [("ridge", "grass"), ("fell", "grass"), ("farm", "grass")],
    "forest": [("ridge", "conifer_forest"), ("farm", "deciduous_forest")],
    "semi_natural": [("ridge", "moorland"), ("fell", "grass"), ("fell", "moorland"),
                     ("mere", "wetland"), ("ridge", "conifer_forest")],
    "land": [("ridge", "conifer_forest"), ("ridge", "moorland"), ("ridge", "grass"),
             ("fell", "grass"), ("fell", "moorland"), ("mere", "wetland"),
             ("farm", "crops"), ("farm", "grass"), ("farm", "deciduous_forest")],
}
#: Common-practice ranges of annual mean Vd [cm s-1] (review papers recalled from memory
#: in issue 12): SO2 0.3-0.8 over grass and 0.5-1.5 over forests; HNO3 1-2 over grass and
#: 2-4 over forests; NO2 0.05-0.2 over land; deposition-only NH3 0.5-2 over semi-natural
#: land.
RANGES = [("SO2", "grass", 0.3, 0.8), ("SO2", "forest", 0.5, 1.5),
          ("HNO3", "grass", 1.0, 2.0), ("HNO3", "forest", 2.0, 4.0),
          ("NO2", "land", 0.05, 0.2), ("NH3", "semi_natural", 0.5, 2.0)]
GROUP_NAMES = {"grass": "grass", "forest": "forests", "land": "land",
               "semi_natural": "semi-natural (dep. only)"}


def demo_means(gases=GASES):
    """Annual mean Vd of the demo year [cm s-1] by (transfer, scheme) and gas.

    Returns
    -------
    means : dict
        (transfer, scheme) -> gas -> DataArray (site, receptor) [cm s-1].
    active : xarray.DataArray of bool
        (site, receptor): the receptors each site asks for.
    """
    from workbench.drydep import DryOptions, velocities
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    study = Study.from_scenario(load_scenario(DEMO))
    met = study.inputs.met.sel(time=slice(*YEAR))
    surf = study.surfaces()
    out = {}
    for transfer in TRANSFERS:
        for scheme in SCHEMES:
            ds = velocities(met, surf, DryOptions(
                gas_scheme=scheme, particles=(), components=False, ustar_transfer=transfer))
            out[transfer, scheme] = {g: ds[f"vd_{g}"].mean("time") * 100.0 for g in gases}
    return out, surf["active"]


def _value(means, transfer, scheme, gas, site, receptor) -> float:
    return round(float(means[transfer, scheme][gas].sel(site=site, receptor=receptor)), 2)


def _rows(means, active, transfer):
    rows = []
    for s in active["site"].values:
        for r in active["receptor"].values:
            if bool(active.sel(site=s, receptor=r)):
                rows.append((str(s), str(r), [_value(means, transfer, sc, g, s, r)
                                              for g in GASES for sc in SCHEMES]))
    return rows


def _table(rows) -> list:
    cols = [f"{g} {SHORT[s]}" for g in GASES for s in SCHEMES]
    head = "| site receptor | " + " | ".join(cols) + " |"
    lines = [head, "|---|" + "---|" * (len(GASES) * len(SCHEMES))]
    for s, r, vals in rows:
        lines.append(f"| {s} {r} | " + " | ".join(f"{v:.2f}" for v in vals) + " |")
    return lines


def _range_cell(means, transfer, scheme, gas, group, lo, hi) -> str:
    vals = [_value(means, transfer, scheme, gas, s, r) for s, r in GROUPS[group]]
    inside = all(lo <= v <= hi for v in vals)
    low, high = min(vals), max(vals)
    span = f"{low:.2f}" if low == high else f"{low:.2f}-{high:.2f}"
    return f"met ({span})" if inside else f"**missed** ({span})"


def tables(means, active) -> str:
    """The markdown between the markers: the default transfer's table, the rows the
    blending height changes, and the ranges met and missed under both transfers."""
    base = _rows(means, active, TRANSFERS[0])
    other = _rows(means, active, TRANSFERS[1])
    changed = [o for b, o in zip(base, other) if b[2] != o[2]]
    lines = [f"Annual mean Vd [cm/s], demo year {YEAR[0][:4]}, `ustar_transfer = "
             f"\"{TRANSFERS[0]}\"` (the default),", "every other option at its default:", ""]
    lines += _table(base)
    lines += ["", f"With `ustar_transfer = \"{TRANSFERS[1]}\"` the rows that differ:", ""]
    lines += _table(changed)
    lines += ["", "Against the common-practice ranges (review papers recalled from memory;",
              "the span over the group's receptors):", "",
              "| range [cm/s] | " + " | ".join(f"{SHORT[s]} {t.replace('_', ' ')}"
                                              for t in TRANSFERS for s in SCHEMES) + " |",
              "|---|" + "---|" * (len(TRANSFERS) * len(SCHEMES))]
    for gas, group, lo, hi in RANGES:
        cells = [_range_cell(means, t, s, gas, group, lo, hi) for t in TRANSFERS
                 for s in SCHEMES]
        lines.append(f"| {gas} {GROUP_NAMES[group]} {lo:g}-{hi:g} | " + " | ".join(cells) + " |")
    lines += ["", "(forests: ridge conifer_forest, farm deciduous_forest; grass: ridge, fell, farm;",
              "land: every receptor but water; semi-natural: ridge moorland and conifer, fell",
              "grass and moorland, mere wetland.)"]
    return "\n".join(lines)


MARKERS = ("<!-- vd-table -->", "<!-- /vd-table -->")


def in_document(text=None) -> str:
    """The text between the markers in docs/methods_dry.md."""
    text = DOC.read_text() if text is None else text
    return text.split(MARKERS[0], 1)[1].split(MARKERS[1], 1)[0].strip("\n")


def main():
    means, active = demo_means()
    text = DOC.read_text()
    head, rest = text.split(MARKERS[0], 1)
    _, tail = rest.split(MARKERS[1], 1)
    DOC.write_text(f"{head}{MARKERS[0]}\n{tables(means, active)}\n{MARKERS[1]}{tail}")


if __name__ == "__main__":
    main()
