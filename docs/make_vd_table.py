"""Write the tables of annual Vd by species, surface and scheme in docs/methods_dry.md.

Run ``python docs/make_vd_table.py`` after a change that moves the velocities; the text
between the ``<!-- vd-table -->`` markers of docs/methods_dry.md (section 9.2) is
replaced.  The numbers are the annual means of the demo year 2021 (hourly, every hour
with a value) of :func:`workbench.drydep.velocities` on the demo scenario's met and
surfaces, for both gas schemes and both transfers of u*, every other option at its
default.  ``tests/drydep/test_drydep_schemes.py`` computes the same means for its range
checks and fails when the tables in the document are not the ones these means give.

The text between the ``<!-- vd-years -->`` markers (right after) is the same check for
every full calendar year (UTC) of the demo record, under the default transfer only:
one call of :func:`workbench.drydep.velocities` per gas scheme over the whole record,
then :func:`workbench.comparison.annual_vd_by_year`; for each common-practice range the
years met out of N and the span over the years of the group's smallest and largest
annual mean, the fine-particle ranges, and the orderings HNO3 > pNO3 and SO2 > NO2
over every surface.

The text between the ``<!-- vd-so2-cuticle -->`` markers (section 9.6) is the annual
Vd(SO2) of the demo year under both values of ``[dry] so2_cuticle`` and both schemes,
default transfer (:func:`so2_cuticle_means`, :func:`workbench.comparison.annual_vd_table`),
with the SO2 ranges met and missed.
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


def demo_study():
    """The demo scenario's :class:`workbench.pipeline.Study` (met read once)."""
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    return Study.from_scenario(load_scenario(DEMO))


def demo_means(gases=GASES, study=None):
    """Annual mean Vd of the demo year [cm s-1] by (transfer, scheme) and gas.

    Parameters
    ----------
    gases : sequence of str
    study : workbench.pipeline.Study, optional
        The demo's (:func:`demo_study`), read here when not given.

    Returns
    -------
    means : dict
        (transfer, scheme) -> gas -> DataArray (site, receptor) [cm s-1].
    active : xarray.DataArray of bool
        (site, receptor): the receptors each site asks for.
    """
    from workbench.drydep import DryOptions, velocities
    study = study or demo_study()
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


# --- every full year of the record ---------------------------------------------------------
#: Particles of the per-year table (fine sulfate and ammonium; nitrate, 20 % of it in the
#: coarse mode at the inland demo sites, methods_dry_particles.md 10.1).
PARTICLES = ("pSO4", "pNO3", "pNH4")
#: Common-practice ranges of annual mean particle Vd [cm s-1] (review papers recalled
#: from memory in issue 12): fine particles 0.05-0.3 over grass, 0.1-0.6 over forests.
PARTICLE_RANGES = [(p, "grass", 0.05, 0.3) for p in PARTICLES] + \
    [(p, "forest", 0.1, 0.6) for p in PARTICLES]
#: Orderings of the annual means asked for over every surface (every active receptor).
ORDERINGS = [("HNO3", "pNO3"), ("SO2", "NO2")]
#: Decimals of the annual means compared with a range (as the 2021 tables and the
#: particle checks of tests/drydep/test_drydep_particles_demo.py).
DECIMALS = {**{g: 2 for g in GASES}, **{p: 3 for p in PARTICLES}}


def year_means(study=None):
    """Annual mean Vd [cm s-1] of every full year of the demo record, default transfer.

    Parameters
    ----------
    study : workbench.pipeline.Study, optional
        The demo's (:func:`demo_study`), read here when not given.

    Returns
    -------
    dict
        scheme -> xarray.Dataset of :func:`workbench.comparison.annual_vd_by_year`
        (``vd_<name>`` and ``hours_<name>`` by year, site, receptor) for the gases and
        the particles; the particles are computed once (the particle scheme does not
        depend on the gas scheme) and shown under both schemes.
    """
    from workbench.comparison import annual_vd_by_year
    from workbench.drydep import DryOptions, velocities
    study = study or demo_study()
    met, surf = study.inputs.met, study.surfaces()
    out = {}
    for scheme in SCHEMES:
        parts = PARTICLES if scheme == SCHEMES[0] else ()
        ds = velocities(met, surf, DryOptions(gas_scheme=scheme, particles=parts,
                                              components=False, ustar_transfer=TRANSFERS[0]))
        out[scheme] = annual_vd_by_year(ds, GASES + parts)
    first = out[SCHEMES[0]]
    for scheme in SCHEMES[1:]:
        out[scheme] = out[scheme].assign({k: first[k] for k in first.data_vars
                                          if k.split("_", 1)[1] in PARTICLES})
    return out


def group_by_year(ym, name, group):
    """Annual means of `name` over the group's (site, receptor) pairs, rounded as
    compared with the ranges: array (year, pair) [cm s-1]."""
    import numpy as np
    vd = ym[f"vd_{name}"]
    cols = [vd.sel(site=s, receptor=r).values for s, r in GROUPS[group]]
    return np.round(np.stack(cols, axis=1), DECIMALS[name])


