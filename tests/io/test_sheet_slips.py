"""Spreadsheet slips in the cells of the sample, air and met files: a UTF-16 export,
thousands separators, a unit typed in the cell, the sheet's own error values
(``#DIV/0!``) and its "not available" (``#N/A``) (docs/data_formats.md, "General rules").

Each refused file gives one InputError naming the file, line, column, value and what
was expected, with a hint on the slip; ``#N/A`` is read as missing and counted in the
ledger notes.  The slips are common practice of spreadsheet exports.  Invented sites.
"""
import pandas as pd
import pytest

from workbench.errors import InputError
from workbench.io import read_air, read_precipitation, read_sites
from workbench.io.table import number_hint

from tiny_inputs import AIR, PRECIP, SITES, met_text, located_error

P_LINES = PRECIP.splitlines()


def _cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _precip_with(tmp_path, column, cell, line=2):
    """The tiny precipitation file with one cell (header name) replaced."""
    head = P_LINES[0].split(",")
    k = head.index(column)
    lines = list(P_LINES)
    cells = lines[line - 1].split(",")
    cells[k] = f'"{cell}"' if "," in cell else cell
    lines[line - 1] = ",".join(cells)
    p = tmp_path / "p.csv"
    p.write_text("\n".join(lines) + "\n")
    return p


_error = located_error


@pytest.mark.parametrize("column, cell, hint", [
    ("gauge_depth [mm]", "1,234.5", "a thousands separator? write the number without it, "
                                    "e.g. '1234.5'"),
    ("gauge_depth [mm]", "1 234.5", "e.g. '1234.5'"),
    ("gauge_depth [mm]", "1.234,5", "e.g. '1234.5'"),            # decimal-comma locale
    ("gauge_depth [mm]", "1,234", "a decimal comma or a thousands separator? write a "
                                  "decimal point and no separator, e.g. '1.234' or '1234'"),
    ("gauge_depth [mm]", "12 mm", "a unit in the cell? the unit goes in the column header"),
    ("SO4 [mg/L]", "1.5mg/L", "a unit in the cell?"),
    ("SO4 [mg/L]", "#DIV/0!", "a spreadsheet formula error: correct the formula"),
    ("pH", "#VALUE!", "a spreadsheet formula error"),
    ("conductivity [uS/cm]", "#REF!", "a spreadsheet formula error"),
])
def test_sheet_slips_in_a_number_get_a_hint(tmp_path, column, cell, hint):
    msg = _error(read_precipitation, _precip_with(tmp_path, column, cell), _cat(tmp_path))
    assert f"line 2, column '{column}': text in a numeric column (" in msg, msg
    assert hint in msg and f"got '{cell}'" in msg and "expected a number" in msg, msg


def test_other_text_gets_no_hint():
    assert number_hint("abc") == number_hint("12.5.3") == ""


def test_na_of_a_sheet_is_missing_and_counted(tmp_path):
    ds, led = read_precipitation(_precip_with(tmp_path, "SO4 [mg/L]", "#N/A"), _cat(tmp_path))
    assert ds["SO4"].isnull().values[0]
    assert any("cells read as missing" in n and "SO4 [mg/L] '#N/A' x1 (line 2)" in n
               for n in led.notes), led.notes


def test_na_of_a_sheet_in_the_met_is_missing_and_counted(tmp_path, cat, met_reader):
    lines = met_text().splitlines()
    head = lines[0].split(",") if not lines[0].startswith("#") else lines[1].split(",")
    i = next(k for k, ln in enumerate(lines) if ln.startswith("alpha,"))
    cells = lines[i].split(",")
    cells[[k for k, h in enumerate(head) if h.startswith("pressure")][0]] = "#N/A"
    lines[i] = ",".join(cells)
    (tmp_path / "met.csv").write_text("\n".join(lines) + "\n")
    met, led = met_reader(tmp_path / "met.csv", cat)
    assert any("'#N/A' x1" in n for n in led.notes), led.notes


