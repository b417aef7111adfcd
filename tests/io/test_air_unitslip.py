"""Unit slips of the air file that stay in range (workbench.io.airslip): one ledger note
per sampler (particle ion balance) or per pair of samplers (one gas at one site).

Cases built from the ridge filter pack of the invented demo network (pSO4 as ug S under
a species header, pNO3 as ug N, and the reverse), from invented tiny inputs (pNH4, whose
factor 1.29 needs an aerosol near a band edge), and from an invented passive NH3 / NO2
sampler beside the ridge filter pack (ppb vs ug/m3, species vs element basis).  The
clean demo gives no note; values are never changed.
"""
from pathlib import Path

import numpy as np
import pytest
import scipy.constants

from workbench.io import load_inputs, read_air, read_sites
from workbench.io.airslip import (BALANCE_BAND, MIN_PERIODS, MIN_SAMPLES, amount_per_number,
                                  gas_alternatives, overlap_means)
from workbench.units import ureg

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "air.csv").read_text().splitlines()
FIRST, HEAD = LINES[0], LINES[1]
COLS = HEAD.split(",")
RIDGE = [r for r in LINES[2:] if r.startswith("ridge,")]

# Molar masses from the IUPAC standard atomic weights (CIAAW abridged values, recalled
# from memory): H 1.008, N 14.007, O 15.999, S 32.06 [g/mol].
H, N, O, S = 1.008, 14.007, 15.999, 32.06
MOLAR_MASS = {"NH3": N + 3 * H, "SO2": S + 2 * O, "HNO3": H + N + 3 * O, "NO2": N + 2 * O,
              "SO4": S + 4 * O, "NO3": N + 3 * O, "NH4": N + 4 * H}
SO4_S, NO3_N, NH4_N = MOLAR_MASS["SO4"] / S, MOLAR_MASS["NO3"] / N, MOLAR_MASS["NH4"] / N


@pytest.fixture(scope="module")
def demo_cat():
    return read_sites(DEMO / "sites.toml")


def _scaled(head, rows, column, factor):
    j = head.split(",").index(column)
    out = []
    for r in rows:
        c = r.split(",")
        if c[j] and not c[j].startswith("<"):
            c[j] = f"{float(c[j]) * factor:.5g}"
        out.append(",".join(c))
    return out


def _read(tmp_path, cat, head, rows, first=FIRST):
    p = tmp_path / "a.csv"
    p.write_text("\n".join([first, head] + rows) + "\n")
    return read_air(p, cat)


def _notes(tmp_path, cat, head, rows):
    return _read(tmp_path, cat, head, rows)[1].notes


# ------------------------------------------------------------------ the factors
@pytest.mark.parametrize("gas, stated", [("NH3", 0.708), ("SO2", 2.66), ("HNO3", 2.62),
                                         ("NO2", 1.91)])
def test_ppb_factor_from_pint_and_codata(gas, stated):
    """1 ppb at 20 degC, 1013.25 hPa = M p / (R T) ug/m3: the ideal-gas law worked with
    pint's own molar gas constant and scipy.constants.R (CODATA 2018, 8.314462618
    J/(mol K)), with molar masses from the atomic weights above; the rounded values are
    those of common practice tables (0.708, 2.66, 2.62, 1.91 ug/m3 per ppb)."""
    p, t = ureg.Quantity(1013.25, "hPa"), ureg.Quantity(20.0, "degC").to("K")
    m = ureg.Quantity(MOLAR_MASS[gas], "g/mol")
    per_ppb = (1e-9 * p * m / (ureg.molar_gas_constant * t)).to("ug/m**3").magnitude
    codata = 1e-9 * 101325.0 * MOLAR_MASS[gas] / (scipy.constants.R * 293.15) * 1e6
    ours = amount_per_number("ppb", gas) / amount_per_number("ug/m3", gas)
    assert ours == pytest.approx(per_ppb, rel=1e-4)
    assert ours == pytest.approx(codata, rel=1e-4)
    assert round(ours, 3 if gas == "NH3" else 2) == stated


