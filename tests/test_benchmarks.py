"""The benchmark scripts run (their numbers are reported in docs/performance.md).

Smoke tests on a small copy of the invented demo: a script that no longer runs would
leave the report without a source.  Nothing here is timed or compared with a time.
"""
import sys
import warnings
from pathlib import Path

import pytest

from script_modules import bench_script
from ui.demo_subset import write_demo_subset

ROOT = Path(__file__).resolve().parents[1]


def _load(name):
    return bench_script(name)


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


def test_export_benchmark_sizes_the_figures_and_times_the_session(scenario, tmp_path, capsys):
    """benchmarks/export_figures.py (docs/performance.md, "Export figures"): the figures
    of the site explorer, their sizes and one session's time; skipped without kaleido
    or a Chrome/Chromium."""
    import plotly.graph_objects as go
    from workbench.ui.export import ExportError, export_figure
    try:
        export_figure(go.Figure(), tmp_path / "probe.png")
    except ExportError as exc:
        pytest.skip(f"PNG export cannot run here: {exc}")
    bench = _load("export_figures")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--repeat", "1",
                          "--cases", "sizes", "together"])
    assert len(out["figures"]) >= 7 and set(out["sizes"]) == set(out["figures"])
    assert all(s["png_bytes"] > 0 and s["json_bytes"] > 0 for s in out["sizes"].values())
    assert out["together_s"]["median"] > 0 and "alone_s" not in out
    assert "load average" in capsys.readouterr().out


def test_export_benchmark_times_clicks_with_a_kept_browser(scenario, tmp_path, capsys):
    """benchmarks/export_figures.py --cases clicks (docs/performance.md, "Export
    figures: a browser kept between clicks"): three clicks each way, the same PNGs."""
    import plotly.graph_objects as go
    from workbench.ui.export import ExportError, close_kept_browser, export_figure
    try:
        export_figure(go.Figure(), tmp_path / "probe.png")
    except ExportError as exc:
        pytest.skip(f"PNG export cannot run here: {exc}")
    bench = _load("export_figures")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--repeat", "1", "--cases", "clicks"])
    clicks = out["clicks_s"]
    assert all(len(clicks[k]["median"]) == 3 and min(clicks[k]["median"]) > 0
               for k in ("each", "kept"))
    n = len(out["figures"])
    assert clicks["kept"]["same_bytes"] == f"{n} of {n}"
    assert "second / first" in capsys.readouterr().out
    close_kept_browser()


def test_derived_split_benchmark_checks_old_and_new_alike(tmp_path_factory, capsys):
    """benchmarks/derived_split.py: the split table from scratch and from the graph, the
    network's site loop and its one call (each pair checked equal inside); no time
    asserted."""
    two = write_demo_subset(tmp_path_factory.mktemp("split"), ("ridge", "mere"), 2021, 2021)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = _load("derived_split").main(["--scenario", str(two), "--years", "2021", "2021",
                                           "--repeat", "1"])
    assert set(out) == {"split_ratio", "network_cold_ratio", "network_warm_ratio"}
    assert "network_derived, 2 sites" in capsys.readouterr().out


def test_velocities_benchmark_prints_its_sections(scenario, capsys):
    bench = _load("velocities")
    bench.main(["--scenario", str(scenario), "--repeat", "1"])
    text = capsys.readouterr().out
    for section in ("total", "particles", "gases", "post"):
        assert section in text


# --- the two references of the engine's resistance chain ------------------------------------

def _reference_module():
    sys.path.insert(0, str(ROOT / "benchmarks"))
    try:
        import reference_chain
    finally:
        sys.path.remove(str(ROOT / "benchmarks"))
    return reference_chain


