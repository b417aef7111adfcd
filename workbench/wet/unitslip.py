"""A hint when most samples of a site fail one check together: a unit slip in a column?

A column written in another unit than its header says (sulfate in ueq/L under a
``[mg/L]`` header, gauge depth in cm under ``[mm]``) makes most samples of the site fail
the ion balance or the capture check, all in the same direction.  Each sample is then
flagged with its reason, but nothing names the likely cause.  :func:`unit_slip_notes`
looks for it: when more than :data:`SHARE` of a site's evaluated samples fail one check
in the same direction and reading one column in another unit of the same kind
(``mg/L``, ``umol/L``, ``ueq/L``; ``mm``, ``cm``) brings more than :data:`SHARE` of the
failing samples back into the check's band, one note per site and column names the
slip.  The values are not changed: the note is a hint for the analyst.

The checks are those of :func:`workbench.wet.screen` with its options (ion balance
tiers, detection-limit treatment, bicarbonate; capture ranges of unknown precipitation
type, as the reader does not know the type), run on the samples as read.

A few weeks of a depth in another length unit fail far under half of a site's samples;
:func:`_depth_run_notes` names a run of :data:`RUN_MIN` or more consecutive samples
that one other length unit brings back into the capture band.
"""
from __future__ import annotations


import numpy as np
import pandas as pd
import xarray as xr

from .. import flags as _flags
from .. import species as _species
from ..units import concentration_kind, convert_plain, to_amount
from . import qa
from .options import WetOptions
from .screening import _flag_table, ion_balance_test, ion_sums

#: Share of a site's evaluated samples that must fail in one direction, and share of
#: those that the other unit must bring back into the band (more than half; common
#: practice for "most samples").
SHARE = 0.5
#: Units of a concentration column that are tried in place of the header's.
CONCENTRATION_UNITS = ("mg/L", "umol/L", "ueq/L")
#: Fewest failing samples of a site (ion balance or conductivity) that reading one
#: column on the other element basis must mend for a note below :data:`SHARE`
#: (:func:`_basis_notes`; our choice: a handful, not one or two stray samples).
BASIS_MIN_MENDED = 5
#: Largest share of a site's failing samples that may still fail (either check) read on
#: the other basis for that note [-] (our choice: at least half mended, net; on the demo
#: with lognormal noise of sd 0.2 and 0.4 on each ion and no slip, the best reading of
#: any site kept 0.92 or more: benchmarks/basis_slip_alarms.py, docs/performance.md).
BASIS_REST = 0.5
#: Units of a depth column that are tried in place of the header's.
DEPTH_UNITS = ("mm", "cm", "inch", "0.1 mm")   # inch: a gauge read in inches; 0.1 mm:
#                                  a logger or network's count of tenths of mm (io slips)
#: Scaled depth units of :data:`DEPTH_UNITS` that pint has no name for: their unit and
#: scale, and the words of a note.
_SCALED_DEPTH = {"0.1 mm": ("mm", 0.1, "tenths of mm")}
#: Fewest consecutive samples of a site (in time order, samples not evaluated skipped)
#: that a depth unit mends for a note on a run of them [-] (three weeks; our choice).
RUN_MIN = 3


def _factor(unit: str, other: str, species: str | None, basis=None,
            other_basis="same") -> float:
    """Amount read under `other` (on `other_basis`, by default `basis`) divided by the
    amount read under `unit` on `basis` (the same number)."""
    if species is None:
        return float(convert_plain(np.array([1.0]), other, "mm")[0]
                     / convert_plain(np.array([1.0]), unit, "mm")[0])
    other_basis = basis if other_basis == "same" else other_basis
    return float(to_amount(np.array([1.0]), other, species, other_basis)[0][0]
                 / to_amount(np.array([1.0]), unit, species, basis)[0][0])


def _same_unit(a: float) -> bool:
    return abs(a - 1.0) < 1e-6


