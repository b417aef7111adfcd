"""Flag words of the precipitation file and the optional mapping file of a lab's codes.

The lab codes below (K1, LD, tr, ...) are invented for these tests.
"""
import numpy as np
import pytest

from workbench import flags
from workbench.errors import InputError, ScenarioError
from workbench.io import read_precipitation, read_sites
from workbench.scenario import load_scenario, load_scenario_inputs
from workbench.wet import screen

from tiny_inputs import PRECIP, SITES

HEAD = PRECIP.splitlines()[0]
WEEKS = ["2020-01-09T14:00", "2020-01-16T14:00", "2020-01-23T14:00", "2020-01-30T14:00",
         "2020-02-06T14:00"]
MAP = """\
# invented lab codes of the Nettlebury laboratory
[codes]
K1 = "contaminated"
LD = "lid_open"
"tr" = "trace"
EST2 = ["depth_estimated", "contaminated"]
ok = []
"""


def _rows(flag_cells):
    return [f"alpha,{a},{b},w1,12.0,11.0,4.8,20.0,1.5,0.3,25.0,1.0,0.6,{f}"
            for a, b, f in zip(WEEKS, WEEKS[1:], flag_cells)]


@pytest.fixture
def cat(write):
    return read_sites(write("sites.toml", SITES))


def _precip(write, flag_cells):
    return write("p.csv", HEAD + "\n" + "\n".join(_rows(flag_cells)) + "\n")


def _error(fn, *args, **kw):
    with pytest.raises(InputError) as exc:
        fn(*args, **kw)
    return exc.value


def test_words_are_read_as_written(write, cat):
    p = _precip(write, ["contaminated", "gauge_failed;depth_estimated", "",
                        "\"trace, overflow\""])
    ds, _ = read_precipitation(p, cat)
    assert ds["flags"].values.tolist() == ["contaminated", "gauge_failed depth_estimated", "",
                                           "trace overflow"]


@pytest.mark.parametrize("code", ["C", "T", "G", "Contaminated", "lid-open"])
def test_letter_and_misspelt_codes_are_refused_without_a_map(write, cat, code):
    p = _precip(write, ["", "", code, ""])
    e = _error(read_precipitation, p, cat)
    assert (e.line, e.column, e.value) == (4, "flags", code)
    msg = str(e)
    assert msg.startswith(f"{p}, line 4, column 'flags': unknown flag code: got '{code}', expected "
                          "one of the flag words contaminated, lid_open, trace, not_analysed, "
                          "overflow, sample_lost, gauge_failed, invalid_record, depth_estimated")
    assert "mapping file" in msg and "flag_map" in msg


def test_map_translates_lab_codes_and_the_screen_acts_on_them(write, cat):
    m = write("lab_codes.toml", MAP)
    p = _precip(write, ["K1", "EST2 tr", "ok", "LD; gauge_failed"])
    ds, ledger = read_precipitation(p, cat, flag_map=m)
    assert ds["flags"].values.tolist() == ["contaminated", "depth_estimated contaminated trace",
                                           "", "lid_open gauge_failed"]
    note = [n for n in ledger.notes if "translated" in n]
    assert note == ["p.csv: lab flag codes translated with lab_codes.toml: K1 -> contaminated "
                    "(1 row), EST2 -> depth_estimated contaminated (1 row), tr -> trace (1 row), "
                    "ok -> (nothing) (1 row), LD -> lid_open (1 row)"]
    sc = screen(ds)
    # contaminated / lid_open: chemistry invalid; "ok" carries nothing: the sample is used
    assert sc["chemistry_valid"].values.tolist() == [False, False, True, False]
    assert sc["gauge_valid"].values.tolist() == [True, True, True, False]
    assert sc["status"].values[2] == "used"
    assert "flag contaminated" in sc["reasons"].values[0]


