"""The non-sea-salt pSO4 of the air for the dry components, and the notes naming its
samples (:mod:`workbench.drycomponents`).

:func:`_nss_particles` replaces pSO4 by its non-sea-salt part where pNa is measured
(Keene et al. 1986), marking the rows whose total pSO4 stands for it, whose pNa was
below detection or whose pSO4 was below detection beside a pNa;
:func:`total_used_notes`, :func:`censored_na_notes` and :func:`censored_nss_notes`
write the words per (site, reporting period) that name those samples.
Units: concentrations [mol m-3] or [mol mol-1], as read.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .budgetstatus import NO_PNA_AT_SITE
from .wet.seasalt import total_in_place


#: Words for the substitute of a value below detection (``[budget] air_censored``).
CENSORED_WORDS = {"half": "half the detection limit", "limit": "the detection limit",
                  "zero": "0"}


def _nss_particles(air: xr.Dataset, basis: str, censored: str = "half") -> xr.Dataset:
    """Replace pSO4 by its non-sea-salt part where pNa is measured (Keene et al. 1986).

    A pSO4 row without a pNa value (the sodium sampler missing that week, or no pNa at
    all) keeps its total pSO4, sea salt included, and is marked in
    ``pSO4_total_used`` (bool per row), which the budget names in the period's note
    (docs/budget.md, "Components and units").  A pNa below detection counts as a
    value and enters with the substitute of every air value below detection
    (`censored`, ``[budget] air_censored``: half the limit by default; 0 where no limit
    is known, as :func:`workbench.dryflux._censored_values`); such rows are marked in
    ``pSO4_na_censored`` (its ``substitute`` attribute names the rule) for the note.
    Before, a pNa below detection entered as 0 (total pSO4), without a word.

    A pSO4 below its detection limit L beside a pNa (measured, or below detection and
    substituted as above) is the one place where the sea salt comes off a censored
    value: the total lies between the sea-salt sulfate S = 0.0605 pNa (Keene et al.
    1986, :func:`workbench.wet.seasalt.seawater_ratio`) and L, so the non-sea-salt
    part lies between 0 and max(0, L - S), the detection limit of the non-sea-salt
    part, which replaces L in ``pSO4_detection_limit``.  The row stays censored and
    takes the `censored` substitute of that limit (half of it by default: (L - S) / 2;
    the limit; 0), 0 where the sea salt reaches L; the rows are marked in
    ``pSO4_nss_censored`` for the note.  Before, such a row entered with the
    substitute of L itself, sea salt included (the censored total for its non-sea-salt
    part).
    """
    if basis != "nss" or "pSO4" not in air:
        return air
    from .dryflux import _censored_values
    from .wet.seasalt import non_seasalt
    air = air.copy()
    so4 = air["pSO4"].values
    has_so4 = np.isfinite(so4) | (air["pSO4_censored"].values.astype(bool)
                                  if "pSO4_censored" in air else False)
    if "pNa" not in air:
        air["pSO4_total_used"] = (air["pSO4"].dims, has_so4)
        return air
    na = air["pNa"].values
    na_cens = (air["pNa_censored"].values.astype(bool) if "pNa_censored" in air
               else np.zeros(na.shape, bool))
    na_used, _ = _censored_values(air, "pNa", censored)
    na_zero = np.where(np.isfinite(na_used), na_used, 0.0)
    nss = non_seasalt(so4, na_zero, "SO4", "Na")
    air["pSO4"] = air["pSO4"].copy(data=np.where(np.isfinite(so4), nss, np.nan))
    air["pSO4"].attrs["long_name"] = "particulate non-sea-salt sulfate (Keene et al. 1986)"
    air["pSO4_total_used"] = (air["pSO4"].dims, has_so4 & ~np.isfinite(na) & ~na_cens)
    air["pSO4_na_censored"] = (air["pSO4"].dims, has_so4 & na_cens,
                               {"substitute": CENSORED_WORDS.get(censored, str(censored))})
    # a pSO4 below detection beside a pNa: the non-sea-salt part's own limit
    so4_cens = (air["pSO4_censored"].values.astype(bool) if "pSO4_censored" in air
                else np.zeros(so4.shape, bool))
    nss_cens = so4_cens & ~np.isfinite(so4) & (np.isfinite(na) | na_cens)
    if "pSO4_detection_limit" in air:
        dl = air["pSO4_detection_limit"].values.astype(float)
        nss_dl = np.maximum(non_seasalt(dl, na_zero, "SO4", "Na"), 0.0)
        air["pSO4_detection_limit"] = air["pSO4_detection_limit"].copy(
            data=np.where(nss_cens & np.isfinite(dl), nss_dl, dl))
    air["pSO4_nss_censored"] = (air["pSO4"].dims, nss_cens,
                                {"substitute": CENSORED_WORDS.get(censored, str(censored))})
    return air


def _rows_by_cell(flag, r, periods, n_p):
    """The pSO4 rows marked in `flag` (bool per row) by (site, period) cell: a Series
    cell (site index x P + period) -> the rows' start dates, and (rows, P) whether each
    row overlaps each period."""
    t0 = np.asarray(r["start"], "datetime64[ns]")
    t1 = np.asarray(r["end"], "datetime64[ns]")
    p0 = periods["start"].values.astype("datetime64[ns]")
    p1 = periods["end"].values.astype("datetime64[ns]")
    si = np.asarray(r["site_index"])
    k = np.flatnonzero(flag)
    over = (t0[k, None] < p1[None, :]) & (t1[k, None] > p0[None, :])     # (flagged, P)
    each = (t0[:, None] < p1[None, :]) & (t1[:, None] > p0[None, :])    # (rows, P)
    kk, pp = np.nonzero(over)
    g = pd.DataFrame({"cell": si[k[kk]] * n_p + pp,
                      "name": pd.DatetimeIndex(t0[k[kk]]).strftime("%Y-%m-%d")})
    return g.groupby("cell")["name"].agg(list), each


def _pso4_cell_notes(rows: dict, periods, sites, key: str, words) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples flagged by ``rows[key]`` (bool
    per pSO4 row); "" elsewhere. ``words(n, n_all, names, sub, whole)`` writes a cell's
    sentence from the number flagged, the number of pSO4 samples of the cell, their
    start dates, the words of the censored substitute and whether every pSO4 sample of
    the site is flagged."""
    n_s, n_p = len(sites), len(periods)
    out = np.full((n_s, n_p), "", dtype=object)
    flag = rows.get(key)
    r = rows["species"].get("pSO4")
    if flag is None or r is None or not np.any(flag):
        return out
    fl = np.asarray(flag, bool)
    agg, each = _rows_by_cell(fl, r, periods, n_p)
    si = np.asarray(r["site_index"])
    sub = rows.get("pSO4_na_substitute") or CENSORED_WORDS["half"]
    whole = {s_: bool(fl[si == s_].all()) for s_ in np.unique(si)}
    for cell, names in agg.items():          # one entry per (site, period) cell named
        s_, p_ = divmod(int(cell), n_p)
        n_all = int((each[:, p_] & (si == s_)).sum())
        out[s_, p_] = words(len(names), n_all, ", ".join(names), sub, whole.get(s_, False))
    return out