def _gauge_ok(samples: xr.Dataset) -> np.ndarray:
    """Samples whose flag codes leave the gauge depth valid (the screening's flag table)."""
    n = samples.sizes["sample"]
    codes, _ = _flag_table(samples["flags"].values if "flags" in samples
                           else np.full(n, "", dtype=object))
    bad = np.zeros(n, bool)
    for code, (_, _, gauge_ok) in _flags.FLAGS.items():
        if not gauge_ok:
            bad |= codes[code]
    return ~bad


def _ion_balance(samples, options):
    """Equivalents per ion [ueq/L], cation and anion sums [ueq/L] as the screening has
    them (censored values by the detection-limit treatment; every sample, flagged or
    not, as :func:`workbench.wet.screen` evaluates them)."""
    n = samples.sizes["sample"]
    pH = samples["pH"].values.astype(float) if "pH" in samples else np.full(n, np.nan)
    conc = {}
    for ion in qa.BALANCE_CATIONS + qa.BALANCE_ANIONS:
        if ion in samples and ion not in ("H", "HCO3"):
            v = samples[ion].values.astype(float)
            cens = samples[f"{ion}_censored"].values.astype(bool)
            lim = samples[f"{ion}_detection_limit"].values.astype(float)
            conc[ion] = qa.censored_value(v, cens, lim, options.detection_limit)
    _, _, eqs, cations, anions = ion_sums(conc, pH, options)
    return eqs, cations, anions


def _ib_fail(cations, anions, options):
    idiff, _, evaluated, fail = ion_balance_test(cations, anions, options.ion_balance_tiers)
    return evaluated, fail, idiff


def _suspects(sites, evaluated, *directions) -> list:
    """The sites where more than :data:`SHARE` of the evaluated samples fail in one of
    the `directions` (bool arrays); counted in one group-by, so the search for a unit
    runs only at those few sites."""
    cols = {f"d{i}": np.asarray(d, bool) for i, d in enumerate(directions)}
    g = pd.DataFrame({"site": sites, "n": np.asarray(evaluated, bool), **cols}).groupby(
        "site", sort=True).sum()
    n = g["n"].to_numpy()
    hit = (g[list(cols)].to_numpy() > SHARE * n[:, None]).any(axis=1) & (n > 0)
    return list(g.index[hit])


