"""Pieces shared by the readers of samples, concentrations and meteorology."""
from __future__ import annotations

import re

import numpy as np
import pandas as pd

from ..errors import InputError, suggest
from .ledger import consecutive_runs
from .table import RawTable
from .tabletimes import SUMMARY_ROW


#: First words of a spreadsheet's totals or summary row (common practice of sheets).
_SUMMARY = SUMMARY_ROW


def _units_row(tab: RawTable, words) -> bool:
    """Whether a row's non-empty cells are the units of the header (a units row)."""
    units = {h.unit.strip().lower() for h in tab.headers.values() if h.unit}
    cells = [w.strip("[]() ") for w in words if w]
    return bool(cells) and bool(units) and all(c in units for c in cells)


def _units_under_bare_header(tab: RawTable, row) -> list:
    """The headers to write when a row holds the units of a header written without
    them (a sheet's export: names on the first line, units on the second), e.g.
    ``['gauge_depth [mm]', 'SO4 [mg/L]']``; ``[]`` when the row is not such a row.

    A units row: at least two non-empty cells, none a number, each a unit of pint
    (:func:`workbench.units.parse_unit`; ``1`` is a fraction's unit, another number is
    not a unit), at least one not dimensionless, each under a
    column whose header has no unit of its own."""
    from ..units import parse_unit
    out, dimensioned = [], False
    for col, cell in zip(tab.frame.columns, row):
        cell = str(cell).strip().strip("[]() ")
        if not cell:
            continue
        head = tab.headers.get(col)
        number = cell != "1" and re.fullmatch(r"[-+]?[\d.,]+(?:[eE][-+]?\d+)?", cell)
        if head is None or head.unit or number:      # "1": the unit of a fraction
            return []
        try:
            unit, _ = parse_unit(cell)
        except ValueError:
            return []
        dimensioned = dimensioned or not unit.dimensionless
        out.append(f"{tab.raw_headers.get(col, col)} [{cell}]")
    return out if len(out) >= 2 and dimensioned else []


def check_sites(tab: RawTable, catalogue) -> np.ndarray:
    """The ``site`` column as an array, every value checked against the catalogue."""
    sites = tab.text("site")
    known = pd.Series(sites).isin(catalogue.ids).to_numpy()      # hashed: linear in rows
    if not known.all():
        i = int(np.flatnonzero(~known)[0])
        hint = ""
        if sites[i].strip().lower() == "site":
            hint = " (a repeated header line? keep one header at the top)"
        elif sites[i] == "":
            words = [str(c).strip().lower() for c in tab.frame.iloc[i].tolist()]
            if any(_SUMMARY.match(w) for w in words):
                hint = " (an empty site cell: a totals or summary row from a spreadsheet? remove it)"
            elif _units_row(tab, words):
                hint = (" (an empty site cell: a row of units under the header, as a spreadsheet "
                        "exports them? the unit goes in the header, 'SO2 [ug/m3]': remove the row)")
            elif bare := _units_under_bare_header(tab, tab.frame.iloc[i].tolist()):
                shown = ", ".join(repr(h) for h in bare[:4]) + (", ..." if len(bare) > 4 else "")
                hint = (" (an empty site cell: a row of units under a header without units, as "
                        "a spreadsheet exports them? write each unit into its column's header "
                        f"in square brackets, {shown}, and remove the row)")
            else:
                hint = " (an empty site cell)"
        elif sites[i].strip().lower() in {c.lower() for c in catalogue.ids}:
            same = next(c for c in catalogue.ids if c.lower() == sites[i].strip().lower())
            hint = (f" (differs from the catalogue's {same!r} only in case or blanks: site "
                    "ids are compared exactly)")
        elif _SUMMARY.match(sites[i].strip()):
            hint = " (a totals or summary row from a spreadsheet? remove it)"
        raise tab.error("site not in the catalogue" + hint, row=i, column="site", value=sites[i],
                        expected="one of " + ", ".join(catalogue.ids) + suggest(sites[i], catalogue.ids))
    return sites


def check_intervals(tab: RawTable, start, end):
    """Raise when an end is not after its start."""
    bad = ~(end > start)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        if end[i] == start[i]:         # one time label copied into both columns (an
            #                            hourly monitor's hour-ending label?); before:
            #                            "end before start" for a period of length 0
            raise tab.error("end equal to start (a period of length 0)", row=i,
                            column="end", value=tab.frame["end"].iloc[i],
                            expected=f"a time after the start {tab.frame['start'].iloc[i]} "
                            "(one time label per row written in both columns? an "
                            "hour-ending label 2022-01-01T01:00 is start 2022-01-01T00:00, "
                            "end 2022-01-01T01:00)")
        raise tab.error("end before start", row=i, column="end", value=tab.frame["end"].iloc[i],
                        expected=f"a time after the start {tab.frame['start'].iloc[i]}")


