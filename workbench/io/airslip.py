"""Hints of unit slips in an air-concentration file that stay plausible value by value.

Two slips pass the range checks of :mod:`workbench.io.plausible` because they change a
value by a factor of 1.2 to 4.5 only:

* **element basis vs species basis** of a particle column: pSO4 written as ug S/m3
  under ``pSO4 [ug/m3]`` (the amount read is 96.06/32.06 = 3.0 x too low), pNO3 or
  pNH4 as ug N (4.43 x, 1.29 x), or the reverse (an ``_as_S`` / ``_as_N`` header
  holding the species mass).  :func:`particle_balance_notes` looks at the particle
  ion balance of the samples that carry pSO4, pNO3 and pNH4 together: the
  ammonium-to-anion equivalent ratio NH4+ / (2 SO4(2-) + NO3-) lies in
  :data:`BALANCE_BAND` in ambient aerosol.  When more than :data:`SHARE` of one
  sampler's evaluable samples (same site and ``sampler_id``) fall outside the band in
  one direction and reading one of the three columns in its other basis brings more
  than :data:`SHARE` of them back, one note per sampler names the column, the likely
  slip and the factor.
* **ppb vs ug/m3** (or species vs element basis) of a gas measured by two samplers at
  one site (a passive sampler beside a filter pack): :func:`gas_pair_notes` takes
  the time-weighted mean of the shorter sampler over each period of the longer one
  and, when the median ratio of the two matches the ppb <-> ug/m3 factor of the gas
  at 20 degC, 1013.25 hPa (computed from R T / p and the molar mass) or an element
  basis factor within :data:`MATCH_TOL`, and the ratio is steady (more than
  :data:`SHARE` of the periods within :data:`STEADY_TOL` of it), one note names the
  site, both samplers, the median ratio and the slip.  A steady ratio that matches no
  unit factor is a difference of methods (a passive sampler's uptake rate, a
  denuder's efficiency), not a slip of the file: no note.

The values are never changed: the notes are hints for the analyst, in the ledger
notes beside the wet side's (:mod:`workbench.wet.unitslip`).  See
docs/data_formats.md section 3, "Plausibility of air concentrations".
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from .. import species as _species
from ..constants import GAS_CONSTANT
from ..units import concentration_kind, to_amount
from .plausible import check_density

#: Share of a sampler's evaluable samples that must fail in one direction, and share
#: of those the other basis must bring back (more than half: common practice for
#: "most samples", as :data:`workbench.wet.unitslip.SHARE`).
SHARE = 0.5
#: Band of the ammonium-to-anion equivalent ratio NH4 / (2 SO4 + NO3) of a sample
#: [-]: (low, high, source).
BALANCE_BAND = (0.5, 1.25, (
    "common practice: ammonium cannot much exceed the strong-acid anions it "
    "neutralises (ratio 1 for ammonium sulfate and nitrate); the upper 1.25 leaves 25 % "
    "for the combined analytical uncertainty of three ions (about 10 % each) and "
    "unmeasured anions (chloride, organic acids); below the lower 0.5 more than half "
    "of the anion equivalents would be unneutralised acid (ammonium bisulfate or more "
    "acidic), seen in single samples in SO2-rich summers but not in most weekly "
    "samples of a sampler (from memory)"))
#: Smallest anion sum 2 SO4 + NO3 (+ Cl) of an evaluable sample [eq m-3]
#: (5 neq/m3, about 0.25 ug/m3 of sulfate; our choice): below it blanks dominate the
#: ratio.
MIN_ANIONS = 5e-9
#: Fewest evaluable samples of a sampler for a note [-]: with fewer, "more than half"
#: is three or four samples, which a few unusual weeks give (our choice).
MIN_SAMPLES = 8
#: Columns of the particle balance that have an element basis (species, side).
BALANCE_COLUMNS = (("pSO4", "anion"), ("pNO3", "anion"), ("pNH4", "cation"))
#: Largest relative distance of the median ratio of two samplers from a unit factor
#: for a match [-] (6 %: the ppb factor at 20 degC differs from that of ambient
#: temperatures by a few %; NH3's element factor 1.216 and ppb factor 1.412 stay apart;
#: our choice).
MATCH_TOL = 0.06
#: Relative distance from the matched factor within which a period counts as steady [-]
#: (20 %: two samplers of one gas by different methods differ by 10-20 % from period to
#: period, from memory; our choice).
STEADY_TOL = 0.20
#: Shortest coverage of a longer sampler's period by the shorter sampler's valid
#: periods for the comparison [-] (three quarters: common practice for a mean).
MIN_COVERAGE = 0.75
#: Fewest compared periods of two samplers for a note [-] (six: half a year of monthly
#: samplers, enough for a median; our choice).
MIN_PERIODS = 6
#: Mixing-ratio unit of the same scale as a mass unit [ug m-3 per unit] -> name.
_MIXING_OF_SCALE = {1e3: "ppm", 1.0: "ppb", 1e-3: "ppt"}


def amount_per_number(unit: str, species: str, basis: str | None = None) -> float:
    """The amount density that one number written in `unit` stands for [mol m-3].

    Parameters
    ----------
    unit : str
        A concentration unit (``"ug/m3"``, ``"ppb"``...).
    species : str
    basis : {None, "S", "N"}
        Element basis (``_as_S`` / ``_as_N`` headers).

    Returns
    -------
    float
        [mol m-3]; a mixing ratio taken at 20 degC and 1013.25 hPa
        (:data:`workbench.io.plausible.CHECK_TEMPERATURE`, ``CHECK_PRESSURE``).

    >>> round(amount_per_number("ppb", "NH3") / amount_per_number("ug/m3", "NH3"), 4)
    0.708
    """
    a, kind = to_amount(np.array([1.0]), unit, species, basis)
    return float(check_density(a, kind)[0])


def _density(ds: xr.Dataset, sp: str) -> np.ndarray:
    """A species of the dataset as amount density [mol m-3] (mixing ratios at 20 degC,
    1013.25 hPa); NaN where missing or censored."""
    return check_density(ds[sp].values, str(ds[sp].attrs.get("quantity", "")))


def _basis_text(unit: str, species: str, basis: str | None) -> str:
    return f"{unit} as {basis}" if basis else f"{unit} of {_species.get(species).formula}"


def _other_basis(species: str, unit: str, basis: str | None):
    """``(other basis,)`` of a mass column (the element for a species-basis header,
    None for an element-basis one), or None when there is none: an amount or a mixing
    ratio is the same number in either basis (1 mol NO3 = 1 mol N)."""
    el = _species.get(species).element
    if el is None or concentration_kind(unit) != "mass_density":
        return None
    return (None if basis else el,)


def _groups(ds: xr.Dataset) -> np.ndarray:
    return np.char.add(np.char.add(ds["site"].values.astype(str), "\x1f"),
                       ds["sampler_id"].values.astype(str))


def particle_balance(ds: xr.Dataset):
    """Per-sample ion sums of the particle balance.

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read (:func:`workbench.io.samples.read_air`) with pSO4,
        pNO3 and pNH4.

    Returns
    -------
    eqs : dict
        Species -> equivalents [eq m-3] (NaN where missing or censored).
    cations, anions : ndarray
        NH4 (+ Na) and 2 SO4 + NO3 (+ Cl) [eq m-3]; Na and Cl count only where both
        are measured in the sample (sea salt, its chloride partly replaced by nitrate).
        Ca is left out: its counter-ion (carbonate) is not measured on a filter.
    evaluable : ndarray of bool
        pSO4, pNO3 and pNH4 measured above detection and anions >= :data:`MIN_ANIONS`.
    """
    eqs = {sp: _density(ds, sp) * _species.get(sp).eq_per_mol
           for sp in ("pSO4", "pNO3", "pNH4", "pNa", "pCl") if sp in ds}
    n = ds.sizes["period"]
    salt = np.zeros(n, bool)
    if "pNa" in eqs and "pCl" in eqs:
        salt = np.isfinite(eqs["pNa"]) & np.isfinite(eqs["pCl"])
    cations = eqs["pNH4"] + np.where(salt, eqs.get("pNa", 0.0), 0.0)
    anions = eqs["pSO4"] + eqs["pNO3"] + np.where(salt, eqs.get("pCl", 0.0), 0.0)
    with np.errstate(invalid="ignore"):
        evaluable = np.isfinite(cations) & np.isfinite(anions) & (anions >= MIN_ANIONS)
    return eqs, cations, anions, evaluable


def _ratio(cations, anions):
    with np.errstate(divide="ignore", invalid="ignore"):
        return cations / anions


def particle_balance_notes(ds: xr.Dataset, units: dict, file_name: str) -> list[str]:
    """Notes naming a likely element/species basis slip of a particle column, one per
    sampler.

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read (:func:`workbench.io.samples.read_air`): dim
        ``period``; ``site``, ``sampler_id``; species [mol m-3] or [mol mol-1].
    units : dict
        Species -> (header as typed, unit as typed, element basis or None).
    file_name : str
        Named in the notes.

    Returns
    -------
    list of str
        E.g. ``"a.csv: pNO3 at ridge, sampler RDG-F1: 256 of 416 samples have the
        ammonium-to-anion equivalent ratio NH4/(2 SO4 + NO3) above 1.25 (median
        1.37); the values look like ug/m3 as N under the species-basis header
        'pNO3 [ug/m3]': read so, each amount is 4.427 x the one read (molar masses
        of NO3 and N), and 220 of the 256 come back into 0.5-1.25; reading pSO4 as
        ug/m3 as S would bring back ... (values not changed)"``.
    """
    if ds.sizes.get("period", 0) == 0 or not all(sp in ds for sp, _ in BALANCE_COLUMNS):
        return []
    lo, hi, _ = BALANCE_BAND
    eqs, cations, anions, evaluable = particle_balance(ds)
    ratio = _ratio(cations, anions)
    low, high = evaluable & (ratio < lo), evaluable & (ratio > hi)
    groups = _groups(ds)
    counts = pd.DataFrame({"g": groups, "n": evaluable, "low": low, "high": high}).groupby(
        "g", sort=True).sum()
    enough = counts["n"] >= MIN_SAMPLES
    suspect = counts[enough & ((counts["low"] > SHARE * counts["n"])
                               | (counts["high"] > SHARE * counts["n"]))]
    sides = " + ".join(["2 SO4 + NO3"] + (["Cl"] if "pCl" in eqs and "pNa" in eqs else []))
    top = "NH4" + (" (+ Na)" if "pCl" in eqs and "pNa" in eqs else "")
    notes = []
    readings = []          # (column, side, header, unit, basis, other basis, factor)
    for sp, part in BALANCE_COLUMNS:
        header, unit, basis = units[sp]
        other = _other_basis(sp, unit, basis)
        if other is not None:
            f = amount_per_number(unit, sp, other[0]) / amount_per_number(unit, sp, basis)
            readings.append((sp, part, header, unit, basis, other, f))
    ev_rows = np.flatnonzero(evaluable)
    rows_of = pd.Series(ev_rows).groupby(groups[ev_rows]).indices
    for g, row in suspect.iterrows():
        every = ev_rows[rows_of[g]]     # the sampler's evaluable rows
        site, sampler = g.split("\x1f")
        for failing_all, side in ((low, "below"), (high, "above")):
            k = int(failing_all[every].sum())
            if k <= SHARE * row["n"]:
                continue
            fits = []
            for sp, part, header, unit, basis, other, f in readings:
                extra = (f - 1.0) * eqs[sp][every]
                c2, a2 = ((cations[every] + extra, anions[every]) if part == "cation"
                          else (cations[every], anions[every] + extra))
                inside = (_ratio(c2, a2) >= lo) & (_ratio(c2, a2) <= hi)
                mended = int(inside[failing_all[every]].sum())
                # the slip is in every sample: the reading that puts most of the
                # sampler's samples in the band wins, not only most failing ones; on a
                # tie the one whose median ratio is nearest 1 (neutralised aerosol)
                total = int(inside.sum())
                after = float(np.nanmedian(_ratio(c2, a2)))
                if mended > SHARE * k:
                    fits.append((total, mended, sp, header, unit, basis, other[0], f, after))
            combo = _combined_fit(readings, eqs, cations, anions, every,
                                  failing_all[every], k)
            if combo is not None and (not fits or combo[0] > max(t[0] for t in fits)
                                      + COMBINED_MARGIN * len(every)):
                notes.append(_combined_note(combo, file_name, site, sampler, k, row, side,
                                            top, sides, float(np.median(ratio[every]))))
                continue
            if not fits:
                continue
            fits.sort(key=lambda t: (-t[0], abs(np.log(t[8]))))
            total, mended, sp, header, unit, basis, other, f, after = fits[0]
            also = "".join(
                f"; reading {t[2]} as {_basis_text(t[4], t[2], t[6])} would bring back {t[1]} "
                f"of the {k} too, with {t[0]} of all {len(every)} samples in the band and a "
                f"median ratio {t[8]:.2f} (against {total} and {after:.2f})" for t in fits[1:])
            formula = _species.get(sp).formula
            el = _species.get(sp).element
            why = (f"molar masses of {formula} and {el}" if f > 1 else
                   f"molar masses of {el} and {formula}")
            med = float(np.median(ratio[every]))
            kind = "element-basis" if basis else "species-basis"
            notes.append(
                f"{file_name}: {sp} at {site}, sampler {sampler or '(none)'}: {k} of "
                f"{int(row['n'])} samples have the ammonium-to-anion equivalent ratio "
                f"{top}/({sides}) {side} {lo if side == 'below' else hi:g} (median "
                f"{med:.2f}); the values look like {_basis_text(unit, sp, other)} under "
                f"the {kind} header {header!r}: read so, each amount is {f:.4g} x the "
                f"one read ({why}), and "
                f"{mended} of the {k} come back into {lo:g}-{hi:g}{also} (values not changed)")
    return notes


#: Share of a sampler's evaluable samples by which a reading of several particle
#: columns at once must put more samples in the band than the best reading of one
#: column (and two anion columns more than all three) to be named [-] (10 %; our
#: choice: an ammonium-rich sampler, whose clean ratios lie near the top of the band,
#: gave a three-column reading 3 % ahead of the one column that had slipped).
COMBINED_MARGIN = 0.10


def _combined_fit(readings, eqs, cations, anions, every, failing, k):
    """The best of two readings of several particle columns at once on their other
    basis (a laboratory that reports every particle ion as S and N, or the two anions):
    ``(total in the band, mended, the readings, median ratio after)``, or None when
    neither brings back more than :data:`SHARE` of the `k` failing samples.  `every`:
    the sampler's evaluable rows; `failing`: which of them fail."""
    lo, hi, _ = BALANCE_BAND
    sets = [readings, [r for r in readings if r[1] == "anion"]]     # more columns first
    best = None
    for chosen in sets:
        if len(chosen) < 2 or (best is not None and len(chosen) == len(best[2])):
            continue
        c2, a2 = cations[every].copy(), anions[every].copy()
        for sp, part, *_, f in chosen:
            extra = (f - 1.0) * eqs[sp][every]
            if part == "cation":
                c2 = c2 + extra
            else:
                a2 = a2 + extra
        r2 = _ratio(c2, a2)
        inside = (r2 >= lo) & (r2 <= hi)
        mended = int(inside[failing].sum())
        if mended > SHARE * k and (best is None or int(inside.sum()) > best[0]
                                   + COMBINED_MARGIN * len(every)):
            best = (int(inside.sum()), mended, chosen, float(np.nanmedian(r2)))
    return best


