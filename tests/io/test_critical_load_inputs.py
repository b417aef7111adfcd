"""Critical loads as users type them in sites.toml: unit slips, impossible or doubtful
functions, text and units in the value.  Each case gives one located error or one
located hint (file, line, key, value); docs/data_formats.md, "Critical loads"."""
import pytest

from workbench.errors import InputError
from workbench.io import read_sites
from workbench.io.critical_loads import PLAUSIBLE_EQ_HA_YR, eq_per_kg

from tiny_inputs import alpha_site

SITE = alpha_site("moorland") + "\n[site.critical_loads]\n"
#: line of the first key under [site.critical_loads]
FIRST = 15
GOOD = "cl_max_s = 900.0\ncl_min_n = 300.0\ncl_max_n = 1500.0\ncl_nut_n = 700.0\n"


def _read(tmp_path, body):
    p = tmp_path / "sites.toml"
    p.write_text(SITE + body, encoding="utf-8")
    return read_sites(p)


def test_eq_per_kg_from_molar_masses_periodictable_molmass():
    """1 kg N = 1000/14.007 mol = 71.4 eq (1 eq per mol N); 1 kg S = 1000/32.06 mol =
    31.2 mol = 62.4 eq (2 eq per mol S as sulfate).  The molar masses of periodictable and
    molmass (reference libraries); bound 5e-4: molmass gives S 32.0648, the centre of the
    IUPAC interval [32.059, 32.076], the code the abridged 32.06."""
    pt = pytest.importorskip("periodictable")
    mm = pytest.importorskip("molmass")
    assert eq_per_kg("N") * 1e-3 == pytest.approx(1.0 / pt.N.mass, rel=5e-4)
    assert eq_per_kg("S") * 1e-3 == pytest.approx(2.0 / pt.S.mass, rel=5e-4)
    assert eq_per_kg("N") * 1e-3 == pytest.approx(1.0 / mm.Formula("N").mass, rel=5e-4)
    assert eq_per_kg("S") * 1e-3 == pytest.approx(2.0 / mm.Formula("S").mass, rel=5e-4)
    assert round(eq_per_kg("N"), 1) == 71.4 and round(eq_per_kg("S"), 1) == 62.4


def test_plausible_loads_give_no_hint(tmp_path):
    cat = _read(tmp_path, GOOD)
    assert cat["alpha"].critical_loads["cl_nut_n"] == 700.0
    assert cat.notes == []


@pytest.mark.parametrize("body, line, key, words", [
    # nutrient N typed in kg N/ha/yr: 10 kg N = 714 eq
    (GOOD.replace("cl_nut_n = 700.0", "cl_nut_n = 10"), FIRST + 3, "cl_nut_n",
     ["below 50 eq/ha/yr", "in kg N/ha/yr (1 kg N = 71.4 eq) it is 713.9 eq/ha/yr"]),
    # CLmaxS typed in kg S/ha/yr: 15 kg S = 936 eq
    (GOOD.replace("cl_max_s = 900.0", "cl_max_s = 15"), FIRST, "cl_max_s",
     ["in kg S/ha/yr (1 kg S = 62.4 eq) it is 935.7 eq/ha/yr"]),
    # typed in keq/ha/yr: only the reading that lands in the plausible range is offered
    (GOOD.replace("cl_max_s = 900.0", "cl_max_s = 0.7"), FIRST, "cl_max_s",
     ["in keq/ha/yr (1 keq = 1000 eq) it is 700 eq/ha/yr"]),
    # typed in g N/ha/yr
    (GOOD.replace("cl_nut_n = 700.0", "cl_nut_n = 150000.0"), FIRST + 3, "cl_nut_n",
     ["above 20000 eq/ha/yr", "in g N/ha/yr"]),
])
def test_unit_slip_gives_a_located_hint(tmp_path, body, line, key, words):
    cat = _read(tmp_path, body)
    assert len(cat.notes) == 1, cat.notes
    note = cat.notes[0]
    assert "sites.toml" in note and f"line {line}" in note and f"column '{key}'" in note
    assert "site 'alpha'" in note and "doubtful critical load" in note
    for w in words:
        assert w in note
    if "keq" in words[0]:
        assert "kg S" not in note              # 0.7 kg S = 44 eq is no plausible reading


def test_unit_slip_in_a_receptor_table_names_its_line(tmp_path):
    cat = _read(tmp_path, GOOD + "\n[site.critical_loads.moorland]\ncl_nut_n = 5.0\n")
    assert len(cat.notes) == 1
    assert f"line {FIRST + 6}" in cat.notes[0]
    assert "[site.critical_loads.moorland]" in cat.notes[0]


