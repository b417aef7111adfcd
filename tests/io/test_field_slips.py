"""Field-data slips in the sample and air files: mixed time zones, missing-value texts,
site ids in another case (docs/data_formats.md, "General rules").

Each refused file gives one InputError naming the file, line, column, value and what
was expected; each accepted text is counted in the ledger notes.  Invented sites.
"""
import numpy as np
import pytest

from workbench.io import read_air, read_precipitation, read_sites

from tiny_inputs import AIR, PRECIP, SITES, located_error

P_LINES = PRECIP.splitlines()
A_LINES = AIR.splitlines()


def _cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _write(tmp_path, name, lines):
    p = tmp_path / name
    p.write_text("\n".join(lines) + "\n")
    return p


_error = located_error


# ------------------------------------------------------------------ time zones
def test_precip_row_with_zoned_start_and_naive_end_is_refused(tmp_path):
    lines = list(P_LINES)
    lines[1] = lines[1].replace("2020-01-07T09:00,", "2020-01-07T09:00Z,", 1)
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    # alpha's other labels are naive: the zoned start is the odd one
    assert "line 2, column 'start': time labels of site 'alpha' mix zoned and naive" in msg, msg
    assert "got '2020-01-07T09:00Z'" in msg and "this one is with a time zone" in msg, msg
    assert "expected every start and end of the site without a zone, as start " \
           "'2020-01-14T09:00' on line 3" in msg, msg


def test_single_row_with_zoned_start_and_naive_end_is_refused(tmp_path):
    """A tie (one zoned, one naive label): the site's first label sets the convention."""
    lines = [P_LINES[0], P_LINES[4].replace("2020-01-14T09:00+00:00", "2020-01-14T09:00")]
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert "line 2, column 'end': time labels of site 'beta' mix zoned and naive" in msg, msg
    assert "got '2020-01-14T09:00'" in msg and "without a time zone (naive)" in msg, msg
    assert "with a zone (Z or +hh:mm), as start '2020-01-07T09:00+00:00' on line 2" in msg, msg


def test_air_row_with_zoned_start_and_naive_end_is_refused(tmp_path):
    """The colleague's case: start 15:00Z, end naive: the period would lose the offset."""
    lines = list(A_LINES)
    lines[3] = lines[3].replace("2020-01-14T09:00,2020-01-21T09:00",
                                "2020-01-14T09:00Z,2020-01-21T09:00")
    msg = _error(read_air, _write(tmp_path, "a.csv", lines), _cat(tmp_path))
    assert "a.csv, line 4, column 'start': time labels of site 'alpha' mix zoned" in msg, msg
    assert "got '2020-01-14T09:00Z'" in msg and "with a time zone" in msg, msg
    assert "without a zone, as start '2020-01-07T09:00' on line 3" in msg, msg


def test_site_with_naive_rows_and_one_zoned_row_is_refused(tmp_path):
    lines = list(P_LINES)
    lines[3] = lines[3].replace("2020-01-21T09:00,2020-01-28T09:00",
                                "2020-01-21T09:00+01:00,2020-01-28T09:00+01:00")
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert "line 4, column 'start'" in msg and "got '2020-01-21T09:00+01:00'" in msg, msg


def test_sites_of_either_convention_in_one_file_are_read(tmp_path):
    """alpha naive, beta zoned throughout (tiny_inputs): a merged network file."""
    ds, led = read_precipitation(_write(tmp_path, "p.csv", P_LINES), _cat(tmp_path))
    assert ds.sizes["sample"] == 4


def test_zoned_z_and_offset_labels_mix_freely(tmp_path):
    """Z and +01:00 are both explicit: the period is exact either way."""
    lines = list(A_LINES)
    lines[2] = lines[2].replace("2020-01-07T09:00,2020-01-14T09:00",
                                "2020-01-07T10:00+01:00,2020-01-14T09:00Z")
    lines[3] = lines[3].replace("2020-01-14T09:00,2020-01-21T09:00",
                                "2020-01-14T09:00Z,2020-01-21T09:00Z")
    lines[4] = lines[4].replace("2020-01-07T09:00,2020-01-14T09:00",
                                "2020-01-07T09:00Z,2020-01-14T09:00Z")
    ds, _ = read_air(_write(tmp_path, "a.csv", lines), _cat(tmp_path))
    hours = (ds["end"].values - ds["start"].values) / np.timedelta64(1, "h")
    assert list(hours) == [168.0, 168.0, 168.0]


