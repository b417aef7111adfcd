"""Spreadsheet exports of the hourly met CSV read in chunks as the line reader reads them.

A sheet saved as CSV quotes every cell (and the header), starts with a UTF-8 byte-order
mark, ends its lines with CRLF, pads cells with blanks, ends with empty lines or lines of
commas, or writes empty fields after the last column.  For each variant the chunked
reader (:func:`workbench.io.metfast.read_met_csv_fast`) must give what the line reader
(:class:`workbench.io.table.RawTable`, :func:`workbench.io.met.read_met`) gives: the
same values, ledger (file line numbers included), reasons and notes, or the same
located error, on one thread and on two, in byte ranges of a few lines.  The numbers
must also be those of the same file written plainly.
"""
from __future__ import annotations

import gzip
import importlib.util
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import workbench.io.linechunks as linechunks
import workbench.io.metfast as metfast
from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.table import RawTable

_spec = importlib.util.spec_from_file_location(        # its file builders and checks
    "_metfast_cases", Path(__file__).with_name("test_metfast.py"))
_cases = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_cases)
HEAD, _line_reader, _rows, assert_same = (_cases.HEAD, _cases._line_reader, _cases._rows,
                                          _cases.assert_same)


@pytest.fixture()
def threads():
    from workbench.threads import set_threads
    yield set_threads
    set_threads(None)


def _plain():
    """Two sites, grouped; an empty row (rejected); NA in one cell (counted); the
    column not used; a meta line above the header."""
    a = _rows("alpha", "2020-03-01T00:00", 24 * 12)
    b = _rows("beta", "2020-03-03T00:00", 24 * 10, rh_scale=0.01, seed=1)
    a[40] = "alpha,2020-03-02T16:00,,,,,,,,\n"
    cells = a[50].split(",")
    cells[3] = "NA"
    a[50] = ",".join(cells)
    return "# station: invented\n" + HEAD + "".join(a + b)


def _lines(text):
    return text.split("\n")


def _quote_all(text):
    """Every cell of the header and the rows in quotes (the meta line as it is)."""
    out = []
    for ln in _lines(text):
        out.append(ln if ln.startswith("#") or not ln else
                   ",".join(f'"{c}"' for c in ln.split(",")))
    return "\n".join(out)


def _quote_rows(text):
    out = []
    for k, ln in enumerate(_lines(text)):
        out.append(ln if k < 2 or not ln else ",".join(f'"{c}"' for c in ln.split(",")))
    return "\n".join(out)


def _quote_header(text):
    lines = _lines(text)
    lines[1] = ",".join(f'"{c}"' for c in lines[1].split(","))
    return "\n".join(lines)


def _blanks(text):
    """Blanks around the cells: `` 3.2 , 4.1``, a tab after some, spaces before quotes
    and inside them; the header padded too."""
    out = []
    for k, ln in enumerate(_lines(text)):
        if k == 0 or not ln:
            out.append(ln)
            continue
        cells = ln.split(",")
        pads = [" {} ", "{} ", "  {}", "{}\t", '  "{}" ', '" {} "', "{}"]
        if ln.startswith('"'):                   # quoted already: blanks outside only
            pads = [" {} ", "{} ", "  {}", "{}\t", "{}"]
        out.append(",".join(pads[(k + j) % len(pads)].format(c) for j, c in enumerate(cells)))
    return "\n".join(out)


def _trailing_fields(text):
    """Two empty fields after the last column of every data row (the header has none):
    the line reader refuses the file, naming the first such line."""
    out = []
    for k, ln in enumerate(_lines(text)):
        out.append(ln + ",," if k >= 2 and ln else ln)
    return "\n".join(out)


def _trailing_columns(text):
    """Two empty fields after the last column of the header and of every row (a sheet
    with two formatted empty columns): read, the empty columns noted as not used."""
    out = []
    for k, ln in enumerate(_lines(text)):
        out.append(ln + ",," if k >= 1 and ln else ln)
    return "\n".join(out)


def _blank_lines(text):
    """A blank line under the meta line, empty lines and lines of commas inside and at
    the end (the line reader drops them; the line numbers of the rows stay those of
    the file)."""
    lines = _lines(text)
    lines.insert(1, "")
    lines.insert(120, "")
    lines.insert(300, ",,,,,,,,,")
    lines.insert(301, "")
    return "\n".join(lines) + "\n\n,,,,,,,,,\n\n"


def _space_time(text):
    """Timestamps written with a blank between date and time (``2020-03-01 05:00``)."""
    return text.replace("T", " ")


