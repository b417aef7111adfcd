"""Field-data slips met in a new user's trial of the demo inputs (docs/data_formats.md,
"Field-data slips we check"): each gives a located message or a flag with its reason.
Each test here failed on the code before its fix."""
from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from workbench.io import read_met, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
SITES = (DEMO / "sites.toml").read_text()


@pytest.fixture(scope="module")
def ridge_year():
    """One year (2021) of the demo's met at ridge (utc_offset_h = 1, 54.512 N 7.236 E)."""
    df = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    df = df[df["site"] == "ridge"]
    t = pd.to_datetime(df["time"])
    return df[(t > "2021-01-01") & (t <= "2022-01-01")].reset_index(drop=True)


def _met(tmp_path, df):
    p = tmp_path / "met.csv"
    with open(p, "w") as f:
        f.write("# time_label: end\n")
        df.to_csv(f, index=False)
    return p


def _sites(tmp_path, text):
    p = tmp_path / "sites.toml"
    p.write_text(text)
    return read_sites(p)


def _clock(ledger):
    return [n for n in ledger.notes if "clock check" in n and "'ridge'" in n]


def test_swapped_latitude_longitude_is_named_beside_the_clock(tmp_path, ridge_year):
    # latitude 7.236, longitude 54.512: solar noon 3.1 h early on the site's clock, so the
    # clock check read a 3 h clock error and named only the clock (before: no word of the
    # coordinates); measured again at the swapped coordinates the lag is ~0
    cat = _sites(tmp_path, SITES.replace("latitude = 54.512\nlongitude = 7.236",
                                         "latitude = 7.236\nlongitude = 54.512"))
    _, ledger = read_met(_met(tmp_path, ridge_year), cat)
    notes = _clock(ledger)
    assert len(notes) == 1
    assert "typed in each other's place" in notes[0]
    assert "at latitude 54.512, longitude 7.236" in notes[0]


def test_longitude_sign_lost_is_named(tmp_path, ridge_year):
    # 7.236 E typed as -7.236: the sun runs 0.96 h late against the labels
    cat = _sites(tmp_path, SITES.replace("longitude = 7.236", "longitude = -7.236"))
    _, ledger = read_met(_met(tmp_path, ridge_year), cat)
    notes = _clock(ledger)
    assert len(notes) == 1 and "the longitude's sign lost" in notes[0]
    assert "at latitude 54.512, longitude 7.236" in notes[0]


def test_a_clock_error_is_not_blamed_on_the_coordinates(tmp_path, ridge_year):
    # labels 2 h late at the right coordinates: neither a swap nor a sign explains it
    t = pd.to_datetime(ridge_year["time"]) + pd.Timedelta(hours=2)
    moved = ridge_year.assign(time=t.dt.strftime("%Y-%m-%dT%H:%M"))
    _, ledger = read_met(_met(tmp_path, moved), read_sites(DEMO / "sites.toml"))
    notes = _clock(ledger)
    assert len(notes) == 1 and "coordinates" not in notes[0]


# ------------------------------------------------ "no value" words the readers do not take
def _precip_cell(tmp_path, column, cell, line=2):
    from tiny_inputs import PRECIP
    lines = PRECIP.splitlines()
    k = lines[0].split(",").index(column)
    cells = lines[line - 1].split(",")
    cells[k] = cell
    lines[line - 1] = ",".join(cells)
    p = tmp_path / "p.csv"
    p.write_text("\n".join(lines) + "\n")
    return p


@pytest.mark.parametrize("cell, hint", [
    # before: "text in a numeric column: got 'n/d'" with no word of what to write
    ("n/d", "('n/d': not detected, or no data? below detection write '<limit', e.g. "
            "'<0.02'; no value: leave the cell empty)"),
    ("N/D", "not detected, or no data?"),
    ("NULL", "(a 'no value' mark? leave the cell empty, or write NA; a value below "
             "detection is '<limit'"),
    ("missing", "a 'no value' mark?"),
    ("?", "a 'no value' mark?"),                        # still refused, now with a hint
    ("\u2014", "a 'no value' mark?"),                   # an em dash, not a hyphen-minus
    ("\u2212999", "(a minus sign typed as '\u2212'? write '-', e.g. '-999')"),
])
def test_no_value_words_get_a_hint_in_the_samples(tmp_path, cat, cell, hint):
    from tiny_inputs import located_error
    from workbench.io import read_precipitation
    msg = located_error(read_precipitation, _precip_cell(tmp_path, "SO4 [mg/L]", cell), cat)
    assert "line 2, column 'SO4 [mg/L]': text in a numeric column (" in msg, msg
    assert hint in msg and f"got '{cell}'" in msg, msg


