"""A laboratory that changed its unit mid-record: one column per unit in one file.

A long record joined from a laboratory's yearly exports often holds ``SO4 [mg/L]``
filled in the early years and ``SO4 [ueq/L]`` in the later ones.  Each row must fill at
most one of them.  The two columns are joined into one column of text, each cell as
written, and the rows of each later column are remembered with its unit
(:attr:`workbench.io.table.RawTable.switched`): the reader converts each cell to SI once,
with pint, from the unit of the column it was written in
(:meth:`~workbench.io.table.RawTable.unit_groups`), never through the other column's
unit nor through text.  A note says which lines held which unit.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError
from ..units import parse_header, to_amount


def _line_span(lines) -> str:
    return f"line {lines[0]}" if len(lines) == 1 else f"lines {lines[0]}-{lines[-1]}"


def merge_unit_switches(df: pd.DataFrame, path, header_line: int, lines) -> tuple:
    """Join the columns of one species in two units into the first one.

    Parameters
    ----------
    df : DataFrame
        The table's cells as text, columns as written in the header.
    path : Path
        The file (for the messages).
    header_line : int
        1-based line of the header.
    lines : ndarray of int
        The file line of each row.

    Returns
    -------
    df : DataFrame
        Without the later columns, whose cells (as written, in the later unit) are in
        the first column.
    notes : list of str
        One line per joined column.
    origin : dict
        First column -> list of (later column, bool mask of its rows): where a cell of
        the joined column was written, for its unit and the located messages.

    Raises
    ------
    InputError
        A column name twice that is not a species in two units (``duplicate column``),
        a row with values in both units, or units of two kinds (a mass per volume and a
        mixing ratio: no constant factor).
    """
    first, notes, drop, origin = {}, [], [], {}
    cols = list(df.columns)
    for col in cols:
        h = parse_header(col)
        key = ("species", h.species) if h.species is not None and h.unit else ("name", h.name)
        if key not in first:
            first[key] = col
            continue
        a = first[key]
        ha = parse_header(a)
        if key[0] == "name" or ha.unit == h.unit and ha.name == h.name:
            if ha.name != h.name:        # e.g. a species column without a unit beside one
                first[("name", h.name)] = col
                continue
            raise InputError("duplicate column", file=path, line=header_line, column=col,
                             expected="each column once")
        fa = df[a].to_numpy(dtype=object) != ""
        fb = df[col].to_numpy(dtype=object) != ""
        both = np.flatnonzero(fa & fb)
        if both.size:
            raise InputError("two columns for one species", file=path,
                             line=int(lines[both[0]]), column=col,
                             expected=f"one column for {h.species} (already given as {a!r}), "
                             f"or one per unit with each row filling one: here both hold a "
                             f"value ({df[a].iat[both[0]]} and {df[col].iat[both[0]]})")
        try:
            xa, kind_a = to_amount(1.0, ha.unit, ha.species, ha.basis)
            xb, kind_b = to_amount(1.0, h.unit, h.species, h.basis)
        except ValueError as exc:
            raise InputError("unknown or wrong unit", file=path, line=header_line, column=col,
                             value=h.unit, expected=f"a concentration unit ({exc})") from None
        if kind_a != kind_b:
            raise InputError("two columns of one species in units of two kinds", file=path,
                             line=header_line, column=col,
                             expected=f"units of one kind for {h.species} ({a!r} is a "
                             f"{kind_a.replace('_', ' ')}, {col!r} a {kind_b.replace('_', ' ')}: "
                             "no constant factor between them); convert one before reading")
        factor = float(np.asarray(xb) / np.asarray(xa))     # for the note only
        merged = df[a].to_numpy(dtype=object).copy()
        merged[fb] = df[col].to_numpy(dtype=object)[fb]     # the cells as written
        df[a] = merged
        drop.append(col)
        origin.setdefault(a, []).append((col, fb))
        la, lb = lines[fa], lines[fb]
        notes.append(f"{path.name}: {h.species} in {ha.unit} ({a!r}, "
                     f"{_line_span(la) if la.size else 'no line'}) and in {h.unit} ({col!r}, "
                     f"{_line_span(lb) if lb.size else 'no line'}): read as one column, "
                     f"each value converted from its own unit ({h.unit} x {factor:.6g} = "
                     f"{ha.unit}); declare the laboratory's change "
                     "in sites.toml ([[site.change]] what = \"units\") so that trends name it")
    return (df.drop(columns=drop) if drop else df), notes, origin
