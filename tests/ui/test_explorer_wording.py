"""Wording of the site explorer's lines: the element of a rate beside its amount, and a
0 of the gas/particle bracket that says why (docs/budget.md, bulk collectors)."""
import warnings

import numpy as np
import periodictable
import pytest
import xarray as xr

from ui.demo_subset import write_demo_subset
from workbench.ui import summaries
from workbench.ui.bracket import bracket_line


def _nh3(only, net, figure="net"):
    """A budget of one site with NH3 figures [mol N m-2 per period, annual factor 1]."""
    v = lambda x: (("site", "receptor", "period"), np.full((1, 1, 1), x))  # noqa: E731
    return xr.Dataset({"nh3_deposition_only": v(only), "nh3_net": v(net),
                       "annual_factor": v(1.0)},
                      coords={"site": ["s"], "receptor": ["grass"], "period": ["2020"]},
                      attrs={"nh3_figure": figure})


@pytest.mark.parametrize("figure", ["net", "deposition_only"])
def test_nh3_line_names_the_element_before_the_number_in_both_units(figure):
    """Old code: "Dry NH3 164.1 eq/ha/yr N:" (the element after an equivalent unit).
    1e-2 mol N m-2 = 1e-2 x 14.0067 g (N molar mass from periodictable) x 1e4 m2/ha =
    1.4 kg N/ha; N counts one charge (NH4+), so 1e-2 mol m-2 = 100 eq/ha."""
    ds = _nh3(1e-2, 0.8e-2, figure)
    kg = summaries.nh3_line(ds, "s", "grass", "kg/ha/yr")
    eq = summaries.nh3_line(ds, "s", "grass", "eq/ha/yr")
    kg_ha = 1e-2 * periodictable.N.mass * 1e-3 * 1e4
    shown = 0.8e-2 if figure == "net" else 1e-2
    assert kg.startswith(f"Dry NH3 (as N): {kg_ha * shown / 1e-2:.1f} kg N/ha/yr"), kg
    assert eq.startswith(f"Dry NH3 (as N): {shown * 1e4:.1f} eq/ha/yr"), eq
    for text in (kg, eq):
        assert "yr N" not in text and " N net" not in text and " N:" not in text


@pytest.fixture(scope="module")
def mere_run(tmp_path_factory):
    from workbench.ui.session import Session
    sc = write_demo_subset(tmp_path_factory.mktemp("mere"), ("mere",), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        s = Session.open(sc)
        rec = s.receptors("mere")[0]
        return s.run(s.baseline, "mere", 2021, 2021, "year", rec), rec


@pytest.mark.parametrize("unit", ["kg/ha/yr", "eq/ha/yr"])
def test_bracket_zero_at_a_bulk_collector_says_why(mere_run, unit):
    """The demo mere has a bulk collector and bulk_correction = "exclude_particles": the
    all-particle end is 0 because particles are counted in the bulk wet sample.  Old
    code: "bracket 0.0 (each ... pair all as particle) to ..." with no reason."""
    r, rec = mere_run
    text = bracket_line(r.years, r.derived, "mere", rec, unit)
    assert "bracket 0.0 (" in text, text
    zero = text.split("bracket 0.0 (", 1)[1].split(") to ", 1)[0]
    assert "caught by the bulk collector" in zero and "wet deposition" in zero, zero


def test_bracket_without_bulk_collector_gives_no_bulk_reason(two_sites_2021):
    """ridge samples wet-only: no bulk words in its bracket line."""
    from workbench.ui.session import Session
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        s = Session.open(two_sites_2021)
        rec = s.receptors("ridge")[0]
        r = s.run(s.baseline, "ridge", 2021, 2021, "year", rec)
    text = bracket_line(r.years, r.derived, "ridge", rec)
    assert "bracket" in text and "bulk" not in text, text
