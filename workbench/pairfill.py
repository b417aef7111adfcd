"""The value of a (site, receptor) pair that is not computed.

One rule shared by the stage graph (:mod:`workbench.stages`), the block reduction
(:mod:`workbench.blockreduce`) and the surface history (:mod:`workbench.surfacehistory`);
a leaf module so that none of them imports another for it.
"""
import numpy as np


def fill_value(dtype, attrs=None):
    """The value of a (site, receptor) pair that is not computed (a pair no site asks
    for, or a receptor a block does not have): NaN, False, 0 or NaT by dtype.

    An integer flag variable whose ``attrs`` name an "unknown" flag (CF 1.8 section
    3.5: ``flag_values`` and ``flag_meanings``, as ``wetness_source`` has, -1) gets that
    code instead of 0, which is a real code there.

    >>> fill_value(np.int8, {"flag_values": [-1, 0], "flag_meanings": "unknown met"})
    -1
    """
    kind = np.dtype(dtype).kind
    if kind in "iu" and attrs and "flag_values" in attrs and "flag_meanings" in attrs:
        words = str(attrs["flag_meanings"]).split()
        if "unknown" in words:
            return int(np.asarray(attrs["flag_values"])[words.index("unknown")])
    return {"f": np.nan, "c": np.nan, "b": False, "i": 0, "u": 0,
            "M": np.datetime64("NaT"), "m": np.timedelta64("NaT")}.get(kind, "")
