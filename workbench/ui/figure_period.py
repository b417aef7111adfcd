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


#: Width of a character of a tick label at plotly's 12 px font [px] (digits ~6.8 px,
#: measured in chromium: "2016" 27 px wide) and the gap kept beside a level label [px].
CHAR_PX, LEVEL_GAP_PX = 7.0, 12.0
#: Height of a line of tick label at plotly's 12 px font [px] (measured in chromium: 14).
LINE_PX = 14.0
#: Angle of period labels that do not fit level [degrees] (slanted, read without turning
#: the head, as the network's years: workbench.ui.figures_network.YEAR_ANGLE).
SLANT_ANGLE = -45
#: Gap between two slanted labels, across their lines [px] (our choice).
SLANT_GAP_PX = 4.0
#: Steps of the periods named when not every one fits, as the network's years.
STEPS = (2, 3, 5, 10, 20, 50, 100)


def label_pitch(angle: float) -> float:
    """Least distance between the centres of two neighbouring tick labels of one line
    turned by `angle` [degrees, not 0] that keeps :data:`SLANT_GAP_PX` between them [px]:
    parallel lines of text :data:`LINE_PX` high, so their horizontal pitch is
    (LINE_PX + gap) / |sin(angle)|."""
    return (LINE_PX + SLANT_GAP_PX) / abs(np.sin(np.radians(angle)))


def period_ticks(periods, room_px: float) -> dict:
    """Ticks of a category axis of `periods` (labels, in order) in a plot `room_px` wide:
    every period level where they fit side by side (each :data:`CHAR_PX` a character and
    :data:`LEVEL_GAP_PX`), else slanted at :data:`SLANT_ANGLE` where each has its
    :func:`label_pitch`, else every k-th (k of :data:`STEPS`; years named at multiples of
    k where any is), level or slanted as they fit.  No two labels touch, and a category
    axis draws no group line for them to touch.

    >>> t = period_ticks([str(y) for y in range(2016, 2024)], 130)
    >>> t["tickvals"], t["tickangle"]
    (['2016', '2018', '2020', '2022'], -45)
    >>> period_ticks(["2023"], 100)["tickangle"]
    0
    """
    names = [str(p) for p in periods]
    chars = max((len(n) for n in names), default=4)
    level_px = chars * CHAR_PX + LEVEL_GAP_PX
    slant_px = label_pitch(SLANT_ANGLE)
    pitch = room_px / max(len(names), 1)            # room of one category [px]
    shown, step = names, 1
    for k in (1, *STEPS):
        if pitch * k >= min(level_px, slant_px) or k == STEPS[-1]:
            step = k
            break
    if step > 1:
        numeric = all(n.isdigit() for n in names)
        shown = [n for n in names if numeric and int(n) % step == 0]
        if len(shown) < 2 or names.index(shown[0]) >= step:
            shown = names[::step]
    level = pitch * step >= level_px
    return {"type": "category", "tickmode": "array", "tickvals": shown, "ticktext": shown,
            "tickangle": 0 if level else SLANT_ANGLE,
            "categoryorder": "array", "categoryarray": names}


#: Width of a character of a figure's title at plotly's 17 px title font [px]: measured
#: in chromium, "Resistances of NH3 (medians by hour) · mere · wetland · 2021-2023"
#: (66 characters) drew 513 px wide; plotly starts a title at 5 % of the figure's width.
TITLE_CHAR_PX = 7.8
#: Share of a figure's width a title line may take (5 % left of it, 5 % kept right).
TITLE_SHARE = 0.9


def title_chars(width_px: float) -> int:
    """Most characters of one title line in a figure `width_px` wide [px].

    >>> title_chars(520)
    60
    """
    return int(TITLE_SHARE * width_px / TITLE_CHAR_PX)


def fit_title(title: str, width_px: float) -> str:
    """`title` with each line that is too long for a figure `width_px` wide [px] broken
    (plotly's ``<br>``) after its first part: the what on one line, the where and when
    after the first middle dot on the next (``Resistances of NH3 (medians by hour)`` /
    ``mere · wetland · 2021–2023``); a part still too long wraps at spaces.  Plotly
    neither wraps nor shrinks a title: a 71-character title of a 520 px figure was cut
    at the figure's edge, in the middle of its years.

    >>> fit_title("Budget · ridge · 2023", 520)
    'Budget · ridge · 2023'
    >>> fit_title("Resistances of NH3 (medians by hour) · mere · wetland · 2021–2023", 520)
    'Resistances of NH3 (medians by hour)<br>mere · wetland · 2021–2023'
    """
    import textwrap
    chars = title_chars(width_px)
    out = []
    for line in str(title).split("<br>"):
        if len(line) <= chars:
            out.append(line)
            continue
        parts = line.split(" · ", 1) if " · " in line else [line]
        for part in parts:
            out.extend(textwrap.wrap(part, chars) if len(part) > chars else [part])
    return "<br>".join(out)
