"""A field trial of the CSV readers: files as users feed them.

Every case is an edit a spreadsheet, a logger or a second upload makes to a valid tiny
file (tests/tiny_inputs.py: invented sites alpha and beta).  What the user reads must
be one located message (file, line, column, value, what was expected) or a flag or a
note with its reason; never a traceback and never a number that looks complete.  Each
case says which: ``("error", [texts])`` (an InputError whose message starts with the
file and holds the texts), ``("reason", text)`` (a ledger row with that reason),
``("note", text)`` (a ledger note) or ``("same", None)`` (read as the clean file: the
edit only changes the form, e.g. a byte-order mark).

The met cases run through both CSV readers (the chunked one and the line reader it
hands odd files to).  The cases that failed on the code before the trial (commit
7578091) are the tests at the end of the file, each saying what was read before.
"""
from __future__ import annotations

import re

import numpy as np
import pytest

from tiny_inputs import AIR, PRECIP, SITES, met_text
from workbench.errors import InputError
from workbench.io import read_air, read_precipitation, read_sites

MET = met_text(72)


def _cell(text, k, col, new):
    """`text` with the cell of column `col` (header starting so) on text line `k`
    (0-based) replaced by `new`."""
    lines = text.splitlines()
    head = next(ln for ln in lines if not ln.startswith("#")).split(",")
    j = next(i for i, h in enumerate(head) if h.startswith(col))
    cells = lines[k].split(",")
    cells[j] = new
    lines[k] = ",".join(cells)
    return "\n".join(lines) + "\n"


def _semicolons(text):
    out = []
    for ln in text.splitlines():
        out.append(ln if ln.startswith("#") else ";".join(
            re.sub(r"^(-?\d+)\.(\d+)$", r"\1,\2", c) for c in ln.split(",")))
    return "\n".join(out) + "\n"


def _dates(order):
    def edit(text):
        return re.sub(r"(\d{4})-(\d\d)-(\d\d)T(\d\d:\d\d)",
                      lambda m: (f"{m[3]}/{m[2]}" if order == "dmy" else f"{m[2]}/{m[3]}")
                      + f"/{m[1]} {m[4]}", text)
    return edit


def _twice(text):
    body = [ln for ln in text.splitlines() if ln and not ln.startswith("#")][1:]
    return text + "\n".join(body) + "\n"


# reader key -> (file name, clean text, data line (0-based text line), value column)
FILES = {"precipitation": ("p.csv", PRECIP, 1, "SO4 [mg/L]"),
         "air": ("a.csv", AIR, 2, "SO2"),
         "met": ("met.csv", MET, 5, "temperature")}

WHOLE_FILE = {   # case -> edit of the whole text
    "utf8_bom": lambda t: "\ufeff" + t,
    "windows_line_ends": lambda t: t.replace("\n", "\r\n"),
    "semicolons_decimal_commas": _semicolons,
    "dates_dd_mm_yyyy": _dates("dmy"),
    "dates_mm_dd_yyyy": _dates("mdy"),
    "trailing_empty_columns": lambda t: "\n".join(
        ln if ln.startswith("#") else ln + ",," for ln in t.splitlines()) + "\n",
    "same_rows_uploaded_twice": _twice,
}

SEMI = ("error", ["semicolon-separated header", "expected comma-separated values with a "
                  "decimal point"])
DATE = ("error", ["column 'start'", "not an ISO 8601 timestamp (a date in day/month or "
                  "month/day order?"])
DATE_MET = ("error", ["column 'time'", "not an ISO 8601 timestamp (a date in day/month or "
                      "month/day order?"])
