"""Demo numbers of docs/budget.md, "Where it cannot hold, and why": how far the months'
fluxes of the whole demo (`[period] resolution = "month"`) fall from their year's
(`"year"`), recomputed from the two runs, so that a change of the engine that moves one
fails here until the sentence is re-measured: the largest wet difference (its site,
year and element named) and the dry S of mere's months of 2016 against its year.

The reference is the engine itself (measured numbers; the additivity's own checks are
in tests/test_period_additivity.py). Percent to one decimal as written (Python's
format, common practice).
"""
from __future__ import annotations

import re

import pytest

from doc_sections import flat_section

KEY = ["site", "receptor", "element", "pathway", "year"]


@pytest.fixture(scope="module")
def months_over_year(demo_year_run):
    """(site, receptor, element, pathway, year) -> the sum of the months' flux_kg_ha over
    the year's, less 1 (budget.csv's rows of species "all")."""
    sc, study, res = demo_year_run
    months = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                       sc.fixed_velocity, "month").table

    def rows(t):
        t = t[(t["species"] == "all") & (t["period"].astype(str) != "span")].copy()
        t["year"] = t["period_start"].astype(str).str[:4]
        return t
    m = rows(months).groupby(KEY)["flux_kg_ha"].sum(min_count=1)
    y = rows(res.table).set_index(KEY)["flux_kg_ha"]
    return (m / y - 1.0).dropna()


def test_the_months_against_their_year(months_over_year):
    text = flat_section("**Where it cannot hold, and why.**", "**Completeness is per period",
                        doc="budget.md")
    w = re.search(r"the months' fluxes do not add up to the year's \(on the demo by up to "
                  r"([\d.]+) %, (\w+) (\d{4}) wet (\w+)\)", text)
    d = re.search(r"the months of 2016 at mere, a record from 7 January, hold ([\d.]+)-([\d.]+) "
                  r"% more dry S than the year", text)
    assert w and d, "the two demo figures of docs/budget.md"
    wet = months_over_year.xs("wet", level="pathway").abs()
    site, _, element, year = wet.idxmax()
    assert w.groups() == (f"{100 * wet.max():.1f}", site, year, element), wet.nlargest(4)
    mere = months_over_year.xs(("mere", "S", "dry", "2016"),
                               level=("site", "element", "pathway", "year"))
    assert (mere > 0).all()
    assert d.groups() == (f"{100 * mere.min():.1f}", f"{100 * mere.max():.1f}"), mere
