"""Low-level reading of our CSV files: metadata lines, headers with units, typed columns.

Every problem is raised as :class:`~workbench.errors.InputError` naming the file, the
line, the column, the value and what was expected.  Parsing is vectorized; only the
first offending row of a column is reported.

Where the parts are: the cell texts and the hint of a cell that is no number in
:mod:`workbench.io.tablecells`; the time texts (24:00, day/month dates, the plausible
years) in :mod:`workbench.io.tabletimes`; the file's text and the shape of its rows
(fields, unit brackets, ``#`` lines, the header again) in :mod:`workbench.io.tablerows`.
This module re-exports them, so that ``workbench.io.table.<name>`` keeps working.
"""
from __future__ import annotations

import csv
import io
import re
import warnings
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import InputError, suggest
from ..units import Header, parse_header
from .ledger import compact_lines
from .linechunks import meta_line
# the cell texts and their hints (defined here before)
from .tablecells import (CENSORED_ELSEWHERE, FORMULA_ERRORS, MISSING_TEXTS,  # noqa: F401
                         SAMPLE_MISSING_TEXTS, _BLANK, number_hint)
# the time texts (defined here before)
from .tabletimes import (SUMMARY_ROW, YEARS, _OFFSET, day_month_readings, end_of_day,  # noqa: F401
                         end_of_day_note, order_witness, parse_iso)
# the file's text and the shape of its rows (defined here before)
from .tablerows import (_header_again, _open_text, _top_lines_again, check_unit_brackets,  # noqa: F401
                        decimal_comma_pairs, fields_error)


def _parse_body(body: str) -> pd.DataFrame:
    """The CSV text `body` (header first) as cells of text, one row per line below the
    header (blank lines too); pandas' ParserError (or its warning) on a row of another
    number of fields."""
    with warnings.catch_warnings():
        warnings.simplefilter("error", pd.errors.ParserWarning)
        return pd.read_csv(io.StringIO(body), dtype=str, keep_default_na=False,
                           skip_blank_lines=False, skipinitialspace=True, index_col=False)


