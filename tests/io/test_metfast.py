"""The chunked met CSV reader gives what the line-by-line reader gives, or declines.

:func:`workbench.io.metfast.read_met_csv_fast` must return the same Dataset (values
bit for bit), the same ledger rows, counts, reasons and notes as the line reader of
:func:`workbench.io.met.read_met`; for any file it cannot read exactly so (quotes,
blanks, text in a number, an unknown site, a repeated hour, ...) it returns None and
the line reader gives its located error.  The spreadsheet-export variants (quoted
cells, CRLF, a byte-order mark, blanks around cells, blank lines, empty columns, free
text in a column not read) are held to the line reader in tests/io/test_sheet_exports.py
(this file would pass 600 lines).
"""
from __future__ import annotations

import gzip
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr

import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io.ledger import CodedRows, Ledger
from workbench.io.met import read_met
from workbench.io.sites import read_sites
from tiny_inputs import SITES

DEMO = Path(__file__).resolve().parents[2] / "demo_data"

HEAD = ("site,time,wind_speed [m/s],temperature [degC],relative_humidity [%],"
        "solar_radiation [W/m2],precipitation [mm],pressure [hPa],cloud_cover [okta],"
        "spare [1]\n")


def _rows(site, start, hours, rh_scale=1.0, seed=0):
    rng = np.random.default_rng(seed)
    t = pd.date_range(start, periods=hours, freq="h")
    out = []
    for k, ti in enumerate(t):
        rh = rng.uniform(40, 100) * rh_scale
        out.append(f"{site},{ti:%Y-%m-%dT%H:%M},{rng.uniform(0, 9):.1f},"
                   f"{rng.uniform(-5, 25):.2f},{rh:.3g},{max(0, rng.uniform(-200, 700)):.0f},"
                   f"{rng.choice([0, 0, 0, 0.2, 1.4])},{rng.uniform(1000, 1020):.1f},"
                   f"{rng.integers(0, 9)},x{k}\n")
    return out


@pytest.fixture()
def cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _line_reader(monkeypatch, path, cat):
    with monkeypatch.context() as m:
        m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
        return read_met(path, cat)


def assert_same(a, b):
    (ds1, l1), (ds2, l2) = a, b
    xr.testing.assert_identical(ds1, ds2)
    for v in ds1.data_vars:
        np.testing.assert_array_equal(ds1[v].values, ds2[v].values)   # NaN where NaN
    pd.testing.assert_frame_equal(l1.table, l2.table)
    pd.testing.assert_frame_equal(l1.summary(), l2.summary())
    pd.testing.assert_frame_equal(l1.reasons(), l2.reasons(), check_dtype=False)
    assert l1.notes == l2.notes


def test_demo_met_as_the_line_reader(monkeypatch):
    cat = read_sites(DEMO / "sites.toml")
    fast = metfast.read_met_csv_fast(DEMO / "met.csv.gz", cat)
    assert fast is not None
    assert_same(fast, _line_reader(monkeypatch, DEMO / "met.csv.gz", cat))
    assert (fast[1].summary()["flagged"] > 0).all()      # the demo's problems are flagged