@pytest.mark.parametrize("sp, basis, factor", [("pSO4", "S", SO4_S), ("pNO3", "N", NO3_N),
                                               ("pNH4", "N", NH4_N), ("NH3", "N", 17.031 / N),
                                               ("SO2", "S", 64.058 / S)])
def test_element_basis_factor_is_the_molar_mass_ratio(sp, basis, factor):
    """x ug/m3 of the element is x * M(species)/M(element) ug/m3 of the species
    (pint converts the masses; molar masses as above)."""
    amount_el = (ureg.Quantity(1.0, "ug/m**3") / ureg.Quantity(
        {"S": S, "N": N}[basis], "g/mol")).to("mol/m**3").magnitude
    assert amount_per_number("ug/m3", sp, basis) == pytest.approx(amount_el, rel=1e-9)
    assert amount_per_number("ug/m3", sp, basis) / amount_per_number("ug/m3", sp) == \
        pytest.approx(factor, rel=2e-4)
    assert round(SO4_S, 2) == 3.00 and round(NO3_N, 2) == 4.43 and round(NH4_N, 2) == 1.29


def test_alternative_readings():
    assert gas_alternatives("NH3", "ug/m3") == [("ppb", None), ("ug/m3", "N")]
    assert gas_alternatives("NH3", "ug/m3", "N") == [("ppb", None), ("ug/m3", None)]
    assert gas_alternatives("SO2", "ng/m3") == [("ppt", None), ("ng/m3", "S")]
    assert gas_alternatives("O3", "ppb") == [("ug/m3", None)]
    assert gas_alternatives("NH3", "umol/m3") == []


def test_overlap_means_against_an_explicit_sum():
    """Weekly values averaged over 4-week periods: the time-weighted sum written out."""
    rng = np.random.default_rng(3)
    t0 = np.datetime64("2020-01-01T09:00")
    wk = np.timedelta64(7, "D")
    s = t0 + wk * np.arange(12)
    v = rng.uniform(1, 5, 12)
    v[5] = np.nan                                   # one week lost
    ls = t0 + np.timedelta64(2, "D") + 4 * wk * np.arange(3)
    le = ls + 4 * wk
    mean, cover = overlap_means(ls, le, s, s + wk, v)
    for j in range(3):
        o = np.clip(np.minimum(le[j], s + wk) - np.maximum(ls[j], s), np.timedelta64(0), None)
        o = o / np.timedelta64(1, "h")
        ok = np.isfinite(v)
        assert mean[j] == pytest.approx((o[ok] * v[ok]).sum() / o[ok].sum())
        assert cover[j] == pytest.approx(o[ok].sum() / (28 * 24))
    assert cover[2] < 1 and cover[0] == pytest.approx(1.0)


# ------------------------------------------------------------------ particle balance
def test_no_note_on_the_clean_demo(demo_cat):
    _, led = read_air(DEMO / "air.csv", demo_cat)
    assert led.notes == []


def test_band_is_stated():
    lo, hi, source = BALANCE_BAND
    assert lo < 1 < hi and "common practice" in source


@pytest.mark.parametrize("column, factor, words", [
    ("pSO4 [ug/m3]", 1 / SO4_S, ("pSO4 at ridge, sampler RDG-F1: ", "above 1.25",
                                 "look like ug/m3 as S under the species-basis header "
                                 "'pSO4 [ug/m3]'", "each amount is 2.996 x the one read")),
    ("pNO3 [ug/m3]", 1 / NO3_N, ("pNO3 at ridge, sampler RDG-F1: ", "above 1.25",
                                 "look like ug/m3 as N under the species-basis header "
                                 "'pNO3 [ug/m3]'", "each amount is 4.427 x the one read")),
])
def test_element_mass_under_a_species_header(tmp_path, demo_cat, column, factor, words):
    notes = _notes(tmp_path, demo_cat, HEAD, _scaled(HEAD, RIDGE, column, factor))
    assert len(notes) == 1, notes
    assert notes[0].startswith("a.csv: " + words[0]), notes
    for w in words[1:]:
        assert w in notes[0], notes
    assert notes[0].endswith("(values not changed)")


