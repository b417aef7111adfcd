"""CSV files of the run folder, written in chunks of rows with the text of each column
formatted at once: the same bytes as ``DataFrame.to_csv(index=False,
float_format=..., date_format=...)``, a few times faster and without a second copy of a
large table as text.

Floats are written with the float format (NaN empty), integers and booleans as Python
writes them, text as is (missing empty; Python's bool, int and float in a column of
objects as the csv module writes them), dates with the date format (NaT empty); the
rows go through :mod:`csv` with the quoting of ``to_csv`` (minimal, ``"`` doubled).  A
frame with a column of another kind (a nullable or categorical dtype, dates without a
date format or with a time zone, numpy scalars in a column of objects) is written by
pandas itself.
"""
from __future__ import annotations

import csv

import numpy as np
import pandas as pd

#: Cells formatted and written at once (rows x columns) [1].
CHUNK_CELLS = 200_000


def _text_column(values, float_format, date_format):
    """The cells of one column as a list of str, or None where pandas must write it."""
    kind = values.dtype.kind
    if isinstance(values.dtype, np.dtype) and kind == "f":
        arr = np.asarray(values)
        out = [float_format % v for v in arr.tolist()]
        for i in np.flatnonzero(np.isnan(arr)).tolist():
            out[i] = ""
        return out
    if isinstance(values.dtype, np.dtype) and kind in "iu":
        return [str(v) for v in np.asarray(values).tolist()]
    if isinstance(values.dtype, np.dtype) and kind == "b":
        return ["True" if v else "False" for v in np.asarray(values).tolist()]
    if isinstance(values.dtype, np.dtype) and kind == "M":
        if date_format is None:
            return None
        text = pd.DatetimeIndex(values).strftime(date_format)
        return ["" if isinstance(v, float) else v for v in text.tolist()]
    if kind == "O" or isinstance(values.dtype, pd.StringDtype):
        obj = np.asarray(values, dtype=object)
        out = obj.tolist()
        for i, v in enumerate(out):
            tv = type(v)
            if tv is str:
                continue
            if v is None or (tv is float and v != v):
                out[i] = ""
            elif tv in (bool, int, float):              # as the csv module writes them
                out[i] = repr(v)
            else:
                return None
        return out
    return None


def write_csv(frame: pd.DataFrame, path, float_format="%.10g", date_format=None):
    """Write `frame` (without its index) to `path` as ``frame.to_csv`` would.

    Parameters
    ----------
    frame : DataFrame
    path : str or Path
    float_format : str
        printf format of the floats.
    date_format : str, optional
        strftime format of the dates (None: pandas' own format; pandas writes the frame).
    """
    kinds = [_text_column(frame.iloc[:0, i], float_format, date_format)
             for i in range(frame.shape[1])]
    if (any(k is None for k in kinds) or not frame.shape[1]
            or isinstance(frame.columns, pd.MultiIndex)):
        frame.to_csv(path, index=False, float_format=float_format,
                     **({"date_format": date_format} if date_format else {}))
        return path
    step = max(1, CHUNK_CELLS // max(frame.shape[1], 1))
    with open(path, "w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, lineterminator="\n", quoting=csv.QUOTE_MINIMAL)
        w.writerow([str(c) for c in frame.columns])
        for a in range(0, len(frame), step):
            part = frame.iloc[a:a + step]
            cols = [_text_column(part.iloc[:, i], float_format, date_format)
                    for i in range(part.shape[1])]
            if any(c is None for c in cols):          # objects pandas must write
                f.seek(0)
                f.truncate()
                frame.to_csv(f, index=False, float_format=float_format,
                             lineterminator="\n",
                             **({"date_format": date_format} if date_format else {}))
                return path
            w.writerows(zip(*cols))
            del cols, part
    return path
