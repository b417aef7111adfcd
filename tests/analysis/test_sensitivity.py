"""Sobol indices and the tornado of the budget totals.

Reference for the linear additive case: for Y = sum_i a_i X_i with independent X_i
uniform on [l_i, h_i], Var(a_i X_i) = a_i^2 (h_i - l_i)^2 / 12 and the first-order and
total indices both equal the variance share V_i / sum V (common practice: textbook
variance decomposition; Saltelli et al. 2010, Comput. Phys. Commun. 181, 259).  The
estimators are SALib's (the reference library of the issue); the tolerance is their
95 % bootstrap interval plus 0.02.
"""
import dataclasses

import numpy as np
import pandas as pd
import pytest

from workbench.analysis import sensitivity as S
from workbench.analysis.uncertainty import COMPONENTS

pytest.importorskip("SALib")


def _base(sc):
    return {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"],
            "fixed_velocity": sc.fixed_velocity}


KW = {"resolution": "month", "start": "2021-02-01", "end": "2021-03-01"}


def _j(species):
    return next(j for j, c in enumerate(COMPONENTS) if c[2] == species and c[1] == "dry")


def test_sobol_of_a_linear_additive_total_gives_the_variance_shares(tiny):
    sc, study, res, _ = tiny
    ranges = {"vd_SO2": (0.5, 1.5), "vd_pSO4": (0.2, 3.0), "vd_NH3": (0.5, 2.0)}
    opt = S.SensitivityOptions(samples=1024, seed=5, factors=ranges)
    frame = S.sobol(study, _base(sc), opt, KW)
    dep = res.budget["deposition"].values[0, 0, 0]
    # S dry = D_SO2 F_SO2 + D_pSO4 F_pSO4: additive in independent uniform factors
    v = {f: (dep[_j(f[3:])] * (ranges[f][1] - ranges[f][0])) ** 2 / 12 for f in ("vd_SO2", "vd_pSO4")}
    share = {f: v[f] / sum(v.values()) for f in v}
    share["vd_NH3"] = 0.0                            # NH3 holds no S
    got = frame[(frame["element"] == "S") & (frame["quantity"] == "dry")].set_index("factor")
    for f, want in share.items():
        assert abs(got.loc[f, "S1"] - want) <= got.loc[f, "S1_conf"] + 0.02, f
        assert abs(got.loc[f, "ST"] - want) <= got.loc[f, "ST_conf"] + 0.02, f
    assert list(frame.columns) == ["site", "receptor", "period", "element", "quantity",
                                   "factor", "S1", "S1_conf", "ST", "ST_conf", "note"]


def test_same_seed_same_numbers(tiny):
    sc, study, _, _ = tiny
    opt = S.SensitivityOptions(samples=32, seed=9)
    a = S.sobol(study, _base(sc), opt, KW)
    b = S.sobol(study, _base(sc), opt, KW)
    pd.testing.assert_frame_equal(a, b)
    c = S.sobol(study, _base(sc), dataclasses.replace(opt, seed=10), KW)
    assert not np.allclose(a["S1"], c["S1"])


def test_tornado_moves_one_factor_at_a_time(tiny):
    sc, study, res, _ = tiny
    opt = S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "gauge_catch": (0.9, 1.1),
                                        "wetness_rule": ("met", "always_wet")})
    t = S.tornado(study, _base(sc), opt, KW)
    row = t[(t["element"] == "S") & (t["quantity"] == "dry") & (t["factor"] == "vd_SO2")].iloc[0]
    so2 = res.budget["deposition"].values[0, 0, 0, _j("SO2")] * 32.06e-3 * 1e4    # kg S/ha
    assert row["output_low"] == pytest.approx(row["output_base"] - 0.5 * so2, rel=1e-4)
    assert row["output_high"] == pytest.approx(row["output_base"] + 0.5 * so2, rel=1e-4)
    gauge = t[(t["element"] == "S") & (t["quantity"] == "wet") & (t["factor"] == "gauge_catch")].iloc[0]
    assert gauge["output_high"] / gauge["output_base"] == pytest.approx(1.1, rel=1e-9)
    # the wetness rule does not reach fixed velocities: no change
    wr = t[(t["factor"] == "wetness_rule") & (t["quantity"] == "total")]
    assert (wr["output_low"] == wr["output_base"]).all() and (wr["output_high"] == wr["output_base"]).all()
    assert set(wr["low"]) == {"met"} and set(wr["high"]) == {"always_wet"}


