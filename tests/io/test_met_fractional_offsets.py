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
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.methours import shift_minutes
from workbench.io.sites import read_sites

_spec = importlib.util.spec_from_file_location(        # its check of the two readers
    "_metfast_cases", Path(__file__).with_name("test_metfast.py"))
_cases = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_cases)
assert_same = _cases.assert_same

_SITE = """\
[[site]]
id = "{id}"
name = "{name}"
latitude = {lat}
longitude = {lon}
elevation_m = 30.0
land_use = "grass"
canopy_height_m = 0.1
wind_height_m = 10.0
sampler_height_m = 3.0
utc_offset_h = {off}
"""
#: Invented sites at real offsets (coordinates in the offsets' longitudes).
SITES = [("kestrel", "Kestrel Test Plain", -12.5, 130.8, 9.5),
         ("marten", "Marten Test Terrace", 27.7, 85.3, 5.75),
         ("heron", "Heron Test Cove", 47.6, -52.7, -3.5),
         ("otter", "Otter Test Field", 52.0, 5.0, 1.0)]
HEAD = ("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
        "solar_radiation [W/m2],precipitation [mm],pressure [hPa]\n")


@pytest.fixture()
def cat(tmp_path):
    (tmp_path / "sites.toml").write_text("\n".join(
        _SITE.format(id=i, name=n, lat=la, lon=lo, off=o) for i, n, la, lo, o in SITES))
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
    with pytest.raises(InputError) as fast:
        read_met(path, cat)
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


def test_labels_already_on_the_utc_hour_stay(tmp_path, cat, monkeypatch):
    # 10:30 local at +9.5 = 01:00 UTC, on the grid already: read as before, no note
    met, led = _both(_csv(tmp_path / "met.csv", [("kestrel", "2021-06-01T10:30", 1.0),
                                                 ("kestrel", "2021-06-01T11:30", 2.0)]),
                     cat, monkeypatch)
    assert _landed(met, "kestrel") == {"2021-06-01T01:00": 1.0, "2021-06-01T02:00": 2.0}
    assert not [n for n in led.notes if "moved" in n]


@pytest.mark.parametrize("site, label", [("otter", "2021-06-01T10:20"),     # whole-hour site
                                         ("kestrel", "2021-06-01T10:15"),   # 00:45 UTC
                                         ("marten", "2021-06-01T10:30"),    # 04:45 UTC
                                         ("otter", "2021-06-01T10:15+09:30")])
def test_a_label_genuinely_off_the_hour_is_still_an_error(tmp_path, cat, monkeypatch, site,
                                                          label):
    rows = [(site, "2021-06-01T08:00" + label[16:], 1.0), (site, "2021-06-01T09:00" + label[16:], 2.0),
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
    # a plain repeat at a whole-hour site gets no such hint
    path = _csv(tmp_path / "p.csv", [("otter", "2021-06-01T10:00", 1.0),
                                     ("otter", "2021-06-01T10:00", 2.0)])
    assert "moved to the nearest" not in _error_both(path, cat, monkeypatch)


def test_shift_rule():
    # the rule by hand: minutes past the UTC hour of a local whole hour -> the move
    offs = np.array([9.5, 5.5, 5.75, 8.75, 12.75, -3.5, -9.5, 1.0, 0.0, -2.5])
    want = [30, 30, -15, -15, -15, 30, 30, 0, 0, 30]
    got = shift_minutes((offs * 60).astype(int).astype("timedelta64[m]"))
    assert got.tolist() == want
