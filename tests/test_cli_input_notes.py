"""The input notes at the end of ``workbench run`` (workbench/cli_status.py,
``input_note_lines``).  The readers' notes on suspected slips (a gas on the element
basis, a nitrate column as N, wind in knots, a daily rain counter...) were in
``workbench check``, report.html and provenance.json only: a user who ran ``workbench
run`` alone read "S: 68 complete" and nothing of a note saying that a site's HNO3 may be
4.5 x low.  Now the first few are printed whole after the counts and the run's notes,
wrapped to 79 columns with the words unchanged, the rest counted with where they are;
a note that a met record is complete (nothing amiss) is left out."""
import json
import shutil

import pandas as pd
import pytest

from test_cli_closed_pipe import _closed_reader_run
from workbench.cli import DEMO_SCENARIO, main
from workbench.cli_status import INPUT_NOTES_SHOWN, NOTE_WIDTH, input_note_lines

HEAD = "notes on the inputs ("
#: The M(HNO3) / M(N) ratio, 63.01 / 14.007 = 4.50 (IUPAC standard atomic weights, from
#: memory): HNO3 written as ug N/m3 under an 'HNO3 [ug/m3]' header reads 4.5 x low.
HNO3_AS_N = 4.5


def _words(text):
    return " ".join(text.split())


def _printed_input_notes(out):
    """The notes under the console's heading of input notes, each joined into one
    line, and the line of those not shown (or None)."""
    lines = out.splitlines()
    assert sum(x.startswith(HEAD) for x in lines) == 1, out
    start = next(i for i, x in enumerate(lines) if x.startswith(HEAD))
    notes, more = [], None
    for line in lines[start + 1:]:
        if line.startswith("  - "):
            notes.append(line[4:])
        elif line.startswith("  and "):
            more = line.strip()
        elif line.startswith("    ") and notes:
            notes[-1] += " " + line.strip()
        elif line.startswith("  ") and not notes:       # the heading's second line
            continue
        else:
            break
    return notes, more


def _demo_with_hno3_as_n(folder):
    """A copy of the demo whose HNO3 at mere is written as ug N/m3 under the header of
    ug HNO3/m3 (every value divided by 4.5): the slip of workbench/io/airgasbasis.py."""
    shutil.copytree(DEMO_SCENARIO.parent, folder)
    air = folder / "air.csv"
    text = air.read_text().splitlines(keepends=True)
    meta = [x for x in text if x.startswith("#")]
    from io import StringIO
    df = pd.read_csv(StringIO("".join(x for x in text if not x.startswith("#"))),
                     dtype=str, keep_default_na=False)
    col = "HNO3 [ug/m3]"
    rows = (df["site"] == "mere") & df[col].str.match(r"^\d")
    df.loc[rows, col] = (df.loc[rows, col].astype(float) / HNO3_AS_N).map("{:.3f}".format)
    air.write_text("".join(meta) + df.to_csv(index=False))
    return folder / "scenario.toml"


@pytest.fixture(scope="module")
def slipped_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("input_notes")
    scenario = _demo_with_hno3_as_n(tmp / "demo")
    return tmp, scenario


def test_a_run_prints_the_slip_note_of_its_inputs(slipped_run, capsys):
    tmp, scenario = slipped_run
    out = tmp / "quiet"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    prov = json.loads((out / "provenance.json").read_text())
    slip = [n for n in prov["input_notes"] if n.startswith("air.csv: HNO3 at mere")]
    assert len(slip) == 1, prov["input_notes"]
    assert "4.5 x the one read" in slip[0]
    notes, more = _printed_input_notes(printed)
    assert _words(slip[0]) in notes                   # whole, words unchanged
    assert more is None                               # few notes: each shown
    # every input note but those of a complete met record, in the order of the file
    assert notes == [_words(n) for n in prov["input_notes"]
                     if "complete hourly record" not in n]
    assert not any("complete hourly record" in n for n in notes)
    lines = printed.splitlines()
    head = next(i for i, x in enumerate(lines) if x.startswith(HEAD))
    assert head > next(i for i, x in enumerate(lines) if x.startswith("budgets per site"))
    assert head > next(i for i, x in enumerate(lines) if x.startswith("notes of the run"))
    block = lines[head:]
    assert max(len(x) for x in block) <= NOTE_WIDTH
    assert any("'HNO3 [ug/m3]'" in x for x in block)   # a quoted header kept whole
    heading = block[:next(i for i, x in enumerate(block) if x.startswith("  - "))]
    assert f"workbench check {scenario}" in _words(" ".join(heading))


def test_a_run_with_a_closed_stdout_still_ends_quietly(slipped_run):
    tmp, scenario = slipped_run
    done = _closed_reader_run(["run", str(scenario), "--out", str(tmp / "closed")])
    assert "error" not in done.stderr and "Traceback" not in done.stderr, done.stderr
    assert done.returncode == 141                # 128 + SIGPIPE, as before
    assert (tmp / "closed" / "provenance.json").is_file()


def test_many_notes_are_counted_with_where_the_rest_are():
    notes = [f"precipitation.csv: note {i} on the samples" for i in range(9)]
    lines = input_note_lines(notes, scenario="study/scenario.toml")
    shown = [x for x in lines if x.startswith("  - ")]
    assert [x[4:] for x in shown] == notes[:INPUT_NOTES_SHOWN]
    tail = lines[next(i for i, x in enumerate(lines) if x.startswith("  and ")):]
    assert _words(" ".join(tail)) == (f"and {9 - INPUT_NOTES_SHOWN} more: report.html "
                                 '("Input rows"), provenance.json (input_notes), '
                                 "workbench check study/scenario.toml")
    assert len(input_note_lines(notes, shown=2)) == 1 + 2 + 1


