"""Demo numbers of docs/methods_dry_particles.md section 3 (the forest roughness rule)
and section 6 (the farm deciduous receptor as a woodlot):
the ridge conifer's mean u* and Wesely's annual Vd of HNO3 and SO2 in the demo year
2021 with the short-canopy rule's (z0, d) = (1.72, 9.33) m given as ``[dry] roughness``
against the default forest rule, under both transfers of u*; the farm deciduous stand's
mean u* and annual Vd under the drag law and under the blending height (a woodlot's
per-receptor ``ustar_transfer`` gives the receptor exactly the numbers of the whole-run
transfer it names: tests/drydep/test_drydep_ustar_override.py). Recomputed with
:func:`workbench.drydep.velocities` on the demo (docs/make_vd_table.py's study and year),
so that a change of the engine that moves one fails here until the sentence is
re-measured. The reference is the engine itself (measured numbers; the roughness rule's
own checks are in tests/surface/). Rounding half away from zero at two decimals
(common practice).
"""
from __future__ import annotations

import importlib.util
import re
from decimal import ROUND_HALF_UP, Decimal
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "methods_dry_particles.md"
SHORT_CANOPY = {"conifer_forest": (1.72, 9.33)}


def _study_and_year():
    spec = importlib.util.spec_from_file_location("make_vd_table",
                                                  ROOT / "docs" / "make_vd_table.py")
    m = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(m)
    return m.demo_study(), m.YEAR


def _r(x) -> str:
    return str(Decimal(repr(float(x))).quantize(Decimal("0.01"), rounding=ROUND_HALF_UP))


@pytest.fixture(scope="module")
def means():
    """(transfer, "short" | "forest") -> (u* [m/s], Vd HNO3, Vd SO2 [cm/s]) of the ridge
    conifer, annual means of 2021."""
    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    study, year = _study_and_year()
    surf = study.surfaces()
    out = {}
    for transfer in ("drag_law", "blending_height"):
        for rule, rough in (("short", SHORT_CANOPY), ("forest", {})):
            opt = DryOptions(particles=(), components=False, gases=("SO2", "HNO3"),
                             ustar_transfer=transfer, roughness=rough)
            met = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
            ds = velocities(met.sel(time=slice(*year)), surf, opt).sel(
                site="ridge", receptor="conifer_forest")
            out[transfer, rule] = (float(ds["friction_velocity"].mean("time")),
                                   float(ds["vd_HNO3"].mean("time")) * 100.0,
                                   float(ds["vd_SO2"].mean("time")) * 100.0)
    return out


def test_the_forest_rule_sentence_of_section_3(means):
    flat = re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))
    m = re.search(r"it lowers the mean u\* over the ridge conifer from (.*?) \(`velocities`",
                  flat)
    assert m, "the forest-rule sentence of docs/methods_dry_particles.md 3"
    d0, d1 = means["drag_law", "short"], means["drag_law", "forest"]
    b0, b1 = means["blending_height", "short"], means["blending_height", "forest"]
    want = (f"{_r(d0[0])} to {_r(d1[0])} m/s and Wesely's annual Vd of HNO3 over it from "
            f"{_r(d0[1])} to {_r(d1[1])} cm/s (SO2 {_r(d0[2])} -> {_r(d1[2])}); under the "
            f"blending-height transfer u* {_r(b0[0])} -> {_r(b1[0])} m/s, HNO3 {_r(b0[1])} -> "
            f"{_r(b1[1])}, SO2 {_r(b0[2])} -> {_r(b1[2])}")
    assert m.group(1) == want, f"re-measure docs/methods_dry_particles.md 3:\n{m.group(1)}\n{want}"


def test_the_woodlot_sentence_of_section_6():
    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    study, year = _study_and_year()
    surf = study.surfaces()
    got = {}
    for scheme in ("wesely1989", "zhang2003"):
        for transfer in ("drag_law", "blending_height"):
            opt = DryOptions(particles=(), components=False, gas_scheme=scheme,
                             gases=("SO2", "HNO3", "NO2"), ustar_transfer=transfer)
            met = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
            ds = velocities(met.sel(time=slice(*year)), surf, opt).sel(
                site="farm", receptor="deciduous_forest")
            got[scheme, transfer] = {v: float(ds[v].mean("time")) * (1 if v == "friction_velocity"
                                                                       else 100.0)
                                     for v in ("friction_velocity", "vd_SO2", "vd_HNO3",
                                               "vd_NO2")}

    def pair(scheme, v):
        return f"{_r(got[scheme, 'drag_law'][v])} -> {_r(got[scheme, 'blending_height'][v])}"
    want = (f"mean u* {pair('wesely1989', 'friction_velocity')} m/s, Wesely SO2 "
            f"{pair('wesely1989', 'vd_SO2')} cm/s, HNO3 {pair('wesely1989', 'vd_HNO3')}; Zhang "
            f"SO2 {pair('zhang2003', 'vd_SO2')}, HNO3 {pair('zhang2003', 'vd_HNO3')}, NO2 "
            f"{pair('zhang2003', 'vd_NO2')}")
    flat = re.sub(r"\s+", " ", DOC.read_text(encoding="utf-8"))
    m = re.search(r"the farm deciduous receptor as a woodlot: (.*?)"
                  r"(?: \(Zhang's HNO3 1\.82 until [^)]*\))?\. The demo catalogue", flat)
    assert m, "the woodlot sentence of docs/methods_dry_particles.md 6"
    assert m.group(1) == want, f"re-measure docs/methods_dry_particles.md 6:\n{m.group(1)}\n{want}"