def _combined_note(combo, file_name, site, sampler, k, row, side, top, sides, med) -> str:
    """The note of :func:`_combined_fit`'s reading [text]."""
    lo, hi, _ = BALANCE_BAND
    total, mended, chosen, after = combo
    names = ", ".join(r[0] for r in chosen[:-1]) + f" and {chosen[-1][0]}"
    heads = ", ".join(repr(r[2]) for r in chosen)
    looks = ", ".join(f"{r[0]} as {_basis_text(r[3], r[0], r[5][0])}" for r in chosen)
    factors = ", ".join(f"{r[0]} {r[6]:.4g}" for r in chosen)
    return (f"{file_name}: {names} at {site}, sampler {sampler or '(none)'}: {k} of "
            f"{int(row['n'])} samples have the ammonium-to-anion equivalent ratio "
            f"{top}/({sides}) {side} {lo if side == 'below' else hi:g} (median {med:.2f}); "
            f"the values look like {looks} under the headers {heads} (a laboratory "
            f"reporting the ions as S and N?): read so, each amount is that many times the "
            f"one read ({factors}; molar masses of the ions and their elements), and "
            f"{mended} of the {k} come back into {lo:g}-{hi:g}, {total} of all "
            f"{int(row['n'])} samples in the band, median ratio {after:.2f}; no one column "
            f"read so puts as many in the band (values not changed)")


