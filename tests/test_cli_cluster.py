"""``workbench run --workers``: the local cluster starts while the inputs are read.

The cluster (and its workers' imports) starts before the inputs are read and is closed
after the blocks, and also after a read error: the same located message as without
workers, no traceback, no worker process left.  ``--scheduler`` connects when the
blocks start, as before, and leaves its cluster running.  An error always starts on a
line of its own, also after a progress bar shown before its delay (stderr captured,
as when piped).  The scenario is the one-site month of tests/test_budget.py (invented).
"""
from __future__ import annotations

import time

import pytest

import test_budget as tb
import workbench.blocks as blocks
import workbench.preflight as preflight
from workbench.cli import main

LOCATED = "precip.csv, line 3, column 'SO4 [umol/L]': text in a numeric column: got 'abc'"


@pytest.fixture
def tiny(tmp_path):
    return tb._write(tmp_path)


@pytest.fixture
def bad_precip(tiny):
    """The scenario with text in a numeric column of line 3 of its precipitation file."""
    p = tiny.parent / "precip.csv"
    lines = p.read_text().splitlines()
    head = lines[0].split(",")
    row = lines[2].split(",")
    row[head.index("SO4 [umol/L]")] = "abc"
    lines[2] = ",".join(row)
    p.write_text("\n".join(lines) + "\n")
    return tiny


@pytest.fixture
def events(monkeypatch):
    """The order of the cluster's start, the reading, the cluster's use and its close."""
    said = []
    real_init, real_result, real_close = (blocks.ClusterStart.__init__,
                                          blocks.ClusterStart.result,
                                          blocks.ClusterStart.close)
    real_prepare = preflight.prepare

    def init(self, workers, **kw):
        said.append("start")
        real_init(self, workers, **kw)

    def result(self):
        said.append("use")
        return real_result(self)

    def close(self):
        said.append("close")
        real_close(self)

    def prepare(*a, **k):
        said.append("read")
        return real_prepare(*a, **k)
    monkeypatch.setattr(blocks.ClusterStart, "__init__", init)
    monkeypatch.setattr(blocks.ClusterStart, "result", result)
    monkeypatch.setattr(blocks.ClusterStart, "close", close)
    monkeypatch.setattr(preflight, "prepare", prepare)
    return said


def _children():
    """Child processes of this one (multiprocessing's resource tracker aside)."""
    psutil = pytest.importorskip("psutil")
    return {p.pid for p in psutil.Process().children(recursive=True)
            if "resource_tracker" not in " ".join(p.cmdline() if p.is_running() else [])}


def _no_new_children(before, wait=10.0):
    """True when no child process started since `before` is still running."""
    end = time.monotonic() + wait
    while _children() - before and time.monotonic() < end:
        time.sleep(0.2)
    return not (_children() - before)


def test_workers_start_before_reading_and_give_the_in_process_files(tiny, tmp_path, events):
    pytest.importorskip("distributed")
    before = _children()
    assert main(["run", str(tiny), "--out", str(tmp_path / "a"), "--quiet",
                 "--block-sites", "1"]) == 0
    assert events == ["read"]
    events.clear()
    assert main(["run", str(tiny), "--out", str(tmp_path / "b"), "--quiet",
                 "--workers", "1"]) == 0
    assert events[:4] == ["start", "read", "use", "close"]        # closed again at the end
    for name in ("budget.csv", "summary.csv", "samples.csv"):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes()
    assert _no_new_children(before)


def test_read_error_with_workers_closes_the_cluster(bad_precip, tmp_path, capsys, events):
    """The same one line as without workers, no traceback, nothing left running."""
    pytest.importorskip("distributed")
    assert main(["run", str(bad_precip), "--out", str(tmp_path / "a"), "--quiet"]) == 2
    ref = capsys.readouterr().err
    assert ref.startswith("error: ") and LOCATED in ref and ref.count("\n") == 1
    events.clear()
    before = _children()
    assert main(["run", str(bad_precip), "--out", str(tmp_path / "b"), "--quiet",
                 "--workers", "2"]) == 2
    assert capsys.readouterr().err == ref
    assert events == ["start", "read", "close"]
    assert _no_new_children(before)
    assert not (tmp_path / "b").exists() or not any((tmp_path / "b").iterdir())


def test_scheduler_connects_when_the_blocks_start(tiny, tmp_path, events):
    """--scheduler: no local cluster is started; the given cluster stays up."""
    distributed = pytest.importorskip("distributed")
    assert main(["run", str(tiny), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as cluster:
        events.clear()
        assert main(["run", str(tiny), "--out", str(tmp_path / "b"), "--quiet",
                     "--scheduler", cluster.scheduler_address]) == 0
        assert events == ["read"]
        with distributed.Client(cluster) as client:           # still running
            assert client.submit(sum, [1, 2]).result() == 3
    assert ((tmp_path / "a" / "budget.csv").read_bytes()
            == (tmp_path / "b" / "budget.csv").read_bytes())


def test_draws_with_workers_refused_without_a_cluster(tiny, tmp_path, capsys, events):
    tiny.write_text(tiny.read_text() + "\n[uncertainty]\ndraws = 20\nseed = 7\n")
    assert main(["run", str(tiny), "--out", str(tmp_path / "a"), "--quiet",
                 "--workers", "2"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: [uncertainty] draws > 0 needs the whole run's cached stages")
    assert "start" not in events


def test_error_starts_on_its_own_line_after_a_progress_bar(bad_precip, tmp_path, capsys):
    """The bar is shown by its refresh before its delay and closes without a newline;
    the error still starts a line (stderr captured, as when piped)."""
    assert main(["run", str(bad_precip), "--out", str(tmp_path / "a")]) == 2
    err = capsys.readouterr().err
    assert "precipitation samples" in err                     # the bar was shown
    assert "]error" not in err
    last = err.split("\n")[-2]
    assert last.startswith("error: ") and LOCATED in last and err.endswith("\n")


def test_line_end_tracks_the_open_line():
    import io

    from workbench.cli import _LineEnd
    s = _LineEnd(io.StringIO())
    s.write("\rbar 1/6")
    assert s.open
    s.end_line()
    s.end_line()                                           # only once
    s.write("done\n")
    assert not s.open
    s.end_line()
    assert s.stream.getvalue() == "\rbar 1/6\ndone\n"
    assert s.getvalue() == s.stream.getvalue()            # the rest passes through


def test_a_scheduler_that_is_not_there_is_named(tiny, tmp_path, capsys):
    """--scheduler at an address where no scheduler runs (a trial user): one line naming
    the address and what was expected, exit 2, no run folder.  Old code: "error: could
    not read or write None: Timed out trying to connect to ..."."""
    import socket
    pytest.importorskip("distributed")
    import dask
    with socket.socket() as s:          # a free port: nothing listens on it
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    address = f"tcp://127.0.0.1:{port}"
    out = tmp_path / "run"
    with dask.config.set({"distributed.comm.timeouts.connect": "2s"}):
        assert main(["run", str(tiny), "--out", str(out), "--quiet",
                     "--scheduler", address]) == 2
    err = capsys.readouterr().err
    assert f"error: could not reach the dask scheduler at {address}: " in err
    assert "None" not in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    assert not out.exists()
