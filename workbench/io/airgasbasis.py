"""A hint of a gas written on the element basis under the species' header (SO2 as
ug S/m3 under ``SO2 [ug/m3]``), seen against the other sites of the file.

A constant factor on all of one sampler's values is invisible within its own record:
the range checks of :mod:`workbench.io.plausible` pass it (a factor 2 to 4.5), the
step checks (:mod:`workbench.io.airstep`, :mod:`workbench.io.airownstep`) need a
change within the record, and the two-sampler note (:func:`workbench.io.airslip.
gas_pair_notes`) a second sampler of the gas at the site.  What is left is the ratio of
the gas to the particle of the same element on the same rows of the sampler (a filter
pack measures both): SO2 to pSO4, HNO3 to pNO3, NH3 to pNH4, in mol/mol.  The ratio
varies from site to site (nearness of sources, climate) and from week to week, but over
a year a sampler's median within a regional network lies among the other sites'.

:func:`gas_basis_notes` takes each sampler's median ratio over its rows with both
values measured (:data:`MIN_ROWS` or more) and compares it with the medians of the
samplers at the file's other sites (:data:`MIN_OTHER_SITES` sites or more).  Under a
species-basis header (``SO2 [ug/m3]``) a slip to the element basis reads every amount
``f`` times too low (``f`` = M(gas) / M(element): SO2 2.0, HNO3 4.5, NH3 1.22); under an
element-basis header (``SO2_as_S``) holding the species' mass, ``f`` times too high.
One note per sampler and gas when its median lies beyond the other sites' span by more
than :data:`GAP` in the slip's direction and reading the column on the other basis
puts it within :data:`GAP` of that span.  A gas whose factor is :data:`GAP` or less
(NH3, 1.22) is not judged: its slip lies inside the sites' spread.

The values are never changed and the rows are not flagged: a site far from sources or
near an unusual one can lie beyond its network by such a factor (the note says so).
The numbers alone cannot tell these apart; the laboratory's report can.  With fewer
than :data:`MIN_OTHER_SITES` other sites (a study of one or two sites) there is nothing
to compare with and no note (docs/data_formats.md section 3, "A gas on the element
basis").
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .. import species as _species
from ..units import concentration_kind

#: Gas and the particle of the same element measured beside it on a filter pack.
PAIRS = (("SO2", "pSO4"), ("HNO3", "pNO3"), ("NH3", "pNH4"))
#: Fewest rows of a sampler with the gas and the particle both measured above detection
#: for its median [-] (eight, as :data:`workbench.io.airslip.MIN_SAMPLES`: two months of
#: weekly samples; our choice).
MIN_ROWS = 8
#: Fewest other sites of the file with a median of the pair for a comparison [-] (two:
#: one other site is no span; our choice).
MIN_OTHER_SITES = 2
#: Factor beyond the other sites' span of median ratios that a sampler's median must
#: lie for a note, and within which the other basis must bring it back [-] (1.75, our
#: choice between the false alarms and the detection measured on the invented demo with
#: noise, `benchmarks/gas_basis_alarms.py`, docs/performance.md "A gas on the element
#: basis": at a site-to-site spread of the ratio of sd 0.3 in log beyond the demo's own,
#: 2 % of site-and-gas records noted as written (1.5: 3 %, 2.0: 0-0.3 %), HNO3 as N found
#: in 90-97 %, SO2 as S in 28 % (2.0: none, its factor being 2)).
GAP = 1.75


def _basis_factor(gas: str) -> float:
    """M(gas) / (atoms x M(element)) [-]: the amount of a mass read on the species basis
    divided by the amount on the element basis is its inverse."""
    s = _species.get(gas)
    return s.molar_mass / (_species.element_molar_mass(s.element) * s.atoms)


def _medians(ds: xr.Dataset, gas: str, particle: str) -> pd.DataFrame:
    """Median molar ratio gas / particle of each sampler (site, sampler_id) over its rows
    with both above detection, with its row count and first and last line."""
    g = np.asarray(ds[gas].values, float)
    p = np.asarray(ds[particle].values, float)
    ok = np.isfinite(g) & np.isfinite(p) & (g > 0) & (p > 0)
    for sp in (gas, particle):
        if f"{sp}_censored" in ds:
            ok &= ~np.asarray(ds[f"{sp}_censored"].values, bool)
    frame = pd.DataFrame({"site": ds["site"].values.astype(str)[ok],
                          "sampler": ds["sampler_id"].values.astype(str)[ok],
                          "line": np.asarray(ds["line"].values)[ok],
                          "log_ratio": np.log(g[ok] / p[ok])})
    out = frame.groupby(["site", "sampler"], sort=True).agg(
        median=("log_ratio", "median"), rows=("log_ratio", "size"),
        first=("line", "min"), last=("line", "max")).reset_index()
    return out[out["rows"] >= MIN_ROWS].reset_index(drop=True)


def gas_basis_notes(ds: xr.Dataset, units: dict, file_name: str) -> list[str]:
    """Notes naming a gas column that looks written on the other basis at one sampler.

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read (:func:`workbench.io.samples.read_air`): species as
        mixing ratios [mol mol-1] or amount densities [mol m-3], the same kind for the
        gas and its particle, with ``site``, ``sampler_id``, ``line`` and
        ``<sp>_censored``.
    units : dict
        Species -> (header as typed, unit as typed, element basis or None).
    file_name : str
        Named in the notes.

    Returns
    -------
    list of str
        One note per sampler and gas, e.g. ``"air.csv: SO2 at mere (sampler MER-F1,
        lines 5-1760): its median molar ratio to pSO4 on the same rows is 0.33, 2.4 x
        below the other sites' 0.79 to 1.87 (farm, fell, ridge); ..."``.
    """
    notes = []
    log_gap = np.log(GAP)
    for gas, particle in PAIRS:
        if gas not in units or particle not in units or gas not in ds or particle not in ds:
            continue
        header, unit, basis = units[gas]
        try:
            mass = concentration_kind(unit) == "mass_density"
        except ValueError:
            mass = False
        f = _basis_factor(gas)
        if not mass or f <= GAP:        # ppb: the same number on either basis
            continue
        if str(ds[gas].attrs.get("quantity", "")) != str(ds[particle].attrs.get("quantity", "")):
            continue
        med = _medians(ds, gas, particle)
        if med.empty:
            continue
        # the span of the other sites' medians, for each sampler (vectorized over samplers)
        site = med["site"].to_numpy()
        v = med["median"].to_numpy()
        other = site[:, None] != site[None, :]
        n_sites = np.array([len(set(site[o])) for o in other])
        lo = np.where(other, v[None, :], np.inf).min(axis=1)
        hi = np.where(other, v[None, :], -np.inf).max(axis=1)
        shift = np.log(f) if basis is None else -np.log(f)    # the other basis' reading
        read = v + shift
        beyond = (lo - v > log_gap) if basis is None else (v - hi > log_gap)
        back = (read >= lo - log_gap) & (read <= hi + log_gap)
        hit = (n_sites >= MIN_OTHER_SITES) & beyond & back
        el = _species.get(gas).element
        for i in np.flatnonzero(hit):
            others = sorted(set(site[other[i]]))
            side = "below" if basis is None else "above"
            by = np.exp(lo[i] - v[i]) if basis is None else np.exp(v[i] - hi[i])
            if basis is None:
                slip = (f"ug {el}/m3 written under {header!r}? Written as "
                        f"'{gas}_as_{el} [{unit}]' (read as {el}) each amount would be "
                        f"{f:.3g} x the one read")
            else:
                slip = (f"ug/m3 of {_species.get(gas).formula} written under {header!r}? "
                        f"Written as '{gas} [{unit}]' each amount would be 1/{f:.3g} of "
                        f"the one read")
            notes.append(
                f"{file_name}: {gas} at {site[i]} (sampler {med['sampler'].iat[i]}, rows on "
                f"lines {med['first'].iat[i]} to {med['last'].iat[i]}): its median molar "
                f"ratio to {particle} on the same rows ({med['rows'].iat[i]}) is "
                f"{np.exp(v[i]):.2g}, {by:.2g} x {side} the other sites' {np.exp(lo[i]):.2g} "
                f"to {np.exp(hi[i]):.2g} ({', '.join(others)}); {slip}, and the ratio "
                f"{np.exp(read[i]):.2g}, among them. A site far from or near a source can "
                f"lie so far from its network too, and the numbers alone cannot tell: check "
                f"which the laboratory reports (values used as read)")
    return notes
