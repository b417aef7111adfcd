"""Field slips of a precipitation file's acidity, sample volume, gauge unit and trailing
lines (docs/data_formats.md, "Precipitation, gauge and air slips (a fourth audit)";
invented site "alpha").

The acidity is read from a ``pH`` column without a unit.  Before: a column of the
hydrogen ion (``H+ [ueq/L]``) was left unused with a note and the run went on without
the samples' acidity; ``pH [ueq/L]`` and ``PH`` had their unit or name ignored (H+
values read as pH) or the column left unused; H+ values under the pH header were read
as pH where below 14.  pH = -log10(H+ [mol/L]) = 6 - log10(H+ [ueq/L]), H+ of charge 1
(definition of pH; common practice).
"""
from __future__ import annotations

import numpy as np
import pytest

from tiny_inputs import PRECIP, located_error
from workbench.io import read_precipitation

HEADER = PRECIP.splitlines()[0]


def _with_header(write, old, new, body=None):
    lines = PRECIP.splitlines()
    lines[0] = lines[0].replace(old, new)
    if body is not None:
        lines = [lines[0]] + body
    return write("p.csv", "\n".join(lines) + "\n")


@pytest.mark.parametrize("header", ["H+ [ueq/L]", "H [ueq/L]", "H3O+ [umol/L]", "h+"])
def test_a_hydrogen_ion_column_is_refused_with_the_ph_to_write(write, cat, header):
    p = _with_header(write, ",pH,", f",{header},")
    msg = located_error(read_precipitation, p, cat)
    assert msg.startswith(f"{p}, line 1, column '{header}': the hydrogen ion as a "
                          "concentration is not read"), msg
    assert "a column 'pH' (no unit) holding pH = 6 - log10(H+ in ueq/L or umol/L)" in msg
    assert "13.8 ueq/L is pH 4.86" in msg


@pytest.mark.parametrize("header", ["pH [ueq/L]", "pH [umol/L]", "PH", "ph"])
def test_a_ph_header_with_a_unit_or_in_another_case_is_refused(write, cat, header):
    p = _with_header(write, ",pH,", f",{header},")
    msg = located_error(read_precipitation, p, cat)
    assert msg.startswith(f"{p}, line 1, column '{header}': pH written with a unit or in "
                          "another case"), msg
    assert "expected the header 'pH' (pH has no unit" in msg


@pytest.mark.parametrize("header", ["pH [-]", "pH [1]"])
def test_a_ph_header_marked_dimensionless_is_read(write, cat, header):
    p = _with_header(write, ",pH,", f",{header},")
    ds, _ = read_precipitation(p, cat)
    np.testing.assert_allclose(ds["pH"].values[[0, 3]], [4.8, 4.6])


def test_h_ion_values_beyond_14_under_ph_get_the_conversion(write, cat):
    lines = PRECIP.splitlines()
    lines[1] = lines[1].replace(",4.8,", ",70.8,")
    p = write("p.csv", "\n".join(lines) + "\n")
    msg = located_error(read_precipitation, p, cat)
    assert msg.startswith(f"{p}, line 2, column 'pH': pH outside 0-14 (H+ in ueq/L or "
                          "umol/L under the pH header? 70.8 ueq/L is pH 4.15"), msg


def test_a_site_whose_ph_lies_below_3_is_named_as_h_ion(write, cat):
    # a clean site's H+ (1-8 ueq/L) passes the 0-14 range of pH
    lines = PRECIP.splitlines()
    lines[1] = lines[1].replace(",4.8,", ",1.6,")
    lines[3] = lines[3].replace(",5.1,", ",0.79,")
    p = write("p.csv", "\n".join(lines) + "\n")
    ds, ledger = read_precipitation(p, cat)
    np.testing.assert_allclose(ds["pH"].values[[0, 2]], [1.6, 0.79])     # used as read
    notes = [n for n in ledger.notes if "under the pH header" in n]
    assert notes == ["p.csv: pH at alpha: median 1.2 over 2 samples, below any "
                     "precipitation's (about 3.5 to 7; under 3 here): H+ in ueq/L or "
                     "umol/L under the pH header? read so, the median is pH 5.92: write "
                     "pH = 6 - log10(H+) (values used as read)"]


def test_no_ph_note_on_real_ph(files, cat):
    _, ledger = read_precipitation(files["precipitation"], cat)
    assert not [n for n in ledger.notes if "pH header" in n]