def check_time_zones(tab: RawTable, sites, names=("start", "end"), mask=None):
    """Raise when the time labels of one site mix zoned and naive timestamps.

    A zoned label (``Z``, ``+01:00``) is read as written; a naive one as the site's
    local standard time (``utc_offset_h``).  A file may hold sites of either kind (a
    network file merged from several loggers), but every label of one site, the start
    and the end of every row alike, must carry the same convention: a row with a zoned
    start and a naive end would silently gain or lose the site's offset in its period.
    The site's convention is that of most of its labels (on a tie, of its first
    label); the first label that differs from it is reported.

    Parameters
    ----------
    sites : ndarray of str
        Site of each row.
    names : tuple of str
        The timestamp columns, already parsed by :meth:`RawTable.times`.
    mask : ndarray of bool, optional
        Rows taking part (exact repeats dropped before are left out).
    """
    if not all(n in tab.zoned for n in names):
        return
    z = np.stack([tab.zoned[n] for n in names], axis=1)          # (row, column)
    rows = np.arange(len(sites)) if mask is None else np.flatnonzero(mask)
    if len(rows) == 0:
        return
    z, site = z[rows], np.asarray(sites)[rows]
    if z.all() or not z.any():
        return
    # the site's convention: that of most of its labels (a tie: its first label's)
    g = pd.DataFrame({"site": site, "share": z.mean(axis=1), "first": z[:, 0]}).groupby("site")
    share = g["share"].transform("mean").to_numpy()
    first = np.where(share == 0.5, g["first"].transform("first").to_numpy(), share > 0.5)
    off = z != first[:, None]
    if not off.any():
        return
    r, c = (int(x[0]) for x in np.nonzero(off))
    i = int(rows[r])
    same = (site == site[r]) & (z[:, 0] == first[r])
    k = int(np.flatnonzero(same)[0]) if same.any() else r
    ref = int(rows[k])
    ref_col = 0 if same.any() else 1 - c
    own = tab.frame[names[c]].iloc[i]
    kind = "with a time zone" if z[r, c] else "without a time zone (naive)"
    labels = ("every start and end" if len(names) > 1 else f"every {names[0]} label")
    other = "with a zone (Z or +hh:mm)" if first[r] else "without a zone"
    raise tab.error(f"time labels of site {str(site[r])!r} mix zoned and naive timestamps: this "
                    f"one is {kind}", row=i, column=names[c], value=own,
                    expected=f"{labels} of the site {other}, as "
                    f"{tab.raw_headers.get(names[ref_col], names[ref_col])} "
                    f"{tab.frame[names[ref_col]].iloc[ref]!r} on line {int(tab.lines[ref])} "
                    "(a naive label is the site's local standard time, utc_offset_h; add the zone "
                    "to every label or to none)")


def check_overlaps(tab: RawTable, sites, samplers, start, end, mask=None, what="sample"):
    """Raise when two intervals of the same site and sampler overlap.

    Parameters
    ----------
    mask : array of bool, optional
        Rows taking part (e.g. those that hold a value of one species).
    """
    idx = np.arange(len(start)) if mask is None else np.flatnonzero(mask)
    if len(idx) < 2:
        return
    df = pd.DataFrame({"i": idx, "site": sites[idx], "sampler": samplers[idx],
                       "start": start[idx], "end": end[idx]})
    df = df.sort_values(["site", "sampler", "start", "end"], kind="stable")
    same = (df["site"].to_numpy()[1:] == df["site"].to_numpy()[:-1]) & (
        df["sampler"].to_numpy()[1:] == df["sampler"].to_numpy()[:-1])
    over = same & (df["start"].to_numpy()[1:] < df["end"].to_numpy()[:-1])
    if over.any():
        k = int(np.flatnonzero(over)[0])
        i_prev, i = int(df["i"].iloc[k]), int(df["i"].iloc[k + 1])
        moved = tab.end_moves is not None and tab.end_moves[i_prev] > 0
        read = (f" (read as {np.datetime_as_string(end[i_prev], unit='m')} UTC: an end at "
                "minute 59 or 59:59 is read as the next whole hour)" if moved else "")
        raise tab.error(f"overlapping {what}s from the same sampler", row=i, column="start",
                        value=tab.frame["start"].iloc[i],
                        expected=f"a start at or after the end {tab.frame['end'].iloc[i_prev]}"
                        f"{read} of the {what} on line {int(tab.lines[i_prev])}")


