"""The value of a (site, receptor) pair that is not computed.

One rule shared by the stage graph (:mod:`workbench.stages`), the block reduction
(:mod:`workbench.blockreduce`) and the surface history (:mod:`workbench.surfacehistory`);
a leaf module so that none of them imports another for it.
"""
import numpy as np


def fill_value(dtype):
    """The value of a (site, receptor) pair that is not computed (a pair no site asks
    for, or a receptor a block does not have): NaN, False, 0 or NaT by dtype."""
    kind = np.dtype(dtype).kind
    return {"f": np.nan, "c": np.nan, "b": False, "i": 0, "u": 0,
            "M": np.datetime64("NaT"), "m": np.timedelta64("NaT")}.get(kind, "")
