"""The stretches a sampler ran without a value of one species, per budget period: the
words a dry budget row adds after its weeks without a usable air sample (docs/budget.md,
"A species blank while its sampler ran").

The input notes name the sampler and the dates
(:func:`workbench.io.samplegaps.species_gap_notes`); the budget row of the species said
its weeks alone ("5 weeks without a usable air sample (air coverage 90.4 % of the
period)").  Here each period gets the sampler and the dates of the first such stretch
overlapping it.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

#: The words of a dry row on a stretch its sampler ran without the species' values.
SPECIES_GAP_WORDS = "{sp} blank in the samples of {sampler} from {a} to {b} UTC"


def _minute(t) -> np.ndarray:
    """Instants as ``YYYY-MM-DDTHH:MM`` [UTC] (text)."""
    return np.datetime_as_string(np.asarray(t, "datetime64[m]"), unit="m")


def period_species_gaps(runs, periods: pd.DataFrame, sites, species) -> np.ndarray:
    """The first stretch of each (site, period, species) in which a sampler of the site
    ran without the species' values, in words: ``NH3 blank in the samples of v01-F1 from
    2016-06-02T14:00 to 2016-07-07T14:00 UTC``, with ``(first of 2)`` where more than one
    such stretch overlaps the period.

    Parameters
    ----------
    runs : list
        (sampler, site, species, gaps) of :func:`workbench.io.samplegaps.species_gap_runs`,
        each gap (first instant, last instant) [UTC].
    periods : pandas.DataFrame
        Reporting periods (``start``, ``end``) [UTC].
    sites, species : sequence of str
        The axes of the result.

    Returns
    -------
    ndarray of str (site, period, species)
        '' where no such stretch overlaps the period.  The stretches (a few) x the
        periods, no loop over hours.

    >>> t = np.datetime64
    >>> runs = [("S1", "a", "NH3", [(t("2020-02-06T14:00"), t("2020-02-20T14:00"))])]
    >>> p = pd.DataFrame({"start": pd.to_datetime(["2020-01-01", "2020-02-01"]),
    ...                   "end": pd.to_datetime(["2020-02-01", "2020-03-01"])})
    >>> period_species_gaps(runs, p, ["a"], ["SO2", "NH3"])[0].tolist()
    [['', ''], ['', 'NH3 blank in the samples of S1 from 2020-02-06T14:00 to 2020-02-20T14:00 UTC']]
    """
    sites, species = [str(s) for s in sites], [str(s) for s in species]
    out = np.full((len(sites), len(periods), len(species)), "", dtype=object)
    rows = [(smp, sites.index(site), species.index(sp), g0, g1)
            for smp, site, sp, gaps in (runs or ()) if site in sites and sp in species
            for g0, g1 in gaps]
    if not rows or not len(periods):
        return out
    smp, si, ki, g0, g1 = (np.asarray(c) for c in zip(*rows))
    g0, g1 = g0.astype("datetime64[ns]"), g1.astype("datetime64[ns]")
    p0 = periods["start"].to_numpy("datetime64[ns]")
    p1 = periods["end"].to_numpy("datetime64[ns]")
    hit = (g0[:, None] < p1[None, :]) & (g1[:, None] > p0[None, :])    # stretch x period
    r, p = np.nonzero(hit)
    f = pd.DataFrame({"site": si[r], "period": p, "species": ki[r], "start": g0[r],
                      "text": [SPECIES_GAP_WORDS.format(sp=species[k], sampler=s, a=a, b=b)
                               for k, s, a, b in zip(ki[r], smp[r], _minute(g0[r]),
                                                     _minute(g1[r]))]})
    key = ["site", "period", "species"]
    n = f.groupby(key)["text"].transform("size").to_numpy()
    f["text"] = np.where(n > 1, f["text"] + " (first of " + n.astype(str) + ")", f["text"])
    f = f.sort_values("start", kind="stable").drop_duplicates(key)
    out[f["site"].to_numpy(), f["period"].to_numpy(), f["species"].to_numpy()] = \
        f["text"].to_numpy()
    return out


def share_pair_gaps(notes: np.ndarray, split: dict, species) -> np.ndarray:
    """`notes` (site, period, species) of :func:`period_species_gaps` with the stretches
    of both members of each pair that ``pair_split`` moves into one species on both
    members' rows: the species moved into holds both members (its air coverage the
    weaker member's), so a blank stretch of either drives its number, and the member
    set to 0 is 0 because of the same split.  Before, each row named its own species'
    stretch only: the NH3 row of ``all_gas`` read "5.9 weeks without a usable air
    sample" with no sampler nor dates where pNH4 was the blank one.

    Parameters
    ----------
    split : dict
        pair -> (into, other, how): ``dry_rows(...)["split"]``
        (:func:`workbench.drypairs.split_pairs`).
    species : sequence of str
        The species axis of `notes`.

    >>> n = np.array([[["", "NH3 blank in the samples of F1 from a to b UTC"]]], object)
    >>> share_pair_gaps(n, {"ammonium": ("pNH4", "NH3", "all_particle")},
    ...                 ["pNH4", "NH3"])[0, 0].tolist()
    ['NH3 blank in the samples of F1 from a to b UTC', 'NH3 blank in the samples of F1 from a to b UTC']
    """
    from .budgetstatus_notes import join_notes
    out = np.array(notes, dtype=object)
    species = [str(s) for s in species]
    for into, other, _ in (split or {}).values():
        if into not in species or other not in species:
            continue
        a, b = out[..., species.index(into)], out[..., species.index(other)]
        both = join_notes(a, np.where(b == a, "", b))      # each stretch once
        out[..., species.index(into)] = both
        out[..., species.index(other)] = both
    return out