def years_missed(ym, name, group, lo, hi) -> list:
    """The years in which an annual mean of the group lies outside [lo, hi]."""
    vals = group_by_year(ym, name, group)
    inside = ((vals >= lo) & (vals <= hi)).all(axis=1)
    return [int(y) for y, ok in zip(ym["year"].values, inside) if not ok]


def ordering_by_year(ym, high, low):
    """Smallest ratio high/low of the annual means over every active receptor, by year
    [-] (array (year,)); above 1 where `high` exceeds `low` everywhere."""
    import numpy as np
    ratio = (ym[f"vd_{high}"] / ym[f"vd_{low}"]).values
    return np.nanmin(ratio.reshape(ratio.shape[0], -1), axis=1)


def _years_cell(years, missed) -> str:
    n, met = len(years), [y for y in years if y not in missed]
    if len(met) in (0, n):
        return f"{len(met)}/{n}"
    if len(met) > n / 2:
        return f"{len(met)}/{n} (missed {', '.join(map(str, missed))})"
    return f"{len(met)}/{n} (met {', '.join(map(str, met))})"


def _span(values, decimals) -> str:
    lo, hi = float(min(values)), float(max(values))
    return f"{lo:.{decimals}f}" if round(lo, decimals) == round(hi, decimals) \
        else f"{lo:.{decimals}f}-{hi:.{decimals}f}"


def _range_row(yms, name, group, lo, hi) -> str:
    cells = []
    for scheme in SCHEMES:
        ym = yms[scheme]
        vals = group_by_year(ym, name, group)
        years = [int(y) for y in ym["year"].values]
        dec = DECIMALS[name]
        cells += [_years_cell(years, years_missed(ym, name, group, lo, hi)),
                  _span(vals.min(axis=1), dec), _span(vals.max(axis=1), dec)]
    return f"| {name} {GROUP_NAMES[group]} {lo:g}-{hi:g} | " + " | ".join(cells) + " |"


def _hour_gaps(ym) -> str:
    """Sites and years of the record whose active receptors lack more than a day of
    hours with a value, and the most hours lacking elsewhere."""
    import numpy as np
    hours = np.stack([ym[f"hours_{g}"].values for g in GASES]).min(axis=0)  # year,site,rec
    active = np.isfinite(ym[f"vd_{GASES[0]}"].values)
    years = ym["year"].values
    needed = np.array([366 if y % 4 == 0 and (y % 100 != 0 or y % 400 == 0) else 365
                       for y in years]) * 24
    lack = np.where(active, needed[:, None, None] - hours, 0).max(axis=2)   # year, site
    big = [f"{s} {y} ({int(lack[i, j])} h)" for i, y in enumerate(years)
           for j, s in enumerate(ym["site"].values) if lack[i, j] > 24]
    small = int(np.where(lack > 24, 0, lack).max())
    rest = (f"elsewhere at most {small} h of a year without one" if small else
            "elsewhere every hour has one")
    return f"over a day without a value at {', '.join(big) or 'no site'};\n{rest}"


def year_tables(yms) -> str:
    """The markdown between the year markers: the common-practice ranges and the
    orderings in every full year of the record under the default transfer."""
    first = yms[SCHEMES[0]]
    years = [int(y) for y in first["year"].values]
    n = len(years)
    head = " | ".join(f"{SHORT[s]} years met | {SHORT[s]} group min | {SHORT[s]} group max"
                      for s in SCHEMES)
    lines = [f"Every full calendar year (UTC) of the demo record, {years[0]}-{years[-1]} "
             f"(N = {n}), `ustar_transfer =", f"\"{TRANSFERS[0]}\"` (the default), every "
             "other option at its default; one run over the whole", "record per scheme.",
             "Years left out (not every hour on the met time axis): "
             f"{first.attrs['incomplete_years']}.",
             f"Hours of the full years: {_hour_gaps(first)}.",
             "Means over the hours with a value.", "",
             "Ranges: years met out of N, and the span over the years of the group's "
             "smallest and", "largest annual mean [cm/s] (particles under both schemes: "
             "the particle scheme does", "not depend on the gas scheme):", "",
             f"| range [cm/s] | {head} |", "|---|" + "---|" * (3 * len(SCHEMES))]
    lines += [_range_row(yms, *r) for r in RANGES + PARTICLE_RANGES]
    lines += ["", "Orderings over every surface (every active receptor, water included): "
              "years met", "out of N, and the span over the years of the smallest ratio "
              "of the annual means:", "",
              "| ordering | " + " | ".join(f"{SHORT[s]} years met | {SHORT[s]} least ratio"
                                         for s in SCHEMES) + " |",
              "|---|" + "---|" * (2 * len(SCHEMES))]
    for high, low in ORDERINGS:
        cells = []
        for scheme in SCHEMES:
            ratio = ordering_by_year(yms[scheme], high, low)
            missed = [y for y, r in zip(years, ratio) if not r > 1.0]
            cells += [_years_cell(years, missed), _span(ratio, 2)]
        lines.append(f"| {high} > {low} | " + " | ".join(cells) + " |")
    return "\n".join(lines)