@pytest.mark.parametrize("chunk", [300, 4096, 1 << 20])
def test_interleaved_sites_flags_and_empty_rows(tmp_path, cat, monkeypatch, chunk):
    """Sites interleaved, RH written as a fraction under % at one site (masked), an empty
    row (rejected), a column not used, start-of-hour labels, one site's times with an
    offset and no newline at the end: in chunks of any size."""
    a = _rows("alpha", "2020-03-01T00:00", 24 * 40)
    b = _rows("beta", "2020-03-05T00:00", 24 * 35, rh_scale=0.01, seed=1)
    b = [r.replace(":00,", ":00+01:00,", 1) for r in b]          # beta's labels all zoned
    rows = [r for pair in zip(a, b) for r in pair] + a[len(b):]
    rows[6] = "alpha,2020-03-01T03:00,,,,,,,,\n"                      # alpha's 4th hour, empty
    text = "# time_label: start\n# station: invented\n" + HEAD + "".join(rows)
    p = tmp_path / "met.csv.gz"
    p.write_bytes(gzip.compress(text.rstrip("\n").encode()))
    fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=chunk)
    assert fast is not None
    assert_same(fast, _line_reader(monkeypatch, p, cat))
    ds, led = fast
    reasons = set(led.reasons()["reason"])
    assert any("looks like a fraction" in r for r in reasons)
    assert "no values in the row" in reasons
    assert any("columns not used: spare [1]" in n for n in led.notes)
    # SI brochure: 0 degC = 273.15 K; an okta is an eighth of the sky (WMO)
    raw = pd.read_csv(p, comment="#")
    first = raw.iloc[0]
    t0 = pd.Timestamp(first["time"])   # start label: +1 h to the end; UTC+1: -1 h to UTC
    got = ds.sel(site="alpha", time=t0)
    assert float(got["temperature"]) == pytest.approx(first["temperature [degC]"] + 273.15,
                                                      rel=1e-15)
    assert float(got["cloud_cover"]) == first["cloud_cover [okta]"] / 8.0
    assert float(got["pressure"]) == pytest.approx(first["pressure [hPa]"] * 100.0, rel=1e-15)


@pytest.mark.parametrize("change, message, located", [
    (lambda t: t.replace("\nalpha,", '\n"alpha",', 1), None, True),    # read fast now
    (lambda t: t.replace("alpha,", "alpha, ", 1), None, True),
    (lambda t: t.replace("\nalpha,", "\n\nalpha,", 1), None, True),
    (lambda t: t.replace("\nalpha,", '\n"alp,ha",', 1), "site not in the catalogue", False),
    (lambda t: t.replace("\nalpha,", '\n"al""pha",', 1), "site not in the catalogue", False),
    (lambda t: t.replace(",1010.5,", ",ten,", 1), "text in a numeric column", True),
    (lambda t: t.replace("\nbeta,", "\ngamma,", 1), "site not in the catalogue", True),
    (lambda t: t.replace("\nbeta,", "\n,", 1), "an empty site cell", True),
    (lambda t: t.replace("T03:00", "T02:00", 1), "duplicate hourly timestamp", True),
    (lambda t: t.replace("T05:00", "T05:30", 1), "timestamp not on the hour", True),
    (lambda t: t.replace("T05:00", "2020-13-45", 1), "not an ISO 8601 timestamp", True),
    (lambda t: t.replace("2020-03-01T05:00", "", 1), "missing timestamp", True),
    (lambda t: t.replace("2020-03-01T05:00", "1820-03-01T05:00", 1), "outside the years", True),
    (lambda t: t.replace(",1010.5,", ",inf,1010.5,", 1), "malformed CSV row", True),
    (lambda t: t.replace(",1010.5,", ",1e999,", 1), "not a finite number", True),
    (lambda t: t.replace(",1010.5,", ",<5,", 1), "censored value not allowed", True),
    (lambda t: t.replace(",1010.5,", ",True,", 1), "text in a numeric column", True),
    (lambda t: t.replace(",1010.5,", ",-nan,", 1), "text in a numeric column", True),
    (lambda t: t.replace("[hPa]", "[parsec]"), "unit", False),
    (lambda t: t.replace("wind_speed", "wind"), "missing required column", False),
    (lambda t: t.replace(",x3\n", ",x3,\n", 1), "malformed CSV row", True),
    (lambda t: t.replace(",x3\n", ",x3,\n", 1).replace(",x5\n", ",x5\n,,,\n", 1),
     "malformed CSV row", False),                   # and a short line: the line reader
])
def test_odd_files_go_to_the_line_reader(tmp_path, cat, monkeypatch, change, message, located):
    """Odd but readable files go to the line reader; a file with an error of one row
    gets the line reader's located error (file, line, column, value, expected) from the
    fast reader itself (no whole-file read); other errors come from the line reader.
    A quoted cell, blanks around a cell and a blank line are read by the fast reader
    (tests/io/test_sheet_exports.py); a quote around a comma or a doubled quote is not."""
    text = HEAD + "alpha,2020-02-28T00:00,4.6,2.3,95,0,0.0,1010.5,0,x\n" + "".join(
        _rows("alpha", "2020-03-01T00:00", 48) + _rows("beta", "2020-03-01", 48, seed=2))
    p = tmp_path / "met.csv"
    p.write_text(change(text))
    if message is None:
        fast = metfast.read_met_csv_fast(p, cat)
        assert (fast is not None) == located
        assert_same(read_met(p, cat), _line_reader(monkeypatch, p, cat))
        return
    with pytest.raises(InputError, match=message) as line_err:
        _line_reader(monkeypatch, p, cat)
    assert str(p) in str(line_err.value)
    if located:
        with pytest.raises(InputError) as err:
            metfast.read_met_csv_fast(p, cat)
        assert str(err.value) == str(line_err.value)
    else:
        assert metfast.read_met_csv_fast(p, cat) is None
    with pytest.raises(InputError) as err:
        read_met(p, cat)
    assert str(err.value) == str(line_err.value)