@pytest.mark.parametrize("old, new, words", [
    ("pSO4 [", "pSO4_as_S [", ("pSO4 at ridge", "below 0.5", "look like ug/m3 of SO4 under "
                               "the element-basis header 'pSO4_as_S [ug/m3]'", "0.3338 x")),
    ("pNO3 [", "pNO3_as_N [", ("pNO3 at ridge", "below 0.5", "look like ug/m3 of NO3 under "
                               "the element-basis header 'pNO3_as_N [ug/m3]'", "0.2259 x")),
])
def test_species_mass_under_an_element_header(tmp_path, demo_cat, old, new, words):
    notes = _notes(tmp_path, demo_cat, HEAD.replace(old, new), RIDGE)
    assert len(notes) == 1, notes
    for w in words:
        assert w in notes[0], notes


def test_counts_in_the_note(tmp_path, demo_cat):
    """The note's counts are those of the ratio worked here from the file's numbers."""
    rows = _scaled(HEAD, RIDGE, "pNO3 [ug/m3]", 1 / NO3_N)
    note = _notes(tmp_path, demo_cat, HEAD, rows)[0]
    cells = [r.split(",") for r in rows]
    col = {c: COLS.index(c) for c in ("pSO4 [ug/m3]", "pNO3 [ug/m3]", "pNH4 [ug/m3]")}
    ok = [c for c in cells if all(c[j] for j in col.values())]
    eq = {c: np.array([float(r[j]) for r in ok]) for c, j in col.items()}
    ratio = (eq["pNH4 [ug/m3]"] / MOLAR_MASS["NH4"]) / (
        2 * eq["pSO4 [ug/m3]"] / MOLAR_MASS["SO4"] + eq["pNO3 [ug/m3]"] / MOLAR_MASS["NO3"])
    assert f": {(ratio > 1.25).sum()} of {len(ok)} samples have" in note, note


def test_a_slip_in_a_few_rows_gives_no_note(tmp_path, demo_cat):
    rows = _scaled(HEAD, RIDGE[:100], "pNO3 [ug/m3]", 1 / NO3_N) + RIDGE[100:]
    assert _notes(tmp_path, demo_cat, HEAD, rows) == []


def test_too_few_evaluable_samples_give_no_note(tmp_path, demo_cat):
    rows = _scaled(HEAD, RIDGE, "pNO3 [ug/m3]", 1 / NO3_N)
    assert len(_notes(tmp_path, demo_cat, HEAD, rows[:MIN_SAMPLES])) == 1
    assert _notes(tmp_path, demo_cat, HEAD, rows[:MIN_SAMPLES - 1]) == []
    # many rows, but pNH4 below detection in all but a few: not evaluable
    j = COLS.index("pNH4 [ug/m3]")
    cut = [",".join(c[:j] + ["<0.05"] + c[j + 1:]) if k >= MIN_SAMPLES - 1 else ",".join(c)
           for k, c in enumerate(r.split(",") for r in rows)]
    assert _notes(tmp_path, demo_cat, HEAD, cut) == []


def test_values_are_not_changed(tmp_path, demo_cat):
    rows = _scaled(HEAD, RIDGE, "pSO4 [ug/m3]", 1 / SO4_S)
    ds, led = _read(tmp_path, demo_cat, HEAD, rows)
    assert len(led.notes) == 1
    j = COLS.index("pSO4 [ug/m3]")
    raw = np.array([float(r.split(",")[j]) if r.split(",")[j] else np.nan for r in rows])
    # ug/m3 of SO4 -> mol/m3, as written (no correction by the hint)
    assert np.allclose(ds["pSO4"].values, raw * 1e-9 / (MOLAR_MASS["SO4"] * 1e-3),
                       rtol=1e-6, equal_nan=True)


