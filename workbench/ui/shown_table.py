"""Tables the notebooks show: the numbers to a reader's precision, the data whole.

A notebook cell ending in a table (``net.totals()``) showed pandas' six decimals
("9.454149 kg/ha/yr", "589.778455 eq/ha/yr"): digits no measurement here carries.
:class:`ShownTable` is a ``pandas.DataFrame`` whose display (HTML in JupyterLab, text
elsewhere) writes each number with :func:`shown_number` (three significant digits,
whole numbers with thousands separators from 1,000 up); its values, and every frame
derived from it, keep full precision.
"""
from __future__ import annotations

import numpy as np
import pandas as pd


def shown_number(v: float) -> str:
    """Three significant digits, their trailing zeros kept (``10.0`` beside ``18.2``,
    not ``10``), whole numbers with thousands separators from 1,000 up (``1,441``).

    >>> [shown_number(v) for v in (9.454149, 10.04399, 100.2, 0.0037712, 1441.2, 0.0)]
    ['9.45', '10.0', '100', '0.00377', '1,441', '0.00']
    """
    if not np.isfinite(v):
        return "NaN" if np.isnan(v) else str(v)
    if abs(v) >= 1000:
        return f"{v:,.0f}"
    return f"{v:#.3g}".rstrip(".")


class ShownTable(pd.DataFrame):
    """A DataFrame displayed with three significant digits (values unchanged).

    >>> t = ShownTable({"S total [kg/ha/yr]": [9.454149, 1441.2]})
    >>> print(t)
       S total [kg/ha/yr]
    0                9.45
    1               1,441
    >>> float(t.iloc[0, 0])
    9.454149
    """

    @property
    def _constructor(self):
        # a selection or a computation on the table is a plain DataFrame
        return pd.DataFrame

    def _shown(self, method, *args, **kwargs):
        # ``attrs["whole_text"]``: text cells written whole (pandas cuts them at 50
        # characters: "fails: SO4: gauge record below minimum (51.1 %..." lost the minimum)
        width = None if self.attrs.get("whole_text") else pd.get_option("display.max_colwidth")
        with pd.option_context("display.float_format", shown_number,
                               "display.max_colwidth", width):
            return getattr(pd.DataFrame, method)(self, *args, **kwargs)

    def __repr__(self) -> str:
        return self._shown("__repr__")

    def _repr_html_(self):
        return self._shown("_repr_html_")

    def to_plain(self) -> pd.DataFrame:
        """The same table as a plain DataFrame (pandas' display)."""
        return pd.DataFrame(self)
