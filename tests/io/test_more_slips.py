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