#: Mass units and the mixing-ratio units of the same scale (1 ug/m3 <-> 1 ppb...).
_SAME_SCALE = (("mg/m3", "ppm"), ("ug/m3", "ppb"), ("ng/m3", "ppt"))


def _same_amount(u1: str, u2: str, species: str) -> bool:
    return bool(np.isclose(amount_per_number(u1, species), amount_per_number(u2, species),
                           rtol=1e-9))


def gas_alternatives(species: str, unit: str, basis: str | None = None) -> list:
    """Other readings of the numbers of a gas column: ``(unit, basis)`` pairs.

    A mass header (``ug/m3``) may hold a mixing ratio of the same scale (``ppb``) or
    the other basis (``ug/m3`` as N); a mixing-ratio header (``ppb``) may hold a mass
    concentration of the same scale, of the species or of its element.

    >>> gas_alternatives("NH3", "ug/m3")
    [('ppb', None), ('ug/m3', 'N')]
    >>> gas_alternatives("NO2", "ppb")
    [('ug/m3', None), ('ug/m3', 'N')]
    """
    el = _species.get(species).element
    kind = concentration_kind(unit)
    out = []
    if kind == "mass_density":
        out += [(mix, None) for mass, mix in _SAME_SCALE
                if _same_amount(unit, mass, species)]
        if el is not None:
            out.append((unit, None if basis else el))
    elif kind == "mixing_ratio":
        for mass, mix in _SAME_SCALE:
            if _same_amount(unit, mix, species):
                out.append((mass, None))
                if el is not None:
                    out.append((mass, el))
    return out


