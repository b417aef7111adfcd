"""Notes of the wet chain on the sea-salt correction: the samples used without a value
of the tracer, the samples whose non-sea-salt SO4 stands at a floor (split from
:mod:`workbench.wet.deposition`, which re-exports every name).
"""
from __future__ import annotations

import numpy as np
import pandas as pd


def _sample_names(screened, rows):
    """"YYYY-MM-DD line N" of each sample `rows` (indices of the screened intervals),
    the date of its start and its line in the file ("YYYY-MM-DD" where no line)."""
    start = pd.DatetimeIndex(screened.variables["start"].values[rows]).strftime("%Y-%m-%d")
    line = (screened.variables["line"].values[rows] if "line" in screened.variables
            else np.full(len(rows), -1))
    return [f"{d} line {int(n)}" if n >= 0 else d for d, n in zip(start, line)]


def _tracer_gaps(screened, table, weight, used, flat, shape, precip, ion, tracer, silent):
    """Words naming the samples of each (site, period) whose `ion` is used without a value
    of the sea-salt `tracer` ("" where none, or where `silent`).

    The nss PWM subtracts the tracer's PWM over the samples that have it from the ion's
    PWM over the samples that have the ion: a sample without the tracer is thereby given
    the period's tracer PWM of its other samples (docs/methods_wet.md section 8).
    """
    i = table["interval"].values
    c_ion = np.asarray(screened.variables[ion].values, float)[i]
    c_tr = np.asarray(screened.variables[tracer].values, float)[i]
    hit = used & np.isfinite(c_ion) & ~np.isfinite(c_tr) & (weight > 0)
    out = np.full(shape, "", dtype=object)
    if not hit.any():
        return out
    name = _sample_names(screened, i[hit])
    g = pd.DataFrame({"flat": flat[hit], "name": name, "w": weight[hit]})
    agg = g.groupby("flat").agg(names=("name", ", ".join), n=("name", "size"), w=("w", "sum"))
    cells = agg.index.to_numpy()
    s_, p_ = np.unravel_index(cells, shape)
    pct = 100 * agg["w"].to_numpy() / np.where(precip[s_, p_] > 0, precip[s_, p_], np.nan)
    words = [f"{tracer} missing in {n} sample{'s' if n > 1 else ''} with {ion} (from {names}; "
             f"{p:.1f} % of the precipitation): sea salt taken as the period's {tracer} PWM "
             "of its other samples" for n, names, p in zip(agg["n"], agg["names"], pct)]
    out[s_, p_] = words
    return np.where(silent, "", out).astype(object)


def _seasalt_floor_notes(screened, table, weight, used, flat, shape, tracer, treatment):
    """Words naming the samples of each (site, period) whose SO4 below detection took its
    sea-salt sulfate as a floor (``SO4_seasalt_floor`` of the screening); "" elsewhere.

    The sentence follows the air's (:func:`workbench.drycomponents.censored_nss_notes`).
    """
    out = np.full(shape, "", dtype=object)
    if "SO4_seasalt_floor" not in screened.variables:
        return out
    i = table["interval"].values
    hit = used & np.asarray(screened.variables["SO4_seasalt_floor"].values, bool)[i] & (weight > 0)
    if not hit.any():
        return out
    name = _sample_names(screened, i[hit])
    agg = pd.DataFrame({"flat": flat[hit], "name": name}).groupby("flat")["name"].agg(list)
    sub = {"half": "half", "limit": "all", "zero": "none"}.get(treatment, treatment)
    s_, p_ = np.unravel_index(agg.index.to_numpy(), shape)
    out[s_, p_] = [
        f"SO4 below detection beside {tracer} in {len(v)} sample{'s' if len(v) > 1 else ''} "
        f"(from {', '.join(v)}): their SO4 taken as the sea-salt sulfate of their {tracer} "
        f"plus {sub} of (limit - sea salt), so their non-sea-salt SO4 is {sub} of (limit - "
        "sea salt), 0 where the sea salt reaches the limit (as the air's pSO4)"
        for v in agg.to_numpy()]
    return out


