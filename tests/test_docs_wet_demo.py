"""Demo numbers of docs/methods_wet.md recomputed from the whole demo's screened samples
(samples.csv of `workbench run`, :func:`workbench.wet.samples_table`), so that a change
of the screening or of the demo data that moves one fails here until the sentence is
re-measured: section 3.4, the ratio of the calculated to the measured conductivity and
its passing both forms of the conductivity difference.

The reference is the screening itself (measured numbers; the check's own tests are in
tests/wet/test_qa.py). Two decimals as written (Python's format, common practice).
"""
from __future__ import annotations

import re

import numpy as np
import pytest

from doc_sections import flat_section


@pytest.fixture(scope="module")
def samples(demo_year_run):
    from workbench.wet import samples_table
    return samples_table(demo_year_run[2].screened)


def test_the_conductivity_ratio_of_the_demo(samples):
    from workbench.wet.qa import conductivity_difference
    text = flat_section("### 3.4 Conductivity", "### 3.5", doc="methods_wet.md")
    m = re.search(r"On the demo no sample changes its result \(calculated/measured between "
                  r"([\d.]+) and ([\d.]+), all within both forms' tiers\)", text)
    assert m, "the demo sentence of docs/methods_wet.md 3.4"
    calc = samples["conductivity_calc [uS cm-1]"].to_numpy(float)
    meas = samples["conductivity [uS cm-1]"].to_numpy(float)
    limit = samples["conductivity_limit [percent]"].to_numpy(float)
    ok = np.isfinite(calc) & np.isfinite(meas)
    assert ok.sum() > 1000
    k = calc[ok] / meas[ok]
    assert m.groups() == (f"{k.min():.2f}", f"{k.max():.2f}")
    assert set(samples.loc[ok, "conductivity_check"]) == {"pass"}
    for basis in ("measured", "sum"):
        cd = np.abs(conductivity_difference(calc[ok], meas[ok], basis))
        assert (cd <= limit[ok]).all(), basis


def test_the_trace_weeks_trend_of_mere(demo_year_run):
    """Section 7, "Trace weeks": "the monthly seasonal Kendall trends of trends.csv at
    those two sites now use the three months (e.g. mere wet NO3: tau -0.122 -> -0.156,
    p 0.058 -> 0.035": the values now (trends.csv as `workbench run` writes it; the
    values before are history)."""
    from workbench.analysis.outputs import yearly_and_monthly_rows
    from workbench.analysis.trends import change_notes, detection_limit_notes, trend_table
    _, study, res = demo_year_run
    text = flat_section("## 7. Completeness and status per period", "## 8.", doc="methods_wet.md")
    m = re.search(r"\(e\.g\. mere wet NO3: tau [-\d.]+ -> ([-\d.]+), p [\d.]+ -> ([\d.]+);", text)
    assert m, "the trace weeks' trend of docs/methods_wet.md 7"
    year_rows, month_rows = yearly_and_monthly_rows(res, study)
    tr = trend_table(year_rows, month_rows, detection_limit_notes(study.inputs),
                     changes=change_notes(study.catalogue(), study.inputs))
    row = tr[(tr["site"] == "mere") & (tr["pathway"] == "wet") & (tr["species"] == "NO3")
             & (tr["series"] == "monthly")]
    assert len(row) and row["test"].str.startswith("seasonal_kendall").all()
    got = {(f"{t:.3f}", f"{p:.3f}") for t, p in zip(row["tau"], row["p_value"])}
    assert got == {m.groups()}, got