NO_HEADER = ("note", "2 columns without a header (columns")
EXPECT_WHOLE = {
    ("precipitation", "utf8_bom"): ("same", None),
    ("precipitation", "windows_line_ends"): ("same", None),
    ("precipitation", "semicolons_decimal_commas"): SEMI,
    ("precipitation", "dates_dd_mm_yyyy"): DATE,
    ("precipitation", "dates_mm_dd_yyyy"): DATE,
    ("precipitation", "trailing_empty_columns"): NO_HEADER,
    ("precipitation", "same_rows_uploaded_twice"):
        ("note", "p.csv: 4 exact repeats dropped: lines 6-9 repeat lines 2-5"),
    ("air", "utf8_bom"): ("same", None),
    ("air", "windows_line_ends"): ("same", None),
    ("air", "semicolons_decimal_commas"): SEMI,
    ("air", "dates_dd_mm_yyyy"): DATE,
    ("air", "dates_mm_dd_yyyy"): DATE,
    ("air", "trailing_empty_columns"): NO_HEADER,
    ("air", "same_rows_uploaded_twice"):
        ("note", "a.csv: 3 exact repeats dropped: lines 6-8 repeat lines 3-5"),
    ("met", "utf8_bom"): ("same", None),
    ("met", "windows_line_ends"): ("same", None),
    ("met", "semicolons_decimal_commas"): SEMI,
    ("met", "dates_dd_mm_yyyy"): DATE_MET,
    ("met", "dates_mm_dd_yyyy"): DATE_MET,
    ("met", "trailing_empty_columns"): NO_HEADER,
    ("met", "same_rows_uploaded_twice"):    # before: an error at line 75
        ("note", "met.csv: 72 exact repeats dropped: lines 75-146 repeat lines 3-74"),
}

# cell values typed into one value cell -> what each reader says
CELLS = ["#N/A", "#VALUE!", " 1.5 ", "1 234.5", '"1,234.5"', "1,5", "-999", "-9999",
         "-99.9", "9999", "n.d.", "<0.02", "LOD", "", "1.5 mg"]


def _expect_cell(reader, value):
    label = {"precipitation": "SO4", "air": "SO2", "met": "temperature"}[reader]
    col = {"precipitation": "'SO4 [mg/L]'", "air": "'SO2 [ug/m3]'",
           "met": "'temperature [degC]'"}[reader]
    line = {"precipitation": 2, "air": 3, "met": 6}[reader]
    at = f"line {line}, column {col}"
    if value == "#N/A":
        return ("note", f"cells read as missing (as empty cells): {col[1:-1]} '#N/A' x1 "
                        f"(line {line})")
    if value == "#VALUE!":
        return ("error", [at, "a spreadsheet formula error", "got '#VALUE!'"])
    if value == " 1.5 ":
        return ("value", 1.5)
    if value in ("1 234.5", '"1,234.5"'):
        return ("error", [at, "a thousands separator?", f"got '{value.strip(chr(34))}'"])
    if value == "1,5":
        return ("error", [f"line {line}:", "wrong number of fields; a decimal comma, as in "
                                           "'1,5'? write '1.5'"])
    if value in ("-999", "-9999", "-99.9", "9999"):
        unit = " degC" if reader == "met" else ""
        return ("reason", f"{label} {value}{unit} looks like a missing-value code (masked)")
    if value in ("n.d.", "LOD"):
        what = ("this column takes numbers only: leave the cell empty" if reader == "met"
                else "write '<limit', e.g. '<0.02'")
        return ("error", [at, f"a 'not detected' code? {what}", f"got '{value}'"])
    if value == "<0.02":
        if reader == "met":
            return ("error", [at, "censored value not allowed here", "got '<0.02'"])
        return ("reason", f"{label} below detection")
    if value == "":
        return (("reason", "temperature missing (no value)") if reader == "met"
                else ("value", np.nan))
    if value == "1.5 mg":
        return ("error", [at, "a unit in the cell?", "got '1.5 mg'"])
    raise AssertionError(value)


@pytest.fixture(params=["chunked", "line"])
def readers(request, monkeypatch):
    """The three CSV readers; the met one through each of its two paths."""
    import workbench.io.metfast as metfast
    from workbench.io import read_met
    if request.param == "line":
        monkeypatch.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
    return {"precipitation": read_precipitation, "air": read_air, "met": read_met}


