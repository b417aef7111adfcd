"""A command whose stdout reader has gone (``workbench verify DIR | head -2``: ``head``
closes the pipe after its lines) ends quietly: no ``error:`` line on stderr.  Before,
every command ended with ``error: could not read or write None: Broken pipe [EPIPE]``,
naming no file.  Common practice for command-line tools, and what the Python docs
recommend (signal module, "Note on SIGPIPE"): on a BrokenPipeError of stdout, point
stdout at os.devnull and exit."""
import os
import subprocess
import sys
from pathlib import Path

import pytest

import test_budget as tb
from workbench.cli import main

ROOT = Path(__file__).resolve().parents[1]


def _closed_reader_run(args):
    """Run ``python -m workbench ARGS`` with a stdout pipe whose reader has closed before
    the command writes (the end of ``| head -1`` that comes first on a busy machine:
    the command's buffered lines reach the pipe after ``head`` is gone)."""
    read_end, write_end = os.pipe()
    os.close(read_end)
    try:
        env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
        return subprocess.run([sys.executable, "-m", "workbench", *args], stdout=write_end,
                              stderr=subprocess.PIPE, text=True, cwd=ROOT, env=env,
                              timeout=600)
    finally:
        os.close(write_end)


@pytest.fixture(scope="module")
def run_folder(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("closed_pipe")
    scenario = tb._write(tmp)
    out = tmp / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    return scenario, out


@pytest.mark.parametrize("command", ["verify", "check"])
def test_a_closed_stdout_ends_the_command_quietly(run_folder, command):
    scenario, out = run_folder
    done = _closed_reader_run([command, str(out if command == "verify" else scenario)])
    assert "error" not in done.stderr, done.stderr
    assert "None" not in done.stderr and "Traceback" not in done.stderr, done.stderr
    assert "Broken pipe" not in done.stderr and "BrokenPipeError" not in done.stderr
    assert done.returncode == 141              # 128 + SIGPIPE, as a shell reports it


def test_a_reader_that_reads_one_line_then_closes(run_folder):
    """The user's case itself: a reader that takes one line and closes (as ``head -1``);
    whether the command's writes come before or after the close, nothing is said."""
    _, out = run_folder
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    p = subprocess.Popen([sys.executable, "-m", "workbench", "verify", str(out)],
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT, env=env)
    first = p.stdout.readline()
    p.stdout.close()
    err = p.stderr.read().decode()
    p.wait(timeout=600)
    assert first.startswith(b"run folder "), first
    assert err == "", err
    assert p.returncode in (0, 141)


def test_a_broken_pipe_of_another_stream_is_still_reported(monkeypatch, capsys):
    """Only stdout's closed pipe is quiet: a BrokenPipeError of another stream (a socket
    to a dask scheduler, a file) is an error, and its message names no ``None``."""
    import errno

    import workbench.cli as cli

    def broken(args):
        raise BrokenPipeError(errno.EPIPE, "Broken pipe")

    parser = cli.build_parser
    monkeypatch.setattr(cli, "build_parser", lambda: _with_func(parser(), broken))
    assert main(["demo", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "error: could not read or write: Broken pipe [EPIPE]" in err, err
    assert "None" not in err


def _with_func(parser, func):
    parser.set_defaults(func=func)
    for action in parser._subparsers._group_actions:
        for sub in action.choices.values():
            sub.set_defaults(func=func)
    return parser