def _everything(text):
    """A byte-order mark, CRLF, every cell quoted with blanks around, blank lines."""
    return "\ufeff" + _blanks(_quote_all(_blank_lines(text))).replace("\n", "\r\n")


VARIANTS = {
    "quoted cells": _quote_rows,
    "quoted header": _quote_header,
    "every cell quoted": _quote_all,
    "byte-order mark": lambda t: "\ufeff" + t,
    "CRLF": lambda t: t.replace("\n", "\r\n"),
    "blanks around cells": _blanks,
    "trailing empty lines": lambda t: t + "\n\n\n",
    "blank lines and lines of commas": _blank_lines,
    "empty columns after the last": _trailing_columns,
    "a blank inside the timestamps": _space_time,
    "all of them": _everything,
}


def _write(tmp_path, text, gz=False, name="met"):
    p = tmp_path / (f"{name}.csv.gz" if gz else f"{name}.csv")
    data = text.encode("utf-8")
    p.write_bytes(gzip.compress(data) if gz else data)
    return p


def _judged_by_the_line_reader(p, cat, monkeypatch):
    """The chunked reader declines `p`; read_met gives the line reader's result or error."""
    assert metfast.read_met_csv_fast(p, cat, chunk_bytes=3000) is None
    try:
        line = _line_reader(monkeypatch, p, cat)
    except InputError as exc:
        with pytest.raises(InputError) as err:
            read_met(p, cat)
        assert str(err.value) == str(exc)
    else:
        assert_same(read_met(p, cat), line)


@pytest.mark.parametrize("n_threads", [1, 2])
@pytest.mark.parametrize("variant", list(VARIANTS))
def test_a_spreadsheet_export_reads_as_the_line_reader_and_as_the_plain_file(
        tmp_path, cat, monkeypatch, threads, variant, n_threads):
    """Each variant: read by the chunked reader (not declined), in ranges of a few
    lines, on one thread or two: values, ledger, reasons and notes of the line reader;
    the values those of the plain file."""
    plain = _write(tmp_path, _plain(), name="plain")
    p = _write(tmp_path, VARIANTS[variant](_plain()), gz=variant == "all of them")
    threads(n_threads)
    fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
    assert fast is not None
    line = _line_reader(monkeypatch, p, cat)
    assert_same(fast, line)
    ref, ref_ledger = _line_reader(monkeypatch, plain, cat)
    ds, ledger = fast
    for v in ref.data_vars:
        np.testing.assert_array_equal(ds[v].values, ref[v].values)
    np.testing.assert_array_equal(ds["time"].values, ref["time"].values)
    assert list(ds["site"].values) == list(ref["site"].values)
    pd.testing.assert_frame_equal(ledger.summary().drop(columns="file"),
                                  ref_ledger.summary().drop(columns="file"))
    assert (ledger.table["reason"].tolist() == ref_ledger.table["reason"].tolist())
    if variant in ("blank lines and lines of commas", "all of them"):
        assert ledger.table["line"].iloc[0] == 4            # meta, blank line, header
        assert ledger.table["line"].iloc[-1] > ref_ledger.table["line"].iloc[-1]
    else:
        assert ledger.table["line"].tolist() == ref_ledger.table["line"].tolist()
    note = [n for n in ledger.notes if "read as missing" in n]
    assert len(note) == 1 and "'NA' x1" in note[0] and "temperature [degC]" in note[0]


@pytest.mark.parametrize("n_threads", [1, 2])
def test_empty_fields_after_the_last_column_are_refused_as_the_line_reader_does(
        tmp_path, cat, monkeypatch, threads, n_threads):
    """``...,3.2,,`` where the header ends at 3.2: the line reader's parser refuses the
    file ("malformed CSV row", at the first such line); the chunked reader raises the
    same error itself, without a whole-file read, also when the file is quoted."""
    for k, text in enumerate((_trailing_fields(_plain()),
                              _quote_all(_trailing_fields(_plain())).replace("\n", "\r\n"))):
        p = _write(tmp_path, text)
        with pytest.raises(InputError, match="malformed CSV row") as line_err:
            _line_reader(monkeypatch, p, cat)
        assert line_err.value.line == 3
        threads(n_threads)
        with monkeypatch.context() as m:
            m.setattr(RawTable, "read", classmethod(lambda *a: pytest.fail("whole-file read")))
            with pytest.raises(InputError) as err:
                metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
        assert str(err.value) == str(line_err.value)
        with pytest.raises(InputError) as err:
            read_met(p, cat)
        assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("n_threads", [1, 2])
@pytest.mark.parametrize("bad, shown", [('"ten"', "ten"), ('" ten "', "ten"),
                                        ('" 3 .2"', "3 .2"), ('"<5"', "<5")])