def censored_na_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples whose sea-salt sulfate stands on
    a pNa below detection (``pSO4_na_censored`` of :func:`_nss_particles`); "" elsewhere.

    Parameters
    ----------
    rows : dict
        Output of :func:`.dryrows.dry_rows` (``rows["pSO4_na_censored"]``: bool per pSO4 row;
        ``rows["pSO4_na_substitute"]``: the words of the substitute).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    return _pso4_cell_notes(rows, periods, sites, "pSO4_na_censored",
                            lambda n, n_all, names, sub, whole: (
        f"pNa below detection in {n} of {n_all} pSO4 samples (from {names}): their "
        f"sea-salt sulfate from {sub} (air_censored), drawn with the spread of a value "
        "between 0 and the limit in the Monte Carlo"))


def censored_nss_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples below detection whose
    non-sea-salt part was formed from the limit less their sea-salt sulfate
    (``pSO4_nss_censored`` of :func:`_nss_particles`); "" elsewhere.

    Parameters
    ----------
    rows : dict
        Output of :func:`.dryrows.dry_rows` (``rows["pSO4_nss_censored"]``: bool per pSO4 row;
        ``rows["pSO4_na_substitute"]``: the words of the substitute).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    return _pso4_cell_notes(rows, periods, sites, "pSO4_nss_censored",
                            lambda n, n_all, names, sub, whole: (
        f"pSO4 below detection in {n} of {n_all} pSO4 samples (from {names}): their "
        f"non-sea-salt pSO4 from {sub} (air_censored) of the limit less the sea-salt "
        "sulfate of their pNa (0 where the sea salt reaches the limit)"))


def total_used_notes(rows: dict, periods, sites) -> np.ndarray:
    """Words per (site, period) naming the pSO4 samples whose total pSO4 stands for its
    non-sea-salt part (no pNa that week: ``pSO4_total_used`` of :func:`_nss_particles`);
    "" elsewhere. A site none of whose pSO4 samples has a pNa gets one sentence
    starting with :data:`workbench.budgetstatus.NO_PNA_AT_SITE` instead of the list of its samples.

    Parameters
    ----------
    rows : dict
        Output of :func:`.dryrows.dry_rows` (``rows["pSO4_total_used"]``: bool per pSO4 row).
    periods : pandas.DataFrame
    sites : sequence of str
    """
    def words(n, n_all, names, sub, whole):
        if whole:
            return (f"{NO_PNA_AT_SITE}: {total_in_place('pSO4')} (sea salt included, an "
                    "upper bound; small inland)")
        return (f"pNa missing in {n} of {n_all} pSO4 samples (from {names}): total pSO4 "
                "used for them (sea salt included)")
    return _pso4_cell_notes(rows, periods, sites, "pSO4_total_used", words)
