"""The met clock check: solar radiation against the sun (workbench/io/metclock.py).

Copies of a demo site's met with labels moved by +1, -1, +2 h and by +1 h in summer
only are each named with their lag and cause; the demo itself, overcast and short
records are not (the last two say "not judged").  The check's sun is held to pvlib's
(SPA solar position and the Haurwitz clear sky), a reference outside the project."""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tiny_inputs import grass_sites
from workbench.io import read_met, read_sites
from workbench.io import metclock
from workbench.surface.solar import solar_elevation_sine, time_parts

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
SITE = "ridge"                    # demo site, utc_offset_h = 1


@pytest.fixture(scope="module")
def demo_cat():
    return read_sites(DEMO / "sites.toml")


@pytest.fixture(scope="module")
def ridge_rows():
    """Two years (2019-2020) of the demo's met at one site, as written in the file."""
    df = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    df = df[df["site"] == SITE]
    t = pd.to_datetime(df["time"])
    return df[(t > "2019-01-01") & (t <= "2021-01-01")].reset_index(drop=True)


def _write(tmp_path, df, name="met.csv"):
    p = tmp_path / name
    with open(p, "w") as f:
        f.write("# time_label: end\n")
        df.to_csv(f, index=False)
    return p


def _moved(df, hours, where=None):
    """`df` with the labels of the rows `where` (all) `hours` later; a label that then
    repeats another is dropped (a logger writes the hour once)."""
    t = pd.to_datetime(df["time"])
    sel = np.ones(len(df), bool) if where is None else where(t)
    out = df.copy()
    out["time"] = (t + pd.to_timedelta(np.where(sel, hours, 0), unit="h")).dt.strftime(
        "%Y-%m-%dT%H:%M")
    return out.drop_duplicates("time", keep="first")


def _clock_notes(ledger):
    return [n for n in ledger.notes if "clock check" in n]


def _lag(note):
    return float(re.search(r"lag ([+-]\d+\.\d) h", note).group(1))


def test_demo_met_raises_no_clock_note(demo_cat):
    # no false alarm: the whole demo (4 sites, 8 years, clouds and noise)
    _, ledger = read_met(DEMO / "met.csv.gz", demo_cat)
    assert _clock_notes(ledger) == []


def test_clean_copy_raises_no_clock_note(tmp_path, demo_cat, ridge_rows):
    _, ledger = read_met(_write(tmp_path, ridge_rows), demo_cat)
    assert _clock_notes(ledger) == []


@pytest.mark.parametrize("hours, true_offset, cause", [
    (1, 2, "runs late"), (-1, 0, "hour-beginning labels read as hour ends"),
    (2, 3, "runs late")])
