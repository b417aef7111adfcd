"""A unit slip in a run of a lone air sampler's rows, seen in its own record.

:func:`workbench.io.airstep.sampler_step_notes` takes each sampler against the other
samplers of the gas in the file; a sampler alone in its file (one site, one filter pack)
has no reference and went without a word when a run of its weeks was written in ppb
under ``SO2 [ug/m3]``.  :func:`own_step_notes` looks at such a sampler's own record:

* its log values less the median of its own values in the same season (day of year
  within :data:`SEASON_DAYS`) of other years (more than 300 days apart), which takes
  out the seasonal cycle; a sample without such values is left out, so a record needs
  two years or more;
* the run of consecutive samples most apart from the rest (as
  :func:`workbench.io.airstep.best_run`), inside the record: at least :data:`EDGE`
  samples before and after it, for a unit changes at a row and back at a row, while a
  change of the sources (a plant closed, a new road) steps once and stays;
* the run and the rest each hold at least :data:`MIN_RUN` samples, the difference of
  their medians matches the log of the gas's ppb <-> ug/m3 factor at 20 degC,
  1013.25 hPa (:func:`workbench.io.airslip.gas_alternatives`; SO2 2.66, HNO3 2.62, NO2
  1.91, NH3 0.708 ug/m3 per ppb) or its inverse within :data:`STEP_TOL`, and is
  :data:`MIN_SCORE` robust standard errors wide;
* more than :data:`SEPARATION` of the run and of the rest lie on their own side of the
  midpoint of the two levels;
* each end of the run is abrupt: the median of the :data:`EDGE` samples just inside
  differs from that of the :data:`EDGE` just outside, the way of the step, by at least
  :data:`EDGE_SHARE` of the step.

The values are never changed: one ledger note names the file, the lines, the column, a
value and what the header expects.  The thresholds were set against false alarms on
invented clean records (benchmarks/air_own_step.py; docs/data_formats.md section 3):
a modest detection rate is the price.
"""
from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .. import species as _species
from ..units import concentration_kind
from .airslip import _density, _describe, _reading, amount_per_number, gas_alternatives
from .airstep import _robust_sd, _spans

#: Fewest samples of the run and of the rest [-] (our choice, with
#: benchmarks/air_own_step.py).
MIN_RUN = 10
#: Samples on each side of each end of the run for its jump [-] (four weeks of a weekly
#: sampler; our choice).
EDGE = 4
#: Largest relative distance of the step from the unit factor [-] (as airstep; our choice).
STEP_TOL = 0.15
#: Share of the run and of the rest on their own side of the midpoint [-] (our choice).
SEPARATION = 0.75
#: Step width in robust standard errors [-] (our choice, held by the false-alarm measure
#: of benchmarks/air_own_step.py).
MIN_SCORE = 6.0
#: Smallest jump at each end of the run as a share of the step [-] (our choice).
EDGE_SHARE = 0.6
#: Largest difference of the levels before and after the run as a share of the step [-]
#: (our choice).
RETURN_SHARE = 0.5
#: Samples before and after the run whose levels are compared (a year of weekly
#: samples) [-].
RETURN_SAMPLES = 52
#: Half-width of the season of other years a sample is taken against [days] (30: a
#: month either side, as airstep; our choice).
SEASON_DAYS = 30.0
#: Most samples of a record judged (the season reference is an n x n comparison) [-].
MAX_SAMPLES = 1500