def _tiny(ratio, nh4_header="pNH4 [ug/m3]", n=16, scale=1.0, site="alpha", sampler="fp1"):
    """Weekly filter-pack rows of an invented aerosol with a given ammonium-to-anion
    ratio (sulfate 3 ug/m3, nitrate 2 ug/m3, lognormal scatter of 15 %)."""
    rng = np.random.default_rng(11)
    t = np.datetime64("2020-01-07T09:00") + np.timedelta64(7, "D") * np.arange(n + 1)
    so4 = 3.0 * np.exp(0.15 * rng.standard_normal(n))
    no3 = 2.0 * np.exp(0.15 * rng.standard_normal(n))
    anions = 2 * so4 / MOLAR_MASS["SO4"] + no3 / MOLAR_MASS["NO3"]           # [ueq/m3]
    nh4 = ratio * np.exp(0.05 * rng.standard_normal(n)) * anions * MOLAR_MASS["NH4"] * scale
    head = f"site,start,end,sampler_id,pSO4 [ug/m3],pNO3 [ug/m3],{nh4_header}"
    rows = [f"{site},{t[i]},{t[i + 1]},{sampler},{so4[i]:.4f},{no3[i]:.4f},{nh4[i]:.4f}"
            for i in range(n)]
    return head, rows


def test_nh4_as_n_under_a_species_header_in_acidic_aerosol(tmp_path, cat):
    """An aerosol at ratio 0.6 (acidic): pNH4 written as ug N reads 0.47, below the
    band; reading it as N brings it back. (At a ratio near 0.9 the factor 1.29 stays
    inside the band and nothing can be said: docs/data_formats.md.)"""
    head, rows = _tiny(0.6, scale=1 / NH4_N)
    notes = _notes(tmp_path, cat, head, rows)
    assert len(notes) == 1, notes
    assert notes[0].startswith("a.csv: pNH4 at alpha, sampler fp1: 16 of 16 samples"), notes
    assert "below 0.5" in notes[0] and "ug/m3 as N under the species-basis header " \
        "'pNH4 [ug/m3]'" in notes[0] and "1.288 x" in notes[0], notes
    # written as NH4 the same aerosol gives nothing
    assert _notes(tmp_path, cat, *_tiny(0.6)) == []


def test_nh4_mass_under_an_element_header_in_neutral_aerosol(tmp_path, cat):
    """Ratio 1.1 (neutralised): NH4 mass under pNH4_as_N reads 1.42.  Reading pSO4 or
    pNO3 in the other basis would bring the samples into the band too; the note names
    pNH4 (median back near 1) and lists the others."""
    head, rows = _tiny(1.1, nh4_header="pNH4_as_N [ug/m3]")
    notes = _notes(tmp_path, cat, head, rows)
    assert len(notes) == 1, notes
    assert notes[0].startswith("a.csv: pNH4 at alpha, sampler fp1: "), notes
    assert "look like ug/m3 of NH4 under the element-basis header 'pNH4_as_N [ug/m3]'" \
        in notes[0] and "0.7765 x" in notes[0], notes
    assert "reading pSO4 as ug/m3 as S would bring back" in notes[0], notes


def test_one_note_per_sampler(tmp_path, cat):
    head, a = _tiny(0.6, scale=1 / NH4_N)
    _, b = _tiny(0.6, scale=1 / NH4_N, site="beta", sampler="fp2")
    b = [r.replace("T09:00", "T09:00+00:00") for r in b]     # beta's labels are zoned
    notes = _notes(tmp_path, cat, head, a + b)
    assert [n.split(":")[1] for n in notes] == [" pNH4 at alpha, sampler fp1",
                                                " pNH4 at beta, sampler fp2"], notes


# ------------------------------------------------------------------ two samplers, one gas
def _passive(column, factor, sigma=0.08, years=("2016", "2017"), weeks=4, seed=1):
    """A second sampler at ridge (RDG-P1) of one gas over `weeks`-week periods: the
    filter pack's time-weighted mean times `factor`, with lognormal scatter."""
    rng = np.random.default_rng(seed)
    j = COLS.index(column)
    base = [r.split(",") for r in RIDGE if r[6:10] in years]
    out = []
    for k in range(0, len(base) - weeks + 1, weeks):
        w = base[k:k + weeks]
        v = np.mean([float(c[j]) for c in w]) * factor * np.exp(sigma * rng.standard_normal())
        c = [""] * len(COLS)
        c[:4] = ["ridge", w[0][1], w[-1][2], "RDG-P1"]
        c[j], c[-1] = f"{v:.4g}", "passive"
        out.append(",".join(c))
    return out


