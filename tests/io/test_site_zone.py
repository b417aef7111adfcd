"""The site catalogue's own check of ``utc_offset_h`` against the longitude
(workbench/io/sites.py, ``zone_note``; docs/data_formats.md, "Field-data slips we check").

Local mean solar time is UTC + longitude / 15 h (360 degrees in 24 h; the definition of
mean solar time, e.g. the Astronomical Almanac's glossary, from memory); civil zones keep
within about 3 h of it (common practice).  Every test here but the "no note" ones failed
on the code before the check (no note at all); the "no note" ones failed there only for
want of ``zone_notes`` and guard the check against false alarms.
"""
from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from workbench.errors import InputError
from workbench.io import read_sites
from workbench.io.inputs import load_inputs

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
SITES = (DEMO / "sites.toml").read_text()
RIDGE = "latitude = 54.512\nlongitude = 7.236"


def _sites(tmp_path, lat, lon, offset):
    """The demo catalogue with ridge moved to (lat, lon) at utc_offset_h `offset`."""
    text = SITES.replace(RIDGE, f"latitude = {lat}\nlongitude = {lon}")
    head, rest = text.split('id = "fell"', 1)          # ridge's block comes first
    head = head.replace("utc_offset_h = 1.0", f"utc_offset_h = {offset}")
    p = tmp_path / "sites.toml"
    p.write_text(head + 'id = "fell"' + rest)
    return read_sites(p)


def test_demo_catalogue_gives_no_zone_note():
    # the demo's invented sites near 54.5 N 7 E on UTC+1: 0.5 h from the sun's
    cat = read_sites(DEMO / "sites.toml")
    assert cat.zone_notes == {}
    assert not [n for n in cat.notes if "mean solar time" in n]


def test_swapped_coordinates_are_named(tmp_path):
    # a site at 45.25 N 75.5 W on UTC-5 typed as latitude -75.5, longitude 45.25: the
    # longitude implies UTC+3.0, 8.0 h from -5; swapped back it is 0.03 h from the sun's
    cat = _sites(tmp_path, -75.5, 45.25, -5)
    note = cat.zone_notes["ridge"]
    assert note in cat.notes and "site 'ridge'" in note
    assert "utc_offset_h = -5 is 8.0 h" in note and "longitude 45.25" in note
    assert "UTC+3.0 h" in note
    assert "Latitude and longitude typed in each other's place?" in note
    assert "at latitude 45.25, longitude -75.5" in note


def test_longitude_sign_lost_is_named(tmp_path):
    # 75.5 W typed as 75.5 at UTC-5: the longitude implies UTC+5.0, 10.0 h away
    cat = _sites(tmp_path, 45.25, 75.5, -5)
    note = cat.zone_notes["ridge"]
    assert "10.0 h" in note and "UTC+5.0 h" in note
    assert "The longitude's sign lost" in note and "at latitude 45.25, longitude -75.5" in note
    assert "each other's place" not in note       # swapped: latitude 75.5 W, far off


def test_a_far_offset_without_a_slip_is_noted_without_a_cause(tmp_path):
    # 7.236 E on UTC-6: neither a swap (54.512 E: UTC+3.6) nor a sign (UTC-0.5) fits
    cat = _sites(tmp_path, 54.512, 7.236, -6)
    note = cat.zone_notes["ridge"]
    assert "distant zone's time on purpose" in note
    assert "each other's place" not in note and "sign lost" not in note


@pytest.mark.parametrize("lat, lon, offset", [
    (30.0, 100.0, 8),       # a plausible far zone: 1.3 h (western end of a wide zone)
    (39.5, 76.0, 8),        # 2.9 h: the widest gap on inhabited land we know (memory)
    (-14.0, -172.0, 13),    # across the date line: 13 - (-11.47) = 24.47 h, i.e. 0.47 h
    (40.0, 200.0, -11),     # a longitude written 0..360 (200 = 160 W: UTC-10.7)
    (45.25, -75.5, 0),      # labels in UTC: a choice, not a place
    (54.512, 54.512, 1),    # equal latitude and longitude: 2.6 h, no note
])
def test_plausible_offsets_give_no_note(tmp_path, lat, lon, offset):
    cat = _sites(tmp_path, lat, lon, offset)
    assert cat.zone_notes == {}


def test_the_threshold_is_three_and_a_half_hours(tmp_path):
    # 3.5 h exactly: no note; 3.75 h: a note (utc_offset_h in quarter hours)
    assert _sites(tmp_path, 54.0, 0.0, 3.5).zone_notes == {}
    assert "3.8 h" in _sites(tmp_path, 54.0, 0.0, 3.75).zone_notes["ridge"]


def test_coordinates_out_of_range_are_refused(tmp_path):
    # a swap that puts a longitude beyond 90 degrees into the latitude is refused
    with pytest.raises(InputError, match="latitude out of range"):
        _sites(tmp_path, 120.0, 30.0, 8)
    with pytest.raises(InputError, match=r"-180 to 180 degrees east \(or 0 to 360\)"):
        _sites(tmp_path, 54.5, -190.0, 1)


# ----------------------------------------------- one message per fault with the met's clock
@pytest.fixture(scope="module")
def ridge_year():
    """One year (2021) of the demo's met at ridge (utc_offset_h = 1, 54.512 N 7.236 E)."""
    df = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    df = df[df["site"] == "ridge"]
    t = pd.to_datetime(df["time"])
    return df[(t > "2021-01-01") & (t <= "2022-01-01")].reset_index(drop=True)


def _load(tmp_path, df, offset):
    _sites(tmp_path, 54.512, 7.236, offset)
    p = tmp_path / "met.csv"
    with open(p, "w") as f:
        f.write("# time_label: end\n")
        df.to_csv(f, index=False)
    return load_inputs(tmp_path / "sites.toml", met=p)


def test_the_clock_check_supersedes_the_zone_note(tmp_path, ridge_year):
    # utc_offset_h = 5 for a site on UTC+1: the catalogue's note (4.5 h from the sun's)
    # and the clock note (radiation 4 h early) name one fault: only the clock note stays
    inp = _load(tmp_path, ridge_year, 5)
    zone = inp.catalogue.zone_notes["ridge"]
    assert zone not in inp.ledger.notes
    clock = [n for n in inp.ledger.notes if "clock check of met site 'ridge'" in n]
    assert len(clock) == 1 and "lag -4.0 h" in clock[0]


def test_the_zone_note_stays_where_the_met_has_no_radiation(tmp_path, ridge_year):
    # the radiation column empty: the clock check cannot judge, the catalogue's note stays
    inp = _load(tmp_path, ridge_year.assign(**{"solar_radiation [W/m2]": float("nan")}), 5)
    zone = inp.catalogue.zone_notes["ridge"]
    assert inp.ledger.notes.count(zone) == 1
    assert any("clock check of met site 'ridge'" in n and "not judged" in n
               for n in inp.ledger.notes)
