"""Met of a site whose UTC offset is not a whole hour (+9.5, +5.75, -3.5 h; zoned +09:30).

A local hour-ending label on the whole hour of such a clock ends on the half or quarter
UTC hour; the readers move it to the nearest whole UTC hour end (a tie, half past, to
the later hour), note the move once per site, and still refuse a label on neither the
whole UTC hour nor the whole hour of its clock (workbench/io/methours.py,
docs/data_formats.md section 4).  Both CSV readers (the chunked one and the line reader)
are held to the same Dataset, ledger, notes and errors (``assert_same`` of
tests/io/test_metfast.py).  The expected UTC hours are worked by hand in the comments
(UTC = local - offset, then the nearest whole hour; common practice of time-zone
arithmetic, ISO 8601 offsets).
"""
from __future__ import annotations

import importlib.util
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.methours import shift_minutes
from workbench.io.sites import read_sites

from tiny_inputs import grass_sites

_spec = importlib.util.spec_from_file_location(        # its check of the two readers
    "_metfast_cases", Path(__file__).with_name("test_metfast.py"))
_cases = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_cases)
assert_same = _cases.assert_same

#: Invented sites at real offsets (coordinates in the offsets' longitudes).
SITES = [("kestrel", "Kestrel Test Plain", -12.5, 130.8, 9.5),
         ("marten", "Marten Test Terrace", 27.7, 85.3, 5.75),
         ("heron", "Heron Test Cove", 47.6, -52.7, -3.5),
         ("otter", "Otter Test Field", 52.0, 5.0, 1.0)]
HEAD = ("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
        "solar_radiation [W/m2],precipitation [mm],pressure [hPa]\n")


@pytest.fixture()
def cat(tmp_path):
    (tmp_path / "sites.toml").write_text(grass_sites(SITES, elevation_m=30.0))
    return read_sites(tmp_path / "sites.toml")


def _csv(path, rows, label="end"):
    """rows: (site, time text, temperature); the other columns constant."""
    head = "# time_label: start\n" if label == "start" else ""
    path.write_text(head + HEAD + "".join(f"{s},{t},3.0,{v},70,0,0,1005\n" for s, t, v in rows))
    return path


def _both(path, cat, monkeypatch):
    """(chunked reader, line reader), held equal."""
    fast = metfast.read_met_csv_fast(path, cat)
    assert fast is not None                               # the chunked reader read it
    with monkeypatch.context() as m:
        m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
        line = read_met(path, cat)
    assert_same(fast, line)
    return fast


def _error_both(path, cat, monkeypatch):
    """The error of the chunked reader, located by itself (metlocate; it does not hand
    the file to the line reader), and the line reader's: the same text."""
    with pytest.raises(InputError) as fast:
        metfast.read_met_csv_fast(path, cat)
    with monkeypatch.context() as m:
        m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
        with pytest.raises(InputError) as line:
            read_met(path, cat)
    assert str(fast.value) == str(line.value)
    return str(fast.value)


def _landed(met, site):
    """{UTC hour end: temperature [degC]} of a site's hours with a value (K inside)."""
    v = met["temperature"].sel(site=site)
    ok = ~np.isnan(v.values)
    return {str(t)[:16]: round(float(x) - 273.15, 6)
            for t, x in zip(met["time"].values[ok], v.values[ok])}