def _both(rows):
    file, lines, sites, reasons, rejected = rows
    eager = Ledger.for_rows(file, lines, sites, reasons, rejected)
    codes_s, names_s = pd.factorize(np.asarray(sites, dtype=object))
    codes_r, names_r = pd.factorize(np.asarray(reasons, dtype=object))
    coded = Ledger.for_codes(CodedRows(file, np.asarray(lines), codes_s, names_s, codes_r,
                                       np.asarray(names_r, dtype=object), np.asarray(rejected)))
    return eager, coded


def test_coded_ledger_as_the_table():
    rows = ("m.csv", [2, 3, 4, 5, 6], ["a", "a", "b", "b", "b"],
            ["", "x", "x; y", "", "no values"], [False, False, False, False, True])
    eager, coded = _both(rows)
    other = Ledger.for_rows("p.csv", [2, 3], ["a", "b"], ["", "z"], [False, False])
    for e, c in ((eager, coded), (other + eager, other + coded), (eager + other, coded + other)):
        pd.testing.assert_frame_equal(e.table, c.table)
        pd.testing.assert_frame_equal(e.summary(), c.summary())
        pd.testing.assert_frame_equal(e.reasons(), c.reasons(), check_dtype=False)
        e.add_reason("m.csv", [3, 5, 6], "far from the gauge")
        c.add_reason("m.csv", [3, 5, 6], "far from the gauge")
        pd.testing.assert_frame_equal(e.table, c.table)
        pd.testing.assert_frame_equal(e.reasons(), c.reasons(), check_dtype=False)
        assert c.check_balanced() and c.rows() == e.rows()
    assert coded.table.loc[coded.table["line"] == 6, "status"].item() == "rejected"
    assert Ledger().summary().empty and Ledger().reasons().empty


def test_large_ledgers_as_codes_equal_the_table():
    """A reader's ledger of many rows (the line reader, NetCDF) is held as codes."""
    rng = np.random.default_rng(3)
    n = 1000
    rows = ("m.nc", np.arange(n) + 1, rng.choice(["a", "b", "c"], n),
            rng.choice(["", "", "x", "x; y"], n).astype(object), rng.random(n) < 0.1)
    small = Ledger.for_rows(*rows)
    coded = Ledger.for_many_rows(*rows, limit=10)
    assert isinstance(coded.parts[0], CodedRows)
    pd.testing.assert_frame_equal(small.table, coded.table)
    pd.testing.assert_frame_equal(small.summary(), coded.summary())
    pd.testing.assert_frame_equal(small.reasons(), coded.reasons(), check_dtype=False)