def test_zero_is_not_a_unit_slip(tmp_path):
    """0 is a possible load (e.g. CLminN); only the function rule below may note it."""
    cat = _read(tmp_path, GOOD.replace("cl_min_n = 300.0", "cl_min_n = 0.0"))
    assert cat.notes == []


@pytest.mark.parametrize("body, line, words", [
    # CLmaxS = 0 with CLmaxN > CLminN: the simple mass balance gives CLmaxN = CLminN
    ("cl_max_s = 0.0\ncl_min_n = 300.0\ncl_max_n = 1500.0\n", FIRST,
     ["cl_max_s = 0 with cl_max_n above cl_min_n", "got '0.0'"]),
    # CLmaxN - CLminN < CLmaxS: impossible under the simple mass balance
    ("cl_max_s = 1400.0\ncl_min_n = 300.0\ncl_max_n = 1000.0\n", FIRST + 2,
     ["cl_max_n - cl_min_n = 700 is below cl_max_s = 1400",
      "expected cl_max_n >= cl_min_n + cl_max_s = 1700 eq/ha/yr"]),
])
def test_doubtful_function_gives_a_located_hint(tmp_path, body, line, words):
    cat = _read(tmp_path, body)
    assert len(cat.notes) == 1, cat.notes
    assert f"line {line}" in cat.notes[0] and "doubtful critical load function" in cat.notes[0]
    for w in words:
        assert w in cat.notes[0]


def test_zero_function_consistent_when_cl_max_n_equals_cl_min_n(tmp_path):
    cat = _read(tmp_path, "cl_max_s = 0.0\ncl_min_n = 300.0\ncl_max_n = 300.0\n")
    assert cat.notes == []


def test_nutrient_load_above_cl_max_n_is_allowed(tmp_path):
    """Documented rule: CLnutN and the acidity function protect against different
    effects, either may be the lower (docs/data_formats.md)."""
    cat = _read(tmp_path, GOOD.replace("cl_nut_n = 700.0", "cl_nut_n = 1800.0"))
    assert cat.notes == [] and cat["alpha"].critical_loads["cl_nut_n"] == 1800.0


@pytest.mark.parametrize("value, line_words", [
    ("-5.0", ["bad critical load: negative value", "got '-5.0'"]),
    ("nan", ["bad critical load: not finite", "leave the key out"]),
    ("inf", ["bad critical load: not finite"]),
    ('"900"', ["text, not a number", "a number without quotes"]),
    ('"900 eq/ha/yr"', ["written with a unit ('eq/ha/yr')", "e.g. cl_max_s = 900"]),
    ('"14 kg S/ha/yr"', ["written with a unit ('kg S/ha/yr')",
                         "multiply by 62.4 (14 kg S = 873.4 eq)"]),
    ("true", ["not a number"]),
])
def test_bad_values_give_one_located_error(tmp_path, value, line_words):
    with pytest.raises(InputError) as exc:
        _read(tmp_path, GOOD.replace("cl_max_s = 900.0", f"cl_max_s = {value}"))
    msg = str(exc.value)
    assert "sites.toml" in msg and f"line {FIRST}" in msg and "column 'cl_max_s'" in msg
    for w in line_words:
        assert w in msg


def test_text_in_a_receptor_table_is_located(tmp_path):
    with pytest.raises(InputError) as exc:
        _read(tmp_path, GOOD + '\n[site.critical_loads.moorland]\ncl_nut_n = "500 eq"\n')
    assert f"line {FIRST + 6}" in str(exc.value)
    assert "bad critical load in [site.critical_loads.moorland]: written with a unit" in str(exc.value)


def test_receptor_table_for_a_surface_the_site_lacks(tmp_path):
    with pytest.raises(InputError) as exc:
        _read(tmp_path, GOOD + "\n[site.critical_loads.wetland]\ncl_nut_n = 500.0\n")
    assert f"line {FIRST + 5}" in str(exc.value)
    assert "receptor the site does not have: got 'wetland'" in str(exc.value)


def test_hints_reach_the_ledger_notes(tmp_path):
    """The hints are what the user reads: the run's input notes (summary, report,
    provenance)."""
    from workbench.io import load_inputs
    p = tmp_path / "sites.toml"
    p.write_text(SITE + GOOD.replace("cl_nut_n = 700.0", "cl_nut_n = 10"), encoding="utf-8")
    inputs = load_inputs(p)
    assert any("cl_nut_n = 10" in n and "kg N" in n for n in inputs.ledger.notes)