def deseasoned(logv: np.ndarray, t: np.ndarray, usable=None) -> np.ndarray:
    """Log values less the median of the same sampler's log values in the same season
    (day of year within :data:`SEASON_DAYS`) of other years (more than 300 days apart);
    NaN where there are none [-].  `usable` (bool per sample) limits the values the
    medians are taken of (a candidate run left out of the reference).

    >>> t = np.datetime64("2018-01-04") + np.arange(156) * np.timedelta64(7, "D")
    >>> doy = (t - t.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    >>> r = deseasoned(np.cos(2 * np.pi * doy / 365.25), t)
    >>> bool(np.nanmax(np.abs(r)) < 0.35)
    True
    """
    day = (t - t.astype("datetime64[Y]")) / np.timedelta64(1, "D")
    apart = np.abs((t[:, None] - t[None, :]) / np.timedelta64(1, "D"))
    d = np.abs(day[:, None] - day[None, :])
    same = (np.minimum(d, 365.25 - d) <= SEASON_DAYS) & (apart > 300)
    if usable is not None:
        same &= np.asarray(usable, bool)[None, :]
    ref = np.where(same, logv[None, :], np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return logv - np.nanmedian(ref, axis=1)


def interior_run(x: np.ndarray, min_run: int = MIN_RUN, edge: int = EDGE):
    """The run of consecutive values most apart from the rest, with at least `edge`
    values before and after it and `min_run` inside and outside.

    Parameters
    ----------
    x : ndarray
        Values in order [-].

    Returns
    -------
    (a, b) or None
        The run is ``x[a:b]``.

    >>> interior_run(np.r_[np.zeros(10), np.ones(12), np.zeros(10)])
    (10, 22)
    """
    n = len(x)
    if n < min_run + max(min_run, 2 * edge):
        return None
    s = np.concatenate([[0.0], np.cumsum(x - np.mean(x))])
    a, b = np.meshgrid(np.arange(n + 1), np.arange(n + 1), indexing="ij")
    m = b - a
    ok = (m >= min_run) & (n - m >= min_run) & (a >= edge) & (b <= n - edge)
    with np.errstate(divide="ignore", invalid="ignore"):
        sum_in = s[b] - s[a]
        score = np.where(ok, np.abs(sum_in / m + sum_in / (n - m)) * np.sqrt(m * (n - m) / n),
                         -np.inf)
    i = np.unravel_index(np.argmax(score), score.shape)
    if not np.isfinite(score[i]):
        return None
    return int(a[i]), int(b[i])


def judge(x: np.ndarray, factors, raw=None, minority_only=True):
    """Whether the deseasoned log values `x` hold a run one of `factors` off the rest.

    Parameters
    ----------
    x : ndarray
        Deseasoned log values in time order (no NaN) [-].
    factors : sequence of float
        Unit factors tried (the run reads f x the rest: the run is in the other unit) [-].
    raw : ndarray, optional
        The log values themselves, in the same order [-]: the level of up to a year of
        them before the run and after it must agree within :data:`RETURN_SHARE` of the
        step (a unit comes back; a change of the sources stays).
    minority_only : bool
        Only the run, at most half the record, is tried as the slipped part (True); a
        rest in the other unit around a run in the header's unit is not tried.

    Returns
    -------
    dict or None
        ``a``, ``b`` (the run ``x[a:b]``), ``step`` (median inside less outside),
        ``factor`` and ``run_slipped`` (the run, not the rest, is in the other unit),
        ``far_in``, ``near_out``; None when no run passes every test.
    """
    run = interior_run(x)
    if run is None:
        return None
    a, b = run
    inside = np.zeros(len(x), bool)
    inside[a:b] = True
    xi, xo = x[inside], x[~inside]
    step = float(np.median(xi) - np.median(xo))
    se = np.sqrt((_robust_sd(xi) ** 2 + 1e-6) / len(xi) + (_robust_sd(xo) ** 2 + 1e-6) / len(xo))
    if abs(step) / se < MIN_SCORE:
        return None
    best = None
    if minority_only and b - a > len(x) / 2:
        return None
    for f in factors:
        for run_slipped, want in ((True, f),) if minority_only else ((True, f), (False, 1 / f)):
            dist = abs(step - np.log(want))
            if dist <= np.log1p(STEP_TOL) and (best is None or dist < best[0]):
                best = (dist, run_slipped, f)
    if best is None:
        return None
    mid = np.median(xo) + step / 2
    far_in = float(np.mean((xi - mid) * np.sign(step) > 0))
    near_out = float(np.mean((xo - mid) * np.sign(step) < 0))
    if far_in <= SEPARATION or near_out <= SEPARATION:
        return None
    jump_a = np.median(x[a:a + EDGE]) - np.median(x[a - EDGE:a])
    jump_b = np.median(x[b - EDGE:b]) - np.median(x[b:b + EDGE])
    if min(jump_a * np.sign(step), jump_b * np.sign(step)) < EDGE_SHARE * abs(step):
        return None
    if raw is not None:
        before, after = raw[max(0, a - RETURN_SAMPLES):a], raw[b:b + RETURN_SAMPLES]
        if abs(np.median(before) - np.median(after)) > RETURN_SHARE * abs(step):
            return None
    return {"a": a, "b": b, "step": step, "factor": best[2], "run_slipped": best[1],
            "far_in": far_in, "near_out": near_out}


def own_step_notes(ds: xr.Dataset, units: dict, file_name: str,
                   values: dict | None = None) -> list[str]:
    """Notes naming a run of rows of a lone sampler that look written in another unit.

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
        One note per gas whose only sampler in the file holds such a run.
    """
    notes = []
    if ds.sizes.get("period", 0) == 0:
        return notes
    site = ds["site"].values.astype(str)
    sampler = ds["sampler_id"].values.astype(str)
    group = np.char.add(np.char.add(site, "\x1f"), sampler)
    start, line = ds["start"].values, ds["line"].values
    for sp in _species.AIR_GASES:
        if sp not in ds or sp not in units:
            continue
        header, unit, basis = units[sp]
        alts = [(amount_per_number(unit, sp, basis) / amount_per_number(u, sp, bb), u, bb)
                for u, bb in gas_alternatives(sp, unit, basis)
                if concentration_kind(u) != concentration_kind(unit)]
        if not alts:
            continue
        v = _density(ds, sp)
        valid = np.isfinite(v) & (v > 0)
        names = np.unique(group[valid])
        if len(names) != 1:
            continue          # two samplers or more: airstep's reference does the work
        rows = np.flatnonzero(valid)
        rows = rows[np.argsort(start[rows], kind="stable")]
        if len(rows) > MAX_SAMPLES:
            continue
        got, rows = _two_passes(np.log(v[rows]), start[rows].astype("datetime64[s]"), rows,
                                [f for f, _, _ in alts])
        if got is None:
            continue
        f, alt_unit, alt_basis = next(t for t in alts if t[0] == got["factor"])
        notes.append(_note(file_name, sp, names[0], rows, got, f, alt_unit, alt_basis,
                           header, unit, basis, line, start, values))
    return notes


def _two_passes(logv, t, rows, factors):
    """:func:`judge` on the record deseasoned by all its values, then again with the
    run found left out of the season reference (a slipped year in the reference moves
    the other years' residuals by a part of the step); the second verdict counts.
    Returns (verdict or None, the rows judged)."""
    x = deseasoned(logv, t)
    keep = np.isfinite(x)
    if keep.mean() <= 0.5:
        return None, rows     # under two years: no season of other years to take out
    first = interior_run(x[keep])
    if first is None:
        return None, rows
    usable = np.ones(len(logv), bool)
    usable[np.flatnonzero(keep)[first[0]:first[1]]] = False
    x = deseasoned(logv, t, usable)
    keep = np.isfinite(x)
    if keep.mean() <= 0.5:
        return None, rows
    return judge(x[keep], factors, logv[keep]), rows[keep]


def _note(file_name, sp, g, rows, got, f, alt_unit, alt_basis, header, unit, basis, line,
          start, values):
    site, sampler = g.split("\x1f")
    inside = np.zeros(len(rows), bool)
    inside[got["a"]:got["b"]] = True
    run_slipped = got["run_slipped"]
    sus = rows[inside] if run_slipped else rows[~inside]
    rest = rows[~inside] if run_slipped else rows[inside]
    first = sus[np.argmin(line[sus])]
    cell = f" '{values[sp][first]}'" if values is not None and sp in values else ""
    t0 = str(np.datetime_as_string(start[rows[inside]].min(), "D"))
    t1 = str(np.datetime_as_string(start[rows[inside]].max(), "D"))
    step = got["step"]
    ratio = float(np.exp(step if run_slipped else -step))
    which = "these rows" if run_slipped else "the rows outside them (the sampler's majority)"
    return (f"{file_name}: {sp} at {site}, sampler {sampler or '(none)'}, the only sampler "
            f"of {sp} in the file: {_spans(line[rows[inside]])} ({t0} to {t1}, "
            f"{int(inside.sum())} samples) step off the rest of its own record at both "
            f"ends; {which} read {ratio:.3g} x the other {len(rest)} samples (each less the "
            f"median of the same season in the sampler's other years; "
            f"{got['far_in']:.0%} and {got['near_out']:.0%} of the two parts on their own "
            f"side of the step): {_describe(sp, unit, basis, alt_unit, alt_basis)}; they look "
            f"like {_reading(sp, alt_unit, alt_basis)}, e.g. line {line[first]}{cell}, where "
            f"the column {header!r} expects {_reading(sp, unit, basis)} (values not changed)")