def _seconds(t) -> np.ndarray:
    return np.asarray(t, "datetime64[s]").astype(np.int64).astype(float)


def overlap_means(start_long, end_long, start_short, end_short, value_short):
    """Time-weighted means of one sampler over the periods of another.

    Parameters
    ----------
    start_long, end_long : array_like of datetime64
        Periods to average over (the longer sampler's).
    start_short, end_short : array_like of datetime64
        Periods of the shorter sampler, not overlapping each other.
    value_short : array_like
        Its values (NaN: not measured, left out of mean and coverage). [any unit]

    Returns
    -------
    mean : ndarray
        Overlap-weighted mean of `value_short` over each long period [unit of
        `value_short`] (NaN where nothing overlaps).
    coverage : ndarray
        Share of each long period covered by valid short periods [-].

    Notes
    -----
    The short values form a step function of time; its integral and that of its
    support are piecewise linear between period bounds, so each long period's
    integral is a difference of two interpolations (no matrix of overlaps).

    >>> d = np.datetime64("2020-01-01T00:00")
    >>> h = np.timedelta64(1, "h")
    >>> m, c = overlap_means([d], [d + 4 * h], [d, d + h, d + 3 * h],
    ...                      [d + h, d + 2 * h, d + 5 * h], [1.0, 3.0, 5.0])
    >>> m.round(3).tolist(), c.tolist()
    ([3.0], [0.75])
    """
    s, e = _seconds(start_short), _seconds(end_short)
    v = np.asarray(value_short, float)
    ok = np.isfinite(v)
    s, e, v = s[ok], e[ok], v[ok]
    order = np.argsort(s, kind="stable")
    s, e, v = s[order], e[order], v[order]
    knots = np.column_stack([s, e]).ravel()
    mass = np.column_stack([np.zeros_like(v), v * (e - s)]).ravel().cumsum()
    span = np.column_stack([np.zeros_like(v), e - s]).ravel().cumsum()
    sl, el = _seconds(start_long), _seconds(end_long)
    if not len(knots):
        return np.full(len(sl), np.nan), np.zeros(len(sl))
    cover = np.interp(el, knots, span) - np.interp(sl, knots, span)
    total = np.interp(el, knots, mass) - np.interp(sl, knots, mass)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(cover > 0, total / cover, np.nan), cover / (el - sl)