def test_no_note_for_two_samplers_that_agree(tmp_path, demo_cat):
    assert _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NH3 [ug/m3]", 1.0)) == []


def test_ppb_values_under_a_ug_header(tmp_path, demo_cat):
    """RDG-P1's NH3 written in ppb in the ug/m3 column: it reads 1/0.708 = 1.41 x."""
    per_ppb = amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3")
    notes = _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NH3 [ug/m3]", 1 / per_ppb))
    assert len(notes) == 1, notes
    n = notes[0]
    assert n.startswith("a.csv: NH3 at ridge: sampler RDG-P1 (periods of 28 days) reads "), n
    assert "x sampler RDG-F1 (7 days)" in n and "the ppb <-> ug/m3 factor of NH3 at 20 degC, " \
        "1013.25 hPa (1 ppb = 0.708 ug/m3" in n, n
    assert "RDG-P1's values look like ppb in the column 'NH3 [ug/m3]'" in n, n
    med = float(n.split(" reads ")[1].split(" x")[0])
    assert med == pytest.approx(1 / per_ppb, rel=0.06)


def test_the_slip_in_the_shorter_sampler(tmp_path, demo_cat):
    """The filter pack's values in ppb: the passive sampler reads 0.708 x it."""
    per_ppb = amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3")
    rows = _scaled(HEAD, RIDGE, "NH3 [ug/m3]", 1 / per_ppb)     # x ug/m3 is x/0.708 ppb
    notes = _notes(tmp_path, demo_cat, HEAD, rows + _passive("NH3 [ug/m3]", 1.0))
    # the passive sampler's values were made from the unscaled weekly values
    assert len(notes) == 1 and "RDG-F1's values look like ppb" in notes[0], notes


def test_element_basis_of_one_sampler(tmp_path, demo_cat):
    """RDG-P1's NH3 written as ug N/m3: it reads 14.007/17.031 = 0.822 x."""
    notes = _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NH3 [ug/m3]", N / 17.031))
    assert len(notes) == 1, notes
    assert "the ratio of the molar masses of NH3 and N (17.031/14.007 = 1.216)" in notes[0]
    assert "RDG-P1's values look like ug/m3 as N in the column 'NH3 [ug/m3]'" in notes[0]


def test_mass_values_under_a_ppb_header(tmp_path, demo_cat):
    """NO2 is a ppb column; RDG-P1 writes ug/m3 of NO2 (1.91 x the ppb number)."""
    per_ppb = amount_per_number("ppb", "NO2") / amount_per_number("ug/m3", "NO2")
    notes = _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NO2 [ppb]", per_ppb))
    assert len(notes) == 1, notes
    assert notes[0].startswith("a.csv: NO2 at ridge: sampler RDG-P1"), notes
    assert "1 ppb = 1.912 ug/m3" in notes[0], notes
    assert "RDG-P1's values look like ug/m3 of NO2 in the column 'NO2 [ppb]'" in notes[0]


def test_a_steady_ratio_of_no_unit_factor_gives_no_note(tmp_path, demo_cat):
    """A passive sampler reading a steady 1.6 x (its uptake rate, not a unit): no note,
    as documented (a method difference, not a slip of the file)."""
    assert _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NH3 [ug/m3]", 1.6)) == []
    assert _notes(tmp_path, demo_cat, HEAD, RIDGE + _passive("NH3 [ug/m3]", 1.1)) == []


def test_an_unsteady_ratio_gives_no_note(tmp_path, demo_cat):
    """The median at the factor, but the periods scattered far around it."""
    per_ppb = amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3")
    rows = _passive("NH3 [ug/m3]", 1 / per_ppb, sigma=0.6, seed=4)
    assert _notes(tmp_path, demo_cat, HEAD, RIDGE + rows) == []


