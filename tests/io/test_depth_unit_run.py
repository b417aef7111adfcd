"""A run of weeks of gauge depth in inches (or cm) under a mm header (wet.unitslip).

The site-wide hint names a depth column in another length unit only when more than half
of a site's samples fail the capture check.  A few weeks read off a gauge in inches
among weeks in mm failed the check one by one, flagged "capture ratio above range (leak
or contamination?)", and nothing named the likely cause.  Now a run of three or more
consecutive samples that one other length unit brings back into the band gets one note
naming its lines.  1 inch = 25.4 mm exactly (international inch, 1959; common practice).
Built from the invented demo network.
"""
import re
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_precipitation, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "precipitation.csv").read_text().splitlines()
J = LINES[0].split(",").index("gauge_depth [mm]")


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _notes(tmp_path, cat, lines):
    p = tmp_path / "p.csv"
    p.write_text("\n".join(lines) + "\n")
    return [n for n in read_precipitation(p, cat)[1].notes if "consecutive samples" in n]


def _scaled(rows, factor):
    out = list(LINES)
    for i in rows:
        c = out[i].split(",")
        if c[J]:
            c[J] = f"{float(c[J]) * factor:.2f}"
        out[i] = ",".join(c)
    return out


def test_no_run_note_on_the_demo(tmp_path, cat):
    assert _notes(tmp_path, cat, LINES) == []


@pytest.mark.parametrize("unit, factor", [("inch", 1 / 25.4), ("cm", 1 / 10)])
def test_a_run_of_weeks_in_another_length_unit_is_named(tmp_path, cat, unit, factor):
    """Old code: no note (8 of ridge's 126 samples fail: far under half)."""
    rows = range(60, 68)                          # file lines 61-68, ridge
    assert {LINES[i].split(",")[0] for i in rows} == {"ridge"}
    notes = _notes(tmp_path, cat, _scaled(rows, factor))
    assert len(notes) == 1, notes
    n = notes[0]
    # the samples of the run the capture check evaluates (a week below its 1 mm minimum
    # depth is skipped), from line 61 on
    m = re.match(r"p\.csv: gauge depth at ridge: lines 61-6[78] \((\d) consecutive samples "
                 r"the check evaluates, ", n)
    assert m and int(m[1]) >= 5, n
    assert "fail the capture check with the capture ratio high" in n
    assert (f"read as {unit} they all pass: the values look like {unit} under a mm header "
            "('gauge_depth [mm]'; values not changed)") in n


def test_two_weeks_or_a_noisy_gauge_get_no_run_note(tmp_path, cat):
    assert _notes(tmp_path, cat, _scaled(range(60, 62), 1 / 25.4)) == []
    # a noisy gauge: each depth times a lognormal factor of sd 0.5 in log (a third of
    # the samples fail the capture check), no unit: no run note
    rng = np.random.default_rng(0)
    out = list(LINES)
    for i in range(1, len(out)):
        c = out[i].split(",")
        if c[0] == "ridge" and c[J]:
            c[J] = f"{float(c[J]) * np.exp(rng.normal(0, 0.5)):.2f}"
        out[i] = ",".join(c)
    assert _notes(tmp_path, cat, out) == []