def _describe(species: str, unit: str, basis, alt_unit: str, alt_basis) -> str:
    """What the factor between two readings is, in words."""
    sp = _species.get(species)
    if concentration_kind(unit) != concentration_kind(alt_unit):
        mass, mix = ((unit, alt_unit) if concentration_kind(unit) == "mass_density"
                     else (alt_unit, unit))
        per = amount_per_number(mix, species) / amount_per_number(mass, species)
        return (f"the {mix} <-> {mass} factor of {species} at 20 degC, 1013.25 hPa "
                f"(1 {mix} = {per:.4g} {mass}, from R T / p and the molar mass)")
    m_sp = sp.molar_mass * 1e3
    m_el = _species.element_molar_mass(sp.element) * 1e3
    return (f"the ratio of the molar masses of {sp.formula} and {sp.element} "
            f"({m_sp:.3f}/{m_el:.3f} = {m_sp / m_el:.4g})")


def _reading(species: str, unit: str, basis) -> str:
    if concentration_kind(unit) == "mass_density":
        return _basis_text(unit, species, basis)
    return unit


def gas_pair_notes(ds: xr.Dataset, units: dict, file_name: str) -> list[str]:
    """Notes naming a likely unit slip between two samplers of one gas at one site.

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read (:func:`workbench.io.samples.read_air`): dim
        ``period``; ``site``, ``sampler_id``, ``start``, ``end``; gases [mol m-3] or
        [mol mol-1].
    units : dict
        Species -> (header as typed, unit as typed, element basis or None).
    file_name : str
        Named in the notes.

    Returns
    -------
    list of str
        One note per site, gas and pair of samplers whose ratio matches a unit factor,
        e.g. ``"a.csv: NH3 at ridge: sampler RDG-P1 reads 1.41 x sampler RDG-F1
        (median over 24 periods of RDG-P1, ...): the ppb <-> ug/m3 factor of NH3 at
        20 degC, 1013.25 hPa (1 ppb = 0.708 ug/m3, ...); RDG-P1's values look like ppb
        in the column 'NH3 [ug/m3]' (values not changed)"``.
    """
    notes = []
    if ds.sizes.get("period", 0) == 0:
        return notes
    for sp in _species.AIR_GASES:
        if sp not in ds:
            continue
        v = _density(ds, sp)
        ok = np.isfinite(v)
        frame = pd.DataFrame({"site": ds["site"].values.astype(str)[ok],
                              "sampler": ds["sampler_id"].values.astype(str)[ok],
                              "start": ds["start"].values[ok], "end": ds["end"].values[ok],
                              "v": v[ok]})
        per = frame.groupby("site")["sampler"].nunique()
        multi = frame[frame["site"].isin(per.index[per >= 2])].copy()
        header, unit, basis = units[sp]
        alts = gas_alternatives(sp, unit, basis) if len(multi) else []
        if not alts:
            continue
        multi["days"] = (multi["end"] - multi["start"]) / np.timedelta64(1, "D")
        for site, at in multi.groupby("site", sort=True):
            length = at.groupby("sampler")["days"].median().sort_index()
            names = list(length.index)
            for i, a in enumerate(names):
                for b in names[i + 1:]:
                    long_, short = (a, b) if length[a] >= length[b] else (b, a)
                    note = _pair_note(at, sp, site, long_, short, length, header, unit,
                                      basis, alts, file_name)
                    if note:
                        notes.append(note)
    return notes


