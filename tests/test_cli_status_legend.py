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
