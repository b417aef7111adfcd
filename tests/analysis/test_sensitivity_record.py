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
    html = (out / "sensitivity.html").read_text()
    assert "What was varied" in html and "<code>vd_SO2</code></td><td>0.5 to 1.5" in html
    assert "met, always_wet" in html and "Not varied" in html
    assert "S1: first-order index" in html