@pytest.fixture(scope="module")
def small_case(tmp_path_factory):
    """ridge (forest, moorland, grass) and mere (wetland, water): 4 days of January and July."""
    import numpy as np
    from workbench.drydep import DryOptions, velocities
    from workbench.io import read_met, read_sites
    scen = write_demo_subset(tmp_path_factory.mktemp("ref"), ("ridge", "mere"), 2021, 2021)
    cat = read_sites(scen.parent / "sites.toml")
    met, _ = read_met(scen.parent / "met.csv.gz", cat)
    t = met["time"].values
    keep = (((t >= np.datetime64("2021-01-01T01")) & (t < np.datetime64("2021-01-05")))
            | ((t >= np.datetime64("2021-07-01T01")) & (t < np.datetime64("2021-07-05"))))
    met = met.isel(time=np.flatnonzero(keep)).load()
    surf = cat.surfaces()
    # a low Ra cap (an allowed option value) so that the cap branch is reached; the
    # references implement the blending-height transfer of u*, so it is named here
    opt = DryOptions(gases=("SO2",), particles=("pSO4",), components=False, ra_cap=150.0,
                     ustar_transfer="blending_height")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        eng = velocities(met, surf, opt)
    return met, surf, opt, eng


def test_the_small_case_reaches_the_branches(small_case):
    """The compared hours hold day and night, dew and rain, open water, floor and cap."""
    import numpy as np
    _, surf, _, eng = small_case
    kind = eng["wet_kind"].values
    assert (kind == 1).any() and (kind == 2).any() and (kind == 0).any()
    assert (eng["met_sensible_heat_flux"].values > 0).any()
    assert (eng["met_sensible_heat_flux"].values <= 0).any()
    assert "water" in [str(r) for r in surf["receptor"].values]
    assert eng["ustar_floor_used"].values.any() and eng["ra_cap_used"].values.any()
    assert eng["ra_height_raised"].values.any()
    assert len(np.unique(eng["seasonal_category"].values)) >= 2
    inv_l = 1.0 / eng["obukhov_length"].values
    assert (inv_l < 0).any() and (inv_l > 0).any()


@pytest.mark.parametrize("which", ["scalar", "numba"])
def test_reference_equals_the_engine(small_case, which):
    """u*, 1/L, Ra, Rb, Rc and Vd of SO2 and the particle Vd to 1e-9 relative, every hour.

    Every (site, receptor, hour) of the small case is compared (inactive receptors too),
    NaN where the engine has NaN.  1/L of the engine is 1/obukhov_length (one more
    rounding).  The references take the mast's u* and H, the cloud cover, the season and
    the wetness from the engine (see benchmarks/reference_chain.py).
    """
    import numpy as np
    if which == "numba":
        pytest.importorskip("numba")
    rc = _reference_module()
    met, surf, opt, eng = small_case
    prepared = rc.prepare(met, surf, opt, eng)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        got = rc.run_scalar(prepared) if which == "scalar" else rc.run_numba(prepared)
    want = rc.engine_columns(eng)
    assert np.isfinite(want[..., 5]).sum() > 1000
    for k, name in enumerate(rc.OUTPUTS):
        np.testing.assert_allclose(got[..., k], want[..., k], rtol=1e-9, atol=0.0, err_msg=name)


def test_engine_vs_reference_benchmark_runs(tmp_path, capsys):
    pytest.importorskip("numba")
    bench = _load("engine_vs_reference")
    data = write_demo_subset(tmp_path / "d", ("ridge",), 2021, 2021).parent
    out = bench.main(["--data", str(data), "--days", "2", "--sizes", "1", "2",
                      "--scalar-sites", "1", "--threads", "1", "2",
                      "--json", str(tmp_path / "r.json")])
    assert [r["site_years"] for r in out["rows"]] == [1, 2]
    assert all(sorted(r["engine_by_threads"]) == [1, 2] for r in out["rows"])
    assert all(r["engine_over_scalar"] > 0 and r["engine_over_numba"] > 0 for r in out["rows"])
    assert "engine/numba" in capsys.readouterr().out
    assert (tmp_path / "r.json").exists()



def test_engine_vs_reference_without_numba_names_the_extra(monkeypatch):
    """Without the `bench` extra the script stops with one line naming it (it raised
    ModuleNotFoundError from deep inside reference_chain.py, after reading the met)."""
    monkeypatch.setitem(sys.modules, "numba", None)       # import numba -> ImportError
    bench = _load("engine_vs_reference")
    with pytest.raises(SystemExit) as info:
        bench.main(["--data", str(ROOT / "no-such-folder"), "--sizes", "1"])
    assert str(info.value).startswith("error: numba is not installed")
    assert 'deposition-workbench[bench]' in str(info.value)