# ------------------------------------------------------------- missing-value texts
@pytest.mark.parametrize("text", ["NA", "na", "N/A", "n/a", "NaN", "nan", "-", "--"])
def test_precip_missing_texts_are_missing_and_counted(tmp_path, text):
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",1.5,0.3,", f",{text},0.3,")      # SO4 of line 2
    lines[3] = lines[3].replace(",5.1,12.0,", f",{text},12.0,")    # pH of line 4
    ds, led = read_precipitation(_write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert np.isnan(ds["SO4"].values[0]) and np.isnan(ds["pH"].values[2])
    assert ds["NO3"].values[0] > 0                                  # the rest of the row is read
    note = [n for n in led.notes if "read as missing" in n]
    assert note == [f"p.csv: cells read as missing (as empty cells): pH {text!r} x1 (line 4); "
                    f"SO4 [mg/L] {text!r} x1 (line 2)"], led.notes      # in the file's column order


def test_air_missing_texts_are_missing_and_counted(tmp_path):
    lines = list(A_LINES)
    lines[2] = lines[2].replace(",2.0,0.1,", ",n/a,0.1,")
    lines[3] = lines[3].replace(",1.0,1.0,", ",NA,1.0,")
    lines[4] = lines[4].replace(",3.0,", ",NA,")
    ds, led = read_air(_write(tmp_path, "a.csv", lines), _cat(tmp_path))
    assert np.isnan(ds["SO2"].values[0]) and np.isnan(ds["SO2"].values[2])
    assert np.isnan(ds["NH3"].values[1])
    note = [n for n in led.notes if "read as missing" in n]
    assert note == ["a.csv: cells read as missing (as empty cells): SO2 [ug/m3] 'n/a' x1 "
                    "(line 3); SO2 [ug/m3] 'NA' x1 (line 5); NH3 [ug/m3] 'NA' x1 (line 4)"], \
        led.notes


def test_clean_file_has_no_missing_note(tmp_path):
    _, led = read_precipitation(_write(tmp_path, "p.csv", P_LINES), _cat(tmp_path))
    assert not [n for n in led.notes if "read as missing" in n]


@pytest.mark.parametrize("text", ["ND", "n.d.", "bdl"])
def test_not_detected_words_are_refused_with_the_limit_hint(tmp_path, text):
    """A 'not detected' word is a measured absence, not a gap: never read as missing."""
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",1.5,0.3,", f",{text},0.3,")
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert f"line 2, column 'SO4 [mg/L]': text in a numeric column (a 'not detected' code? " \
           f"write '<limit', e.g. '<0.02'): got '{text}'" in msg, msg


@pytest.mark.parametrize("text", ["approx 2", "1.5 (est.)"])   # "1.5 mg/L": test_sheet_slips
def test_other_texts_stay_refused(tmp_path, text):      # "?": a hint, test_trial_slips.py
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",1.5,0.3,", f',"{text}",0.3,')
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert f"column 'SO4 [mg/L]': text in a numeric column: got '{text}', expected a " \
           "number (or empty, NA, N/A, NaN or - for missing), or '<limit' below detection" in msg, msg


def test_missing_text_in_a_depth_is_missing_not_zero(tmp_path):
    """'-' in the gauge column is a missing depth (filled or excluded), never 0 mm."""
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",w1,12.0,", ",w1,-,")
    ds, led = read_precipitation(_write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert np.isnan(ds["gauge_depth"].values[0])
    assert "gauge depth missing" in led.table.loc[0, "reason"]


def test_sentinel_in_the_gauge_column_is_masked_not_rain(tmp_path):
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",w1,12.0,", ",w1,-999,")
    ds, led = read_precipitation(_write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert np.isnan(ds["gauge_depth"].values[0])
    assert "gauge depth -999 looks like a missing-value code (masked)" in led.table.loc[0, "reason"]


# ------------------------------------------------------------------- site ids
@pytest.mark.parametrize("fn,lines,name", [(read_precipitation, P_LINES, "p.csv"),
                                           (read_air, A_LINES, "a.csv")])
def test_site_id_in_another_case_is_named(tmp_path, fn, lines, name):
    lines = [ln.replace("alpha,", "Alpha,", 1) if ln.startswith("alpha,") else ln for ln in lines]
    msg = _error(fn, _write(tmp_path, name, lines), _cat(tmp_path))
    assert "column 'site': site not in the catalogue (differs from the catalogue's 'alpha' " \
           "only in case or blanks: site ids are compared exactly): got 'Alpha'" in msg, msg


# ------------------------------------------------------------- hints on other slips
@pytest.mark.parametrize("value,hint", [
    ('"1,5"', "(a decimal comma? write a decimal point, e.g. '1.5')"),
])
def test_decimal_comma_in_a_quoted_cell(tmp_path, value, hint):
    lines = list(P_LINES)
    lines[1] = lines[1].replace(",1.5,0.3,", f",{value},0.3,")
    msg = _error(read_precipitation, _write(tmp_path, "p.csv", lines), _cat(tmp_path))
    assert f"line 2, column 'SO4 [mg/L]': text in a numeric column {hint}: got '1,5'" in msg, msg


@pytest.mark.parametrize("stamp,hint", [
    ("2020-01-14T24:30", "(an hour of 24 or more? hours run 00-23; only 24:00 may end a day)"),
    ("2020-01-14T25:00", "(an hour of 24 or more?"),   # 24:00 is read: test_sheet_slips
    ("14/01/2020 09:00", "(a date in day/month or month/day order? write year-month-day"),
])
def test_timestamp_slips_get_a_hint(tmp_path, stamp, hint):
    lines = list(A_LINES)
    lines[2] = lines[2].replace(",2020-01-14T09:00,", f",{stamp},")
    msg = _error(read_air, _write(tmp_path, "a.csv", lines), _cat(tmp_path))
    assert f"line 3, column 'end': not an ISO 8601 timestamp {hint}" in msg, msg
    assert f"got '{stamp}'" in msg, msg
