"""The parsed rows of a met CSV read in chunks (:mod:`workbench.io.metfast`): the site
code of each row in memory, its time and values appended to scratch files, what the
(site, time) grid needs, and the file line of each row (blank lines skipped)."""
from __future__ import annotations

import numpy as np

from . import metlocate

#: No blank lines.
_NONE = np.empty(0, np.int64)


class Rows:
    """A column of the whole file, filled chunk by chunk into one array (grown when the
    estimate was short): per-chunk pieces kept until the end would fragment the heap
    and hold about twice their size."""

    def __init__(self, dtype, capacity):
        self.data = np.empty(max(int(capacity), 1), dtype)
        self.n = 0

    def add(self, v):
        if self.n + len(v) > len(self.data):
            bigger = np.empty(max(int(len(self.data) * 1.5), self.n + len(v)), self.data.dtype)
            bigger[:self.n] = self.data[:self.n]
            self.data = bigger
        self.data[self.n:self.n + len(v)] = v
        self.n += len(v)

    def done(self) -> np.ndarray:
        out = self.data[:self.n] if self.n > 0.9 * len(self.data) else self.data[:self.n].copy()
        self.data = None
        return out


class Spill:
    """The parsed rows of a file: site codes in memory (4 bytes a row), times and values
    appended to scratch files, with what the grid needs (span of the hours with a value,
    the sites with a value, whether each site's rows are consecutive), and the blank
    lines between the rows (dropped, as the line reader drops them; their lines are
    skipped in the rows' line numbers, :meth:`line_of`)."""

    def __init__(self, folder, names, n_sites, first_line):
        self.folder, self.names = folder, list(names)
        self.first_line = first_line
        self._blanks = [_NONE]
        self._blank_at = _NONE
        self.files = {n: open(folder / f"{n}.bin", "wb") for n in ["time"] + self.names}
        self.site = None
        self.n = 0
        self.count = np.zeros(n_sites, np.int64)
        self.first = np.full(n_sites, -1, np.int64)
        self.present = np.zeros(n_sites, bool)
        self.seen = np.zeros(n_sites, bool)
        self.grouped = True
        self.last = -1
        self.t_min = self.t_max = None
        self.zones = metlocate.ZoneTally(n_sites)
        #: column -> {missing-value text: [count, first (at most 5) rows of the file]}
        self.missing = {}
        #: File lines of the rows labelled 24:00 (arrays, one per chunk holding any).
        self.end_of_day = []

    def add_blanks(self, before):
        """Blank lines, each given by the number of rows of the file above it."""
        self._blanks.append(np.asarray(before, np.int64))

    def line_of(self, rows):
        """File lines (1-based) of rows of the file (0-based, the blank lines not
        counted) [-]."""
        if len(self._blanks) > 1:
            self._blank_at = np.concatenate(self._blanks)
            self._blanks = [self._blank_at]
        rows = np.asarray(rows, np.int64)
        if not len(self._blank_at):
            return rows + self.first_line
        return rows + self.first_line + np.searchsorted(self._blank_at, rows, side="right")

    def all_lines(self):
        """The file line of every row (int32 when they fit) [-]."""
        last = int(self.line_of([max(self.n - 1, 0)])[0])
        dtype = np.int32 if last < 2**31 else np.int64
        if not len(self._blank_at):
            return np.arange(self.first_line, self.first_line + self.n, dtype=dtype)
        return self.line_of(np.arange(self.n)).astype(dtype)

    def count_missing(self, found, row0):
        """Count the missing-value texts of a chunk starting at file row `row0` (their
        first five file lines kept)."""
        for name, texts in found.items():
            for text, at in texts.items():
                e = self.missing.setdefault(name, {}).setdefault(text, [0, []])
                e[0] += len(at)
                e[1].extend(self.line_of(row0 + at[:max(5 - len(e[1]), 0)]).tolist())

    def add(self, site, t, values, capacity):
        if self.site is None:
            self.site = Rows(np.int32, capacity)
        empty = np.ones(len(site), bool)
        for v in values.values():
            empty &= np.isnan(v)
        kept = t[~empty]
        if len(kept):
            lo, hi = kept.min(), kept.max()
            self.t_min = lo if self.t_min is None else min(self.t_min, lo)
            self.t_max = hi if self.t_max is None else max(self.t_max, hi)
        self.present[site[~empty]] = True
        change = np.flatnonzero(np.diff(site)) + 1
        run_sites = site[np.concatenate([[0], change])]
        if run_sites[0] == self.last:
            run_sites = run_sites[1:]
        if len(np.unique(run_sites)) < len(run_sites) or self.seen[run_sites].any():
            self.grouped = False       # a site's rows in more than one run: sorted below
        self.seen[run_sites] = True
        self.last = site[-1]
        u, at = np.unique(site, return_index=True)
        new = self.first[u] < 0
        self.first[u[new]] = self.n + at[new]
        self.count += np.bincount(site, minlength=len(self.count))
        self.site.add(site.astype(np.int32))
        t.view(np.int64).tofile(self.files["time"])
        for n in self.names:
            values[n].tofile(self.files[n])
        self.n += len(site)

    def close(self):
        for f in self.files.values():
            f.close()
        if isinstance(self.site, Rows):
            self.site = self.site.done()

    def read(self, name, rows):
        """Values of `name` at `rows` (from the scratch file; nothing stays mapped)."""
        dtype = np.int64 if name == "time" else np.float64
        m = np.memmap(self.folder / f"{name}.bin", dtype=dtype, mode="r", shape=(self.n,))
        try:
            out = np.array(m[rows])
        finally:
            del m
        return out.view("datetime64[ns]") if name == "time" else out

    def groups(self, limit):
        """Row numbers of groups of whole sites (about `limit` rows each), each site's
        rows in file order, the sites in catalogue order."""
        sites = np.flatnonzero(self.count)
        order = None if self.grouped else np.argsort(self.site, kind="stable")
        ends = np.cumsum(self.count[sites])
        starts = ends - self.count[sites]
        i = 0
        while i < len(sites):
            j = i + 1
            while j < len(sites) and ends[j] - starts[i] <= limit:
                j += 1
            if order is not None:
                yield order[starts[i]:ends[j - 1]]
            else:
                yield np.concatenate([np.arange(self.first[s], self.first[s] + self.count[s])
                                      for s in sites[i:j]])
            i = j
