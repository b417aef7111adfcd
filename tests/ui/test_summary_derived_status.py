"""summary.csv's rows carry the derived sums' own status and completeness from
:func:`workbench.tables.summary_table` (workbench.budget.with_derived_status); before,
the writer of summary.csv merged them in itself (and budget.nc's writer likewise)."""
import pandas as pd
import pytest

pytestmark = pytest.mark.filterwarnings("ignore::RuntimeWarning")

KEY = ["site", "receptor", "period"]


def test_summary_rows_carry_the_derived_status_and_the_writer_only_writes(session, tmp_path):
    from workbench.budget import derived_status
    from workbench.tables import summary_table
    from workbench.ui.apps import SiteExplorer
    from workbench.writers import budget_dataset, write_summary_csv
    result = SiteExplorer(session, site="ridge", years=(2021, 2021)).result
    frame = summary_table(result)
    st = derived_status(result.table)
    cols = [c for c in st.columns if c not in KEY]
    assert list(frame.columns[-len(cols):]) == cols          # last, as summary.csv had them
    # each row's words are derived_status's of its (site, receptor, period): a plain
    # look-up by pandas' index (the check outside the merge)
    want = st.astype({k: str for k in KEY}).set_index(KEY)
    got = frame.astype({k: str for k in KEY}).set_index(KEY)[cols]
    assert len(got) > 0
    pd.testing.assert_frame_equal(got, want.reindex(got.index)[cols], check_dtype=False)
    # the writer writes the rows as they are (the CSV read back holds the same)
    path = write_summary_csv(result, session.study, None, tmp_path / "summary.csv")
    back = pd.read_csv(path, dtype={"period": str}, keep_default_na=False)
    assert list(back.columns) == list(frame.columns) and len(back) == len(frame)
    assert back["oxidized_N_passes"].astype(str).tolist() == \
        frame["oxidized_N_passes"].astype(str).tolist()
    # budget.nc's variables of the same words
    ds = budget_dataset(result)
    for c in cols:
        v = ds[c].sel(site="ridge", receptor=frame["receptor"].iloc[0],
                      period=frame["period"].astype(str).iloc[0]).item()
        assert str(v) == str(frame[c].iloc[0]), c