def test_a_bad_cell_in_a_quoted_file_is_named_at_its_file_line_and_column(
        tmp_path, cat, monkeypatch, threads, bad, shown, n_threads):
    """A bad cell in a later byte range of a quoted CRLF file with blank lines above it:
    the chunked reader raises the line reader's error (its file line counting the blank
    lines, its column, the cell without quotes and blanks), without a whole-file read."""
    lines = _everything(_plain()).split("\r\n")
    k = next(i for i in range(3, len(lines)) if sum(map(len, lines[:i])) > 7000
             and lines[i].count(",") == 9)
    cells = lines[k].split(",")
    cells[7] = bad                                             # pressure
    lines[k] = ",".join(cells)
    p = _write(tmp_path, "\r\n".join(lines))
    with pytest.raises(InputError) as line_err:
        _line_reader(monkeypatch, p, cat)
    assert line_err.value.line == k + 1
    assert "pressure [hPa]" in str(line_err.value) and repr(shown)[1:-1] in str(line_err.value)
    threads(n_threads)
    monkeypatch.setattr(RawTable, "read", classmethod(lambda *a: pytest.fail("whole-file read")))
    with pytest.raises(InputError) as err:
        metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
    assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("n_threads", [1, 2])
def test_a_repeated_hour_and_a_zone_break_in_a_quoted_file(tmp_path, cat, monkeypatch,
                                                           threads, n_threads):
    """Errors that name a second line (the repeated hour's first row) or read a line
    again (the zone convention): the cells as the line reader shows them (no quotes)
    and the file lines counting the blank lines."""
    threads(n_threads)
    base = _everything(_plain()).split("\r\n")
    rows = [i for i, ln in enumerate(base) if ln.count(",") == 9 and "alpha" in ln]
    for case in ("repeat", "zone"):
        lines = list(base)
        k = rows[200]
        cells = lines[k].split(",")
        if case == "repeat":
            cells[1] = lines[rows[150]].split(",")[1]
        else:
            cells[1] = re.sub(r"(T\d\d:00)", r"\1+01:00", cells[1])
        lines[k] = ",".join(cells)
        p = _write(tmp_path, "\r\n".join(lines))
        with pytest.raises(InputError) as line_err:
            _line_reader(monkeypatch, p, cat)
        assert f"line {k + 1}," in str(line_err.value)
        assert '"' not in line_err.value.value and " " not in line_err.value.value
        with pytest.raises(InputError) as err:
            metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
        assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("change", [
    lambda t: t.replace('"alpha"', '"alp,ha"', 1),            # a comma inside quotes
    lambda t: t.replace('"alpha"', '"al""pha"', 1),           # a doubled quote
    lambda t: t.replace('\r\n"alpha"', '\r\n\t"alpha"', 1),   # a tab before a quote
    lambda t: t.replace('\r\n"beta"', '\r"beta"', 1),         # a lone CR
    lambda t: t.replace('\r\n"beta"', '\r\n   \r\n"beta"', 1),  # a line of blanks
    lambda t: t.replace('"\r\n"beta"', '"\x0c\r\n"beta"', 1),  # a form feed
    lambda t: t.replace('\r\n"beta"', '\r\n""\r\n"beta"', 1),   # one empty field
])
def test_truly_odd_files_still_go_to_the_line_reader(tmp_path, cat, monkeypatch, change):
    """What the plain text of a chunk cannot hold is declined; the line reader gives its
    result or its error."""
    text = _quote_all(_plain()).replace("\n", "\r\n")
    p = _write(tmp_path, change(text))
    assert change(text) != text
    _judged_by_the_line_reader(p, cat, monkeypatch)


