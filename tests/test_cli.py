"""Command line and run folder: refusals with their messages, and the demo end to end."""
import json
import re
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
    assert not (out / "old.txt").exists()          # replaced whole: nothing old survives
    assert sorted(p.name for p in tiny.parent.iterdir() if p.name.startswith(".")) == []


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


# ---------------------------------------------------------------- run folders that cannot lie
import errno
import os
import subprocess
import sys
import textwrap

from workbench import writers
from workbench.runfolder import RunFolder

ROOT = Path(__file__).resolve().parents[1]


def _leftovers(out):
    """Anything beside `out` that a run made: its siblings."""
    return sorted(p.name for p in out.parent.iterdir() if p.name.startswith(f".{out.name}."))


def test_provenance_is_written_last(tiny, monkeypatch):
    seen = []

    def watch(name, writer):
        def step(result, study, scenario, path):
            seen.append((name, (Path(path).parent / "provenance.json").exists()))
            return writer(result, study, scenario, path)
        return step
    monkeypatch.setattr(writers, "OUTPUT_STEPS", [(n, watch(n, w)) for n, w in writers.OUTPUT_STEPS])
    out = tiny.parent / "run"
    assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 0
    assert seen and not any(there for _, there in seen)    # not before any other file
    prov = json.loads((out / "provenance.json").read_text())
    watched = [n for n, _ in seen if (out / n).exists()]
    names = prov["outputs"]          # the steps, then the analysis tables, then provenance
    assert names[:len(watched)] == watched and names[-1] == "provenance.json"
    assert sorted(names) == sorted(p.name for p in out.iterdir())
    assert _leftovers(out) == []


def _failing_step(exc):
    def writer(result, study, scenario, path):
        Path(path).write_text("half a file")
        raise exc
    return writer


@pytest.mark.parametrize("code, hint", [
    (errno.ENOSPC, "the disk is full: free some space or choose --out on another disk"),
    (errno.EDQUOT, "the disk quota is used up"),
    (errno.EIO, None),
])
def test_os_error_while_writing_is_one_located_message(tiny, monkeypatch, capsys, code, hint):
    """Disk full (and other OS errors) in the middle of a run: one line naming the file,
    nothing left that looks like a run."""
    bad = OSError(code, os.strerror(code))
    monkeypatch.setattr(writers, "OUTPUT_STEPS", writers.OUTPUT_STEPS[:1]
                        + [("summary.csv", _failing_step(bad))] + writers.OUTPUT_STEPS[2:])
    out = tiny.parent / "run"
    assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith(f"error: could not write {out.parent.resolve()}/.run.incomplete/"
                          f"summary.csv: {os.strerror(code)} [{errno.errorcode[code]}]")
    assert hint is None or hint in err
    assert "nothing was written into the output folder" in err
    assert not out.exists() and _leftovers(out) == []


def test_ctrl_c_exits_130_and_leaves_nothing(tiny, monkeypatch, capsys):
    monkeypatch.setattr(writers, "OUTPUT_STEPS", writers.OUTPUT_STEPS[:3]
                        + [("samples.csv", _failing_step(KeyboardInterrupt()))])
    out = tiny.parent / "run"
    assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 130
    assert capsys.readouterr().err == f"error: interrupted; nothing was written into {out.resolve()}\n"
    assert not out.exists() and _leftovers(out) == []


def test_real_sigint_while_writing(tiny, tmp_path):
    """A real SIGINT (Ctrl-C) while the files are written: exit 130, one line, no folder.

    The signal is sent from inside a writing step and lands there, whatever the load:
    ``signal.raise_signal`` sends it to the calling (main) thread and runs the Python
    handler before it returns (CPython's signal module, "raise_signal"), so the
    KeyboardInterrupt comes out of the step itself; the step records that it did.
    (``os.kill(os.getpid(), SIGINT)`` was used before: the kernel may hand a signal sent
    to the process to any of its threads (tqdm's monitor, a worker), whose handler can
    run after the writing has ended, and the run once exited 0 under load.)"""
    signal = pytest.importorskip("signal")
    out = tmp_path / "run"
    seen = tmp_path / "seen.txt"
    code = f"""
        import signal, sys
        from pathlib import Path
        from workbench import writers

        def ctrl_c(*args):
            try:
                signal.raise_signal(signal.SIGINT)    # handled before it returns
            except KeyboardInterrupt:
                Path(r"{seen}").write_text("interrupted in the writing step")
                raise
            Path(r"{seen}").write_text("the writing step went on after the signal")

        writers.OUTPUT_STEPS.insert(3, ("ctrl-c", ctrl_c))
        from workbench.cli import main
        sys.exit(main(["run", r"{tiny}", "--out", r"{out}", "--quiet"]))
    """
    r = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True,
                       text=True, cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert seen.read_text() == "interrupted in the writing step"     # landed while writing
    assert r.returncode == 130, r.stderr
    assert r.stderr == f"error: interrupted; nothing was written into {out.resolve()}\n"
    assert not out.exists() and _leftovers(out) == []