def test_no_heading_when_every_met_record_is_complete():
    notes = ["met farm: complete hourly record 2016-01-01T00:00 to 2023-12-31T23:00 UTC",
             "met fell: complete hourly record 2016-01-01T00:00 to 2023-12-31T23:00 UTC"]
    assert input_note_lines(notes) == []
    assert input_note_lines([]) == []


def test_a_network_groups_the_notes_that_differ_by_site_only():
    """As report.html groups its input notes for more than 8 sites."""
    sites = [f"s{i:02d}" for i in range(10)]
    notes = [f"met {s}: wind_speed flagged at 100 hours, kept as read" for s in sites]
    lines = input_note_lines(notes, sites)
    assert len([x for x in lines if x.startswith("  - ")]) == 1
    assert "the same at 9 more sites: s01, s02" in _words(" ".join(lines))
    assert len([x for x in input_note_lines(notes[:3], sites[:3])
                if x.startswith("  - ")]) == 3


def _demo_without_wind_at_fell(folder):
    """A copy of the demo whose wind speed at fell is blank in every row (the rows and
    every other value kept)."""
    import gzip
    from io import StringIO
    shutil.copytree(DEMO_SCENARIO.parent, folder)
    met = folder / "met.csv.gz"
    text = gzip.open(met, "rt").read().splitlines(keepends=True)
    meta = [x for x in text if x.startswith("#")]
    df = pd.read_csv(StringIO("".join(x for x in text if not x.startswith("#"))),
                     dtype=str, keep_default_na=False)
    df.loc[df["site"] == "fell", "wind_speed [m/s]"] = ""
    with gzip.open(met, "wt") as f:
        f.write("".join(meta) + df.to_csv(index=False))
    return folder / "scenario.toml"


def test_a_site_without_wind_is_named_and_its_dry_part_missing(tmp_path, capsys):
    """Every wind speed of fell blank: the run says so among its input notes (the met
    note was "complete hourly record", left out as nothing amiss), the dry components
    at fell are missing with their reason and its totals are partial, never complete
    and never a zero."""
    scenario = _demo_without_wind_at_fell(tmp_path / "demo")
    out = tmp_path / "run"
    assert main(["run", str(scenario), "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    notes, _ = _printed_input_notes(printed)
    fell = [n for n in notes if n.startswith("met fell: ")]
    assert len(fell) == 1 and "complete hourly record" not in fell[0]
    # the demo's month without relative humidity (August 2021) is dated
    assert fell[0].endswith("wind speed has a value in 0 (none), relative humidity in "
                            "69384 (none for 744 h from 2021-08-01T00:00 UTC)"), fell[0]
    summ = pd.read_csv(out / "summary.csv")
    at = summ[summ["site"] == "fell"]
    assert len(at) == 16
    assert set(at["S_total_status"]) == {"partial"}
    assert set(at["N_total_status"]) == {"partial"}
    assert at["S_total_missing_components"].str.contains("SO2").all()
    assert at["S_dry_share"].isna().all()                  # not a dry share of 0
    budget = pd.read_csv(out / "budget.csv")
    dry = budget[(budget["site"] == "fell") & (budget["pathway"] == "dry")
                 & (budget["species"] == "SO2")]
    assert set(dry["status"]) == {"missing"} and dry["flux_kg_ha"].isna().all()
    assert dry["note"].str.contains("no deposition velocity for any hour").all()
    # what is missing is named, by variable, as the met note counts it (it read "check
    # the met record and the site's roughness and heights", a vague lead)
    assert dry["note"].str.contains("wind speed has no value in any hour of the site's "
                                    "met record", regex=False).all()
    assert not dry["note"].str.contains("roughness").any()
    others = budget[(budget["site"] == "ridge") & (budget["pathway"] == "dry")
                    & (budget["species"] == "SO2")]
    assert (others["status"] != "missing").all()


def test_check_says_the_dry_deposition_of_a_site_without_wind_cannot_be_computed(
        tmp_path, capsys):
    """Every wind speed of fell blank: `workbench check` ended with "the scenario can be
    run" and nothing on the dry deposition the run would say missing; one line names
    the site and the variable, within the console's width.  The closing line, which
    read "the scenario can be run" alone under that warning as if all were clear, says
    that fell's dry deposition will be missing and its totals partial."""
    scenario = _demo_without_wind_at_fell(tmp_path / "demo")
    assert main(["check", str(scenario), "--quiet"]) == 0
    printed = capsys.readouterr().out
    lines = printed.splitlines()
    closing = lines[max(i for i, x in enumerate(lines) if x.startswith("everything")):]
    assert max(map(len, closing)) <= NOTE_WIDTH
    words = " ".join(printed.split())      # the words, the lines unwrapped (console_lines)
    assert words.endswith("everything a run uses was read and checked: the scenario can "
                          "be run, but the dry deposition of fell will be missing and its "
                          "totals partial (above)"), words[-200:]
    said = [x for x in lines if "dry deposition at" in x]
    assert said == ["warning: dry deposition at fell cannot be computed: its met has no "
                    "wind speed"], said
    assert len(said[0]) <= NOTE_WIDTH
    # the other sites have their wind: not named
    assert not [x for x in lines if "cannot be computed" in x and "fell" not in x]
