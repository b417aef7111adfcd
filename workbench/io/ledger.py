"""The ledger: every input row accounted for.

Each reader returns its data together with a :class:`Ledger` that has one entry per
data row of the file: ``accepted``, ``flagged`` (accepted, with the reasons) or
``rejected`` (not used, with the reasons).  Rows read always equal accepted +
flagged + rejected.

A large file (hourly met of a network: millions of rows) is held as
:class:`CodedRows`: integer codes of the site and of the reason per row, a few bytes a
row instead of a row of Python strings; :attr:`Ledger.table` spells the rows out only
when asked for, and :meth:`Ledger.summary` and :meth:`Ledger.reasons` count on the
codes.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

STATUSES = ("accepted", "flagged", "rejected")
#: Rows of one file above which a reader keeps its ledger rows as codes.
CODED_ABOVE = 200_000
_COLUMNS = ("file", "line", "site", "status", "reason")


def _empty_table() -> pd.DataFrame:
    return pd.DataFrame({"file": pd.Series(dtype=str), "line": pd.Series(dtype=int),
                         "site": pd.Series(dtype=str), "status": pd.Series(dtype=str),
                         "reason": pd.Series(dtype=str)})


#: Rows compared at a time when the runs are found (bounds the scratch arrays) [-].
RUN_SLICE = 1 << 20


def _run_starts(lines, *codes) -> np.ndarray:
    """Positions of the rows that start a run: the first row, and each row whose line is
    not the one before + 1 or whose code in any of `codes` differs from the row before [-].
    Compared :data:`RUN_SLICE` rows at a time.

    >>> _run_starts(np.array([2, 3, 4, 6, 7]), np.array([0, 0, 1, 1, 1])).tolist()
    [0, 2, 3]
    """
    n = len(lines)
    out = [np.zeros(min(n, 1), np.int64)]
    for a in range(1, n, RUN_SLICE):
        b = min(a + RUN_SLICE, n)
        cut = lines[a:b] != lines[a - 1:b - 1] + 1
        for c in codes:
            cut |= c[a:b] != c[a - 1:b - 1]
        out.append(np.flatnonzero(cut) + a)
    return np.concatenate(out)


def shared_strings(texts) -> np.ndarray:
    """`texts` as an object array whose equal cells are one ``str`` (a row's site, status
    and reason repeat over many rows, a block's statuses and notes over its cells: one
    object each instead of one a cell; :func:`workbench.block_sites.shared_texts`)."""
    codes, uniq = pd.factorize(np.asarray(texts, dtype=object))
    return np.asarray([str(u) for u in uniq] + [""], dtype=object)[codes]


class CodedRows:
    """The ledger rows of one file as codes, in runs.

    The rows are given per row and held as runs of rows that share their site, reason
    and rejection and whose lines step by 1 (an hourly met file of a network: a few runs
    a site, about 20 bytes a run, where per-row codes took 13 bytes a row); the per-row
    arrays are spelled out again only when asked for (:attr:`lines`, :attr:`site_codes`,
    :attr:`reason_codes`, :attr:`rejected`).

    Parameters
    ----------
    file : str
    lines : array of int
        Line number of each row in the file [-].
    site_codes : array of int
        Index of each row's site in `sites` [-].
    sites : array of str
    reason_codes : array of int
        Index of each row's reason in `reasons` ("" = none) [-].
    reasons : array of object
        The distinct "; "-joined reason texts.
    rejected : array of bool
    """

    def __init__(self, file, lines, site_codes, sites, reason_codes, reasons, rejected):
        self.file = str(file)
        self.sites = np.asarray(sites, dtype=object)
        self.reasons = np.asarray(reasons, dtype=object)
        lines = np.asarray(lines)
        site_codes, reason_codes = np.asarray(site_codes), np.asarray(reason_codes)
        rejected = np.asarray(rejected, dtype=bool)
        self.n = len(lines)
        self._line_dtype = lines.dtype
        first = _run_starts(lines, site_codes, reason_codes, rejected)
        small = np.int32 if self.n < 2**31 else np.int64
        #: Position of the first row of each run [-].
        self.run_first = first.astype(small)
        #: Line, site code, reason code and rejection of each run's first row.
        self.run_line = lines[first]
        self.run_site = site_codes[first].astype(np.int32)
        self.run_reason = reason_codes[first].astype(np.int32)
        self.run_rejected = rejected[first]

    @classmethod
    def from_rows(cls, file, lines, sites, reasons, rejected) -> "CodedRows":
        """The rows of :meth:`Ledger.for_rows`, as codes."""
        s_codes, s_names = pd.factorize(np.asarray(sites, dtype=object))
        r_codes, r_names = pd.factorize(np.asarray(reasons, dtype=object))
        return cls(str(file), np.asarray(lines), s_codes.astype(np.int32),
                   np.asarray(s_names, dtype=object), r_codes.astype(np.int32),
                   np.asarray(r_names, dtype=object), np.asarray(rejected, dtype=bool))

    def __len__(self):
        return self.n

    def _lengths(self) -> np.ndarray:
        """Rows of each run [-]."""
        return np.diff(np.r_[self.run_first.astype(np.int64), self.n])

    def _spelled(self, per_run) -> np.ndarray:
        """A value of each run, repeated on each of its rows."""
        return np.repeat(per_run, self._lengths())

    @property
    def lines(self) -> np.ndarray:
        """Line number of each row in the file [-]."""
        out = np.repeat((self.run_line.astype(np.int64) - self.run_first)
                        .astype(self._line_dtype), self._lengths())
        out += np.arange(self.n, dtype=self._line_dtype)     # two arrays of the rows only
        return out

    @property
    def site_codes(self) -> np.ndarray:
        return self._spelled(self.run_site)

    @property
    def reason_codes(self) -> np.ndarray:
        return self._spelled(self.run_reason)

    @property
    def rejected(self) -> np.ndarray:
        return self._spelled(self.run_rejected)

    def _run_status(self) -> np.ndarray:
        """0 accepted, 1 flagged, 2 rejected, per run."""
        has = (self.reasons != "")[self.run_reason]
        return np.where(self.run_rejected, 2, has.astype(np.int8))

    def status(self) -> np.ndarray:
        """0 accepted, 1 flagged, 2 rejected, per row."""
        return self._spelled(self._run_status())

    def frame(self) -> pd.DataFrame:
        """The rows spelled out (columns ``file, line, site, status, reason``)."""
        return pd.DataFrame({"file": self.file, "line": np.asarray(self.lines, dtype=int),
                             "site": self.sites[self.site_codes].astype(str),
                             "status": np.array(STATUSES, dtype=object)[self.status()],
                             "reason": self.reasons[self.reason_codes].astype(str)})

    def counts(self) -> pd.DataFrame:
        """Rows per (status, reason text): columns ``file, status, reason, n``."""
        key = self._run_status().astype(np.int64) * len(self.reasons) + self.run_reason
        n = np.bincount(key, weights=self._lengths(), minlength=3 * len(self.reasons))
        k = np.flatnonzero(n)
        return pd.DataFrame({"file": self.file,
                             "status": np.array(STATUSES, dtype=object)[k // len(self.reasons)],
                             "reason": self.reasons[k % len(self.reasons)],
                             "n": n[k].astype(np.int64)})

    def with_reasons(self):
        """Lines, status (0, 1, 2) and reason code of the rows with a reason [-]: the runs
        with a reason spelled out, the others not."""
        keep = (self.reasons != "")[self.run_reason]
        lengths = self._lengths()[keep]
        at = np.repeat(self.run_line[keep].astype(np.int64) - np.cumsum(np.r_[0, lengths[:-1]]),
                       lengths) + np.arange(int(lengths.sum()))
        return (at.astype(self._line_dtype), np.repeat(self._run_status()[keep], lengths),
                np.repeat(self.run_reason[keep], lengths))

    def with_reason(self, lines, reason: str) -> "CodedRows":
        """These rows with `reason` added to those at `lines` (a rejected row stays
        rejected); self is not changed (ledgers added together share their parts)."""
        all_lines = self.lines
        sel = np.isin(all_lines, np.asarray(lines))
        if not sel.any():
            return self
        codes = self.reason_codes
        old = np.unique(codes[sel])
        texts = list(self.reasons)
        remap = np.arange(len(texts))
        for c in old:
            new = reason if texts[c] == "" else texts[c] + "; " + reason
            if new not in texts:
                texts.append(new)
            remap[c] = texts.index(new)
        return CodedRows(self.file, all_lines, self.site_codes, self.sites,
                         np.where(sel, remap[codes], codes), np.array(texts, dtype=object),
                         self.rejected)


class Ledger:
    """Row-by-row account of what happened to the input.

    Attributes
    ----------
    table : pandas.DataFrame
        Columns ``file, line, site, status, reason`` (built from the parts when read).
    notes : list of str
        File-level remarks (unknown columns ignored, metadata read, ...).
    parts : list
        The rows, per file, as DataFrames or :class:`CodedRows`, in order.
    clock_judged : set of str
        Site ids whose met radiation the clock check judged (:mod:`.metclock`): their
        catalogue note on the time zone is superseded (one message per fault).
    """

    def __init__(self, table=None, notes=None, parts=None, clock_judged=None):
        self.parts = list(parts) if parts is not None else (
            [table] if table is not None and len(table) else [])
        self.notes = list(notes) if notes is not None else []
        self.clock_judged = set(clock_judged or ())

    def __repr__(self):
        return f"Ledger({self.rows()} rows in {len(self.parts)} parts, {len(self.notes)} notes)"

    @property
    def table(self) -> pd.DataFrame:
        frames = [p.frame() if isinstance(p, CodedRows) else p for p in self.parts]
        if not frames:
            return _empty_table()
        return frames[0] if len(frames) == 1 else pd.concat(frames, ignore_index=True)

    @table.setter
    def table(self, value):
        self.parts = [value] if value is not None and len(value) else []

    def rows(self) -> int:
        """Number of rows accounted for."""
        return int(sum(len(p) for p in self.parts))

    @classmethod
    def for_rows(cls, file, lines, sites, reasons, rejected):
        """Build a ledger from per-row arrays.

        Parameters
        ----------
        file : str
        lines : array of int
            Line numbers in the file.
        sites : array of str
        reasons : array of str
            "" for a clean row, else "; "-joined reasons.
        rejected : array of bool
            True for rows that are not used.
        """
        reasons = np.asarray(reasons, dtype=object)
        rejected = np.asarray(rejected, dtype=bool)
        status = np.where(rejected, 2, (reasons != "").astype(np.int8))
        table = pd.DataFrame({"file": str(file), "line": np.asarray(lines, dtype=int),
                              "site": shared_strings(np.asarray(sites, dtype=object).astype(str)),
                              "status": np.array(STATUSES, dtype=object)[status],
                              "reason": shared_strings(reasons.astype(str))})
        return cls(table=table)

    @classmethod
    def for_many_rows(cls, file, lines, sites, reasons, rejected, limit=CODED_ABOVE):
        """:meth:`for_rows`, held as codes when there are more than `limit` rows."""
        if len(lines) <= limit:
            return cls.for_rows(file, lines, sites, reasons, rejected)
        return cls.for_codes(CodedRows.from_rows(file, lines, sites, reasons, rejected))

    @classmethod
    def for_codes(cls, rows: CodedRows):
        """A ledger of one file's rows held as codes (for files of millions of rows)."""
        return cls(parts=[rows] if len(rows) else [])

    def __add__(self, other: "Ledger") -> "Ledger":
        return Ledger(parts=self.parts + other.parts, notes=self.notes + other.notes,
                      clock_judged=self.clock_judged | other.clock_judged)

    def add_reason(self, file, lines, reason: str):
        """Flag rows (by line number) of `file` with `reason`; rejected rows stay rejected."""
        for k, part in enumerate(self.parts):
            if isinstance(part, CodedRows):
                if part.file == str(file):
                    self.parts[k] = part.with_reason(lines, reason)
                continue
            t = part
            sel = (t["file"] == str(file)) & t["line"].isin(np.asarray(lines))
            if not sel.any():
                continue
            t = t.copy()
            old = t.loc[sel, "reason"]
            t.loc[sel, "reason"] = np.where(old == "", reason, old + "; " + reason)
            ok = sel & (t["status"] == "accepted")
            t.loc[ok, "status"] = "flagged"
            self.parts[k] = t

    def _counts(self) -> pd.DataFrame:
        """Rows per (file, status, reason text): columns ``file, status, reason, n``."""
        frames = []
        for p in self.parts:
            if isinstance(p, CodedRows):
                frames.append(p.counts())
            else:
                frames.append(p.groupby(["file", "status", "reason"]).size().rename("n")
                              .reset_index())
        return pd.concat(frames, ignore_index=True)

    def summary(self) -> pd.DataFrame:
        """Counts of rows per file and status, with a ``read`` total.

        >>> led = Ledger.for_rows("f.csv", [2, 3, 4], ["a"] * 3, ["", "x", "y"], [False, False, True])
        >>> led.summary().to_dict("records")
        [{'file': 'f.csv', 'read': 3, 'accepted': 1, 'flagged': 1, 'rejected': 1}]
        """
        if not self.rows():
            return pd.DataFrame(columns=["file", "read", *STATUSES])
        c = self._counts()
        counts = (c.groupby(["file", "status"])["n"].sum().unstack("status")
                  .reindex(columns=list(STATUSES)).fillna(0).astype(int))
        counts.insert(0, "read", counts.sum(axis=1))
        return counts.reset_index()

    def reasons(self) -> pd.DataFrame:
        """Counts of each single reason per file and status.

        Columns ``file, status, reason, rows, lines``: `lines` is the compact list of
        the line numbers of the file with that reason (:func:`compact_lines`), so that a
        reason text never carries a line number and the rows of one reason are one line.
        """
        c = self._counts() if self.rows() else None
        if c is None or not (c["reason"] != "").any():
            return pd.DataFrame(columns=["file", "status", "reason", "rows", "lines"])
        t = c[c["reason"] != ""]
        ex = t.assign(reason=t["reason"].str.split("; ")).explode("reason")
        out = (ex.groupby(["file", "status", "reason"])["n"].sum().rename("rows")
               .reset_index())
        lines = self._reason_lines()
        none = [np.empty(0, np.int64)]
        out["lines"] = [compact_lines(np.concatenate(lines.get((str(f), s, r), none)))
                        for f, s, r in zip(out["file"], out["status"], out["reason"])]
        return out

    def _reason_lines(self) -> dict:
        """(file, status, single reason) -> list of arrays of the line numbers [1]."""
        out: dict = {}
        for p in self.parts:
            if isinstance(p, CodedRows):
                lines, status, codes = p.with_reasons()
                if len(lines):
                    _line_groups(out, p.file, lines, np.asarray(STATUSES, dtype=object)[status],
                                 codes, p.reasons)
                continue
            sel = (p["reason"] != "").to_numpy()
            if not sel.any():
                continue
            for file, g in p[sel].groupby("file", sort=False):
                codes, texts = pd.factorize(g["reason"].to_numpy(dtype=object))
                _line_groups(out, str(file), g["line"].to_numpy(), g["status"].to_numpy(
                    dtype=object), codes, np.asarray(texts, dtype=object))
        return out

    def check_balanced(self) -> bool:
        """True when every row has exactly one status (read = accepted+flagged+rejected)."""
        s = self.summary()
        return bool((s["read"] == s[list(STATUSES)].sum(axis=1)).all())


