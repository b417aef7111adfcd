"""A sensitivity folder says what it varied, over which range, how often the model ran,
with which seed, and what it held fixed (a trial by a student reading every file).

Before, sensitivity.html named the factors by their short names only (``precip_conc``)
with no range, said "a factor left out has no index" without naming one, and neither
the page, provenance.json nor the console gave the number of model evaluations.
The counts are Saltelli's scheme without second-order indices: N (k + 2) evaluations
for k factors (Saltelli et al. 2010, Comput. Phys. Commun. 181, 259, from memory; SALib's
``sample.sobol`` with ``calc_second_order=False``), and 2 k + 1 for the tornado (each
factor at its two ends, and the base: common practice).
"""
import json

import pytest

from workbench.analysis.sensitivity_options import SensitivityOptions

pytest.importorskip("SALib")


def test_the_record_counts_the_runs_and_names_what_was_held():
    from workbench.analysis.sensitivity_design import design, design_lines
    from workbench.budget import BudgetOptions
    from workbench.drydep import DryOptions
    opt = SensitivityOptions(samples=16, factors={"vd_SO2": (0.5, 1.5), "z0_grass": (0.01, 0.1)})
    d = design(opt, {"sobol_evaluations": 64, "sobol_engine_runs": 48,
                     "tornado_evaluations": 5, "tornado_engine_runs": 3},
               dry=DryOptions(), budget=BudgetOptions())
    assert d["factors"]["z0_grass"] == {"range": [0.01, 0.1],
                                        "varies": "the roughness length of the class grass [m]"}
    held = "; ".join(d["not_varied"])
    # the linear factors left out stay at 1; bulk_wet_factor only matters under scale_wet
    assert "at 1: gauge_catch, precip_conc, air_conc, vd_pSO4" in held
    assert "bulk_wet_factor" not in held
    assert f"wetness_rule ({DryOptions().wetness_rule!r})" in held and "z0_<land use>" not in held
    assert "random errors of each sample" in held
    text = "\n".join(design_lines(d))
    assert "base sample N = 16, N (k + 2) = 64 model evaluations (48 engine runs" in text
    assert "seed 12345" in text and "2k + 1 = 5 evaluations (3 engine runs)" in text
    assert "not percentiles" in text
    # the console says which factors were varied over which range (README), as the page
    assert ("varied (uniform ranges): vd_SO2 0.5 to 1.5 (multiplier); z0_grass 0.01 to "
            "0.1 m") in text


def test_a_sensitivity_folder_carries_the_record(tiny, tmp_path, capsys):
    from workbench.cli import main
    sc, _, _, _ = tiny
    out = tmp_path / "sens"
    capsys.readouterr()
    assert main(["sensitivity", str(sc.path), "--out", str(out), "--quiet"]) == 0
    console = capsys.readouterr().out
    opt = sc.options["sensitivity"]
    k = len(opt.factors)
    d = json.loads((out / "provenance.json").read_text())["sensitivity_design"]
    assert (d["samples"], d["seed"]) == (opt.samples, opt.seed)
    assert d["sobol_evaluations"] == opt.samples * (k + 2)
    assert d["tornado_evaluations"] == 2 * k + 1
    # wetness_rule is an engine factor of two rules: at most two engine runs each
    assert 1 <= d["sobol_engine_runs"] <= 2 and 1 <= d["tornado_engine_runs"] <= 2
    assert d["factors"]["vd_SO2"]["range"] == [0.5, 1.5]
    held = "; ".join(d["not_varied"])
    assert "air_conc" in held and "vd_NH3" in held and "z0_<land use>" in held
    assert f"N (k + 2) = {opt.samples * (k + 2)} model evaluations" in console
    assert "not varied: at 1: " in console
    assert opt.samples == 8 and console.startswith("caution: N = 8 is below 64")
    assert d["widest_interval"] > 0
    html = (out / "sensitivity.html").read_text()
    assert "What was varied" in html and "<code>vd_SO2</code></td><td>0.5 to 1.5" in html
    assert "met, always_wet" in html and "Not varied" in html
    assert "S1: first-order index" in html


