"""Engine factors tied to one species, where that species is not measured at the site.

``fine_fraction_pNO3``, ``fine_mmd_pNH4``, ``rc_scale_NH3`` and ``nh3_gamma_grass`` act
on the dry deposition of one species each (pNO3, pNH4, NH3).  The tiny site measures
SO2, pSO4 and HNO3 in the air only: the four factors have nothing to act on there and
their indices are 0 for want of data.  Before, only the ``vd_`` multipliers said so;
these four gave 0 with an empty note (read as a measured nil effect), and the figure
drew them as plain empty bars.
"""
import pandas as pd
import pytest

from workbench.analysis import sensitivity as S
from workbench.analysis.sensitivity_options import SensitivityOptions

UNMEASURED = {"fine_fraction_pNO3": "pNO3", "fine_mmd_pNH4": "pNH4",
              "rc_scale_NH3": "NH3", "nh3_gamma_grass": "NH3"}


def test_engine_factors_of_an_unmeasured_species_say_no_data(tiny):
    sc, study, _, _ = tiny
    opt = SensitivityOptions(samples=4, seed=1, factors={
        "vd_SO2": (0.5, 1.5), "vd_HNO3": (0.5, 1.5), "fine_fraction_pNO3": (0.1, 0.9),
        "fine_mmd_pNH4": (2e-7, 6e-7), "rc_scale_NH3": [], "nh3_gamma_grass": [],
        "fine_mmd_pSO4": (2e-7, 6e-7), "rc_scale_SO2": []})
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}
    kw = {"resolution": "month", "start": "2021-02-01", "end": "2021-03-01"}
    for frame in (S.sobol(study, base, opt, kw), S.tornado(study, base, opt, kw)):
        n_dry = frame[(frame["element"] == "N") & (frame["quantity"] == "dry")]
        assert len(n_dry)
        for factor, sp in UNMEASURED.items():
            notes = n_dry.loc[n_dry["factor"] == factor, "note"]
            assert len(notes) and notes.str.startswith(
                f"no effect for want of data: dry {sp} not measured").all(), factor
        # measured species keep a plain note, and a factor of another element no note
        s_dry = frame[(frame["element"] == "S") & (frame["quantity"] == "dry")]
        for factor in ("fine_mmd_pSO4", "rc_scale_SO2", "vd_SO2"):
            assert not s_dry.loc[s_dry["factor"] == factor, "note"].str.contains(
                "want of data").any()
        assert not s_dry.loc[s_dry["factor"] == "rc_scale_NH3", "note"].str.contains(
            "want of data").any()


@pytest.mark.parametrize("factor, species", [
    ("fine_fraction_pNO3", "pNO3"), ("fine_mmd_pSO4", "pSO4"), ("rc_scale_NH3", "NH3"),
    ("nh3_gamma_crops", "NH3")])
def test_row_note_of_a_species_factor_without_data(factor, species):
    element = "S" if species == "pSO4" else "N"
    idle = {("dry", species): "not measured at the site"}
    note = S.row_note(factor, element, "dry", ({}, idle))
    assert note == f"no effect for want of data: dry {species} not measured at the site"
    assert S.row_note(factor, element, "total", ({}, idle)) == note
    assert S.row_note(factor, element, "wet", ({}, idle)) == ""       # not on the wet
    assert S.row_note(factor, element, "dry", ({}, {})) == ""          # measured
    # a factor acting on every species names no single one
    assert S.row_note("z0_grass", "N", "dry", ({}, idle)) == ""
    assert S.row_note("rc_scale_O3", "N", "dry", ({}, {("dry", "NO2"): "x"})) == ""


def test_the_figure_labels_an_engine_factor_without_data():
    """The figure's "(no data)" label, given to vd_ factors, now reaches the engine
    factors whose species is not measured (the label reads the note)."""
    from workbench.ui.figures_sensitivity import sensitivity_spec
    keys = {"site": "quill", "receptor": "grass", "period": "2021-02", "element": "N",
            "quantity": "dry"}
    idle = {("dry", "pNO3"): "not measured at the site", ("dry", "NH3"): "not measured at "
            "the site"}
    rows = [(f, S.row_note(f, "N", "dry", ({}, idle))) for f in
            ("fine_fraction_pNO3", "rc_scale_NH3", "vd_HNO3")]
    sob = pd.DataFrame([{**keys, "factor": f, "S1": 0.0 if n else 0.9, "S1_conf": 0.0,
                         "ST": 0.0 if n else 0.9, "ST_conf": 0.0, "note": n} for f, n in rows])
    tor = pd.DataFrame([{**keys, "factor": f, "low": "0.5", "high": "2", "base": "1",
                         "output_low": 3.0, "output_high": 3.0 if n else 4.0,
                         "output_base": 3.0, "unit": "kg N ha-1 yr-1", "note": n}
                        for f, n in rows])
    spec = sensitivity_spec(sob, tor, "quill", "grass", "2021-02", "N", "dry")
    for trace in spec["data"]:
        trace = {"y": [y.replace("<br>", " ") for y in trace["y"]]}   # names wrapped
        assert "fine-mode fraction of pNO3 [1] (no data)" in trace["y"]
        assert "Rc of NH3 (multiplier) (no data)" in trace["y"]
        assert "Vd of HNO3 (multiplier)" in trace["y"]