def unit_slip_notes(samples: xr.Dataset, units: dict, file_name: str,
                    options: WetOptions = WetOptions()) -> list[str]:
    """Notes naming a likely unit slip, one per site and column.

    Parameters
    ----------
    samples : xarray.Dataset
        Precipitation samples as read (:func:`workbench.io.samples.read_precipitation`):
        ions [mol m-3] with ``<ion>_censored`` and ``<ion>_detection_limit``, ``pH``,
        ``gauge_depth`` and ``sample_depth`` [mm], ``flags``, ``site``.
    units : dict
        Column key -> (header as typed, unit as typed, element basis or None); keys are
        the ions and ``"gauge_depth"`` / ``"sample_depth"`` when given in the file.
    file_name : str
        Named in the notes.
    options : WetOptions
        The screening's options (tiers, detection-limit treatment, capture range).

    Returns
    -------
    list of str
        E.g. ``"p.csv: SO4 at ridge: 39 of 56 samples fail the ion balance, 39 of them
        with anions high; the values look like ueq/L under a mg/L header (read so, 38
        of the 39 pass)"``.
    """
    n = samples.sizes["sample"]
    if n == 0:
        return []
    sites = samples["site"].values.astype(str)
    notes = []
    eqs, cations, anions = _ion_balance(samples, options)
    evaluated, fail, idiff = _ib_fail(cations, anions, options)
    noted_ib = set()
    cond_check = _conductivity_check(samples, options)
    # ion balance: one candidate (ion, unit) per site, the one that mends the most samples
    for site in _suspects(sites, evaluated, fail & (idiff < 0), fail & (idiff > 0)):
        at = sites == site
        n_eval = int((evaluated & at).sum())
        for sign, side in ((-1, "anions high"), (1, "cations high")):
            failing = fail & at & (np.sign(idiff) == sign)
            k = int(failing.sum())
            if n_eval == 0 or k <= SHARE * n_eval:
                continue
            k_all = int((fail & at).sum())
            best = None
            fits = {}                                    # read_as -> mended
            idx = np.flatnonzero(failing)                # only the failing samples
            for trial in _concentration_trials(units, eqs):
                scale = trial[0]
                _, fail2, _ = _ib_fail(*_rescaled_sums(eqs, cations, anions, scale, idx),
                                       options)
                mended = int((~fail2).sum())
                if mended > SHARE * k:
                    fits[trial[3]] = mended
                if mended <= SHARE * k or (best is not None and mended < best[0]):
                    continue
                # a tie (umol/L and ueq/L of a file of ions of one charge scale both
                # sums alike): the reading that passes more of the site's conductivity
                # checks wins
                cond = (0 if cond_check is None else
                        int((at & ~cond_check(_scaled(eqs, scale))[1]).sum()))
                if best is None or (mended, cond) > best[:2]:
                    best = (mended, cond, trial)
            if best is not None:
                mended, _, (_, subject, looks, read_as) = best
                share = "all" if k_all == k else str(k)
                noted_ib.add(site)
                twin = _charge_twin(subject, looks, read_as, fits, units)
                if twin is not None:
                    looks, read_as = twin(mended, k)
                    notes.append(f"{file_name}: {subject} at {site}: {k_all} of {n_eval} "
                                 f"samples fail the ion balance, {share} with {side}; "
                                 f"{looks} ({read_as}")
                    continue
                notes.append(f"{file_name}: {subject} at {site}: {k_all} of {n_eval} samples "
                             f"fail the ion balance, {share} with {side}; {looks} ({read_as}, "
                             f"{mended} of the {k} pass)")
    notes += _basis_notes(samples, units, file_name, eqs, cations, anions, evaluated,
                          fail, cond_check, noted_ib, options)
    notes += _conductivity_notes(samples, units, file_name, eqs, cations, anions,
                                  noted_ib, options)
    # capture ratio: the gauge or the sample depth in another length unit
    if "gauge_depth" in samples and "sample_depth" in samples:
        gauge = np.where(_gauge_ok(samples), samples["gauge_depth"].values.astype(float), np.nan)
        sample = samples["sample_depth"].values.astype(float)
        lo, hi = options.capture_unknown
        ratio = qa.capture_ratio(sample, gauge, options.capture_min_depth)
        ok = np.isfinite(ratio)
        high, low = qa.exceeds(ratio, hi), qa.falls_short(ratio, lo)   # as the screening
        noted = set()
        for site in _suspects(sites, ok, high, low):
            at = sites == site
            n_eval = int((ok & at).sum())
            for failing, side in ((high & at, "high"), (low & at, "low")):
                k = int(failing.sum())
                if n_eval == 0 or k <= SHARE * n_eval:
                    continue
                k_all = int((at & (high | low)).sum())
                best = None
                idx = np.flatnonzero(failing)            # only the failing samples
                for col, header, unit, other, f in _depth_trials(units):
                    r2 = _reread_ratio(col, f, sample[idx], gauge[idx], options)
                    mended = int((qa.at_least(r2, lo) & qa.at_most(r2, hi)).sum())
                    if mended > SHARE * k and (best is None or mended > best[0]):
                        best = (mended, col, header, unit, other)
                if best is not None:
                    mended, col, header, unit, other = best
                    noted.add(site)
                    notes.append(f"{file_name}: {col.replace('_', ' ')} at {site}: {k_all} of "
                                 f"{n_eval} samples fail the capture check, "
                                 f"{'all' if k_all == k else k} with the "
                                 f"capture ratio {side}; the values look like {other} under a "
                                 f"{unit} header ({header!r}; read as {other}, {mended} of the "
                                 f"{k} pass)")
        notes += _depth_run_notes(samples, units, file_name, sample, gauge, ratio, ok,
                                  high, low, noted, options)
    return notes


