"""A unit slip in some rows of one air sampler: a step by a unit factor.

:func:`workbench.io.airslip.gas_pair_notes` sees a ppb <-> ug/m3 slip only where a second
sampler of the same gas stands at the same site.  A laboratory export of one year
written in ppb under ``SO2 [ug/m3]`` at a site with one filter pack stays in range and
went without a word.  :func:`sampler_step_notes` looks at each sampler of a gas against
the other samplers of the file (other sites, or another sampler of the site): the log
ratio of the sampler's value to the median of the others' time-weighted means over the
same period takes out the seasons and the weather the sites share.  A slip is a run of
consecutive samples whose ratio sits a unit factor away from the sampler's other
samples, with a sharp separation:

* the run is the one of greatest separation (the difference of means of the log ratio
  inside and outside, weighted by sqrt(n_in n_out / n));
* it holds at least :data:`MIN_RUN` samples and so does the rest;
* the difference of the medians inside and outside matches the log of the
  ppb <-> ug/m3 factor of the gas (:func:`workbench.io.airslip.gas_alternatives`, or its
  inverse) within :data:`STEP_TOL` (element-basis readings are not tried here: more
  readings, more chance matches);
* the sampler's own values show the step too, against the same season of other years
  (with one or two other samplers, a slip of another sampler makes a step in this one's
  ratio, not in its values);
* the run's samples lie beyond the midpoint of the two levels (more than
  :data:`SEPARATION` of them), and the rest's on the near side (the same share);
* the step is :data:`MIN_SCORE` robust standard errors wide.

The values are never changed: one ledger note per sampler and gas names the file, the
lines, the column, a value and what the header expects.  Without another sampler of the
gas in the file there is no reference and no note (a step in one site's own values
cannot be told from a change of sources); a site of real change by a factor near 2.66
(SO2) or 1.41 (NH3) at a given date against every other site of the file would get a
note (see docs/data_formats.md section 3).
"""
from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .. import species as _species
from ..units import concentration_kind
from .airslip import _density, _reading, amount_per_number, gas_alternatives, overlap_means

#: Fewest samples of the run and of the rest [-] (ten: with six, one invented clean
#: 4-site network in ten got a note, benchmarks/air_unit_step.py; our choice).
MIN_RUN = 10
#: Largest relative distance of the step from a unit factor [-] (15 %: the median ratio
#: of six weekly samples to other sites scatters by about 10 % (sd of the log ratio
#: 0.3 / sqrt(6) x 1.25); our choice).
STEP_TOL = 0.15
#: Share of the run (and of the rest) on its side of the midpoint of the two levels [-]
#: (70 %; our choice, with benchmarks/air_unit_step.py).
SEPARATION = 0.70
#: Step width in robust standard errors [-] (8; our choice, held by the false-alarm
#: measure of benchmarks/air_unit_step.py).
MIN_SCORE = 8.0
#: Half-width of the season a run's samples are compared with in other years [days]
#: (30: a month either side; our choice).
SEASON_DAYS = 30.0
#: Longest record of a sampler searched for a run anywhere; longer ones are searched for
#: a run at their start or end only (the n x n search is n^2 floats) [-].
MAX_FULL_SEARCH = 1500


def _log_reference(ds, v, sp, rows, others):
    """Median over the other samplers of log(their time-weighted mean) over each of
    `rows`' periods (NaN where none covers 75 %)."""
    start, end = ds["start"].values, ds["end"].values
    logs = []
    for o in others:
        ok = o[np.isfinite(v[o]) & (v[o] > 0)]
        if len(ok) == 0:
            continue
        m, cover = overlap_means(start[rows], end[rows], start[ok], end[ok], v[ok])
        with np.errstate(divide="ignore", invalid="ignore"):
            logs.append(np.where((cover >= 0.75) & (m > 0), np.log(m), np.nan))
    if not logs:
        return np.full(len(rows), np.nan), 0
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return np.nanmedian(np.vstack(logs), axis=0), len(logs)


