"""Figures of precipitation-chemistry QA: ion balance, capture efficiency, reasons.

Pure functions: the screened samples (:func:`workbench.wet.screen`) in, a plotly
figure out.  The acceptance envelope of the ion balance is drawn from the same tiers
and the same function (:func:`workbench.wet.qa.tier_limit`) that screen the samples.
"""
from __future__ import annotations

import numpy as np

from ..wet.options import WetOptions
from ..wet.qa import tier_limit
from .figure_period import bounds_label, with_period
from .figures import from_spec, legend_height, legend_lines
from .palette import ENVELOPE_FILL, OKABE_ITO, SAMPLE_STATUS_STYLE, TEMPLATE
from .summaries import excluded_samples, in_span, reason_counts

#: Points along the envelope's edges (log-spaced in CE + AN).
ENVELOPE_POINTS = 400
#: Range of CE + AN drawn for the envelope [ueq/L]: from this lowest value ...
ENVELOPE_LOW = 1.0
#: ... to this factor above the largest sample.
ENVELOPE_HEADROOM = 1.5
#: Height of a QA figure [px].
HEIGHT = 420
#: Counts up to this get a tick at every whole number.
INTEGER_TICKS_UP_TO = 10
#: A log axis spanning at least this many decades is labelled at its decades only;
#: a shorter one at 1, 2 and 5 of each decade.  plotly labelled every digit (2, 3 ... 9)
#: of the ion balance's axes in a 660 px figure: the labels ran into each other.
LOG_LABEL_DECADES = 1.5


def log_ticks(low: float, high: float) -> dict:
    """Tick settings of a log axis running from about `low` to `high` [the axis' unit]:
    labels at the decades, or at 1, 2 and 5 of each decade written whole (``50``,
    ``200``: plotly's own "D2" wrote a small "5" and "2") on a short axis; unlabelled
    minor ticks at the other digits."""
    lo, hi = (float(v) for v in (low, high))
    if not (np.isfinite(lo) and np.isfinite(hi) and 0 < lo < hi):
        return {}
    minor = {"ticks": "outside", "ticklen": 3, "dtick": "D1"}
    if np.log10(hi / lo) >= LOG_LABEL_DECADES:
        return {"dtick": 1, "minor": minor}
    # a margin of a decade each side: the axis runs a little past the values given
    k = np.arange(np.floor(np.log10(lo)) - 1, np.ceil(np.log10(hi)) + 2)
    vals = [float(d * 10.0 ** e) for e in k for d in (1, 2, 5)]
    return {"tickmode": "array", "tickvals": vals, "ticktext": [f"{v:g}" for v in vals],
            "minor": minor}


#: Sample statuses drawn, in this order.
STATUSES = ("used", "flagged", "excluded")


def _pick(screened, site, start=None, end=None):
    return screened.isel(sample=np.flatnonzero(in_span(screened, site, start, end)))


def _hover(s):
    reasons = s["reasons"].values.astype(str)
    return [f"line {ln}, {str(a)[:10]} to {str(b)[:10]}<br>{r if r else 'no reason'}"
            for ln, a, b, r in zip(s["line"].values, s["start"].values, s["end"].values, reasons)]


def ion_balance_envelope(tiers, upper: float, lower: float = ENVELOPE_LOW):
    """Edges of the ion-balance acceptance region in the (AN, CE) plane [ueq/L].

    A sample passes when :math:`|ID| = 100 |CE - AN| / (CE + AN) \\le L(CE + AN)`,
    so the edges at a sum :math:`s` are :math:`CE = s (1 \\pm L/100) / 2`,
    :math:`AN = s (1 \\mp L/100) / 2` (WMO GAW Report No. 160, 2004, Section 8, from
    memory; the tiers are those of the options).

    Parameters
    ----------
    tiers : sequence of (bound [ueq/L], limit [%])
    upper, lower : float
        Range of CE + AN drawn. [ueq/L]

    Returns
    -------
    an, ce : ndarray
        A closed polygon (upper edge, then the lower edge backwards). [ueq/L]
    """
    lower = max(float(lower), ENVELOPE_LOW)
    s = np.geomspace(lower, max(upper, lower * 10), ENVELOPE_POINTS)
    f = np.asarray(tier_limit(s, tiers), float) / 100.0
    ce_hi, an_hi = s * (1 + f) / 2, s * (1 - f) / 2
    an = np.concatenate([an_hi, ce_hi[::-1]])
    ce = np.concatenate([ce_hi, an_hi[::-1]])
    return an, ce