def _charge_twin(subject, looks, read_as, fits, units):
    """For a note naming one ion column in umol/L or ueq/L, where the other of the two
    mends more than :data:`SHARE` of the failing samples as well (an ion of charge 2 or
    more: the two readings are a factor |z| apart, and the ion balance's band can take
    both, e.g. Ca in ueq/L under a mg/L header, 50 x, read as umol/L, 25 x, still passes
    when Ca is a small part of the cations): a function of the best reading's count
    and of the failing samples' count giving the note's texts naming both, else None."""
    pair = {"umol/L": "ueq/L", "ueq/L": "umol/L"}
    if subject not in units:
        return None
    header, unit, _ = units[subject]
    other = read_as.rsplit("read as ", 1)[-1]
    twin = pair.get(other)
    twin_as = f"{header!r}; read as {twin}"
    if twin is None or twin_as not in fits:
        return None
    z = abs(_species.get(subject).charge)
    if z < 2:                                   # one reading: the same number
        return None
    to_mg = {u: _factor(u, "mg/L", subject) for u in (other, twin)}

    def texts(mended, k):
        return (f"the values look like {other} or {twin} under a {unit} header",
                f"{header!r}; read as {other}, {mended} of the {k} pass, as {twin} "
                f"{fits[twin_as]}: for an ion of charge {z:g} the two readings are {z:g} x "
                f"apart and the ion balance cannot tell them apart; ask the laboratory "
                f"which it reports; to mg/L, {other} x {1 / to_mg[other]:.3g}, {twin} x "
                f"{1 / to_mg[twin]:.3g})")
    return texts


def _concentration_trials(units: dict, eqs: dict):
    """The readings of the ion columns tried in place of the headers':
    ``(scale, subject, looks, read_as)``, `scale` {ion: amount read so / amount read
    under the header} and three texts for the note.

    Each column in each other unit of :data:`CONCENTRATION_UNITS` (its basis kept);
    a column of nitrate, ammonium or sulfate in a mass unit on the other basis (the
    element, ``mg/L as N``, under a header of the ion, or the ion under an ``_as_N``
    header: factors of the molar masses, 14/62 for nitrate, 14/18 for ammonium, 32/96
    for sulfate); and every ion column at once in each unit (a file in ueq/L under
    mg/L headers)."""
    cols = _ion_columns(units, eqs)
    for ion, header, unit, basis in cols:
        for other in CONCENTRATION_UNITS:
            f = _factor(unit, other, ion, basis)
            if not _same_unit(f):
                yield ({ion: f}, ion, f"the values look like {other} under a {unit} header",
                       f"{header!r}; read as {other}")
        yield from _basis_trials([(ion, header, unit, basis)])
    for other in CONCENTRATION_UNITS:
        scale = {ion: _factor(unit, other, ion, basis) for ion, _, unit, basis in cols}
        if len(cols) > 1 and not all(_same_unit(f) for f in scale.values()):
            heads = ", ".join(repr(h) for _, h, _, _ in cols[:3]) + (
                ", ..." if len(cols) > 3 else "")
            yield (scale, "every ion column",
                   f"the values look like {other} under the headers' units",
                   f"{heads}; read as {other}")


def _ion_columns(units: dict, eqs: dict) -> list:
    """The ion columns of `units` in the ion balance: ``(ion, header, unit, basis)``."""
    return [(ion, h, u, b) for ion, (h, u, b) in units.items()
            if ion in eqs and ion not in ("H", "HCO3")]