def reason_where(mask, text) -> np.ndarray:
    """Per-row reason: `text` where `mask` (bool [n]), "" elsewhere.

    An object array whose cells share one ``str`` (8 bytes a row), where
    ``numpy.where(mask, text, "")`` makes a fixed-width text array of 4 bytes a
    character a row (a reason of 100 characters: 400 bytes on every row, with or
    without a reason).  `text` may be an array [n] (a reason per row): its cells where
    `mask` are taken.
    """
    mask = np.asarray(mask, dtype=bool)
    out = np.full(mask.shape, "", dtype=object)
    if np.ndim(text):
        out[mask] = np.asarray(text, dtype=object)[mask]
    else:
        out[mask] = str(text)
    return out


def join_reasons(parts) -> np.ndarray:
    """Join lists of per-row reason arrays ("" = none) into "; "-separated text.

    Returns an object array [n]; only the rows with a reason in two parts get a new
    ``str`` (the others keep the part's own object, so a row without any reason holds
    the one ``""`` of the first part)."""
    if not parts:
        return np.array([], dtype=object)
    out = np.asarray(parts[0], dtype=object).copy()
    for p in parts[1:]:
        p = np.asarray(p, dtype=object)
        has = p != ""
        if not has.any():
            continue
        both = has & (out != "")
        if both.any():
            out[both] = out[both] + "; " + p[both]
        only = has & ~both
        out[only] = p[only]
    return out


#: Unit spellings of loggers and sheets that pint reads as another unit or not at all
#: (lower case, blanks removed) -> what to write instead.
UNIT_SPELLINGS = {
    "mb": "'mbar' or 'hPa' (pint reads 'mb' as millibarn, an area)",
    "degc": "'degC'", "deg.c": "'degC'", "c": "'degC' (pint reads 'C' as coulomb)",
    "f": "'degF' (pint reads 'F' as farad)", "degf": "'degF'",
    "kmh": "'km/h'", "kts": "'knot'", "%rh": "'%'", "rh%": "'%'",
    "mm/h": "'mm' (the hour's total)", "mm/hr": "'mm' (the hour's total)",
    # a degree sign typed another way: a blank after it (pint reads 'C' as coulomb),
    # the ordinal indicator U+00BA of some keyboards, a lower-case c, the sign alone
    "°c": "'degC'", "ºc": "'degC' (º is the ordinal indicator, not the degree sign °)",
    "ºf": "'degF' (º is the ordinal indicator, not the degree sign °)", "°f": "'degF'",
    "°": "'degC' or 'degF' (a degree sign alone names no scale)",
    "º": "'degC' or 'degF' (a degree sign alone names no scale)",
}


#: A unit written with a scale before it: ``0.1 mm``, ``1/10 mm`` (a logger's count).
_SCALED_UNIT = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)(?:\s*/\s*(\d+))?\s*([A-Za-zµμ%]\S*)\s*$")


def scaled_unit_hint(unit, targets=None) -> str:
    """The advice for a unit written with a scale (a count of tenths of mm, ``0.1 mm``,
    ``1/10 mm``), which pint does not read as a unit; "" for any other text.

    `targets` (units of the column's dimension, e.g. ``("m/s",)``) keep the advice to
    units the column can take: a length after a number where the column holds no length
    (``wind_speed [10 m]``, ``temperature [2 m]``), or a length of 1 m or more
    (``gauge_depth [10 m]``, a metre or more), is a measurement height written in the header, not a count
    of tenths: the advice says so (before, "multiply the values by 10 and write 'm'" for
    a wind speed).

    >>> scaled_unit_hint("1/10 mm")
    "; a scaled unit: multiply the values by 0.1 and write 'mm'"
    >>> scaled_unit_hint("mm")
    ''
    >>> scaled_unit_hint("10 m", ("m/s",))[:48]
    "; '10 m' is a height, not a unit (the measuremen"
    """
    m = _SCALED_UNIT.match(str(unit))
    if not m:
        return ""
    k = float(m.group(1)) / (float(m.group(2)) if m.group(2) else 1.0)
    base = m.group(3)
    if targets is not None:
        dim = _dimension(base)
        fits = dim is not None and (dim == "eq" or any(
            dim == _dimension(t) for t in targets))
        if dim == _dimension("m") and (not fits or _metres(k, base) >= 1):
            return (f"; {str(unit).strip()!r} is a height, not a unit (the measurement "
                    "height written in the header?): write the column's unit alone in "
                    "the brackets; the heights go in sites.toml (wind_height_m, "
                    "sampler_height_m)")
        if not fits:
            return ""
    return f"; a scaled unit: multiply the values by {k:g} and write {base!r}"


