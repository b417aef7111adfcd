"""The sum rows of budget.csv (``species`` ``all``: the wet, dry and total of an element)
gather the notes of their parts, each part once with the species that carry it.

Old code: the parts carried their notes and the sum rows none, so a ``flagged`` or
``partial`` total read alone gave no reason (the span rows already gathered theirs,
tests/test_span_notes.py)."""
import pandas as pd
import pytest

GAP = "1 week without a usable precipitation sample (sample coverage 98.1 % of the period)"
NOT_MEASURED = "not measured at the site (no valid concentration)"


def _rows():
    common = dict(site="ridge", receptor="moorland", element="S",
                  period_start=pd.Timestamp("2020-01-01"))
    return pd.DataFrame([
        {**common, "pathway": "wet", "species": "SO4", "note": GAP},
        {**common, "pathway": "dry", "species": "SO2", "note": NOT_MEASURED},
        {**common, "pathway": "dry", "species": "pSO4", "note": NOT_MEASURED + "; extra"},
        {**common, "pathway": "wet", "species": "all", "note": float("nan")},
        {**common, "pathway": "dry", "species": "all", "note": float("nan")},
        {**common, "pathway": "total", "species": "all", "note": float("nan")},
        {**common, "element": "N", "pathway": "total", "species": "all", "note": float("nan")},
    ])


def test_sum_rows_gather_their_parts_notes_once_naming_the_species():
    from workbench.tables import _sum_notes
    out = _sum_notes(_rows()).set_index(["element", "pathway", "species"])["note"]
    assert out[("S", "wet", "all")] == f"SO4: {GAP}"
    assert out[("S", "dry", "all")] == f"SO2 pSO4: {NOT_MEASURED}; pSO4: extra"
    assert out[("S", "total", "all")] == f"SO4: {GAP}; SO2 pSO4: {NOT_MEASURED}; pSO4: extra"
    assert out[("N", "total", "all")] == ""          # no part of N: nothing gathered
    assert out[("S", "dry", "SO2")] == NOT_MEASURED  # the parts keep their own


@pytest.fixture(scope="module")
def ridge_run(tmp_path_factory):
    from ui.demo_subset import write_demo_subset

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    path = write_demo_subset(tmp_path_factory.mktemp("sums"), ("ridge",), 2019, 2020)
    return Study.from_scenario(load_scenario(path)).run()


def test_demo_sum_rows_carry_every_part_of_their_parts_notes(ridge_run):
    t = ridge_run.table
    t = t[t["period"] != "span"]
    sums = t[t["species"] == "all"]
    parts = t[t["species"] != "all"]
    assert (sums["note"].fillna("") != "").any()
    keys = ["site", "receptor", "period_start", "element"]
    for _, row in sums.iterrows():
        sel = (parts[keys] == row[keys]).all(axis=1)
        if row["pathway"] != "total":
            sel &= parts["pathway"] == row["pathway"]
        for sp, note in zip(parts.loc[sel, "species"], parts.loc[sel, "note"].fillna("")):
            for p in (p for p in note.split("; ") if p):
                assert p in row["note"], (row[keys + ["pathway"]].tolist(), sp, p, row["note"])
                assert sp in row["note"].split(p)[0].rsplit("; ", 1)[-1]