@pytest.fixture
def cat(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    return read_sites(tmp_path / "sites.toml")


def _read(readers, reader, cat, path):
    return readers[reader](path, cat)


def _check(kind, want, got, path, clean=None):
    """Hold what a reader did (`got`: the InputError, or (ds, ledger)) to the case."""
    if kind == "error":
        assert isinstance(got, InputError), f"read without a message: {got[1].notes}"
        msg = str(got)
        assert msg.startswith(f"{path}, line "), msg
        for text in want:
            assert text in msg, msg
        return
    assert not isinstance(got, InputError), f"refused: {got}"
    ds, led = got
    if kind == "same":
        ds0, led0 = clean
        assert led.table["status"].tolist() == led0.table["status"].tolist()
        for v in ds0.data_vars:
            if ds0[v].dtype.kind == "f":
                np.testing.assert_array_equal(ds[v].values, ds0[v].values)
    elif kind == "note":
        assert any(want in n for n in led.notes), led.notes
    elif kind == "reason":
        flagged = led.table[led.table["status"] != "accepted"]
        assert any(want in r for r in flagged["reason"]), led.table
    else:
        raise AssertionError(kind)


def _outcome(fn):
    try:
        return fn()
    except InputError as e:
        return e


@pytest.mark.parametrize("reader", list(FILES))
@pytest.mark.parametrize("case", list(WHOLE_FILE))
def test_spreadsheet_exports_and_uploads(tmp_path, readers, cat, reader, case):
    name, text, _, _ = FILES[reader]
    clean_path = tmp_path / ("clean_" + name)
    clean_path.write_text(text)
    clean = _read(readers, reader, cat, clean_path)
    path = tmp_path / name
    path.write_text(WHOLE_FILE[case](text), newline="")
    kind, want = EXPECT_WHOLE[(reader, case)]
    _check(kind, want, _outcome(lambda: _read(readers, reader, cat, path)), path, clean)


@pytest.mark.parametrize("reader", list(FILES))
@pytest.mark.parametrize("value", CELLS)
def test_cells_as_typed(tmp_path, readers, cat, reader, value):
    name, text, k, col = FILES[reader]
    path = tmp_path / name
    path.write_text(_cell(text, k, col, value))
    kind, want = _expect_cell(reader, value)
    got = _outcome(lambda: _read(readers, reader, cat, path))
    if kind == "value":                      # read as the number typed, or as missing
        assert not isinstance(got, InputError), str(got)
        ds, led = got
        var = {"precipitation": "SO4", "air": "SO2", "met": "temperature"}[reader]
        v = ds[var].values
        first = v[0, 3] if reader == "met" else v[0]       # the edited row (site alpha)
        if np.isnan(want):
            assert np.isnan(first)
        else:
            assert not np.isnan(first)
        return
    _check(kind, want, got, path)


# ----------------------------------------------------------------- time labels
def test_24_00_is_read_as_midnight_with_a_note(tmp_path, readers, cat):
    p = tmp_path / "met.csv"
    p.write_text(MET.replace("2020-01-08T00:00", "2020-01-07T24:00"))
    ds, led = readers["met"](p, cat)
    assert any("labels at 24:00 (end of day) in 'time' read as 00:00 of the next day: 1 row "
               "(line 26)" in n for n in led.notes), led.notes
    assert ds.sizes["time"] == 72


def test_a_zoned_label_among_naive_ones_is_located(tmp_path, readers, cat):
    p = tmp_path / "met.csv"
    p.write_text(MET.replace("T01:00,", "T01:00+01:00,", 1))
    with pytest.raises(InputError) as e:
        readers["met"](p, cat)
    msg = str(e.value)
    assert msg.startswith(f"{p}, line 3, column 'time': time labels of site 'alpha' mix "
                          "zoned and naive timestamps"), msg


def test_iso_labels_with_offsets_are_read_in_utc(tmp_path, readers, cat):
    """Every label with +01:00 (the site's own offset): the same hours as the naive file
    in local standard time (sites.toml utc_offset_h = 1 for alpha)."""
    naive, zoned = tmp_path / "n.csv", tmp_path / "z.csv"
    naive.write_text(MET)
    zoned.write_text(re.sub(r"(T\d\d:\d\d),", r"\1+01:00,", MET))
    a, _ = readers["met"](naive, cat)
    b, _ = readers["met"](zoned, cat)
    np.testing.assert_array_equal(a["time"].values, b["time"].values)


def test_clock_going_back_is_located_with_a_hint(tmp_path, readers, cat):
    lines = met_text(72, start="2020-10-24T01:00").splitlines()
    i = next(k for k, ln in enumerate(lines) if "2020-10-25T03:00" in ln)
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines[:i] + [lines[i - 1]] + lines[i:]) + "\n")
    with pytest.raises(InputError) as e:
        readers["met"](p, cat)
    assert "duplicate hourly timestamp" in str(e.value)
    assert "the clock going back from summer time?" in str(e.value)