#: Samples named at most in the words of a period's failed sample coverage; the rest
#: are counted (our choice: a month holds four or five weekly samples).
UNCOVERED_NAMED = 3


def _hours_text(h):
    """Hours as written in a note: whole where whole ("168 h"), else to 0.1 h."""
    h = float(h)
    return f"{h:.0f} h" if abs(h - round(h)) < 0.05 else f"{h:.1f} h"


def uncovered_words(screened, table, piece_uncovered, gap_hours, short, flat, shape,
                    period_hours):
    """Words naming what a period whose sample coverage fails misses, per (site, period):
    each sample not used whose hours no used sample covers (its start, its line, its
    hours in the period and why it is not used, at most :data:`UNCOVERED_NAMED`, the
    rest counted), then the hours without any sample; ``""`` where the coverage passes.

    Parameters
    ----------
    screened : xarray.Dataset
        The screened samples (``start``, ``line``, ``status``, ``reasons``).
    table : pandas.DataFrame
        The samples' pieces per period (``interval``, ``hours`` [h]).
    piece_uncovered : ndarray
        Hours of each piece that no covering sample of the site covers [h].
    gap_hours : ndarray (site, period)
        Hours of the period without any sample [h].
    short : ndarray of bool (site, period)
        Where the sample coverage falls short of its minimum.
    flat : ndarray of int
        Flat (site, period) cell of each piece.
    shape : tuple
        (sites, periods).
    period_hours : ndarray (site, period)
        Hours of each period [h].

    Returns
    -------
    ndarray of object (site, period)
        e.g. ``", not covered: 168 h (22.6 %) of sample 2021-03-09 line 11 (excluded:
        flag contaminated: visibly contaminated)"``; the words' own reasons sit in
        parentheses, so a '; '-split of the notes keeps them whole.
    """
    out = np.full(shape, "", dtype=object)
    short_flat = np.asarray(short, bool).ravel()
    gap_flat = np.asarray(gap_hours, float).ravel()
    p_hours = np.broadcast_to(np.asarray(period_hours, float), shape).ravel()

    def share(h, cell):
        return f"{_hours_text(h)} ({100.0 * h / p_hours[cell]:.1f} %)"
    pick = np.flatnonzero(short_flat[flat] & (piece_uncovered >= 0.05))
    if not short_flat.any():
        return out
    # in time order (then by line), whatever the order of the file's rows
    starts = screened.variables["start"].values.astype("datetime64[ns]")
    lines = (screened.variables["line"].values if "line" in screened.variables
             else np.zeros(screened.sizes["sample"], int))
    iv = table["interval"].values[pick]
    pick = pick[np.lexsort((lines[iv], starts[iv]))]
    rows = table["interval"].values[pick]
    names = _sample_names(screened, rows)
    status = screened.variables["status"].values.astype(str)[rows]
    why = (screened.variables["reasons"].values.astype(str)[rows]
           if "reasons" in screened.variables else np.full(len(rows), ""))
    per_cell = {}
    for cell, name, st, w, h in zip(flat[pick], names, status, why, piece_uncovered[pick]):
        text = f"{share(h, cell)} of sample {name} ({st}" + (f": {w})" if w and w != "nan"
                                                              else ")")
        per_cell.setdefault(int(cell), []).append((text, h))
    flat_out = out.ravel()
    for cell in np.flatnonzero(short_flat):    # the failing periods, never the hours
        parts = [t for t, _ in per_cell.get(int(cell), [])[:UNCOVERED_NAMED]]
        rest = per_cell.get(int(cell), [])[UNCOVERED_NAMED:]
        if rest:
            parts.append(f"{len(rest)} more samples not used "
                         f"({share(sum(h for _, h in rest), cell)})")
        if gap_flat[cell] >= 0.05:
            parts.append(f"{share(gap_flat[cell], cell)} without any sample")
        if parts:
            flat_out[cell] = ", not covered: " + ", ".join(parts)
    return flat_out.reshape(shape)
