"""The chunked met reader drops exact repeats itself (a file pasted after itself): the
same Dataset, ledger and notes as the line-by-line reader, which it used to hand such a
file to (that reader's memory: docs/performance.md, benchmarks/met_twice.py)."""
from __future__ import annotations

import gzip
from pathlib import Path

import numpy as np
import pytest

import workbench.io.metfast as metfast
from tiny_inputs import met_text
from workbench.io import read_met, read_sites
from workbench.io.common import REPEAT_REASON

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def _both(path, cat, monkeypatch):
    """(chunked read or None, line-by-line read) of `path`."""
    fast = metfast.read_met_csv_fast(path, cat)
    with monkeypatch.context() as m:
        m.setattr(metfast, "read_met_csv_fast", lambda *a, **k: None)
        line = read_met(path, cat)
    return fast, line


def _same(fast, line):
    (ds_f, led_f), (ds_l, led_l) = fast, line
    assert led_f.notes == led_l.notes
    assert led_f.reasons().to_dict("list") == led_l.reasons().to_dict("list")
    assert led_f.rows() == led_l.rows() and led_f.check_balanced()
    for v in ds_l.data_vars:
        np.testing.assert_array_equal(ds_f[v].values, ds_l[v].values)
    np.testing.assert_array_equal(ds_f["time"].values, ds_l["time"].values)


def test_tiny_met_pasted_after_itself_is_read_by_the_chunked_reader(tmp_path, cat, monkeypatch):
    text = met_text()
    lines = text.splitlines(True)
    p = tmp_path / "m.csv"
    p.write_text(text + "".join(lines[2:]))             # 48 data lines again
    fast, line = _both(p, cat, monkeypatch)
    assert fast is not None                             # before: handed over (None)
    _same(fast, line)
    assert "m.csv: 48 exact repeats dropped: lines 51-98 repeat lines 3-50" in fast[1].notes
    r = fast[1].reasons()
    assert r.loc[r["reason"] == REPEAT_REASON, "rows"].tolist() == [48]


def test_demo_met_pasted_after_itself(tmp_path, monkeypatch):
    cat = read_sites(DEMO / "sites.toml")
    with gzip.open(DEMO / "met.csv.gz", "rt", encoding="utf-8") as f:
        lines = f.read().splitlines(True)
    p = tmp_path / "met_twice.csv.gz"
    with gzip.open(p, "wt", encoding="utf-8", compresslevel=1) as g:
        g.writelines(lines + lines[2:])
    fast, line = _both(p, cat, monkeypatch)
    assert fast is not None
    _same(fast, line)
    n = len(lines) - 2
    assert (f"met_twice.csv.gz: {n} exact repeats dropped: lines {n + 3}-{2 * n + 2} repeat "
            f"lines 3-{n + 2}") in fast[1].notes


def test_few_repeats_and_unread_columns_stay_with_the_line_reader(tmp_path, cat, monkeypatch):
    """Fewer than 24 repeats (the clock going back is judged there), or a column not read
    (its cells are compared there): handed over, read as before."""
    text = met_text()
    lines = text.splitlines(True)
    few = tmp_path / "few.csv"
    few.write_text(text + "".join(lines[2:7]))
    fast, line = _both(few, cat, monkeypatch)
    assert fast is None
    assert "few.csv: 5 exact repeats dropped: lines 51-55 repeat lines 3-7" in line[1].notes
    noted = tmp_path / "noted.csv"
    body = [ln.rstrip("\n") + (",remark\n" if i == 1 else ",ok\n")
            for i, ln in enumerate(lines) if i > 0]
    noted.write_text(lines[0] + "".join(body) + "".join(body[1:]))
    fast, line = _both(noted, cat, monkeypatch)
    assert fast is None and line[1].check_balanced()


@pytest.mark.parametrize("cell", [3, 4])
def test_a_repeat_with_another_value_is_still_the_located_error(tmp_path, cat, cell):
    text = met_text()
    lines = text.splitlines(True)
    again = lines[2:]
    row = again[10].rstrip("\n").split(",")
    row[cell] = str(float(row[cell]) + 0.5)
    again[10] = ",".join(row) + "\n"
    p = tmp_path / "m.csv"
    p.write_text(text + "".join(again))
    from workbench.errors import InputError
    with pytest.raises(InputError, match=r"line 61, column 'time': duplicate hourly timestamp"
                       r".*also on line 13, which has"):
        read_met(p, cat)
