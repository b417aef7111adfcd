"""The surface wetness rule moved between "met" and "inferred" changed nothing and the
site explorer's line gave no reason (seen in JupyterLab + chromium on the demo: ridge
2023, "surface wetness rule: no effect on the totals of this site and these years.").
The demo's met gives no ``surface_wet``, and the "met" rule then infers the wetness as
the "inferred" rule does (workbench.drydep.options, ``wetness_rule``): the line says so.
"""
import numpy as np
import xarray as xr

from workbench.ui.apps import SiteExplorer
from workbench.ui.no_effect import wetness_rule_reason

KEY = "dry.wetness_rule"


def test_the_line_says_why_met_and_inferred_agree(session):
    app = SiteExplorer(session, site="ridge", years=(2021, 2021))
    before = app._totals["value"].copy()
    src = app.result.velocities["wetness_source"].values
    assert not (src == 0).any()                   # no hour from the met file's surface_wet
    app.controls[KEY].value = "inferred"
    assert app._totals["value"].equals(before)    # the two rules agree here
    assert "no effect" in app.change_w.value
    assert "gives no surface wetness (surface_wet)" in app.change_w.value
    app.controls[KEY].value = "met"               # and back
    assert "gives no surface wetness (surface_wet)" in app.change_w.value
    app.controls[KEY].value = "always_wet"        # a rule that moves the totals: no note
    assert not app._totals["value"].equals(before)
    assert "surface_wet" not in app.change_w.value


def _vel(codes):
    return xr.Dataset({"wetness_source": (("site", "receptor", "time"),
                                          np.array(codes, float).reshape(1, 1, -1))},
                      coords={"site": ["a"], "receptor": ["grass"]})


def test_no_reason_where_the_met_gives_wetness_or_other_rules():
    assert wetness_rule_reason(_vel([1, 2, 3]), "a", "grass", "met", "inferred")
    assert wetness_rule_reason(_vel([0, 2, 3]), "a", "grass", "met", "inferred") == ""
    assert wetness_rule_reason(_vel([4, 4]), "a", "grass", "always_dry", "always_wet") == ""
    assert wetness_rule_reason(_vel([1, 2]), "a", "grass", "met", "always_dry") == ""
    assert wetness_rule_reason(None, "a", "grass", "met", "inferred") == ""