def test_read_only_output_folder(tiny, tmp_path, monkeypatch, capsys):
    parent = tmp_path / "locked"
    parent.mkdir()
    out = parent / "run"
    if os.geteuid() == 0:   # root writes anywhere: make the folder's creation fail as it would
        real = os.mkdir

        def mkdir(path, *a, **k):
            if Path(path).parent == parent:
                raise OSError(errno.EROFS, os.strerror(errno.EROFS), str(path))
            return real(path, *a, **k)
        monkeypatch.setattr(os, "mkdir", mkdir)
        lock_open = os.open
        monkeypatch.setattr(os, "open", lambda p, *a, **k: (_ for _ in ()).throw(
            OSError(errno.EROFS, os.strerror(errno.EROFS), str(p))) if Path(p).parent == parent
            else lock_open(p, *a, **k))
    else:
        parent.chmod(0o555)
    try:
        assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 2
    finally:
        parent.chmod(0o755)
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith(f"error: could not write {parent.resolve()}/.run.")
    assert ("choose --out on a writable disk" in err
            or "choose a folder you can write to" in err)
    assert list(parent.iterdir()) == []


def test_file_size_limit_is_one_message(tiny, tmp_path):
    """RLIMIT_FSIZE below the size of budget.nc: the write fails with EFBIG (Python ignores
    SIGXFSZ), reported on one line; no folder is left."""
    resource = pytest.importorskip("resource")
    out = tmp_path / "run"
    code = f"""
        import resource, sys
        resource.setrlimit(resource.RLIMIT_FSIZE, (20_000, 20_000))
        from workbench.cli import main
        sys.exit(main(["run", r"{tiny}", "--out", r"{out}", "--quiet"]))
    """
    r = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True,
                       text=True, cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert r.returncode == 2, r.stderr
    assert r.stderr.count("\n") == 1 and "Traceback" not in r.stderr
    assert "[EFBIG]; a file-size limit stopped the write (see `ulimit -f`)" in r.stderr
    assert not out.exists() and _leftovers(out) == []


def test_second_concurrent_run_is_refused(tiny, capsys):
    out = tiny.parent / "run"
    with RunFolder(out, {}, False, say=print):             # another run holds the folder
        assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 2
        err = capsys.readouterr().err
        assert err.startswith(f"error: another run is writing into {out.resolve()} "
                              f"(process {os.getpid()} on ")
        assert err.rstrip().endswith("wait for it to end, or choose another --out")
    assert main(["run", str(tiny), "--out", str(out), "--quiet"]) == 0   # free again
    assert _leftovers(out) == []


def test_killed_run_leaves_only_a_marked_sibling_that_the_next_run_removes(tiny, capsys):
    """SIGKILL in the middle of writing: no folder named like the output; the leftover is
    named `.<name>.incomplete` and removed, with a note, by the next run."""
    signal = pytest.importorskip("signal")
    out = tiny.parent / "run"
    code = f"""
        import os, signal, sys
        from workbench import writers
        def die(*a):
            os.kill(os.getpid(), signal.SIGKILL)
        writers.OUTPUT_STEPS.insert(2, ("die", die))
        from workbench.cli import main
        sys.exit(main(["run", r"{tiny}", "--out", r"{out}", "--quiet"]))
    """
    r = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True,
                       text=True, cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert r.returncode == -signal.SIGKILL
    assert not out.exists()
    assert ".run.incomplete" in _leftovers(out)
    assert sorted(p.name for p in (out.parent / ".run.incomplete").iterdir()) == [
        "budget.csv", "summary.csv"]
    assert main(["run", str(tiny), "--out", str(out)]) == 0
    err = capsys.readouterr().err
    assert f"note: removed {out.resolve().parent}/.run.incomplete, the unfinished folder of an " \
           "interrupted run" in err
    assert _leftovers(out) == [] and (out / "provenance.json").exists()