def test_options_are_checked():
    with pytest.raises(ValueError, match="power of 2"):
        S.SensitivityOptions(samples=100)
    with pytest.raises(ValueError, match="unknown sensitivity factor"):
        S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "rc_scale": (0.5, 2.0)})
    with pytest.raises(ValueError, match="low < high"):
        S.SensitivityOptions(factors={"vd_SO2": (1.5, 0.5), "gauge_catch": (0.9, 1.1)})
    with pytest.raises(ValueError, match="wetness_rule"):
        S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "wetness_rule": ("met", "soggy")})


def test_engine_factors_change_the_dry_options():
    from workbench.drydep import DryOptions
    dry = S.apply_engine(DryOptions(), {"fine_fraction_pNO3": 0.2, "fine_mmd_pSO4": 0.6e-6,
                                        "z0_grass": 0.05, "wetness_rule": "always_dry"})
    assert dry.particle_modes["pNO3"].fine_fraction == 0.2
    assert dry.particle_modes["pSO4"].fine.mmd == 0.6e-6
    assert dry.roughness["grass"] == (0.05, None)
    assert dry.wetness_rule == "always_dry"
    assert S.apply_engine(DryOptions(), {"wetness_rule": None}) == DryOptions()


def test_cli_writes_the_sensitivity_folder(tiny, tmp_path):
    from workbench.cli import main
    sc, _, _, _ = tiny
    assert main(["sensitivity", str(sc.path), "--out", str(tmp_path / "sens"), "--quiet"]) == 0
    frame = pd.read_csv(tmp_path / "sens" / "sensitivity.csv")
    assert list(frame.columns) == ["site", "receptor", "period", "element", "quantity",
                                   "factor", "S1", "S1_conf", "ST", "ST_conf", "note"]
    assert set(frame["factor"]) == {"vd_SO2", "gauge_catch", "wetness_rule"}
    assert (tmp_path / "sens" / "tornado.csv").exists()
    html = (tmp_path / "sens" / "sensitivity.html").read_text()
    assert "Sobol indices" in html and "authority" in html


def test_figure_spec_has_sobol_bars_and_tornado():
    from workbench.ui.figures_sensitivity import sensitivity_figure, sensitivity_spec
    keys = {"site": "a", "receptor": "grass", "period": "2021", "element": "N",
            "quantity": "total"}
    sob = pd.DataFrame([{**keys, "factor": f, "S1": s1, "S1_conf": 0.01, "ST": st,
                         "ST_conf": 0.02} for f, s1, st in (("vd_NH3", 0.6, 0.65),
                                                             ("gauge_catch", 0.3, 0.32))])
    tor = pd.DataFrame([{**keys, "factor": f, "low": "0.5", "high": "2.0", "base": "1.0",
                         "output_low": lo, "output_high": hi, "output_base": 10.0}
                        for f, lo, hi in (("vd_NH3", 8.0, 14.0), ("gauge_catch", 9.5, 10.5))])
    spec = sensitivity_spec(sob, tor, "a", "grass", "2021", "N", "total")
    names = [t["name"] for t in spec["data"]]
    assert names == ["first order", "total", "factor low", "factor high"]
    # sorted by ST; words with the unit on the axis, the key in the hover
    assert spec["data"][1]["y"] == ["gauge catch (multiplier)", "Vd of NH3 (multiplier)"]
    assert spec["data"][1]["customdata"] == ["gauge_catch", "vd_NH3"]
    assert spec["data"][3]["x"] == [0.5, 4.0]                          # high - base
    assert spec["data"][2]["base"] == 10.0
    assert len(sensitivity_figure(sob, tor, "a", "grass", "2021").data) == 4


