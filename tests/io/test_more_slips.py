"""Field-data slips left open before: the 24:00 end-of-day note with its rows and lines,
the shifted-column check on the air file, degC written under a degF header in the met
file (docs/data_formats.md).  Invented sites; the rules are common practice unless a
source is named beside them.
"""
import numpy as np
import pandas as pd
import pytest

from workbench.io import read_met
from workbench.io.metfast import read_met_csv_fast

from tiny_inputs import met_text


# ------------------------------------------------------------ 24:00 labels: count and lines
def _end_of_day_met(tmp_path, blank_at=30):
    """The tiny met file with each 00:00 hour written as 24:00 of the day before, and a
    blank line in the middle (the note's lines are file lines, blanks counted)."""
    lines = met_text(n_hours=96).splitlines()
    for k, ln in enumerate(lines):
        if ln.startswith("alpha,") and ln[17:22] == "00:00":
            day = (pd.Timestamp(ln[6:16]) - pd.Timedelta("1D")).strftime("%Y-%m-%d")
            lines[k] = f"alpha,{day}T24:00{ln[22:]}"
    lines.insert(blank_at, "")
    at = [k + 1 for k, ln in enumerate(lines) if "T24:00" in ln]
    p = tmp_path / "m.csv"
    p.write_text("\n".join(lines) + "\n")
    return p, at


def test_end_of_day_note_counts_the_rows_and_names_the_lines(tmp_path, cat, met_reader):
    # before: "m.csv: labels at 24:00 (end of day) in 'time' read as 00:00 of the next day"
    # (no count, no lines)
    p, at = _end_of_day_met(tmp_path)
    assert len(at) == 4 and at[1] > 30           # a line after the blank one
    ds, led = met_reader(p, cat)
    note = [n for n in led.notes if "24:00" in n]
    assert note == ["m.csv: labels at 24:00 (end of day) in 'time' read as 00:00 of the next "
                    f"day: 4 rows (lines {at[0]}, {at[1]}, {at[2]}, ... (1 more))"], led.notes


def test_end_of_day_lines_across_the_chunks_of_the_fast_reader(tmp_path, cat):
    # chunks of ~300 bytes: the lines of each chunk's rows are offset by the rows above
    p, at = _end_of_day_met(tmp_path, blank_at=3)
    got = read_met_csv_fast(p, cat, chunk_bytes=300)
    assert got is not None
    note = [n for n in got[1].notes if "24:00" in n]
    assert note[0].endswith(f"4 rows (lines {at[0]}, {at[1]}, {at[2]}, ... (1 more))")


# ------------------------------------------------------------ shifted column in the air file
def _air_text(shift=False, interleave=False):
    """12 weeks of a filter pack fp1 (SO2, HNO3, pSO4; weeks 3, 6, 9 failed: no values)
    and a passive NH3 sampler pas1 beside it; `shift`: the pSO4 cells of fp1 pasted one
    row down; `interleave`: the two samplers' rows alternate week by week."""
    t = pd.date_range("2020-01-07T09:00", periods=13, freq="7D")
    failed = {2, 5, 8}
    so4 = [f"{1.0 + 0.1 * i:.1f}" if i not in failed else "" for i in range(12)]
    if shift:
        so4 = [""] + so4[:-1]
    fp = [f"alpha,{t[i]:%Y-%m-%dT%H:%M},{t[i + 1]:%Y-%m-%dT%H:%M},fp1,"
          + (f"{2.0 + 0.1 * i:.1f},0.2,," if i not in failed else ",,,") + so4[i]
          for i in range(12)]
    pas = [f"alpha,{t[i]:%Y-%m-%dT%H:%M},{t[i + 1]:%Y-%m-%dT%H:%M},pas1,,,{1.0 + 0.05 * i:.2f},"
           for i in range(12)]
    rows = [r for pair in zip(fp, pas) for r in pair] if interleave else fp + pas
    head = ["# reference_state: ambient",
            "site,start,end,sampler_id,SO2 [ug/m3],HNO3_as_N [ug/m3],NH3 [ug/m3],pSO4 [ug/m3]"]
    return "\n".join(head + rows) + "\n"


def test_a_column_shifted_one_row_in_the_air_file_is_refused(tmp_path, cat):
    # before: read in silence, each pSO4 value against the week before its own
    from workbench.errors import InputError
    from workbench.io import read_air
    p = tmp_path / "a.csv"
    p.write_text(_air_text(shift=True))
    with pytest.raises(InputError) as exc:
        read_air(p, cat)
    msg = str(exc.value)
    # by hand: fp1's weeks i = 0..11 are lines 3..14; after the paste pSO4 sits on the
    # failed weeks 2, 5, 8 (orphans; the first, line 5, holds week 1's 1.1) and is gone
    # from the analysed weeks 0, 3, 6, 9 (holes)
    assert "line 5, column 'pSO4 [ug/m3]'" in msg and "got '1.1'" in msg, msg
    assert ("a column shifted one row down? 3 rows hold a value where the row has no other "
            "concentration and 4 rows lack one where the others have theirs") in msg


