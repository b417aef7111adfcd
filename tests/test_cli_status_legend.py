"""`workbench demo` prints statuses (complete, filled, partial, flagged) beside the
totals: the line under the table says what each means, so that a first-time user
reading "partial" or "flagged" knows where to look (found on a fresh install)."""


def test_demo_says_what_the_statuses_mean(tmp_path, capsys):
    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    table, legend = out.split("whole-span totals")[1].split("\nstatus: ")
    shown = {w for w in ("complete", "filled", "partial", "flagged") if f" {w} " in table}
    assert shown >= {"partial", "flagged"}          # the demo plants both
    for w in shown:
        assert f"{w} (" in legend, w
    assert "missing_components" in legend and "report.html" in legend
    head, *rows = table.strip().splitlines()[1:]
    assert "missing_components" in head              # the span rows say what is missing
    assert any(" partial " in r and r.split()[6] == "NO2" for r in rows if " N " in r)


def test_demo_totals_in_plain_numbers_and_the_two_counts_of_flags_told_apart(tmp_path, capsys):
    """eq/ha/yr written whole ("2,259"), not "2.26e+03"; the per-sample screening line
    names its "flagged" as samples used with a QA flag, not the rows read with a note of
    the rows-per-file table above it (found on a fresh install)."""
    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    table = out.split("whole-span totals")[1].split("\nstatus: ")[0]
    assert "e+" not in table
    rows = [r.split() for r in table.strip().splitlines()[2:]]
    eq = [r[4] for r in rows]
    assert all(v.replace(",", "").isdigit() for v in eq), eq
    assert any("," in v for v in eq)                 # the farm's N is above 1,000
    screening = next(line for line in out.splitlines() if line.startswith("precipitation screening"))
    assert "used with a QA flag" in screening and "samples.csv" in screening
