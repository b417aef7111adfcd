"""Demo numbers of docs/methods_uncertainty.md, "A wide exceedance range: the demo's farm
(measured)": the table of the factors switched off one at a time and the point figures
of its prose, recomputed with ``docs/make_uncertainty_figures.py`` on the demo's farm
(2016-2023, 2,000 draws, seed 12345), so that a change of the engine or of the draws
that moves one fails here until the section is re-measured.

The reference is the engine itself: measured numbers, not checks of a method (the
method's checks: tests/analysis/test_exceedance_range_nh3.py and the other tests of
tests/analysis/). Numbers as the document writes them: thousands separated by a comma,
rounded half to even by Python's format (common practice for these whole numbers).
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_uncertainty.md"


def _section() -> str:
    text = DOC.read_text(encoding="utf-8")
    a = text.index("### A wide exceedance range: the demo's farm (measured)")
    return text[a:text.index("### The net NH3 exchange (bidirectional)", a)]


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


@pytest.fixture(scope="module")
def defaults(uncertainty_figures, farm_span):
    """The farm's span drawn with the default factors (2,000 draws, seed 12345)."""
    return uncertainty_figures.drawn(*farm_span)


@pytest.fixture(scope="module")
def rows(uncertainty_figures, farm_span, defaults):
    return uncertainty_figures.exceedance_rows(*farm_span, defaults)


@pytest.fixture(scope="module")
def figures(uncertainty_figures, farm_span, defaults):
    return uncertainty_figures.span_figures(*farm_span, defaults)


def test_the_table_of_factors_switched_off(rows):
    written = {}
    for line in _section().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 5 and cells[0].startswith("the "):
            written[cells[0]] = " | ".join(cells[1:])
    assert set(written) == set(rows), "the rows of the table"
    for label, cells in rows.items():
        assert written[label] == cells, f"re-measure the row {label!r}:\n{written[label]}\n{cells}"


def test_the_point_figures_of_the_prose(figures):
    f = figures
    text = _flat(_section())
    assert f"acidity exceedance of about {f['point_exceedance']:.0f} eq/ha/yr" in text
    assert f"3,606 with 2,000" in text and f"{f['n95']:,.0f}" == "5,737"
    assert (f"The span's N total is {f['n_total_kg']:.1f} kg N/ha/yr "
            f"({f['n_total_eq']:,.0f} eq/ha/yr), of which dry NH3 is {f['nh3_kg']:.1f} "
            f"({100 * f['nh3_kg'] / f['n_total_kg']:.0f} %; wet {f['wet_n_kg']:.1f}, the other "
            f"dry N {f['other_dry_n_kg']:.1f})") in text
    assert (f"NH3 {f['nh3_eq_p50']:,.0f} eq/ha/yr at the median, {f['nh3_eq_p95']:,.0f} at "
            f"the 95 %") in text
    assert (f"The point N ({f['n_total_eq']:,.0f}) lies just below CLmaxN (2,500) with S "
            f"{f['s_total_eq']:.0f} eq/ha/yr, so the point exceedance is small "
            f"({f['point_exceedance']:.0f}, region 3)") in text
    assert f"({f['n95']:,.0f} − 2,500 + about 350 ≈ 3,600)" in text
    assert f"2,257 + {f['nh3_eq']:,.0f} (2^1.645 − 1) = 5,217" in text


def test_the_farm_ranges_quoted_beside_the_tables_of_past_changes(uncertainty_figures,
                                                                  defaults):
    m = uncertainty_figures
    text = _flat(DOC.read_text(encoding="utf-8"))
    g = m.farm_grass_ranges(defaults)
    assert (f"the demo's farm / grass reads S {g['span', 'S']} over the span and "
            f"{g['2020', 'S']} in 2020, N {g['span', 'N']} and {g['2020', 'N']}") in text
    c = m.farm_ranges(defaults, "crops")
    assert f"farm / crops N {c['2020', 'N']}, {c['span', 'N']}, before and now" in text


def test_the_farm_quoted_in_methods_analysis(uncertainty_figures, farm_span, defaults, figures):
    """docs/methods_analysis.md, "Probability of exceedance": "(the demo's farm: 106 and
    about 3,600 eq/ha/yr, the NH3 Vd factor": the point acidity exceedance of the farm's
    crops and the 95 % of its 2,000 draws, to the hundred."""
    row = uncertainty_figures._span_exceedance(farm_span[0], defaults)
    p95 = float(row["ex_acidity_eq_ha_yr_p95"])
    text = _flat((DOC.parent / "methods_analysis.md").read_text(encoding="utf-8"))
    want = (f"(the demo's farm: {figures['point_exceedance']:.0f} and about "
            f"{round(p95, -2):,.0f} eq/ha/yr, the NH3 Vd factor")
    assert want in text, f"re-measure docs/methods_analysis.md: {want}"
