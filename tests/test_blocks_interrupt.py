"""Ctrl-C while the workers of ``workbench run --workers 2`` start.

A terminal sends SIGINT to every process of its foreground group: the main process and
the worker processes, which were still importing and printed a KeyboardInterrupt
traceback each.  Here the command runs in a group of its own and SIGINT goes to the
whole group as soon as a worker process exists: one line "error: interrupted", no
traceback, no process of the group left.  The scenario is the one-site month of
tests/test_budget.py (invented).
"""
from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

import test_budget as tb

ROOT = Path(__file__).resolve().parents[1]


def _workers(psutil, pid):
    """Worker processes started by `pid` (multiprocessing's resource tracker aside)."""
    out = []
    for p in psutil.Process(pid).children(recursive=True):
        try:
            cmd = " ".join(p.cmdline())
        except psutil.Error:
            continue
        if "multiprocessing-fork" in cmd and "resource_tracker" not in cmd:
            out.append(p)
    return out


@pytest.mark.skipif(os.name != "posix", reason="process groups and SIGINT of POSIX")
def test_ctrl_c_while_workers_start_gives_one_line(tmp_path):
    pytest.importorskip("distributed")
    psutil = pytest.importorskip("psutil")
    scenario = tb._write(tmp_path)
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(ROOT)] + ([os.environ["PYTHONPATH"]] if os.environ.get("PYTHONPATH") else [])))
    proc = subprocess.Popen([sys.executable, "-m", "workbench", "run", str(scenario),
                             "--out", str(tmp_path / "out"), "--workers", "2", "--quiet"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=env, start_new_session=True)
    seen = []
    deadline = time.monotonic() + 60
    while not seen and proc.poll() is None and time.monotonic() < deadline:
        seen = _workers(psutil, proc.pid)
        time.sleep(0.02)
    assert seen, "no worker process started"
    os.killpg(proc.pid, signal.SIGINT)            # what Ctrl-C in a terminal does
    _, err = proc.communicate(timeout=120)
    assert "Traceback" not in err and "KeyboardInterrupt" not in err, err
    assert "error: interrupted" in err, err
    assert proc.returncode in (130, -signal.SIGINT), (proc.returncode, err)
    assert not (tmp_path / "out").exists()
    end = time.monotonic() + 15
    while any(p.is_running() and p.status() != psutil.STATUS_ZOMBIE for p in seen) \
            and time.monotonic() < end:
        time.sleep(0.2)
    assert not any(p.is_running() and p.status() != psutil.STATUS_ZOMBIE for p in seen)
