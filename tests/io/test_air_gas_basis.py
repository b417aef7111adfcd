"""A gas written on the element basis under the species' header at one site (SO2 as
ug S/m3 under 'SO2 [ug/m3]': each amount read 2 x too low; HNO3 as N: 4.5 x), with one
sampler of the gas there: before, silent (no check within a sampler's own values sees
a constant factor, and the two-sampler note needs a second sampler). Now a note when
the sampler's median gas-to-particle ratio lies beyond the file's other sites' and the
element basis brings it among them (workbench/io/airgasbasis.py).

Built from the invented demo's air.csv; the factors are the molar masses' ratios from
periodictable (a general-purpose reference library): SO2/S 64.06/32.06, HNO3/N
63.01/14.007, NH3/N 17.03/14.007.
"""
from pathlib import Path

import periodictable as pt
import pytest

from workbench.io import read_air, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
FACTOR = {"SO2": pt.formula("SO2").mass / pt.S.mass,
          "HNO3": pt.formula("HNO3").mass / pt.N.mass,
          "NH3": pt.formula("NH3").mass / pt.N.mass}


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _air(tmp_path, column, factor, site, header=None, only=None):
    lines = (DEMO / "air.csv").read_text().splitlines()
    head = lines[1].split(",")
    j = head.index(column)
    out = lines[:2]
    if header:
        out[1] = lines[1].replace(column, header)
    for r in lines[2:]:
        c = r.split(",")
        if only is not None and c[0] != only:
            continue
        if (c[0] == site) == (factor is not None) and c[j] and not c[j].startswith("<"):
            f = factor if factor is not None else 1.0
            c[j] = f"{float(c[j]) * f:.3g}"
        out.append(",".join(c))
    p = tmp_path / "air.csv"
    p.write_text("\n".join(out) + "\n")
    return p


def _notes(path, cat):
    return [n for n in read_air(path, cat)[1].notes if "median molar ratio" in n]


def test_no_note_on_the_demo(cat):
    assert _notes(DEMO / "air.csv", cat) == []


@pytest.mark.parametrize("gas, particle, site", [("HNO3", "pNO3", "ridge"),
                                                 ("HNO3", "pNO3", "farm"),
                                                 ("SO2", "pSO4", "mere")])
def test_gas_as_element_at_one_site(tmp_path, cat, gas, particle, site):
    el = "S" if gas == "SO2" else "N"
    notes = _notes(_air(tmp_path, f"{gas} [ug/m3]", 1 / FACTOR[gas], site), cat)
    assert len(notes) == 1, notes
    n = notes[0]
    assert n.startswith(f"air.csv: {gas} at {site} (sampler "), n
    assert f"its median molar ratio to {particle} on the same rows (416) is " in n, n
    assert f"ug {el}/m3 written under '{gas} [ug/m3]'? Written as '{gas}_as_{el} [ug/m3]' " \
           f"(read as {el}) each amount would be {FACTOR[gas]:.3g} x the one read" in n, n
    assert n.endswith("the numbers alone cannot tell: check which the laboratory reports "
                      "(values used as read)"), n


def test_element_header_holding_the_species(tmp_path, cat):
    """The reverse: 'HNO3_as_N [ug/m3]' with N everywhere but ridge, whose HNO3 is
    HNO3."""
    p = _air(tmp_path, "HNO3 [ug/m3]", None, "ridge", header="HNO3_as_N [ug/m3]")
    # every other site's values to N (the header's basis); ridge left as mass of HNO3
    lines = p.read_text().splitlines()
    j = lines[1].split(",").index("HNO3_as_N [ug/m3]")
    out = lines[:2]
    for r in lines[2:]:
        c = r.split(",")
        if c[0] != "ridge" and c[j] and not c[j].startswith("<"):
            c[j] = f"{float(c[j]) / FACTOR['HNO3']:.3g}"
        out.append(",".join(c))
    p.write_text("\n".join(out) + "\n")
    notes = _notes(p, cat)
    assert len(notes) == 1 and notes[0].startswith("air.csv: HNO3 at ridge "), notes
    assert "x above the other sites'" in notes[0], notes
    assert "ug/m3 of HNO3 written under 'HNO3_as_N [ug/m3]'? Written as 'HNO3 [ug/m3]' " \
           f"each amount would be 1/{FACTOR['HNO3']:.3g} of the one read" in notes[0], notes


def test_nh3_as_n_not_judged(tmp_path, cat):
    """NH3's 1.22 lies inside the sites' spread of the ratio: no note (documented)."""
    assert _notes(_air(tmp_path, "NH3 [ug/m3]", 1 / FACTOR["NH3"], "ridge"), cat) == []


def test_one_site_alone_has_nothing_to_compare(tmp_path, cat):
    """A file of one site: the documented limit, no note (and no error)."""
    p = _air(tmp_path, "HNO3 [ug/m3]", 1 / FACTOR["HNO3"], "ridge", only="ridge")
    assert _notes(p, cat) == []