def test_sobol_explorer_shows_bars_and_tornado(tiny):
    from workbench.ui.app_sobol import SobolExplorer
    from workbench.ui.session import Session
    sc, _, _, _ = tiny
    app = SobolExplorer(Session.open(sc.path), output="S dry", samples=16)
    assert set(app.sobol["factor"]) == {"vd_SO2", "gauge_catch", "wetness_rule"}
    assert [t.name for t in app.fig.data] == ["first order", "total", "factor low", "factor high"]
    assert "Vd of SO2 (multiplier)" in app.fig.data[0].y and "vd_SO2" in app.fig.data[0].customdata
    assert "engine runs" in app.bar_w.value                 # tqdm's bar, in the app
    app.output_w.value = "S wet"                             # redrawn from the same analysis
    assert "gauge catch (multiplier)" in app.fig.data[0].y


def test_scenario_saved_from_the_apps_keeps_the_analysis_sections(tiny, tmp_path):
    from workbench.scenario import load_scenario
    from workbench.ui.session import Session
    sc, _, _, _ = tiny
    session = Session.open(sc.path)
    path = session.save_scenario(sc.path.parent / "saved.toml", session.baseline)
    back = load_scenario(path)
    assert back.options["uncertainty"] == sc.options["uncertainty"]
    assert back.options["sensitivity"] == sc.options["sensitivity"]


def _variant(tiny, tmp_path):
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    sc, _, _, _ = tiny
    src = sc.path.parent
    for name in ("sites.toml", "precip.csv", "scenario.toml"):
        (tmp_path / name).write_text((src / name).read_text())
    air = pd.read_csv(src / "air.csv", comment="#")
    air["NH3 [ug/m3]"] = [4.0, 6.0, 2.0, 5.0]                 # invented
    (tmp_path / "air.csv").write_text("# reference_state: ambient\n" + air.to_csv(index=False))
    met = pd.read_csv(src / "met.csv")
    hour = pd.to_datetime(met["time"]).dt.hour
    met["solar_radiation [W/m2]"] = np.where((hour >= 8) & (hour <= 16), 500.0, 0.0)
    met["temperature [degC]"] = 15.0
    met.to_csv(tmp_path / "met.csv", index=False)
    vsc = load_scenario(tmp_path / "scenario.toml")
    base = _base(vsc)
    base["dry"] = dataclasses.replace(base["dry"], seasonal_category=1)
    base["fixed_velocity"] = {k: v for k, v in vsc.fixed_velocity.items() if k not in ("SO2", "NH3")}
    return Study.from_scenario(vsc), base


def _row(t, element, quantity, factor):
    return t[(t["element"] == element) & (t["quantity"] == quantity)
             & (t["factor"] == factor)].iloc[0]