def _metres(k, base) -> float:
    """The length `k` `base` in m (`base` a length unit pint reads)."""
    from ..units import convert_plain
    return float(convert_plain(k, base, "m"))


def _dimension(text):
    """pint's dimensionality of a unit text, "eq" for an equivalent unit (ueq/L), None
    for an unknown unit."""
    from ..units import parse_unit
    try:
        unit, is_eq = parse_unit(text)
    except ValueError:
        return None
    return "eq" if is_eq else unit.dimensionality


def unit_error(tab: RawTable, name: str, exc: Exception, expected: str,
               targets=None) -> InputError:
    """The located error of a header's unit; `targets` as in :func:`scaled_unit_hint`."""
    unit = tab.headers[name].unit
    hint = UNIT_SPELLINGS.get("".join(str(unit).split()).lower())
    return InputError(f"unknown or dimensionally wrong unit ({exc})"
                      + (f"; write {hint}" if hint else scaled_unit_hint(unit, targets)),
                      file=tab.path, line=tab.header_line, column=tab.raw_headers[name],
                      value=unit, expected=expected)


def _first_difference(tab: RawTable, columns, i: int, j: int):
    """The first column whose cells differ between data rows i and j (numbers compared
    as numbers, so 1.5 and 1.50 are equal), or None."""
    for c in columns:
        a, b = tab.frame[c].iloc[i], tab.frame[c].iloc[j]
        if a == b:
            continue
        try:
            if float(a) == float(b):
                continue
        except ValueError:
            pass
        return c
    return None


def duplicate_rows(tab: RawTable, sites, samplers, start, end, what="sample"):
    """Rows uploaded twice: the same site, sampler and period (UTC) on two lines.

    Rows of different, named samplers are collocated and left alone; a blank
    ``sampler_id`` matches any sampler.  An exact repeat (every other cell holds the
    same value) is dropped; a repeat with other values (a corrected re-export uploaded
    beside the original) is an error naming both lines.

    Returns
    -------
    drop : ndarray of bool
        Exact repeats, not used.
    reasons : ndarray of str
        Their ledger reason ("" for the others): :data:`REPEAT_REASON`, one text for
        every repeat, so that the ledger counts them on one line (its line numbers are
        in :meth:`workbench.io.ledger.Ledger.reasons`).
    note : str
        Which line repeats which, for the ledger notes (:func:`repeat_note`; "" when
        there is no repeat).
    """
    n = len(sites)
    drop = np.zeros(n, bool)
    reasons = np.full(n, "", dtype=object)
    of_line = np.zeros(n, np.int64)
    df = pd.DataFrame({"site": sites, "start": start, "end": end})
    dup = df.duplicated(keep=False).to_numpy()
    if not dup.any():
        return drop, reasons, ""
    values = [c for c in tab.frame.columns if c not in ("site", "start", "end", "sampler_id")]
    # only the few repeated rows are visited, one group of repeats at a time
    for _, g in df.iloc[np.flatnonzero(dup)].groupby(["site", "start", "end"], sort=False):
        rows = g.index.to_numpy()
        for k in range(1, len(rows)):
            i = int(rows[k])
            for j in (int(r) for r in rows[:k]):
                if drop[j] or (samplers[i] != samplers[j] and samplers[i] != "" and samplers[j] != ""):
                    continue
                line_j = int(tab.lines[j])
                col = _first_difference(tab, values, i, j)
                if col is None:
                    drop[i] = True
                    reasons[i] = REPEAT_REASON
                    of_line[i] = line_j
                    break
                raise tab.error(f"duplicate upload: same site, sampler and {what} period as "
                                f"line {line_j}, with other values", row=i, column=col,
                                value=tab.frame[col].iloc[i],
                                expected=f"one row per site, sampler and period (line {line_j} "
                                f"has {tab.frame[col].iloc[j]!r}); keep the corrected row only, "
                                "or give collocated samplers their own sampler_id")
    return drop, reasons, repeat_note(tab, np.asarray(tab.lines)[drop], of_line[drop])