def test_precipitation_24_00(tmp_path, cat):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace("2020-01-07T09:00,2020-01-14T09:00,w1",
                                "2020-01-07T09:00,2020-01-14T24:00,w1")
                 .replace("2020-01-14T09:00,2020-01-21T09:00,w1",
                          "2020-01-14T24:00,2020-01-21T09:00,w1"))
    _, led = read_precipitation(p, cat)
    assert any("labels at 24:00 (end of day) in 'start', 'end' read as 00:00 of the next "
               "day: 2 rows (lines 2-3)" in n for n in led.notes), led.notes


# ------------------------------------------------------- overlapping uploads
@pytest.mark.parametrize("reader, name, text, row, expect", [
    ("precipitation", "p.csv", PRECIP,
     "alpha,2020-01-10T09:00,2020-01-17T09:00,w1,12.0,11.0,4.8,20.0,1.5,0.3,25.0,1.0,0.6,",
     "line 6, column 'start': overlapping samples from the same sampler: got "
     "'2020-01-10T09:00', expected a start at or after the end 2020-01-14T09:00 of the "
     "sample on line 2"),
    ("air", "a.csv", AIR,
     "alpha,2020-01-10T09:00,2020-01-17T09:00,fp1,2.0,0.1,1.5,1.2,5.0,filter pack",
     "line 6, column 'start': overlapping SO2 periods from the same sampler: got "
     "'2020-01-10T09:00'"),
])
def test_an_overlapping_week_is_located(tmp_path, cat, reader, name, text, row, expect):
    p = tmp_path / name
    p.write_text(text.rstrip("\n") + "\n" + row + "\n")
    fn = read_precipitation if reader == "precipitation" else read_air
    with pytest.raises(InputError) as e:
        fn(p, cat)
    assert str(e.value).startswith(f"{p}, {expect}"), str(e.value)


def test_overlapping_met_upload_is_located(tmp_path, readers, cat):
    # a re-upload of 8 hours with other pressures (the same values: dropped as exact
    # repeats, tests/io/test_file_twice.py)
    p = tmp_path / "met.csv"
    again = "\n".join(MET.splitlines()[2:10]).replace(",1010.0,", ",1011.0,")
    p.write_text(MET + again + "\n")
    with pytest.raises(InputError) as e:
        readers["met"](p, cat)
    assert str(e.value).startswith(f"{p}, line 75, column 'time': duplicate hourly "
                                   "timestamp: got '2020-01-07T01:00'")
    assert "(also on line 3, which has 'pressure [hPa]' '1010.0' where this line has " \
        "'1011.0')" in str(e.value)


# ------------------------------------------------------------------ unit slips
def test_hpa_under_kpa_is_masked_with_its_reason(tmp_path, readers, cat):
    p = tmp_path / "met.csv"
    p.write_text(MET.replace("pressure [hPa]", "pressure [kPa]"))
    ds, led = readers["met"](p, cat)
    assert np.isnan(ds["pressure"].values).all()
    assert (led.table["status"] == "flagged").all()
    assert "hPa written under a kPa header?" in led.table["reason"].iloc[0]


def test_kpa_under_hpa_is_masked_with_its_reason(tmp_path, readers, cat):
    p = tmp_path / "met.csv"
    p.write_text(MET.replace(",1010.0,", ",101.0,"))
    ds, led = readers["met"](p, cat)
    assert np.isnan(ds["pressure"].values).all()
    assert "kPa written under a hPa header?" in led.table["reason"].iloc[0]


def test_gauge_depth_in_mm_under_an_inch_header_is_named(tmp_path, cat):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace("gauge_depth [mm]", "gauge_depth [in]"))
    _, led = read_precipitation(p, cat)
    assert any("gauge depth at alpha" in n and "the values look like mm under a in header "
               "('gauge_depth [in]'" in n for n in led.notes), led.notes


def test_a_mixing_ratio_unit_in_a_precipitation_column_is_refused(tmp_path, cat):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace("SO4 [mg/L]", "SO4 [ppm]"))
    with pytest.raises(InputError) as e:
        read_precipitation(p, cat)
    assert str(e.value).startswith(f"{p}, line 1, column 'SO4 [ppm]': unknown or "
                                   "dimensionally wrong unit")