def test_lines_of_empty_cells_wider_than_the_header_are_blank_lines(write, cat):
    # a sheet's used range below the data: before, "malformed CSV row (wrong number of
    # fields)" at the first such line
    n = HEADER.count(",") + 1
    body = PRECIP.splitlines()[1:]
    wide = "," * (n + 6)
    p = write("p.csv", "\n".join([HEADER, body[0], wide] + body[1:] + [wide] * 5) + "\n")
    ds, ledger = read_precipitation(p, cat)
    once, _ = read_precipitation(write("q.csv", PRECIP), cat)
    np.testing.assert_array_equal(ds["gauge_depth"].values, once["gauge_depth"].values)
    assert list(ds["line"].values) == [2, 4, 5, 6]          # the file's own lines
    assert ledger.rows() == 4 and ledger.check_balanced()


def test_a_wider_line_with_a_value_stays_an_error(write, cat):
    n = HEADER.count(",") + 1
    body = PRECIP.splitlines()[1:]
    p = write("p.csv", "\n".join([HEADER, "," * (n + 6), body[0] + ",3"] + body[1:]) + "\n")
    msg = located_error(read_precipitation, p, cat)
    assert msg.startswith(f"{p}, line 3: malformed CSV row"), msg


def test_a_sample_depth_of_0_with_chemistry_is_read_as_missing(write, cat):
    lines = PRECIP.splitlines()
    lines[1] = lines[1].replace(",12.0,11.0,", ",12.0,0,")
    p = write("p.csv", "\n".join(lines) + "\n")
    ds, ledger = read_precipitation(p, cat)
    assert np.isnan(ds["sample_depth"].values[0])             # before: 0 mm
    assert ds["sample_depth"].values[1] == 0                   # the dry week keeps its 0
    t = ledger.table
    why = t.loc[t["line"] == 2, "reason"].iloc[0]
    assert ("sample_depth 0 with concentrations present (a volume not recorded, written "
            "as 0?): read as missing") in why
    assert t.loc[t["line"] == 2, "status"].iloc[0] == "flagged"


def test_a_sample_volume_of_0_with_chemistry_is_read_as_missing(write, cat):
    lines = ["site,start,end,gauge_depth [mm],sample_volume [mL],collector_area [cm2],"
             "SO4 [mg/L]",
             "alpha,2020-01-07T09:00,2020-01-14T09:00,12.0,0,314.2,1.5",
             "alpha,2020-01-14T09:00,2020-01-21T09:00,12.0,377,314.2,1.5",
             "alpha,2020-01-21T09:00,2020-01-28T09:00,0,0,314.2,"]
    p = write("p.csv", "\n".join(lines) + "\n")
    ds, ledger = read_precipitation(p, cat)
    depth = ds["sample_depth"].values
    assert np.isnan(depth[0]) and depth[1] == pytest.approx(12.0, rel=1e-3) and depth[2] == 0
    t = ledger.table
    assert "sample_volume 0 with concentrations present" in t.loc[t["line"] == 2,
                                                                   "reason"].iloc[0]
    assert t.loc[t["line"] == 4, "reason"].iloc[0] == ""


@pytest.mark.parametrize("unit, k", [("0.1 mm", "0.1"), ("1/10 mm", "0.1")])
def test_a_gauge_header_in_tenths_of_mm_gets_the_factor(write, cat, unit, k):
    # before: "unknown unit '0.1 mm'" and nothing on what to write
    p = _with_header(write, "gauge_depth [mm]", f"gauge_depth [{unit}]")
    msg = located_error(read_precipitation, p, cat)
    assert msg.startswith(f"{p}, line 1, column 'gauge_depth [{unit}]': unknown or "
                          "dimensionally wrong unit"), msg
    assert f"; a scaled unit: multiply the values by {k} and write 'mm': got '{unit}'" in msg


def test_a_hydrogen_ion_column_beside_the_ph_stays_a_column_not_used(write, cat):
    # a laboratory's sheet giving both: the pH is read, the H+ column noted as before
    lines = PRECIP.splitlines()
    lines[0] += ",H+ [ueq/L]"
    lines[1:] = [ln + ",15.8" for ln in lines[1:]]
    p = write("p.csv", "\n".join(lines) + "\n")
    ds, ledger = read_precipitation(p, cat)
    np.testing.assert_allclose(ds["pH"].values[[0, 3]], [4.8, 4.6])
    assert any("columns not used" in n and "H+ [ueq/L]" in n for n in ledger.notes)
