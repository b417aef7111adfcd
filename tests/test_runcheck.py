"""``workbench verify`` (workbench/runcheck.py) counts the files it checks as ``workbench
run`` counted them: the run says "wrote 12 files" with provenance.json among them, and
verify said "outputs: the 11 files are as written", one fewer with no word why (found
reading the console as a new user).  provenance.json holds the checksums of the others,
so it is not one of them; the line now says so."""
import re

from workbench.cli import main

import test_budget as tb


def test_verify_says_which_files_it_counts(tmp_path, capsys):
    scen = tb._write(tmp_path)
    assert main(["run", str(scen), "--out", str(tmp_path / "run"), "--quiet"]) == 0
    wrote = int(re.search(r"wrote (\d+) files", capsys.readouterr().out).group(1))
    assert main(["verify", str(tmp_path / "run")]) == 0
    out = capsys.readouterr().out
    assert f"outputs: the {wrote - 1} files besides provenance.json are as written" in out
