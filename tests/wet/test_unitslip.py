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


# ------------------------------------------------------------ element basis, whole file
def _as_ueq(head, rows):
    """Every ion column of the rows in ueq/L, the headers left as they are (mg/L)."""
    import periodictable
    out = rows
    for col, formula, charge in [("SO4 [mg/L]", "SO4", 2), ("NO3_as_N [mg/L]", "N", 1),
                                 ("NH4_as_N [mg/L]", "N", 1), ("Cl [mg/L]", "Cl", 1),
                                 ("Na [mg/L]", "Na", 1), ("K [mg/L]", "K", 1),
                                 ("Ca [mg/L]", "Ca", 2), ("Mg [mg/L]", "Mg", 2)]:
        out = _scaled(head, out, col, charge * 1000 / periodictable.formula(formula).mass)
    return out


@pytest.mark.parametrize("ion,element", [("NO3", "N"), ("NH4", "N"), ("SO4", "S")])
def test_basis_factor_is_the_ratio_of_molar_masses(ion, element):
    """mg/L as N (or S) read where mg/L of the ion was meant; molar masses from the
    periodictable library (IUPAC atomic weights)."""
    import periodictable
    # amount read on the element's basis over the amount read as the ion
    ratio = periodictable.formula(ion).mass / periodictable.formula(element).mass
    assert _factor("mg/L", "mg/L", ion, None, element) == pytest.approx(ratio, rel=2e-4)
    assert _factor("mg/L", "mg/L", ion, element, None) == pytest.approx(1 / ratio, rel=2e-4)


def test_ion_mass_under_an_as_n_header_names_the_basis(tmp_path, cat, ridge):
    """Nitrate in mg NO3/L under 'NO3_as_N [mg/L]' (each amount 4.43 x too high): the
    note names the basis and its factor; before, it named umol/L (a reading that
    removes nitrate altogether, 71 x, and mends fewer samples)."""
    import periodictable
    head, rows = ridge
    rows = _scaled(head, rows, "NO3_as_N [mg/L]",
                   periodictable.formula("NO3").mass / periodictable.N.mass)
    notes = _notes(tmp_path, cat, head, rows)
    assert len(notes) == 1, notes
    assert notes[0].startswith("p.csv: NO3 at ridge: "), notes
    assert "with anions high; the values look like mg/L as NO3 under a header of mg/L as N " \
           "('NO3_as_N [mg/L]'; read so, each amount is 0.226 x the one read" in notes[0], notes
    assert "umol/L" not in notes[0], notes


def test_every_column_in_ueq_under_mg_headers(tmp_path, cat, ridge):
    """A whole file in ueq/L under mg/L headers scales both sums of the ion balance
    (most of ridge's samples still pass it) but not the conductivity: the conductivity
    check names the slip, with the median difference it saw."""
    head, rows = ridge
    notes = _notes(tmp_path, cat, head, _as_ueq(head, rows))
    assert len(notes) == 1, notes
    assert notes[0].startswith("p.csv: every ion column at ridge: "), notes
    assert "samples fail the conductivity check with the conductivity calculated from the " \
           "ions high (median +" in notes[0], notes
    assert "the values look like ueq/L under the headers' units ('SO4 [mg/L]', " \
           "'NO3_as_N [mg/L]', 'NH4_as_N [mg/L]', ...; read as ueq/L," in notes[0], notes


@pytest.mark.parametrize("factor", [0.1, 0.5, 2.0, 10.0])
def test_a_conductivity_meter_off_names_no_ion_column(tmp_path, cat, ridge, factor):
    """False alarms: a conductivity off by a factor (a meter's calibration, mS/m for
    uS/cm) fails the check at every sample, but no reading of the ion columns mends it:
    no note. (On the whole demo, conductivity x0.1, 0.5, 0.7, 1.5, 2, 10 and every ion
    value times a lognormal factor of sd 0.2 or 0.4, three draws each: 0 notes in 48
    site records.)"""
    head, rows = ridge
    assert _notes(tmp_path, cat, head, _scaled(head, rows, "conductivity [uS/cm]", factor)) == []


# ------------------------------------------- the other basis below the site-wide share
BASIS_NOTE = "failing samples pass"      # words of the note below the site-wide share


@pytest.mark.parametrize("ion,element,header", [("NO3", "N", "NO3 [mg/L]"),
                                                ("NH4", "N", "NH4 [mg/L]"),
                                                ("SO4", "S", "SO4 [mg/L]")])
def test_other_basis_trial_is_the_ratio_of_molar_masses(ion, element, header):
    """The reading tried for a column of the ion holding the element: each amount is
    M(ion) / M(element) x the one read (62/14 nitrate, 18/14 ammonium, 96/32 sulfate);
    molar masses from the periodictable library (IUPAC atomic weights)."""
    import periodictable
    from workbench.wet.unitslip import _basis_trials
    trials = list(_basis_trials([(ion, header, "mg/L", None)]))
    assert len(trials) == 1
    ratio = periodictable.formula(ion).mass / periodictable.formula(element).mass
    assert trials[0][0][ion] == pytest.approx(ratio, rel=2e-4)
    assert f"as {element} under a header of mg/L as {ion}" in trials[0][2]