# ---------------------------------------------------------------- the on-disk store
@pytest.fixture()
def on_disk(monkeypatch):
    """Every met grid stays in its store (lazy), checked in small groups of sites."""
    import workbench.io.metstore as metstore
    monkeypatch.setattr(metstore, "IN_MEMORY_BYTES", 0)
    monkeypatch.setattr(metfast, "CHECK_ROWS", 5000)


def test_demo_met_on_disk_as_the_line_reader(monkeypatch, on_disk):
    """The store (site-major .npy files, read lazily) holds the line reader's values; a
    block of sites reads only its rows; the Dataset pickles as file names (a dask worker
    reads its own block) and the folder goes with the last Dataset reading it."""
    import gc
    import pickle
    from workbench.io.metstore import is_lazy
    cat = read_sites(DEMO / "sites.toml")
    ds, led = metfast.read_met_csv_fast(DEMO / "met.csv.gz", cat)
    assert is_lazy(ds)
    line = _line_reader(monkeypatch, DEMO / "met.csv.gz", cat)
    assert_same((ds, led), line)
    block = ds.sel(site=list(ds["site"].values[[2, 0]])).isel(time=slice(100, 900))
    assert is_lazy(block)
    xr.testing.assert_identical(block.load(), line[0].sel(site=block["site"].values)
                                .isel(time=slice(100, 900)))
    again = pickle.loads(pickle.dumps(ds.sel(site=ds["site"].values[1:3])))
    assert len(pickle.dumps(ds)) < ds["time"].nbytes + 20_000    # file names, not values
    xr.testing.assert_identical(again.load(), line[0].isel(site=slice(1, 3)))
    folder = Path(ds["wind_speed"].variable._data.array.path).parent
    assert folder.exists()
    del ds, block, again
    gc.collect()
    assert not folder.exists()


@pytest.mark.parametrize("grouped", [True, False])
def test_store_grouped_or_interleaved_sites(tmp_path, cat, monkeypatch, on_disk, grouped):
    """Rows of each site together (read site by site) or interleaved (the fallback sorts
    the rows' site codes): the same values, ledger and notes as the line reader, with
    empty rows, flags and a site whose rows are all empty."""
    a = _rows("alpha", "2020-03-01T00:00", 24 * 30)
    b = _rows("beta", "2020-03-03T00:00", 24 * 20, rh_scale=0.01, seed=1)
    a[5] = "alpha,2020-03-01T05:00,,,,,,,,\n"
    rows = a + b if grouped else [r for pair in zip(a, b) for r in pair] + a[len(b):]
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=4096)
    assert fast is not None
    assert_same(fast, _line_reader(monkeypatch, p, cat))


# ------------------------------------------------- byte ranges parsed on several threads
@pytest.fixture()
def threads():
    """Set the engine's thread setting (workbench.threads) for one test."""
    from workbench.threads import set_threads
    yield set_threads
    set_threads(None)


def _grouped_file(tmp_path, gz=True):
    """Two sites, each site's rows together (so that small byte ranges cut inside a
    site), an empty row, RH as a fraction at beta (masked), a gap at alpha."""
    a = _rows("alpha", "2020-03-01T00:00", 24 * 30)
    b = _rows("beta", "2020-03-03T00:00", 24 * 25, rh_scale=0.01, seed=1)
    a[40] = "alpha,2020-03-02T16:00,,,,,,,,\n"
    del a[100:130]
    text = "# station: invented\n" + HEAD + "".join(a + b)
    p = tmp_path / ("met.csv.gz" if gz else "met.csv")
    p.write_bytes(gzip.compress(text.encode()) if gz else text.encode())
    return p


