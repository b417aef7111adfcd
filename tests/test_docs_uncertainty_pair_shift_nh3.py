"""Demo numbers of docs/methods_uncertainty.md, "The gas/particle split of a filter
pack", *Measured* under the bidirectional NH3: the 5 / 50 / 95 % of the 2021 dry N
[kg N/ha] of the ridge's conifer forest (with `pair_shift_ammonium = [0, 0.3]` and
without the shift) and of the farm's crops (with it), the demo's ridge and farm in 2021
(tests/ui/demo_subset.py), Wesely 1989 with `nh3_cuticle = "scheme"`, 2,000 draws,
seed 12345, recomputed so that a change of the engine or of the draws that moves one
fails here until the sentence is re-measured. The values "before" are of the code before
that change (history, not recomputed).

The reference is the engine itself (measured numbers; the method's checks are in
tests/analysis/test_uncertainty_pair_shift_nh3.py). Two decimals as written (Python's
format, common practice).
"""
from __future__ import annotations

import re
import warnings

import pytest

from doc_sections import flat_section


@pytest.fixture(scope="module")
def quantiles(tmp_path_factory):
    """(shift, site, receptor) -> "p05 / p50 / p95" of the 2021 dry N [kg N/ha]."""
    from ui.demo_subset import study_and_args, write_demo_subset
    from workbench.analysis import uncertainty as U
    from workbench.analysis.montecarlo import monte_carlo
    sc = write_demo_subset(tmp_path_factory.mktemp("ridge_farm"), ("ridge", "farm"), 2021, 2021)
    sc.write_text(sc.read_text().replace(
        "[budget]", '[dry]\nnh3_treatment = "bidirectional"\nnh3_cuticle = "scheme"\n\n'
        "[budget]"))
    study, args = study_and_args(sc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        res = study.run(*args)
    out = {}
    for shift in ((0.0, 0.0), (0.0, 0.3)):
        opt = U.UncertaintyOptions(draws=2000, seed=12345, pair_shift_ammonium=shift)
        t = U.add_quantiles(res.table, monte_carlo(res, study, opt),
                            res.budget["annual_factor"].values)
        t = t[(t["period"].astype(str) == "2021") & (t["element"] == "N")
              & (t["pathway"] == "dry") & (t["species"] == "all")]
        for _, row in t.iterrows():
            out[shift, row["site"], row["receptor"]] = " / ".join(
                f"{row[f'flux_kg_ha_{p}']:.2f}" for p in ("p05", "p50", "p95"))
    return out


def test_the_ammonium_split_under_the_bidirectional_nh3(quantiles):
    text = flat_section("### The gas/particle split of a filter pack",
                        "**Refused: the ammonium split under co-deposition.**")
    q = quantiles
    on, off = (0.0, 0.3), (0.0, 0.0)
    want = (f"the ridge's conifer forest's dry N with `pair_shift_ammonium = [0, 0.3]` is "
            f"{q[on, 'ridge', 'conifer_forest']}, before ")
    assert want in text, f"re-measure:\n{want}"
    m = re.search(r"before [\d. /]+ \(([\d. /]+) without the shift\); the farm's crops "
                  r"([\d. /]+), before", text)
    assert m, "the measured sentence of the ammonium split"
    assert m.groups() == (q[off, "ridge", "conifer_forest"], q[on, "farm", "crops"])
