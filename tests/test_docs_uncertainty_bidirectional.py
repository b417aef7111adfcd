"""Demo numbers of docs/methods_uncertainty.md, "A wide exceedance range: the demo's farm
(measured)" and "The net NH3 exchange (bidirectional)": the farm under ``nh3_treatment =
"bidirectional"`` (the net against the deposition-only figure each year, the 95 % of
the span's N total at 2,000 draws). Recomputed with ``docs/make_uncertainty_figures.py``
(seed 12345); the reference is the engine itself (measured numbers, not checks of a
method). Numbers as written: whole eq/ha/yr with thousands separated, shares in whole
percent (Python's format, common practice).
"""
from __future__ import annotations

import re

from doc_sections import FARM, flat_section as _flat_section


def test_the_bidirectional_farm(uncertainty_figures, tmp_path_factory):
    m = uncertainty_figures
    bi = m.farm_run(tmp_path_factory.mktemp("farm_bi"), dry='nh3_treatment = "bidirectional"')
    f = m.bidirectional_figures(*bi)
    lo, hi = f"{100 * f['net_share_min']:.0f}", f"{100 * f['net_share_max']:.0f}"
    text = _flat_section(*FARM)
    deposition_only_n95 = re.search(r"\| the defaults \| [^|]+ \| [\d,]+ / [\d,]+ / ([\d,]+) \|",
                                    text).group(1)
    change = 1.0 - f["n95"] / float(deposition_only_n95.replace(",", ""))
    assert (f"the net exchange at this site is {lo}-{hi} % of the deposition-only figure "
            f"every year and the N range moves by {100 * change:.0f} % (95 % of the span's "
            f"N total {f['n95']:,.0f} against {deposition_only_n95} eq/ha/yr, 2,000 draws;"
            ) in text
    net = _flat_section("### The net NH3 exchange (bidirectional)", "**Pair split.**")
    assert f"Gamma_s: net {lo}-{hi} % of B)" in net
