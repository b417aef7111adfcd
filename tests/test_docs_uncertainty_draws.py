"""Demo numbers of docs/methods_uncertainty.md, "A wide exceedance range: the demo's farm
(measured)", that need other runs than its table: the 95 % of the farm's acidity
exceedance at 100, 200, 500 and 5,000 draws (the farm under the bidirectional NH3:
tests/test_docs_uncertainty_bidirectional.py). Recomputed with
``docs/make_uncertainty_figures.py`` (seed 12345); the reference is the engine itself
(measured numbers, not checks of a method). Numbers as written: whole eq/ha/yr with thousands separated, shares in whole
percent (Python's format, common practice).
"""
from __future__ import annotations

from doc_sections import FARM, flat_section as _flat_section


def test_the_95_percent_at_other_numbers_of_draws(uncertainty_figures, farm_span):
    got = uncertainty_figures.draw_count_figures(*farm_span)
    text = _flat_section(*FARM)
    w = {n: f"{v:,.0f}" for n, v in got.items()}
    assert (f"a 95 % of thousands: {w[100]} with 100 draws, {w[200]} with 200 (the output's "
            f"own column), 3,606 with 2,000 and {w[5000]} with 5,000") in text
    assert f"{w[100]} at 100 draws and {w[500]} at 500 are within it" in text