def best_run(x: np.ndarray, min_run: int = MIN_RUN):
    """The run of consecutive values most apart from the rest.

    Parameters
    ----------
    x : ndarray
        Values in order (log ratios) [-].
    min_run : int
        Fewest values of the run and of the rest.

    Returns
    -------
    (a, b) or None
        The run is ``x[a:b]``; None when `x` is too short.

    >>> best_run(np.r_[np.zeros(10), np.ones(12), np.zeros(10)])
    (10, 22)
    """
    n = len(x)
    if n < 2 * min_run:
        return None
    s = np.concatenate([[0.0], np.cumsum(x - np.mean(x))])
    if n <= MAX_FULL_SEARCH:
        a, b = np.meshgrid(np.arange(n + 1), np.arange(n + 1), indexing="ij")
    else:
        k = np.arange(n + 1)
        a = np.concatenate([np.zeros(n + 1, int), k])
        b = np.concatenate([k, np.full(n + 1, n)])
    m = b - a
    ok = (m >= min_run) & (n - m >= min_run)
    with np.errstate(divide="ignore", invalid="ignore"):
        sum_in = s[b] - s[a]
        # the mean outside is -sum_in / (n - m) (x is centred)
        score = np.where(ok, np.abs(sum_in / m + sum_in / (n - m)) * np.sqrt(m * (n - m) / n),
                         -np.inf)
    i = np.unravel_index(np.argmax(score), score.shape) if score.ndim == 2 else np.argmax(score)
    if not np.isfinite(score[i]):
        return None
    return int(a[i]), int(b[i])


