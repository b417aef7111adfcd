"""Unit-slip hints on a file with a unit switch name the unit of the rows they are about.

A laboratory's record joined from yearly exports holds `SO4 [mg/L]` in its early rows
and `SO4 [ueq/L]` from the switch on (docs/data_formats.md, "A long record", item 3).
Old code gave the hints (workbench.wet.unitslip, workbench.io.airslip) the first
column's header and unit for every row: a slip in the later rows was described as a
reading of the first unit ("look like ueq/L under a mg/L header ('SO4 [mg/L]')"), the
wrong column and the wrong way round.  The rows of each unit are now judged apart.

Built from the ridge 2021 samples of the invented demo network.
"""
from pathlib import Path

import pytest

from workbench.io import read_air, read_precipitation, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
#: Equivalent weight of SO4, M / |z| = (32.06 + 4 x 15.999) / 2 g/eq (IUPAC standard
#: atomic weights, abridged, from memory; as tests/wet/test_unitslip.py).
EW_SO4 = (32.06 + 4 * 15.999) / 2
FIRST = 20           # rows of the first unit; the other 32 of 2021 in the later one


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _switch(head, rows, column, later, factor_first=1.0, factor_later=1.0, first=FIRST):
    """`column`'s values of the first FIRST rows stay there (x factor_first), the rest
    move into a new column `later` (x factor_later), each row filling one."""
    cells = head.split(",")
    j = cells.index(column)
    out = []
    for k, r in enumerate(rows):
        c = r.split(",")
        v = c[j]
        num = v and not v.startswith("<")
        if k < first:
            c[j] = f"{float(v) * factor_first:.5g}" if num else v
            c.append("")
        else:
            c[j] = ""
            c.append(f"{float(v) * factor_later:.5g}" if num else v)
        out.append(",".join(c))
    return ",".join(cells + [later]), out


def _hints(tmp_path, name, head, rows, reader, cat):
    p = tmp_path / name
    p.write_text("\n".join([head] + rows) + "\n")
    return [n for n in reader(p, cat)[1].notes if "header" in n or "look like" in n]


@pytest.fixture(scope="module")
def precip():
    lines = (DEMO / "precipitation.csv").read_text().splitlines()
    return lines[0], [r for r in lines[1:] if r.startswith("ridge,2021")]


@pytest.mark.parametrize("first", [8, FIRST])
def test_slip_in_the_later_unit_names_the_later_column(tmp_path, cat, precip, first):
    """The lab moved to a ueq/L column but kept typing mg/L numbers into it.  Old code:
    with 20 rows before the switch no hint (the slipped rows were not over half the
    site's); with 8, a hint on the wrong column ("NH4 ... look like umol/L under a mg/L
    header ('NH4_as_N [mg/L]')")."""
    head, rows = _switch(*precip, "SO4 [mg/L]", "SO4 [ueq/L]", first=first)
    notes = _hints(tmp_path, "p.csv", head, rows, read_precipitation, cat)
    assert len(notes) == 1, notes
    assert "the values look like mg/L under a ueq/L header ('SO4 [ueq/L]'" in notes[0], notes
    assert f"of {len(rows) - first} samples fail" in notes[0], notes      # the later rows


def test_slip_in_the_first_unit_names_the_first_column(tmp_path, cat, precip):
    """ueq/L numbers typed under the mg/L column before the switch; the later column
    right: the hint is about the first rows and names their column."""
    head, rows = _switch(*precip, "SO4 [mg/L]", "SO4 [ueq/L]",
                         factor_first=1000 / EW_SO4, factor_later=1000 / EW_SO4)
    notes = _hints(tmp_path, "p.csv", head, rows, read_precipitation, cat)
    assert len(notes) == 1, notes
    assert "the values look like ueq/L under a mg/L header ('SO4 [mg/L]'" in notes[0], notes
    assert f"of {FIRST} samples fail" in notes[0], notes                  # the first rows


def test_a_right_switch_gives_no_hint(tmp_path, cat, precip):
    head, rows = _switch(*precip, "SO4 [mg/L]", "SO4 [ueq/L]", factor_later=1000 / EW_SO4)
    assert _hints(tmp_path, "p.csv", head, rows, read_precipitation, cat) == []


@pytest.fixture(scope="module")
def air():
    lines = (DEMO / "air.csv").read_text().splitlines()
    return lines[0], lines[1], [r for r in lines[2:] if r.startswith("ridge,2021")]


def test_air_particle_slip_in_the_later_unit_names_the_later_column(tmp_path, cat, air):
    """pSO4 as SO4 in ug/m3, then a column 'pSO4_as_S [ug/m3]' that was filled with the
    SO4 numbers still: the particle balance hint names the later column."""
    meta, head, rows = air
    ridge = [r for r in rows if ",RDG-F1," in r]
    head, ridge = _switch(head, ridge, "pSO4 [ug/m3]", "pSO4_as_S [ug/m3]")
    p = tmp_path / "a.csv"
    p.write_text("\n".join([meta, head] + ridge) + "\n")
    notes = [n for n in read_air(p, cat)[1].notes if "pSO4" in n and "look like" in n]
    assert notes, read_air(p, cat)[1].notes
    assert all("'pSO4_as_S [ug/m3]'" in n and "'pSO4 [ug/m3]'" not in n for n in notes), notes
