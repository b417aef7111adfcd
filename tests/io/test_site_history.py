"""The history of a site in sites.toml (``[[site.change]]``) and a unit switch inside a
precipitation file: each wrong history gives one located message (file, line, key,
value, what was expected)."""
from __future__ import annotations

import numpy as np
import pytest

from tests.tiny_inputs import alpha_site
from workbench.errors import InputError
from workbench.io.samples import read_precipitation
from workbench.io.sites import read_sites


def _catalogue(tmp_path, changes: str):
    # a 25 m mast: without met_land_use it stood over the forest before a felling too
    # (its anemometer above the forest's displacement height)
    p = tmp_path / "sites.toml"
    p.write_text(alpha_site("grass").replace("wind_height_m = 10.0", "wind_height_m = 25.0")
                 + changes)
    return p


def _error(tmp_path, changes):
    p = _catalogue(tmp_path, changes)
    with pytest.raises(InputError) as exc:
        read_sites(p)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line "), msg
    return msg, p.read_text().splitlines()


def _line(msg) -> int:
    return int(msg.split(", line ")[1].split(",")[0])


FELLED = """
[[site.change]]
date = 2014-04-01
what = "land_use"
from = "conifer_forest"
to = "grass"
note = "forest clear-felled"
"""


def test_a_history_reads_in_date_order(tmp_path):
    cat = read_sites(_catalogue(tmp_path, """
[[site.change]]
date = "2016-01-05"
what = "sampler"

[[site.change]]
date = 2009-06-01
what = "location"
latitude = 52.0
longitude = 5.0
note = "moved 300 m"
""" + FELLED.replace('to = "grass"', 'to = "grass"')))
    ch = cat["alpha"].changes
    assert [c.what for c in ch] == ["location", "land_use", "sampler"]
    assert ch[1].describe() == "2014-04-01 land_use conifer_forest -> grass (forest clear-felled)"
    from workbench.io.sites import check_site, site_dict
    again = check_site(site_dict(cat["alpha"]), lambda *a, **k: InputError("x"), [], "x")
    assert again.changes == ch                   # the scenario's re-check keeps it


@pytest.mark.parametrize("changes,problem,key", [
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "landuse"\n', "unknown kind of change",
     "what"),
    ('\n[[site.change]]\ndate = "April 2014"\nwhat = "gauge"\n', "change date is not a date",
     "date"),
    ('\n[[site.change]]\nwhat = "gauge"\n', "missing key of a change", "date"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "gauge"\nwhen = 3\n',
     "unknown key of a change", "when"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "land_use"\nto = "grass"\n',
     "a land_use change without 'from'", "from"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "land_use"\nfrom = "forest"\nto = "grass"\n',
     "unknown land use class", "from"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "gauge"\nfrom = "old"\n',
     "'from'/'to' on a gauge change", "from"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "location"\nlatitude = 52.0\n',
     "a location change without its new coordinates", "longitude"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "gauge"\nlatitude = 52.0\n',
     "coordinates on a gauge change", "latitude"),
    # the surface after the last change is not the site's own
    (FELLED.replace('to = "grass"', 'to = "moorland"'),
     "the last land_use change does not end at the site's land_use", "to"),
    # overlapping periods of surfaces: two changes that do not follow on
    (FELLED.replace("2014-04-01", "2010-01-01").replace('from = "conifer_forest"',
                                                        'from = "crops"') + FELLED,
     "land_use changes do not follow on", "from"),
    (FELLED + FELLED.replace('what = "land_use"', 'what = "land_use"'),
     "two land_use changes on one date", "date"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "location"\nlatitude = 52.1\n'
     'longitude = 5.0\n', "the last location change does not end at the site's coordinates",
     "latitude"),
    ('\n[[site.change]]\ndate = 2011-01-01\nwhat = "collector"\nfrom = "wet_only"\n'
     'to = "bulk"\n', "the last collector change does not end at the site's collector", "to"),
    # laboratory ids (docs/data_formats.md, "A long record"): text, on laboratory changes
    # only, following on, ending at the site's laboratory
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "laboratory"\nto = 3\n',
     "laboratory id is not text", "to"),
    ('\n[[site.change]]\ndate = 2014-04-01\nwhat = "gauge"\nair_to = "lab-a"\n',
     "'air_to' on a gauge change", "air_to"),
    ('\n[[site.change]]\ndate = 2010-01-01\nwhat = "laboratory"\nto = "lab-a"\n'
     '\n[[site.change]]\ndate = 2014-04-01\nwhat = "laboratory"\nfrom = "lab-c"\n',
     "laboratory changes do not follow on", "from"),
    ('laboratory = "lab-b"\n[[site.change]]\ndate = 2014-04-01\nwhat = "laboratory"\n'
     'to = "lab-a"\n', "the last laboratory change does not end at the site's laboratory",
     "to"),
])
def test_a_wrong_history_is_one_located_message(tmp_path, changes, problem, key):
    msg, lines = _error(tmp_path, changes)
    assert problem in msg and f"column 'change.{key}'" in msg, msg
    assert "expected" in msg
    line = lines[_line(msg) - 1]
    assert line.startswith(f"{key} =") or line.startswith("[[site.change]]"), (msg, line)
    assert _line(msg) > 13                          # inside the change tables, not the site