# --- the SO2 cuticle option (docs/methods_dry.md 9.6) -----------------------------------------
#: Values of ``DryOptions.so2_cuticle`` compared, the default first.
SO2_CUTICLES = ("scheme", "erisman1994")


def so2_cuticle_means(study=None):
    """Annual mean Vd(SO2) of the demo year [cm s-1] under each ``so2_cuticle`` value.

    The means of :func:`workbench.comparison.annual_vd_table` on ``velocities(met,
    surfaces, DryOptions(gas_scheme=s, particles=(), gases=("SO2",), components=False,
    so2_cuticle=c))``, default transfer, every other option at its default.

    Returns
    -------
    pandas.DataFrame
        Columns site, receptor, scheme, so2_cuticle, vd_cm_s (active receptors).
    """
    import pandas as pd
    from workbench.comparison import annual_vd_table
    from workbench.drydep import DryOptions, velocities
    study = study or demo_study()
    met = study.inputs.met.sel(time=slice(*YEAR))
    surf = study.surfaces()
    parts = []
    for rule in SO2_CUTICLES:
        by_scheme = {s: velocities(met, surf, DryOptions(
            gas_scheme=s, particles=(), gases=("SO2",), components=False, so2_cuticle=rule))
            for s in SCHEMES}
        parts.append(annual_vd_table(by_scheme, gases=("SO2",)).assign(so2_cuticle=rule))
    return pd.concat(parts, ignore_index=True)[["site", "receptor", "scheme", "so2_cuticle",
                                                "vd_cm_s"]]


def so2_cuticle_tables(table) -> str:
    """The markdown between the markers of 9.6: annual Vd(SO2) by receptor under both
    values of ``so2_cuticle`` and both schemes, and the SO2 ranges met and missed."""
    cols = [(s, c) for s in SCHEMES for c in SO2_CUTICLES]

    def value(site, receptor, scheme, rule):
        row = table[(table.site == site) & (table.receptor == receptor)
                    & (table.scheme == scheme) & (table.so2_cuticle == rule)]
        return round(float(row["vd_cm_s"].iloc[0]), 2)
    lines = [f"Annual mean Vd(SO2) [cm/s], demo year {YEAR[0][:4]}, `ustar_transfer = "
             f"\"{TRANSFERS[0]}\"`,", "every other option at its default:", "",
             "| site receptor | " + " | ".join(f"{SHORT[s]} {c}" for s, c in cols) + " |",
             "|---|" + "---|" * len(cols)]
    pairs = list(dict.fromkeys(zip(table.site, table.receptor)))
    for site, rec in pairs:
        lines.append(f"| {site} {rec} | " + " | ".join(
            f"{value(site, rec, s, c):.2f}" for s, c in cols) + " |")
    lines += ["", "| range [cm/s] | " + " | ".join(f"{SHORT[s]} {c}" for s, c in cols) + " |",
              "|---|" + "---|" * len(cols)]
    for gas, group, lo, hi in RANGES:
        if gas != "SO2":
            continue
        cells = []
        for s, c in cols:
            vals = [value(site, rec, s, c) for site, rec in GROUPS[group]]
            span = f"{min(vals):.2f}-{max(vals):.2f}"
            inside = all(lo <= v <= hi for v in vals)
            cells.append(f"met ({span})" if inside else f"**missed** ({span})")
        lines.append(f"| SO2 {GROUP_NAMES[group]} {lo:g}-{hi:g} | " + " | ".join(cells) + " |")
    return "\n".join(lines)


MARKERS = ("<!-- vd-table -->", "<!-- /vd-table -->")
YEAR_MARKERS = ("<!-- vd-years -->", "<!-- /vd-years -->")
CUTICLE_MARKERS = ("<!-- vd-so2-cuticle -->", "<!-- /vd-so2-cuticle -->")


def in_document(text=None, markers=MARKERS) -> str:
    """The text between the markers in docs/methods_dry.md."""
    text = DOC.read_text() if text is None else text
    return text.split(markers[0], 1)[1].split(markers[1], 1)[0].strip("\n")


def _replace(text, markers, body, after=None) -> str:
    """`text` with `body` between `markers`; a block not there yet goes right after the
    end marker `after`."""
    if markers[0] not in text:
        head, tail = text.split(after, 1)
        return f"{head}{after}\n\n{markers[0]}\n{body}\n{markers[1]}{tail}"
    head, rest = text.split(markers[0], 1)
    _, tail = rest.split(markers[1], 1)
    return f"{head}{markers[0]}\n{body}\n{markers[1]}{tail}"


def main():
    study = demo_study()
    means, active = demo_means(study=study)
    text = _replace(DOC.read_text(), MARKERS, tables(means, active))
    text = _replace(text, YEAR_MARKERS, year_tables(year_means(study)), after=MARKERS[1])
    text = _replace(text, CUTICLE_MARKERS, so2_cuticle_tables(so2_cuticle_means(study)))
    DOC.write_text(text)


if __name__ == "__main__":
    main()
