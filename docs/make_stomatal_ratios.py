"""The stomatal diffusivity ratios of docs/methods_dry.md 9.2 on the demo: what Wesely's
Table 2 ratios would change.

Both gas schemes scale the stomatal resistance by D_H2O/D_x computed from the measured
diffusivities of :mod:`workbench.species` (SO2 2.00, O3 1.51, NO2 1.60, HNO3 2.16, NH3
1.10).  Wesely (1989), Table 2 (taken over by Zhang et al. 2003, Table 1) lists 1.9, 1.6,
1.6, 1.9 and 0.97 (*from memory*, as the document says).  This script runs
:func:`workbench.drydep.velocities` on the demo year 2021 (every option at its default,
the same met, surfaces and year as ``docs/make_vd_table.py``) twice per scheme: as the
engine is, and with the stomatal ratio alone replaced by Table 2's (the ratio of
Rb, the other user of the diffusivities, is left as it is).  It prints, for the four
receptors the document names (ridge conifer, farm deciduous, farm and ridge grass), the
change of the annual mean Vd [cm/s] of each gas and scheme, and Zhang's SO2 over the
farm deciduous stand before and after (3 decimals: the range's 0.5 cm/s bound).

There is no option for these ratios: the replacement is a what-if of this script only
(:func:`table2_ratios`, a context manager that swaps the ratio where the schemes take
it).  ``tests/test_docs_dry_ratios.py`` computes the same numbers and fails when the
sentence of 9.2 is not what they give.

Run ``python docs/make_stomatal_ratios.py``.
"""
from __future__ import annotations

import contextlib
import dataclasses
import importlib.util
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

#: D_H2O/D_x of Wesely (1989), Table 2 (from memory; docs/methods_dry.md 9.2) [-].
TABLE2 = {"SO2": 1.9, "O3": 1.6, "NO2": 1.6, "HNO3": 1.9, "NH3": 0.97}
#: The receptors of the sentence, in its order.
RECEPTORS = (("ridge", "conifer_forest"), ("farm", "deciduous_forest"),
             ("farm", "grass"), ("ridge", "grass"))
GASES = ("SO2", "NH3", "O3", "NO2", "HNO3")
SCHEMES = ("wesely1989", "zhang2003")


@contextlib.contextmanager
def table2_ratios():
    """Within the block, both schemes scale the stomatal resistance by :data:`TABLE2`
    instead of the ratio of the measured diffusivities (Rb is not touched)."""
    from workbench import species
    from workbench.drydep import wesely1989, wesely1989_numpy, zhang2003
    h2o = species.get("H2O").diffusivity_0

    def ratio(gas):
        return TABLE2[gas]

    def zhang_species(name):
        sp = species.get(name)
        if name in TABLE2:
            return dataclasses.replace(sp, diffusivity_0=h2o / TABLE2[name])
        return sp
    saved = (wesely1989.diffusivity_ratio, wesely1989_numpy.diffusivity_ratio,
             zhang2003._species)
    wesely1989.diffusivity_ratio = ratio
    wesely1989_numpy.diffusivity_ratio = ratio
    zhang2003._species = zhang_species
    try:
        yield
    finally:
        (wesely1989.diffusivity_ratio, wesely1989_numpy.diffusivity_ratio,
         zhang2003._species) = saved


def _vd_table_module():
    spec = importlib.util.spec_from_file_location(
        "make_vd_table", Path(__file__).resolve().parent / "make_vd_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def annual_means(study=None):
    """{(scheme, "engine" | "table2"): {gas: DataArray (site, receptor) [cm/s]}} on the
    demo year 2021, every option at its default but the scheme."""
    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    m = _vd_table_module()
    study = study if study is not None else m.demo_study()
    surf = study.surfaces()
    out = {}
    for scheme in SCHEMES:
        opt = DryOptions(gas_scheme=scheme, particles=(), components=False, gases=GASES)
        met = met_with_air(study.inputs.met, study.inputs.air, surf, opt).sel(
            time=slice(*m.YEAR))
        for case in ("engine", "table2"):
            ctx = table2_ratios() if case == "table2" else contextlib.nullcontext()
            with ctx:
                ds = velocities(met, surf, opt)
                out[scheme, case] = {g: (ds[f"vd_{g}"].mean("time") * 100.0).compute()
                                     for g in GASES}
    return out


def changes(means):
    """{gas: (least, largest)} change table2 - engine [cm/s] over :data:`RECEPTORS` and
    both schemes, and Zhang's SO2 over the farm deciduous stand (engine, table2)."""
    spans = {}
    for g in GASES:
        d = [float(means[s, "table2"][g].sel(site=a, receptor=b)
                   - means[s, "engine"][g].sel(site=a, receptor=b))
             for s in SCHEMES for a, b in RECEPTORS]
        spans[g] = (min(d), max(d))
    zd = tuple(float(means["zhang2003", c]["SO2"].sel(site="farm",
                                                       receptor="deciduous_forest"))
               for c in ("engine", "table2"))
    return spans, zd


def misses(means):
    """{(scheme, "engine" | "table2"): tuple of bools}, each common-practice range of
    ``docs/make_vd_table.py`` (``RANGES`` over ``GROUPS``) met by the group's span."""
    m = _vd_table_module()
    out = {}
    for key, by_gas in means.items():
        met = []
        for gas, group, lo, hi in m.RANGES:
            vals = [round(float(by_gas[gas].sel(site=a, receptor=b)), 2)
                    for a, b in m.GROUPS[group]]
            met.append(lo <= min(vals) and max(vals) <= hi)
        out[key] = tuple(met)
    return out


def main():
    means = annual_means()
    spans, zd = changes(means)
    met = misses(means)
    for s in SCHEMES:
        print(f"{s}: ranges met {met[s, 'engine']} -> {met[s, 'table2']}")
    for g, (lo, hi) in spans.items():
        print(f"{g}: {lo:+.4f} to {hi:+.4f} cm/s")
    print(f"Zhang SO2 farm deciduous: {zd[0]:.4f} -> {zd[1]:.4f} cm/s")


if __name__ == "__main__":
    main()
