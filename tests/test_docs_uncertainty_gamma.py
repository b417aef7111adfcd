"""Demo numbers of docs/methods_uncertainty.md, "The net NH3 exchange (bidirectional)":
the table of the farm's crops under ``nh3_gamma_gsd`` 1 and 3 (2,000 draws, seed 12345;
NH3 and the N total, kg N/ha, 5 / 50 / 95 %) and the share of the net in the
deposition-only figure beside it, recomputed with ``docs/make_uncertainty_figures.py``
on one year of the demo's farm each (2020 with the class default Gamma_s, 2023 with an
invented Gamma_s of crops of 50,000). The reference is the engine itself (measured
numbers, not checks of a method: tests/analysis/test_uncertainty_nh3_gamma.py checks
the method against scipy.stats.lognorm). Numbers as written (Python's format, common
practice; a minus sign as U+2212).
"""
from __future__ import annotations

import re
from pathlib import Path

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_uncertainty.md"
LABELS = {("default", "NH3"): "demo farm, class default Gamma_s (1000), NH3 2020",
          ("default", "N"): "the same, N total 2020",
          ("high", "NH3"): "farm 2023 with Gamma_s of crops 50,000 (invented), NH3",
          ("high", "N"): "the same, N total"}


def test_the_gamma_table(uncertainty_figures, tmp_path_factory):
    m = uncertainty_figures
    got = m.gamma_rows(*m.gamma_runs(tmp_path_factory.mktemp("gamma")))
    text = DOC.read_text(encoding="utf-8")
    a = text.index("| case | `nh3_gamma_gsd = 1` | `nh3_gamma_gsd = 3` |")
    table = text[a:text.index("\n\n", a)].splitlines()[2:]
    written = [tuple(c.strip() for c in ln.strip().strip("|").split("|")) for ln in table]
    want = [(LABELS[k], *got[k]) for k in LABELS]
    assert written == want, "re-measure the Gamma_s table of docs/methods_uncertainty.md"
    flat = re.sub(r"\s+", " ", text[a:])
    assert (f"(the net of 2020 is {100 * got['default', 'net_share']:.0f} % of the "
            "deposition-only figure)") in flat
    assert m.GAMMA_CROPS == 50000.0