#: The ledger reason of a row dropped as an exact repeat of an earlier row (no line
#: number in it: the ledger groups the rows of one reason; :func:`repeat_note` pairs them).
REPEAT_REASON = "exact repeat of an earlier line (dropped)"


def repeat_reasons(reasons, repeat, repeat_why) -> np.ndarray:
    """The ledger reasons of a sample file's rows with each dropped exact repeat given
    its repeat reason alone: its cells are those of the line it repeats, whose reasons
    (a value below detection, a flag) the ledger holds once on that line; kept on the
    repeat too, they read in ``workbench check`` as "55 rows rejected: PO4 below
    detection", as if detection had been the cause.

    >>> repeat_reasons(np.array(["PO4 below detection", "PO4 below detection"], object),
    ...                np.array([False, True]), np.array(["", REPEAT_REASON], object)).tolist()
    ['PO4 below detection', 'exact repeat of an earlier line (dropped)']
    """
    return np.where(np.asarray(repeat, bool), repeat_why, reasons).astype(object)


def repeat_note(tab: RawTable, lines, of_lines, runs: int = 5) -> str:
    """The ledger note saying which line repeats which, in runs of consecutive lines.

    Parameters
    ----------
    lines, of_lines : array of int
        Line of each dropped repeat and the line it repeats, in file order.

    Returns
    -------
    str
        E.g. ``"air.csv: 440 exact repeats dropped: lines 442-881 repeat lines 2-441"``
        (the first `runs` runs, then how many more); "" for none.
    """
    a, b = np.asarray(lines, np.int64), np.asarray(of_lines, np.int64)
    if len(a) == 0:
        return ""
    first, last = consecutive_runs(a, b)
    text = []
    for i, j in zip(first[:runs], last[:runs]):
        text.append(f"line {a[i]} repeats line {b[i]}" if i == j else
                    f"lines {a[i]}-{a[j]} repeat lines {b[i]}-{b[j]}")
    more = int(np.sum(last[runs:] - first[runs:] + 1))
    tail = f"; and {more} more (input_rows.csv lists their lines)" if more else ""
    return (f"{tab.path.name}: {len(a)} exact repeat{'s' * (len(a) != 1)} dropped: "
            + "; ".join(text) + tail)


def release_free_memory() -> bool:
    """Give the memory freed inside the C heap back to the system (glibc ``malloc_trim``).

    A network computed in blocks frees the arrays of each block, but glibc keeps the
    freed pages of its heap (the next block's arrays do not fit the holes that the small
    results of the blocks before leave): measured on 100 site-years, 485 MB resident
    after the blocks against 220 MB once trimmed (docs/performance.md).  Returns False
    where there is no glibc (the call is then skipped; nothing else changes).
    """
    import ctypes
    import ctypes.util
    global _TRIM
    if _TRIM is None:
        try:
            _TRIM = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6").malloc_trim
        except (OSError, AttributeError):
            _TRIM = False
    if not _TRIM:
        return False
    _TRIM(0)
    return True


_TRIM = None


_UNNAMED = re.compile(r"^Unnamed: (\d+)$")


def unused_note(file_name: str, unknown) -> str:
    """The note of the columns a reader does not use; a column without a header (what
    pandas calls ``Unnamed: k``, k 0-based) is named by its place, 1-based, as a
    spreadsheet counts it, so the user reads what it is rather than a name the file
    does not hold.

    >>> unused_note("p.csv", ["comment", "Unnamed: 14", "Unnamed: 15"])
    'p.csv: columns not used: comment; 2 columns without a header (columns 15-16: trailing separators of a spreadsheet export?)'
    """
    named = [str(u) for u in unknown if not _UNNAMED.match(str(u))]
    places = sorted(int(_UNNAMED.match(str(u))[1]) + 1 for u in unknown
                    if _UNNAMED.match(str(u)))
    parts = [", ".join(named)] if named else []
    if places:
        span = (f"column {places[0]}" if len(places) == 1 else
                f"columns {places[0]}-{places[-1]}" if places[-1] - places[0] == len(places) - 1
                else "columns " + ", ".join(map(str, places)))
        parts.append(f"{len(places)} column{'s' if len(places) > 1 else ''} without a header "
                     f"({span}: trailing separators of a spreadsheet export?)")
    return f"{file_name}: columns not used: " + "; ".join(parts)