@pytest.mark.parametrize("site, local, expected, note", [
    # +9.5 h: 10:00 local = 00:30 UTC, a tie -> 01:00 (30 min later)
    ("kestrel", ["2021-06-01T10:00", "2021-06-01T11:00", "2021-06-01T12:00"],
     ["2021-06-01T01:00", "2021-06-01T02:00", "2021-06-01T03:00"],
     "utc_offset_h 9.5 puts the local hours on the half UTC hour; each hour moved 30 min later"),
    # +5.75 h: 10:00 local = 04:15 UTC -> 04:00 (15 min earlier)
    ("marten", ["2021-06-01T10:00", "2021-06-01T11:00", "2021-06-01T12:00"],
     ["2021-06-01T04:00", "2021-06-01T05:00", "2021-06-01T06:00"],
     "utc_offset_h 5.75 puts the local hours at 15 min past the UTC hour; each hour moved 15 min "
     "earlier"),
    # -3.5 h: 22:00 local = 01:30 UTC the next day -> 02:00 (30 min later)
    ("heron", ["2021-06-01T22:00", "2021-06-01T23:00", "2021-06-02T00:00"],
     ["2021-06-02T02:00", "2021-06-02T03:00", "2021-06-02T04:00"],
     "utc_offset_h -3.5 puts the local hours on the half UTC hour; each hour moved 30 min later"),
    # a whole-hour site (+1) with zoned +09:30 labels: 10:00+09:30 = 00:30 UTC -> 01:00
    ("otter", ["2021-06-01T10:00+09:30", "2021-06-01T11:00+09:30", "2021-06-01T12:00+09:30"],
     ["2021-06-01T01:00", "2021-06-01T02:00", "2021-06-01T03:00"],
     "labels at +09:30 put the hours on the half UTC hour; each hour moved 30 min later"),
    # +5.75 h with its own zone: 10:00+05:45 = 04:15 UTC -> 04:00
    ("marten", ["2021-06-01T10:00+05:45", "2021-06-01T11:00+0545", "2021-06-01T12:00+05:45"],
     ["2021-06-01T04:00", "2021-06-01T05:00", "2021-06-01T06:00"],
     "labels at +05:45 put the hours at 15 min past the UTC hour; each hour moved 15 min earlier"),
])
def test_hours_land_on_the_nearest_utc_hour_end(tmp_path, cat, monkeypatch, site, local,
                                                expected, note):
    rows = [(site, t, 10.0 + k) for k, t in enumerate(local)]
    # a whole-hour label beside them: unmoved (10:00 at +1 h = 09:00 UTC); zoned where
    # otter's labels are (one convention per site)
    rows += [("otter", "2021-06-01T10:00" + ("+01:00" if site == "otter" else ""), 5.0)]
    met, led = _both(_csv(tmp_path / "met.csv", rows), cat, monkeypatch)
    want = {e: 10.0 + k for k, e in enumerate(expected)}
    if site == "otter":
        want["2021-06-01T09:00"] = 5.0
    else:
        assert _landed(met, "otter") == {"2021-06-01T09:00": 5.0}
    assert _landed(met, site) == want
    moved = [n for n in led.notes if "moved" in n]
    assert len(moved) == 1 and moved[0].startswith(f"met {site}: {note}")
    assert "than it was measured" in moved[0]
    assert (led.summary()["rejected"] == 0).all() and len(led.table) == 4


def test_one_note_per_site_whatever_its_rows(tmp_path, cat, monkeypatch):
    # 300 hours of each fractional site, in chunks of the chunked reader: one note each,
    # in catalogue order, and the same from both readers
    local = pd.date_range("2021-06-01T01:00", periods=300, freq="h").strftime("%Y-%m-%dT%H:%M")
    rows = [(s, t, 10.0) for s in ("heron", "kestrel", "marten") for t in local]
    path = _csv(tmp_path / "met.csv", rows)
    with monkeypatch.context() as m:
        m.setattr(metfast, "CHUNK_BYTES", 2000)
        met, led = _both(path, cat, monkeypatch)
    moved = [n for n in led.notes if "moved" in n]
    assert [n.split(":")[0] for n in moved] == ["met kestrel", "met marten", "met heron"]
    assert led.notes[:3] == moved                  # first, before the gap notes
    # the record's first and last hours, by hand: 01:00 local at +9.5 = 15:30 UTC the
    # day before -> 16:00; the 300th hour is 12 days 11 hours later
    k = met["temperature"].sel(site="kestrel").dropna("time")["time"].values
    assert str(k[0])[:16] == "2021-05-31T16:00" and str(k[-1])[:16] == "2021-06-13T03:00"


@pytest.mark.parametrize("bad, problem", [("2021-06-05T10:15", "timestamp not on the hour"),
                                          ("2021-06-05T09:30", "duplicate hourly timestamp")])