def test_the_figure_labels_a_factor_without_data_and_a_partial_total():
    """fell of the demo measures no NO2: vd_NO2's bars of N dry are empty for want of
    data, and N dry lacks NO2.  The CSV said so in its note; the figure showed an empty
    bar beside measured ones and a title as of a complete total."""
    import pandas as pd
    from workbench.ui.figures_sensitivity import sensitivity_spec
    keys = {"site": "fell", "receptor": "grass", "period": "2022", "element": "N",
            "quantity": "dry"}
    lacks = "the total lacks NO2: indices of its measured part"
    idle = "no effect for want of data: dry NO2 not measured at the site; " + lacks
    rows = (("vd_NH3", 0.8, 0.85, lacks), ("vd_NO2", 0.0, 0.0, idle),
            ("gauge_catch", 0.0, 0.0, lacks))
    sob = pd.DataFrame([{**keys, "factor": f, "S1": a, "S1_conf": 0.0, "ST": b,
                         "ST_conf": 0.0, "note": n} for f, a, b, n in rows])
    tor = pd.DataFrame([{**keys, "factor": f, "low": "0.5", "high": "2", "base": "1",
                         "output_low": 3.0, "output_high": 3.0 + b, "output_base": 3.0,
                         "unit": "kg N ha-1 yr-1", "note": n} for f, _, b, n in rows])
    spec = sensitivity_spec(sob, tor, "fell", "grass", "2022", "N", "dry")
    for trace in spec["data"]:
        trace = {"y": [y.replace("<br>", " ") for y in trace["y"]]}   # names wrapped
        assert "Vd of NO2 (multiplier) (no data)" in trace["y"]
        assert "Vd of NH3 (multiplier)" in trace["y"]
        assert "gauge catch (multiplier)" in trace["y"]             # a plain nil: no data note, no label
    assert spec["layout"]["title"]["text"].endswith(
        "(lacks NO2: indices of its measured part)")


def test_too_few_samples_is_flagged_with_the_widest_interval():
    """samples = 8 is accepted (a power of 2) but its indices are noise: on the Ishigami
    function at N = 8 SALib gives S1 = 0.59, -0.04, 0.17 against 0.31, 0.44, 0 (with
    intervals up to +-1.2; seed 12345, measured).  Before, nothing said so but the
    `_conf` columns."""
    from workbench.analysis.sensitivity_design import design, design_html, design_lines
    counts = {"sobol_evaluations": 32, "sobol_engine_runs": 1, "tornado_evaluations": 5,
              "tornado_engine_runs": 1}
    few = design(SensitivityOptions(samples=8, factors={"vd_SO2": (0.5, 1.5),
                                                        "air_conc": (0.9, 1.1)}),
                 {**counts, "widest_interval": 1.234})
    assert few["too_few_samples"].startswith("N = 8 is below 64")
    assert "+-1.2" in few["too_few_samples"]
    assert design_lines(few)[0].startswith("caution: N = 8 is below 64")
    assert "<b>Caution.</b> N = 8 is below 64" in design_html(few)
    enough = design(SensitivityOptions(samples=64, factors={"vd_SO2": (0.5, 1.5),
                                                            "air_conc": (0.9, 1.1)}), counts)
    assert enough["too_few_samples"] is None
    assert not design_lines(enough)[0].startswith("caution")


def test_a_span_without_data_says_so_rather_than_no_total_varies(tiny, tmp_path, capsys):
    """[period] of a year after the record: the budget is missing everywhere.  Before,
    the command wrote two header-only CSV files without a word and the page said "No
    total varies with the factors given"; now the console and the page say that the
    span holds none of the inputs (the words of `workbench run`'s warning)."""
    import shutil
    from workbench.cli import main
    shared, _, _, _ = tiny
    shutil.copytree(shared.path.parent, tmp_path / "proj")
    path = tmp_path / "proj" / shared.path.name
    path.write_text(path.read_text().replace('start = "2021-02-01"', 'start = "2030-02-01"')
                    .replace('end = "2021-03-01"', 'end = "2030-03-01"'))
    out = tmp_path / "sens"
    capsys.readouterr()
    assert main(["sensitivity", str(path), "--out", str(out), "--quiet"]) == 0
    console = " ".join(capsys.readouterr().out.split())   # the wrapped console, read whole
    assert console.startswith("warning: no total of the cells analysed varies, and "
                              "sensitivity.csv holds no row: the reporting span 2030-02-01 "
                              "to 2030-03-01 holds none of the precipitation")
    html = (out / "sensitivity.html").read_text()
    assert "No total varies with the factors given" not in html
    assert "holds none of the air" in html
    d = json.loads((out / "provenance.json").read_text())["sensitivity_design"]
    assert d["no_rows"].startswith("no total of the cells analysed varies")


def test_the_sobol_explorer_gives_the_ranges_and_flags_few_samples(tiny):
    """The explorer's line read "Factors and ranges: ... (vd_SO2, gauge_catch,
    wetness_rule)", names without ranges, and 16 base samples (offered in its list) were
    drawn without a word."""
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.session import Session
    sc, _, _, _ = tiny
    app = SobolExplorer(Session.open(sc.path), output="S dry", samples=16)
    assert "<code>vd_SO2</code> 0.5 to 1.5 (multiplier of the dry deposition velocity of " \
           "SO2 [1])" in app.note_w.value
    assert "<code>wetness_rule</code> met, always_wet" in app.note_w.value
    assert app.idle_w.value.startswith("Caution: N = 16 base samples is below 64")