def test_map_as_a_dict_and_unmapped_code(write, cat):
    p = _precip(write, ["K1", "Z9", "", ""])
    ds, _ = read_precipitation(p, cat, flag_map={"K1": ("contaminated",), "Z9": ("trace",)})
    assert ds["flags"].values.tolist()[:2] == ["contaminated", "trace"]
    m = write("lab_codes.toml", MAP)
    e = _error(read_precipitation, p, cat, flag_map=m)
    assert (e.line, e.value) == (3, "Z9")
    assert str(e).endswith("depth_estimated or a code of lab_codes.toml")


@pytest.mark.parametrize("text, line, column, value, problem", [
    ('[codes]\nK1 = "contaminated"\nK2 = "dirty"\n', 3, "codes.K2", "dirty",
     "unknown flag word in a mapping file"),
    ('[codes]\nK1 = ["contaminated", "C"]\n', 2, "codes.K1", "C",
     "unknown flag word in a mapping file"),
    ('[codes]\nK1 = 3\n', 2, "codes.K1", 3,
     "mapping of a lab code is not a word or a list of words"),
    ('[codes]\n"K 1" = "trace"\n', 2, "codes.K 1", "K 1", "lab code contains a separator"),
    ('[codes]\ntrace = "overflow"\n', 2, "codes.trace", "trace", "lab code is already a flag word"),
    ('[codez]\nK1 = "trace"\n', 1, "codez", None, "unknown table or key in a flag mapping file"),
    ('K1 = "trace"\n', 1, "K1", None, "unknown table or key in a flag mapping file"),
    ('[codes]\n', 1, None, None, "no [codes] table in the flag mapping file"),
    ('[codes]\nK1 = "trace\n', 2, None, None, "invalid TOML"),
])
def test_mapping_file_errors_are_located(write, text, line, column, value, problem):
    m = write("lab_codes.toml", text)
    e = _error(flags.read_flag_map, m)
    assert e.file == str(m) and e.line == line and e.column == column and e.value == value
    assert e.problem.startswith(problem)


def test_missing_mapping_file(tmp_path):
    e = _error(flags.read_flag_map, tmp_path / "none.toml")
    assert e.problem == "flag mapping file not found"


def test_scenario_names_the_map(write):
    write("sites.toml", SITES)
    write("p.csv", HEAD + "\n" + "\n".join(_rows(["K1", "", "tr", ""])) + "\n")
    write("lab_codes.toml", MAP)
    sc = load_scenario(write("s.toml", '[inputs]\nsites = "sites.toml"\nprecipitation = "p.csv"\n'
                             'flag_map = "lab_codes.toml"\n'))
    assert sc.input_paths()["flag_map"].name == "lab_codes.toml"
    inp = load_scenario_inputs(sc)
    assert inp.precipitation["flags"].values.tolist() == ["contaminated", "", "trace", ""]
    assert inp.paths["flag_map"].name == "lab_codes.toml"
    # without the map the same file is refused; a map that does not exist is located
    e = _error(load_scenario_inputs, load_scenario(write("t.toml", '[inputs]\nsites = '
                                                       '"sites.toml"\nprecipitation = "p.csv"\n')))
    assert e.value == "K1"
    with pytest.raises(ScenarioError) as exc:
        load_scenario(write("u.toml", '[inputs]\nsites = "sites.toml"\nflag_map = "none.toml"\n'))
    assert exc.value.line == 3 and exc.value.column == "inputs.flag_map"


def test_every_word_has_a_decision():
    for code, (meaning, chem_ok, gauge_ok) in flags.FLAGS.items():
        assert code == code.lower() and " " not in code and len(code) > 2
        assert meaning and isinstance(chem_ok, bool) and isinstance(gauge_ok, bool)
    # the decision table of docs/data_formats.md
    assert [c for c, v in flags.FLAGS.items() if not v[1] and v[2]] == [
        "contaminated", "lid_open", "trace", "not_analysed", "overflow", "sample_lost"]
    assert flags.FLAGS["gauge_failed"][1:] == (True, False)
    assert flags.FLAGS["invalid_record"][1:] == (False, False)
    assert flags.FLAGS["depth_estimated"][1:] == (True, True)
    assert np.all([flags.split(c) == [c] for c in flags.FLAGS])
