"""The names of missing parts of the derived sums (``<sum>_missing_components`` of
summary.csv) and of the totals, joined over whole columns
(:func:`workbench.budget_totals._joined_names`), against the row loop they replaced.

The reference is the earlier code of :func:`workbench.budget.derived_status`, kept here
word for word: ``" ".join`` of the parts whose status is ``missing``, row by row
(Python's ``str.join`` is the check from outside the project).
"""
import itertools

import numpy as np
import pandas as pd

from workbench.budget import DERIVED_PARTS, derived_status
from workbench.budget_totals import _joined_names

STATES = ("complete", "filled", "flagged", "flagged_failing", "missing", "nan", "no_row")


def _row_loop(table):
    """The earlier `<sum>_missing_components` of derived_status (a list over rows)."""
    comp = table[(table["species"] != "all") & (table["period"] != "span")]
    key = ["site", "receptor", "period"]
    st = comp.pivot_table(index=key, columns="species", values="status", aggfunc="first",
                          observed=True)
    out = pd.DataFrame(index=st.index)
    for name, parts in DERIVED_PARTS.items():
        sub = st.reindex(columns=list(parts)).fillna("missing").to_numpy(object)
        out[f"{name}_missing_components"] = [
            " ".join(p for p, v in zip(parts, row) if v == "missing") for row in sub]
    return out.reset_index()


def _table(states_of_sites):
    """A budget table: one site per entry, each part in one of :data:`STATES`
    (``nan``: the row's status is NaN; ``no_row``: the part has no row)."""
    parts = DERIVED_PARTS["potential_acidity"]
    rows = []
    for i, states in enumerate(states_of_sites):
        for sp, s in zip(parts, states):
            if s == "no_row":
                continue
            rows.append({"site": f"s{i:05d}", "receptor": "grass", "period": "2023",
                         "species": sp,
                         "status": {"nan": np.nan, "flagged_failing": "flagged"}.get(s, s),
                         "passes": s not in ("flagged_failing", "missing", "nan"),
                         "completeness_failure": ("air record short"
                                                  if s == "flagged_failing" else "")})
        # every site keeps one row with a status, so that it is in the pivot
        rows.append({"site": f"s{i:05d}", "receptor": "grass", "period": "2023",
                     "species": "all", "status": "complete", "passes": True,
                     "completeness_failure": ""})
    return pd.DataFrame(rows)


def test_missing_components_as_the_row_loop():
    """Every combination of states of the four oxidized-N parts (7**4 = 2401 sites),
    then 3000 random ones over all ten parts of the potential acidity: the same
    strings, in the same rows, as the row loop."""
    parts = DERIVED_PARTS["potential_acidity"]
    ox = [parts.index(p) for p in DERIVED_PARTS["oxidized_N"]]
    combos = []
    for states in itertools.product(STATES, repeat=len(ox)):
        row = ["complete"] * len(parts)
        for k, s in zip(ox, states):
            row[k] = s
        combos.append(row)
    rng = np.random.default_rng(20261205)
    combos += [list(r) for r in rng.choice(STATES, size=(3000, len(parts)))]
    table = _table(combos)
    table = table[table["species"] != "all"]
    new = derived_status(table)
    old = _row_loop(table)
    assert len(new) == len(old) > 5000
    for name in DERIVED_PARTS:
        col = f"{name}_missing_components"
        assert new[col].tolist() == old[col].tolist(), col
        assert new[col].dtype == old[col].dtype
    # the combinations do reach every case: none, one, some and all parts missing
    got = set(new["oxidized_N_missing_components"])
    assert {"", "NO3", "NO3 HNO3 pNO3 NO2", "HNO3 NO2"} <= got


def test_joined_names_as_str_join():
    """Over a (3, 50, 6) mask, with an empty list of names and no rows."""
    rng = np.random.default_rng(7)
    names = np.array(["SO4", "SO2", "pSO4", "NO3", "HNO3", "pNO3"], dtype=object)
    mask = rng.random((3, 50, 6)) < 0.4
    got = _joined_names(mask, names)
    want = np.array([[" ".join(n for n, m in zip(names, row) if m) for row in block]
                     for block in mask], dtype=object)
    assert got.dtype == object and got.shape == (3, 50)
    assert got.tolist() == want.tolist()
    assert _joined_names(np.zeros((4, 0), bool), []).tolist() == [""] * 4
    assert _joined_names(np.zeros((0, 3), bool), names[:3]).shape == (0,)
