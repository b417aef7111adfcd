"""A relative humidity column pasted rows off (workbench.io.metcolumns): judged as the
temperature's (its daily minimum's lag behind the radiation's maximum changing at a
line, one side outside the range the air makes).  Before, only the temperature was
judged: the humidity pasted 4 rows down from a July on was read in silence.  Detection
and false alarms: ``benchmarks/met_row_shift.py --column relative_humidity``.

And the whole record shifted against its declared clock (every column): the clock
check's note says so in plain words.
"""
import gzip
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_met, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
PASTE = "column relative_humidity [%]: its daily minimum lags the solar radiation's maximum"


@pytest.fixture(scope="module")
def demo():
    lines = gzip.open(DEMO / "met.csv.gz", "rt").read().splitlines()
    head = next(i for i, ln in enumerate(lines) if ln.startswith("site,"))
    return lines, head, read_sites(DEMO / "sites.toml")


def _column_moved(lines, head, site, start, k, prefix):
    """The site's `prefix` column moved `k` rows down from its row labelled `start`."""
    j = next(i for i, h in enumerate(lines[head].split(",")) if h.startswith(prefix))
    rows = [i for i in range(head + 1, len(lines)) if lines[i].startswith(site + ",")]
    i0 = next(n for n, i in enumerate(rows) if lines[i].split(",")[1] == start)
    cells = [lines[i].split(",") for i in rows]
    col = [c[j] for c in cells]
    out = list(lines)
    for n in range(i0, len(rows)):
        c = cells[n]
        c[j] = col[n - k] if n - k >= i0 else ""
        out[rows[n]] = ",".join(c)
    return "\n".join(out) + "\n", rows[i0] + 1


def test_humidity_pasted_rows_down_is_flagged_from_its_line(tmp_path, demo):
    lines, head, cat = demo
    text, first_line = _column_moved(lines, head, "ridge", "2020-07-01T01:00", 4,
                                     "relative_humidity")
    p = tmp_path / "met.csv"
    p.write_text(text)
    _, led = read_met(p, cat)
    tb = led.table
    hit = tb[tb["reason"].str.contains(PASTE, regex=False)]
    assert set(hit["site"]) == {"ridge"}, tb[tb["reason"] != ""]["reason"].unique()
    reason = hit["reason"].iloc[0]
    assert "the column pasted about 4 rows down against the others? (kept)" in reason, reason
    # flagged from the change on (the first moved line, within the days of its search)
    assert hit["line"].max() >= first_line > hit["line"].min() - 24 * 3
    assert set(hit["status"]) == {"flagged"}


def test_no_humidity_paste_finding_on_the_demo(demo):
    _, _, cat = demo
    _, led = read_met(DEMO / "met.csv.gz", cat)
    assert not led.table["reason"].str.contains("relative_humidity [%]: its daily",
                                                regex=False).any()


def test_a_whole_record_an_hour_late_is_said_plainly(tmp_path, demo):
    """Every column of the file an hour late against the declared clock (utc_offset_h
    = 1 at ridge): the clock note says the whole record sits 1 h late against it; old
    code named only the cause ("labels in local time of UTC+2 ...")."""
    lines, head, cat = demo
    keep = [ln for ln in lines[head + 1:] if ln.startswith("ridge,")
            and "2019-05-01" <= ln.split(",")[1][:10] < "2019-09-01"]
    import pandas as pd
    moved = []
    for ln in keep:
        c = ln.split(",")
        c[1] = (pd.Timestamp(c[1]) + pd.Timedelta(hours=1)).strftime("%Y-%m-%dT%H:%M")
        moved.append(",".join(c))
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines[:head + 1] + moved) + "\n")
    _, led = read_met(p, cat)
    note = next(n for n in led.notes if "clock check of met site 'ridge'" in n)
    assert ("the whole record sits 1 h late against its declared clock (UTC+1, "
            "utc_offset_h): every column on the logger's clock is read 1 h late. Labels "
            "in local time of UTC+2 while utc_offset_h = 1") in note, note
