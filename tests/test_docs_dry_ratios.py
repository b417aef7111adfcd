"""The stomatal diffusivity ratios of docs/methods_dry.md 9.2 ("Stomatal diffusivity
ratios"): the sentence's demo numbers recomputed with ``docs/make_stomatal_ratios.py``
(the demo year 2021, every option at its default, the stomatal ratio D_H2O/D_x alone
replaced by Wesely (1989) Table 2's, recalled from memory as the document says).

Held: the span of the change of annual mean Vd [cm/s] of SO2, NH3, O3, HNO3 and NO2 over
the four receptors and both schemes (3 decimals as written), Zhang's SO2 over the farm
deciduous stand before and after, and the claim that one range's verdict alone moves
(Zhang's SO2 forests, by rounding to the tables' two decimals).

The reference is the engine itself: measured numbers, not checks of a method (the
ratios' own checks are in tests/drydep/). Rounding half away from zero (common practice).
"""
from __future__ import annotations

import importlib.util
import re
from decimal import ROUND_HALF_UP, Decimal
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "methods_dry.md"


def _module():
    spec = importlib.util.spec_from_file_location(
        "make_stomatal_ratios", ROOT / "docs" / "make_stomatal_ratios.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def measured():
    m = _module()
    means = m.annual_means()
    return m, means


def _r3(x: float) -> str:
    return str(Decimal(repr(float(x))).quantize(Decimal("0.001"), rounding=ROUND_HALF_UP))


def _signed(x: float) -> str:
    t = _r3(x)
    return t if t.startswith("-") or t == "0.000" else "+" + t


def _sentence() -> str:
    flat = re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))
    m = re.search(r"Wesely's ratios would change the annual Vd of ridge conifer, farm "
                  r"deciduous, farm and ridge grass by (.*?) \(The docstring", flat)
    assert m, "the stomatal-ratio sentence of docs/methods_dry.md 9.2"
    return m.group(1)


def test_the_changes_are_the_ones_written(measured):
    m, means = measured
    spans, zd = m.changes(means)
    got = _sentence()
    want = (f"{_signed(spans['SO2'][0])} to {_signed(spans['SO2'][1])} cm/s for SO2 "
            f"(Zhang over the farm deciduous stand {_r3(zd[0])} -> {_r3(zd[1])}), "
            f"{_signed(spans['NH3'][0])} to {_signed(spans['NH3'][1])} for NH3, "
            f"{_signed(spans['O3'][1])} to {_signed(spans['O3'][0])} for O3, "
            f"{_signed(spans['HNO3'][0])} to {_signed(spans['HNO3'][1])} for HNO3 and 0 "
            f"for NO2.")
    assert got.startswith(want), f"re-measure docs/methods_dry.md 9.2:\n{got}\n{want}"
    assert _r3(spans["NO2"][0]) == _r3(spans["NO2"][1]) == "0.000"


def test_one_verdict_moves_by_rounding_alone(measured):
    m, means = measured
    met = m.misses(means)
    vd = _module()._vd_table_module()
    names = [f"{g} {vd.GROUP_NAMES[grp]}" for g, grp, _, _ in vd.RANGES]
    moved = [(s, names[i]) for s in m.SCHEMES for i in range(len(names))
             if met[s, "engine"][i] != met[s, "table2"][i]]
    assert moved == [("zhang2003", "SO2 forests")]
    assert "One miss would move, by rounding alone" in _sentence()
    _, zd = m.changes(means)
    assert zd[1] < 0.5 and round(zd[1], 2) == 0.5


def test_the_ratios_named_are_the_ones_replaced():
    """The document's Table 2 values (from memory) are the script's."""
    m = _module()
    flat = re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))
    assert "SO2 2.00, O3 1.51, NO2 1.60, HNO3 2.16, NH3 1.10. Wesely's Table 2" in flat
    assert "lists 1.9, 1.6, 1.6, 1.9, 0.97" in flat
    assert [m.TABLE2[g] for g in ("SO2", "O3", "NO2", "HNO3", "NH3")] == \
        [1.9, 1.6, 1.6, 1.9, 0.97]
    from workbench.drydep.wesely1989_paths import diffusivity_ratio
    assert [f"{diffusivity_ratio(g):.2f}" for g in ("SO2", "O3", "NO2", "HNO3", "NH3")] == \
        ["2.00", "1.51", "1.60", "2.16", "1.10"]
