"""The period a site figure shows, in its title: ``2023``, ``2019–2023`` (a reader of a
single figure, in the report or a notebook, must see which year it is)."""
from __future__ import annotations

import numpy as np
import pandas as pd

#: Between the first and the last period of a span (an en dash, as in "2019–2023").
SPAN_DASH = "–"


def span_label(periods) -> str:
    """``2023`` for one period, ``2019–2023`` for several (the first and the last in
    order), ``""`` for none; months and seasons as their labels (``2021-01–2021-12``).

    >>> span_label(["2023"]), span_label(["2021", "2019", "2020"]), span_label([])
    ('2023', '2019–2021', '')
    """
    names = sorted({str(p) for p in periods if str(p) not in ("", "span", "nan")})
    if not names:
        return ""
    return names[0] if len(names) == 1 else f"{names[0]}{SPAN_DASH}{names[-1]}"


def bounds_label(start=None, end=None) -> str:
    """The calendar years of the instants [start, end) as :func:`span_label` writes them
    (``""`` unless both are given): ``("2021-01-01", "2022-01-01")`` is ``2021``.

    >>> bounds_label("2019-01-01", "2022-01-01"), bounds_label(None, "2022-01-01")
    ('2019–2021', '')
    """
    if start is None or end is None:
        return ""
    first = pd.Timestamp(start).year
    last = (pd.Timestamp(end) - np.timedelta64(1, "ns")).year      # end is exclusive
    return span_label([str(first), str(last)])


def with_period(title: str, period: str) -> str:
    """`title` with `period` after a middle dot, as the other parts of a figure's title
    (``Budget · fell · grass · 2023``); `title` alone when `period` is empty."""
    return f"{title} · {period}" if period else title
