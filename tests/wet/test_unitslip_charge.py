"""Calcium or magnesium in umol/L or ueq/L under a mg/L header (x 25 or 50; x 41 or 82
for Mg): the ion balance fails and the unit-slip note names the column, but the band
of the ion balance takes both readings of a divalent ion that is a small part of the
cations, so the note named one of the two by a tie-break (Ca in ueq/L at the demo's
ridge 2021 was named "umol/L", a reading that leaves Ca 2 x high). The note now names
both with their factors to mg/L.

Molar masses from periodictable (a general-purpose reference library): Ca 40.078,
Mg 24.305 g/mol.
"""
from pathlib import Path

import periodictable
import pytest

from workbench.io import read_precipitation, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _notes(tmp_path, cat, column, factor, site="ridge"):
    lines = (DEMO / "precipitation.csv").read_text().splitlines()
    head, rows = lines[0], [r for r in lines[1:] if r.startswith(f"{site},2021")]
    j = head.split(",").index(column)
    out = []
    for r in rows:
        c = r.split(",")
        if c[j] and not c[j].startswith("<"):
            c[j] = f"{float(c[j]) * factor:.5g}"
        out.append(",".join(c))
    p = tmp_path / "p.csv"
    p.write_text("\n".join([head] + out) + "\n")
    return [n for n in read_precipitation(p, cat)[1].notes if "header" in n]


@pytest.mark.parametrize("ion, element, unit, per_mg", [
    ("Ca", periodictable.Ca, "ueq/L", 2000), ("Ca", periodictable.Ca, "umol/L", 1000),
    ("Mg", periodictable.Mg, "ueq/L", 2000), ("Mg", periodictable.Mg, "umol/L", 1000),
])
def test_divalent_cation_names_both_readings(tmp_path, cat, ion, element, unit, per_mg):
    mass = element.mass                           # g/mol
    notes = _notes(tmp_path, cat, f"{ion} [mg/L]", per_mg / mass)
    assert len(notes) == 1, notes
    n = notes[0]
    assert n.startswith(f"p.csv: {ion} at ridge: "), n
    assert "with cations high; the values look like " in n, n
    assert ("umol/L or ueq/L under a mg/L header" in n
            or "ueq/L or umol/L under a mg/L header" in n), n
    assert ("for an ion of charge 2 the two readings are 2 x apart and the ion balance "
            "cannot tell them apart; ask the laboratory which it reports") in n, n
    # the factors back to mg/L: umol/L x M/1000, ueq/L x M/2000 (3 significant digits)
    assert f"umol/L x {mass / 1000:.3g}" in n and f"ueq/L x {mass / 2000:.3g}" in n, n


def test_monovalent_cation_names_one_reading(tmp_path, cat):
    """K in umol/L: umol/L and ueq/L are the same number, one reading named."""
    notes = _notes(tmp_path, cat, "K [mg/L]", 1000 / periodictable.K.mass)
    assert len(notes) == 1 and "look like umol/L under a mg/L header" in notes[0], notes
    assert " or " not in notes[0].split("; ", 1)[1], notes