def _pair_note(at, sp, site, long_, short, length, header, unit, basis, alts, file_name):
    L, S = at[at["sampler"] == long_], at[at["sampler"] == short]
    mean, cover = overlap_means(L["start"].values, L["end"].values, S["start"].values,
                                S["end"].values, S["v"].values)
    vl = L["v"].to_numpy()
    use = (cover >= MIN_COVERAGE) & (mean > 0) & (vl > 0)
    n = int(use.sum())
    if n < MIN_PERIODS:
        return None
    r = vl[use] / mean[use]
    med = float(np.median(r))
    best = None
    header_amount = amount_per_number(unit, sp, basis)
    for alt_unit, alt_basis in alts:
        f = header_amount / amount_per_number(alt_unit, sp, alt_basis)   # read / true
        for who, expected in ((long_, f), (short, 1.0 / f)):
            dist = abs(np.log(med / expected))
            if dist <= np.log1p(MATCH_TOL) and (best is None or dist < best[0]):
                best = (dist, who, expected, alt_unit, alt_basis)
    if best is None:
        return None   # a steady ratio of no unit factor is a method difference
    _, who, expected, alt_unit, alt_basis = best
    steady = int((np.abs(r / expected - 1.0) <= STEADY_TOL).sum())
    if steady <= SHARE * n:
        return None
    return (f"{file_name}: {sp} at {site}: sampler {long_} (periods of {length[long_]:.3g} "
            f"days) reads {med:.3g} x sampler {short} ({length[short]:.3g} days), the median "
            f"over {n} periods of {long_}, each against the time-weighted mean of {short} "
            f"over it ({steady} of the {n} within {STEADY_TOL:.0%} of {expected:.3g}): "
            f"{_describe(sp, unit, basis, alt_unit, alt_basis)}; {who}'s values look like "
            f"{_reading(sp, alt_unit, alt_basis)} in the column {header!r} "
            f"(values not changed)")


