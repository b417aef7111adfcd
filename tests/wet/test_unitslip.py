"""The unit-slip hint (workbench.wet.unitslip): a column in another unit than its header
makes most samples of a site fail one check together; one note names the likely slip.

Cases built from the ridge 2021 samples of the invented demo network: SO4 in ueq/L
under a [mg/L] header, SO4 in mg/L under [ueq/L], gauge depth in cm under [mm]; and
no hint on the demo as shipped.
"""
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_precipitation, read_sites
from workbench.wet.unitslip import _factor

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="module")
def ridge():
    lines = (DEMO / "precipitation.csv").read_text().splitlines()
    return lines[0], [r for r in lines[1:] if r.startswith("ridge,2021")]


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _scaled(head, rows, column, factor, only=None):
    j = head.split(",").index(column)
    out = []
    for k, r in enumerate(rows):
        c = r.split(",")
        if c[j] and not c[j].startswith("<") and (only is None or k < only):
            c[j] = f"{float(c[j]) * factor:.5g}"
        out.append(",".join(c))
    return out


def _notes(tmp_path, cat, head, rows):
    p = tmp_path / "p.csv"
    p.write_text("\n".join([head] + rows) + "\n")
    return [n for n in read_precipitation(p, cat)[1].notes if "header" in n]


# Equivalent weights from the molar mass and the charge, with the IUPAC standard atomic
# weights (CIAAW, abridged values, recalled from memory): H 1.008, N 14.007, O 15.999,
# Na 22.990, Mg 24.305, S 32.06, Cl 35.45, K 39.098, Ca 40.078 [g/mol].
EQUIVALENT_WEIGHT = {             # g/eq = molar mass / |charge|
    "SO4": (32.06 + 4 * 15.999) / 2,
    "NO3": (14.007 + 3 * 15.999) / 1,
    "NH4": (14.007 + 4 * 1.008) / 1,
    "Cl": 35.45, "Na": 22.990, "K": 39.098,
    "Ca": 40.078 / 2, "Mg": 24.305 / 2,
}


@pytest.mark.parametrize("ion", list(EQUIVALENT_WEIGHT))
def test_slip_factor_is_the_equivalent_weight(ion):
    """x ueq/L read where x mg/L was meant: the amount is off by eq. weight / 1000."""
    ew = EQUIVALENT_WEIGHT[ion]
    assert _factor("mg/L", "ueq/L", ion) == pytest.approx(ew / 1000, rel=2e-4)
    assert _factor("ueq/L", "mg/L", ion) == pytest.approx(1000 / ew, rel=2e-4)


def test_depth_factor():
    assert _factor("mm", "cm", None) == pytest.approx(10.0)
    assert _factor("cm", "mm", None) == pytest.approx(0.1)


def test_no_hint_on_the_demo(tmp_path, cat):
    _, led = read_precipitation(DEMO / "precipitation.csv", cat)
    assert not [n for n in led.notes if "header" in n], led.notes


def test_no_hint_on_the_clean_subset(tmp_path, cat, ridge):
    assert _notes(tmp_path, cat, *ridge) == []


def test_ueq_under_mg_header(tmp_path, cat, ridge):
    head, rows = ridge
    rows = _scaled(head, rows, "SO4 [mg/L]", 1000 / EQUIVALENT_WEIGHT["SO4"])
    notes = _notes(tmp_path, cat, head, rows)
    assert len(notes) == 1, notes
    assert notes[0].startswith("p.csv: SO4 at ridge: "), notes
    assert "samples fail the ion balance, all with anions high; the values look like ueq/L " \
           "under a mg/L header ('SO4 [mg/L]'" in notes[0], notes


def test_mg_under_ueq_header(tmp_path, cat, ridge):
    head, rows = ridge
    notes = _notes(tmp_path, cat, head.replace("SO4 [mg/L]", "SO4 [ueq/L]"), rows)
    assert len(notes) == 1, notes
    assert "SO4 at ridge" in notes[0] and "all with cations high" in notes[0], notes
    assert "the values look like mg/L under a ueq/L header" in notes[0], notes


def test_cm_under_mm_header(tmp_path, cat, ridge):
    head, rows = ridge
    rows = _scaled(head, rows, "gauge_depth [mm]", 0.1)
    notes = _notes(tmp_path, cat, head, rows)
    assert len(notes) == 1, notes
    assert notes[0].startswith("p.csv: gauge depth at ridge: "), notes
    assert "fail the capture check, all with the capture ratio high; the values look like " \
           "cm under a mm header ('gauge_depth [mm]'" in notes[0], notes


def test_counts_in_the_note_match_the_screening(tmp_path, cat, ridge):
    """The note's counts are those of workbench.wet.screen (ion balance fails)."""
    from workbench.wet import screen
    head, rows = ridge
    rows = _scaled(head, rows, "SO4 [mg/L]", 1000 / EQUIVALENT_WEIGHT["SO4"])
    p = tmp_path / "p.csv"
    p.write_text("\n".join([head] + rows) + "\n")
    ds, led = read_precipitation(p, cat)
    scr = screen(ds)
    k = int((scr["ion_balance_check"].values == "fail").sum())
    n_eval = int((scr["ion_balance_check"].values != "not evaluated").sum())
    note = [n for n in led.notes if "header" in n][0]
    assert f": {k} of {n_eval} samples fail the ion balance" in note, (note, k, n_eval)


def test_a_few_slipped_rows_give_no_hint(tmp_path, cat, ridge):
    """Below the threshold (more than half of the site's samples) no note: the rows are
    flagged one by one as before."""
    head, rows = ridge
    rows = _scaled(head, rows, "SO4 [mg/L]", 1000 / EQUIVALENT_WEIGHT["SO4"],
                   only=len(rows) // 3)
    assert _notes(tmp_path, cat, head, rows) == []


def test_values_are_not_changed(tmp_path, cat, ridge):
    head, rows = ridge
    p = tmp_path / "p.csv"
    p.write_text("\n".join([head] + _scaled(head, rows, "gauge_depth [mm]", 0.1)) + "\n")
    ds, _ = read_precipitation(p, cat)
    g = ds["gauge_depth"].values
    raw = np.array([float(r.split(",")[4]) * 0.1 for r in rows])
    assert np.allclose(g, np.round(raw, 3), rtol=1e-4, equal_nan=True)