def _basis_trials(cols: list):
    """The readings of nitrate, ammonium and sulfate columns in a mass unit on the other
    basis (the element under a header of the ion, ``NO3 [mg/L]`` holding mg N/L, or the
    ion under an ``_as_N`` / ``_as_S`` header): ``(scale, subject, looks, read_as)`` as
    :func:`_concentration_trials`. The factor is the ratio of the molar masses (62/14 for
    nitrate read as N, 96/32 for sulfate read as S, 18/14 for ammonium read as N; the
    inverse the other way)."""
    for ion, header, unit, basis in cols:
        element = _species.get(ion).element
        if element in ("N", "S") and concentration_kind(unit) == "mass_density":
            other_basis = None if basis else element
            f = _factor(unit, unit, ion, basis, other_basis)
            name = (lambda b: f"{ion}" if b is None else f"{b}")
            yield ({ion: f}, ion,
                   f"the values look like {unit} as {name(other_basis)} under a header of "
                   f"{unit} as {name(basis)}",
                   f"{header!r}; read so, each amount is {f:.3g} x the one read, the ratio "
                   f"of the molar masses of {name(basis)} and {name(other_basis)}; check "
                   f"which the laboratory reports")


def _basis_notes(samples, units, file_name, eqs, cations, anions, evaluated, fail,
                 cond_check, noted, options) -> list[str]:
    """Notes on an ion column on the other element basis where fewer than half of a
    site's samples fail (nitrate as N under a ``NO3 [mg/L]`` header, 0.226 x, fails 9 %
    of the demo's samples; sulfate as S, 0.334 x, 26 %): the site-wide share of
    :func:`unit_slip_notes` does not see them.

    A site gets a note for a column when reading that column on the other basis
    (:func:`_basis_trials`) mends at least :data:`BASIS_MIN_MENDED` of the samples that
    fail the ion balance or (where measured) the conductivity check as read and leaves
    at most :data:`BASIS_REST` of their number failing either check; of two such
    columns, the one leaving fewer failing is named. Sites with a note of the
    site-wide check (`noted`) are left out; the values are not changed."""
    sites = samples["site"].values.astype(str)
    cols = _ion_columns(units, eqs)
    trials = list(_basis_trials(cols))
    if not trials:
        return []
    names, code = np.unique(sites, return_inverse=True)
    nsite = len(names)
    cfail = (np.zeros(len(sites), bool) if cond_check is None else cond_check(eqs)[1])
    bad = (evaluated & fail) | cfail                     # failing either check as read
    k_ib = np.bincount(code, evaluated & fail, nsite)
    k_c = np.bincount(code, cfail, nsite)
    n_ev = np.bincount(code, evaluated, nsite)
    k = np.bincount(code, bad, nsite)
    every = np.arange(len(sites))
    best = [None] * nsite
    for trial in trials:
        _, fail2, _ = _ib_fail(*_rescaled_sums(eqs, cations, anions, trial[0], every), options)
        cfail2 = (np.zeros(len(sites), bool) if cond_check is None
                  else cond_check(_scaled(eqs, trial[0]))[1])
        bad2 = (evaluated & fail2) | cfail2
        m = np.bincount(code, bad & ~bad2, nsite)
        k2 = np.bincount(code, bad2, nsite)
        ok = (m >= BASIS_MIN_MENDED) & (k2 <= BASIS_REST * k)
        for i in np.flatnonzero(ok):
            if best[i] is None or (k2[i], -m[i]) < best[i][:2]:
                best[i] = (int(k2[i]), -int(m[i]), trial)
    notes = []
    for i, b in enumerate(best):
        if b is None or names[i] in noted:
            continue
        k2, m, (_, subject, looks, read_as) = b[0], -b[1], b[2]
        cond = "" if cond_check is None else f", {int(k_c[i])} the conductivity check"
        notes.append(f"{file_name}: {subject} at {names[i]}: {int(k_ib[i])} of "
                     f"{int(n_ev[i])} samples fail the ion balance{cond}; {looks} "
                     f"({read_as}); on that basis {m} of the {int(k[i])} failing samples "
                     f"pass and {k2} fail (values used as read, the samples stay flagged)")
    return notes