@pytest.mark.parametrize("seed", range(6))
def test_plain_text_of_a_chunk_as_the_line_reader_reads_the_cells(tmp_path, monkeypatch,
                                                                   seed):
    """:func:`~workbench.io.linechunks.normalise` against the line reader itself on
    random cells: numbers, words, blanks inside a cell, missing-value texts, empty cells,
    each plain, quoted, padded with spaces or tabs outside or inside the quotes; lines of
    commas, empty lines, CRLF.  Every chunk it accepts gives, line by line, the cells of
    the rows of :class:`~workbench.io.table.RawTable` (its blank rows dropped); a chunk
    with what it cannot hold (a comma or a doubled quote inside quotes, a tab before a
    quote) is declined."""
    from workbench.io.linechunks import normalise
    rng = np.random.default_rng(seed)
    texts = ["3.2", "-0.5", "1e3", "ridge", "north ridge", "2021-01-01 00:00", "", "NA",
             "<5", "x y  z"]
    safe = ["{}", " {}", "{} ", "\t{}\t", '"{}"', ' "{}" ', '" {} "', '"{}"\t', '"\t{} "']
    odd = ['"{},"', '"{}""x"', '\t"{}"', 'a"{}"']
    n = 4
    for trial in range(20):
        lines = []
        for k in range(30):
            pick = rng.random()
            if pick < 0.05:
                lines.append("")
            elif pick < 0.1:
                lines.append(",".join(rng.choice(["", " ", '""', ' "" ']) for _ in range(n)))
            else:
                lines.append(",".join(rng.choice(safe).format(rng.choice(texts))
                                      for _ in range(n)))
        declined = trial % 4 == 3
        if declined:
            cells = lines[7].split(",") if lines[7].count(",") == n - 1 else [""] * n
            cells[1] = rng.choice(odd).format("v")
            lines[7] = ",".join(cells)
        end = "\r\n" if trial % 2 else "\n"
        body = end.join(lines) + end
        got = normalise(body.encode())
        with monkeypatch.context() as m:               # in pieces of a few lines: the same
            m.setattr(linechunks, "_PIECE", 40)
            assert normalise(body.encode()) == got
        if declined:
            assert got is None
            continue
        assert got is not None
        p = tmp_path / f"t{trial}.csv"
        p.write_bytes((",".join(f"c{j}" for j in range(n)) + end + body).encode())
        tab = RawTable.read(p)
        rows = [ln.split(",") for ln in got.decode().split("\n")[:-1]]
        kept = [r for r in rows if any(r)]
        assert [list(r) for r in tab.frame.itertuples(index=False)] == kept
        assert tab.lines.tolist() == [k + 2 for k, r in enumerate(rows) if any(r)]


@pytest.mark.parametrize("seed", range(4))
def test_every_cell_quoted_and_its_slips_as_the_line_reader_reads_them(tmp_path, seed):
    """The quick rule for files with every cell quoted (substring counts) on lines of
    quoted cells with one random slip each time (a quote, comma, line break, CR or
    doubled quote put anywhere): whenever :func:`~workbench.io.linechunks.normalise`
    accepts the text and every line has the header's fields, the line reader reads
    the same cells; the clean texts are all accepted."""
    from workbench.io.linechunks import normalise
    rng = np.random.default_rng(100 + seed)
    texts = ["3.2", "", "NA", "a b", " 1 ", "2021-01-01 00:00"]
    n, accepted, compared = 3, 0, 0
    for trial in range(150):
        end = "\r\n" if trial % 2 else "\n"
        body = end.join(",".join(f'"{rng.choice(texts)}"' for _ in range(n))
                        for _ in range(6)) + end * (trial % 3 != 0)
        if trial % 5:                                       # a slip somewhere
            k = int(rng.integers(0, len(body) + 1))
            body = body[:k] + str(rng.choice(['"', ",", "\n", "\r", '""', '","'])) + body[k:]
        got = normalise(body.encode())
        if trial % 5 == 0:
            assert got is not None
        if got is None:
            continue
        accepted += 1
        rows = [ln.split(",") for ln in got.decode().split("\n")]
        rows = rows[:-1] if got.endswith(b"\n") else rows
        if any(len(r) != n and r != [""] for r in rows):
            continue                                        # the line counts judge these
        p = tmp_path / f"q{trial}.csv"
        p.write_bytes(("a,b,c" + end + body).encode())
        tab = RawTable.read(p)
        assert [list(r) for r in tab.frame.itertuples(index=False)] == \
            [r for r in rows if any(r)], body
        compared += 1
    assert compared >= 30 and accepted >= compared


def _with_notes(text):
    """Every cell quoted, CRLF, and free text in the column not used: commas, doubled
    quotes, letters beyond ASCII, blanks (what a sheet's comment column holds)."""
    notes = ['"rain, heavy"', '"gauge ""B"" read late"', '"Ålvik hut, door open"',
             ' "checked" ', '""']
    out = []
    for k, ln in enumerate(_quote_all(text).split("\n")):
        if k >= 2 and ln:
            cells = ln.split(",")
            cells[-1] = notes[k % len(notes)]
            ln = ",".join(cells)
        out.append(ln)
    return "\r\n".join(out)