def air_slip_notes(ds: xr.Dataset, units: dict, file_name: str) -> list[str]:
    """Both hints (:func:`particle_balance_notes`, :func:`gas_pair_notes`).

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read.
    units : dict
        Species -> (header as typed, unit as typed, element basis or None).
    file_name : str

    Returns
    -------
    list of str
    """
    return particle_balance_notes(ds, units, file_name) + gas_pair_notes(ds, units, file_name)


def factors_table() -> str:
    """The slip factors the hints try, as a Markdown table (docs/data_formats.md).

    Amount read under the header's unit divided by the amount the same number stands
    for under the other reading; the ppb factors at 20 degC, 1013.25 hPa.
    """
    rows = ["| species | slip | factor | derivation |", "|---|---|---|---|"]
    for sp, _ in BALANCE_COLUMNS:
        s = _species.get(sp)
        m_sp, m_el = s.molar_mass * 1e3, _species.element_molar_mass(s.element) * 1e3
        f = amount_per_number("ug/m3", sp, s.element) / amount_per_number("ug/m3", sp)
        rows.append(f"| `{sp}` | ug {s.element}/m3 under `{sp} [ug/m3]` (or the reverse "
                    f"under `{sp}_as_{s.element}`) | {f:.4g} (1/{f:.4g}) | M({s.formula}) / "
                    f"M({s.element}) = {m_sp:.3f} / {m_el:.3f} |")
    for sp in ("NH3", "SO2", "HNO3", "NO2"):
        s = _species.get(sp)
        m_sp, m_el = s.molar_mass * 1e3, _species.element_molar_mass(s.element) * 1e3
        per = amount_per_number("ppb", sp) / amount_per_number("ug/m3", sp)
        rows.append(f"| `{sp}` | ppb under `[ug/m3]` or ug/m3 under `[ppb]` | 1 ppb = "
                    f"{per:.4g} ug/m3 | M p / (R T) = {m_sp:.3f} g/mol x 101325 Pa / "
                    f"({GAS_CONSTANT} J/(mol K) x 293.15 K) |")
        rows.append(f"| `{sp}` | ug {s.element}/m3 under `{sp} [ug/m3]` (or the reverse) | "
                    f"{m_sp / m_el:.4g} | M({s.formula}) / M({s.element}) = {m_sp:.3f} / "
                    f"{m_el:.3f} |")
    return "\n".join(rows)