# -------------------------------------- the defects found by the trial (old code failed)
def test_empty_cell_of_a_required_met_variable_flags_its_row(tmp_path, readers, cat):
    """Old code: the row was `accepted` with no reason and the note said "complete
    hourly record": an hour without temperature looked complete."""
    p = tmp_path / "met.csv"
    p.write_text(_cell(MET, 5, "temperature", ""))
    ds, led = readers["met"](p, cat)
    row = led.table[led.table["line"] == 6].iloc[0]
    assert (row["status"], row["reason"]) == ("flagged", "temperature missing (no value)")
    assert (led.table["status"] == "flagged").sum() == 1
    assert np.isnan(ds["temperature"].values[0, 3])


def test_a_row_of_empty_cells_is_still_rejected_alone(tmp_path, readers, cat):
    """The flag above is for a row holding other values; a row of empty values is
    `rejected` with its own reason, not flagged six times."""
    lines = MET.splitlines()
    cells = lines[5].split(",")
    lines[5] = ",".join(cells[:2] + [""] * (len(cells) - 2))
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines) + "\n")
    _, led = readers["met"](p, cat)
    row = led.table[led.table["line"] == 6].iloc[0]
    assert row["status"] == "rejected" and "missing (no value)" not in row["reason"]


def test_clock_going_forward_hour_is_hinted(tmp_path, readers, cat):
    """Old code: a logger on local summer time (02:00 skipped on the last Sunday of
    March) gave "1 missing hours in 1 gaps" and read every later hour an hour late in
    silence; the clock going back had a hint, going forward none."""
    text = met_text(72, start="2020-03-28T01:00")
    p = tmp_path / "met.csv"
    p.write_text("\n".join(ln for ln in text.splitlines() if "2020-03-29T02:00" not in ln)
                 + "\n")
    _, led = readers["met"](p, cat)
    note = next(n for n in led.notes if n.startswith("met alpha: 1 missing hour in 1 gap"))
    assert "1 h missing at 2020-03-29T01:00 UTC, in the night to a Sunday of a month of " \
           "clock changes: the clock going forward to summer time?" in note, note


@pytest.mark.parametrize("start, hour", [("2020-03-24T01:00", "2020-03-25T02:00"),
                                         ("2020-10-13T01:00", "2020-10-14T14:00")])
def test_a_one_hour_gap_on_a_weekday_of_march_or_october_has_no_clock_hint(
        tmp_path, readers, cat, start, hour):
    """Old code: any one-hour gap of March, April, September, October or November got
    the hint; clocks go forward in the night to a Sunday only."""
    text = met_text(72, start=start)
    p = tmp_path / "met.csv"
    p.write_text("\n".join(ln for ln in text.splitlines() if hour not in ln) + "\n")
    _, led = readers["met"](p, cat)
    assert not any("clock going forward" in n for n in led.notes), led.notes
    assert any(n.startswith("met alpha: 1 missing hour in 1 gap") for n in led.notes), led.notes


def test_a_logger_dropping_many_single_hours_has_no_clock_hint(tmp_path, readers, cat):
    """Old code: the Sunday-night gap among five other one-hour gaps of the same three
    days got the hint; a clock skips one hour a year."""
    text = met_text(72, start="2020-03-28T01:00")
    drop = ("2020-03-29T02:00", "2020-03-28T05:00", "2020-03-28T09:00", "2020-03-29T15:00",
            "2020-03-30T04:00", "2020-03-30T11:00")
    p = tmp_path / "met.csv"
    p.write_text("\n".join(ln for ln in text.splitlines() if not any(d in ln for d in drop))
                 + "\n")
    _, led = readers["met"](p, cat)
    assert not any("clock going forward" in n for n in led.notes), led.notes


def test_a_one_hour_gap_in_summer_has_no_clock_hint(tmp_path, readers, cat):
    text = met_text(72, start="2020-07-04T01:00")
    p = tmp_path / "met.csv"
    p.write_text("\n".join(ln for ln in text.splitlines() if "2020-07-05T02:00" not in ln)
                 + "\n")
    _, led = readers["met"](p, cat)
    assert not any("clock going forward" in n for n in led.notes), led.notes
    assert any(n.startswith("met alpha: 1 missing hour in 1 gap;") for n in led.notes), led.notes


