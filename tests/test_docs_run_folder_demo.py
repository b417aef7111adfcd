"""Demo numbers of docs/run_folder.md, the example of `workbench compare`: the demo run
under Wesely (1989) against the same under Zhang et al. (2003) (the demo scenario with
`[dry] gas_scheme = "zhang2003"`): the count of differing totals and the first, largest
change (its row and its values as printed), recomputed from two `workbench run`
folders, so that a change of the engine that moves one fails here until the example
is re-measured. The scenario's checksums in the example are of the files it names and
are not compared. The reference is the command itself (its own checks:
tests/test_runcompare.py and tests/test_cli*.py).
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def compared(tmp_path_factory):
    import contextlib
    import io
    import shutil

    from workbench.cli import main
    tmp = tmp_path_factory.mktemp("compare")
    data = tmp / "inputs"
    shutil.copytree(ROOT / "demo_data", data)
    text = (data / "scenario.toml").read_text()
    (data / "scenario_zhang.toml").write_text(
        text.replace("[budget]", '[dry]\ngas_scheme = "zhang2003"\n\n[budget]', 1))
    for name, out in (("scenario.toml", "a"), ("scenario_zhang.toml", "b")):
        with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
            assert main(["run", str(data / name), "--out", str(tmp / out), "--quiet"]) == 0
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        main(["compare", str(tmp / "a"), str(tmp / "b"), "--rows", "1"])
    return buf.getvalue()


def _rows(lines):
    """The count line and the token rows of the table of differing totals."""
    i = next(k for k, ln in enumerate(lines) if ln.startswith("budget totals"))
    count = lines[i]
    rows = [ln.replace("\\", "").split() for ln in lines[i + 2:]
            if ln.strip() and not ln.startswith(("...", "```"))]
    return count, rows[:4]


def test_the_compare_example_is_current(compared):
    text = (ROOT / "docs" / "run_folder.md").read_text(encoding="utf-8")
    a = text.index("```text\noptions (1 differs):")
    block = text[a:text.index("```\n", a + 8)].splitlines()
    doc_count, doc_rows = _rows(block)
    got_count, got_rows = _rows(compared.splitlines())
    assert re.sub(r"\s+", " ", doc_count) == re.sub(r"\s+", " ", got_count), got_count
    assert doc_rows == got_rows, f"re-measure docs/run_folder.md:\n{compared}"
    assert "dry.gas_scheme: wesely1989 in A, zhang2003 in B" in compared