def test_network_generator_and_guard(tmp_path, capsys):
    """Generated inputs carry N invented sites; sizes above --max are reported, not run."""
    import gzip
    bench = _load("network")
    scen = bench.make_network(tmp_path / "net", 5, years=1)
    ids = {ln.split(",", 1)[0] for ln in gzip.open(scen.parent / "met.csv.gz", "rt")
           if ln[:1] == "n"}
    assert ids == {f"n{i:04d}" for i in range(5)}
    assert "n0004-P" in (scen.parent / "precipitation.csv").read_text()
    assert 'end = "2017-01-01"' in scen.read_text()
    rows = bench.main(["--sizes", "1", "4", "--years", "1", "--max", "1"])
    assert rows[0]["status"] == "run" and rows[0]["exit_code"] == 0
    assert rows[0]["peak_rss_mb"] > 0 and rows[0]["wall_s"] > 0
    assert rows[1]["status"].startswith("not run")
    assert "not run" in capsys.readouterr().out
def test_uncertainty_benchmark_times_a_site_year(scenario, capsys):
    bench = _load("uncertainty")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--site", "ridge", "--year", "2021",
                          "--draws", "50", "--repeat", "1"])
    assert set(out) == {"layer_s", "site_year_s", "network_year_s"}
    assert "1,000 draws of the site-year" in capsys.readouterr().out


def test_uncertainty_benchmark_times_the_variance_shares(scenario, capsys):
    bench = _load("uncertainty")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--site", "ridge", "--year", "2021",
                          "--draws", "20", "--repeat", "1", "--shares"])
    assert {"shares_s", "monte_carlo_years_s"} <= set(out)
    assert "shares of ridge's span totals" in capsys.readouterr().out


def test_same_run_masks_stamps_and_ids_only(tmp_path, capsys):
    """Two run folders that differ only by a time stamp and a plotly id are the same;
    a changed digit, or a file on one side only, is found."""
    same_run = _load("same_run")
    a, b = tmp_path / "a", tmp_path / "b"
    for d, stamp, uid in ((a, "2026-12-03T00:21:44Z", "91afb1bb-3862-44e1-b645-8a57acb38aaa"),
                          (b, "2026-12-03T01:02:03Z", "1b0a7436-2521-463e-8988-9b87091f1fc7")):
        d.mkdir()
        (d / "provenance.json").write_text(f'{{"run_started_utc": "{stamp}", '
                                           f'"output_sha256": {{"budget.nc": "{uid[:8]}"}}}}')
        (d / "report.html").write_text(f'written {stamp[:10]} {stamp[11:16]} UTC'
                                       f'<div id="{uid}">1.25</div>')
    assert same_run.differing(a, b) == []
    assert same_run.main([str(a), str(b)]) == 0
    (b / "report.html").write_text('written 2026-12-03 01:02 UTC'
                                   '<div id="1b0a7436-2521-463e-8988-9b87091f1fc7">1.26</div>')
    (b / "budget.csv").write_text("x\n")
    assert [n for n, _ in same_run.differing(a, b)] == ["budget.csv", "report.html"]
    assert same_run.main([str(a), str(b)]) == 1
    assert "report.html: differs" in capsys.readouterr().out


def test_sheet_met_benchmark_reads_every_variant_alike(capsys):
    """Each variant of the met file (quoted, plain, numbered ids) gives the same rows."""
    bench = _load("sheet_met")
    out = bench.main(["--site-years", "4", "--plain", "--numbered"])
    assert [r["file"] for r in out] == ["quoted CRLF", "plain", "numbered"]
    assert len({r["rows"] for r in out}) == 1 and out[0]["rows"] > 0
    assert len({r["sites"] for r in out}) == 1


def test_lazy_hash_reads_and_hashes_the_netcdf_met(tmp_path, capsys):
    bench = _load("lazy_hash")
    bench.met_case(tmp_path, 1, 1)
    out = capsys.readouterr().out
    assert out.startswith("NetCDF met x1: ") and "% of the read" in out, out


def test_air_unit_step_benchmark_counts_alarms_and_detections():
    bench = _load("air_unit_step")
    false_alarms, found = bench.run(2, "SO2", 3, 3, 52, 0.3, seed=5)
    assert 0 <= false_alarms <= 2 and 0 <= found <= 1
    assert bench.demo_notes() == []