def _own_step(raw, t, a, b, step) -> bool:
    """Whether the sampler's own log values show the step of its ratio.

    With one or two other samplers, a slip of one of them makes a step in the ratio of
    this one too, but not in its own values.  The run's values are compared with the
    sampler's values of the same season (day of year within :data:`SEASON_DAYS`) in
    other years (more than 300 days apart): median of the differences; without such
    samples, with the samples next to the run (as many on each side as the run holds).
    The own step must go the way of the ratio's by more than half of it.
    """
    m = b - a
    rest = np.r_[np.arange(0, a), np.arange(b, len(raw))]
    day = (t - t.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    apart = np.abs((t[a:b, None] - t[None, rest]) / np.timedelta64(1, "D"))
    d = np.abs(day[a:b, None] - day[None, rest])
    same_season = (np.minimum(d, 365.25 - d) <= SEASON_DAYS) & (apart > 300)
    if same_season.any(axis=1).mean() > 0.5:
        diff = np.where(same_season, raw[a:b, None] - raw[None, rest], np.nan)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            own = float(np.nanmedian(np.nanmedian(diff, axis=1)))
    else:
        near = np.r_[raw[max(0, a - m):a], raw[b:b + m]]
        own = float(np.median(raw[a:b]) - np.median(near))
    return own * np.sign(step) > abs(step) / 2


def _spans(lines) -> str:
    lines = np.sort(np.asarray(lines))
    cut = np.flatnonzero(np.diff(lines) > 1) + 1
    parts = np.split(lines, cut)
    if len(parts) > 3:     # the sampler's rows among other samplers' rows
        return f"{len(lines)} rows among lines {lines[0]}-{lines[-1]}"
    return ", ".join(f"line {p[0]}" if len(p) == 1 else f"lines {p[0]}-{p[-1]}"
                     for p in parts)


def _robust_sd(x):
    return 1.4826 * np.median(np.abs(x - np.median(x)))


def sampler_step_notes(ds: xr.Dataset, units: dict, file_name: str,
                       values: dict | None = None) -> list[str]:
    """Notes naming rows of one sampler that look written in another unit.

    Parameters
    ----------
    ds : xarray.Dataset
        Air concentrations as read (:func:`workbench.io.samples.read_air`): dim
        ``period``; ``site``, ``sampler_id``, ``start``, ``end``, ``line``; gases
        [mol m-3] or [mol mol-1].
    units : dict
        Species -> (header as typed, unit as typed, element basis or None).
    file_name : str
        Named in the notes.
    values : dict, optional
        Species -> the cells as typed, by period (for the value quoted in the note).

    Returns
    -------
    list of str
        E.g. ``"a.csv: SO2 at ridge, sampler RDG-F1, lines 106-157 (2018-01-04 to
        2018-12-27, 52 samples): they read 0.376 x the sampler's other samples against
        the 3 other samplers of SO2 in the file (median of the log ratio, 312 of the 52
        + 312 ...): the ppb <-> ug/m3 factor of SO2 ...; these rows look like ppb, e.g.
        line 106 '2.19', where the header 'SO2 [ug/m3]' expects ug/m3 of SO2 (values not
        changed)"``.
    """
    notes = []
    if ds.sizes.get("period", 0) == 0:
        return notes
    site = ds["site"].values.astype(str)
    sampler = ds["sampler_id"].values.astype(str)
    line = ds["line"].values
    group = np.char.add(np.char.add(site, "\x1f"), sampler)
    start = ds["start"].values
    for sp in _species.AIR_GASES:
        if sp not in ds or sp not in units:
            continue
        header, unit, basis = units[sp]
        alts = []
        for alt_unit, alt_basis in gas_alternatives(sp, unit, basis):
            if concentration_kind(alt_unit) == concentration_kind(unit):
                continue     # a basis slip: more readings, more chance matches
            f = amount_per_number(unit, sp, basis) / amount_per_number(alt_unit, sp, alt_basis)
            alts.append((f, alt_unit, alt_basis))
        if not alts:
            continue
        v = _density(ds, sp)
        valid = np.isfinite(v) & (v > 0)
        names = np.unique(group[valid])
        if len(names) < 2:
            continue
        members = {g: np.flatnonzero(valid & (group == g)) for g in names}
        for g in names:
            rows = members[g]
            rows = rows[np.argsort(start[rows], kind="stable")]
            others = [members[o] for o in names if o != g]
            ref, n_ref = _log_reference(ds, v, sp, rows, others)
            keep = np.isfinite(ref)
            rows, x = rows[keep], np.log(v[rows[keep]]) - ref[keep]
            run = best_run(x)
            if run is None:
                continue
            a, b = run
            inside = np.zeros(len(x), bool)
            inside[a:b] = True
            xi, xo = x[inside], x[~inside]
            step = float(np.median(xi) - np.median(xo))
            se = np.sqrt((_robust_sd(xi) ** 2 + 1e-6) / len(xi)
                         + (_robust_sd(xo) ** 2 + 1e-6) / len(xo))
            if abs(step) / se < MIN_SCORE:
                continue
            mid = np.median(xo) + step / 2
            beyond = (x - mid) * np.sign(step) > 0
            # the run's edge samples on the near side belong to the rest
            a += int(np.argmax(beyond[a:b]))
            b -= int(np.argmax(beyond[a:b][::-1]))
            inside[:] = False
            inside[a:b] = True
            xi, xo = x[inside], x[~inside]
            far_in = np.mean((xi - mid) * np.sign(step) > 0)
            near_out = np.mean((xo - mid) * np.sign(step) < 0)
            if far_in <= SEPARATION or near_out <= SEPARATION:
                continue
            if not _own_step(np.log(v[rows]), start[rows], a, b, step):
                continue    # the reference stepped (a slip of another sampler)
            best = None
            for f, alt_unit, alt_basis in alts:
                for run_slipped, want in ((True, f), (False, 1.0 / f)):
                    dist = abs(step - np.log(want))
                    if dist <= np.log1p(STEP_TOL) and (best is None or dist < best[0]):
                        best = (dist, run_slipped, f, alt_unit, alt_basis)
            if best is None:
                continue
            _, run_slipped, f, alt_unit, alt_basis = best
            notes.append(_note(file_name, sp, g, rows, inside, run_slipped, step, f,
                               alt_unit, alt_basis, header, unit, basis, n_ref, line,
                               start, values, far_in, near_out))
    return notes


def _note(file_name, sp, g, rows, inside, run_slipped, step, f, alt_unit, alt_basis,
          header, unit, basis, n_ref, line, start, values, far_in, near_out):
    from .airslip import _describe
    site, sampler = g.split("\x1f")
    sus = rows[inside] if run_slipped else rows[~inside]
    rest = rows[~inside] if run_slipped else rows[inside]
    first = sus[np.argmin(line[sus])]
    cell = ""
    if values is not None and sp in values:
        cell = f" '{values[sp][first]}'"
    t0 = str(np.datetime_as_string(start[sus].min(), "D"))
    t1 = str(np.datetime_as_string(start[sus].max(), "D"))
    ratio = float(np.exp(step if run_slipped else -step))
    which = "these rows" if run_slipped else "these rows (the sampler's majority)"
    return (f"{file_name}: {sp} at {site}, sampler {sampler or '(none)'}, {_spans(line[sus])} "
            f"({t0} to {t1}, {len(sus)} samples): {which} read {ratio:.3g} x the sampler's "
            f"other {len(rest)} samples ({_spans(line[rest])}), each taken against the "
            f"median of the {n_ref} other sampler{'s' if n_ref > 1 else ''} of {sp} in the "
            f"file over its period ({far_in:.0%} and {near_out:.0%} of the two parts on "
            f"their own side of the step): {_describe(sp, unit, basis, alt_unit, alt_basis)}"
            f"; they look like {_reading(sp, alt_unit, alt_basis)}, e.g. line {line[first]}"
            f"{cell}, where the column {header!r} expects "
            f"{_reading(sp, unit, basis)} (values not changed)")
