"""The benchmark scripts run (their numbers are reported in docs/performance.md).

Smoke tests on a small copy of the invented demo: a script that no longer runs would
leave the report without a source.  Nothing here is timed or compared with a time.
"""
import importlib.util
import sys
import warnings
from pathlib import Path

import pytest

from ui.demo_subset import write_demo_subset

ROOT = Path(__file__).resolve().parents[1]


def _load(name):
    spec = importlib.util.spec_from_file_location(f"bench_{name}", ROOT / "benchmarks" / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def scenario(tmp_path_factory):
    return write_demo_subset(tmp_path_factory.mktemp("bench"), ("ridge",), 2021, 2021)


def test_ui_latency_times_the_controls_asked_for(scenario, tmp_path, capsys):
    bench = _load("ui_latency")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--repeat", "1", "--only",
                          "wet.detection_limit", "particles.pNO3.fine_fraction",
                          "--json", str(tmp_path / "out.json")])
    assert [r["assumption"] for r in out["cases"]] == ["wet.detection_limit",
                                                       "particles.pNO3.fine_fraction"]
    assert all(r["cold_median_ms"] > 0 for r in out["cases"])
    assert set(out["views_ms"]) >= {"receptor, first view", "unit"}
    assert (tmp_path / "out.json").exists()
    assert "slowest cold median" in capsys.readouterr().out


def test_velocities_benchmark_prints_its_sections(scenario, capsys):
    bench = _load("velocities")
    bench.main(["--scenario", str(scenario), "--repeat", "1"])
    text = capsys.readouterr().out
    for section in ("total", "particles", "gases", "post"):
        assert section in text


def test_uncertainty_benchmark_times_a_site_year(scenario, capsys):
    bench = _load("uncertainty")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--site", "ridge", "--year", "2021",
                          "--draws", "50", "--repeat", "1"])
    assert set(out) == {"layer_s", "site_year_s", "network_year_s"}
    assert "1,000 draws of the site-year" in capsys.readouterr().out
