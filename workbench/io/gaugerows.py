"""A gauge record put into the precipitation file as a sampler of its own.

A station with weekly chemistry and a daily gauge may append the gauge's days to the
sample file under another ``sampler_id`` (``RG1``): rows with a ``gauge_depth`` and no
chemistry.  They were read as collocated samples without chemistry, each excluded with
``no chemistry reported``, beside the real samples, and they changed the wet numbers
without a word (in the trial of tests/test_own_site.py the share of precipitation in
kept flagged samples fell from 7.8 % to 3.9 %, and the wet flux moved by 1.3 %).  The
gauge depth belongs on each chemistry sample's row, summed over the sample's period
(docs/data_formats.md, "Setting up your own site, step by step", step 4), so such a
sampler is refused, with that advice.

The rule: a sampler of a site with at least :data:`MIN_WET_ROWS` rows of a gauge depth
above 0, none of its rows with any chemistry (an ion, pH or conductivity) or any flag,
while another sampler of the same site has chemistry.  Samples collected and never
analysed carry a flag (``not_analysed``, ``sample_lost``...) and are not caught.
"""
from __future__ import annotations

import numpy as np
import pandas as pd


#: Fewest rows with a gauge depth above 0 that make a sampler without any chemistry a
#: gauge record (our choice: one or two could be samples left unanalysed by mistake).
MIN_WET_ROWS = 3


def check_gauge_sampler(tab, sites, samplers, gauge, has_chem, flags, rows=None):
    """Refuse a sampler that is a gauge record (module docstring).

    Parameters
    ----------
    tab : RawTable
        The precipitation file (for the location of the error).
    sites, samplers : array of str
        Site and sampler id of each data row.
    gauge : array of float
        Gauge depth of each row [mm] (NaN missing).
    has_chem : array of bool
        The row holds an ion, a pH or a conductivity value.
    flags : array of str
        The row's flag words ("" none).
    rows : array of bool, optional
        Rows taken into account (e.g. not dropped repeats); default all.

    Raises
    ------
    InputError
        At the sampler's first row with a gauge depth, column ``sampler_id``.
    """
    n = len(gauge)
    use = np.ones(n, bool) if rows is None else np.asarray(rows, bool)
    frame = pd.DataFrame({"site": np.asarray(sites, object).astype(str),
                          "sampler": np.asarray(samplers, object).astype(str),
                          "chem": np.asarray(has_chem, bool),
                          "flag": np.asarray(flags, object).astype(str) != "",
                          "wet": np.nan_to_num(np.asarray(gauge, float), nan=0.0) > 0,
                          "row": np.arange(n)})[use]
    if frame.empty:
        return
    per = frame.groupby(["site", "sampler"]).agg(chem=("chem", "any"), flag=("flag", "any"),
                                                 wet=("wet", "sum"), rows=("row", "size"))
    chem_sites = set(per.index.get_level_values("site")[per["chem"].to_numpy()])
    bad = per[~per["chem"] & ~per["flag"] & (per["wet"] >= MIN_WET_ROWS)]
    bad = bad[bad.index.get_level_values("site").isin(chem_sites)]
    if bad.empty:
        return
    site, sampler = bad.index[0]
    mine = frame[(frame["site"] == site) & (frame["sampler"] == sampler)]
    first = int(mine.loc[mine["wet"], "row"].iloc[0])
    others = sorted(set(per.loc[site][per.loc[site]["chem"]].index) - {sampler})
    raise tab.error(
        f"sampler {sampler!r} at site {site!r} has a gauge depth on "
        f"{int(bad['wet'].iloc[0])} of its {int(bad['rows'].iloc[0])} rows and no chemistry "
        f"nor flag on any, beside the chemistry of {', '.join(map(repr, others))}: a separate "
        "gauge record? (read as samples, it would change the wet shares)",
        row=first, column="sampler_id", value=sampler,
        expected="the gauge depth on each chemistry sample's row, the gauge summed over "
        "the sample's period (docs/data_formats.md, \"Setting up your own site, step by "
        "step\", step 4); samples collected but not analysed carry the flag 'not_analysed'")