def test_too_few_overlapping_periods_give_no_note(tmp_path, demo_cat):
    per_ppb = amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3")
    rows = _passive("NH3 [ug/m3]", 1 / per_ppb)
    assert len(_notes(tmp_path, demo_cat, HEAD, RIDGE + rows[:MIN_PERIODS])) == 1
    assert _notes(tmp_path, demo_cat, HEAD, RIDGE + rows[:MIN_PERIODS - 1]) == []


def test_gas_values_are_not_changed(tmp_path, demo_cat):
    per_ppb = amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3")
    rows = _passive("NH3 [ug/m3]", 1 / per_ppb)
    ds, led = _read(tmp_path, demo_cat, HEAD, RIDGE + rows)
    assert len(led.notes) == 1
    p1 = ds["sampler_id"].values == "RDG-P1"
    raw = np.array([float(r.split(",")[COLS.index("NH3 [ug/m3]")]) for r in rows])
    assert np.allclose(ds["NH3"].values[p1], raw * 1e-9 / (MOLAR_MASS["NH3"] * 1e-3), rtol=1e-6)


# ------------------------------------------------------------------ where the user sees it
def test_the_note_is_in_the_inputs_account(tmp_path, demo_cat):
    """load_inputs: the note is in the ledger notes, which `workbench run` prints
    (Inputs.describe), provenance.json keeps (input_notes) and report.html lists."""
    p = tmp_path / "a.csv"
    p.write_text("\n".join([FIRST, HEAD] + _scaled(HEAD, RIDGE, "pNO3 [ug/m3]", 1 / NO3_N))
                 + "\n")
    inp = load_inputs(DEMO / "sites.toml", air=p)
    notes = [n for n in inp.ledger.notes if "ammonium-to-anion" in n]
    assert len(notes) == 1
    assert notes[0] in inp.describe()


def test_docs_carry_the_factors_table():
    """docs/data_formats.md shows the factors the code tries, with their derivation."""
    from workbench.io.airslip import factors_table
    doc = (Path(__file__).resolve().parents[2] / "docs" / "data_formats.md").read_text()
    assert factors_table() in doc
    lo, hi, _ = BALANCE_BAND
    assert f"The band is {lo:g}-{hi:g}" in doc


# ------------------------------------------------- several particle columns as S and N
@pytest.mark.parametrize("columns,names", [
    (("pSO4", "pNO3"), "pSO4 and pNO3"),
    (("pSO4", "pNO3", "pNH4"), "pSO4, pNO3 and pNH4")])
def test_a_laboratory_reporting_as_s_and_n_is_named(tmp_path, demo_cat, columns, names):
    """Every particle ion (or the two anions) of ridge's filter pack as ug S/m3 and
    ug N/m3 under species headers. One column read back mends too few: before, no
    note at all for the two anions."""
    factor = {"pSO4": 1 / SO4_S, "pNO3": 1 / NO3_N, "pNH4": 1 / NH4_N}
    rows = RIDGE
    for sp in columns:
        rows = _scaled(HEAD, rows, f"{sp} [ug/m3]", factor[sp])
    notes = [n for n in _notes(tmp_path, demo_cat, HEAD, rows) if "ammonium-to-anion" in n]
    assert len(notes) == 1, notes
    assert notes[0].startswith(f"a.csv: {names} at ridge, sampler RDG-F1: "), notes
    assert "(a laboratory reporting the ions as S and N?)" in notes[0], notes
    assert f"pSO4 {SO4_S:.4g}, pNO3 {NO3_N:.4g}" in notes[0], notes


def test_one_particle_column_as_element_is_still_named_alone(tmp_path, demo_cat):
    """The several-column reading does not take the place of a one-column slip."""
    rows = _scaled(HEAD, RIDGE, "pNO3 [ug/m3]", 1 / NO3_N)
    notes = [n for n in _notes(tmp_path, demo_cat, HEAD, rows) if "ammonium-to-anion" in n]
    assert len(notes) == 1 and notes[0].startswith("a.csv: pNO3 at ridge"), notes
