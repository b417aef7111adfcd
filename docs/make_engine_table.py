"""Write the stage table of docs/engine.md from the stage declarations.

Run ``python docs/make_engine_table.py`` after adding a stage or changing what a stage
reads; the text between the ``<!-- stages -->`` markers of docs/engine.md is replaced.
The table comes from :data:`workbench.graph.STAGES` (every module that declares stages
is imported first), so it cannot drift from the declarations the guard enforces.
"""
from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import workbench.drycomponents  # noqa: E402,F401  (declares period_shares; imports
#   workbench.dryrows, which declares the pieces of the dry rows)
import workbench.drydep.core  # noqa: E402,F401  (declares the velocity steps)
import workbench.stages  # noqa: E402,F401
import workbench.analysis.range_shares  # noqa: E402,F401  (declares range_shares)
import workbench.analysis.airvd  # noqa: E402,F401  (declares air_scaled, air_vd_rows)
from workbench.budget import BudgetOptions  # noqa: E402
from workbench.drydep import DryOptions  # noqa: E402
from workbench.graph import STAGES, unread_fields  # noqa: E402
from workbench.wet import WetOptions  # noqa: E402

DOC = Path(__file__).resolve().parent / "engine.md"
#: The order of the table: the order a budget runs them in.
ORDER = ("periods", "sample_flags", "screen", "wet", "surfaces", "micromet", "canopy_state", "gas_vd",
         "particle_mode_vd", "site_subset", "velocities", "wanted_pairs", "vd_content", "hour_slots", "vd_fill", "fill_counts", "vd_axes", "air_basis", "pair_air",
         "air_content", "flux_inputs", "species_rows", "nh3_emission_rows", "dry_rows",
         "period_shares", "dry_components", "season_coverage", "wet_components", "budget_layout",
         "wet_assembled", "budget",
         "derived", "sample_hours", "precipitation_notes", "air_notes", "site_study", "app_run",
         "range_shares")
CLASSES = {"wet": WetOptions, "dry": DryOptions, "budget": BudgetOptions}


def _reads(st) -> str:
    parts = []
    for group, names in st.reads.items():
        every = [f for f in CLASSES[group].__dataclass_fields__] if group in CLASSES else []
        if every and set(names) == set(every):
            parts.append(f"every `{group}` option")
        else:
            parts.append(", ".join(f"`{group}.{n}`" for n in names))
    return "; ".join(parts) or "none (keyed by its upstream results and inputs)"


def table() -> str:
    names = [n for n in ORDER if n in STAGES] + sorted(set(STAGES) - set(ORDER))
    rows = ["| stage | declares (option fields read) | counted as | what it computes |",
            "|---|---|---|---|"]
    for n in names:
        st = STAGES[n]
        rows.append(f"| `{n}` | {_reads(st)} | {st.counts_as or ''} | {st.doc} |")
    unread = [f"`{g}.{f}`" for g, fs in unread_fields(CLASSES).items() for f in fs]
    rows += ["", "Option fields no stage reads: " + (", ".join(unread) or "none") + "."]
    return "\n".join(rows)


def main():
    text = DOC.read_text()
    a, b = "<!-- stages -->", "<!-- /stages -->"
    head, rest = text.split(a, 1)
    _, tail = rest.split(b, 1)
    DOC.write_text(f"{head}{a}\n{table()}\n{b}{tail}")


if __name__ == "__main__":
    main()