def test_errors_after_many_moved_chunks(tmp_path, cat, monkeypatch, bad, problem):
    # the bad label far down the file, after many chunks of moved hours: the chunked
    # reader names the line reader's line (09:30 at +9.5 h = 00:00 UTC, the hour that
    # 09:00 local, moved 30 min later, already holds)
    local = pd.date_range("2021-06-01T01:00", periods=200, freq="h").strftime("%Y-%m-%dT%H:%M")
    rows = [("kestrel", t, 10.0) for t in local]
    rows.insert(150, ("kestrel", bad, 1.0))
    with monkeypatch.context() as m:
        m.setattr(metfast, "CHUNK_BYTES", 1500)
        msg = _error_both(_csv(tmp_path / "met.csv", rows), cat, monkeypatch)
    assert "line 152" in msg and problem in msg


def test_start_labels_move_as_end_labels(tmp_path, cat, monkeypatch):
    # hour-beginning 09:00 local at +9.5 = the hour ending 10:00 local = 00:30 UTC -> 01:00
    start = _both(_csv(tmp_path / "s.csv", [("kestrel", "2021-06-01T09:00", 1.0),
                                            ("kestrel", "2021-06-01T10:00", 2.0)], "start"),
                  cat, monkeypatch)
    end = _both(_csv(tmp_path / "e.csv", [("kestrel", "2021-06-01T10:00", 1.0),
                                          ("kestrel", "2021-06-01T11:00", 2.0)]),
                cat, monkeypatch)
    assert _landed(start[0], "kestrel") == _landed(end[0], "kestrel") == {
        "2021-06-01T01:00": 1.0, "2021-06-01T02:00": 2.0}
    assert [n for n in start[1].notes if "moved" in n] == [n for n in end[1].notes if "moved" in n]


def test_labels_already_on_the_utc_hour_stay_with_a_note(tmp_path, cat, monkeypatch):
    # 10:30 local at +9.5 = 01:00 UTC, on the grid already: read as it is (an exact UTC
    # hour end), and said in a note, as the moved labels are (before: no word)
    met, led = _both(_csv(tmp_path / "met.csv", [("kestrel", "2021-06-01T10:30", 1.0),
                                                 ("kestrel", "2021-06-01T11:30", 2.0)]),
                     cat, monkeypatch)
    assert _landed(met, "kestrel") == {"2021-06-01T01:00": 1.0, "2021-06-01T02:00": 2.0}
    assert not [n for n in led.notes if "moved 30 min" in n]
    assert led.notes[0] == ("met kestrel: labels at utc_offset_h 9.5 already on the whole UTC "
                            "hour (minute 30 of their clock) read as UTC hour ends, not moved")


def test_a_site_mixing_moved_and_utc_labels_is_noted_once(tmp_path, cat, monkeypatch):
    # +9.5 h: 09:00 -> 23:30 UTC -> 00:00 (moved); 10:30 = 01:00 UTC (kept);
    # 11:00 -> 01:30 -> 02:00 (moved); +5.75 h: 10:45 = 05:00 UTC (kept), 12:00 -> 06:00
    rows = [("kestrel", "2021-06-01T09:00", 1.0), ("kestrel", "2021-06-01T10:30", 2.0),
            ("kestrel", "2021-06-01T11:00", 3.0),
            ("marten", "2021-06-01T10:45", 4.0), ("marten", "2021-06-01T12:00", 5.0)]
    met, led = _both(_csv(tmp_path / "met.csv", rows), cat, monkeypatch)
    assert _landed(met, "kestrel") == {"2021-06-01T00:00": 1.0, "2021-06-01T01:00": 2.0,
                                       "2021-06-01T02:00": 3.0}
    assert _landed(met, "marten") == {"2021-06-01T05:00": 4.0, "2021-06-01T06:00": 5.0}
    mine = [n for n in led.notes if n.startswith(("met kestrel:", "met marten:"))
            and "UTC hour" in n]
    assert len(mine) == 2
    assert "each hour moved 30 min later" in mine[0] and "minute 30 of their clock" in mine[0]
    assert "minute 45 of their clock" in mine[1] and "moved 15 min earlier" in mine[1]
    assert all(n.endswith("mixes both kinds of label: check its logger's clock") for n in mine)


@pytest.mark.parametrize("site, label", [("otter", "2021-06-01T10:20"),     # whole-hour site
                                         ("kestrel", "2021-06-01T10:15"),   # 00:45 UTC
                                         ("marten", "2021-06-01T10:30"),    # 04:45 UTC
                                         ("otter", "2021-06-01T10:15+09:30")])
