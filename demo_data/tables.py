"""Formatting helpers of make_demo.py: numbers to CSV text, vectorized, deterministic."""
from __future__ import annotations

import gzip
import io

import numpy as np
import pandas as pd

MINUTE = np.timedelta64(1, "m")


def fmt(x, decimals):
    """Fixed-point text of `x` with `decimals` digits; "" where NaN; no "-0.0"."""
    x = np.asarray(x, dtype=float)
    out = np.full(x.shape, "", dtype=object)
    ok = np.isfinite(x)
    if ok.any():
        r = np.round(x[ok], decimals) + 0.0
        out[ok] = np.char.mod(f"%.{decimals}f", r).astype(object)
    return out


def fmt_censored(x, decimals, limit):
    """Like :func:`fmt`, but values below `limit` (and >= 0) become "<limit"."""
    out = fmt(x, decimals)
    x = np.asarray(x, dtype=float)
    below = np.isfinite(x) & (np.round(x, decimals) < limit) & (x >= 0)
    out[below] = "<" + ("%g" % limit)
    return out, below


def iso(t):
    """datetime64 -> ISO 8601 text to the minute ("2016-01-07T14:00")."""
    return np.datetime_as_string(np.asarray(t).astype("datetime64[m]"), unit="m").astype(object)


def csv_text(frame: pd.DataFrame, comments=()) -> str:
    """CSV text with optional ``# key: value`` lines first; LF line ends."""
    buf = io.StringIO()
    for c in comments:
        buf.write(f"# {c}\n")
    frame.to_csv(buf, index=False, lineterminator="\n")
    return buf.getvalue()


def write_text(path, text):
    with open(path, "w", encoding="utf-8", newline="") as f:
        f.write(text)


def write_gzip(path, text):
    """Gzip with a zero mtime and no file name, so equal text gives equal bytes."""
    with open(path, "wb") as raw:
        with gzip.GzipFile(filename="", mode="wb", fileobj=raw, mtime=0, compresslevel=9) as gz:
            gz.write(text.encode("utf-8"))


def toml_value(v):
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(toml_value(e) for e in v) + "]"
    if isinstance(v, float):
        return repr(v)
    return str(v)


def sites_toml(sites, keys, header_lines):
    """Text of sites.toml: a [[site]] table per site and its [site.critical_loads]."""
    lines = [f"# {h}" if h else "#" for h in header_lines]
    for s in sites:
        lines += ["", "[[site]]"]
        for k in keys:
            if k in s:
                lines.append(f"{k} = {toml_value(s[k])}")
        lines.append("")
        lines.append("[site.critical_loads]   # eq/ha/yr")
        for k, v in s["critical_loads"].items():
            lines.append(f"{k} = {toml_value(v)}")
    return "\n".join(lines) + "\n"
