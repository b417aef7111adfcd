"""A unit slip in some rows of one air sampler (workbench.io.airstep): ppb written under
a ug/m3 header (or the reverse) in a run of one sampler's rows, judged against the other
samplers of the file.  Before, only a second sampler of the gas at the same site
(workbench.io.airslip.gas_pair_notes) could reveal it: the invented demo's sites have
one filter pack each, and a year of ridge SO2 in ppb went without a word.

The factors are those of workbench.io.airslip (held to pint and CODATA's R in
test_air_unitslip.py).  False alarms and detection on invented networks:
benchmarks/air_unit_step.py.
"""
import re
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_air, read_sites
from workbench.io.airslip import amount_per_number
from workbench.io.airstep import best_run

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "air.csv").read_text().splitlines()
HEAD = LINES[1].split(",")


@pytest.fixture(scope="module")
def demo_cat():
    return read_sites(DEMO / "sites.toml")


def _slipped(column, site, first, count, factor):
    """The demo's air.csv with `count` valid cells of `column` at `site`, from its
    `first` one on, multiplied by `factor`; and the file lines changed."""
    j = HEAD.index(column)
    out, k, changed = list(LINES), 0, []
    for i in range(2, len(LINES)):
        c = out[i].split(",")
        if c[0] == site and c[j] and not c[j].startswith("<"):
            if first <= k < first + count:
                c[j] = f"{float(c[j]) * factor:.3g}"
                out[i] = ",".join(c)
                changed.append(i + 1)
            k += 1
    return "\n".join(out) + "\n", changed


def _step_notes(tmp_path, cat, text):
    p = tmp_path / "a.csv"
    p.write_text(text)
    _, led = read_air(p, cat)
    return [n for n in led.notes if "the sampler's other" in n]


def test_no_note_on_the_clean_demo(demo_cat):
    _, led = read_air(DEMO / "air.csv", demo_cat)
    assert not [n for n in led.notes if "the sampler's other" in n], led.notes


def test_a_year_of_ppb_under_a_ug_header_is_located(tmp_path, demo_cat):
    """Old code: no note (ridge has one SO2 sampler)."""
    ppb = amount_per_number("ug/m3", "SO2") / amount_per_number("ppb", "SO2")   # 1/2.663
    text, changed = _slipped("SO2 [ug/m3]", "ridge", 100, 52, ppb)
    notes = _step_notes(tmp_path, demo_cat, text)
    assert len(notes) == 1, notes
    note = notes[0]
    assert note.startswith("a.csv: SO2 at ridge, sampler RDG-F1, lines "), note
    a, b = map(int, re.search(r"lines (\d+)-(\d+) \(", note).groups())
    named = set(range(a, b + 1))
    # the run named is the slipped one, give or take a sample at an edge
    assert len(named & set(changed)) >= 50 and len(named - set(changed)) <= 2, (a, b)
    # SO2 64.066 g/mol (IUPAC weights, from memory) over the ideal-gas molar volume
    # 24.055 L/mol at 20 degC, 1013.25 hPa (R T / p, common practice): 2.663
    assert "1 ppb = 2.663 ug/m3" in note
    assert "they look like ppb" in note
    cell = text.splitlines()[a - 1].split(",")[HEAD.index("SO2 [ug/m3]")]
    assert f"e.g. line {a} '{cell}', where the column 'SO2 [ug/m3]' expects ug/m3 of SO2" \
        in note, note
    assert "(values not changed)" in note


def test_the_values_are_not_changed(tmp_path, demo_cat):
    ppb = amount_per_number("ug/m3", "SO2") / amount_per_number("ppb", "SO2")
    text, _ = _slipped("SO2 [ug/m3]", "ridge", 100, 52, ppb)
    p = tmp_path / "a.csv"
    p.write_text(text)
    ds, _ = read_air(p, demo_cat)
    q = tmp_path / "b.csv"
    q.write_text(text.replace("\n", "\n", 1))
    ds2, _ = read_air(q, demo_cat)
    np.testing.assert_array_equal(ds["SO2"].values, ds2["SO2"].values)


def test_with_one_other_sampler_only_the_slipped_one_is_named(tmp_path, demo_cat):
    """NO2 is measured at ridge and farm only: a run of ug/m3 under 'NO2 [ppb]' at ridge
    steps the ratio of farm to ridge too; farm's own values do not step, so farm gets
    no note."""
    ug = amount_per_number("ppb", "NO2") / amount_per_number("ug/m3", "NO2")   # 1.912
    text, changed = _slipped("NO2 [ppb]", "ridge", 0, 52, ug)
    notes = _step_notes(tmp_path, demo_cat, text)
    assert [n.split(",")[0] for n in notes] == ["a.csv: NO2 at ridge"], notes
    assert f"lines {changed[0]}-" in notes[0]
    assert "they look like ug/m3 of NO2" in notes[0] and "expects ppb" in notes[0]


def test_a_step_of_no_unit_factor_is_left_alone(tmp_path, demo_cat):
    """A real change of a site (a factor 1.6 for a year) is no slip: no note."""
    text, _ = _slipped("SO2 [ug/m3]", "ridge", 100, 52, 1.6)
    assert _step_notes(tmp_path, demo_cat, text) == []


def test_a_sampler_alone_in_the_file_has_no_reference(tmp_path, demo_cat):
    ppb = amount_per_number("ug/m3", "SO2") / amount_per_number("ppb", "SO2")
    text, _ = _slipped("SO2 [ug/m3]", "ridge", 100, 52, ppb)
    only = [ln for ln in text.splitlines() if not ln.startswith(("farm", "fell", "mere"))]
    assert _step_notes(tmp_path, demo_cat, "\n".join(only) + "\n") == []


def test_best_run_finds_a_block_and_a_tail():
    x = np.r_[np.zeros(30), np.ones(12), np.zeros(30)]
    assert best_run(x) == (30, 42)
    assert best_run(np.r_[np.zeros(30), np.ones(12)]) == (30, 42)
    assert best_run(np.zeros(15)) is None          # too short for a run and a rest