def test_a_label_genuinely_off_the_hour_is_still_an_error(tmp_path, cat, monkeypatch, site,
                                                          label):
    zone = label[16:]
    rows = [(site, "2021-06-01T08:00" + zone, 1.0), (site, "2021-06-01T09:00" + zone, 2.0),
            (site, label, 3.0)]
    msg = _error_both(_csv(tmp_path / "met.csv", rows), cat, monkeypatch)
    assert "line 4" in msg and "timestamp not on the hour" in msg and repr(label) in msg
    assert "hourly timestamps (minutes 00)" in msg


def test_a_repeat_made_by_the_move_is_a_located_error(tmp_path, cat, monkeypatch):
    # 10:00 at +9.5 (00:30 UTC, moved to 01:00) and 10:30 (01:00 UTC) are one hour
    path = _csv(tmp_path / "met.csv", [("kestrel", "2021-06-01T10:00", 1.0),
                                       ("kestrel", "2021-06-01T10:30", 2.0)])
    msg = _error_both(path, cat, monkeypatch)
    assert "line 3" in msg and "duplicate hourly timestamp" in msg and "also on line 2" in msg
    assert "moved to the nearest whole UTC hour end" in msg
    # zoned: 01:00+10:30 = 14:30 UTC -> 15:00, and 02:00+11:00 = 15:00 UTC
    path = _csv(tmp_path / "z.csv", [("otter", "2021-04-04T01:00+10:30", 1.0),
                                     ("otter", "2021-04-04T02:00+11:00", 2.0)])
    msg = _error_both(path, cat, monkeypatch)
    assert "line 3" in msg and "duplicate hourly timestamp" in msg
    assert "moved to the nearest whole UTC hour end" in msg
    # a plain repeat gets no such hint: at a whole-hour site, and of two labels already
    # on the UTC hour at +9.5 h (10:30 = 01:00 UTC, not moved)
    for k, (site, label) in enumerate([("otter", "2021-06-01T10:00"),
                                       ("kestrel", "2021-06-01T10:30")]):
        path = _csv(tmp_path / f"p{k}.csv", [(site, label, 1.0), (site, label, 2.0)])
        msg = _error_both(path, cat, monkeypatch)
        assert "duplicate hourly timestamp" in msg and "moved to the nearest" not in msg


def test_shift_rule():
    # the rule by hand: minutes past the UTC hour of a local whole hour -> the move
    offs = np.array([9.5, 5.5, 5.75, 8.75, 12.75, -3.5, -9.5, 1.0, 0.0, -2.5])
    want = [30, 30, -15, -15, -15, 30, 30, 0, 0, 30]
    got = shift_minutes((offs * 60).astype(int).astype("timedelta64[m]"))
    assert got.tolist() == want


# --------------------------------------------------------------- what reads the moved hours
@pytest.mark.filterwarnings("ignore:DatetimeIndex.dayofyear")      # inside pvlib
def test_night_radiation_check_still_behaves(tmp_path, cat):
    # Clear-sky global radiation of Haurwitz (1945) from pvlib (``Location.get_clearsky
    # (model="haurwitz")``, the sun by SPA), averaged over each MEASURED local hour at
    # +9.5 h and +5.75 h: moved onto the UTC grid it raises no "at night" flag (the sun
    # of the moved hour is 30 min away, not enough to put a lit hour 3 deg below the
    # horizon, metchecks.NIGHT_ELEVATION_DEG); the same record three hours off is caught.
    pvlib = pytest.importorskip("pvlib")
    frames = []
    for sid, _, lat, lon, off in SITES[:2]:
        for start in ("2021-03-10T01:00", "2021-06-10T01:00", "2021-12-10T01:00"):
            local = pd.date_range(start, periods=24 * 8, freq="h")
            end_utc = (local - pd.Timedelta(hours=off)).tz_localize("UTC")
            fine = pd.date_range(end_utc[0] - pd.Timedelta("55min"), end_utc[-1], freq="5min")
            ghi = pvlib.location.Location(lat, lon).get_clearsky(fine, model="haurwitz")["ghi"]
            hourly = ghi.rolling(12).mean().reindex(end_utc).to_numpy()   # the hour's 12 values
            frames.append(pd.DataFrame({"site": sid, "time": local.strftime("%Y-%m-%dT%H:%M"),
                                        "sr": np.round(hourly, 1)}))
    df = pd.concat(frames)

    def reasons(sr):
        rows = [f"{s},{t},3.0,20,70,{v},0,1005\n" for s, t, v in zip(df["site"], df["time"], sr)]
        (tmp_path / "met.csv").write_text(HEAD + "".join(rows))
        _, led = read_met(tmp_path / "met.csv", cat)
        return set(led.table["reason"].str.split("; ").explode()) - {""}

    assert df["sr"].max() > 800                                       # real days
    assert not [r for r in reasons(df["sr"]) if "night" in r]
    late = df.groupby(["site", df["time"].str[:7]])["sr"].shift(-3)     # 3 h too early
    assert [r for r in reasons(late.fillna(0)) if "night" in r]


