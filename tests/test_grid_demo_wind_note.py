"""The demo grid's urban cell j7i12: its wind, brought to the potential wind, lies just
above the met check's 6.5 m/s, and the note read "6.5 m/s as the potential wind ...
expected below 6.5 m/s" (both to one decimal, as if contradictory).  The rule is
unchanged (workbench/io/metwind.py); the note writes the digits that show it above."""
import json
import re

from workbench.grid_demo import make_demo_grid


def test_demo_grid_urban_cell_note_reads_above_the_threshold(tmp_path):
    from workbench.cli import main
    from workbench.io.metwind import POTENTIAL_MEDIAN_MAX
    scenario = make_demo_grid(tmp_path / "in")
    assert main(["grid", str(scenario), "--out", str(tmp_path / "out"), "--quiet",
                 "--in-process"]) == 0
    prov = json.loads((tmp_path / "out" / "provenance.json").read_text())
    notes = [n for n in prov["notes"] if "at site j7i12" in n and "potential wind" in n]
    assert len(notes) == 1, prov["notes"]
    shown = re.search(r"over urban, ([\d.]+) m/s as the potential wind", notes[0])
    assert shown, notes[0]
    assert float(shown.group(1)) > POTENTIAL_MEDIAN_MAX, notes[0]
    assert f"expected below {POTENTIAL_MEDIAN_MAX:g} m/s" in notes[0]