def _markers(x, y, st, count, hover, hovertemplate) -> dict:
    colour, symbol = SAMPLE_STATUS_STYLE[st]
    return {"type": "scatter", "x": x, "y": y, "mode": "markers", "name": f"{st} ({count})",
            "marker": {"color": colour, "symbol": symbol, "size": 8,
                       "line": {"width": 1, "color": colour}},
            "customdata": hover, "hovertemplate": hovertemplate}


def ion_balance_spec(screened, site=None, options: WetOptions | None = None, start=None,
                     end=None) -> dict:
    """The figure of :func:`ion_balance` as plain plotly JSON (no template)."""
    options = options or WetOptions()
    s = _pick(screened, site, start, end)
    ce = s["cation_sum"].values.astype(float)
    an = s["anion_sum"].values.astype(float)
    total = ce + an
    ok = np.isfinite(total) & (total > 0)
    top = (total[ok].max() if ok.any() else ENVELOPE_LOW * 100) * ENVELOPE_HEADROOM
    low = (total[ok].min() if ok.any() else ENVELOPE_LOW) / ENVELOPE_HEADROOM
    e_an, e_ce = ion_balance_envelope(options.ion_balance_tiers, top, low)
    data = [{"type": "scatter", "x": e_an, "y": e_ce, "fill": "toself",
             "fillcolor": ENVELOPE_FILL, "line": {"width": 0},
             "name": "accepted |ion difference|", "hoverinfo": "skip"},
            {"type": "scatter", "x": [low / 2, top / 2], "y": [low / 2, top / 2],
             "mode": "lines", "line": {"color": OKABE_ITO["grey"], "dash": "dot"},
             "name": "CE = AN", "hoverinfo": "skip"}]
    status = s["status"].values.astype(str)
    hover = np.array(_hover(s), dtype=object)
    for st in STATUSES:
        m = (status == st) & np.isfinite(ce) & np.isfinite(an)
        data.append(_markers(an[m], ce[m], st, int(m.sum()), hover[m].tolist(),
                             "AN %{x:.4g}, CE %{y:.4g} ueq/L<br>%{customdata}<extra></extra>"))
    layout = {"title": {"text": with_period("Ion balance: cations against anions"
                                            + (f" · {site}" if site else ""),
                                            bounds_label(start, end))},
              "xaxis": {"title": {"text": "anion sum AN [ueq L-1]"}, "type": "log",
                        **log_ticks(low / 2, top / 2)},
              "yaxis": {"title": {"text": "cation sum CE [ueq L-1]"}, "type": "log",
                        **log_ticks(low / 2, top / 2)},
              "height": HEIGHT, "legend": {"title": {"text": "sample status"}}}
    return {"data": data, "layout": layout}


def ion_balance(screened, site=None, options: WetOptions | None = None, start=None, end=None, template=TEMPLATE):
    """Cation sum against anion sum per sample, with the acceptance envelope.

    Parameters
    ----------
    screened : xarray.Dataset
        Output of :func:`workbench.wet.screen` (``cation_sum``, ``anion_sum`` [ueq/L],
        ``status``, ``reasons``).
    site : str, optional
    options : WetOptions, optional
        Gives the tiers of the envelope (default: the defaults).
    start, end : str or datetime64, optional
        Only samples overlapping [start, end).

    Returns
    -------
    plotly.graph_objects.Figure
        Traces: the envelope, the 1:1 line, then one per status (used, flagged,
        excluded); log axes.
    """
    return from_spec(ion_balance_spec(screened, site, options, start, end), template)


def capture_efficiency_spec(screened, site=None, options: WetOptions | None = None, start=None,
                            end=None) -> dict:
    """The figure of :func:`capture_efficiency` as plain plotly JSON (no template)."""
    options = options or WetOptions()
    s = _pick(screened, site, start, end)
    gauge = s["gauge_depth"].values.astype(float)
    ratio = s["capture_ratio"].values.astype(float)
    hi_x = np.nanmax(np.concatenate([gauge, [options.capture_min_depth * 10]])) * ENVELOPE_HEADROOM
    data = []
    for name, (lo, hi), dash in (("rain", options.capture_rain, "solid"),
                                 ("snow", options.capture_snow, "dash")):
        d0 = options.capture_min_depth
        trace = {"type": "scatter", "x": [d0, float(hi_x), float(hi_x), d0, d0],
                 "y": [lo, lo, hi, hi, lo], "fillcolor": ENVELOPE_FILL, "mode": "lines",
                 "line": {"color": OKABE_ITO["grey"], "dash": dash, "width": 1},
                 "name": f"accepted for {name} ({lo:g}-{hi:g})", "hoverinfo": "skip"}
        if name == "rain":
            trace["fill"] = "toself"
        data.append(trace)
    status = s["status"].values.astype(str)
    ptype = s["precip_type"].values.astype(str) if "precip_type" in s else np.full(len(status), "")
    hover = np.array([f"{h}<br>type {p}" for h, p in zip(_hover(s), ptype)], dtype=object)
    for st in STATUSES:
        m = (status == st) & np.isfinite(ratio) & (gauge > 0)
        data.append(_markers(gauge[m], ratio[m], st, int(m.sum()), hover[m].tolist(),
                             "gauge %{x:.3g} mm, capture %{y:.2f}<br>%{customdata}<extra></extra>"))
    layout = {"title": {"text": with_period("Capture efficiency: collector over gauge depth"
                                            + (f" · {site}" if site else ""),
                                            bounds_label(start, end))},
              "xaxis": {"title": {"text": "gauge depth [mm]"}, "type": "log"},
              "yaxis": {"title": {"text": "capture ratio [1]"}, "rangemode": "tozero"},
              "height": HEIGHT, "legend": {"title": {"text": "sample status"}}}
    return {"data": data, "layout": layout}


