"""A unit slip in a run of a lone air sampler's rows (workbench.io.airownstep).

A sampler alone in its file (one site's filter pack) whose run of weeks was written in
ppb under ``SO2 [ug/m3]`` got no note: workbench.io.airstep compares samplers of a file,
and there was none to compare with.  Now the sampler's own record is searched for an
interior run a unit factor off the rest with a step at both ends.  The factors are those
of workbench.io.airslip (from the molar mass and R T / p, held to pint and CODATA's R in
test_air_unitslip.py).  False alarms and detection on invented records:
benchmarks/air_own_step.py.
"""
import re
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_air, read_sites
from workbench.io.airownstep import interior_run, judge
from workbench.io.airslip import amount_per_number

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "air.csv").read_text().splitlines()
HEAD = LINES[1].split(",")
SO2_PPB = amount_per_number("ppb", "SO2") / amount_per_number("ug/m3", "SO2")  # 2.663


@pytest.fixture(scope="module")
def demo_cat():
    return read_sites(DEMO / "sites.toml")


def _alone(site, column=None, first=0, count=0, factor=1.0):
    """The demo's air.csv with `site`'s rows only; `count` valid cells of `column` from
    its `first` on multiplied by `factor`; and the file lines changed."""
    rows = [ln for ln in LINES[2:] if ln.split(",")[0] == site]
    out, k, changed = [], 0, []
    j = HEAD.index(column) if column else None
    for ln in rows:
        c = ln.split(",")
        if j is not None and c[j] and not c[j].startswith("<"):
            if first <= k < first + count:
                c[j] = f"{float(c[j]) * factor:.3g}"
                changed.append(len(out) + 3)
            k += 1
        out.append(",".join(c))
    return "\n".join(LINES[:2] + out) + "\n", changed


def _notes(tmp_path, cat, text):
    p = tmp_path / "a.csv"
    p.write_text(text)
    _, led = read_air(p, cat)
    return [n for n in led.notes if "the only sampler" in n]


@pytest.mark.parametrize("site", ["ridge", "mere", "fell", "farm"])
def test_no_note_on_each_demo_site_alone(tmp_path, demo_cat, site):
    assert _notes(tmp_path, demo_cat, _alone(site)[0]) == []


def test_a_year_of_ppb_in_a_lone_sampler_is_located(tmp_path, demo_cat):
    """Old code: no note (mere alone has one SO2 sampler and no other site)."""
    text, changed = _alone("mere", "SO2 [ug/m3]", 150, 52, 1 / SO2_PPB)
    notes = _notes(tmp_path, demo_cat, text)
    assert len(notes) == 1, notes
    n = notes[0]
    assert n.startswith("a.csv: SO2 at mere, sampler MER-F1, the only sampler of SO2 in the "
                        "file: lines ")
    a, b = map(int, re.search(r"the file: lines (\d+)-(\d+) ", n).groups())
    assert len(set(range(a, b + 1)) & set(changed)) >= 50           # the run, to a row
    assert "step off the rest of its own record at both ends" in n
    assert "the ppb <-> ug/m3 factor of SO2 at 20 degC, 1013.25 hPa (1 ppb = 2.663 ug/m3" in n
    m = re.search(r"e\.g\. line (\d+) '([^']+)', where the column 'SO2 \[ug/m3\]' expects "
                  r"ug/m3 of SO2 \(values not changed\)$", n)
    assert m, n
    cells = text.splitlines()[int(m[1]) - 1].split(",")
    assert cells[HEAD.index("SO2 [ug/m3]")] == m[2]                   # the value as typed


def test_a_change_of_the_sources_for_good_gets_no_note(tmp_path, demo_cat):
    """One step that stays (a plant closed) is not a unit: the level does not come back."""
    text, _ = _alone("mere", "SO2 [ug/m3]", 200, 10_000, 1 / SO2_PPB)
    assert _notes(tmp_path, demo_cat, text) == []


def test_two_samplers_leave_it_to_the_file_comparison(tmp_path, demo_cat):
    """With another sampler of the gas in the file, airstep's reference judges instead."""
    text, _ = _alone("mere", "SO2 [ug/m3]", 150, 52, 1 / SO2_PPB)
    other = [ln for ln in LINES[2:] if ln.split(",")[0] == "fell"]
    assert _notes(tmp_path, demo_cat, text + "\n".join(other) + "\n") == []


def test_interior_run_and_its_edges():
    rng = np.random.default_rng(3)
    x = rng.normal(0, 0.1, 120)
    x[40:70] -= np.log(SO2_PPB)
    got = judge(x, [1 / SO2_PPB])
    assert got is not None and (got["a"], got["b"]) == (40, 70) and got["run_slipped"]
    assert judge(x, [1 / 1.91]) is None                # another factor: no match
    y = rng.normal(0, 0.1, 120)
    y[60:] -= np.log(SO2_PPB)                            # one step, to the end
    assert judge(y, [1 / SO2_PPB]) is None
    assert interior_run(np.zeros(10)) is None           # too short
    z = rng.normal(0, 0.1, 120)
    z[40:70] -= np.linspace(0, 2 * np.log(SO2_PPB), 30)  # a ramp, no abrupt ends
    assert judge(z, [1 / SO2_PPB]) is None