def _line_groups(out: dict, file: str, lines, status, codes, texts):
    """Add the line numbers of rows (`codes` index `texts`, "; "-joined reasons) to
    `out[(file, status, single reason)]`: one stable sort, then one slice per group."""
    st_codes, st_names = pd.factorize(status)
    key = st_codes.astype(np.int64) * len(texts) + codes
    order = np.argsort(key, kind="stable")
    ks, ls = key[order], np.asarray(lines)[order]
    cut = np.flatnonzero(np.diff(ks)) + 1
    for k, chunk in zip(ks[np.r_[0, cut]], np.split(ls, cut)):
        st, text = st_names[k // len(texts)], texts[k % len(texts)]
        for reason in str(text).split("; "):
            out.setdefault((file, st, reason), []).append(chunk)


def consecutive_runs(*arrays):
    """Runs along arrays of integers that all step by 1 together.

    Parameters
    ----------
    *arrays : array of int
        Of one length (line numbers [1]).

    Returns
    -------
    first, last : ndarray of int
        Index of the first and the last element of each run.

    >>> [a.tolist() for a in consecutive_runs([3, 4, 5, 9], [10, 11, 20, 21])]
    [[0, 2, 3], [1, 2, 3]]
    """
    steps = [np.diff(np.asarray(a, np.int64)) != 1 for a in arrays]
    n = len(arrays[0])
    cut = np.flatnonzero(np.logical_or.reduce(steps)) + 1 if n > 1 else np.empty(0, np.int64)
    return np.r_[0, cut], np.r_[cut, n] - 1


def compact_lines(lines, runs: int = 3) -> str:
    """Line numbers as a short text: the first `runs` runs of consecutive lines, then
    the count of the others.

    >>> compact_lines([442, 443, 444, 881])
    'lines 442-444, 881'
    >>> compact_lines([7])
    'line 7'
    >>> compact_lines([2, 4, 6, 8, 9])
    'lines 2, 4, 6, ... (2 more)'
    """
    v = np.unique(np.asarray(lines, dtype=np.int64))
    if len(v) == 0:
        return ""
    first, last = consecutive_runs(v)
    starts, ends = v[first], v[last]
    text = ", ".join(f"{a}" if a == b else f"{a}-{b}" for a, b in zip(starts[:runs], ends[:runs]))
    if len(starts) > runs:
        text += f", ... ({int(np.sum(ends[runs:] - starts[runs:] + 1))} more)"
    return ("line " if len(v) == 1 else "lines ") + text