def capture_efficiency(screened, site=None, options: WetOptions | None = None, start=None,
                       end=None, template=TEMPLATE):
    """Collector depth over gauge depth per sample, with the accepted ranges.

    Parameters
    ----------
    screened : xarray.Dataset
        Output of :func:`workbench.wet.screen` (``gauge_depth`` [mm],
        ``capture_ratio`` [1], ``status``, ``reasons``).
    site : str, optional
    options : WetOptions, optional
        Gives the accepted ranges (default: the defaults).
    start, end : str or datetime64, optional
        Only samples overlapping [start, end).

    Returns
    -------
    plotly.graph_objects.Figure
        Traces: the rain range (band), the snow range (band), then one per status;
        log x axis (gauge depth [mm]).
    """
    return from_spec(capture_efficiency_spec(screened, site, options, start, end), template)


def excluded_by_reason_spec(screened, site=None, start=None, end=None) -> dict:
    """The figure of :func:`excluded_by_reason` as plain plotly JSON (no template)."""
    t = reason_counts(screened, site, start, end) if screened is not None else reason_counts(None)
    reasons = list(dict.fromkeys(t["reason"])) if len(t) else []
    most = int(t.groupby("reason")["samples"].sum().max()) if len(t) else 0
    # each status named with its number of samples (a sample with two reasons counted
    # once): a legend entry "flagged" without a bar read as if some were flagged
    per = (excluded_samples(screened, site, start=start, end=end)["status"].value_counts()
           if screened is not None else {})
    data = []
    for st in ("excluded", "flagged"):
        g = t[t["status"] == st].set_index("reason")["samples"] if len(t) else None
        counts = [int(g.get(r, 0)) if g is not None else 0 for r in reasons]
        data.append({"type": "bar", "y": reasons, "x": counts, "orientation": "h",
                     "name": f"{int(per.get(st, 0))} {st}",
                     "marker": {"color": SAMPLE_STATUS_STYLE[st][0]},
                     "hovertemplate": f"%{{y}}: %{{x}} samples {st}<extra></extra>"})
    xaxis = {"title": {"text": "samples"}, "rangemode": "tozero"}
    if most <= INTEGER_TICKS_UP_TO:
        xaxis["dtick"] = 1
    layout = {"barmode": "stack",
              "title": {"text": with_period("Samples not used as they are, by reason"
                                            + (f" · {site}" if site else ""),
                                            bounds_label(start, end))},
              "xaxis": xaxis, "yaxis": {"title": {"text": "reason"}, "autorange": "reversed"},
              "height": max(legend_height(legend_lines(data), HEIGHT // 2),
                            60 + 28 * len(reasons)),
              "margin": {"l": 260}}
    if not reasons:                  # say so in the plot, not an empty pair of axes
        layout["title"]["text"] = with_period("No sample excluded or flagged"
                                              + (f" · {site}" if site else ""),
                                              bounds_label(start, end))
        layout["xaxis"] = {**xaxis, "visible": False}
        layout["yaxis"] = {**layout["yaxis"], "visible": False}
        layout["annotations"] = [{"text": "every sample of these years is used as it is",
                                  "xref": "paper", "yref": "paper", "x": 0.5, "y": 0.5,
                                  "showarrow": False}]
    return {"data": data, "layout": layout}


def excluded_by_reason(screened, site=None, start=None, end=None, template=TEMPLATE):
    """Samples flagged or excluded, counted by reason (horizontal bars by status).

    Returns
    -------
    plotly.graph_objects.Figure
        Two bar traces, named with their samples' number: ``12 excluded``,
        ``0 flagged`` (a sample with two reasons counted once).
    """
    return from_spec(excluded_by_reason_spec(screened, site, start, end), template)
