"""Command line and run folder: refusals with their messages, and the demo end to end."""
import json
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.cli import DEMO_SCENARIO, main
from workbench.errors import ScenarioError
from workbench.scenario import load_scenario

import test_budget as tb


@pytest.fixture
def tiny(tmp_path):
    return tb._write(tmp_path)


def test_refuses_output_folder_holding_an_input(tiny, capsys):
    rc = main(["run", str(tiny), "--out", str(tiny.parent), "--quiet"])
    err = capsys.readouterr().err
    assert rc == 2
    assert f"output folder {tiny.parent.resolve()} holds the scenario input scenario.toml" in err


def test_refuses_non_empty_folder_without_overwrite(tiny, tmp_path, capsys):
    out = tmp_path / "out"
    out.mkdir()
    (out / "old.txt").write_text("x")
    rc = main(["run", str(tiny), "--out", str(out), "--quiet"])
    assert rc == 2
    assert "is not empty: use --overwrite" in capsys.readouterr().err
    assert main(["run", str(tiny), "--out", str(out), "--quiet", "--overwrite"]) == 0
    assert (out / "budget.csv").exists()


def test_unknown_scenario_key_suggests(tiny):
    text = tiny.read_text().replace('resolution = "month"', 'resolutoin = "month"')
    tiny.write_text(text)
    with pytest.raises(ScenarioError) as exc:
        load_scenario(tiny)
    line = text.splitlines().index('resolutoin = "month"') + 1
    assert str(exc.value) == (f"{tiny.resolve()}, line {line}, column 'period.resolutoin': unknown key, "
                              "expected one of start, end, resolution (did you mean 'resolution'?)")


def test_unknown_option_key_names_line(tiny):
    text = tiny.read_text().replace('sulfate_basis = "total"', 'sulfate_bases = "total"')
    tiny.write_text(text)
    with pytest.raises(ScenarioError, match=r"column 'budget.sulfate_bases': unknown key, .*"
                       r"\(did you mean 'sulfate_basis'\?\)"):
        load_scenario(tiny)


def test_wrong_type_in_scenario(tiny):
    tiny.write_text(tiny.read_text().replace("min_air_coverage", "x").replace(
        'sulfate_basis = "total"', 'sulfate_basis = 3'))
    with pytest.raises(ScenarioError, match="column 'budget.sulfate_basis': wrong type: got '3', "
                       "expected a string like the default 'nss'"):
        load_scenario(tiny)


def test_missing_input_path(tiny):
    tiny.write_text(tiny.read_text().replace('air = "air.csv"', 'air = "nowhere.csv"'))
    with pytest.raises(ScenarioError) as exc:
        load_scenario(tiny)
    assert "column 'inputs.air': input file does not exist: got 'nowhere.csv', expected a " \
           "path relative to the scenario file, or absolute" in str(exc.value)


def test_scenario_is_not_code(tiny):
    tiny.write_text(tiny.read_text() + '\n[inputs.extra]\ncode = "__import__(\'os\')"\n')
    with pytest.raises(ScenarioError, match="column 'inputs.extra': unknown key"):
        load_scenario(tiny)


def test_bulk_collector_refuses_particle_dry_deposition(tiny, capsys):
    sites = tiny.parent / "sites.toml"
    sites.write_text(sites.read_text() + 'collector = "bulk"\n')
    air = tiny.parent / "air.csv"
    lines = air.read_text().splitlines()
    lines[1] += ",pSO4 [ug/m3]"
    lines[2:] = [ln + ",1.0" for ln in lines[2:]]
    air.write_text("\n".join(lines) + "\n")
    tiny.write_text(tiny.read_text().replace("SO2 = 0.5", "SO2 = 0.5\npSO4 = 0.2"))
    rc = main(["run", str(tiny), "--out", str(tiny.parent / "o"), "--quiet"])
    assert rc == 2
    assert ("error: site 'alpha' has a bulk collector: its 'wet' deposition already holds some "
            "dry deposition, so particle dry deposition (pSO4) is not added; name a correction "
            "in [budget] bulk_correction") in capsys.readouterr().err
    tiny.write_text(tiny.read_text().replace('sulfate_basis = "total"',
                                             'sulfate_basis = "total"\nbulk_correction = "scale_wet"'))
    assert main(["run", str(tiny), "--out", str(tiny.parent / "o2"), "--quiet"]) == 0


def test_check_prints_ledger(tiny, capsys):
    assert main(["check", str(tiny), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "rows per file" in out and "alpha" in out


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "run"
    assert main(["demo", "--out", str(out), "--quiet"]) == 0
    return out


def test_demo_end_to_end(demo_run):
    names = {p.name for p in demo_run.iterdir()}
    assert {"budget.csv", "budget.nc", "samples.csv", "velocities.nc", "report.html",
            "provenance.json", "summary.csv"} <= names
    t = pd.read_csv(demo_run / "budget.csv")
    assert list(t.columns[:13]) == ["site", "receptor", "period_start", "period_end", "element",
                                    "pathway", "species", "flux_kg_ha", "flux_eq_ha",
                                    "flux_kg_ha_yr", "flux_eq_ha_yr", "completeness", "status"]
    per = t[t["period"] != "span"]
    key = ["site", "receptor", "period", "element"]
    comp = per[per["species"] != "all"].groupby(key + ["pathway"])["flux_kg_ha"].sum(min_count=1)
    sums = per[per["species"] == "all"].set_index(key + ["pathway"])["flux_kg_ha"]
    wet_dry = sums.xs("wet", level="pathway").fillna(0) + sums.xs("dry", level="pathway").fillna(0)
    np.testing.assert_allclose(sums.xs("total", level="pathway").fillna(0), wet_dry, rtol=1e-6)
    np.testing.assert_allclose(sums.xs("wet", level="pathway").dropna(),
                               comp.xs("wet", level="pathway").reindex(sums.xs("wet", level="pathway").dropna().index),
                               rtol=1e-6)
    # eq/ha from the charge and the molar mass (2 eq per mol S, 1 per mol N; IUPAC weights)
    s = per[per["element"] == "S"].dropna(subset=["flux_kg_ha"])
    np.testing.assert_allclose(s["flux_eq_ha"], s["flux_kg_ha"] / 32.06e-3 * 2, rtol=1e-6)
    n = per[per["element"] == "N"].dropna(subset=["flux_kg_ha"])
    np.testing.assert_allclose(n["flux_eq_ha"], n["flux_kg_ha"] / 14.007e-3, rtol=1e-6)
    np.testing.assert_allclose(n["flux_mmol_m2"], n["flux_kg_ha"] / 14.007e-3 / 10, rtol=1e-6)
    assert set(t["status"].dropna()) <= {"complete", "flagged", "filled", "partial", "missing"}
    prov = json.loads((demo_run / "provenance.json").read_text())
    assert set(prov["inputs"]) == {"scenario", "sites", "precipitation", "air", "met"}
    html = (demo_run / "report.html").read_text()
    assert "model-based and uncertain" in html and "What the budget leaves out" in html
    assert '<script src="http' not in html and "<script src='http" not in html  # self-contained


def test_writes_are_atomic_and_quiet(tiny, capsys):
    """No temporary file is left behind, files get the usual mode, --quiet prints no bar."""
    import os
    out = tiny.parent / "run"
    assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 0
    assert capsys.readouterr().err == ""
    names = [p.name for p in out.iterdir()]
    assert not [n for n in names if n.endswith(".tmp") or n.startswith(".")]
    umask = os.umask(0)
    os.umask(umask)
    assert all((p.stat().st_mode & 0o777) == (0o666 & ~umask) for p in out.iterdir())