@pytest.mark.parametrize("reader", list(FILES))
def test_trailing_separators_are_named_by_place(tmp_path, readers, cat, reader):
    """Old code: "columns not used: Unnamed: 14, Unnamed: 15", pandas' names for
    columns the file does not name."""
    name, text, _, _ = FILES[reader]
    p = tmp_path / name
    p.write_text(WHOLE_FILE["trailing_empty_columns"](text))
    _, led = readers[reader](p, cat)
    note = next(n for n in led.notes if "columns not used" in n)
    n_head = len(next(ln for ln in text.splitlines() if not ln.startswith("#")).split(","))
    assert note == (f"{name}: columns not used: 2 columns without a header (columns "
                    f"{n_head + 1}-{n_head + 2}: trailing separators of a spreadsheet "
                    "export?)")
    assert "Unnamed" not in " ".join(led.notes)


@pytest.mark.parametrize("reader", list(FILES))
def test_a_decimal_comma_in_a_comma_file_is_hinted(tmp_path, readers, cat, reader):
    """Old code: "malformed CSV row (wrong number of fields)" only."""
    name, text, k, col = FILES[reader]
    p = tmp_path / name
    p.write_text(_cell(text, k, col, "1,5"))
    with pytest.raises(InputError) as e:
        readers[reader](p, cat)
    assert "a decimal comma, as in '1,5'? write '1.5'" in str(e.value)


def _whole_number_met():
    """MET as a logger writing whole numbers writes it."""
    out = []
    for ln in MET.splitlines():
        out.append(ln if ln.startswith(("#", "site")) else ",".join(
            str(round(float(c))) if re.match(r"^-?\d+\.\d+$", c) else c
            for c in ln.split(",")))
    return out


def test_a_stray_cell_among_whole_numbers_is_no_decimal_comma(tmp_path, readers, cat):
    """Old code: "a decimal comma, as in '3,5'?" for any row too long holding two
    neighbouring whole numbers; a file without a decimal in any column has no decimal
    comma to write (benchmarks/decimal_comma_hint.py)."""
    lines = _whole_number_met()
    lines[5] = lines[5] + ",0"                    # a stray cell at the end
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as e:
        readers["met"](p, cat)
    msg = str(e.value)
    assert msg.startswith(f"{p}, line 6: malformed CSV row (wrong number of fields)"), msg
    assert "decimal comma" not in msg


def test_a_numeric_sampler_id_and_a_stray_cell_is_no_decimal_comma(tmp_path, cat):
    """Old code: "a decimal comma, as in '1,2'?" for a sampler id '1' typed '1,2'; a
    joined number under sampler_id is no decimal comma."""
    lines = AIR.splitlines()
    lines[2] = lines[2].replace(",fp1,", ",1,2,")
    p = tmp_path / "a.csv"
    p.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as e:
        read_air(p, cat)
    assert "malformed CSV row (wrong number of fields)" in str(e.value)
    assert "decimal comma" not in str(e.value)


# ------------------------------------------------------------------ sites.toml
@pytest.mark.parametrize("case, edit, expect", [
    ("utf8_bom", lambda t: ("\ufeff" + t).encode(), None),
    ("windows_line_ends", lambda t: t.replace("\n", "\r\n").encode(), None),
    ("latin1_name", lambda t: t.replace("Alpha Test Field", "Alpha T\u00e9st Field")
     .encode("latin-1"), ["line 3: not UTF-8 text", "save as UTF-8"]),
    ("decimal_comma", lambda t: t.replace("latitude = 52.0", "latitude = 52,0").encode(),
     ["line 4: invalid TOML"]),
    ("number_as_text", lambda t: t.replace("latitude = 52.0", 'latitude = "52.0"').encode(),
     ["line 4, column 'latitude': wrong type: got '52.0'", "write the number without quotes"]),
    ("offset_as_text", lambda t: t.replace("utc_offset_h = 1", 'utc_offset_h = "+01:00"')
     .encode(), ["line 11, column 'utc_offset_h': wrong type: got '+01:00'"]),
])
def test_site_catalogue_as_saved_by_editors(tmp_path, case, edit, expect):
    p = tmp_path / "sites.toml"
    p.write_bytes(edit(SITES))
    if expect is None:
        assert list(read_sites(p).ids) == ["alpha", "beta"]
        return
    with pytest.raises(InputError) as e:
        read_sites(p)
    msg = str(e.value)
    assert msg.startswith(f"{p}, "), msg
    for text in expect:
        assert text in msg, msg
