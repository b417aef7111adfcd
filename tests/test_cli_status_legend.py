"""`workbench demo` prints statuses (complete, filled, partial, flagged) beside the
totals: the line under the table says what each means, so that a first-time user
reading "partial" or "flagged" knows where to look (found on a fresh install)."""


def test_demo_says_what_the_statuses_mean(tmp_path, capsys):
    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    table, legend = out.split("whole-span totals")[1].split("\nstatus: ")
    legend = " ".join(legend.split())          # wrapped for an 80-column terminal
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
    # the screening line, wrapped for an 80-column terminal (under a hanging indent)
    screening = out.split("\nprecipitation screening")[1].split("\n\n")[0]
    assert max(len(x) for x in screening.splitlines()) <= 79
    screening = " ".join(screening.split())
    assert "used with a QA flag" in screening and "samples.csv" in screening


def test_a_flagged_span_row_and_the_console_agree_on_the_years(tmp_path, capsys):
    """A flagged whole-span row of budget.csv lists every year in years_used while the
    console's heading says "mean of the years that pass completeness" and its legend
    said "flagged (fails completeness, ...)": read together, the mean seemed to take
    failing years.  The file is right (a year flagged only for kept flagged samples
    passes: budget.csv's ``passes``, and the span is the plain mean of those years, by
    hand here); the legend now says what a span row's flagged means."""
    import numpy as np
    import pandas as pd

    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    legend = out.split("whole-span totals")[1].split("\nstatus: ")[1]
    legend = legend.split("\nnotes of the run")[0].split("\nreport: ")[0]
    assert max(len(x) for x in ("status: " + legend).splitlines()) <= 79   # wrapped
    legend = " ".join(legend.split())
    assert "fails completeness, or" not in legend
    assert "every year in years_used passes completeness" in legend
    t = pd.read_csv(tmp_path / "run" / "budget.csv", dtype={"period": str})
    tot = t[(t["pathway"] == "total") & (t["species"] == "all")]
    span = tot[tot["period"] == "span"]
    flagged = span[span["status"] == "flagged"]
    assert len(flagged)                                  # the demo plants some
    for r in flagged.itertuples():
        years = tot[(tot["site"] == r.site) & (tot["receptor"] == r.receptor)
                    & (tot["element"] == r.element) & (tot["period"] != "span")]
        used = set(str(r.years_used).split())
        ok = years[years["passes"].astype(str).str.lower() == "true"]
        assert used == set(ok["period"])                 # years_used: those that pass
        # the mean of the years used, by hand
        assert abs(r.flux_kg_ha_yr - np.mean(ok["flux_kg_ha_yr"])) <= 1e-9 * abs(r.flux_kg_ha_yr)
        # and the console's row shows the same years
        line = next(x for x in out.split("whole-span totals")[1].splitlines()
                    if x.split()[:3] == [r.site, r.receptor, r.element])
        assert line.split()[-len(used):] == sorted(used)
    report = (tmp_path / "run" / "report.html").read_text()
    assert "Status of a whole-span row" in report
