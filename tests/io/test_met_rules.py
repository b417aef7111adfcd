"""The hourly met reader follows the sample readers' two rules (docs/data_formats.md):
every time label of one site carries a zone or none, and empty, NA, N/A, NaN, - and --
(any case) are missing values counted in one ledger note per file; any other text is an
error ("not detected" words with the hint to write ``<limit``).  Each case is read by
the chunked reader and by the line reader (``read_met_csv_fast`` switched off), which
must agree to the character.
"""
from __future__ import annotations

from datetime import datetime, timezone

import numpy as np
import pytest

import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.sites import read_sites
from tiny_inputs import SITES

HEAD = ("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
        "solar_radiation [W/m2],precipitation [mm],pressure [hPa]\n")


@pytest.fixture()
def cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _rows(site, day, hours, zone=""):
    return [f"{site},2020-06-{day:02d}T{h:02d}:00{zone},{2 + h % 3}.5,1{h % 10}.0,70,"
            f"{100 * (6 <= h <= 18)},0.0,1012.5\n" for h in range(hours)]


def _both(monkeypatch, path, cat):
    """(chunked reader, line reader): each a (Dataset, Ledger) or the InputError text."""
    out = []
    for fast in (True, False):
        with monkeypatch.context() as m:
            if not fast:
                m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
            try:
                got = metfast.read_met_csv_fast(path, cat) if fast else read_met(path, cat)
                assert got is not None               # the chunked reader took the file
                out.append(got)
            except InputError as exc:
                out.append(str(exc))
    return out


def _error(monkeypatch, path, cat):
    fast, line = _both(monkeypatch, path, cat)
    assert isinstance(line, str) and fast == line
    return line


def test_zoned_label_among_naive_ones_of_a_site(tmp_path, cat, monkeypatch):
    """alpha is UTC+1: '05:00+01:00' is the naive '05:00', so the row was read as the
    same instant without a word; now the mixture is refused at that label, naming the
    site's first label in the majority convention."""
    rows = _rows("alpha", 1, 24)
    rows[9] = rows[9].replace("T09:00", "T09:00+01:00")
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    msg = _error(monkeypatch, p, cat)
    assert msg == (f"{p}, line 11, column 'time': time labels of site 'alpha' mix zoned and "
                   "naive timestamps: this one is with a time zone: got '2020-06-01T09:00+01:00'"
                   ", expected every time label of the site without a zone, as time "
                   "'2020-06-01T00:00' on line 2 (a naive label is the site's local standard "
                   "time, utc_offset_h; add the zone to every label or to none)")


def test_a_tie_takes_the_sites_first_label_and_sites_may_differ(tmp_path, cat, monkeypatch):
    """Half of beta's labels zoned, its first one naive: the first zoned label is the
    one named; alpha (all zoned) beside it is fine on its own."""
    rows = _rows("alpha", 1, 4, zone="Z") + _rows("beta", 1, 2) + _rows("beta", 2, 2, zone="Z")
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    msg = _error(monkeypatch, p, cat)
    assert "line 8, column 'time'" in msg and "site 'beta'" in msg
    assert "without a zone, as time '2020-06-01T00:00' on line 6" in msg


def test_one_convention_per_site_reads_the_zone_as_written(tmp_path, cat, monkeypatch):
    """alpha all '+01:00', beta all naive: read by both readers alike; the zoned labels
    are converted to UTC as Python's ISO 8601 parser (datetime.fromisoformat, standard
    library) converts them."""
    rows = _rows("alpha", 1, 24, zone="+01:00") + _rows("beta", 1, 24)
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    fast, line = _both(monkeypatch, p, cat)
    np.testing.assert_array_equal(fast[0]["temperature"].values, line[0]["temperature"].values)
    assert fast[1].notes == line[1].notes
    utc = datetime.fromisoformat("2020-06-01T05:00+01:00").astimezone(timezone.utc)
    got = fast[0]["temperature"].sel(site="alpha", time=np.datetime64(utc.replace(tzinfo=None)))
    assert float(got) == pytest.approx(15.0 + 273.15)       # hour 5: "15.0" degC


@pytest.mark.parametrize("text", ["NA", "na", "N/A", "n/a", "NaN", "nan", "NAN", "-", "--"])
@pytest.mark.parametrize("col, name", [(3, "temperature"), (7, "pressure")])
def test_missing_value_texts_are_counted(tmp_path, cat, monkeypatch, text, col, name):
    """Each missing-value text (any case) is a missing value, named in one note with its
    column, count and lines (in a middle column and in the last one); the row keeps its
    other values."""
    rows = _rows("alpha", 1, 24)
    for k in (3, 7):
        cells = rows[k].rstrip("\n").split(",")
        cells[col] = text
        rows[k] = ",".join(cells) + "\n"
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    fast, line = _both(monkeypatch, p, cat)
    assert fast[1].notes == line[1].notes
    header = {"temperature": "temperature [degC]", "pressure": "pressure [hPa]"}[name]
    assert (f"met.csv: cells read as missing (as empty cells): {header} {text!r} x2 "
            "(lines 5, 9)") in fast[1].notes
    got = fast[0][name].sel(site="alpha").values
    assert np.isnan(got).sum() == 2
    np.testing.assert_array_equal(got, line[0][name].sel(site="alpha").values)
    assert (fast[1].table["status"] != "rejected").all()


@pytest.mark.parametrize("text, problem", [
    ("nd", "text in a numeric column (a 'not detected' code? this column takes numbers only: leave the cell empty)"),
    ("n.a.", "text in a numeric column (a 'no value' mark? leave the cell empty, or write NA)"),
    ("missing", "text in a numeric column (a 'no value' mark? leave the cell empty, or "
                "write NA)"),
    ("N/A?", "text in a numeric column"),
])
def test_other_texts_are_errors(tmp_path, cat, monkeypatch, text, problem):
    """A text that is no missing-value text: the located error of the sample readers,
    the same from both readers."""
    rows = _rows("alpha", 1, 24)
    for k, value in ((3, "NA"), (5, text), (9, "-")):   # missing texts beside it
        cells = rows[k].split(",")
        cells[2] = value
        rows[k] = ",".join(cells)
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    msg = _error(monkeypatch, p, cat)
    assert msg == (f"{p}, line 7, column 'wind_speed [m/s]': {problem}: got {text!r}, expected "
                   "a number (or empty, NA, N/A, NaN or - for missing)")