def _conductivity_check(samples, options):
    """The conductivity check as the screening has it, as a function of the
    equivalents {ion: [ueq/L]}: ``(evaluated, fail, difference [%])``; None without a
    measured conductivity."""
    if "conductivity" not in samples:
        return None
    k_meas = samples["conductivity"].values.astype(float)
    lim = qa.tier_limit(k_meas, options.conductivity_tiers)

    def check(e):
        k_calc = qa.conductivity_calculated(e)
        cdiff = qa.conductivity_difference(k_calc, k_meas, options.conductivity_difference_basis)
        ev = np.isfinite(cdiff)
        return ev, ev & qa.exceeds(np.abs(cdiff), lim), cdiff
    return check


def _rescaled_sums(eqs, cations, anions, scale, idx):
    """Cation and anion sums [ueq/L] of the samples `idx` with the ions of `scale` read
    times their factors."""
    c2, a2 = cations[idx].copy(), anions[idx].copy()
    for ion, f in scale.items():
        extra = (f - 1.0) * np.nan_to_num(eqs[ion][idx])
        if ion in qa.BALANCE_CATIONS:
            c2 += extra
        else:
            a2 += extra
    return c2, a2


def _scaled(eqs: dict, scale: dict) -> dict:
    """The equivalents with the ions of `scale` multiplied by their factors."""
    return {ion: (v * scale[ion] if ion in scale else v) for ion, v in eqs.items()}


def _conductivity_notes(samples, units, file_name, eqs, cations, anions, noted,
                        options) -> list[str]:
    """Notes on sites where more than :data:`SHARE` of the samples with a measured
    conductivity fail the conductivity check in one direction and a reading of
    :func:`_concentration_trials` brings more than :data:`SHARE` of them back into its
    band with their ion balance passing: the check sees a slip that leaves the ion balance intact (every ion column in
    ueq/L under mg/L headers scales both sums).  Sites with a note of the ion balance
    (`noted`) are left out; the values are not changed."""
    check = _conductivity_check(samples, options)
    if check is None:
        return []
    sites = samples["site"].values.astype(str)
    evaluated, fail, cdiff = check(eqs)
    notes = []
    for site in _suspects(sites, evaluated, fail & (cdiff > 0), fail & (cdiff < 0)):
        if site in noted:
            continue
        at = sites == site
        n_eval = int((evaluated & at).sum())
        for sign, side in ((1, "high"), (-1, "low")):
            failing = fail & at & (np.sign(cdiff) == sign)
            k = int(failing.sum())
            if k <= SHARE * n_eval:
                continue
            best = None
            idx = np.flatnonzero(failing)
            for trial in _concentration_trials(units, eqs):
                _, fail2, _ = check(_scaled(eqs, trial[0]))
                # mended: passes the conductivity check and, read so, the ion balance
                # too (reading every ion 20-80 x lower leaves H+ alone to match a
                # conductivity meter reading low, and breaks the balance)
                _, ib2, _ = _ib_fail(*_rescaled_sums(eqs, cations, anions, trial[0], idx),
                                     options)
                mended = int((~fail2[idx] & ~ib2).sum())
                if mended > SHARE * k and (best is None or mended > best[0]):
                    best = (mended, trial)
            if best is not None:
                mended, (_, subject, looks, read_as) = best
                med = float(np.median(cdiff[failing]))
                notes.append(f"{file_name}: {subject} at {site}: {k} of {n_eval} samples fail "
                             f"the conductivity check with the conductivity calculated from "
                             f"the ions {side} (median {med:+.0f} %); {looks} ({read_as}, "
                             f"{mended} of the {k} pass)")
    return notes


