"""A half-hour clock error (labels of the middle of the averaging interval read as its
end): the clock check's hint (workbench/io/metclock.py, HALF_HOUR_HINT_H).

Invented years of radiation (tests/clock_years.py: Haurwitz 1945 clear sky, Kasten &
Czeplak 1980 cloud transmission, an AR(1) cloud with or without an afternoon maximum)
with labels 0, 0.5, 1 and 2 h off.  The hint names the measured lag at 0.5 h with no or
a moderate afternoon cloud maximum, and stays silent at 0 h with any of them; the demo
network and the long-record fixture raise none.  The sun of clock_years is the
package's, checked against pvlib's SPA in tests/io/test_met_clock_offset.py.
"""
from __future__ import annotations

import re
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from clock_years import SITES, radiation_year
from tiny_inputs import grass_sites
from workbench.io import metclock, read_met, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def _notes(lat, lon, offset, cycle, seed):
    t, r = radiation_year(lat, lon, offset, cycle, seed)
    tab = metclock.site_lags(r[None, :], t, np.array([lat]), np.array([lon]))
    cat = {"x": SimpleNamespace(utc_offset_h=0.0, latitude=lat, longitude=lon)}
    return metclock.notes_from_lags(tab, ["x"], cat, "met.csv")


def _lag(note):
    return float(re.search(r"lag ([+-]\d+\.\d) h", note).group(1))


@pytest.mark.parametrize("site", SITES[::2], ids=[s[0] for s in SITES[::2]])
@pytest.mark.parametrize("cycle", [0.0, 0.3])
def test_half_hour_late_gives_a_hint_with_the_lag(site, cycle):
    _, lat, lon = site
    notes = _notes(lat, lon, 0.5, cycle, seed=1)
    assert len(notes) == 1 and ": hint: lag +0." in notes[0]
    assert "middle of the averaging interval" in notes[0]
    assert 0.3 <= _lag(notes[0]) <= 0.55


@pytest.mark.parametrize("site", SITES, ids=[s[0] for s in SITES])
@pytest.mark.parametrize("cycle", [0.0, 0.3, 0.6])
def test_no_hint_on_time(site, cycle):
    # the strong afternoon cloud maximum (0.6) pulls the lag to about -0.4 h: no hint,
    # since the hint is for late lags only
    _, lat, lon = site
    assert _notes(lat, lon, 0.0, cycle, seed=2) == []


def test_whole_hours_keep_their_note_not_the_hint():
    _, lat, lon = SITES[1]
    for off in (1.0, 2.0):
        (note,) = _notes(lat, lon, off, 0.0, seed=3)
        assert "hint" not in note and _lag(note) == pytest.approx(off, abs=0.1)


def test_demo_and_long_record_have_no_hint(tmp_path):
    from longrecord_data import make_long_record
    _, ledger = read_met(DEMO / "met.csv.gz", read_sites(DEMO / "sites.toml"))
    assert not [n for n in ledger.notes if "clock check" in n]
    make_long_record(tmp_path)
    _, ledger = read_met(tmp_path / "met.csv.gz", read_sites(tmp_path / "sites.toml"))
    assert not [n for n in ledger.notes if ": hint:" in n]


def test_hint_through_the_reader(tmp_path):
    _, lat, lon = SITES[1]
    (tmp_path / "sites.toml").write_text(grass_sites([("brackmoor", "Brackmoor Heath",
                                                        lat, lon, 0)]))
    t, r = radiation_year(lat, lon, 0.5, 0.0, seed=4)
    df = pd.DataFrame({"site": "brackmoor",
                       "time": pd.DatetimeIndex(t).strftime("%Y-%m-%dT%H:%M"),
                       "wind_speed [m/s]": 3.0, "temperature [degC]": 10.0,
                       "relative_humidity [%]": 80.0, "solar_radiation [W/m2]": r,
                       "precipitation [mm]": 0.0, "pressure [hPa]": 1010.0})
    df.to_csv(tmp_path / "met.csv", index=False)
    met, ledger = read_met(tmp_path / "met.csv", read_sites(tmp_path / "sites.toml"))
    (note,) = [n for n in ledger.notes if "clock check" in n]
    assert note.startswith("met.csv: clock check of met site 'brackmoor'")
    assert _lag(note) == pytest.approx(0.5, abs=0.05)
    assert np.isfinite(met["solar_radiation"]).all()          # kept as read