def test_laboratory_ids_of_each_laboratory_period(tmp_path):
    """The laboratory of each laboratory period: the first change's ``from``, then each
    change's ``to`` (or the next one's ``from``), the last the site's ``laboratory``;
    None where nothing names it; the air samples' apart (``air_from``/``air_to``,
    ``air_laboratory``).  A site without changes: its keys."""
    from workbench.io.sitechanges import laboratory_ids
    cat = read_sites(_catalogue(tmp_path, 'laboratory = "lab-c"\nair_laboratory = "air-b"\n'
                                '[[site.change]]\ndate = 2010-01-01\nwhat = "laboratory"\n'
                                'from = "lab-a"\nair_to = "air-b"\n'
                                '[[site.change]]\ndate = 2014-04-01\nwhat = "laboratory"\n'
                                'from = "lab-b"\nto = "lab-c"\n'))
    site = cat["alpha"]
    assert (site.laboratory, site.air_laboratory) == ("lab-c", "air-b")
    assert laboratory_ids(site) == ["lab-a", "lab-b", "lab-c"]
    assert laboratory_ids(site, air=True) == [None, "air-b", "air-b"]
    from workbench.io.sites import check_site, site_dict
    again = check_site(site_dict(site), lambda *a, **k: InputError("x"), [], "x")
    assert again == site                          # the scenario's re-check keeps them
    plain = read_sites(_catalogue(tmp_path, ""))["alpha"]
    assert laboratory_ids(plain) == [None] and laboratory_ids(plain, air=True) == [None]


def test_a_long_move_is_a_hint(tmp_path):
    cat = read_sites(_catalogue(tmp_path, """
[[site.change]]
date = 2005-01-01
what = "location"
latitude = 52.3
longitude = 5.0

[[site.change]]
date = 2009-01-01
what = "location"
latitude = 52.0
longitude = 5.0
"""))
    assert any("moved 33.4 km on 2009-01-01" in n for n in cat.notes), cat.notes


PRECIP = """\
site,start,end,gauge_depth [mm],SO4 [mg/L],SO4 [ueq/L],NO3_as_N [mg/L],NO3 [ueq/L]
alpha,2007-12-11T09:00,2007-12-18T09:00,10.0,0.96,,0.14,
alpha,2007-12-18T09:00,2007-12-25T09:00,12.0,<0.05,,0.28,
alpha,2008-01-01T09:00,2008-01-08T09:00,8.0,,20.0,,10.0
alpha,2008-01-08T09:00,2008-01-15T09:00,9.0,,<0.5,,20.0
"""


def test_a_unit_switch_in_the_file_is_read_as_one_column(tmp_path):
    """mg/L (and NO3 as N) to 2007, ueq/L from 2008: one column per species in the
    first unit; the note names the lines of each unit.  Before: 'duplicate column'."""
    cat = read_sites(_catalogue(tmp_path, ""))
    p = tmp_path / "p.csv"
    p.write_text(PRECIP)
    ds, led = read_precipitation(p, cat)
    so4 = ds["SO4"].values * 96.06 * 1000 / 1000      # mol m-3 -> mg/L
    np.testing.assert_allclose(so4[[0, 2]], [0.96, 20.0 * 96.06 / 2 / 1000], rtol=1e-3)
    assert bool(ds["SO4_censored"].values[1]) and bool(ds["SO4_censored"].values[3])
    dl = ds["SO4_detection_limit"].values * 96.06          # mol m-3 -> mg/L: 0.05, 0.024
    np.testing.assert_allclose(dl[[1, 3]], [0.05, 0.5 / 2 * 96.06 / 1000], rtol=1e-3)
    no3_n = ds["NO3"].values * 14.007                       # mg N / L
    np.testing.assert_allclose(no3_n[[0, 2]], [0.14, 10.0 * 14.007 / 1000], rtol=1e-3)
    notes = "\n".join(led.notes)
    assert "SO4 in mg/L ('SO4 [mg/L]', lines 2-3) and in ueq/L ('SO4 [ueq/L]', lines 4-5)" \
        in notes, notes