@pytest.mark.filterwarnings("ignore:DatetimeIndex.dayofyear")      # inside pvlib
@pytest.mark.parametrize("zone, hours, first_utc", [
    ("+05:45", 5.75, "2021-03-09T19:00"),     # 01:00+05:45 = 19:15 UTC -> 19:00
    ("+09:30", 9.5, "2021-03-09T16:00"),      # 01:00+09:30 = 15:30 UTC -> 16:00
    ("-03:30", -3.5, "2021-03-10T05:00")])    # 01:00-03:30 = 04:30 UTC -> 05:00
def test_night_check_of_zoned_fractional_labels_at_a_whole_offset_site(tmp_path, cat, zone,
                                                                      hours, first_utc):
    # otter's catalogue offset is whole (+1 h) but its logger writes zoned labels of a
    # fractional clock: each label is read by its own zone (UTC = local - zone), moved to
    # the nearest UTC hour end (15 or 30 min), and the night check sees the sun of that
    # UTC hour at otter.  The record is pvlib's Haurwitz clear sky (Haurwitz 1945, the
    # sun by SPA) averaged over each MEASURED hour; it must raise no "at night" flag, and
    # the same record three hours off must (metchecks.NIGHT_ELEVATION_DEG,
    # NIGHT_RADIATION_MAX).
    pvlib = pytest.importorskip("pvlib")
    _, _, lat, lon, off = SITES[3]
    assert off == 1.0                                                  # a whole offset
    frames = []
    for start in ("2021-03-10T01:00", "2021-06-10T01:00", "2021-12-10T01:00"):
        local = pd.date_range(start, periods=24 * 8, freq="h")
        end_utc = (local - pd.Timedelta(hours=hours)).tz_localize("UTC")
        fine = pd.date_range(end_utc[0] - pd.Timedelta("55min"), end_utc[-1], freq="5min")
        ghi = pvlib.location.Location(lat, lon).get_clearsky(fine, model="haurwitz")["ghi"]
        hourly = ghi.rolling(12).mean().reindex(end_utc).to_numpy()
        frames.append(pd.DataFrame({"time": local.strftime("%Y-%m-%dT%H:%M") + zone,
                                    "sr": np.round(hourly, 1)}))
    df = pd.concat(frames, ignore_index=True)

    def read(sr):
        rows = [f"otter,{t},3.0,20,70,{v},0,1005\n" for t, v in zip(df["time"], sr)]
        (tmp_path / "met.csv").write_text(HEAD + "".join(rows))
        met, led = read_met(tmp_path / "met.csv", cat)
        return met, led, set(led.table["reason"].str.split("; ").explode()) - {""}

    met, led, reasons = read(df["sr"])
    assert df["sr"].max() > 700                                       # real days
    assert not [r for r in reasons if "night" in r]
    assert any(n.startswith(f"met otter: labels at {zone} put the hours") for n in led.notes)
    assert str(met["time"].values[0])[:16] == first_utc        # the first label, moved
    late = df.groupby(df["time"].str[:7])["sr"].shift(-3)              # 3 h too early
    assert [r for r in read(late.fillna(0))[2] if "night" in r]