def test_a_censored_gauge_depth_says_what_to_write(tmp_path, cat):
    # before: "censored value not allowed here: got '<0.2', expected a number" with no
    # word of why a '<' is refused there or what to write instead
    from tiny_inputs import PRECIP, located_error
    from workbench.io import read_precipitation
    column = next(c for c in PRECIP.splitlines()[0].split(",") if c.startswith("gauge_depth"))
    msg = located_error(read_precipitation, _precip_cell(tmp_path, column, "<0.2"), cat)
    assert f"line 2, column '{column}': censored value not allowed here" in msg, msg
    assert "got '<0.2'" in msg and "read only in the chemistry columns" in msg, msg
    assert "0 for a trace" in msg, msg


@pytest.mark.parametrize("cell, hint", [
    ("n/d", "('n/d': no data? this column takes numbers only: leave the cell empty)"),
    ("NULL", "(a 'no value' mark? leave the cell empty, or write NA)"),
])
def test_no_value_words_get_a_hint_in_the_met(tmp_path, cat, met_reader, cell, hint):
    from tiny_inputs import met_text
    from workbench.errors import InputError
    lines = met_text().splitlines()
    i = next(k for k, ln in enumerate(lines) if ln.startswith("alpha,"))
    cells = lines[i].split(",")
    cells[2] = cell                                     # wind_speed
    lines[i] = ",".join(cells)
    (tmp_path / "met.csv").write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(tmp_path / "met.csv", cat)
    msg = str(exc.value)
    assert f"line {i + 1}, column 'wind_speed [m/s]'" in msg and hint in msg, msg


# ----------------------------------------------- a met file with its records put in twice
def test_a_met_file_pasted_after_itself_with_other_values_is_named(tmp_path, cat, met_reader):
    # the second copy a corrected re-export (every temperature 0.5 degC up): refused at
    # the first repeated hour, naming its twin, the column and both values, and that
    # every hour is there twice (before: the twin's line only); exact copies are dropped
    # (tests/io/test_file_twice.py)
    from tiny_inputs import met_text
    from workbench.errors import InputError
    lines = met_text(n_hours=48).splitlines()
    data = [k for k, ln in enumerate(lines) if ln.startswith("alpha,")]
    again = []
    for k in data:
        cells = lines[k].split(",")
        cells[3] = f"{float(cells[3]) + 0.5:.2f}"              # temperature [degC]
        again.append(",".join(cells))
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + again) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    msg = str(exc.value)
    first = lines[data[0]].split(",")[3]
    assert f"line {len(lines) + 1}, column 'time'" in msg, msg
    assert (f"(also on line {data[0] + 1}, which has 'temperature [degC]' {first!r} where "
            f"this line has {again[0].split(',')[3]!r})") in msg, msg
    assert (f"; {len(data)} rows repeat the site and hour of an earlier row: the same "
            "records put in the file twice") in msg, msg


def test_one_repeated_met_hour_gets_no_twice_hint(tmp_path, cat, met_reader):
    from tiny_inputs import met_text
    from workbench.errors import InputError
    lines = met_text(n_hours=48).splitlines()
    data = [k for k, ln in enumerate(lines) if ln.startswith("alpha,")]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + [lines[data[5]].replace(",1010.0,", ",1011.0,")]) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    assert "duplicate hourly timestamp" in str(exc.value)
    assert "which has 'pressure [hPa]' '1010.0' where this line has '1011.0'" in str(exc.value)
    assert "put in the file twice" not in str(exc.value)