def test_formula_error_in_the_met_is_located(tmp_path, cat, met_reader):
    lines = met_text().splitlines()
    i = next(k for k, ln in enumerate(lines) if ln.startswith("alpha,"))
    cells = lines[i].split(",")
    cells[2] = "#DIV/0!"                                 # wind_speed
    lines[i] = ",".join(cells)
    (tmp_path / "met.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(tmp_path / "met.csv", cat)
    msg = str(exc.value)
    assert f"line {i + 1}, column 'wind_speed [m/s]'" in msg, msg
    assert "a spreadsheet formula error" in msg and "got '#DIV/0!'" in msg, msg


@pytest.mark.parametrize("name, reader", [("p.csv", read_precipitation), ("a.csv", read_air)])
def test_a_utf16_export_is_named(tmp_path, name, reader):
    p = tmp_path / name
    p.write_text(PRECIP if reader is read_precipitation else AIR, encoding="utf-16")
    msg = _error(reader, p, _cat(tmp_path))
    assert msg == (f"{p}, line 1: a UTF-16 text file (a spreadsheet's 'Unicode text' "
                   "export?), expected a UTF-8 CSV file, comma-separated (save as 'CSV UTF-8')")


def test_a_utf16_met_and_catalogue_are_named(tmp_path, cat, met_reader):
    (tmp_path / "met.csv").write_text(met_text(), encoding="utf-16")
    with pytest.raises(InputError) as exc:
        met_reader(tmp_path / "met.csv", cat)
    assert "line 1: a UTF-16 text file" in str(exc.value)
    (tmp_path / "s16.toml").write_text(SITES, encoding="utf-16")
    with pytest.raises(InputError) as exc:
        read_sites(tmp_path / "s16.toml")
    assert str(exc.value).startswith(f"{tmp_path / 's16.toml'}, line 1: a UTF-16 text file")


# ------------------------------------------------------------ zero concentrations
def test_a_zero_concentration_is_censored_with_its_reason(tmp_path):
    # 0 mg/L of sulfate in a wet week is never a measurement: a non-detect or a missing
    # value written as 0.  Before, it was read as 0 without a word.
    ds, led = read_precipitation(_precip_with(tmp_path, "SO4 [mg/L]", "0"), _cat(tmp_path))
    assert bool(ds["SO4_censored"].values[0]) and ds["SO4"].isnull().values[0]
    row = led.table[led.table["line"] == 2].iloc[0]
    assert row["status"] == "flagged"
    assert "SO4 reported as 0 (censored as below detection: write '<limit', or leave " \
           "empty if not measured)" in row["reason"].split("; ")


def test_zeros_of_a_dry_week_stay_unflagged(tmp_path):
    # a dry week (gauge 0 mm) whose lab sheet writes 0 in the ion columns
    lines = list(P_LINES)
    lines[2] = "alpha,2020-01-14T09:00,2020-01-21T09:00,w1,0.0,0.0,,,0,0,0,0,0,"
    (tmp_path / "p.csv").write_text("\n".join(lines) + "\n")
    ds, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert led.table[led.table["line"] == 3].iloc[0]["status"] == "accepted"


def test_a_zero_air_concentration_is_censored(tmp_path):
    lines = AIR.splitlines()
    lines[2] = lines[2].replace(",2.0,0.1,", ",0.0,0.1,")            # SO2 0.0 ug/m3
    (tmp_path / "a.csv").write_text("\n".join(lines) + "\n")
    ds, led = read_air(tmp_path / "a.csv", _cat(tmp_path))
    row = led.table[led.table["line"] == 3].iloc[0]
    assert "SO2 reported as 0 (censored as below detection: write '<limit', or leave " \
           "empty if not measured)" in row["reason"].split("; ")


# ------------------------------------------------------------ sampler id typos
def _weeks(site, ids, start="2020-01-07"):
    """Weekly precipitation rows of one site, one per sampler id of `ids` in turn."""
    import pandas as pd
    t = pd.date_range(f"{start}T09:00", periods=len(ids) + 1, freq="7D")
    return [f"{site},{a:%Y-%m-%dT%H:%M},{b:%Y-%m-%dT%H:%M},{i},5.0,4.8,5.0,12.0,1.0,0.2,"
            f"10.0,0.5,0.3," for a, b, i in zip(t[:-1], t[1:], ids)]


@pytest.mark.parametrize("typo", ["W-I", "w-1", "W-11", "W 1"])
def test_a_sampler_id_typo_is_named_in_a_note(tmp_path, typo):
    ids = ["W-1"] * 30
    ids[12] = typo
    (tmp_path / "p.csv").write_text("\n".join([P_LINES[0]] + _weeks("alpha", ids)) + "\n")
    ds, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert (ds["sampler_id"].values == typo).sum() == 1            # read as written
    note = [n for n in led.notes if "sampler_id" in n]
    assert note == [f"p.csv: sampler_id {typo!r} at alpha: 1 row (line 14), like 'W-1' "
                    "(29 rows): a typo? Read as another sampler (averaged with the other "
                    "where their periods overlap)"]


def test_two_real_samplers_get_no_note(tmp_path):
    # a monthly change of samplers, and a collocated short campaign of another design
    ids = ["W-1"] * 15 + ["W-2"] * 15
    rows = _weeks("alpha", ids) + [r.replace(",W-1,", ",BULK-A,") for r in _weeks("alpha", ["W-1"] * 2)]
    (tmp_path / "p.csv").write_text("\n".join([P_LINES[0]] + rows) + "\n")
    _, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert not [n for n in led.notes if "sampler_id" in n]


def test_a_sampler_id_typo_in_the_air_file(tmp_path):
    import pandas as pd
    t = pd.date_range("2020-01-07T09:00", periods=21, freq="7D")
    ids = ["fp1"] * 20
    ids[5] = "fpl"
    rows = [f"alpha,{a:%Y-%m-%dT%H:%M},{b:%Y-%m-%dT%H:%M},{i},2.0,0.1,1.5,1.2,5.0,filter pack"
            for a, b, i in zip(t[:-1], t[1:], ids)]
    lines = AIR.splitlines()[:2] + rows
    (tmp_path / "a.csv").write_text("\n".join(lines) + "\n")
    _, led = read_air(tmp_path / "a.csv", _cat(tmp_path))
    assert [n for n in led.notes if "sampler_id" in n] == [
        "a.csv: sampler_id 'fpl' at alpha: 1 row (line 8), like 'fp1' (19 rows): a typo? "
        "Read as another sampler (averaged with the other where their periods overlap)"]


# ------------------------------------------------------------ totals rows
@pytest.mark.parametrize("row, hint", [
    (",Total,,,29.0,,,,,,,,,", "an empty site cell: a totals or summary row from a "
                               "spreadsheet? remove it"),
    (",,,,29.0,,,,,,,,,", "an empty site cell"),
    ("Grand total,,,,29.0,,,,,,,,,", "a totals or summary row from a spreadsheet? remove it"),
])
def test_a_totals_row_at_the_bottom_is_named(tmp_path, row, hint):
    (tmp_path / "p.csv").write_text(PRECIP + row + "\n")
    msg = _error(read_precipitation, tmp_path / "p.csv", _cat(tmp_path))
    assert f"line 6, column 'site': site not in the catalogue ({hint}): got " in msg, msg


def test_a_units_row_under_the_header_is_named(tmp_path):
    """A spreadsheet export with a row of units under the header (common practice of
    sheets); the old message said only "an empty site cell"."""
    head = AIR.splitlines()[1] if AIR.startswith("#") else AIR.splitlines()[0]
    units = ",".join(next(iter(__import__("re").findall(r"\[([^\]]+)\]", c)), "")
                     for c in head.split(","))
    lines = AIR.splitlines()
    k = lines.index(head)
    (tmp_path / "a.csv").write_text("\n".join(lines[:k + 1] + [units] + lines[k + 1:]) + "\n")
    msg = _error(read_air, tmp_path / "a.csv", _cat(tmp_path))
    assert (f"line {k + 2}, column 'site': site not in the catalogue (an empty site cell: a row "
            "of units under the header, as a spreadsheet exports them? the unit goes in the "
            "header, 'SO2 [ug/m3]': remove the row): got ''") in msg, msg


def test_a_totals_row_of_the_met_is_named(tmp_path, cat, met_reader):
    text = met_text()
    n = len(text.splitlines())
    (tmp_path / "met.csv").write_text(text + ",Mean,3.5,5.1,80,40,0.1,1010.0,0.5\n")
    with pytest.raises(InputError) as exc:
        met_reader(tmp_path / "met.csv", cat)
    assert (f"line {n + 1}, column 'site': site not in the catalogue (an empty site cell: a "
            "totals or summary row from a spreadsheet? remove it)") in str(exc.value)


# ------------------------------------------------------------ 24:00 end-of-day labels
def test_end_of_day_labels_are_the_next_day_with_a_note(tmp_path):
    # before: "not an ISO 8601 timestamp (24:00? write 00:00 of the next day)"
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",2020-01-14T09:00,", ",2020-01-13T24:00,")
    lines[2] = lines[2].replace("alpha,2020-01-14T09:00,", "alpha,2020-01-13 24:00,")
    (tmp_path / "p.csv").write_text("\n".join(lines) + "\n")
    ds, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert str(ds["end"].values[0])[:16] == "2020-01-13T23:00"        # 00:00 local at +1 h
    assert str(ds["start"].values[1])[:16] == "2020-01-13T23:00"
    assert "p.csv: labels at 24:00 (end of day) in 'start', 'end' read as 00:00 of the next " \
           "day: 2 rows (lines 2-3)" in led.notes, led.notes


