"""`workbench run --scheduler` on dask workers whose memory limit is smaller than what a
block of sites needs (workbench.worker_memory, shared with `workbench grid`).

The invented demo network: every site has 70,128 hours of met (8 years), and a block of
one site x 2-3 receptor surfaces peaks at 120-165 MiB in the engine (tracemalloc,
docs/performance.md), on top of about 130 MiB of a worker that has imported the
package.  A local cluster of one worker process limited to 250 MB (238 MiB): the worker
passes 80 % (paused) and then 95 % of its limit (restarted by its nanny) while it runs
a block.  With distributed's default `allowed-failures`, the block's inputs, sent to
the worker with ``Client.scatter``, are lost with it and the block is cancelled: before,
the command ended in a traceback of distributed's ``FutureCancelledError`` (with
`allowed-failures` 0: ``KilledWorker``).  Now one line names the block, its site-hours,
what it needs, the workers' limit and what to change, exit code 2 and no run folder;
paused workers for 3 s (instead of 60) end the run the same way.  distributed's own
warnings go to a log kept beside the output folder (workbench.dasklog).  About 15 s a
test.
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

pytest.importorskip("distributed")

import workbench.worker_memory as worker_memory  # noqa: E402
from workbench.cli import main  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_data" / "scenario.toml"


@pytest.fixture(scope="module")
def address():
    """A local cluster of one worker process limited to 250 MB, dask's defaults else."""
    import distributed
    cluster = distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                       memory_limit="250MB", dashboard_address=None)
    try:
        yield cluster.scheduler_address
    finally:
        cluster.close()


def test_too_little_memory_for_a_block_of_sites_is_one_message(address, tmp_path, capsys,
                                                              monkeypatch):
    monkeypatch.setattr(worker_memory, "PAUSED_GIVE_UP_S", 3.0)
    out = tmp_path / "out"
    code = main(["run", str(DEMO), "--out", str(out), "--quiet", "--scheduler", address])
    err = capsys.readouterr().err
    assert code == 2, err
    lines = [ln for ln in err.splitlines() if ln.startswith("error:")]
    assert len(lines) == 1, err
    assert "Traceback" not in err and "KilledWorker" not in err and "Cancelled" not in err
    assert not out.exists()
    line = lines[0]
    # distributed's own messages of this process (the cluster's scheduler and nanny run
    # here): in a log beside the output folder, named by the message
    log = tmp_path / "out.dask.log"
    assert [p.name for p in tmp_path.iterdir()] == [log.name]
    assert line.endswith(f" (distributed's own messages: {log})")
    assert "distributed.nanny" in log.read_text()
    assert line.startswith("error: the dask workers have too little memory for the run: ")
    assert re.search(r"(a worker that held|the workers that ran|every worker has been "
                     r"paused|no worker has been running)", line), line
    # the block: its sites, site-hours, met and the engine's peak (1 site a block here:
    # the demo's sites ask for different receptor surfaces)
    m = re.search(r"a block of 70,128 site-hours \(1 site x 70,128 hours\) and (\d) "
                  r"receptor surfaces: its hourly met is 4\.8 MiB \(9 variables x 8 bytes "
                  r"a site-hour\) and the engine's work on it about (\d+) MiB at its peak",
                  line)
    assert m, line
    # 900 bytes a site-hour and receptor (workbench.blocks.BLOCK_BYTES_PER_SITE_RECEPTOR_HOUR)
    assert int(m.group(2)) == round(70128 * int(m.group(1)) * 900 / 2**20)
    assert "the workers have a memory limit of 238 MiB" in line
    assert "give each worker more memory (start them with a larger `dask worker " \
           "--memory-limit`)" in line
    assert ("or a shorter met record (a block is already one site; its memory follows "
            "its hours) (distributed's own messages: ") in line


def test_workers_of_the_command_log_to_a_file_and_the_console_has_one_line(
        tmp_path, capfd, monkeypatch):
    """--workers 1, its local cluster limited to 250 MB: the worker process's own
    warnings (pausing, unmanaged memory) and the nanny's go to the log, not to the
    console (file descriptor 2: the worker is another process).  Before, five to nine
    lines of distributed's warnings came first."""
    import functools

    import distributed
    monkeypatch.setattr(worker_memory, "PAUSED_GIVE_UP_S", 3.0)
    monkeypatch.setattr(distributed, "LocalCluster",
                        functools.partial(distributed.LocalCluster, memory_limit="250MB"))
    out = tmp_path / "out"
    code = main(["run", str(DEMO), "--out", str(out), "--quiet", "--workers", "1"])
    err = capfd.readouterr().err
    assert code == 2, err
    assert len(err.splitlines()) == 1, err
    line = err.splitlines()[0]
    assert line.startswith("error: the dask workers have too little memory for the run: ")
    assert "give each worker more memory (a machine with more memory: the one worker " \
           "of --workers 1 has this machine's)" in line
    log = tmp_path / "out.dask.log"
    assert line.endswith(f" (distributed's own messages: {log})")
    text = log.read_text()
    assert "distributed.worker.memory WARNING" in text      # from the worker process
    assert "distributed.nanny" in text                      # from this one
    assert not out.exists()