def _ridge_ib(tmp_path, cat, head, rows):
    from workbench.wet import screen
    p = tmp_path / "p.csv"
    p.write_text("\n".join([head] + rows) + "\n")
    ds, led = read_precipitation(p, cat)
    return ds, led, screen(ds)["ion_balance_check"].values


def test_nitrate_as_n_under_an_ion_header_is_named(tmp_path, cat, ridge):
    """mg N/L under 'NO3 [mg/L]' (each amount 0.226 x the nitrate's): 51 of ridge's 412
    samples fail the ion balance, under the site-wide share; the note names the column,
    the basis and the factor, and says the values stay as read (they and the flags are
    those of the file without the note; before: no note at all)."""
    head, rows = ridge
    head = head.replace("NO3_as_N [mg/L]", "NO3 [mg/L]")
    ds, led, ib = _ridge_ib(tmp_path, cat, head, rows)
    notes = [n for n in led.notes if "header" in n]
    assert len(notes) == 1, notes
    n_fail = int((ib == "fail").sum())
    assert 0 < n_fail < 0.5 * int((ib != "not evaluated").sum())
    assert notes[0].startswith(f"p.csv: NO3 at ridge: {n_fail} of "), notes
    assert "the values look like mg/L as N under a header of mg/L as NO3 ('NO3 [mg/L]'; " \
           "read so, each amount is 4.43 x the one read" in notes[0], notes
    assert "check which the laboratory reports" in notes[0], notes
    assert "values used as read, the samples stay flagged" in notes[0], notes
    # the values are those of the header (mg NO3/L), not converted
    import periodictable
    j = head.split(",").index("NO3 [mg/L]")
    raw = np.array([float(r.split(",")[j]) if r.split(",")[j] else np.nan for r in rows])
    mol_m3 = raw / periodictable.formula("NO3").mass          # mg/L = g/m3
    assert np.allclose(ds["NO3"].values, mol_m3, rtol=1e-6, equal_nan=True)


def test_sulfate_as_s_under_an_ion_header_is_named(tmp_path, cat, ridge):
    """mg S/L under 'SO4 [mg/L]' (x 32/96 by periodictable's molar masses): the note
    names the factor 3 and the basis; the failing samples stay flagged (before: no
    note)."""
    import periodictable
    head, rows = ridge
    rows = _scaled(head, rows, "SO4 [mg/L]",
                   periodictable.S.mass / periodictable.formula("SO4").mass)
    ds, led, ib = _ridge_ib(tmp_path, cat, head, rows)
    notes = [n for n in led.notes if "header" in n]
    assert len(notes) == 1, notes
    n_fail = int((ib == "fail").sum())
    assert n_fail > 20
    assert notes[0].startswith(f"p.csv: SO4 at ridge: {n_fail} of "), notes
    assert "the values look like mg/L as S under a header of mg/L as SO4 ('SO4 [mg/L]'; " \
           "read so, each amount is 3 x the one read" in notes[0], notes
    assert BASIS_NOTE in notes[0]


def test_nitrate_as_n_in_the_whole_demo(tmp_path, cat):
    """The whole demo's nitrate (mg N/L) under 'NO3 [mg/L]': one note at each site
    where the reading mends at least BASIS_MIN_MENDED samples (farm 65, fell 36, ridge
    51 failing); none at mere, where 2 samples fail (too few to tell a factor)."""
    lines = (DEMO / "precipitation.csv").read_text().splitlines()
    notes = _notes(tmp_path, cat, lines[0].replace("NO3_as_N [mg/L]", "NO3 [mg/L]"),
                   lines[1:])
    assert [n.split(":")[1] for n in notes] == [" NO3 at farm", " NO3 at fell",
                                                " NO3 at ridge"], notes
    assert all(BASIS_NOTE in n and "4.43 x the one read" in n for n in notes), notes
    from workbench.wet.unitslip import BASIS_MIN_MENDED
    assert BASIS_MIN_MENDED > 2


@pytest.mark.parametrize("sd", [0.2, 0.4])
def test_lognormal_noise_on_every_ion_gives_no_note(tmp_path, cat, sd):
    """False alarms: the whole demo with each ion value times exp(N(0, sd)), three
    draws (12 site records) for each sd: no unit-slip note of any kind (the audit's
    48 site records, with the conductivity factors above; benchmarks/basis_slip_alarms.py
    measures more draws and the detection)."""
    lines = (DEMO / "precipitation.csv").read_text().splitlines()
    head = lines[0].split(",")
    ions = [j for j, h in enumerate(head) if h.split(" [")[0] in
            ("SO4", "NO3_as_N", "NH4_as_N", "Cl", "Na", "K", "Ca", "Mg")]
    rng = np.random.default_rng(2026_12_05 + int(sd * 10))
    for _ in range(3):
        out = [lines[0]]
        for r in lines[1:]:
            c = r.split(",")
            for j in ions:
                if c[j] and not c[j].startswith("<"):
                    c[j] = f"{float(c[j]) * np.exp(rng.normal(0.0, sd)):.5g}"
            out.append(",".join(c))
        assert _notes(tmp_path, cat, out[0], out[1:]) == []