# ---------------------------------------------------------------- check fails where run fails
def _bulk(t, d):
    (d / "sites.toml").write_text((d / "sites.toml").read_text() + 'collector = "bulk"\n')
    air = (d / "air.csv").read_text().splitlines()
    air[1] += ",pSO4 [ug/m3]"
    air[2:] = [ln + ",1.0" for ln in air[2:]]
    (d / "air.csv").write_text("\n".join(air) + "\n")
    return t.replace("SO2 = 0.5", "SO2 = 0.5\npSO4 = 0.2")


SPAN = 'start = "2021-02-01"\nend = "2021-03-01"'
BROKEN = {
    "valid": (lambda t, d: t, None),
    "end before start": (lambda t, d: t.replace(SPAN, 'start = "2021-03-01"\nend = "2021-01-01"'),
                         "column 'period.end': period end not after its start"),
    "impossible date": (lambda t, d: t.replace('start = "2021-02-01"', 'start = "2021-13-45"'),
                        "column 'period.start'"),
    "override as text": (lambda t, d: t + '\n[sites.alpha]\ncanopy_height_m = "tall"\n',
                         "column 'sites.alpha.canopy_height_m'"),
    "unknown receptor": (lambda t, d: t + '\n[sites.alpha]\nreceptors = ["moon_dust"]\n',
                         "column 'sites.alpha.receptors'"),
    "bulk collector": (_bulk, "error: site 'alpha' has a bulk collector"),
    "unknown collector": (lambda t, d: t + '\n[sites.alpha]\ncollector = "bucket"\n',
                          "column 'sites.alpha.collector': unknown collector: got 'bucket'"),
    "land use under the mast": (
        lambda t, d: t.split("[dry.fixed_velocity]")[0] + '\n[sites.alpha]\nmet_land_use = "grasss"\n',
        "column 'sites.alpha.met_land_use'"),
    "leaf area as text": (
        lambda t, d: t.split("[dry.fixed_velocity]")[0] + '\n[sites.alpha]\nlai = "high"\n',
        "column 'sites.alpha.lai'"),
    "unknown gas": (lambda t, d: t.replace("SO2 = 0.5", "SOO2 = 0.5"),
                    "column 'dry.fixed_velocity.SOO2': unknown species"),
    "misspelt site id": (lambda t, d: t + '\n[sites.alhpa]\ncanopy_height_m = 0.2\n',
                         "sites.alhpa"),
    "zero roughness": (lambda t, d: t + '\n[sites.alpha]\nroughness_length_m = 0.0\n',
                       "roughness_length_m"),
}


@pytest.mark.parametrize("case", list(BROKEN))
def test_check_fails_exactly_when_run_fails(case, tmp_path, capsys):
    sc = tb._write(tmp_path)
    change, message = BROKEN[case]
    sc.write_text(change(sc.read_text(), tmp_path))
    rc_check = main(["check", str(sc), "--quiet"])
    check_err = capsys.readouterr().err
    out = tmp_path / "out"
    rc_run = main(["run", str(sc), "--out", str(out), "--quiet"])
    run_err = capsys.readouterr().err
    assert rc_check == rc_run, (check_err, run_err)
    if message is None:
        assert rc_run == 0 and (out / "provenance.json").exists()
    if rc_run:
        assert check_err == run_err                      # the same located message
        assert check_err.startswith("error: ") and check_err.count("\n") == 1
        assert message == "?" or message in check_err
        assert str(sc.resolve()) in check_err or "site 'alpha'" in check_err
        assert not out.exists() and _leftovers(out) == []
    else:
        assert message in (None, "?")


def test_block_sites_help_names_the_block_defaults():
    from workbench.blocks import AUTO_BLOCK_SITES, DEFAULT_MAX_BLOCK
    from workbench.cli import build_parser
    run = build_parser()._subparsers._group_actions[0].choices["run"]
    text = next(a.help for a in run._actions if "--block-sites" in a.option_strings)
    assert f"default {DEFAULT_MAX_BLOCK};" in text
    assert f"more than {AUTO_BLOCK_SITES} sites" in text


def test_block_sites_help_says_it_sets_the_workers_blocks_too():
    """--block-sites K is also the size of the blocks sent to --workers / --scheduler
    (blocks.run_network takes it as given there); the help said only "sites per block"."""
    from workbench.cli import build_parser
    run = build_parser()._subparsers._group_actions[0].choices["run"]
    text = next(a.help for a in run._actions if "--block-sites" in a.option_strings)
    assert "in this process and on the workers of --workers or --scheduler alike" in text
    assert "two blocks per worker" in text