def test_rc_scale_and_nh3_gamma_factors_move_the_dry_totals(tiny, tmp_path):
    study, base = _variant(tiny, tmp_path)
    opt = S.SensitivityOptions(factors={"rc_scale_SO2": [], "rc_scale_NH3": (0.5, 2.0),
                                        "nh3_gamma_grass": (0.0, 100.0)})
    assert opt.factors["rc_scale_SO2"] == (0.5, 2.0)            # the default range
    t = S.tornado(study, base, opt, KW)
    so2 = _row(t, "S", "dry", "rc_scale_SO2")
    # more surface resistance, less deposition (Vd = 1/(Ra + Rb + k Rc))
    assert so2["output_low"] > so2["output_base"] > so2["output_high"]
    assert (so2["low"], so2["high"], so2["base"]) == ("0.5", "2.0", "scenario")
    assert _row(t, "N", "dry", "rc_scale_SO2")["output_high"] == pytest.approx(
        _row(t, "N", "dry", "rc_scale_SO2")["output_base"], rel=1e-12)   # no N in SO2
    nh3 = _row(t, "N", "dry", "rc_scale_NH3")
    assert nh3["output_low"] > nh3["output_base"] > nh3["output_high"]
    assert _row(t, "S", "dry", "rc_scale_NH3")["output_high"] == pytest.approx(
        _row(t, "S", "dry", "rc_scale_NH3")["output_base"], rel=1e-12)
    # the scenario's NH3 is deposition-only: Gamma_s has nothing to act on, the factor's
    # ends are the base and its rows say so (before, the factor switched the
    # bidirectional model on at its ends only: a bar of another model around a
    # deposition-only base, with no note)
    for q in ("dry", "total"):
        gam = _row(t, "N", q, "nh3_gamma_grass")
        assert gam["output_low"] == pytest.approx(gam["output_base"], rel=1e-12)
        assert gam["output_high"] == pytest.approx(gam["output_base"], rel=1e-12)
        assert gam["note"].startswith('no effect: [dry] nh3_treatment = "deposition_only"')
    assert "nh3_treatment" not in _row(t, "N", "dry", "rc_scale_NH3")["note"]
    # the scenario's own bidirectional exchange: a larger emission potential, a larger
    # compensation point, less net NH3 deposition, around a bidirectional base
    bi = {**base, "dry": dataclasses.replace(base["dry"], nh3_treatment="bidirectional")}
    tb = S.tornado(study, bi, S.SensitivityOptions(
        factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_grass": (0.0, 100.0)}), KW)
    gam = _row(tb, "N", "dry", "nh3_gamma_grass")
    assert gam["output_high"] < gam["output_base"] < gam["output_low"]
    assert "no effect" not in gam["note"]
    sob = S.sobol(study, base, dataclasses.replace(opt, samples=8), KW)
    n_dry = sob[(sob["element"] == "N") & (sob["quantity"] == "dry")].set_index("factor")
    assert set(n_dry.index) == set(opt.factors)
    assert n_dry.loc["rc_scale_SO2", "ST"] == pytest.approx(0.0, abs=1e-9)   # no N in SO2


def test_new_engine_factors_change_the_dry_options_and_refuse_unknown_names():
    from workbench.drydep import DryOptions
    dry = S.apply_engine(DryOptions(), {"rc_scale_O3": 2.0, "nh3_gamma_crops": 0.8})
    assert dry.rc_scale == {"O3": 2.0}
    assert dry.nh3_emission_potential == {"crops": pytest.approx(800.0)}   # 0.8 x 1000
    assert dry.nh3_treatment == "deposition_only"      # the scenario's treatment stands
    assert S.apply_engine(DryOptions(nh3_treatment="bidirectional"),
                          {"nh3_gamma_crops": 0.8}).nh3_treatment == "bidirectional"
    assert S.apply_engine(DryOptions(), {"nh3_gamma_crops": None}) == DryOptions()
    with pytest.raises(ValueError, match="unknown gas in factor 'rc_scale_XY'"):
        S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "rc_scale_XY": (0.5, 2.0)})
    with pytest.raises(ValueError, match="unknown land-use class in factor 'nh3_gamma_lawn'"):
        S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "nh3_gamma_lawn": (0.0, 10.0)})
    with pytest.raises(ValueError, match="must be > 0"):
        S.SensitivityOptions(factors={"vd_SO2": (0.5, 1.5), "rc_scale_SO2": (0.0, 2.0)})


def test_a_sensitivity_folder_records_what_made_it_and_verifies(tiny, tmp_path, capsys):
    """A sensitivity folder handed to a colleague (a trial user): provenance.json, written
    last, names the version, every option in force (the [sensitivity] seed and factors
    among them), the inputs with their SHA-256 and the checksum of every file, so that
    `workbench verify` checks it and names an input edited afterwards.  Old code: no
    provenance.json; verify said "not a finished run folder (`workbench run` writes it
    last)" of a finished folder; then it called the folder a "run folder" and a new
    analysis "a run" (found by a trial user): it names the kind of folder it checks."""
    import json
    import shutil
    from workbench.cli import main
    from workbench.scenario import load_scenario
    shared, _, _, _ = tiny                # a fixture shared with other tests: a copy
    shutil.copytree(shared.path.parent, tmp_path / "proj")
    sc = load_scenario(tmp_path / "proj" / shared.path.name)
    out = tmp_path / "sens"
    assert main(["sensitivity", str(sc.path), "--out", str(out), "--quiet"]) == 0
    prov = json.loads((out / "provenance.json").read_text())
    assert prov["outputs"][-1] == "provenance.json"
    assert set(prov["output_sha256"]) == {"sensitivity.csv", "tornado.csv",
                                          "sensitivity.html", "CAUTION.txt"}
    assert prov["scenario"]["sensitivity"]["seed"] == sc.options["sensitivity"].seed
    assert set(prov["scenario"]["sensitivity"]["factors"]) == \
        {"vd_SO2", "gauge_catch", "wetness_rule"}
    assert set(prov["inputs"]) >= {"scenario", "sites", "precipitation", "air", "met"}
    capsys.readouterr()
    assert main(["verify", str(out)]) == 0
    # the console wraps a long line for an 80-column terminal: read as single spaces
    said = " ".join(capsys.readouterr().out.split())
    assert said.startswith(f"sensitivity folder {out.resolve()} (written by "
                           "`workbench sensitivity`) written ")
    assert "result: the sensitivity folder matches its scenario and inputs" in said
    assert "sites analysed: " in said and "run folder" not in said
    assert main(["check", str(out)]) == 2             # the folder given for its scenario
    assert "is a sensitivity folder, not a scenario" in capsys.readouterr().err
    air = sc.input_path("air")
    assert air.is_relative_to(tmp_path / "proj")     # the copy's, not the shared file
    air.write_text(air.read_text() + "\n")
    assert main(["verify", str(out)]) == 1
    said = " ".join(capsys.readouterr().out.split())
    assert f"input air ({air.name}): {air} differs from the run" in said
    assert ("result: 1 difference(s): a `workbench sensitivity` of the scenario now would "
            "not reproduce this folder") in said


