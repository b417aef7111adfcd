"""The notes on a met record's missing hours per site, with the hint of a clock going
forward to summer time.

Part of :mod:`workbench.io.metchecks` (which re-exports every name here).
"""
from __future__ import annotations

import numpy as np


#: The words of a site's note when its met record has no missing hour
#: (``met farm: complete hourly record 2016-01-01T00:00 to ...``): a note that nothing is
#: amiss, which the end of ``workbench run`` leaves out of its input notes
#: (:func:`workbench.cli_status.input_note_lines`).
COMPLETE_RECORD = "complete hourly record"


def describe_gaps(met) -> list[str]:
    """Text notes on missing hours per site between its first and last row."""
    notes = []
    present = met["row_present"].values
    times = met["time"].values
    for i, site in enumerate(met["site"].values):
        p = present[i]
        if not p.any():
            notes.append(f"met {site}: no rows")
            continue
        a, b = np.flatnonzero(p)[[0, -1]]
        inner = ~p[a:b + 1]
        n_miss = int(inner.sum())
        if n_miss == 0:
            notes.append(f"met {site}: {COMPLETE_RECORD} {str(times[a])[:16]} to {str(times[b])[:16]} UTC")
            continue
        edges = np.diff(np.concatenate([[0], inner.astype(int), [0]]))
        starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
        k = int(np.argmax(ends - starts))
        notes.append(f"met {site}: {n_miss} missing hour{'s' if n_miss != 1 else ''} in "
                     f"{len(starts)} gap{'s' if len(starts) != 1 else ''}; longest "
                     f"{int(ends[k] - starts[k])} h from {str(times[a + starts[k]])[:16]} UTC"
                     + clock_forward_hint(times[a + starts[(ends - starts) == 1]],
                                          (b - a + 1) / 8766.0))
    return notes


#: Months in which clocks go forward to summer time (March, April in the north;
#: September, October in the south; common practice).
CLOCK_FORWARD_MONTHS = (3, 4, 9, 10)
#: Window of the hour a clock skips, in UTC [h after Saturday 00:00 UTC]: clocks go
#: forward in the night of Saturday to Sunday at 01:00-03:00 local time (common
#: practice), which is Saturday 14:00 to Sunday 12:00 UTC for offsets of -9 to +12 h.
CLOCK_FORWARD_UTC_WINDOW = (14, 36)
#: Most one-hour gaps per year of a site's record for the hint [-]: a clock skips one
#: hour a year; a logger that drops single hours often drops one on a Sunday night by
#: chance (our choice, benchmarks/clock_forward_gaps.py).
CLOCK_FORWARD_MAX_PER_YEAR = 2.0


def clock_forward_hint(single, years: float = 1.0) -> str:
    """A hint when a gap of one hour sits where a clock going forward to summer time
    skips one: a night of Saturday to Sunday (:data:`CLOCK_FORWARD_UTC_WINDOW`) in a
    month of clocks going forward (:data:`CLOCK_FORWARD_MONTHS`), at a site with few
    one-hour gaps (:data:`CLOCK_FORWARD_MAX_PER_YEAR`); after it a naive label is an hour
    late (the twin of :func:`workbench.io.methours.clock_change_hint`); "" otherwise.

    Parameters
    ----------
    single : ndarray of datetime64
        The missing hour of each one-hour gap (UTC hour ends).
    years : float
        Length of the site's record [year].

    >>> clock_forward_hint(np.array(["2020-03-29T01:00"], "datetime64[ns]"))[:51]
    '; 1 h missing at 2020-03-29T01:00 UTC, in the night'
    >>> clock_forward_hint(np.array(["2020-07-05T01:00"], "datetime64[ns]"))
    ''
    >>> clock_forward_hint(np.array(["2020-03-25T01:00"], "datetime64[ns]"))   # a Wednesday
    ''
    """
    single = np.asarray(single, "datetime64[ns]")
    if len(single) > CLOCK_FORWARD_MAX_PER_YEAR * max(years, 1.0):
        return ""
    months = single.astype("datetime64[M]").astype(int) % 12 + 1
    # hours since the Saturday 00:00 UTC before: 1970-01-03 was a Saturday
    since = ((single - np.datetime64("1970-01-03", "ns")) // np.timedelta64(1, "h")) % 168
    lo, hi = CLOCK_FORWARD_UTC_WINDOW
    hit = single[np.isin(months, CLOCK_FORWARD_MONTHS) & (since >= lo) & (since <= hi)]
    if not len(hit):
        return ""
    more = f" (and {len(hit) - 1} more)" if len(hit) > 1 else ""
    return (f"; 1 h missing at {str(hit[0])[:16]} UTC{more}, in the night to a Sunday "
            "of a month of clock changes: the clock going forward to summer time? Then "
            "every later label is an hour late; write the times in the site's standard "
            "time (utc_offset_h) or with their offset, e.g. 01:00+01:00 then 03:00+02:00")