@pytest.mark.parametrize("chunk", [700, 5000, 1 << 20])
def test_byte_ranges_on_two_threads_as_one_and_as_the_line_reader(
        tmp_path, cat, monkeypatch, on_disk, threads, chunk):
    """Many byte ranges (cut at line ends, inside a site's rows) parsed on two threads and
    groups of sites checked on two threads give, in file order, the values, ledger (line
    numbers included), reasons and notes of one thread and of the line reader; so does
    the whole file in one range."""
    p = _grouped_file(tmp_path)
    threads(1)
    one = metfast.read_met_csv_fast(p, cat, chunk_bytes=chunk)
    threads(2)
    two = metfast.read_met_csv_fast(p, cat, chunk_bytes=chunk)
    assert one is not None and two is not None
    assert_same(one, two)
    assert_same(two, _line_reader(monkeypatch, p, cat))
    table = two[1].table
    assert table["line"].tolist() == list(range(3, 3 + len(table)))   # meta + header above
    assert table.loc[table["line"] == 3 + 40, "status"].item() == "rejected"


@pytest.mark.parametrize("n_threads", [1, 2])
def test_a_bad_cell_in_the_second_range_is_named_at_its_file_line(
        tmp_path, cat, monkeypatch, threads, n_threads):
    """A cell that is no number in the second byte range: the fast reader raises the line
    reader's error, naming the file line of that cell (not a line counted from the
    range), without reading the whole file line by line."""
    p = _grouped_file(tmp_path, gz=False)
    lines = p.read_text().splitlines(keepends=True)
    k = next(i for i in range(2, len(lines)) if sum(map(len, lines[:i])) > 7000)
    cells = lines[k].split(",")
    cells[2] = "ten"                                     # wind speed of a row of range 2
    lines[k] = ",".join(cells)
    p.write_text("".join(lines))
    threads(n_threads)
    with pytest.raises(InputError, match="text in a numeric column") as line_err:
        _line_reader(monkeypatch, p, cat)
    assert line_err.value.line == k + 1 and "ten" in str(line_err.value)
    from workbench.io.table import RawTable
    monkeypatch.setattr(RawTable, "read", classmethod(lambda *a: pytest.fail("whole-file read")))
    with pytest.raises(InputError) as err:
        metfast.read_met_csv_fast(p, cat, chunk_bytes=5000)
    assert str(err.value) == str(line_err.value)


def test_a_column_of_words_in_every_range_is_refused_as_the_line_reader_does(
        tmp_path, cat, monkeypatch, threads):
    """The C parser reads a column that holds only true/false words as 1.0/0.0; the line
    reader refuses the words.  Every range holds only words (or empty cells) in one
    column: on any number of threads the fast reader names the first word as the line
    reader does."""
    p = _grouped_file(tmp_path, gz=False)
    lines = p.read_text().splitlines(keepends=True)
    for i in range(2, len(lines)):
        cells = lines[i].split(",")
        if cells[2]:
            cells[8] = "true" if i % 2 else "FALSE"
        lines[i] = ",".join(cells)
    p.write_text("".join(lines))
    with pytest.raises(InputError, match="text in a numeric column") as line_err:
        _line_reader(monkeypatch, p, cat)
    for n in (1, 2):
        threads(n)
        with pytest.raises(InputError) as err:
            metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
        assert str(err.value) == str(line_err.value)


def test_gzip_of_several_members_and_a_cut_gzip(tmp_path, cat, monkeypatch, threads):
    """A gzip file of two members (``cat a.gz b.gz``) reads as its whole text; a gzip cut
    short is declined and the line reader names the problem."""
    p = _grouped_file(tmp_path, gz=False)
    text = p.read_bytes()
    half = text.index(b"\nbeta,") + 1
    two = tmp_path / "two.csv.gz"
    two.write_bytes(gzip.compress(text[:half]) + gzip.compress(text[half:]))
    threads(2)
    fast = metfast.read_met_csv_fast(two, cat, chunk_bytes=4000)
    assert fast is not None
    assert_same(fast, _line_reader(monkeypatch, two, cat))
    cut = tmp_path / "cut.csv.gz"
    cut.write_bytes(gzip.compress(text)[:-2000])
    assert metfast.read_met_csv_fast(cut, cat) is None
    with pytest.raises(InputError, match="gzip"):
        read_met(cut, cat)


