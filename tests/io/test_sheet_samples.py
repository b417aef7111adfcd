"""Spreadsheet exports of the precipitation and air sample files read as the plain files.

The sample readers (:func:`workbench.io.samples.read_precipitation`,
:func:`~workbench.io.samples.read_air`) read their small files line by line
(:class:`workbench.io.table.RawTable`).  A sheet saved as CSV quotes every cell, starts
with a UTF-8 byte-order mark, ends its lines with CRLF, pads cells with blanks, ends with
empty lines or lines of commas, or adds empty columns: each variant must give the
numbers, flags and ledger reasons of the plain file (a line of empty quoted cells
padded with blanks was refused as "an empty site cell" before: it is dropped as a blank
row now, as a line of commas is).  Empty fields after the last column
where the header has none are refused, naming the first such line.
"""
from __future__ import annotations

import numpy as np
import pytest

from workbench.errors import InputError
from workbench.io.samples import read_air, read_precipitation
from tiny_inputs import AIR, PRECIP

READERS = {"precipitation": (read_precipitation, PRECIP), "air": (read_air, AIR)}


def _split(text):
    """(lines above the header, header, rows) of a file text."""
    lines = text.rstrip("\n").split("\n")
    k = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    return lines[:k], lines[k], lines[k + 1:]


def _join(meta, header, rows, end="\n"):
    return end.join(meta + [header] + rows) + end


def _quote(ln):
    return ",".join(f'"{c}"' for c in ln.split(","))


def _pad(ln, k):
    """Blanks around the cells of a line (only outside the quotes of a quoted line)."""
    pads = [" {} ", "{} ", "  {}", "{}\t", "{}"]
    if not ln.startswith('"'):
        pads += ['  "{}" ', '" {} "']
    return ",".join(pads[(k + j) % len(pads)].format(c) for j, c in enumerate(ln.split(",")))


def _variant(name, text):
    meta, header, rows = _split(text)
    n = header.count(",")
    if name == "quoted cells":
        return _join(meta, header, [_quote(r) for r in rows])
    if name == "quoted header":
        return _join(meta, _quote(header), rows)
    if name == "every cell quoted":
        return _join(meta, _quote(header), [_quote(r) for r in rows])
    if name == "byte-order mark":
        return "\ufeff" + text
    if name == "CRLF":
        return _join(meta, header, rows, "\r\n")
    if name == "blanks around cells":
        return _join(meta, _pad(header, 0), [_pad(r, k + 1) for k, r in enumerate(rows)])
    if name == "trailing empty lines":
        return text + "\n\n\n"
    if name == "blank lines and lines of commas":
        return _join(meta + [""], header, rows[:1] + ["", "," * n] + rows[1:]) + "\n" + \
            "," * n + "\n\n"
    if name == "empty columns after the last":
        return _join(meta, header + ",,", [r + ",," for r in rows])
    if name == "'#' lines padded with empty cells":
        # a sheet saves every line with the cells of the widest: '# reference_state:
        # ambient,,,,,' (before: "unknown reference state: got 'ambient,,,,,'")
        return _join([m + "," * n for m in meta or ["# note: exported again"]], header,
                     rows)
    if name == "all of them":
        q = [_pad(_quote(r), k) for k, r in enumerate(rows)]
        return "\ufeff" + _join(meta + [""], _quote(header), q[:1] + ["", _quote("," * n)]
                                + q[1:] + [_pad(_quote("," * n), 3)], "\r\n") + "\r\n\r\n"
    raise AssertionError(name)


VARIANTS = ["quoted cells", "quoted header", "every cell quoted", "byte-order mark", "CRLF",
            "blanks around cells", "trailing empty lines", "blank lines and lines of commas",
            "empty columns after the last", "'#' lines padded with empty cells",
            "all of them"]


@pytest.mark.parametrize("variant", VARIANTS)
@pytest.mark.parametrize("kind", list(READERS))
def test_a_spreadsheet_export_gives_the_numbers_of_the_plain_file(tmp_path, cat, kind,
                                                                  variant):
    """Each variant: the same values (NaN where NaN), censoring, flags, sampler ids and
    ledger statuses and reasons as the plain file."""
    reader, text = READERS[kind]
    plain = tmp_path / "plain.csv"
    plain.write_bytes(text.encode())
    p = tmp_path / "sheet.csv"
    p.write_bytes(_variant(variant, text).encode("utf-8"))
    assert p.read_bytes() != plain.read_bytes()
    ref, ref_ledger = reader(plain, cat)
    ds, ledger = reader(p, cat)
    at = [i + 1 for i, ln in enumerate(_variant(variant, text).splitlines())
          if "alpha" in ln or "beta" in ln]                 # the file lines of the rows
    first = text.count("#") + 2                              # of the plain file's row 0
    assert list(ds.data_vars) == list(ref.data_vars)
    for v in list(ref.data_vars) + list(ref.coords):
        a, b = ds[v].values, ref[v].values
        if v == "line":                                      # the lines of this file
            b = np.array([at[i - first] for i in b.tolist()])
        if a.dtype.kind == "f":
            np.testing.assert_array_equal(a, b)
        else:
            assert a.tolist() == b.tolist(), v
    assert ledger.table["line"].tolist() == at
    got, want = ledger.table, ref_ledger.table
    assert got["status"].tolist() == want["status"].tolist()
    assert got["reason"].tolist() == want["reason"].tolist()
    assert len(got) == len(want)


@pytest.mark.parametrize("quoted", [False, True])
@pytest.mark.parametrize("kind", list(READERS))
def test_empty_fields_after_the_last_column_are_refused_at_their_line(tmp_path, cat, kind,
                                                                     quoted):
    """``...,0.6,,`` where the header ends at 0.6: refused, naming the first such line."""
    reader, text = READERS[kind]
    meta, header, rows = _split(text)
    rows = [_quote(r) if quoted else r for r in rows]
    rows[1] += ",,"
    p = tmp_path / "sheet.csv"
    p.write_text(_join(meta, header, rows))
    with pytest.raises(InputError, match="malformed CSV row") as err:
        reader(p, cat)
    assert err.value.line == len(meta) + 3