@dataclass
class RawTable:
    """A CSV file read as text, with its metadata and parsed headers.

    Attributes
    ----------
    path : Path
    meta : dict
        ``# key: value`` lines at the top of the file.
    frame : DataFrame
        All cells as stripped strings, columns named by their header *name* (without
        the unit); index irrelevant.
    lines : ndarray of int
        1-based line number of each row in the file.
    headers : dict
        name -> :class:`~workbench.units.Header`.
    """

    path: Path
    meta: dict
    frame: pd.DataFrame
    lines: np.ndarray
    headers: dict
    raw_headers: dict = field(default_factory=dict)
    #: column name -> {missing-value text as typed: [row indices]} of the non-empty
    #: texts read as missing (filled by :meth:`numbers` with ``missing="samples"``).
    missing_seen: dict = field(default_factory=dict)
    #: column name -> bool array: the timestamp carries a zone (``Z`` or an offset).
    zoned: dict = field(default_factory=dict)
    #: Time columns with a 24:00 label (read as 00:00 of the next day), in order.
    end_of_day: list = field(default_factory=list)
    #: Row indices (into :attr:`lines`) holding a 24:00 label in any time column.
    end_of_day_rows: list = field(default_factory=list)
    #: The notes of the ends written at minute 59 or 59:59 read as the next whole hour
    #: (none: []; :func:`.tabletimes.inclusive_ends`, set by the interval readers).
    minute_end_notes: list = field(default_factory=list)
    #: The seconds each row's end was moved by that rule (None: not applied) [s].
    end_moves: np.ndarray | None = None
    #: Notes of species given in two units, joined (:mod:`.unitswitch`).
    unit_switch_notes: list = field(default_factory=list)
    #: metadata key -> the 1-based line of its ``# key: value`` line.
    meta_lines: dict = field(default_factory=dict)
    #: column name -> [(raw later column, bool rows)] of a joined unit switch: a
    #: message on such a row names the column the cell was written in.
    switched: dict = field(default_factory=dict)
    #: File lines below the header that repeat it cell for cell (a file pasted after
    #: itself, header and all): not read as rows (:meth:`header_again_note`).
    header_again: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    #: File lines below the header that repeat a ``#`` line of the top as written (a
    #: file pasted after itself with its metadata): not read (:meth:`meta_again_note`).
    meta_again: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))

    # ------------------------------------------------------------------ reading
    @classmethod
    def read(cls, path) -> "RawTable":
        path = Path(path)
        text = _open_text(path)
        all_lines = text.splitlines()
        meta, n_meta, meta_lines, top = {}, 0, {}, {}
        for ln in all_lines:
            s = ln.strip()
            if s.startswith("#"):
                s = meta_line(s)        # a sheet's empty cells after it dropped
                n_meta += 1
                top.setdefault(s, n_meta)
                body = s.lstrip("#").strip()
                if ":" in body:
                    key, val = body.split(":", 1)
                    meta[key.strip().lower()] = val.strip()
                    meta_lines[key.strip().lower()] = n_meta
            elif s == "" and n_meta == len(meta) and n_meta:
                n_meta += 1
            else:
                break
        while n_meta < len(all_lines) and not all_lines[n_meta].strip():
            n_meta += 1  # blank lines above the header
        rest = all_lines[n_meta:]
        if not any(ln.strip() for ln in rest):
            raise InputError("empty file", file=path, expected="a header line and data rows")
        body = "\n".join(rest)
        body, meta_again = _top_lines_again(path, body, rest, n_meta, top, meta, meta_lines)
        head = next(ln for ln in rest if ln.strip())
        if head.count(";") > head.count(",") or head.count("\t") > head.count(","):
            sep = "semicolon" if head.count(";") >= head.count("\t") else "tab"
            raise InputError(f"{sep}-separated header (a spreadsheet export in a "
                             "decimal-comma locale?)", file=path, line=n_meta + 1,
                             value=head[:60], expected="comma-separated values with a "
                             "decimal point (export as 'CSV UTF-8, comma-delimited')")
        try:
            df = _parse_body(body)
        except (pd.errors.ParserError, pd.errors.ParserWarning):
            odd = [k for k, ln in enumerate(rest) if ln.count('"') % 2]
            if odd:
                raise InputError("a quote opened and not closed", file=path,
                                 line=odd[0] + 1 + n_meta, value=rest[odd[0]][:60],
                                 expected='quotes in pairs ("...") around a cell') from None
            rows = list(csv.reader(io.StringIO(body)))
            header = rows[0]
            n_head = len(header)
            # a line of empty cells wider than the header (a sheet's used range below
            # the data) holds nothing: a blank line, as one of the header's width
            wide = [k for k, r in enumerate(rows[1:], 1)
                    if len(r) > n_head and not any(c.strip() for c in r)]
            bad = next(((k + 2 + n_meta, r) for k, r in enumerate(rows[1:])
                        if len(r) != n_head and any(c.strip() for c in r)), (None, None))
            others = [r for r in rows[1:] if len(r) == n_head]
            if bad[0] is not None or not wide:
                raise fields_error(path, bad[0], n_head, bad[1], header, others) from None
            for k in wide:
                rest[k] = ""
            body = "\n".join(rest)
            df = _parse_body(body)
        lines = np.arange(len(df)) + n_meta + 2
        data = body[body.find("\n") + 1:] if "\n" in body else ""
        if '"' in data or _BLANK.search(data):            # else no cell has any to strip
            df = df.apply(lambda c: c.str.strip())
        blank = (df == "").all(axis=1).to_numpy().copy()   # blanks and quotes only: blank too
        blank |= _header_again(df)                      # not a row: said in a note
        again = lines[blank & ~(df == "").all(axis=1).to_numpy()]
        df, lines = df.loc[~blank].reset_index(drop=True), lines[~blank]
        if df.empty:
            raise InputError("no data rows", file=path, line=n_meta + 1,
                             expected="at least one data row below the header")
        for col in df.columns:
            check_unit_brackets(path, n_meta + 1, col)
        from .unitswitch import merge_unit_switches
        df, switches, origin = merge_unit_switches(df, path, n_meta + 1, lines)
        headers, raw, names = {}, {}, []
        for col in df.columns:
            h = parse_header(col)
            if h.name in headers:
                raise InputError("duplicate column", file=path, line=n_meta + 1,
                                 column=col, expected="each column once")
            headers[h.name] = h
            raw[h.name] = col
            names.append(h.name)
        df.columns = names
        if '"' in data:                                   # a quote left open swallows lines
            broken = df.apply(lambda c: c.str.contains("\n", regex=False)).to_numpy()
            if broken.any():
                r, c = (int(x[0]) for x in np.nonzero(broken))
                raise InputError("a quote opened and not closed (the cell runs over several "
                                 "lines)", file=path, line=int(lines[r]), column=raw[df.columns[c]],
                                 value=df.iat[r, c].split("\n")[0][:40],
                                 expected='quotes in pairs ("...") around a cell')
        tab = cls(path, meta, df, lines, headers, raw)
        tab.meta_lines = meta_lines
        tab.unit_switch_notes = switches
        tab.switched = {parse_header(a).name: v for a, v in origin.items()}
        tab.header_again = again
        tab.meta_again = meta_again
        return tab

    # ------------------------------------------------------------------ helpers
    def error(self, problem, *, row=None, column=None, value=None, expected=None):
        """An InputError located at data row index `row` (0-based) and `column`."""
        line = int(self.lines[row]) if row is not None else None
        col = self.raw_headers.get(column, column) if column is not None else None
        for later, rows in self.switched.get(column, ()):
            if row is not None and rows[row]:
                col = later                     # the cell was written in the later unit
        return InputError(problem, file=self.path, line=line, column=col, value=value,
                          expected=expected)

    def unit_groups(self, name) -> list:
        """The units of column `name`, each with the rows written in it: a list of
        (:class:`~workbench.units.Header`, bool rows [n]); one entry for a column written
        in one unit, one more per later column of a unit switch (:mod:`.unitswitch`), so
        that each cell is converted to SI once from the unit it was written in."""
        rows = np.ones(len(self.lines), bool)
        out = []
        for later, mask in self.switched.get(name, ()):
            out.append((parse_header(later), np.asarray(mask, bool)))
            rows &= ~np.asarray(mask, bool)
        return [(self.headers[name], rows)] + out

    @property
    def header_line(self) -> int:
        return int(self.lines[0]) - 1 if len(self.lines) else 1

    def require(self, names, any_of=(), examples=None, hints=None):
        """Raise for the first required column that is missing, naming in the same
        message every other missing one and the file's own columns, so that a file
        from another logger is fixed in one pass.

        `examples`: name -> a header with its unit (``"wind_speed [m/s]"``) shown for
        the missing columns; `hints`: (present column, missing column) -> a sentence
        said when the file has the first and lacks the second (a ``time`` column in a
        file of periods)."""
        missing = [n for n in names if n not in self.headers]
        if missing:
            n, examples = missing[0], examples or {}
            expected = f"a column named {n!r}" + suggest(n, self.headers)
            if len(missing) > 1:
                expected += "; also missing: " + ", ".join(repr(m) for m in missing[1:])
            shown = [examples[m] for m in missing if m in examples]
            if shown:
                expected += " (headers such as " + ", ".join(repr(x) for x in shown) \
                            + ": name, then the unit in brackets)"
            for (have, lack), text in (hints or {}).items():
                if have in self.headers and lack in missing:
                    expected += "; " + text
            own = [self.raw_headers.get(h, h) for h in self.headers if h not in names]
            if own:
                more = f", ... ({len(own) - 12} more)" if len(own) > 12 else ""
                expected += ("; the file's other columns: "
                             + ", ".join(repr(c) for c in own[:12]) + more
                             + " (rename those that hold these variables)")
            raise InputError("missing required column" + ("s" if len(missing) > 1 else ""),
                             file=self.path, line=self.header_line, column=n,
                             value=None, expected=expected)
        for group in any_of:
            if not any(g in self.headers for g in group):
                raise InputError("missing required column", file=self.path,
                                 line=self.header_line, column=" or ".join(group),
                                 expected="one of " + ", ".join(repr(g) for g in group))

    def has(self, name) -> bool:
        return name in self.headers

    def unit_of(self, name, required=True, default=None) -> str | None:
        h: Header = self.headers[name]
        if h.unit is None or h.unit == "":
            if required and default is None:
                raise InputError("column has no unit", file=self.path, line=self.header_line,
                                 column=self.raw_headers[name],
                                 expected=f"a unit in square brackets, e.g. '{name} [...]'")
            return default
        return h.unit

    def text(self, name) -> np.ndarray:
        return self.frame[name].to_numpy(dtype=object).astype(str)

    def numbers(self, name, *, censoring=False, missing="met"):
        """Parse a numeric column.

        One parse of the whole column; the text checks look only at the cells that did
        not parse (most columns have none).

        Parameters
        ----------
        missing : {"met", "samples"}
            Which texts mean missing: :data:`MISSING_TEXTS` (as typed) or
            :data:`SAMPLE_MISSING_TEXTS` (any case; each non-empty one is recorded in
            :attr:`missing_seen` for the ledger notes).

        Returns
        -------
        values : ndarray of float
            NaN for empty cells; for ``<x`` cells the limit x.
        censored : ndarray of bool
            Only when `censoring` is True: cells written ``<x``.
        """
        s = self.frame[name]
        body = s.str.lstrip("<").str.strip() if censoring else s
        v = pd.to_numeric(body, errors="coerce").to_numpy(dtype=float)
        odd = np.flatnonzero(np.isnan(v))
        if len(odd):
            if not censoring:
                cens = s.iloc[odd].str.startswith("<").to_numpy()
                if cens.any():
                    i = int(odd[np.flatnonzero(cens)[0]])
                    raise self.error("censored value not allowed here", row=i, column=name,
                                     value=s.iloc[i], expected=CENSORED_ELSEWHERE)
            if missing == "samples":
                low = body.iloc[odd].str.lower()
                is_missing = low.isin(SAMPLE_MISSING_TEXTS).to_numpy()
            else:
                low = body.iloc[odd]
                is_missing = low.isin(MISSING_TEXTS).to_numpy()
            bad = ~is_missing
            if bad.any():
                i = int(odd[np.flatnonzero(bad)[0]])
                what = "text in a numeric column" + number_hint(str(s.iloc[i]).strip(),
                                                                censoring)
                allowed = ("or empty, NA, N/A, NaN or - for missing" if missing == "samples"
                           else "or empty for missing")
                raise self.error(what, row=i, column=name, value=s.iloc[i],
                                 expected=f"a number ({allowed})"
                                 + (", or '<limit' below detection" if censoring else ""))
            if missing == "samples":
                typed = s.iloc[odd][is_missing & (s.iloc[odd] != "").to_numpy()]
                if len(typed):
                    self.missing_seen[name] = {t: np.flatnonzero(s.to_numpy() == t)
                                               for t in pd.unique(typed)}
        inf = np.isinf(v)
        if inf.any():
            i = int(np.flatnonzero(inf)[0])
            raise self.error("not a finite number", row=i, column=name, value=s.iloc[i],
                             expected="a finite number (or empty for missing)")
        if censoring:
            return v, s.str.startswith("<").to_numpy()
        return v

    def times(self, name, utc_offset_h) -> np.ndarray:
        """Parse ISO 8601 timestamps to naive UTC datetime64[ns].

        A naive timestamp takes the row's `utc_offset_h` (array, hours east of UTC).
        """
        s = self.frame[name]
        if (s == "").any():
            i = int(np.flatnonzero((s == "").to_numpy())[0])
            raise self.error("missing timestamp", row=i, column=name, value="",
                             expected="an ISO 8601 timestamp such as 2020-01-09T14:00")
        aware = s.str.contains(_OFFSET).to_numpy()
        self.zoned[name] = aware
        eod = end_of_day(s)
        if eod.any() and name not in self.end_of_day:
            self.end_of_day.append(name)
            self.end_of_day_rows.append(np.flatnonzero(eod))
        out = np.empty(len(s), dtype="datetime64[ns]")
        if aware.any():
            tv = parse_iso(s[aware], utc=True)
            self._check_times(s[aware], tv, name)
            out[aware] = tv
        if (~aware).any():
            tv = parse_iso(s[~aware], utc=False)
            self._check_times(s[~aware], tv, name)
            off = np.asarray(utc_offset_h, dtype=float)[~aware]
            out[~aware] = tv - (off * 3600e9).astype("timedelta64[ns]")
        return out

    def _check_times(self, s, tv, name):
        """Raise on the first of `s` whose parsed time `tv` [datetime64] is NaT or out of
        the years."""
        bad = np.isnat(tv)
        odd = ~bad & ((tv < YEARS[0]) | (tv >= YEARS[1]))
        if odd.any():
            idx = s.index[np.flatnonzero(odd)[0]]
            raise self.error("timestamp outside the years 1900-2099 (a typing slip in the "
                             "year?)", row=int(idx), column=name, value=s.loc[idx],
                             expected="a timestamp in 1900-2099")
        if bad.any():
            idx = s.index[np.flatnonzero(bad)[0]]
            hint = ""
            if SUMMARY_ROW.match(str(s.loc[idx]).strip()):
                hint = " (a totals or summary row from a spreadsheet? remove it)"
            elif re.fullmatch(r"\d{5}(\.\d*)?", str(s.loc[idx])):
                hint = " (an Excel date serial number? format the column as a date first)"
            elif re.search(r"[T ](?:2[4-9]|[3-9]\d):\d\d", str(s.loc[idx])):
                hint = (" (an hour of 24 or more? hours run 00-23; only 24:00 may end a "
                        "day)")
            elif both := day_month_readings(str(s.loc[idx])):
                seen = order_witness(self.frame[name]) if " if day first, " in both else None
                if seen is not None:
                    both += (f"; line {int(self.lines[seen[0]])} has {seen[1]!r}, which "
                             f"fits {seen[2]} only")
                hint = (" (a date in day/month or month/day order? write year-month-day: "
                        + both + ")")
            raise self.error("not an ISO 8601 timestamp" + hint, row=int(idx), column=name,
                             value=s.loc[idx], expected="a timestamp such as 2020-01-09T14:00 "
                             "or 2020-01-09T14:00+01:00")

    def missing_note(self) -> str:
        """The ledger note counting the texts read as missing ("" when there were none),
        e.g. ``p.csv: read as missing: SO4 [mg/L] 'NA' x2 (lines 4, 9)``."""
        parts = []
        for name in (c for c in self.frame.columns if c in self.missing_seen):
            seen = self.missing_seen[name]
            for text, rows in seen.items():
                lines = ", ".join(str(int(x)) for x in self.lines[rows[:5]])
                more = f" and {len(rows) - 5} more" if len(rows) > 5 else ""
                parts.append(f"{self.raw_headers.get(name, name)} {text!r} x{len(rows)} "
                             f"(line{'s' * (len(rows) > 1)} {lines}{more})")
        if not parts:
            return ""
        return f"{self.path.name}: cells read as missing (as empty cells): " + "; ".join(parts)

    def header_again_note(self) -> str:
        """The ledger note of lines repeating the header ("" for none), e.g. ``m.csv: the
        header repeated on line 8762 (a file pasted after itself?): not read as a row``."""
        if not len(self.header_again):
            return ""
        from .ledger import compact_lines
        return (f"{self.path.name}: the header repeated on "
                f"{compact_lines(self.header_again)} (a file pasted after itself?): not "
                "read as a row")

    def meta_again_note(self) -> str:
        """The ledger note of lines repeating a ``#`` line of the top ("" for none), e.g.
        ``m.csv: the metadata repeated on line 8762 (a file pasted after itself?): not
        read as a row``."""
        if not len(self.meta_again):
            return ""
        return (f"{self.path.name}: the metadata repeated on "
                f"{compact_lines(self.meta_again)} (a file pasted after itself?): not "
                "read as a row")

    def end_of_day_note(self) -> str:
        """The ledger note of 24:00 labels read as the next day's 00:00 ("" for none)."""
        if not self.end_of_day:
            return ""
        rows = np.concatenate(self.end_of_day_rows)
        return end_of_day_note(self.path.name, [self.raw_headers.get(c, c)
                                                for c in self.end_of_day], self.lines[rows])

    def unknown_columns(self, known) -> list[str]:
        return [self.raw_headers[n] for n in self.headers if n not in known]
