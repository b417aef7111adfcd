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
