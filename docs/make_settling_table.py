"""Write the table of annual particle Vd under both settling rules in docs/methods_dry_particles.md.

Run ``python docs/make_settling_table.py`` after a change that moves the particle
velocities; the text between the ``<!-- vd-settling -->`` markers of
docs/methods_dry_particles.md (section 10.3) is replaced.  The numbers are the annual
means of the demo year 2021 (hourly, every hour with a value) of
:func:`workbench.drydep.velocities` on the demo scenario's met and surfaces under
``[dry] particle_settling = "stokes"`` (the default, Zhang et al. 2001 Eq. 2) and
``"clift_gauvin"`` (Clift and Gauvin 1970), every other option at its default (the particle
scheme does not depend on the gas scheme).  ``tests/drydep/test_drydep_settling.py``
computes the same means and fails when the table in the document is not the one they
give.
"""
from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

DOC = Path(__file__).resolve().parent / "methods_dry_particles.md"
DEMO = Path(__file__).resolve().parent.parent / "demo_data" / "scenario.toml"
#: The demo year of the table (time stamps: end of the hour).
YEAR = ("2021-01-01T01:00", "2022-01-01T00:00")
PARTICLES = ("pSO4", "pNO3", "pNH4", "pNa", "pCl", "pCa")
#: Values of ``DryOptions.particle_settling``, the default first.
RULES = ("stokes", "clift_gauvin")
MARKERS = ("<!-- vd-settling -->", "<!-- /vd-settling -->")


def settling_means(study=None):
    """Annual mean particle Vd of the demo year [cm s-1] under each settling rule.

    Parameters
    ----------
    study : workbench.pipeline.Study, optional
        The demo's, read here when not given.

    Returns
    -------
    pandas.DataFrame
        Columns site, receptor, species, particle_settling, vd_cm_s, hours (active
        receptors; :func:`workbench.comparison.annual_vd_table`).
    """
    import pandas as pd
    from workbench.comparison import annual_vd_table
    from workbench.drydep import DryOptions, velocities
    if study is None:
        from workbench.pipeline import Study
        from workbench.scenario import load_scenario
        study = Study.from_scenario(load_scenario(DEMO))
    met = study.inputs.met.sel(time=slice(*YEAR))
    surf = study.surfaces()
    parts = []
    for rule in RULES:
        ds = velocities(met, surf, DryOptions(gases=(), particles=PARTICLES, components=False,
                                              particle_settling=rule))
        parts.append(annual_vd_table({"": ds}, gases=PARTICLES)
                     .drop(columns="scheme").assign(particle_settling=rule))
    return pd.concat(parts, ignore_index=True)[["site", "receptor", "species",
                                                "particle_settling", "vd_cm_s", "hours"]]


def settling_table(table) -> str:
    """The markdown between the markers: annual Vd by receptor and species under both
    rules [cm/s], and the change from Stokes' law to the drag correlation [%]."""
    def value(site, rec, sp, rule):
        row = table[(table.site == site) & (table.receptor == rec) & (table.species == sp)
                    & (table.particle_settling == rule)]
        return float(row["vd_cm_s"].iloc[0])
    pairs = list(dict.fromkeys(zip(table.site, table.receptor)))
    lines = [f"Annual mean Vd [cm/s], demo year {YEAR[0][:4]}, every other option at its "
             "default", "(S: `particle_settling = \"stokes\"`, the default; D: `\"clift_gauvin\"`):",
             "", "| site receptor | " + " | ".join(f"{sp} S | {sp} D" for sp in PARTICLES)
             + " |", "|---|" + "---|" * (2 * len(PARTICLES))]
    for site, rec in pairs:
        lines.append(f"| {site} {rec} | " + " | ".join(
            f"{value(site, rec, sp, r):.3f}" for sp in PARTICLES for r in RULES) + " |")
    lines += ["", "Change of the annual mean, drag over Stokes [%]:", "",
              "| site receptor | " + " | ".join(PARTICLES) + " |",
              "|---|" + "---|" * len(PARTICLES)]
    for site, rec in pairs:
        lines.append(f"| {site} {rec} | " + " | ".join(
            f"{100.0 * (value(site, rec, sp, RULES[1]) / value(site, rec, sp, RULES[0]) - 1):+.2f}"
            for sp in PARTICLES) + " |")
    return "\n".join(lines)


def in_document(text=None) -> str:
    """The text between the markers in docs/methods_dry_particles.md."""
    text = DOC.read_text() if text is None else text
    return text.split(MARKERS[0], 1)[1].split(MARKERS[1], 1)[0].strip("\n")


def main():
    text = DOC.read_text()
    head, rest = text.split(MARKERS[0], 1)
    _, tail = rest.split(MARKERS[1], 1)
    DOC.write_text(f"{head}{MARKERS[0]}\n{settling_table(settling_means())}\n{MARKERS[1]}{tail}")


if __name__ == "__main__":
    main()