def test_plausible_range_brackets_the_demo_loads():
    """The invented demo's loads give no hint, and 5-30 kg N/ha/yr, the span of
    empirical nutrient-N loads (Bobbink and Hettelingh 2011; from memory), lies inside
    the plausible range."""
    from pathlib import Path
    lo, hi = PLAUSIBLE_EQ_HA_YR
    assert lo <= 5 * eq_per_kg("N") and 30 * eq_per_kg("N") <= hi
    cat = read_sites(Path(__file__).parents[2] / "demo_data" / "sites.toml")
    assert not [n for n in cat.notes if "critical load" in n]


def test_scenario_override_does_not_repeat_or_misplace_the_hint(tmp_path):
    """A scenario overriding another key of a site with a doubtful load: the hint came
    again, pinned on the override's line (canopy_height_m); the catalogue's note stays
    the only one."""
    from workbench.scenario import load_scenario
    p = tmp_path / "sites.toml"
    p.write_text(SITE + GOOD.replace("cl_nut_n = 700.0", "cl_nut_n = 10"), encoding="utf-8")
    s = tmp_path / "scenario.toml"
    s.write_text('[inputs]\nsites = "sites.toml"\n\n[sites.alpha]\ncanopy_height_m = 0.2\n',
                 encoding="utf-8")
    assert load_scenario(s).notes == []
    assert len(read_sites(p).notes) == 1


def test_a_table_typed_in_kg_gets_one_note_per_value_and_no_false_function_note(tmp_path):
    """A table typed in kg/ha/yr without its unit line: CLmaxS 15.2 kg S, CLminN 5 and
    CLmaxN 19.9 kg N (948.2, 357.1 and 1420.7 eq by 62.4 and 71.4 eq/kg, periodictable's
    molar masses; a function the simple mass balance can give: 1420.7 - 357.1 >= 948.2).
    Each value had its located unit note, and a fifth note compared the function as
    written, kg S against kg N ("cl_max_n - cl_min_n = 14.9 is below cl_max_s = 15.2 ...
    values swapped"): a false alarm pointing away from the slip.  A function with a value
    in the plausible range keeps its own note (the g S case of test_ecosystem_trial)."""
    cat = _read(tmp_path, "cl_max_s = 15.2\ncl_min_n = 5.0\ncl_max_n = 19.9\n")
    assert len(cat.notes) == 3, cat.notes
    for line, key in zip(range(FIRST, FIRST + 3), ("cl_max_s", "cl_min_n", "cl_max_n")):
        (note,) = [n for n in cat.notes if f"line {line}, column '{key}'" in n]
        assert "a unit slip?" in note
    assert not any("doubtful critical load function" in n for n in cat.notes)
    assert 15.2 * eq_per_kg("S") <= 19.9 * eq_per_kg("N") - 5.0 * eq_per_kg("N")
    # declared in kg, the same numbers read without any note
    assert _read(tmp_path, 'unit = "kg/ha/yr"\ncl_max_s = 15.2\ncl_min_n = 5.0\n'
                 "cl_max_n = 19.9\n").notes == []
    # a forgotten key is still said beside the unit notes
    notes = _read(tmp_path, "cl_max_s = 15.2\ncl_max_n = 19.9\n").notes
    assert any("without cl_min_n" in n for n in notes), notes


def test_swapped_cl_min_n_and_cl_max_n_are_one_located_error_naming_the_swap(tmp_path):
    """CLminN and CLmaxN typed the other way round (1500 and 300): one located error at
    cl_max_n's line with both readings; the message said only what is expected, not
    that the two read the other way round make a function.  A CLmaxN below a CLminN
    of another table is no swap and keeps the plain message."""
    with pytest.raises(InputError) as exc:
        _read(tmp_path, GOOD.replace("cl_min_n = 300.0", "cl_min_n = 1500.0")
              .replace("cl_max_n = 1500.0", "cl_max_n = 300.0"))
    msg = str(exc.value)
    assert msg.count("sites.toml") == 1 and f"line {FIRST + 2}, column 'cl_max_n'" in msg
    assert "cl_max_n below cl_min_n: got '300.0'" in msg
    assert "swapped? cl_min_n = 300 and cl_max_n = 1500 would be a function" in msg
    with pytest.raises(InputError) as exc:
        _read(tmp_path, GOOD + "\n[site.critical_loads.moorland]\ncl_max_n = 200.0\n")
    assert "swapped?" not in str(exc.value)
    assert "expected cl_max_n >= cl_min_n = 300 eq/ha/yr" in str(exc.value)