def test_ctrl_c_inside_a_gc_callback_is_sent_again(monkeypatch):
    """dask's scheduler hooks a callback into the garbage collector of this process; a
    KeyboardInterrupt raised inside it is printed as "ignored" and the run goes on.  The
    command's handler sends the signal again once the callback has returned; elsewhere it
    raises KeyboardInterrupt as Python's own handler does."""
    import gc
    import signal
    import time as _time
    from workbench import cli
    sent = []
    monkeypatch.setattr(signal, "raise_signal", sent.append)

    def callback(phase, info):
        cli._on_ctrl_c(signal.SIGINT, sys._getframe())
    gc.callbacks.append(callback)
    try:
        gc.collect()
    finally:
        gc.callbacks.remove(callback)
    _time.sleep(0.2)                      # the timer of 20 ms
    assert sent and set(sent) == {signal.SIGINT}
    assert not cli._in_gc_callback(sys._getframe())
    with pytest.raises(KeyboardInterrupt):
        cli._on_ctrl_c(signal.SIGINT, sys._getframe())


# ------------------------------------------------- the demo beside published ranges
#: Ranges for rural sites (docs/budget.md, "The demo beside published ranges"): total S
#: and N from the global assessment of Vet et al. 2014 (Atmos. Environ. 93, 3-100),
#: recalled from memory; pH 5.6 of rain in equilibrium with CO2 (handbook fact), 4.1 the
#: most acid regional means of the 1980s-1990s (from memory).
PUBLISHED_RANGES = {"S_total_kg_ha_yr": (1.0, 25.0), "N_total_kg_ha_yr": (3.0, 40.0),
                    "pH_pwm": (4.1, 5.6)}


def _demo_means(run):
    t = pd.read_csv(run / "summary.csv")
    t = t[t["period"].astype(str).str.fullmatch(r"\d{4}")]
    return t.groupby(["site", "receptor"])[list(PUBLISHED_RANGES)].mean()


def test_demo_totals_lie_in_published_ranges_and_the_doc_table_is_current(demo_run):
    means = _demo_means(demo_run)
    assert len(means) == 10
    for col, (lo, hi) in PUBLISHED_RANGES.items():
        assert means[col].between(lo, hi).all(), means[col]
    text = (ROOT / "docs" / "budget.md").read_text()
    block = text.split("<!-- demo-ranges -->")[1].split("<!-- /demo-ranges -->")[0]
    rows = [r.strip("|").split("|") for r in block.strip().splitlines()[2:]]
    doc = {tuple(r[0].split()): [float(v) for v in r[1:]] for r in rows}
    assert set(doc) == set(means.index)
    for key, (s, n, ph) in doc.items():
        m = means.loc[key]
        assert abs(m["S_total_kg_ha_yr"] - s) <= 0.051, (key, m["S_total_kg_ha_yr"])
        assert abs(m["N_total_kg_ha_yr"] - n) <= 0.051, (key, m["N_total_kg_ha_yr"])
        assert abs(m["pH_pwm"] - ph) <= 0.0051, (key, m["pH_pwm"])



def _split_table(text):
    """The wet/dry split table of docs/budget.md: (site, receptor) -> its cells."""
    part = text.split("## How the demo compares with published ranges: the wet/dry split")[1]
    rows = [r.strip().strip("|").split("|") for r in part.splitlines()
            if r.startswith("| ") and not r.startswith("| site")]
    return {tuple(r[0].split()): [c.strip() for c in r[1:]] for r in rows[:10]}


