"""Figures of precipitation-chemistry QA: ion balance, capture efficiency, reasons.

Pure functions: the screened samples (:func:`workbench.wet.screen`) in, a plotly
figure out.  The acceptance envelope of the ion balance is drawn from the same tiers
and the same function (:func:`workbench.wet.qa.tier_limit`) that screen the samples.
"""
from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from ..wet.options import WetOptions
from ..wet.qa import tier_limit
from .palette import ENVELOPE_FILL, OKABE_ITO, SAMPLE_STATUS_STYLE, TEMPLATE
from .summaries import in_span, reason_counts

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
    options = options or WetOptions()
    s = _pick(screened, site, start, end)
    ce = s["cation_sum"].values.astype(float)
    an = s["anion_sum"].values.astype(float)
    total = ce + an
    ok = np.isfinite(total) & (total > 0)
    top = (total[ok].max() if ok.any() else ENVELOPE_LOW * 100) * ENVELOPE_HEADROOM
    low = (total[ok].min() if ok.any() else ENVELOPE_LOW) / ENVELOPE_HEADROOM
    e_an, e_ce = ion_balance_envelope(options.ion_balance_tiers, top, low)
    fig = go.Figure()
    fig.add_trace(go.Scatter(x=e_an, y=e_ce, fill="toself", fillcolor=ENVELOPE_FILL,
                             line=dict(width=0), name="accepted |ion difference|",
                             hoverinfo="skip"))
    fig.add_trace(go.Scatter(x=[low / 2, top / 2], y=[low / 2, top / 2], mode="lines",
                             line=dict(color=OKABE_ITO["grey"], dash="dot"), name="CE = AN",
                             hoverinfo="skip"))
    status = s["status"].values.astype(str)
    hover = np.array(_hover(s), dtype=object)
    for st in STATUSES:
        m = (status == st) & np.isfinite(ce) & np.isfinite(an)
        colour, symbol = SAMPLE_STATUS_STYLE[st]
        fig.add_trace(go.Scatter(
            x=an[m], y=ce[m], mode="markers", name=f"{st} ({int(m.sum())})",
            marker=dict(color=colour, symbol=symbol, size=8, line=dict(width=1, color=colour)),
            customdata=hover[m],
            hovertemplate="AN %{x:.4g}, CE %{y:.4g} ueq/L<br>%{customdata}<extra></extra>"))
    fig.update_layout(title="Ion balance: cations against anions" + (f" · {site}" if site else ""),
                      xaxis=dict(title="anion sum AN [ueq L-1]", type="log"),
                      yaxis=dict(title="cation sum CE [ueq L-1]", type="log"),
                      template=template, height=HEIGHT, legend_title="sample status")
    return fig


def capture_efficiency(screened, site=None, options: WetOptions | None = None, start=None,
                       end=None, template=TEMPLATE):
    """Collector depth over gauge depth per sample, with the accepted ranges.

    Returns
    -------
    plotly.graph_objects.Figure
        Traces: the rain range (band), the snow range (band), then one per status;
        log x axis (gauge depth [mm]).
    """
    options = options or WetOptions()
    s = _pick(screened, site, start, end)
    gauge = s["gauge_depth"].values.astype(float)
    ratio = s["capture_ratio"].values.astype(float)
    hi_x = np.nanmax(np.concatenate([gauge, [options.capture_min_depth * 10]])) * ENVELOPE_HEADROOM
    fig = go.Figure()
    for name, (lo, hi), dash in (("rain", options.capture_rain, "solid"),
                                 ("snow", options.capture_snow, "dash")):
        fig.add_trace(go.Scatter(
            x=[options.capture_min_depth, hi_x, hi_x, options.capture_min_depth,
               options.capture_min_depth],
            y=[lo, lo, hi, hi, lo], fill="toself" if name == "rain" else None,
            fillcolor=ENVELOPE_FILL, mode="lines",
            line=dict(color=OKABE_ITO["grey"], dash=dash, width=1),
            name=f"accepted for {name} ({lo:g}-{hi:g})", hoverinfo="skip"))
    status = s["status"].values.astype(str)
    ptype = s["precip_type"].values.astype(str) if "precip_type" in s else np.full(len(status), "")
    hover = np.array([f"{h}<br>type {p}" for h, p in zip(_hover(s), ptype)], dtype=object)
    for st in STATUSES:
        m = (status == st) & np.isfinite(ratio) & (gauge > 0)
        colour, symbol = SAMPLE_STATUS_STYLE[st]
        fig.add_trace(go.Scatter(
            x=gauge[m], y=ratio[m], mode="markers", name=f"{st} ({int(m.sum())})",
            marker=dict(color=colour, symbol=symbol, size=8, line=dict(width=1, color=colour)),
            customdata=hover[m],
            hovertemplate="gauge %{x:.3g} mm, capture %{y:.2f}<br>%{customdata}<extra></extra>"))
    fig.update_layout(title="Capture efficiency: collector over gauge depth"
                      + (f" · {site}" if site else ""),
                      xaxis=dict(title="gauge depth [mm]", type="log"),
                      yaxis=dict(title="capture ratio [1]", rangemode="tozero"),
                      template=template, height=HEIGHT, legend_title="sample status")
    return fig


def excluded_by_reason(screened, site=None, start=None, end=None, template=TEMPLATE):
    """Samples flagged or excluded, counted by reason (horizontal bars by status).

    Returns
    -------
    plotly.graph_objects.Figure
        Two bar traces: excluded, flagged.
    """
    t = reason_counts(screened, site, start, end) if screened is not None else reason_counts(None)
    fig = go.Figure()
    reasons = list(dict.fromkeys(t["reason"])) if len(t) else []
    most = int(t.groupby("reason")["samples"].sum().max()) if len(t) else 0
    for st in ("excluded", "flagged"):
        g = t[t["status"] == st].set_index("reason")["samples"] if len(t) else None
        counts = [int(g.get(r, 0)) if g is not None else 0 for r in reasons]
        fig.add_trace(go.Bar(y=reasons, x=counts, orientation="h", name=st,
                             marker=dict(color=SAMPLE_STATUS_STYLE[st][0]),
                             hovertemplate=f"%{{y}}: %{{x}} samples {st}<extra></extra>"))
    fig.update_layout(barmode="stack", title="Samples not used as they are, by reason"
                      + (f" · {site}" if site else ""),
                      xaxis=dict(title="samples", dtick=1 if most <= INTEGER_TICKS_UP_TO else None,
                                 rangemode="tozero"),
                      yaxis=dict(title="reason", autorange="reversed"), template=template,
                      height=max(HEIGHT // 2, 60 + 28 * len(reasons)), margin=dict(l=260))
    return fig
