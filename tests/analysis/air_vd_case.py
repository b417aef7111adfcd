"""The case of the ``vd_follows_air`` tests: the invented demo's ridge site in 2021,
with the two ``[dry]`` options whose velocities read the air."""
import warnings

from ui.demo_subset import write_demo_subset

SITE, YEAR = "ridge", 2021
BOTH = "so2_codeposition = true\nnh3_acid_ratio_from_air = true"


def quiet(fn, *a, **k):
    """``fn(*a, **k)`` with its RuntimeWarnings (empty means, divisions) silenced."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return fn(*a, **k)


def scenario(d, dry=BOTH, extra=""):
    """The ridge-2021 copy of the demo in folder ``d``, ``dry`` written as its ``[dry]``
    table and ``extra`` appended; returns the scenario's path."""
    sc = write_demo_subset(d, (SITE,), YEAR, YEAR)
    sc.write_text(sc.read_text().replace("[budget]", f"[dry]\n{dry}\n\n[budget]") + extra)
    return sc
