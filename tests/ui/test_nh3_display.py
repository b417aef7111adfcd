"""The site explorer's NH3 control: deposition only or the net exchange, and the line
that shows the net beside the deposition-only figure (docs/budget.md, "NH3")."""
import warnings

import numpy as np
import pytest

from ui.demo_subset import write_demo_subset
from workbench.units import element_deposition_in


@pytest.fixture(scope="module")
def farm_app(tmp_path_factory):
    from workbench.ui.apps import SiteExplorer
    sc = write_demo_subset(tmp_path_factory.mktemp("farm"), ("farm",), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer.from_scenario(sc, site="farm", years=(2021, 2021))


def _bar(app, name):
    return [d for d in app.figs["budget"].data if d.name == name][0].y[0]


def test_nh3_net_against_deposition_only(farm_app):
    app = farm_app
    assert "deposition only" in app.nh3_w.value and "net" not in app.nh3_w.value.split(":")[0]
    only_bar, n_before = _bar(app, "dry NH3"), app._totals.loc["N_total", "value"]
    app.controls["dry.nh3_treatment"].value = "bidirectional"
    assert app.settings.dry.nh3_treatment == "bidirectional"
    ds, rec = app.result.years, app.receptor_w.value
    sel = dict(site="farm", receptor=rec)
    net = float(element_deposition_in(ds["nh3_net"].sel(**sel).values, "N", "kg_ha")[0])
    only = float(element_deposition_in(ds["nh3_deposition_only"].sel(**sel).values, "N",
                                       "kg_ha")[0])
    # the bars use the net; the deposition-only figure is the one of the first run
    assert _bar(app, "dry NH3") == pytest.approx(net, rel=1e-9)
    assert only == pytest.approx(only_bar, rel=1e-9)
    assert net < only                      # crops emit some NH3 in the growing season
    text = app.nh3_w.value
    assert "net (deposition - emission)" in text and f"{net:.1f}" in text and f"{only:.1f}" in text
    assert f"{100 * (only - net) / only:.0f} %" in text
    assert app._totals.loc["N_total", "value"] == pytest.approx(n_before - (only - net), rel=1e-6)
    app.controls["dry.nh3_treatment"].value = "deposition_only"
    assert "deposition only" in app.nh3_w.value and np.isclose(_bar(app, "dry NH3"), only_bar)
