"""Percent changes that say why there is none.

A change in percent is 100 (new - old) / old, and it means something only when the old
value (the base) is a positive amount.  The workbench shows one in three places (``workbench
compare``'s ``change_percent``, the site explorer's change line and its gas-scheme tab);
all three follow the rule here (docs/budget.md, "Changes in percent"):

- base above 0 and both values present: the percent;
- base 0: no percent (a division by 0 gave "inf %" in compare);
- base below 0 (a net emission: dry NH3 with bidirectional exchange, or a total that
  holds it): no percent.  A percent of a negative base has its sign flipped (-2 -> -1
  read "-50 %" for a rise of 1, i.e. less emission), and one relative to |old| changes
  meaning where the value crosses 0; the absolute change and words say it instead;
- either value missing: no percent.

Each "no percent" comes with its reason in words (:func:`no_percent_reason`).
"""
from __future__ import annotations

import numpy as np

__all__ = ["percent_change", "no_percent_reason", "emission_words"]


def percent_change(old, new):
    """100 (new - old) / old where `old` > 0 and both are finite, else NaN [%].

    Parameters
    ----------
    old, new : float or array_like
        The value before (the base) and after [any one unit].

    Returns
    -------
    float or ndarray
        The change in percent of `old` [%]; a float for scalars.

    >>> round(percent_change(8.3, 7.9), 2), percent_change(0.0, 1.0), percent_change(-2.0, -1.0)
    (-4.82, nan, nan)
    """
    o, n = np.asarray(old, float), np.asarray(new, float)
    ok = np.isfinite(o) & np.isfinite(n) & (o > 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(ok, 100.0 * (n - o) / np.where(ok, o, 1.0), np.nan)
    return float(out) if out.ndim == 0 else out


def no_percent_reason(old, new, first="the first value", second="the second value"):
    """Why :func:`percent_change` gives no percent, in words; ``""`` where it gives one.

    Parameters
    ----------
    old, new : float or array_like
        As :func:`percent_change`.
    first, second : str
        What `old` and `new` are called (``"the first run's value"``).

    Returns
    -------
    str or ndarray of str

    >>> no_percent_reason(0.0, 1.0, "the first run's value")
    "no percent: the first run's value is 0"
    >>> no_percent_reason(-2.0, -1.0)
    'no percent: the first value is below 0, a net emission'
    """
    o, n = np.asarray(old, float), np.asarray(new, float)
    o, n = np.broadcast_arrays(o, n)
    out = np.select(
        [np.isnan(o) & np.isnan(n), np.isnan(o), np.isnan(n), o == 0, o < 0],
        [f"no percent: no value in either ({first}, {second})",
         f"no percent: {first} is missing", f"no percent: {second} is missing",
         f"no percent: {first} is 0", f"no percent: {first} is below 0, a net emission"],
        "")
    out = out.astype(object)
    return str(out) if out.ndim == 0 else out


def emission_words(old: float, new: float) -> str:
    """What a change from a value below 0 (a net emission) means, in words.

    >>> emission_words(-2.0, -1.0), emission_words(-1.0, -2.0), emission_words(-1.0, 0.5)
    ('less net emission', 'more net emission', 'from net emission to net deposition')
    """
    if not (old < 0) or not np.isfinite(new) or new == old:
        return ""
    if new > 0:
        return "from net emission to net deposition"
    return "less net emission" if new > old else "more net emission"
