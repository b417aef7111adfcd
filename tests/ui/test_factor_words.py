"""Factors in words with their unit (one mapping,
:func:`workbench.analysis.sensitivity_design.factor_label`), their option key kept
beside them: the range-shares table of the critical-loads explorer and the Sobol figure
showed raw keys (``vd_gsd``, ``lab_bias_air_rel_sd``, ``vd_NH3``)."""
import pandas as pd

from workbench.analysis.sensitivity_design import DRAWN_TEXT, factor_label
from workbench.analysis.sensitivity_options import factor_names
from workbench.analysis.variance_shares import FACTORS
from workbench.ui.range_shares_panel import shares_display


def test_every_drawn_and_sobol_factor_has_words():
    assert set(FACTORS) <= set(DRAWN_TEXT)
    for name in list(FACTORS) + factor_names():
        words = factor_label(name)
        assert words != name and "_" not in words.replace("Gamma_s", ""), (name, words)


def test_range_shares_table_shows_words_and_keeps_the_key():
    s = pd.DataFrame({
        "site": "s", "receptor": "grass", "period": "2021", "total": "N_dry",
        "factor": ["all", "vd_gsd", "lab_bias_air_rel_sd", "together"],
        "part_of": "", "variance_share": [1.0, 0.6, 0.3, 0.1],
        "log_variance_share": [1.0, 0.6, 0.3, 0.1],
        "alone_p05": 1.0, "alone_p50": 2.0, "alone_p95": 3.0, "unit": "kg ha-1"})
    shown = shares_display(s, "grass", "2021", "N_dry")
    assert list(shown["factor"])[1:3] == ["Vd model factor (geometric sd)",
                                          "lab bias of air concentrations (relative sd)"]
    assert list(shown["option"])[1:3] == ["vd_gsd", "lab_bias_air_rel_sd"]


def test_sobol_figure_axis_in_words_key_in_hover():
    from workbench.ui.figures_sensitivity import sensitivity_spec
    keys = {"site": "a", "receptor": "grass", "period": "2021", "element": "N",
            "quantity": "total"}
    sob = pd.DataFrame([{**keys, "factor": "vd_NH3", "S1": 0.6, "S1_conf": 0.01,
                         "ST": 0.65, "ST_conf": 0.02}])
    tor = pd.DataFrame([{**keys, "factor": "vd_NH3", "low": "0.5", "high": "2.0",
                         "base": "1.0", "output_low": 8.0, "output_high": 14.0,
                         "output_base": 10.0}])
    spec = sensitivity_spec(sob, tor, "a", "grass", "2021", "N", "total")
    for trace in spec["data"]:
        assert trace["y"] == ["Vd of NH3 (multiplier)"]
        assert "vd_NH3" in str(trace["customdata"]) and "option" in trace["hovertemplate"]


def test_sobol_figure_names_each_factor_once_in_short_lines():
    """The words are longer than the keys: they wrap at spaces, and the tornado's rows
    stand beside the same factor's Sobol bars (one axis of names; before, the tornado's
    names ran into the Sobol panel, seen in a 540 px render)."""
    from workbench.ui.figures_sensitivity import LABEL_CHARS, sensitivity_spec
    keys = {"site": "a", "receptor": "grass", "period": "2021", "element": "N",
            "quantity": "total"}
    fs = ("precip_conc", "nh3_gamma_conifer_forest", "vd_NH3")
    sob = pd.DataFrame([{**keys, "factor": f, "S1": 0.1 * i, "S1_conf": 0.0,
                         "ST": 0.1 * i + 0.05, "ST_conf": 0.0} for i, f in enumerate(fs)])
    tor = pd.DataFrame([{**keys, "factor": f, "low": "0.5", "high": "2", "base": "1",
                         "output_low": 10.0 - i, "output_high": 10.0 + 3 * (2 - i),
                         "output_base": 10.0} for i, f in enumerate(fs)])
    spec = sensitivity_spec(sob, tor, "a", "grass", "2021", "N", "total")
    lay = spec["layout"]
    assert lay["yaxis2"]["showticklabels"] is False
    assert lay["yaxis"]["categoryarray"] == lay["yaxis2"]["categoryarray"]
    assert all(len(line) <= LABEL_CHARS for y in lay["yaxis"]["categoryarray"]
               for line in y.split("<br>"))
    assert "precipitation concentrations (multiplier)" in [
        y.replace("<br>", " ") for y in lay["yaxis"]["categoryarray"]]
