"""The change line (:func:`change_line`): each total before and after a change, with
its percent where the value before is above 0 (:mod:`workbench.percent`), and the
numbers as the apps write them (:func:`_fmt`).  :mod:`.summaries` re-exports these
names.
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from ..percent import emission_words, no_percent_reason, percent_change

#: Decimals of the change line: at least this many, more until the two numbers
#: differ (up to the most); numbers of 1000 and more are shown whole.
DECIMALS, MAX_DECIMALS = 1, 4
#: From this size on a number is shown without decimals.
WHOLE_FROM = 1000.0


def _fmt(v: float, decimals=DECIMALS) -> str:
    """`v` as the apps write it; a value that rounds to zero is "0.0", never "-0.0"
    (a sum of components cancelling to -1e-17 read as a negative deposition)."""
    if not np.isfinite(v):
        return "n/a"
    text = f"{v:,.0f}" if abs(v) >= WHOLE_FROM else f"{v:.{decimals}f}"
    return text[1:] if text.startswith("-") and not text.strip("-0.,") else text


def _decimals(old: float, new: float) -> int:
    """Fewest decimals (from :data:`DECIMALS`) that tell `old` and `new` apart."""
    for d in range(DECIMALS, MAX_DECIMALS + 1):
        if _fmt(old, d) != _fmt(new, d):
            return d
    return DECIMALS


def change_line(before: pd.DataFrame | None, after: pd.DataFrame, unit="kg/ha/yr",
                totals=("S_total", "N_total")) -> str:
    """One line of text with the change of each total, e.g.
    ``S total 8.3 -> 7.9 kg/ha/yr, -4.8 %``.

    The percent is of the value before, and only where it is above 0
    (:mod:`workbench.percent`); from 0, from below 0 (a net emission: dry NH3 with
    bidirectional exchange) or from a missing value the line gives the absolute change
    and why there is no percent: ``N dry -2.0 -> -1.0 kg/ha/yr, +1.0 kg/ha/yr (less net
    emission; no percent: the value before is below 0, a net emission)``.  Before the
    2026-12 review a base below 0 flipped the sign (-50 % for that rise) and a base of 0
    gave nothing.

    Parameters
    ----------
    before, after : pandas.DataFrame
        Outputs of :func:`mean_totals` (index ``total``) before and after a change;
        `before` None gives the current values only.

    >>> a = pd.DataFrame({"value": [8.3], "status": ["complete"]}, index=["S_total"])
    >>> b = pd.DataFrame({"value": [7.9], "status": ["complete"]}, index=["S_total"])
    >>> change_line(a, b, totals=("S_total",))
    'S total 8.3 -> 7.9 kg/ha/yr, -4.8 %'
    """
    parts = []
    for name in totals:
        el, pw = name.split("_")
        label = f"{el} {pw}"
        new = float(after.loc[name, "value"]) if name in after.index else np.nan
        st = after.loc[name, "status"] if name in after.index else "missing"
        miss = (str(after.loc[name, "missing"]).split()
                if name in after.index and "missing" in after else [])
        # a flagged total lacking a component (flagged wins in the status of a sum)
        # names the component, as a partial one does
        # a total failing completeness says so: 'flagged' alone is also a passing
        # total to read with care
        fails = (name in after.index and "passes" in after
                 and not bool(after.loc[name, "passes"]) and st != "missing")
        st = "fails completeness" if fails else st
        words = [w for w in (st if st != "complete" else "",
                             f"no {', '.join(miss)}" if miss and st != "missing" else "") if w]
        tail = f" ({', '.join(words)})" if words else ""
        if before is None or name not in before.index:
            parts.append(f"{label} {_fmt(new)} {unit}{tail}")
            continue
        old = float(before.loc[name, "value"])
        d = _decimals(old, new) if np.isfinite(old) and np.isfinite(new) else DECIMALS
        parts.append(f"{label} {_fmt(old, d)} -> {_fmt(new, d)} {unit}"
                     f"{_change_words(old, new, d, unit)}{tail}")
    return "; ".join(parts)


def _change_words(old: float, new: float, decimals: int, unit: str) -> str:
    """The change of :func:`change_line` after the two values: ``, -4.8 %`` from a base
    above 0; ``, no change``; else the absolute change [unit] and why there is no
    percent (a base of 0, below 0: a net emission, or missing; workbench.percent)."""
    if np.isfinite(old) and np.isfinite(new) and new == old:
        return ", no change" if old <= 0 else f", {percent_change(old, new):+.1f} %"
    pct = percent_change(old, new)
    if np.isfinite(pct):
        return f", {pct:+.1f} %"
    reason = no_percent_reason(old, new, "the value before", "the value after")
    if not (np.isfinite(old) and np.isfinite(new)):
        return f" ({reason})"
    words = emission_words(old, new)
    step = _fmt(new - old, decimals)
    step = step if step.startswith("-") else "+" + step
    return f", {step} {unit} ({words + '; ' if words else ''}{reason})"