def test_air_own_step_benchmark_counts_alarms_and_detections():
    bench = _load("air_own_step")
    false_alarms, found, changed = bench.run(2, "SO2", 3, 52, 0.35, seed=5)
    assert 0 <= false_alarms <= 2 and 0 <= found <= 1 and 0 <= changed <= 2
    assert bench.demo_notes() == []


def test_met_degf_benchmark_runs():
    bench = _load("met_degf")
    false_days, found = bench.run("temperate", 1, 1, 3)
    assert false_days >= 0 and 0 <= found <= 1
    _, cold = bench.run("plateau", 1, 1, 1, cold_start=-50.0)   # runs below -50 degC
    assert 0 <= cold <= 1


def test_clock_and_decimal_comma_benchmarks_run():
    clock = _load("clock_forward_gaps")
    now, before = clock.run(20, 1, 2)
    assert 0 <= now <= before <= 1
    comma = _load("decimal_comma_hint")
    assert len(comma.run(30)) == 3


def test_met_row_shift_benchmark_takes_the_humidity():
    bench = _load("met_row_shift")
    import numpy as np
    import pandas as pd
    t = pd.date_range("2021-01-01T01:00", periods=48, freq="h").values
    rh = bench.invented_humidity(np.full(48, 290.0) + np.sin(np.arange(48) / 4), t, 1)
    assert rh.shape == (48,) and ((rh >= 0.05) & (rh <= 1.0)).all()


def test_uncertainty_network_prints_its_ranges(scenario, capsys):
    bench = _load("uncertainty_network")
    out = bench.main(["--scenario", str(scenario), "--draws", "20",
                      "--set", "vd_site_gsd=1.0", "--set", "lab_bias_filter_pack=false"])
    text = capsys.readouterr().out
    assert "S network sum" in text and "ridge" in text
    lo, mid, hi = out["intervals"]["S network sum, span [eq/ha/yr]"]
    assert lo <= mid <= hi and out["peak_mb"] > 0


def test_repeat_memory_compares_whole_and_in_blocks_alike(capsys):
    bench = _load("repeat_memory")
    assert bench.main(["--sites", "20", "--hours", "100", "--variables", "1"]) == 0
    out = capsys.readouterr().out
    assert "exact repeat: results identical across settings: True" in out
    assert "one value differs: results identical across settings: True" in out
    assert "column 'temperature': duplicate hour" in out


def test_air_thousand_slip_benchmark_counts_false_alarms_and_detections():
    bench = _load("air_thousand_slip")
    rows = bench.run(20, seed=3, genuine=(10.0,), clean=(1.5,), spreads=(0.6,), lengths=(52,))
    assert [r[0] for r in rows] == ["genuine", "ng/m3"]
    assert rows[0][4] == 0.0 and rows[1][4] > 0.5         # a farm: no alarm; ng/m3 found
    assert bench.demo_fell_in_ng() == (416, 416)


def test_air_dependent_vd_measures_the_fixed_velocities(capsys):
    """benchmarks/air_dependent_vd.py (docs/methods_uncertainty.md, "Velocities that
    depend on the air"): on a coarse grid and few draws it still prints its table and
    its check against the engine on the drawn air."""
    bench = _load("air_dependent_vd")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--draws", "50", "--grid", "3", "--check", "1",
                          "--case", "codeposition"])
    text = capsys.readouterr().out
    assert "check draw 0" in text and "conifer_forest" in text
    got = out["codeposition"]["conifer_forest"]
    assert 0 < got["median"] < got["max"] < 0.2


def test_air_vd_held_counts_the_layers_and_what_the_cache_holds(scenario, tmp_path):
    bench = _load("air_vd_held")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        out = bench.main(["--scenario", str(scenario), "--layers", "2",
                          "--npz", str(tmp_path / "grid.npz")])
    _, first, second = out["steps"]
    assert first["computed"]["air_vd_rows"] == 8 and second["computed"] == {}
    assert out["held"]["held_mb"] > 0 and out["peak_rss_mb"] > 0
    import numpy as np
    assert {"0_SO2_table", "0_NH3_table"} <= set(np.load(tmp_path / "grid.npz").files)