@pytest.mark.parametrize("n_threads", [1, 2])
def test_free_text_with_commas_in_a_column_not_used_is_read_in_chunks(
        tmp_path, cat, monkeypatch, threads, n_threads):
    """A quoted comment column (commas, doubled quotes, non-ASCII) that the plain rule
    declines: each chunk is read by the line reader's own parser (the cells of the
    columns read must be plain), so the file is still read in chunks, with the values,
    ledger and notes of the line reader; a bad cell, a repeated hour and a label
    breaking its site's zone convention in it are named at their lines."""
    p = _write(tmp_path, _with_notes(_plain()))
    assert metfast.read_met_csv_fast(p, cat, chunk_bytes=3000) is not None
    threads(n_threads)
    with monkeypatch.context() as m:
        m.setattr(RawTable, "read", classmethod(lambda *a: pytest.fail("whole-file read")))
        fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
    assert_same(fast, _line_reader(monkeypatch, p, cat))
    lines = _with_notes(_plain()).split("\r\n")
    repeat = lines[120].split(",")[1]                           # alpha's hour of line 121
    zoned = re.sub(r"(T\d\d:00)", r"\1+01:00", lines[180].split(",")[1])
    for k, col, value in [(200, 7, '"1e999"'), (230, 0, '"gamma"'), (260, 1, '" "'),
                          (150, 1, repeat), (180, 1, zoned)]:
        bad = list(lines)
        cells = bad[k].split(",")
        cells[col] = value
        bad[k] = ",".join(cells)
        p = _write(tmp_path, "\r\n".join(bad))
        with pytest.raises(InputError) as line_err:
            _line_reader(monkeypatch, p, cat)
        assert line_err.value.line == k + 1
        with monkeypatch.context() as m:
            m.setattr(RawTable, "read", classmethod(lambda *a: pytest.fail("whole-file read")))
            with pytest.raises(InputError) as err:
                metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
        assert str(err.value) == str(line_err.value)


@pytest.mark.parametrize("change", [
    lambda t: t.replace('"checked"', '"checked\r\nlater"', 1),     # a cell over two lines
    lambda t: t.replace('"checked"', '"checked', 1),               # a quote left open
    lambda t: t.replace('"checked"', '"a","b"', 1),                # one field too many
    lambda t: t.replace('\r\n"alpha"', '\r\n"al,pha"', 1),          # a comma in a site
])
def test_free_text_files_that_only_the_line_reader_judges(tmp_path, cat, monkeypatch, change):
    text = _with_notes(_plain())
    assert change(text) != text
    p = _write(tmp_path, change(text))
    _judged_by_the_line_reader(p, cat, monkeypatch)


def test_the_demo_met_saved_from_a_sheet_as_the_line_reader(tmp_path, monkeypatch, threads):
    """The invented demo's met (its deliberate problems included), every cell quoted, CRLF,
    gzipped: on two threads the values, ledger and notes of the line reader, and the
    values of the demo file as shipped."""
    from workbench.io.sites import read_sites
    demo = Path(__file__).resolve().parents[2] / "demo_data"
    cat = read_sites(demo / "sites.toml")
    text = gzip.decompress((demo / "met.csv.gz").read_bytes()).decode("utf-8")
    p = _write(tmp_path, _quote_all(text.rstrip("\n")).replace("\n", "\r\n") + "\r\n", gz=True)
    threads(2)
    fast = metfast.read_met_csv_fast(p, cat)
    assert fast is not None
    assert_same(fast, _line_reader(monkeypatch, p, cat))
    ref = metfast.read_met_csv_fast(demo / "met.csv.gz", cat)
    for v in ref[0].data_vars:
        np.testing.assert_array_equal(fast[0][v].values, ref[0][v].values)
    assert fast[1].table["reason"].tolist() == ref[1].table["reason"].tolist()


@pytest.mark.parametrize("pad", [",,,,,,,,,", ',"","",,', " , , "])
def test_a_meta_line_padded_by_a_sheet_is_read_as_written(tmp_path, cat, monkeypatch, pad):
    """A sheet saves the '# time_label: start' line with the empty cells of the widest
    line after it: both readers read 'start' (before: "unknown time label: got
    'start,,,,,,,,,'"), the times as those of the plain file."""
    body = HEAD + "".join(_rows("alpha", "2020-03-01T00:00", 48))
    plain = _write(tmp_path, "# time_label: start\n" + body, name="plain")
    p = _write(tmp_path, "# time_label: start" + pad + "\n" + body)
    ref, _ = _line_reader(monkeypatch, plain, cat)
    fast = metfast.read_met_csv_fast(p, cat, chunk_bytes=3000)
    assert fast is not None
    line = _line_reader(monkeypatch, p, cat)
    assert_same(fast, line)
    np.testing.assert_array_equal(line[0]["time"].values, ref["time"].values)