def _sample_case(tmp_path, cat, site="kestrel"):
    """A weekly sample 09:00-09:00 local at the site, and hourly met whose precipitation
    marks the hours: 1 mm in each of the sample's 168 measured hours, 5 mm in the hour
    before it, 7 mm in the hour after it (within the hourly range)."""
    from workbench.io.samples import read_precipitation
    (tmp_path / "precip.csv").write_text(
        "site,start,end,gauge_depth [mm],sample_depth [mm]\n"
        f"{site},2021-06-01T09:00,2021-06-08T09:00,168,160\n")
    samples, _ = read_precipitation(tmp_path / "precip.csv", cat)
    local = pd.date_range("2021-05-31T01:00", "2021-06-10T00:00", freq="h")   # hour ends
    rain = np.zeros(len(local))
    first = local.get_loc(pd.Timestamp("2021-06-01T10:00"))    # ends 1 h after the start
    rain[first:first + 168] = 1.0
    rain[first - 1], rain[first + 168] = 5.0, 7.0
    rows = [f"{site},{t:%Y-%m-%dT%H:%M},3.0,20,70,0,{r},1005\n" for t, r in zip(local, rain)]
    (tmp_path / "met.csv").write_text(HEAD + "".join(rows))
    met, _ = read_met(tmp_path / "met.csv", cat)
    return samples, met


def test_weekly_sample_at_half_hour_site_and_its_met_hours(tmp_path, cat):
    # The sample's start and end are instants: 09:00 local at +9.5 h = 23:30 UTC the day
    # before, not moved.  Its 168 measured hours are on the grid as the hours ending
    # 01:00 UTC (06-01) ... 00:00 UTC (06-08), each 30 min later than measured, so the
    # sample's edges fall on the middle of a grid hour.
    from workbench.periods import hour_bounds as _hour_bounds
    from workbench.io.metchecks import gauge_comparison
    samples, met = _sample_case(tmp_path, cat)
    assert str(samples["start"].values[0])[:16] == "2021-05-31T23:30"
    assert str(samples["end"].values[0])[:16] == "2021-06-07T23:30"
    times = met["time"].values
    rain = met["precipitation"].sel(site="kestrel").values       # [mm] a depth per hour
    # the dry chain takes the hours whose middle lies in [start, end): 168 hours, the
    # hour before the sample (5 mm, grid middle 23:30 = the start) in and the sample's
    # last measured hour (grid middle 23:30 = the end) out: one hour early at each edge
    a, b = _hour_bounds(times, samples["start"].values, samples["end"].values)
    assert int(b[0] - a[0]) == 168
    assert rain[a[0]] == 5.0 and np.isclose(rain[a[0]:b[0]].sum(), 5.0 + 167)
    # the gauge comparison takes the same hours (wet.hourly.window_sums: an hour whose
    # middle lies in the window); before, it summed the whole grid hours inside, 167 of
    # 168, counted one missing and so never judged a sample of such a site
    g = gauge_comparison(met, samples)
    assert np.isclose(g["met_depth"].iloc[0], 5.0 + 167.0)
    assert int(g["met_hours_missing"].iloc[0]) == 0


def test_weekly_sample_at_quarter_hour_site_and_its_met_hours(tmp_path, cat):
    # +5.75 h: 09:00 local = 03:15 UTC; the measured hours move 15 min earlier, to the
    # grid hours ending 04:00 (06-01) ... 03:00 (06-08), whose middles (03:30 ... 02:30)
    # lie inside [06-01 03:15, 06-08 03:15): the dry chain and the gauge comparison
    # take exactly the sample's hours.
    from workbench.periods import hour_bounds as _hour_bounds
    from workbench.io.metchecks import gauge_comparison
    samples, met = _sample_case(tmp_path, cat, "marten")
    assert str(samples["start"].values[0])[:16] == "2021-06-01T03:15"
    rain = met["precipitation"].sel(site="marten").values
    a, b = _hour_bounds(met["time"].values, samples["start"].values, samples["end"].values)
    assert int(b[0] - a[0]) == 168 and (rain[a[0]:b[0]] == 1.0).all()
    g = gauge_comparison(met, samples)
    assert np.isclose(g["met_depth"].iloc[0], 168.0)
    assert int(g["met_hours_missing"].iloc[0]) == 0