def test_compare_of_two_sensitivity_folders_names_the_rows_that_differ(tiny, tmp_path, capsys):
    """`workbench compare` of two sensitivity folders (one factor range changed) lists
    the option, then the Sobol and tornado numbers that differ with their cell, total
    and parameter; a run folder beside a sensitivity folder gets one message saying
    what compare takes.  Old code: "no budget.csv" for both."""
    import shutil

    from workbench.cli import main
    from workbench.runcompare import compare_runs
    shared, _, _, _ = tiny
    for name in ("pa", "pb"):
        shutil.copytree(shared.path.parent, tmp_path / name)
    scen_b = tmp_path / "pb" / shared.path.name
    scen_b.write_text(scen_b.read_text().replace("vd_SO2 = [0.5, 1.5]", "vd_SO2 = [0.6, 1.5]"))
    for name in ("pa", "pb"):
        assert main(["sensitivity", str(tmp_path / name / shared.path.name), "--out",
                     str(tmp_path / f"s_{name}"), "--quiet"]) == 0
    capsys.readouterr()
    assert main(["compare", str(tmp_path / "s_pa"), str(tmp_path / "s_pb"), "--all"]) == 1
    out = " ".join(capsys.readouterr().out.split())        # wrapped for 80 columns
    assert "sensitivity.factors.vd_SO2: [0.5, 1.5] in A, [0.6, 1.5] in B" in out
    c = compare_runs(tmp_path / "s_pa", tmp_path / "s_pb", rows=None)
    torn = c.budget[c.budget["file"] == "tornado.csv"]
    # moving the low end of vd_SO2 changes that factor's low output only, never the base
    assert set(torn["factor"]) == {"vd_SO2"} and set(torn["column"]) == {"output_low"}
    assert "tornado (tornado.csv): " in out and "parameters: vd_SO2;" in out
    a = pd.read_csv(tmp_path / "s_pa" / "tornado.csv")
    b = pd.read_csv(tmp_path / "s_pb" / "tornado.csv")
    low_differs = (a["output_low"] != b["output_low"]).sum()
    assert len(torn) == low_differs > 0
    assert main(["compare", str(tmp_path / "s_pa"), str(tmp_path / "s_pa")]) == 0
    assert "Sobol indices (sensitivity.csv): the " in capsys.readouterr().out
    assert main(["run", str(tmp_path / "pa" / shared.path.name), "--out",
                 str(tmp_path / "run"), "--quiet"]) == 0
    capsys.readouterr()
    assert main(["compare", str(tmp_path / "run"), str(tmp_path / "s_pa")]) == 2
    err = capsys.readouterr().err
    assert "workbench compare takes two folders of one kind: two `workbench run` folders" in err
    assert "is a `workbench run` folder, B (" in err
    assert "a `workbench sensitivity` folder" in err