def test_demo_wet_dry_split_table_is_current(demo_run):
    """docs/budget.md, "the wet/dry split": every S and N wet, dry and total of the
    table is the span row of the demo's budget.csv [kg/ha/yr] to its 0.1, every dry
    share to its 1 %, and the "wet S by hand" numbers are the ridge's (precipitation_
    annual.csv: mean nss-SO4 PWM [umol/L] and mean depth [mm]) to their last digit."""
    t = pd.read_csv(demo_run / "budget.csv")
    span = t[(t["period"] == "span") & (t["species"] == "all")]
    flux = span.set_index(["site", "receptor", "element", "pathway"])["flux_kg_ha_yr"]
    text = (ROOT / "docs" / "budget.md").read_text()
    doc = _split_table(text)
    assert set(doc) == {k[:2] for k in flux.index}
    for (site, rec), cells in doc.items():
        for element, cols in (("S", cells[:4]), ("N", cells[4:8])):
            f = {w: flux[(site, rec, element, w)] for w in ("wet", "dry", "total")}
            for w, cell in zip(("wet", "dry", "total"), cols):
                assert abs(f[w] - float(cell)) <= 0.051, (site, rec, element, w, f[w])
            share = 100 * f["dry"] / f["total"]
            assert abs(share - float(cols[3].split("%")[0])) <= 0.51, (site, rec, element, share)
    annual = pd.read_csv(demo_run / "precipitation_annual.csv")
    ridge = annual[(annual["site"] == "ridge")
                   & annual["period"].astype(str).str.fullmatch(r"\d{4}")]
    pwm = (ridge["pwm_nssSO4_ueq_l"] / 2).mean()            # ueq/L of SO4(2-) -> umol/L
    depth = ridge["precipitation_mm"].mean()
    by_hand = pwm * depth * 32.06 * 1e-5      # umol/L x mm x g/mol -> kg S/ha [1e-5]
    m = re.search(r"nss-SO4 PWM of ([\d.]+)\s+umol/L times its mean ([\d,]+)\s+mm and "
                  r"32.06 g/mol gives ([\d.]+) kg S/ha/yr, the table's ([\d.]+)", text)
    assert m, "the 'wet S by hand' sentence of docs/budget.md"
    assert abs(pwm - float(m.group(1))) <= 0.0051, pwm
    assert abs(depth - float(m.group(2).replace(",", ""))) <= 0.51, depth
    assert abs(by_hand - float(m.group(3))) <= 0.0051, by_hand
    assert abs(flux[("ridge", "conifer_forest", "S", "wet")] - float(m.group(4))) <= 0.0051


def test_demo_pair_rule_table_is_current(demo_run):
    """docs/budget.md, the table "Demo 2021, main dry N ... before and after this rule":
    its "measured" column is the 2021 dry N of budget.csv, its "after" columns the
    all-gas and all-particle brackets of summary.csv [kg N/ha/yr], each to its 0.01."""
    text = (ROOT / "docs" / "budget.md").read_text()
    part = text.split("Demo 2021, main dry N [kg N/ha/yr] before")[1].split("## Bulk")[0]
    rows = [r.strip().strip("|").split("|") for r in part.splitlines()
            if r.startswith("| ") and not r.startswith("| site")]
    assert len(rows) == 6
    s = pd.read_csv(demo_run / "summary.csv")
    s = s[s["period"].astype(str) == "2021"].set_index(["site", "receptor"])
    t = pd.read_csv(demo_run / "budget.csv")
    dry = t[(t["period"].astype(str) == "2021") & (t["species"] == "all")
            & (t["element"] == "N") & (t["pathway"] == "dry")]
    dry = dry.set_index(["site", "receptor"])["flux_kg_ha_yr"]
    for r in rows:
        key = tuple(w.strip() for w in r[0].split(","))
        cells = [float(c.split()[0]) for c in r[1:]]
        assert abs(dry[key] - cells[0]) <= 0.0051, (key, "measured", dry[key])
        assert abs(s.loc[key, "dry_N_all_gas_kg_ha"] - cells[2]) <= 0.0051, (key, "all_gas")
        assert abs(s.loc[key, "dry_N_all_particle_kg_ha"] - cells[4]) <= 0.0051, \
            (key, "all_particle")

def test_span_rows_say_what_is_missing(demo_run, capsys):
    """A whole-span row whose years are partial names the missing components (demo fell
    and mere: NO2 is not measured there); a complete span row names none; a flagged one
    names its flagged components, those of the years it is made of."""
    t = pd.read_csv(demo_run / "budget.csv", keep_default_na=False)
    tot = t[(t["species"] == "all") & (t["pathway"] == "total")]
    span, years = tot[tot["period"] == "span"], tot[tot["period"] != "span"]
    for site in ("fell", "mere"):
        row = span[(span["site"] == site) & (span["element"] == "N")]
        assert len(row) and (row["status"] == "partial").all()
        assert (row["missing_components"] == "NO2").all()
    complete = span[span["status"] == "complete"]
    assert len(complete) and (complete["missing_components"] == "").all()
    assert (complete["flagged_components"] == "").all()
    key = ["site", "receptor", "element"]
    for _, row in span.iterrows():                       # the union over the years used
        used = row["years_used"].split()
        yr = years.merge(row[key].to_frame().T, on=key)
        yr = yr[yr["period"].astype(str).isin(used)]
        for col in ("missing_components", "flagged_components"):
            assert set(row[col].split()) == {w for v in yr[col] for w in v.split()}, (row, col)
        if row["status"] == "partial":
            assert row["missing_components"] != ""