def test_engine_sun_of_a_moved_hour_is_the_sun_of_its_utc_hour(tmp_path, cat):
    # Reference: pvlib's SPA (Reda and Andreas 2004, ``get_solarposition`` method
    # "nrel_numpy", geometric zenith), as tests/surface/test_surface_solar_pvlib.py.
    # After the move the engine's zenith of an hour is SPA's at the middle of the UTC
    # hour it now labels (within 0.6 deg, that file's bound for Spencer's series); the
    # sun of the hour as measured (30 min earlier at +9.5 h) differs by up to the sun's
    # path in 30 min (about 7.5 deg): the known cost of the move.
    pvlib = pytest.importorskip("pvlib")
    from workbench.drydep.canopy import cos_zenith
    lat, lon = SITES[0][2], SITES[0][3]
    local = pd.date_range("2021-03-18T01:00", periods=24 * 6, freq="h")
    rows = [("kestrel", f"{t:%Y-%m-%dT%H:%M}", 20.0) for t in local]
    met, _ = read_met(_csv(tmp_path / "met.csv", rows), cat)
    labels = met["time"].values
    assert len(labels) == len(local)
    acc = {"latitude": np.array([lat]), "longitude": np.array([lon])}
    cz = cos_zenith(labels.astype("datetime64[ns]"), lambda k: acc[k][:, None, None])[0, 0]
    ours = np.rad2deg(np.arccos(np.clip(cz, -1, 1)))

    def spa(instants):
        return pvlib.solarposition.get_solarposition(instants, lat, lon,
                                                     method="nrel_numpy")["zenith"].to_numpy()
    grid_mid = pd.DatetimeIndex(labels).tz_localize("UTC") - pd.Timedelta("30min")
    measured_mid = (local - pd.Timedelta(hours=9.5)).tz_localize("UTC") - pd.Timedelta("30min")
    assert (grid_mid - measured_mid == pd.Timedelta("30min")).all()
    assert np.abs(ours - spa(grid_mid)).max() < 0.6
    cost = np.abs(ours - spa(measured_mid))
    assert 5.0 < cost.max() < 8.0


def test_half_hour_site_runs_end_to_end(tmp_path):
    # The tiny budget scenario of tests/test_budget.py at UTC+0, and the same inputs for
    # a site at +9.5 h: samples and air periods written in local time (00:00 UTC =
    # 09:30 local), met as local whole hours (01:00 UTC = 10:00 local = 00:30 UTC before
    # the move).  Both run `workbench run`; the budgets are the same numbers, and the
    # move's note reaches the run's provenance.
    import test_budget as tb
    from workbench.cli import main
    base, half = tmp_path / "utc", tmp_path / "half"
    base.mkdir()
    half.mkdir()
    tb._write(base)
    tb._write(half)
    (half / "sites.toml").write_text(tb.SITES.replace("utc_offset_h = 0", "utc_offset_h = 9.5"))

    def relabel(name, cols, hours):
        lines = (half / name).read_text().splitlines(keepends=True)
        head = [x for x in lines if x.startswith("#")]
        df = pd.read_csv(half / name, comment="#", dtype=str, keep_default_na=False)
        for c in cols:
            t = pd.to_datetime(df[c]) + pd.Timedelta(hours=hours)
            df[c] = t.dt.strftime("%Y-%m-%dT%H:%M")
        (half / name).write_text("".join(head) + df.to_csv(index=False))
    relabel("precip.csv", ["start", "end"], 9.5)
    relabel("air.csv", ["start", "end"], 9.5)
    relabel("met.csv", ["time"], 9.0)
    assert "2021-02-01T10:00" in (half / "met.csv").read_text()
    for d in (base, half):
        assert main(["run", str(d / "scenario.toml"), "--out", str(d / "out"), "--quiet"]) == 0
    a = pd.read_csv(base / "out" / "budget.csv")
    b = pd.read_csv(half / "out" / "budget.csv")
    assert len(a) and a["flux_kg_ha"].notna().any()
    pd.testing.assert_frame_equal(a, b)
    notes = json.loads((half / "out" / "provenance.json").read_text())["input_notes"]
    assert [n for n in notes if n.startswith("met alpha: utc_offset_h 9.5 puts the local hours "
                                             "on the half UTC hour; each hour moved 30 min later")]
