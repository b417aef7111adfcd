"""A gauge record in tenths of mm under a mm header (wet.unitslip): a logger's or a
network's count of 0.1 mm (common practice) written as mm makes every gauge depth
10 x too large and every capture ratio 10 x too low.  Before, the capture check's unit
notes tried mm, cm and inch only, none of which mends it, so each sample was flagged
"capture ratio below range" and nothing named the cause.  Built from the invented demo
network.
"""
from pathlib import Path

import pytest

from workbench.io import read_precipitation, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "precipitation.csv").read_text().splitlines()
J = LINES[0].split(",").index("gauge_depth [mm]")


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _scaled(rows, factor):
    out = list(LINES)
    for i in rows:
        c = out[i].split(",")
        if c[J]:
            c[J] = f"{float(c[J]) * factor:.1f}"
            out[i] = ",".join(c)
    return out


def _notes(tmp_path, cat, lines):
    p = tmp_path / "p.csv"
    p.write_text("\n".join(lines) + "\n")
    return [n for n in read_precipitation(p, cat)[1].notes if "tenths of mm" in n]


def test_a_whole_gauge_record_in_tenths_of_mm_is_named_per_site(tmp_path, cat):
    notes = _notes(tmp_path, cat, _scaled(range(1, len(LINES)), 10.0))
    sites = sorted(n.split(" at ")[1].split(":")[0] for n in notes)
    assert sites == ["farm", "fell", "mere", "ridge"], notes
    for n in notes:
        assert "with the capture ratio low; the values look like tenths of mm under a mm " \
               "header ('gauge_depth [mm]'; read as tenths of mm, " in n, n


def test_a_run_of_weeks_in_tenths_of_mm_is_named(tmp_path, cat):
    rows = [i for i in range(60, 70) if LINES[i].startswith("ridge,")]
    notes = _notes(tmp_path, cat, _scaled(rows, 10.0))
    assert len(notes) == 1 and notes[0].startswith("p.csv: gauge depth at ridge: lines "), notes
    assert "read as tenths of mm they all pass" in notes[0]


def test_the_demo_gets_no_tenths_note(tmp_path, cat):
    assert _notes(tmp_path, cat, LINES) == []