def test_shifted_copy_is_named(tmp_path, demo_cat, ridge_rows, hours, true_offset, cause):
    _, ledger = read_met(_write(tmp_path, _moved(ridge_rows, hours)), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1, ledger.notes
    note = notes[0]
    assert note.startswith("met.csv: clock check of met site 'ridge'")
    assert _lag(note) == pytest.approx(hours, abs=0.15)
    assert cause in note
    assert f"set utc_offset_h = {true_offset:g} in sites.toml" in note
    assert f"local time of UTC{true_offset:+g} while utc_offset_h = 1" in note
    # utc_offset_h moves the site's sample and air labels too (the Haddermoor trial: a
    # farm's met logger on local time beside UTC hourly air; tests/haddermoor_net.py)
    assert ("utc_offset_h moves the naive labels of the site's precipitation and air files "
            "too: where those are on the declared clock, give this file's labels their "
            "zone)") in note
    assert "values kept as read, not shifted" in note
    if hours == 1:
        assert "'# time_label: start'" in note      # hour ends under a start header
    if hours == 2:
        assert "time_label" not in note


def _summer_time(t):
    """Summer time of Directive 2000/84/EC: from 01:00 UTC on the last Sunday of March
    to 01:00 UTC on the last Sunday of October (labels here are local standard time,
    UTC+1, so 02:00 local)."""
    def last_sunday(year, month):
        end = pd.Timestamp(year=year, month=month, day=31)
        return end - pd.Timedelta(days=(end.day_of_week + 1) % 7)
    out = np.zeros(len(t), bool)
    for y in t.dt.year.unique():
        a = last_sunday(y, 3) + pd.Timedelta(hours=2)
        b = last_sunday(y, 10) + pd.Timedelta(hours=2)
        out |= ((t > a) & (t <= b)).to_numpy()
    return out


def test_summer_time_labels_are_named(tmp_path, demo_cat, ridge_rows):
    df = _moved(ridge_rows, 1, where=_summer_time)
    met, ledger = read_met(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1, ledger.notes
    note = notes[0]
    assert "late against the sun in summer only" in note and "daylight saving" in note
    summer = float(re.search(r"summer half \(April-September, \d+ sunny days\) ([+-]\d\.\d) h",
                             note).group(1))
    winter = float(re.search(r"winter half \(\d+ days\) ([+-]\d\.\d) h", note).group(1))
    assert summer == pytest.approx(1.0, abs=0.15) and winter == pytest.approx(0.0, abs=0.25)
    assert "summer rows UTC+2, e.g. 2021-07-01T14:00+02:00" in note
    # a note, not a correction: the values are where the labels put them
    assert np.isfinite(met["solar_radiation"].sel(site=SITE).values).sum() == len(df)


def test_logger_clock_reset_between_years_is_named(tmp_path, demo_cat, ridge_rows):
    df = _moved(ridge_rows, 1, where=lambda t: (t > "2020-01-01").to_numpy())
    _, ledger = read_met(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1, ledger.notes
    assert "the lag changes between years (2019: +0.0 h, 2020: +1.0 h)" in notes[0]
    assert "logger clock reset or drifting" in notes[0]


def test_overcast_record_is_not_judged(tmp_path, demo_cat, ridge_rows):
    # a dim sky all year (a third of the radiation): no sunny day, no judgement
    df = _moved(ridge_rows, 1)
    df["solar_radiation [W/m2]"] = df["solar_radiation [W/m2]"] / 3.0
    _, ledger = read_met(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1 and "not judged" in notes[0]
    assert re.search(r"not judged, \d+ sunny days with a complete day of radiation "
                     r"\(20 needed\)", notes[0])


def test_short_record_is_not_judged(tmp_path, demo_cat, ridge_rows, met_reader):
    t = pd.to_datetime(ridge_rows["time"])
    df = _moved(ridge_rows[(t > "2019-06-01") & (t <= "2019-06-06")], 2)   # five days
    _, ledger = met_reader(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1 and "not judged" in notes[0] and "(20 needed)" in notes[0]


def test_netcdf_met_is_checked_too(tmp_path, demo_cat, ridge_rows):
    met, _ = read_met(_write(tmp_path, _moved(ridge_rows, 1)), demo_cat)
    p = tmp_path / "met.nc"
    met.drop_vars("row_present").to_netcdf(p)
    _, ledger = read_met(p, demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1 and notes[0].startswith("met.nc: ") and _lag(notes[0]) == 1.0


# --- references: pvlib (SPA solar position, Haurwitz clear sky) -------------------------

#: Invented sites (names invented; coordinates chosen to span both hemispheres, the
#: tropics and a far-east longitude whose solar noon falls near 00 UTC).
INVENTED = [("brackmoor", "Brackmoor Heath", 54.5, 7.2, 1.0),
            ("quillon", "Quillon Flats", -33.0, 150.0, 10.0),
            ("tesserel", "Tesserel Savanna", 10.0, -75.0, -5.0),
            ("ostvik", "Ostvik Bog", 65.0, 25.0, 2.0),
            ("varden", "Varden Rise", -45.0, 172.0, 12.0)]


def _pvlib_clear_sky_hours(t_end, lat, lon):
    """Hourly means of pvlib's Haurwitz clear-sky GHI, from SPA positions at the middle
    of each 5-min step [W m-2]."""
    pvlib = pytest.importorskip("pvlib")
    steps = (pd.date_range(t_end[0] - pd.Timedelta("1h"), t_end[-1], freq="5min",
                           inclusive="left") + pd.Timedelta("150s"))
    sp = pvlib.solarposition.get_solarposition(steps, lat, lon)
    ghi = pvlib.clearsky.haurwitz(sp["apparent_zenith"])["ghi"].to_numpy()
    return ghi.reshape(-1, 12).mean(axis=1)


@pytest.mark.parametrize("site", INVENTED, ids=[s[0] for s in INVENTED])
def test_clear_sky_of_pvlib_has_no_lag(site):
    # pvlib (Holmgren et al. 2018, J. Open Source Softw. 3(29), 884): SPA (Reda &
    # Andreas 2004) and Haurwitz (1945) clear sky.  Bound 0.05 h (3 min): the package's
    # Spencer (1971) sun differs from SPA by well under a minute of time (its tests),
    # and hour means against mid-hour samples are symmetric about noon.
    _, _, lat, lon, _ = site
    t_end = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h")
    g = _pvlib_clear_sky_hours(t_end, lat, lon)
    for shift in (0, 1, -2):
        rad = np.roll(g, shift)[None, :]
        tab = metclock.site_lags(rad, t_end.values, np.array([lat]), np.array([lon]))
        assert tab["lag"].iloc[0] == pytest.approx(shift, abs=0.05)
        assert tab["lag_summer"].iloc[0] == pytest.approx(shift, abs=0.05)
        assert tab["lag_winter"].iloc[0] == pytest.approx(shift, abs=0.05)


def test_centroid_of_the_sun_is_pvlib_solar_noon():
    # The check's zero: the centroid of cos(zenith) over the hour middles of a day is
    # solar noon.  Against pvlib's SPA transit (sun_rise_set_transit_spa, Reda &
    # Andreas 2004) at the invented site "Brackmoor Heath" (54.5 N, 7.2 E), every 7th
    # day of 2021; bound 0.05 h (3 min): hourly sampling of a curve symmetric about
    # noon, plus Spencer's equation of time (within a minute of SPA).
    pvlib = pytest.importorskip("pvlib")
    lat, lon = 54.5, 7.2
    t_end = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h")
    mu = np.clip(solar_elevation_sine(*time_parts((t_end - pd.Timedelta("30min")).values),
                                      lat, lon), 0, None)
    day = (t_end - pd.Timedelta("30min")).floor("D")
    hour = ((t_end - pd.Timedelta("30min")) - day) / pd.Timedelta("1h")
    frame = pd.DataFrame({"d": day, "w": mu, "wh": mu * hour})
    g = frame.groupby("d")[["w", "wh"]].sum()
    noon_check = g["wh"] / g["w"]                           # [h UTC]
    days = pd.DatetimeIndex(g.index[::7]).tz_localize("UTC")
    transit = pvlib.solarposition.sun_rise_set_transit_spa(days, lat, lon)["transit"]
    noon_pvlib = ((transit - days) / pd.Timedelta("1h")).to_numpy()
    assert np.abs(noon_check.to_numpy()[::7] - noon_pvlib).max() < 0.05


def test_invented_sites_through_the_reader(tmp_path):
    # the reader's note at a southern site (halves swapped) with pvlib's clear sky
    # moved 1 h late in its summer (October-March) only
    rows = [INVENTED[1]]
    (tmp_path / "sites.toml").write_text(grass_sites(rows))
    cat = read_sites(tmp_path / "sites.toml")
    t_end = pd.date_range("2021-01-01T01:00", "2022-01-01T00:00", freq="h")
    g = _pvlib_clear_sky_hours(t_end, -33.0, 150.0)
    local = t_end + pd.Timedelta("10h")
    summer = (local.month >= 10) | (local.month <= 3)
    labels = local + pd.to_timedelta(summer.astype(int), unit="h")
    df = pd.DataFrame({"site": "quillon", "time": labels.strftime("%Y-%m-%dT%H:%M"),
                       "wind_speed [m/s]": 3.0, "temperature [degC]": 15.0,
                       "relative_humidity [%]": 70.0, "solar_radiation [W/m2]": g.round(1),
                       "precipitation [mm]": 0.0, "pressure [hPa]": 1010.0})
    df = df.drop_duplicates("time", keep="first")
    _, ledger = read_met(_write(tmp_path, df), cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1 and "summer half (October-March" in notes[0]
    assert "summer only" in notes[0] and "UTC+11, e.g. 2021-07-01T14:00+11:00" in notes[0]


def test_summer_only_record_names_the_half_not_judged(tmp_path, demo_cat, ridge_rows):
    # May-August 2019 moved 1 h: the winter half has no day, said so in the note
    t = pd.to_datetime(ridge_rows["time"])
    df = _moved(ridge_rows[(t > "2019-05-01") & (t <= "2019-09-01")], 1)
    _, ledger = read_met(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1 and _lag(notes[0]) == 1.0, notes
    assert "winter not judged (under 20 sunny days)" in notes[0]


def test_summer_offset_all_year_is_named(tmp_path, demo_cat, ridge_rows):
    # utc_offset_h holds the summer-time offset: the winter rows (standard time) are 1 h
    # early, the summer rows on time
    df = _moved(ridge_rows, -1, where=lambda t: ~_summer_time(t))
    _, ledger = read_met(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(ledger)
    assert len(notes) == 1, ledger.notes
    assert "early against the sun in winter only" in notes[0]
    assert "summer half (April-September, " in notes[0] and ") +0.0 h, winter half (" in notes[0]
    assert "set utc_offset_h = 0 (standard time) in sites.toml" in notes[0]
    assert "e.g. 2021-01-15T13:00+00:00" in notes[0]


@pytest.mark.parametrize("zone,lag", [("Z", 1), ("+00:00", 1), ("+02:00", -1)])
def test_zoned_labels_on_another_clock_are_named(tmp_path, demo_cat, ridge_rows, met_reader,
                                                 zone, lag):
    """ridge's logger keeps UTC+1 (its utc_offset_h) and an export writes its labels with
    a zone it did not keep ('Z' or +00:00: read 1 h late; +02:00: 1 h early). The note
    names the zone, not utc_offset_h, which does not move a zoned label. Before: 'Labels
    in local time of UTC+2 while utc_offset_h = 1 (if so, set utc_offset_h = 2 ...)',
    a change that would not move these labels at all. Both CSV readers."""
    df = ridge_rows.copy()
    df["time"] = df["time"] + zone
    _, led = met_reader(_write(tmp_path, df), demo_cat)
    notes = _clock_notes(led)
    assert len(notes) == 1, notes
    way = "late" if lag > 0 else "early"
    assert f"lag {lag:+.1f} h" in notes[0], notes
    assert (f"the whole record sits 1 h {way} against the zone its labels carry "
            f"(utc_offset_h does not move a zoned label)") in notes[0], notes
    assert ("Labels written with a zone the logger did not keep: its clock runs "
            f"{lag:+d} h from the zone written (with 'Z': a logger kept at UTC{lag:+d}"
            ) in notes[0], notes
    assert "write the labels without the zone (naive labels take utc_offset_h = 1)" in notes[0]
    assert "set utc_offset_h" not in notes[0], notes


def test_zoned_labels_on_their_clock_raise_no_note(tmp_path, demo_cat, ridge_rows, met_reader):
    """False alarm: the labels with the zone the logger kept (+01:00) are on time."""
    df = ridge_rows.copy()
    df["time"] = df["time"] + "+01:00"
    _, led = met_reader(_write(tmp_path, df), demo_cat)
    assert _clock_notes(led) == []
