"""A gauge depth written as the gauge's running total (a bucket or counter read and not
emptied between samples) instead of each sample's own depth.

Before, such a column was read as each sample's depth: a year of weekly samples summed
to the total of every week before it, and the wet deposition of the site-year came out
many times too high without a word (the only sign a capture-ratio note on a few samples
naming tenths of mm, a wrong cause).

The rule, per site and sampler, over the samples in time order with a gauge depth: a
running total rises from one sample to the next whenever it rained and falls only
where the gauge was emptied or its counter reset, where the depths of separate samples
rise as often as they fall (for depths drawn alike, a rise and a fall are equally
likely).  So a sampler whose depth rises at least :data:`MIN_RISES` times and at least
:data:`RISES_PER_FALL` times as often as it falls is judged a running total, its depths
masked with their reason and one ledger note per site and sampler.  The values are
excluded, never differenced back on a guess: a reset between two samples, or a sample
missing, would make a wrong depth without a trace (the met reader's rule for a daily
counter, :mod:`workbench.io.metcounter`).

Measured on invented records (weekly depths of a gamma distribution, shape 0.8, mean
15 mm with a seasonal cycle of 0, 50 or 90 %, 0-85 % dry weeks; 10,800 records of
12-416 samples): no false alarm.  A running total rises in wet weeks only, so it is
found once it has enough of them: emptied at 200 mm (or never, or each quarter), all
found from 26 samples with 30 % dry weeks, from 52 with 60 %, from 156 with 85 %; 12
samples with 30 % dry weeks: 4 %; emptied every 4th sample: 5-37 % (left: its falls
are a quarter of its steps).  Our choice of thresholds, from that measurement
(tests/io/test_gauge_running_total.py repeats it on fewer records).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from .ledger import compact_lines

#: Fewest rises from one sample to the next that judge a running total (our choice).
MIN_RISES = 10
#: Rises at least this many times the falls judge a running total (our choice; depths of
#: separate samples rise about as often as they fall).
RISES_PER_FALL = 3


def running_totals(file_name, sites, samplers, start, gauge, lines, rows=None):
    """The samplers whose gauge depth is a running total (module docstring).

    Parameters
    ----------
    file_name : str
    sites, samplers : array of str
        Site and sampler id of each row.
    start : array of datetime64
        Start of each sample (the order in time).
    gauge : array of float
        Gauge depth of each row [mm] (NaN missing).
    lines : array of int
        The file line of each row.
    rows : array of bool, optional
        Rows taken into account (e.g. not dropped repeats); default all.

    Returns
    -------
    (mask, reasons, notes)
        `mask` [bool] the rows to mask, `reasons` one text per row ("" elsewhere),
        `notes` one ledger note per site and sampler judged.

    >>> g = np.cumsum([5.0, 0, 3, 12, 7, 0, 1, 4, 9, 2, 6, 8, 3])
    >>> m, why, notes = running_totals("p.csv", np.array(["a"] * 13), np.array(["w1"] * 13),
    ...     np.arange(13).astype("datetime64[W]"), g, np.arange(2, 15))
    >>> int(m.sum()), notes[0][:81]
    (13, "p.csv: gauge_depth at site 'a', sampler 'w1' looks like the gauge's running total")
    >>> running_totals("p.csv", np.array(["a"] * 13), np.array(["w1"] * 13),
    ...     np.arange(13).astype("datetime64[W]"), np.diff(g, prepend=0), np.arange(2, 15))[2]
    []
    """
    n = len(gauge)
    use = np.ones(n, bool) if rows is None else np.asarray(rows, bool)
    use = use & ~np.isnan(np.asarray(gauge, float))
    mask, why = np.zeros(n, bool), np.full(n, "", dtype=object)
    if use.sum() <= MIN_RISES:
        return mask, why, []
    f = pd.DataFrame({"site": np.asarray(sites, object).astype(str),
                      "sampler": np.asarray(samplers, object).astype(str),
                      "start": np.asarray(start), "g": np.asarray(gauge, float),
                      "row": np.arange(n)})[use]
    f = f.sort_values(["site", "sampler", "start"], kind="stable")
    step = f.groupby(["site", "sampler"], sort=False)["g"].diff()
    f["up"], f["down"] = step > 0, step < 0
    per = f.groupby(["site", "sampler"], sort=False).agg(
        up=("up", "sum"), down=("down", "sum"), size=("g", "size"),
        top=("g", "max"))
    hit = per[(per["up"] >= MIN_RISES) & (per["up"] >= RISES_PER_FALL * per["down"])]
    notes = []
    for (site, sampler), p in hit.iterrows():          # the few samplers judged
        r = f.loc[(f["site"] == site) & (f["sampler"] == sampler), "row"].to_numpy()
        text = (f"gauge_depth looks like the gauge's running total, not each sample's own "
                f"depth: it rises from one sample to the next {int(p['up'])} times and "
                f"falls {int(p['down'])} times in {int(p['size'])} samples (depths of "
                "separate samples rise about as often as they fall), up to "
                f"{p['top']:g} mm, expected each sample's depth, the difference from the "
                "reading before where the gauge is not emptied (masked)")
        mask[r] = True
        why[r] = text
        notes.append(f"{file_name}: gauge_depth at site {site!r}, sampler {sampler!r} "
                     f"{text[len('gauge_depth '):-len(' (masked)')]}: "
                     f"{len(r)} samples masked ({compact_lines(np.sort(np.asarray(lines)[r]))})")
    return mask, why, notes
