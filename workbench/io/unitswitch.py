"""A laboratory that changed its unit mid-record: one column per unit in one file.

A long record joined from a laboratory's yearly exports often holds ``SO4 [mg/L]``
filled in the early years and ``SO4 [ueq/L]`` in the later ones.  Each row must fill at
most one of them; the later column's numbers are converted once, here at the reading
boundary, into the unit of the first column of that species (a constant factor between
two concentrations of one species, :func:`workbench.units.to_amount`), and the reader
then sees one column.  A note says which lines held which unit.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import InputError
from ..units import parse_header, to_amount

_FMT = "%.10g"


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
        Without the later columns, whose numbers are in the first column's unit.
    notes : list of str
        One line per joined column.
    origin : dict
        First column -> list of (later column, bool mask of its rows): where a cell of
        the joined column was written, for the located messages.

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
        factor = float(np.asarray(xb) / np.asarray(xa))
        text = df[col].to_numpy(dtype=object)
        body = pd.Series(text[fb]).str.lstrip("<").str.strip()
        num = pd.to_numeric(body, errors="coerce").to_numpy(float)
        cens = pd.Series(text[fb]).str.startswith("<").to_numpy()
        conv = np.where(np.isfinite(num),
                        np.char.add(np.where(cens, "<", ""), np.char.mod(_FMT, num * factor)),
                        text[fb].astype(str))          # not a number: left for the reader's
        merged = df[a].to_numpy(dtype=object).copy()   # located error
        merged[fb] = conv.astype(object)
        df[a] = merged
        drop.append(col)
        origin.setdefault(a, []).append((col, fb))
        la, lb = lines[fa], lines[fb]
        notes.append(f"{path.name}: {h.species} in {ha.unit} ({a!r}, "
                     f"{_line_span(la) if la.size else 'no line'}) and in {h.unit} ({col!r}, "
                     f"{_line_span(lb) if lb.size else 'no line'}): read as one column, "
                     f"{h.unit} x {factor:.6g} = {ha.unit}; declare the laboratory's change "
                     "in sites.toml ([[site.change]] what = \"units\") so that trends name it")
    return (df.drop(columns=drop) if drop else df), notes, origin