def test_the_words_of_a_block_of_several_sites():
    """More sites a block: a smaller --block-sites is the change (no cluster needed)."""
    import xarray as xr

    from workbench.blocks import describe_block
    met = xr.Dataset({v: (("site", "time"), [[0.0] * 24] * 2) for v in "abc"})
    blocks = [["p", "q"], ["r"]]
    wanted = [(["p", "q"], ("grass",)), (["r"], ("grass", "forest"))]
    what, needs, smaller = describe_block(blocks, wanted, [0], met, 2)()
    assert what == "a block of 2 sites (p, q)"
    assert needs.startswith("a block of 48 site-hours (2 sites x 24 hours) and 1 receptor "
                            "surface: its hourly met is 0.0 MiB (3 variables x 8 bytes")
    assert smaller == ("a smaller --block-sites (now 2; the memory follows a block's "
                       "site-hours)")


class _Client:
    """What the watch reads of a client: the scheduler's records of the workers."""
    cluster = None

    def __init__(self, workers):
        self.workers = workers

    def scheduler_info(self, n_workers=0):
        return {"workers": self.workers}


def _paused(executing):
    return {"status": "paused", "memory_limit": 250 * 10**6,
            "metrics": {"task_counts": {"executing": executing} if executing else {}}}


def test_a_paused_worker_still_running_its_block_is_not_given_up(monkeypatch):
    """distributed lets a paused worker end the task it runs: a block whose peak holds
    its worker above 80 % for longer than the wait is no reason to stop the run (the
    watch stopped it before, as if the worker were stuck).  A paused worker that runs
    nothing is (no cluster: the scheduler's records as it gives them)."""
    monkeypatch.setattr(worker_memory, "PAUSED_GIVE_UP_S", 0.0)
    monkeypatch.setattr(worker_memory, "POLL_S", 0.0)
    words = lambda: ("a block of 1 site (p)", "what it needs", "what to change")  # noqa: E731
    busy = worker_memory.watch(_Client({"tcp://a": _paused(1)}), words, "the run")
    busy.check()
    busy.check()                                         # no error: it runs its block
    idle = worker_memory.watch(_Client({"tcp://a": _paused(0)}), words, "the run")
    with pytest.raises(worker_memory.WorkerMemoryError) as err:
        idle.check()
    assert str(err.value).startswith(
        "the dask workers have too little memory for the run: every worker has been "
        "paused, running nothing, for 0 s (distributed pauses a worker above 80 % of its "
        "memory limit and starts nothing on it), with a block of 1 site (p) waiting "
        "(what it needs; the workers have a memory limit of 238 MiB); give each worker "
        "more memory (start them with a larger `dask worker --memory-limit`) or what to "
        "change")


class _Restarting(_Client):
    """A client whose one worker is being restarted by its nanny: the scheduler knows no
    worker for the first `gone` looks, then the worker is back."""

    def __init__(self, workers, gone):
        super().__init__(workers)
        self.gone = gone

    def scheduler_info(self, n_workers=0):
        self.gone -= 1
        return {"workers": {} if self.gone >= 0 else self.workers}


def test_the_limit_is_named_when_the_watch_began_while_a_worker_restarted():
    """A watch begun while the cluster's one worker was being restarted (the task before
    had killed it) saw no worker, and its message said "an unknown memory limit" (seen
    under load in tests/test_grid_worker_memory.py, whose two tests share a cluster):
    the limit is now looked up again, once the worker is back, when the message is made."""
    words = lambda: ("a block of 16 x 16 cells", "what it needs", "what to change")  # noqa: E731
    client = _Restarting({"tcp://b": _paused(1)}, gone=3)
    watcher = worker_memory.watch(client, words, "the grid")
    assert watcher.limits == worker_memory.UNKNOWN_LIMIT
    err = watcher.error(worker_memory.DIED)
    assert "(what it needs; the workers have a memory limit of 238 MiB)" in str(err), err


def test_no_worker_back_in_time_says_the_limit_is_unknown(monkeypatch):
    monkeypatch.setattr(worker_memory, "LIMIT_WAIT_S", 0.3)
    words = lambda: ("a block", "what it needs", "what to change")  # noqa: E731
    watcher = worker_memory.watch(_Client({}), words, "the grid")
    assert "the workers have an unknown memory limit" in str(watcher.error(worker_memory.DIED))