def _depth_trials(units: dict, band: float = 1.0):
    """The depth columns of `units` each with every other length unit of
    :data:`DEPTH_UNITS`: ``(column, header, unit, other, factor)``, `factor` the amount
    read under `other` over the amount read under the header's unit. A factor within
    `band` of 1 (``max(f, 1/f) <= band``; default: only the header's own unit) is left
    out."""
    for col in ("gauge_depth", "sample_depth"):
        if col not in units:
            continue
        header, unit, _ = units[col]
        for other in DEPTH_UNITS:
            base, scale, words = _SCALED_DEPTH.get(other, (other, 1.0, other))
            f = scale * _factor(unit, base, None)
            if _same_unit(f) or max(f, 1 / f) <= band:
                continue
            yield col, header, unit, words, f


def _reread_ratio(col: str, f: float, sample, gauge, options) -> np.ndarray:
    """Capture ratio with column `col` (``gauge_depth`` or ``sample_depth``) read in the
    other unit (its values times `f`). [-]"""
    if col == "gauge_depth":
        return qa.capture_ratio(sample, gauge * f, options.capture_min_depth)
    return qa.capture_ratio(sample * f, gauge, options.capture_min_depth)


def _depth_run_notes(samples, units, file_name, sample, gauge, ratio, ok, high, low,
                     noted, options) -> list[str]:
    """Notes on a run of :data:`RUN_MIN` or more consecutive samples of a site (in time
    order; samples the capture check does not evaluate are skipped) that fail the
    capture check in one direction and pass it with one depth column read in another
    length unit: a few weeks of a gauge read in inches among weeks in mm, which no
    site-wide share shows.  Only units whose factor lies outside the width of the
    capture band (hi / lo) are tried: a smaller factor (cm <-> inch, 2.54, in the band
    (0.5, 1.2), 2.4 wide) cannot be told from the scatter of the ratio.  Sites with a
    site-wide note (`noted`) are left out; the values are not changed."""
    lo, hi = options.capture_unknown
    sites = samples["site"].values.astype(str)
    lines = samples["line"].values if "line" in samples else np.arange(len(sites)) + 1
    start = samples["start"].values if "start" in samples else np.arange(len(sites))
    order = np.lexsort((start, sites))
    ev = order[ok[order]]                        # evaluated samples, by site and time
    if len(ev) < RUN_MIN:
        return []
    out, used = [], set()
    for col, header, unit, other, f in _depth_trials(units, band=hi / lo):
        r2 = _reread_ratio(col, f, sample, gauge, options)
        mends = qa.at_least(r2, lo) & qa.at_most(r2, hi)
        for failing, side in ((high, "high"), (low, "low")):
            hit = (failing & mends)[ev]
            s_ev = sites[ev]
            new = hit & ~np.r_[False, hit[:-1] & (s_ev[1:] == s_ev[:-1])]
            run_id = np.cumsum(new)
            size = np.bincount(run_id[hit], minlength=run_id.max() + 1)
            for r in np.flatnonzero(size >= RUN_MIN):
                idx = ev[hit & (run_id == r)]
                site = sites[idx[0]]
                if site in noted or (site, int(idx[0])) in used:
                    continue
                used.add((site, int(idx[0])))
                ln = np.sort(lines[idx])
                t0, t1 = (str(np.datetime_as_string(start[idx].min(), "D")),
                          str(np.datetime_as_string(start[idx].max(), "D")))
                value = float(samples[col].values[idx[0]])
                out.append(f"{file_name}: {col.replace('_', ' ')} at {site}: lines "
                           f"{ln[0]}-{ln[-1]} ({len(idx)} consecutive samples the "
                           f"check evaluates, {t0} to {t1}) fail the capture check with "
                           f"the capture ratio {side} (e.g. line {lines[idx[0]]}, read as "
                           f"{value:g} mm, ratio "
                           f"{ratio[idx[0]]:.3g}, expected {lo:g} to {hi:g}); read as "
                           f"{other} they all pass: the values look like {other} under a "
                           f"{unit} header ({header!r}; values not changed)")
    return out
