"""A species masked by the air reader in one year of a site and valid in the others:
the masked year's budget row says every value of the period was masked, with the
reader's reason, apart from a year with no samples at all ("no concentration in the
period") and from the valid years (docs/budget.md, "Completeness of air concentrations").

A copy of the invented demo network (ridge, 2019-2021): the NH3 samples touching 2019
left empty (no samples), those of 2020 from a sampler whose lab wrote ng/m3 under the
ug/m3 header (values x 1000; the reader masks that sampler whole, docs/data_formats.md
section 3), those of 2021 as shipped.  Every expectation follows from the rules (SI
prefixes: 1 ug = 1000 ng; the unit-slip rule of the reader).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).parent))

HINT = ("NH3 values look 1000x too high at this sampler: ng/m3 written under a ug/m3 "
        "header?")


def _edit_air(path):
    """The NH3 cells of ridge: empty on rows touching 2019, x1000 under sampler
    RDG-F9 on the others touching 2020."""
    lines = path.read_text(encoding="utf-8").splitlines()
    head = next(i for i, ln in enumerate(lines) if not ln.startswith("#"))
    cols = lines[head].split(",")
    j, js, jm = cols.index("NH3 [ug/m3]"), cols.index("sampler_id"), cols.index("method_NH3")
    out = lines[:head + 1]
    for ln in lines[head + 1:]:
        c = ln.split(",")
        t0 = c[1][:16]
        if t0 < "2020-01-01T00:00":                        # touches 2019: no NH3
            c[j], c[jm] = "", ""
        elif t0 < "2021-01-01T00:00" and c[j]:             # 2020: a sampler in ng/m3
            c[j], c[js] = f"{float(c[j]) * 1000:.0f}", "RDG-F9"
        out.append(",".join(c))
    path.write_text("\n".join(out) + "\n", encoding="utf-8")


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    import xarray as xr
    from ui.demo_subset import write_demo_subset

    from workbench.cli import run_scenario
    tmp = tmp_path_factory.mktemp("masked_year")
    sc = write_demo_subset(tmp / "in", ("ridge",), 2019, 2021)
    _edit_air(sc.parent / "air.csv")
    written, _, _ = run_scenario(sc, tmp / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    with xr.open_dataset(written["budget.nc"]) as ds:
        nc = ds.load()
    return table, nc


def _rows(table, year, species="NH3"):
    """The dry `species` rows of ridge in `year` (one per receptor)."""
    t = table[(table["site"] == "ridge") & (table["pathway"] == "dry")
              & (table["species"] == species) & (table["period"].astype(str) == year)]
    assert len(t)
    return t


def test_the_masked_year_says_so_with_the_reason(run):
    """2020: every sample masked; before, "no concentration in the period", as for a
    year no one sampled."""
    t = _rows(run[0], "2020")
    assert (t["status"] == "missing").all() and t["flux_kg_ha"].isna().all()
    assert set(t["note"]) == {f"every value of the period masked: {HINT}"}, set(t["note"])


def test_a_year_without_samples_keeps_no_concentration(run):
    t = _rows(run[0], "2019")
    assert (t["status"] == "missing").all()
    assert set(t["note"]) == {"no concentration in the period"}, set(t["note"])


def test_the_valid_year_and_the_other_species_keep_their_numbers(run):
    t = _rows(run[0], "2021")
    assert (t["status"] != "missing").all() and (t["flux_kg_ha"] > 0).all()
    assert not t["note"].fillna("").str.contains("masked|no concentration").any()
    for year in ("2019", "2020", "2021"):       # SO2 of every year: values as shipped
        s = _rows(run[0], year, "SO2")
        assert (s["status"] != "missing").all() and (s["flux_kg_ha"] > 0).all()


def test_budget_nc_holds_the_same_notes(run):
    _, nc = run
    notes = {str(x) for x in np.asarray(nc["note"].values).ravel()}
    assert f"every value of the period masked: {HINT}" in notes
    assert "no concentration in the period" in notes


def test_the_site_texts_say_the_period_was_masked(run):
    """The notebooks' NH3 line of the masked year, the budget figure's hover of its NH3
    bar and of its N total, and the component's short reason read the note; the
    year without samples keeps the bare words."""
    from workbench.ui.figures import budget_bars_spec
    from workbench.ui.no_effect import component_reason
    from workbench.ui.summaries import nh3_line
    _, nc = run
    rec = str(nc["receptor"].values[0])
    assert component_reason(f"every value of the period masked: {HINT}") == "period masked"
    assert component_reason("no concentration in the period") == ""
    years = [str(p) for p in nc["period"].values]
    y2020 = nc.isel(period=[years.index("2020")])
    line = nh3_line(y2020, "ridge", rec)
    assert line == (f"Dry NH3: no figure (every NH3 value of these years masked: {HINT}); "
                    "the N totals leave it out (partial)."), line
    y2019 = nc.isel(period=[years.index("2019")])
    assert nh3_line(y2019, "ridge", rec) == \
        "Dry NH3: no figure (no NH3 concentrations in these years).", nh3_line(y2019, "ridge", rec)
    spec = budget_bars_spec(nc.isel(period=[years.index(y) for y in ("2019", "2020", "2021")]),
                            "ridge", rec)
    nh3 = next(t for t in spec["data"] if t["name"] == "dry NH3")
    hover = [str(x).replace("<br>", " ") for x in nh3["customdata"]]
    assert "every value of the period masked: NH3 values look 1000x" in hover[1], hover
    assert "masked" not in hover[0] and "masked" not in hover[2], hover
    # one trace of totals per element's panel
    texts = [str(x).replace("<br>", " ") for t in spec["data"] if t["name"] == "total"
             for x in t["customdata"]]
    assert any("N total 2020" in x and "every value of the period masked: NH3" in x
               for x in texts), texts
    assert not any("N total 2019" in x and "masked" in x for x in texts), texts


def test_period_notes_against_every_pair_of_run_and_period():
    """period_masked_notes against the overlap of every run with every period written
    out (common practice: hours inside [max(starts), min(ends)]); the reason of the
    most masked hours wins, a run straddling two periods counts in each with its hours
    inside, a period touched by no run stays ""."""
    from workbench.drycomponents import period_masked_notes
    rng = np.random.default_rng(3)
    periods = pd.DataFrame({"start": pd.date_range("2019-01-01", periods=6, freq="MS"),
                            "end": pd.date_range("2019-02-01", periods=6, freq="MS")})
    n = 40
    t0 = (np.datetime64("2018-12-20T00") + rng.integers(0, 4300, n) * np.timedelta64(1, "h"))
    runs = pd.DataFrame({"site": rng.integers(0, 2, n), "species": rng.integers(0, 2, n),
                         "start": t0.astype("datetime64[ns]"),
                         "end": (t0 + rng.integers(1, 900, n) * np.timedelta64(1, "h"))
                         .astype("datetime64[ns]"),
                         "why": rng.choice(["a", "b", "c"], n), "rows": 1})
    got = period_masked_notes(runs, periods, 2, 2)
    p0 = periods["start"].to_numpy("datetime64[ns]")
    p1 = periods["end"].to_numpy("datetime64[ns]")
    for s in range(2):
        for p in range(len(periods)):
            for k in range(2):
                hours = {}
                for r in runs.itertuples():
                    if r.site == s and r.species == k:
                        h = (min(r.end.to_datetime64(), p1[p])
                             - max(r.start.to_datetime64(), p0[p])) / np.timedelta64(1, "h")
                        if h > 0:
                            hours[r.why] = hours.get(r.why, 0.0) + h
                want = min(hours, key=lambda w: (-hours[w], w)) if hours else ""
                assert got[s, p, k] == want, (s, p, k, hours, got[s, p, k])
    assert (got == "").any() and (got != "").any()


def test_the_reader_keeps_the_masked_rows_as_runs(tmp_path):
    """read_air: the 2020 NH3 rows of the sampler in ng/m3, weekly and one after another,
    are one run in the attribute masked_runs (its rows counted, its reason once)."""
    import json

    from ui.demo_subset import write_demo_subset

    from workbench.io.samples import read_air
    from workbench.io.sites import read_sites
    sc = write_demo_subset(tmp_path, ("ridge",), 2019, 2021)
    _edit_air(sc.parent / "air.csv")
    ds, led = read_air(sc.parent / "air.csv", read_sites(sc.parent / "sites.toml"))
    data = json.loads(ds.attrs["masked_runs"])
    assert data["reasons"] == [HINT]
    run = data["runs"]["NH3"]
    assert run["site"] == ["ridge"] and run["why"] == [0]
    n = int((led.table["reason"].astype(str).str.contains("NH3 values look 1000x")).sum())
    assert run["rows"] == [n] and n >= 52
    t0 = np.datetime64(run["start"][0], "s")
    assert np.datetime64("2020-01-01") <= t0 < np.datetime64("2020-01-10")
    assert set(data["runs"]) == {"NH3"}