def _cell(lines, k, col, value):
    cells = lines[k].split(",")
    cells[col] = value
    lines[k] = ",".join(cells)


@pytest.mark.parametrize("errors", [
    [(40, 2, "ten"), (700, 0, "gamma")],            # the site is checked before numbers
    [(700, 2, "ten"), (40, 7, "x")],                # wind speed before pressure
    [(800, 7, "x"), (900, 7, "<3")],                # censored before text, in one column
    [(30, 2, "ten"), (600, 1, "2020-03-08T12:00")],  # a repeated hour before numbers
    [(30, 1, "2020-03-02T00:30"), (650, 1, "2020-03-08T12:00")],  # off the hour first
    [(30, 1, "2020-03-02T00:00+01:00x"), (650, 1, "20200-03-08")],  # two bad times
])
@pytest.mark.parametrize("n_threads", [1, 2])
def test_several_errors_in_several_ranges_raise_what_the_line_reader_raises(
        tmp_path, cat, monkeypatch, threads, errors, n_threads):
    """Errors of different kinds in different byte ranges: the line reader raises by the
    order of its checks, not by position; the fast reader (which keeps the first row
    of each kind) raises the same error, on one thread or two."""
    p = _grouped_file(tmp_path, gz=False)
    lines = p.read_text().splitlines(keepends=True)
    for k, col, value in errors:
        _cell(lines, k, col, value)
    p.write_text("".join(lines))
    with pytest.raises(InputError) as line_err:
        _line_reader(monkeypatch, p, cat)
    threads(n_threads)
    with pytest.raises(InputError) as err:
        metfast.read_met_csv_fast(p, cat, chunk_bytes=4000)
    assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("n_threads", [1, 2])
def test_a_repeated_hour_in_interleaved_sites_as_the_line_reader(
        tmp_path, cat, monkeypatch, on_disk, threads, n_threads):
    """Sites interleaved (the groups gather each site's rows through the sort order):
    a repeated hour far from its first row is named at its line, with the first."""
    a = _rows("alpha", "2020-03-01T00:00", 24 * 30)
    b = _rows("beta", "2020-03-03T00:00", 24 * 20, seed=1)
    rows = [r for pair in zip(a, b) for r in pair] + a[len(b):]
    rows[900] = rows[900].split(",", 2)[0] + "," + rows[10].split(",", 2)[1] + "," \
        + rows[900].split(",", 2)[2]
    assert rows[900].split(",")[:2] == rows[10].split(",")[:2]
    p = tmp_path / "met.csv"
    p.write_text(HEAD + "".join(rows))
    with pytest.raises(InputError, match="duplicate hourly timestamp") as line_err:
        _line_reader(monkeypatch, p, cat)
    threads(n_threads)
    with pytest.raises(InputError) as err:
        metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
    assert str(err.value) == str(line_err.value)
    assert "line 902" in str(err.value) and "also on line 12" in str(err.value)


def _zone(lines, k, zone):
    """Give the time of data line k a zone (appended to its text) or take it away."""
    cells = lines[k].split(",")
    cells[1] = cells[1] + zone if zone else cells[1].split("+")[0].rstrip("Z")
    lines[k] = ",".join(cells)


@pytest.mark.parametrize("case", ["zoned among naive", "naive among zoned",
                                  "after an hour off", "zoned and off the hour"])
