"""The demo grid's urban cells: their wind, brought to the potential wind, lies just
above the met check's 6.5 m/s.

* The note read "6.5 m/s as the potential wind ... expected below 6.5 m/s" (both to one
  decimal, as if contradictory).  The rule is unchanged (workbench/io/metwind.py); the
  note writes the digits that show it above.
* The note said "failed a plausibility check (masked; ...)" and then, of the same
  hours, "... check the logger's unit (kept)".  The wind is kept as read (the check
  only flags it, workbench/io/metwind.py) and the hours are counted in
  met_flagged_hours: the note now says what was done once, with the hours, before the
  reason."""
import json
import re

import numpy as np
import pytest
import xarray as xr

from workbench.grid_demo import make_demo_grid


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    from workbench.cli import main
    tmp = tmp_path_factory.mktemp("demo_wind")
    scenario = make_demo_grid(tmp / "in")
    assert main(["grid", str(scenario), "--out", str(tmp / "out"), "--quiet",
                 "--in-process"]) == 0
    prov = json.loads((tmp / "out" / "provenance.json").read_text())
    return tmp / "out", prov


def test_demo_grid_urban_cell_note_reads_above_the_threshold(demo_run):
    from workbench.io.metwind import POTENTIAL_MEDIAN_MAX
    _, prov = demo_run
    notes = [n for n in prov["notes"] if "at site j7i12" in n and "potential wind" in n]
    assert len(notes) == 1, prov["notes"]
    shown = re.search(r"over urban, ([\d.]+) m/s as the potential wind", notes[0])
    assert shown, notes[0]
    assert float(shown.group(1)) > POTENTIAL_MEDIAN_MAX, notes[0]
    assert f"expected below {POTENTIAL_MEDIAN_MAX:g} m/s" in notes[0]


def test_demo_grid_wind_note_says_kept_once_with_the_hours(demo_run):
    out, prov = demo_run
    notes = [n for n in prov["notes"] if "failed a plausibility check" in n]
    assert len(notes) == 1, prov["notes"]
    note = notes[0]
    # the wind check keeps the values: nothing of this note was masked
    assert "masked" not in note, note
    assert note.count("kept") == 1, note
    with xr.open_dataset(out / "grid.nc") as ds:
        flagged = ds["met_flagged_hours"].sum("time").values
        total = int(np.nansum(flagged))
        cells = int(np.nansum(flagged > 0))
    assert f"{total} cell-hours in {cells} cells failed a plausibility check (counted in " \
        "met_flagged_hours)" in note, note
    kept = re.search(r": (\d+) h kept as read \(used in the maps\): column wind_speed", note)
    assert kept, note
    assert int(kept.group(1)) >= flagged.max(), note
    assert not note.rstrip().endswith("(kept)"), note
