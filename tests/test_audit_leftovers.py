"""Leftovers of the wet, budget and dry-output audit (2026-12, branch qc-audit).

Every expected value is worked out here by hand (numpy or arithmetic) from a named
source, never by calling the code under test for it.  Sites, dates and concentrations
are invented.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))

from workbench import species as _species  # noqa: E402
from workbench import units as _units  # noqa: E402

# IUPAC standard atomic weights, abridged, conventional values for the elements given as
# intervals (from memory; Prohaska et al. 2022, Pure Appl. Chem. 94, 573) [g mol-1]
IUPAC_FROM_MEMORY = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Na": 22.990,
                     "Mg": 24.305, "S": 32.06, "Cl": 35.45, "K": 39.098, "Ca": 40.078}


# ---------------------------------------------------------------- 5. one source of constants
def test_atomic_weights_are_the_iupac_standard_values():
    # from memory (above); periodictable and molmass check the formula masses elsewhere
    # (tests/test_species.py)
    for el, w in IUPAC_FROM_MEMORY.items():
        assert _species.ATOMIC_WEIGHT[el] == pytest.approx(w, abs=5e-4), el
        assert _species.element_molar_mass(el) == pytest.approx(w * 1e-3, abs=5e-7)


def test_unit_factors_come_from_pint():
    # SI prefixes and the hectare (BIPM SI Brochure, 9th ed., Tables 7 and 8)
    assert _units.UG_PER_KG == 1e9 and _units.M2_PER_HA == 1e4 and _units.MM_PER_M == 1e3


def test_total_nitrate_in_ug_n_follows_the_species_table(tmp_path, monkeypatch):
    # HNO3 + pNO3 as ug N/m3 in summary.csv (budget.derived): the molar mass of N is read
    # from the species table (one source), not written by hand (it was 14.007e-3 * 1e9
    # in budget.py): with N at 15.000 g/mol the figure scales by 15.000 / 14.007
    from test_budget import _write

    from workbench.budget import derived
    from workbench.cli import run_scenario
    sc = _write(tmp_path)
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[1] += ",pNO3 [ug/m3]"
    lines[2:] = [ln + ",1.0" for ln in lines[2:]]
    air.write_text("\n".join(lines) + "\n")
    sc.write_text(sc.read_text().replace("SO2 = 0.5", "SO2 = 0.5\npNO3 = 0.2"))
    _, result, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    base = derived(result.budget)["total_nitrate_ug_N_m3"].values
    # by hand: HNO3 0.5, 0.6, 0.4, 0.5 ug/m3 (63.012 g/mol, from memory of IUPAC) and
    # pNO3 1.0 ug/m3 (62.004 g/mol) each week, as N (14.007)
    hno3 = np.mean([0.5, 0.6, 0.4, 0.5]) / 63.012 * 14.007
    assert base.ravel()[0] == pytest.approx(hno3 + 1.0 / 62.004 * 14.007, rel=1e-3)
    monkeypatch.setitem(_species.ATOMIC_WEIGHT, "N", 15.0)
    moved = derived(result.budget)["total_nitrate_ug_N_m3"].values
    np.testing.assert_allclose(moved, base * 15.0 / 14.007, rtol=1e-12)