@pytest.mark.parametrize("n_threads", [1, 2])
def test_a_label_breaking_its_sites_zone_convention_as_the_line_reader(
        tmp_path, cat, monkeypatch, threads, case, n_threads):
    """One site's labels all zoned or all naive: the label breaking the site's majority
    convention gets the line reader's located error from the fast reader too, from any
    byte range; before the hours are checked (an hour off the whole hour earlier in the
    file, or the zoned label itself off the hour, still gets the zone error).  Before,
    the zoned row of "zoned among naive" (alpha, UTC+1, "+01:00": the same instant) was
    read without a word."""
    p = _grouped_file(tmp_path, gz=False)
    lines = p.read_text().splitlines(keepends=True)
    lines = [ln.rstrip("\n") for ln in lines]
    if case == "naive among zoned":             # beta (UTC+0) all "Z" but one label
        for k in range(2, len(lines)):
            if lines[k].startswith("beta,"):
                _zone(lines, k, "Z")
        k = next(k for k in range(len(lines) - 1, 2, -1) if lines[k].startswith("beta,"))
        _zone(lines, k - 200, "")
        where = k - 200
    else:
        where = 500
        _zone(lines, where, "+05:30" if case == "zoned and off the hour" else "+01:00")
        if case == "after an hour off":
            _cell(lines, 30, 1, lines[30].split(",")[1][:-2] + "30")
    p.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError, match="mix zoned and naive timestamps") as line_err:
        _line_reader(monkeypatch, p, cat)
    assert f"line {where + 1}," in str(line_err.value)
    threads(n_threads)
    for chunk in (4000, 1 << 20):
        with pytest.raises(InputError) as err:
            metfast.read_met_csv_fast(p, cat, chunk_bytes=chunk)
        assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("chunk", [3000, 1 << 20])
@pytest.mark.parametrize("n_threads", [1, 2])
def test_missing_value_texts_as_the_line_reader(tmp_path, cat, monkeypatch, on_disk, threads,
                                                chunk, n_threads):
    """NA, n/a, N/A, NaN, nan, - and -- cells (any case) in several columns and byte
    ranges, one row of them only (rejected: no values), one in the column not used (not
    counted): the same values, ledger and note from both readers, on one thread or two."""
    p = _grouped_file(tmp_path, gz=False)
    lines = p.read_text().splitlines(keepends=True)
    lines = [ln.rstrip("\n") for ln in lines]
    for k, col, value in [(10, 2, "NA"), (20, 3, "n/a"), (300, 3, "N/A"), (400, 7, "NaN"),
                          (450, 7, "nan"), (800, 4, "--"), (900, 9, "NA"), (1000, 2, "Na")]:
        _cell(lines, k, col, value)
    for k in range(600, 1200, 70):             # 9 of them: "and 4 more"
        _cell(lines, k, 6, "-")
    for col in range(2, 9):
        _cell(lines, 700, col, "NA")
    p.write_text("\n".join(lines) + "\n")
    threads(n_threads)
    fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=chunk)
    assert fast is not None
    line = _line_reader(monkeypatch, p, cat)
    assert_same(fast, line)
    note = [n for n in fast[1].notes if "read as missing" in n]
    assert note == [
        "met.csv: cells read as missing (as empty cells): wind_speed [m/s] 'NA' x2 (lines "
        "11, 701); wind_speed [m/s] 'Na' x1 (line 1001); temperature [degC] 'n/a' x1 (line "
        "21); temperature [degC] 'N/A' x1 (line 301); temperature [degC] 'NA' x1 (line 701); "
        "relative_humidity [%] 'NA' x1 (line 701); relative_humidity [%] '--' x1 (line 801); "
        "solar_radiation [W/m2] 'NA' x1 (line 701); precipitation [mm] '-' x9 (lines 601, "
        "671, 741, 811, 881 and 4 more); precipitation [mm] 'NA' x1 (line 701); pressure "
        "[hPa] 'NaN' x1 (line 401); pressure [hPa] 'nan' x1 (line 451); pressure [hPa] 'NA' "
        "x1 (line 701); cloud_cover [okta] 'NA' x1 (line 701)"]
    table = fast[1].table
    assert table.loc[table["line"] == 701, "status"].item() == "rejected"
    ds = fast[0]
    assert np.isnan(ds["wind_speed"].values).sum() > 0
