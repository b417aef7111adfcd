"""``workbench run``'s progress: tqdm's bar on a terminal only; stderr sent to a log file
(no terminal) gets one plain line per stage, no carriage-return redraws.

Before (b2c1625) the bar was drawn whenever the run was not ``--quiet``: a log file of
``workbench run ... 2> run.log`` filled with ``\\r``-separated redraws of the bar.
The scenario is the one-site month of tests/test_budget.py (invented).
"""
from __future__ import annotations

import io

import pytest

import test_budget as tb
from workbench.cli import main


@pytest.fixture
def no_delay(monkeypatch):
    """tqdm draws at once (its ``delay`` of 1 s would hide a bar on a run this short)."""
    import tqdm as _tqdm
    import tqdm.auto as auto
    real = _tqdm.std.tqdm.__init__

    def init(self, *a, **k):
        k["delay"] = 0
        real(self, *a, **k)
    monkeypatch.setattr(_tqdm.std.tqdm, "__init__", init)
    monkeypatch.setattr(auto.tqdm, "__init__", init, raising=False)


def test_a_log_gets_one_line_per_stage_and_no_bar(tmp_path, capsys, no_delay):
    scenario = tb._write(tmp_path)
    assert main(["run", str(scenario), "--out", str(tmp_path / "run")]) == 0
    err = capsys.readouterr().err          # pytest's capture: no terminal, as a log file
    assert "\r" not in err and "%|" not in err, err
    lines = [x for x in err.splitlines() if x.startswith("workbench: [")]
    assert lines[0] == "workbench: [1/6] site catalogue"
    assert "workbench: [5/6] computing the budget" in lines
    assert lines[-1] == "workbench: [6/6] writing"
    assert len(lines) == len(set(lines))      # each stage once (no file-by-file lines)


def test_quiet_says_nothing(tmp_path, capsys, no_delay):
    scenario = tb._write(tmp_path)
    assert main(["run", str(scenario), "--out", str(tmp_path / "run"), "--quiet"]) == 0
    assert capsys.readouterr().err == ""


class _Terminal(io.StringIO):
    def isatty(self):
        return True


def test_a_terminal_gets_the_bar_and_no_lines(no_delay):
    from workbench.cliprogress import StageProgress
    stream = _Terminal()
    p = StageProgress(3, stream=stream)
    for text in ("a", "b", "c"):
        p.step(text)
    p.finish()
    p.close()
    out = stream.getvalue()
    assert "\r" in out and "3/3" in out            # tqdm's redraws, on a terminal
    assert "workbench: [" not in out
    log = io.StringIO()                            # the same on a log: lines only
    p = StageProgress(3, stream=log)
    for text in ("a", "b", "c"):
        p.step(text)
    p.detail("budget.csv")                         # finer steps stay off a log
    p.finish()
    p.close()
    assert log.getvalue() == "".join(f"workbench: [{i}/3] {t}\n"
                                     for i, t in enumerate("abc", start=1))
