"""Demo numbers of docs/methods_dry.md 9.2 (the site explorer's gas-scheme tab): the
budget of the demo's ridge conifer_forest in 2021 under Zhang et al. (2003) minus under
Wesely (1989), dry N and dry S with their main components and the total N, under the
default drag-law transfer of u* and under the blending height. Each is a
:meth:`workbench.pipeline.Study.run` of a copy of the demo holding the ridge in 2021
(tests/ui/demo_subset.py), every option at the demo scenario's value but the scheme
and the transfer, so that a change of the engine that moves one fails here until the
sentence is re-measured.

The reference is the engine itself: measured numbers, not checks of a method. Rounding
half away from zero at two decimals, percent to whole numbers of the Wesely value
(common practice, as docs/budget.md "Changes in percent").
"""
from __future__ import annotations

import dataclasses
import re
import warnings
from decimal import ROUND_HALF_UP, Decimal
from pathlib import Path

import pytest

from ui.demo_subset import study_and_args, write_demo_subset

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_dry.md"


@pytest.fixture(scope="module")
def budgets(tmp_path_factory):
    """(transfer, scheme) -> Series of the ridge conifer's 2021 rows [kg/ha/yr] by
    (element, pathway, species)."""
    sc = write_demo_subset(tmp_path_factory.mktemp("ridge"), ("ridge",), 2021, 2021)
    study, args = study_and_args(sc)
    out = {}
    for transfer in ("drag_law", "blending_height"):
        for scheme in ("wesely1989", "zhang2003"):
            a = list(args)
            a[1] = dataclasses.replace(args[1], gas_scheme=scheme, ustar_transfer=transfer)
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                t = study.run(*a).table
            t = t[(t["site"] == "ridge") & (t["receptor"] == "conifer_forest")
                  & (t["period"].astype(str) == "2021")]
            out[transfer, scheme] = t.set_index(["element", "pathway", "species"])[
                "flux_kg_ha_yr"]
    return out


def _r(x, places="0.01") -> str:
    return str(Decimal(repr(float(x))).quantize(Decimal(places), rounding=ROUND_HALF_UP))


def _s(x) -> str:
    t = _r(x)
    return t if t.startswith("-") else "+" + t


def _words(budgets, transfer):
    w, z = budgets[transfer, "wesely1989"], budgets[transfer, "zhang2003"]
    d = z - w
    dn, ds, tn = ("N", "dry", "all"), ("S", "dry", "all"), ("N", "total", "all")
    pct = lambda key: _r(100 * d[key] / w[key], "1")  # noqa: E731
    return (f"{_s(d[dn])} kg N/ha/yr of dry N (+{pct(dn)} %, {_r(w[dn])} -> {_r(z[dn])}; "
            f"NO2 {_s(d['N', 'dry', 'NO2'])}, NH3 {_s(d['N', 'dry', 'NH3'])}, "
            f"HNO3 {_s(d['N', 'dry', 'HNO3'])}) and {_s(d[ds])} kg S/ha/yr of dry S "
            f"(+{pct(ds)} %, SO2 {_r(w['S', 'dry', 'SO2'])} -> {_r(z['S', 'dry', 'SO2'])}); "
            f"total N +{pct(tn)} % ({_r(w[tn])} -> {_r(z[tn])})")


def _flat() -> str:
    return re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))


def test_the_drag_law_sentence(budgets):
    m = re.search(r"Zhang minus Wesely is (.*?); under the air dew rule", _flat())
    assert m, "the gas-scheme tab's sentence of docs/methods_dry.md 9.2"
    want = _words(budgets, "drag_law")
    assert m.group(1) == want, f"re-measure docs/methods_dry.md 9.2:\n{m.group(1)}\n{want}"


def test_the_blending_height_sentence(budgets):
    m = re.search(r"Under the blending height it is (.*?): the schemes differ most", _flat())
    assert m, "the blending-height sentence of docs/methods_dry.md 9.2"
    want = _words(budgets, "blending_height")
    assert m.group(1) == want, f"re-measure docs/methods_dry.md 9.2:\n{m.group(1)}\n{want}"
