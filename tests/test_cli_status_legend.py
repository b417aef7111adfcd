"""`workbench demo` prints statuses (complete, filled, partial, flagged) beside the
totals: the line under the table says what each means, so that a first-time user
reading "partial" or "flagged" knows where to look (found on a fresh install)."""


def _span_table(text):
    """The lines of the console's whole-span table in `text` (after its heading): the
    head (from ``site``) and the rows, up to the years."""
    lines = text.splitlines()
    start = next(i for i, x in enumerate(lines) if x.startswith("site "))
    end = next(i for i, x in enumerate(lines) if x.startswith("years used"))
    return lines[start:end]


def test_demo_says_what_the_statuses_mean(tmp_path, capsys):
    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    table, legend = out.split("whole-span totals")[1].split("\nstatus: ")
    legend = " ".join(legend.split())          # wrapped for an 80-column terminal
    shown = {r.split()[5] for r in _span_table(table)[1:]}
    assert shown >= {"partial", "flagged"}          # the demo plants both
    for w in shown:
        assert f"{w} (" in legend, w
    assert "missing_components" in legend and "report.html" in legend
    head, *rows = _span_table(table)
    assert head.split()[-1] == "missing"             # the span rows say what is missing
    assert "missing is its missing_components" in " ".join(table.split())
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
    rows = [r.split() for r in _span_table(table)[1:]]
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
        # and the console shows the same years (the demo's rows all have the same)
        line = next(x for x in out.split("whole-span totals")[1].splitlines()
                    if x.startswith("years used"))
        assert line.split(": ")[1].split() == sorted(used)
    report = (tmp_path / "run" / "report.html").read_text()
    assert "Status of a whole-span row" in report


def test_the_demo_span_table_fits_80_columns_with_every_number_kept(tmp_path, capsys):
    """The whole-span table was printed by pandas 126 characters wide (a column of 8
    years beside each row), where every other closing line is wrapped to 79: an
    80-column terminal broke each row in two.  Every line of the block (heading, table,
    years, legend) now fits 79 characters, and each number of budget.csv's span rows is
    still there: the kg/ha/yr to 3 significant digits, the eq/ha/yr whole, the status,
    the missing components and the years used."""
    import pandas as pd

    from workbench.cli import main
    assert main(["demo", "--out", str(tmp_path / "run"), "--quiet"]) == 0
    out = capsys.readouterr().out
    block = out[out.index("whole-span totals"):out.index("\nnotes of the run")]
    assert max(len(x) for x in block.splitlines()) <= 79, block
    t = pd.read_csv(tmp_path / "run" / "budget.csv", dtype={"period": str},
                    keep_default_na=False)
    span = t[(t["period"] == "span") & (t["species"] == "all") & (t["pathway"] == "total")]
    rows = {tuple(r.split()[:3]): r.split()[3:] for r in _span_table(block)[1:]}
    assert len(rows) == len(span) == 20
    for r in span.itertuples():
        kg, eq, status, *missing = rows[(r.site, r.receptor, r.element)]
        assert abs(float(kg) - float(r.flux_kg_ha_yr)) <= 0.0051 * float(r.flux_kg_ha_yr)  # 3 digits
        assert int(eq.replace(",", "")) == round(float(r.flux_eq_ha_yr))
        assert status == r.status and missing == r.missing_components.split()
    years = next(x for x in block.splitlines() if x.startswith("years used"))
    assert {years.split(": ")[1]} == set(span["years_used"])


def test_span_lines_name_each_set_of_years_and_fit_long_names():
    """Rows with different years get a line per set of years naming its rows; a site
    name too long for the table makes each row one wrapped line, its numbers kept."""
    import pandas as pd

    from workbench.cli_status import span_lines
    t = pd.DataFrame({
        "site": ["fell", "fell", "mere"], "receptor": ["grass", "grass", "water"],
        "period": ["span"] * 3, "element": ["S", "N", "N"], "species": ["all"] * 3,
        "pathway": ["total"] * 3, "flux_kg_ha_yr": [8.17, 13.6, 9.92],
        "flux_eq_ha_yr": [510.4, 974.0, 1708.2], "status": ["complete", "partial", "filled"],
        "missing_components": ["", "NO2", ""],
        "years_used": ["2016 2017", "2016 2017", "2017"],
        "years_excluded": ["", "", "2016"]})
    lines = span_lines(t)
    assert lines[-3:] == ["years used (years_used):", "  2016 2017: fell grass S, fell grass N",
                          "  2017 (years_excluded: 2016): mere water N"]
    t["site"] = t["site"] + "_and_a_very_long_name_given_by_the_catalogue_of_this_network"
    lines = span_lines(t)
    assert max(len(x) for x in lines) <= 79 or all(" " not in x.strip() for x in lines
                                                  if len(x) > 79)
    joined = " ".join(" ".join(lines).split())
    assert ("mere_and_a_very_long_name_given_by_the_catalogue_of_this_network water N: "
            "9.92 kg/ha/yr, 1,708 eq/ha/yr, filled") in joined
    assert "13.6 kg/ha/yr, 974 eq/ha/yr, partial; missing NO2" in joined