def test_a_row_in_both_units_is_located(tmp_path):
    cat = read_sites(_catalogue(tmp_path, ""))
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace("9.0,,<0.5", "9.0,0.3,<0.5"))
    with pytest.raises(InputError) as exc:
        read_precipitation(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 5, column 'SO4 [ueq/L]': two columns for one species")
    assert "one per unit with each row filling one: here both hold a value (0.3 and <0.5)" \
        in msg, msg


def test_a_depth_in_two_units_is_still_a_duplicate(tmp_path):
    """Only a species may switch units in a file (its factor is known)."""
    cat = read_sites(_catalogue(tmp_path, ""))
    p = tmp_path / "p.csv"
    p.write_text("site,start,end,gauge_depth [mm],gauge_depth [cm],SO4 [mg/L]\n"
                 "alpha,2008-01-01T09:00,2008-01-08T09:00,8.0,,1.0\n")
    with pytest.raises(InputError, match="line 1, column 'gauge_depth \\[cm\\]': "
                       "duplicate column"):
        read_precipitation(p, cat)


def test_a_move_inside_a_sample_is_a_located_note(tmp_path):
    """A move dated on a day a sample holds whole: the note names the sample's line."""
    from workbench.io.inputs import load_inputs
    sites = _catalogue(tmp_path, """
[[site.change]]
date = 2007-12-20
what = "location"
latitude = 52.0
longitude = 5.0
""")
    p = tmp_path / "p.csv"
    p.write_text(PRECIP)
    inp = load_inputs(sites, precipitation=p)
    notes = [n for n in inp.ledger.notes if "location change" in n]
    assert len(notes) == 1 and notes[0].startswith("p.csv, line 3: precipitation sample")
    assert "change 2007-12-20 location to 52 N 5 E" in inp.describe()      # check shows it
    moved = tmp_path / "s2.toml"                 # dated on a changeover day: no note
    moved.write_text(sites.read_text().replace("2007-12-20", "2007-12-18"))
    inp = load_inputs(moved, precipitation=p)
    assert not [n for n in inp.ledger.notes if "location change" in n]


def test_a_bad_cell_after_the_switch_names_its_own_column(tmp_path):
    """'<DL' written in the ueq/L column: the message names that column and line (it
    named the mg/L column the values were joined into)."""
    cat = read_sites(_catalogue(tmp_path, ""))
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace("9.0,,<0.5", "9.0,,<DL"))
    with pytest.raises(InputError) as exc:
        read_precipitation(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 5, column 'SO4 [ueq/L]': text in a numeric column"), msg
    assert "'<DL'" in msg and "write '<limit'" in msg


def test_surface_and_collector_changes_tell_the_run_what_it_computes(tmp_path):
    """The engine follows a land use or collector change in one run: a change inside
    the records says how (the old note sent the user to a run of their own)."""
    from workbench.io.sitechanges import surface_notes
    cat = read_sites(_catalogue(tmp_path, FELLED + """
[[site.change]]
date = 2011-01-01
what = "collector"
from = "bulk"
to = "wet_only"
"""))
    notes = surface_notes(cat, np.datetime64("2005-01-01"), np.datetime64("2020-01-01"))
    assert len(notes) == 2
    land, coll = sorted(notes, key=lambda n: "collector" in n)
    assert "land_use changed on 2014-04-01 (conifer_forest -> grass)" in land
    assert "computed as 'conifer_forest' until 2014-04-01 00:00 UTC and 'grass'" in land
    assert "sums both parts" in land and "run of their own" not in coll
    assert "under the collector in force over its dates ('bulk' until 2011-01-01" in coll
    assert "the wind mast (met_land_use not given) stands over that surface and follows " \
        "it too ('conifer_forest' until 2014-04-01" in land
    assert surface_notes(cat, np.datetime64("2015-01-01"), np.datetime64("2020-01-01")) == []