def test_end_of_day_labels_of_the_met(tmp_path, cat, met_reader):
    # hour-ending labels: the day's last hour written 24:00 (zoned too) is 00:00 next day
    text = met_text()
    plain = met_reader(_write_met(tmp_path / "a.csv", text), cat)
    lines = text.splitlines()
    for k, ln in enumerate(lines):
        if ln.startswith("alpha,") and ln[17:22] == "00:00":
            day = (pd.Timestamp(ln[6:16]) - pd.Timedelta("1D")).strftime("%Y-%m-%d")
            lines[k] = f"alpha,{day}T24:00{ln[22:]}"
    assert sum("T24:00" in ln for ln in lines) == 2
    eod = met_reader(_write_met(tmp_path / "b.csv", "\n".join(lines) + "\n"), cat)
    assert eod[0]["temperature"].equals(plain[0]["temperature"])
    at = [k + 1 for k, ln in enumerate(lines) if "T24:00" in ln]     # file lines, 1-based
    assert eod[1].notes[-1] == "b.csv: labels at 24:00 (end of day) in 'time' read as 00:00 " \
                               f"of the next day: 2 rows (lines {at[0]}, {at[1]})"
    assert not [n for n in plain[1].notes if "24:00" in n]


def _write_met(path, text):
    path.write_text(text)
    return path