@pytest.mark.parametrize("interleave", [False, True])
def test_air_samplers_of_different_species_are_no_shift(tmp_path, cat, interleave):
    # a passive NH3 sampler's rows alternating with a filter pack's would look like a
    # one-row shift over the whole file: the rows are compared per site and sampler
    from workbench.io import read_air
    p = tmp_path / "a.csv"
    p.write_text(_air_text(interleave=interleave))
    ds, led = read_air(p, cat)
    assert int(np.isfinite(ds["pSO4"].values).sum()) == 9
    assert int(np.isfinite(ds["NH3"].values).sum()) == 12


# ------------------------------------------------------------ degC under a degF header
def _catalogue(tmp_path, latitude, elevation=20.0):
    from tiny_inputs import alpha_site
    from workbench.io import read_sites
    text = alpha_site().replace("latitude = 52.0", f"latitude = {latitude}") \
                       .replace("elevation_m = 20.0", f"elevation_m = {elevation}")
    (tmp_path / "s.toml").write_text(text)
    return read_sites(tmp_path / "s.toml")


def _year_degf(tmp_path, written, days=365):
    """A met file of `days` days from 2021-01-01 with `written` (a function of the hour
    index) under 'temperature [degF]'."""
    t = pd.date_range("2021-01-01T01:00", periods=24 * days, freq="h")
    h = np.arange(len(t))
    df = pd.DataFrame({"site": "alpha", "time": t.strftime("%Y-%m-%dT%H:%M"),
                       "wind_speed [m/s]": 3.0, "relative_humidity [%]": 80.0,
                       "solar_radiation [W/m2]": 0.0, "precipitation [mm]": 0.0,
                       "pressure [hPa]": 1010.0,
                       "temperature [degF]": np.round(written(h), 2)})
    p = tmp_path / "m.csv"
    p.write_text("# time_label: end\n" + df.to_csv(index=False))
    return p


def _celsius(h, mean=12.0):
    """An invented lowland year [degC]: seasonal +-10, diurnal +-4 (2-26 degC)."""
    return mean - 10 * np.cos(2 * np.pi * h / 8760) + 4 * np.sin(2 * np.pi * (h % 24 - 9) / 24)


DEGC_UNDER_DEGF = ("temperature looks like degC although the header says degF: no hour at or "
                   "above 41 degF in a whole year at a site below 50 deg latitude and 1000 m "
                   "(masked)")


def test_degc_under_a_degf_header_is_masked_at_a_lowland_mid_latitude_site(tmp_path, met_reader):
    # before: 2-26 degC read as 2-26 degF (-17..-3 degC), a winter all year, kept
    from tiny_inputs import ledger_reasons
    met, led = met_reader(_year_degf(tmp_path, _celsius), _catalogue(tmp_path, 45.0))
    assert np.isnan(met["temperature"]).all()
    assert DEGC_UNDER_DEGF in ledger_reasons(led)


@pytest.mark.parametrize("latitude, elevation, days, degf", [
    (45.0, 20.0, 365, True),       # the same year in degF (36-79 degF): read as written
    (75.0, 20.0, 365, False),      # a polar site's real degF year below 41 degF: not judged
    (45.0, 2500.0, 365, False),    # a mountain site: not judged
    (45.0, 20.0, 150, False),      # winter and spring only: the season could explain it
])
def test_degf_records_the_rule_leaves_alone(tmp_path, latitude, elevation, days, degf):
    from tiny_inputs import ledger_reasons
    if degf:
        written = lambda h: _celsius(h) * 1.8 + 32                         # noqa: E731
    else:
        written = lambda h: _celsius(h, mean=-20.0) * 1.8 + 32 if latitude > 50 or \
            elevation > 1000 else _celsius(h)                              # noqa: E731
    met, led = read_met(_year_degf(tmp_path, written, days),
                        _catalogue(tmp_path, latitude, elevation))
    assert np.isfinite(met["temperature"]).all()
    assert DEGC_UNDER_DEGF not in ledger_reasons(led)
    # every value as written, converted once: (F - 32) / 1.8 + 273.15
    h = np.arange(24 * days)
    np.testing.assert_allclose(met["temperature"].values.ravel(),
                               (np.round(written(h), 2) - 32) / 1.8 + 273.15, atol=1e-9)