def _bare_header_with_units_row(text):
    """`text` as a sheet exports it: the header's names without their units, and the
    units on a row of their own under it (the Haddermoor user trial's precipitation
    file, tests/haddermoor_net.py); returns the text and the units row's line."""
    import re
    lines = text.splitlines()
    k = next(i for i, line in enumerate(lines) if line.startswith("site,"))
    head = lines[k].split(",")
    names = [re.sub(r"\s*\[[^\]]*\]", "", c) for c in head]
    units = [next(iter(re.findall(r"\[([^\]]+)\]", c)), "") for c in head]
    lines[k:k + 1] = [",".join(names), ",".join(units)]
    return "\n".join(lines) + "\n", k + 2


@pytest.mark.parametrize("kind", ["precipitation", "air", "met"])
def test_a_units_row_under_a_header_without_units_is_named(tmp_path, cat, met_reader, kind):
    """The usual export puts the names on the first line and the units on the second
    (the header then has no unit at all). The hint above needs the units in the header
    too, so this file got only "an empty site cell" (the user's question: which empty
    cell?); now the message says what the row is and which headers to write."""
    source = {"precipitation": PRECIP, "air": AIR, "met": met_text()}[kind]
    text, line = _bare_header_with_units_row(source)
    path = tmp_path / f"{kind}.csv"
    path.write_text(text)
    reader = {"precipitation": read_precipitation, "air": read_air, "met": met_reader}[kind]
    with pytest.raises(InputError) as exc:
        reader(path, cat if kind == "met" else _cat(tmp_path))
    msg = str(exc.value)
    first = {"precipitation": "'gauge_depth [mm]'", "air": "'SO2 [ug/m3]'",
             "met": "'wind_speed [m/s]'"}[kind]
    assert msg.startswith(f"{path}, line {line}, column 'site': site not in the catalogue (an "
                          "empty site cell: a row of units under a header without units, as a "
                          "spreadsheet exports them? write each unit into its column's header "
                          f"in square brackets, {first}, "), msg
    assert ", and remove the row): got ''" in msg, msg


@pytest.mark.parametrize("cells", [("12.5", "300", "452"), ("mm", "3"), ("mm",)])
def test_a_row_that_is_not_all_units_keeps_the_plain_hint(tmp_path, cells):
    """Numbers, or a single unit, are not a units row (our choice: two cells at least)."""
    text, _ = _bare_header_with_units_row(PRECIP)
    lines = text.splitlines()
    n = len(lines[0].split(","))
    lines[1] = ",".join(["", "", "", ""] + list(cells) + [""] * (n - 4 - len(cells)))
    (tmp_path / "p.csv").write_text("\n".join(lines) + "\n")
    msg = _error(read_precipitation, tmp_path / "p.csv", _cat(tmp_path))
    assert "site not in the catalogue (an empty site cell): got ''" in msg, msg
