"""Demo numbers quoted in the prose of docs/methods_dry.md that no table writer produces:
each sentence below is read from the document and its numbers recomputed with
:func:`workbench.drydep.velocities` on the demo year 2021 (every option at its default
but the one the sentence names), so a change of the engine that moves one fails here
until the sentence is re-measured.

Held (annual mean Vd [cm/s], 2 decimals as written):
- section 7, the LAI season rule against the month rule (Wesely);
- section 8, the surface dew rule against the scheme's own (Wesely SO2);
- section 9, Wesely's NH3 with the humidity cuticle against the scheme's paths;
- section 9, the median acid ratio of each site's air samples, and the same with the
  acid ratio of the measured air
  (`nh3_acid_ratio_from_air`): the hourly median AR of each site and the Vd(NH3) it
  gives;
- section 9.5, SO2 with and without the SO2-NH3 co-deposition, both schemes, and the
  median hourly NH3/SO2 ratio of each site behind it.

The reference is the engine itself (these are measured numbers, not checks of a method;
the methods have their own tests in tests/drydep/). Rounding: half away from zero at two
decimals (common practice), as the document's tables.
"""
from __future__ import annotations

import importlib.util
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "methods_dry.md"


def _vd_table_module():
    spec = importlib.util.spec_from_file_location("make_vd_table",
                                                  ROOT / "docs" / "make_vd_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="module")
def study():
    """The demo scenario's Study (docs/make_vd_table.py)."""
    return _vd_table_module().demo_study()


@pytest.fixture(scope="module")
def demo(study):
    """(means, text): means(label, **options) -> gas -> (site, receptor) -> cm/s."""
    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    m = _vd_table_module()
    surf = study.surfaces()
    cache = {}

    def means(**kw):
        key = tuple(sorted(kw.items()))
        if key not in cache:
            opt = DryOptions(particles=(), components=False, gases=("SO2", "NO2", "O3", "NH3"),
                             **kw)
            met = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
            ds = velocities(met.sel(time=slice(*m.YEAR)), surf, opt)
            cache[key] = {g: (ds[f"vd_{g}"].mean("time") * 100.0).compute()
                          for g in ("SO2", "NO2", "O3", "NH3")}
        return cache[key]
    return means, DOC.read_text()


def _r(x) -> str:
    """Two decimals, half away from zero, as written in the document."""
    from decimal import ROUND_HALF_UP, Decimal
    return str(Decimal(repr(float(x))).quantize(Decimal("0.01"), rounding=ROUND_HALF_UP))


def _v(means, gas, site, receptor) -> str:
    return _r(means[gas].sel(site=site, receptor=receptor))


def _span(means, gas, pairs) -> str:
    vals = sorted(float(means[gas].sel(site=s, receptor=r)) for s, r in pairs)
    return f"{_r(vals[0])}-{_r(vals[-1])}"


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


GRASS = [("ridge", "grass"), ("fell", "grass"), ("farm", "grass")]
MOOR = [("ridge", "moorland"), ("fell", "moorland")]
#: every active land receptor of the demo but the wetland (section 9's "over land")
LAND = [("ridge", "conifer_forest"), ("ridge", "moorland"), ("ridge", "grass"),
        ("fell", "moorland"), ("fell", "grass"), ("farm", "grass"), ("farm", "crops"),
        ("farm", "deciduous_forest")]


def test_codeposition_sentence_of_section_9_5(demo):
    means, text = demo
    m = re.search(r"the option raises annual mean Vd\(SO2\), Wesely -> with co-deposition: "
                  r"(.*?)Both schemes converge", _flat(text))
    assert m, "the co-deposition sentence of docs/methods_dry.md 9.5"
    got = m.group(1)
    w0, w1 = means(gas_scheme="wesely1989"), means(gas_scheme="wesely1989",
                                                  so2_codeposition=True)
    z0, z1 = means(gas_scheme="zhang2003"), means(gas_scheme="zhang2003",
                                                 so2_codeposition=True)
    want = (f"ridge conifer {_v(w0, 'SO2', 'ridge', 'conifer_forest')} -> "
            f"{_v(w1, 'SO2', 'ridge', 'conifer_forest')}, farm deciduous "
            f"{_v(w0, 'SO2', 'farm', 'deciduous_forest')} -> "
            f"{_v(w1, 'SO2', 'farm', 'deciduous_forest')}, grasses {_span(w0, 'SO2', GRASS)} -> "
            f"{_span(w1, 'SO2', GRASS)}, moorland {_span(w0, 'SO2', MOOR)} -> "
            f"{_span(w1, 'SO2', MOOR)}, wetland {_v(w0, 'SO2', 'mere', 'wetland')} -> "
            f"{_v(w1, 'SO2', 'mere', 'wetland')}, crops {_v(w0, 'SO2', 'farm', 'crops')} -> "
            f"{_v(w1, 'SO2', 'farm', 'crops')}, water unchanged "
            f"({_v(w1, 'SO2', 'mere', 'water')}); Zhang: conifer "
            f"{_v(z0, 'SO2', 'ridge', 'conifer_forest')} -> "
            f"{_v(z1, 'SO2', 'ridge', 'conifer_forest')}, deciduous "
            f"{_v(z0, 'SO2', 'farm', 'deciduous_forest')} -> "
            f"{_v(z1, 'SO2', 'farm', 'deciduous_forest')}, grasses {_span(z0, 'SO2', GRASS)} -> "
            f"{_span(z1, 'SO2', GRASS)}.")
    assert got.strip() == want, f"re-measure docs/methods_dry.md 9.5:\n{got}\n{want}"
    assert _v(w0, "SO2", "mere", "water") == _v(w1, "SO2", "mere", "water")


def test_season_rule_sentence_of_section_7(demo):
    means, text = demo
    m = re.search(r"against the month rule it moves Wesely's annual Vd by at most ([\d.]+) "
                  r"cm/s \((.*?)\); Zhang et al\. \(2003\) are not moved", _flat(text))
    assert m, "the season-rule sentence of docs/methods_dry.md 7"
    lai, month = means(gas_scheme="wesely1989"), means(gas_scheme="wesely1989",
                                                       season_rule="month")

    def pair(gas, site, rec):
        return f"{_v(month, gas, site, rec)} -> {_v(lai, gas, site, rec)}"
    want = (f"SO2 mere wetland {pair('SO2', 'mere', 'wetland')}, farm deciduous "
            f"{pair('SO2', 'farm', 'deciduous_forest')}, farm crops "
            f"{pair('SO2', 'farm', 'crops')}; NO2 farm crops {pair('NO2', 'farm', 'crops')}, "
            f"mere wetland {pair('NO2', 'mere', 'wetland')}; O3 farm crops "
            f"{pair('O3', 'farm', 'crops')}")
    assert m.group(2) == want, f"re-measure docs/methods_dry.md 7:\n{m.group(2)}\n{want}"
    largest = max(float(abs(lai[g] - month[g]).max()) for g in lai)
    assert _r(largest) == m.group(1)
    zl, zm = means(gas_scheme="zhang2003"), means(gas_scheme="zhang2003", season_rule="month")
    assert max(float(abs(zl[g] - zm[g]).max()) for g in zl) < 0.005


def test_dew_rule_sentence_of_section_8(demo):
    means, text = demo
    m = re.search(r"and SO2 ridge conifer ([\d.]+ -> [\d.]+), farm deciduous ([\d.]+ -> "
                  r"[\d.]+), grass ([\d.-]+ -> [\d.-]+) cm/s", _flat(text))
    assert m, "the dew-rule sentence of docs/methods_dry.md 8"
    air, surface = means(gas_scheme="wesely1989", dew_rule="scheme"), \
        means(gas_scheme="wesely1989")
    want = (f"{_v(air, 'SO2', 'ridge', 'conifer_forest')} -> "
            f"{_v(surface, 'SO2', 'ridge', 'conifer_forest')}",
            f"{_v(air, 'SO2', 'farm', 'deciduous_forest')} -> "
            f"{_v(surface, 'SO2', 'farm', 'deciduous_forest')}",
            f"{_span(air, 'SO2', GRASS)} -> {_span(surface, 'SO2', GRASS)}")
    assert m.groups() == want


def test_nh3_cuticle_sentence_of_section_9(demo):
    means, text = demo
    flat = _flat(text)
    m = re.search(r"Wesely's Vd\(NH3\) rises from ([\d.-]+) to ([\d.-]+) cm/s over land "
                  r"\(wetland ([\d.]+) -> ([\d.]+);", flat)
    assert m, "the NH3 cuticle sentence of docs/methods_dry.md 9"
    scheme, humid = means(gas_scheme="wesely1989", nh3_cuticle="scheme"), \
        means(gas_scheme="wesely1989")
    assert m.groups() == (_span(scheme, "NH3", LAND), _span(humid, "NH3", LAND),
                          _v(scheme, "NH3", "mere", "wetland"),
                          _v(humid, "NH3", "mere", "wetland"))
    m = re.search(r"over the land receptors is ([\d.-]+) cm/s at AR = 0\.1, ([\d.-]+) at "
                  r"0\.3, ([\d.-]+) at 1 and ([\d.-]+) at 3\.", flat)
    assert m, "the acid-ratio sentence of docs/methods_dry.md 9"
    land = LAND + [("mere", "wetland")]
    assert m.groups() == tuple(
        _span(means(gas_scheme="wesely1989", nh3_acid_ratio=ar), "NH3", land)
        for ar in (0.1, 0.3, 1.0, 3.0))


UPLAND = [("ridge", "conifer_forest"), ("ridge", "moorland"), ("ridge", "grass"),
          ("fell", "moorland"), ("fell", "grass")]
FARM = [("farm", "grass"), ("farm", "crops"), ("farm", "deciduous_forest")]


def test_acid_ratio_from_air_sentence_of_section_9(demo, study):
    from workbench.drydep import DryOptions
    from workbench.stages import met_with_air
    means, text = demo
    m = re.search(r"On the demo \(2021, defaults; hourly median AR ([\d.]+) ridge, ([\d.]+) "
                  r"fell, ([\d.]+) mere, ([\d.]+) farm\) Wesely's Vd\(NH3\) is then ([\d.-]+) "
                  r"cm/s over the upland receptors, ([\d.]+) over the mere wetland and "
                  r"([\d.-]+) at the farm", _flat(text))
    assert m, "the nh3_acid_ratio_from_air sentence of docs/methods_dry.md 9"
    opt = DryOptions(particles=(), components=False, gas_scheme="wesely1989",
                     gases=("SO2", "NO2", "O3", "NH3"), nh3_acid_ratio_from_air=True)
    met = met_with_air(study.inputs.met, study.inputs.air, study.surfaces(), opt)
    ar = met["nh3_acid_ratio"].sel(time=slice(*_vd_table_module().YEAR)).median("time")
    air = means(gas_scheme="wesely1989", nh3_acid_ratio_from_air=True)
    want = tuple(_r(ar.sel(site=s)) for s in ("ridge", "fell", "mere", "farm")) + (
        _span(air, "NH3", UPLAND), _v(air, "NH3", "mere", "wetland"), _span(air, "NH3", FARM))
    assert m.groups() == want, f"re-measure docs/methods_dry.md 9:\n{m.groups()}\n{want}"


def test_hourly_ratio_of_section_9_5(study):
    """The median hourly NH3/SO2 ratio of each site in 2021 and "a ratio in every hour"
    (codeposition.hourly_ratio through the stage's met)."""
    from workbench.drydep import DryOptions
    from workbench.stages import met_with_air
    text = DOC.read_text()
    m = re.search(r"On the demo \(2021, defaults; median hourly NH3/SO2 ratio ([\d.]+) ridge, "
                  r"([\d.]+) fell, ([\d.]+) mere, ([\d.]+) farm; a ratio in every hour;",
                  _flat(text))
    assert m, "the hourly-ratio sentence of docs/methods_dry.md 9.5"
    opt = DryOptions(particles=(), components=False, gases=("SO2",), so2_codeposition=True)
    met = met_with_air(study.inputs.met, study.inputs.air, study.surfaces(), opt)
    ratio = met["nh3_so2_ratio"].sel(time=slice(*_vd_table_module().YEAR))
    assert int(ratio.isnull().sum()) == 0
    med = ratio.median("time")
    want = tuple(f"{float(med.sel(site=s)):.2g}" for s in ("ridge", "fell", "mere", "farm"))
    assert m.groups() == want, f"re-measure docs/methods_dry.md 9.5:\n{m.groups()}\n{want}"


def test_acid_ratio_of_the_samples_of_section_9(study):
    """The median molar (2 SO2 + HNO3)/NH3 of each site's air samples over the record."""
    import numpy as np
    air = study.inputs.air
    m = re.search(r"The demo's own air has a median \(2 SO2 \+ HNO3\)/NH3 of ([\d.]+) at ridge, "
                  r"([\d.]+) at fell and ([\d.]+) at mere \(molar, of its air samples over the "
                  r"whole record; no farm sample holds all three\)", _flat(DOC.read_text()))
    assert m, "the acid ratio of the demo's air in docs/methods_dry.md 9"
    site = air["site"].values
    ar = (2.0 * air["SO2"].values + air["HNO3"].values) / air["NH3"].values
    assert air["SO2"].attrs["units"] == "mol m-3"          # molar amounts
    want = tuple(_r(np.nanmedian(ar[site == s])) for s in ("ridge", "fell", "mere"))
    assert m.groups() == want
    assert np.isnan(ar[site == "farm"]).all()


def test_receptor_surface_fix_sentence_of_section_7(demo):
    """"(measured before the LAI-share fix below, after which the stand reads SO2 0.42,
    NO2 0.16, O3 0.25)": Wesely's annual Vd over the farm's deciduous stand in 2021 now
    (the numbers before the two fixes are history: the code that gave them is gone)."""
    means, text = demo
    m = re.search(r"after which the stand reads SO2 ([\d.]+), NO2 ([\d.]+), O3 ([\d.]+)[;)]",
                  _flat(text))
    assert m, "the receptor-surface fix's sentence of docs/methods_dry.md 7"
    w = means(gas_scheme="wesely1989")
    got = tuple(_v(w, g, "farm", "deciduous_forest") for g in ("SO2", "NO2", "O3"))
    assert m.groups() == got, f"re-measure docs/methods_dry.md 7: {got}"


def test_lai_of_the_deciduous_stand_of_section_9_2(study):
    """"on the demo farm stand (2021, defaults, Zhang) SO2 0.49 and HNO3 1.83 cm/s with
    0.5-5, 0.47 and 1.76 with a 0.1-5 cosine, 0.42 and 1.56 with a leafless November-April
    (LAI 0.1), 5 from June to September and 2.55 in May and October": Zhang's annual Vd
    over the farm's deciduous stand with the class range, and with the stand's monthly
    LAI given as the catalogue's ``lai`` would (the cosine of landuse.seasonal_lai)."""
    import numpy as np

    from workbench.drydep import DryOptions, velocities
    from workbench.landuse import DEFAULT_LAI, seasonal_lai
    from workbench.stages import met_with_air
    m = re.search(r"on the demo farm stand \(2021, defaults, Zhang\) SO2 ([\d.]+) and HNO3 "
                  r"([\d.]+) cm/s with 0\.5-5, ([\d.]+) and ([\d.]+) with a 0\.1-5 cosine, "
                  r"([\d.]+) and ([\d.]+) with a leafless November-April \(LAI 0\.1\), 5 from "
                  r"June to September and 2\.55 in May and October", _flat(DOC.read_text()))
    assert m, "the LAI sentence of docs/methods_dry.md 9.2"
    assert DEFAULT_LAI["deciduous_forest"] == (0.5, 5.0)
    opt = DryOptions(gas_scheme="zhang2003", particles=(), components=False,
                     gases=("SO2", "HNO3"))
    surf = study.surfaces().sel(site=["farm"])
    met = met_with_air(study.inputs.met, study.inputs.air, study.surfaces(), opt)
    met = met.sel(time=slice(*_vd_table_module().YEAR), site=["farm"])
    lat = float(surf["latitude"].sel(site="farm"))
    month = np.arange(1, 13)
    leafless = np.select([(month >= 11) | (month <= 4), (month >= 6) & (month <= 9)],
                         [0.1, 5.0], 2.55)
    r = list(surf["receptor"].values).index("deciduous_forest")
    got = []
    for lai in (None, seasonal_lai(0.1, 5.0, month, lat), leafless):
        s = surf
        if lai is not None:
            given = surf["lai"].transpose("site", "receptor", "month").values.copy()
            assert np.isnan(given[0, r]).all()          # the demo gives the stand none
            given[0, r] = lai
            s = surf.assign(lai=(("site", "receptor", "month"), given))
        ds = velocities(met, s, opt)
        got += [_r(ds[f"vd_{g}"].sel(site="farm", receptor="deciduous_forest").mean("time")
                   * 100.0) for g in ("SO2", "HNO3")]
    assert m.groups() == tuple(got), f"re-measure docs/methods_dry.md 9.2: {got}"


def test_lai_share_fix_sentence_of_section_7(demo, study):
    """"the farm deciduous stand's March and November became 3 (Wesely's SO2 0.426 ->
    0.424 cm/s), and over grass the particle scheme's collector ... (5 mm; pNO3 ridge
    grass 0.295 -> 0.290, farm grass 0.242 -> 0.236, farm deciduous 0.297 -> 0.286
    cm/s)": the values after the fix, now (three decimals; the values before it are
    history, the code that gave them is gone)."""
    from decimal import ROUND_HALF_UP, Decimal

    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    means, text = demo
    m = re.search(r"\(Wesely's SO2 [\d.]+ -> ([\d.]+) cm/s\), and over grass the particle "
                  r"scheme's collector of March and November is category 3's \(5 mm; pNO3 "
                  r"ridge grass [\d.]+ -> ([\d.]+), farm grass [\d.]+ -> ([\d.]+), farm "
                  r"deciduous [\d.]+ -> ([\d.]+) cm/s\)", _flat(text))
    assert m, "the LAI-share fix's sentence of docs/methods_dry.md 7"

    def r3(x) -> str:
        return str(Decimal(repr(float(x))).quantize(Decimal("0.001"), rounding=ROUND_HALF_UP))
    surf = study.surfaces()
    opt = DryOptions(components=False, gases=("SO2",))
    assert "pNO3" in opt.particles
    met = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
    ds = velocities(met.sel(time=slice(*_vd_table_module().YEAR)), surf, opt)
    p = ds["vd_pNO3"].mean("time") * 100.0
    got = (r3(means(gas_scheme="wesely1989")["SO2"].sel(site="farm", receptor="deciduous_forest")),
           r3(p.sel(site="ridge", receptor="grass")), r3(p.sel(site="farm", receptor="grass")),
           r3(p.sel(site="farm", receptor="deciduous_forest")))
    assert m.groups() == got, f"re-measure docs/methods_dry.md 7: {got}"


@pytest.fixture(scope="module")
def forests(study):
    """(scheme, transfer) -> the hourly velocities with their resistances
    (``components=True``) of 2021 at the ridge and the farm (SO2 and HNO3)."""
    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    surf = study.surfaces().sel(site=["ridge", "farm"])
    year = _vd_table_module().YEAR
    out = {}
    for scheme, transfer in (("wesely1989", "drag_law"), ("zhang2003", "drag_law"),
                             ("zhang2003", "blending_height")):
        opt = DryOptions(gas_scheme=scheme, particles=(), gases=("SO2", "HNO3"),
                         ustar_transfer=transfer)
        met = met_with_air(study.inputs.met, study.inputs.air, study.surfaces(), opt)
        out[scheme, transfer] = velocities(met.sel(time=slice(*year), site=["ridge", "farm"]),
                                           surf, opt)
    return out


def _months(ds):
    """The calendar month of each hour's middle (as the engine takes it)."""
    from workbench.constants import HALF_HOUR
    return (ds["time"].values - HALF_HOUR).astype("datetime64[M]").astype(int) % 12 + 1


def test_wesely_so2_over_forests_bullet_of_section_9_2(forests):
    """"Wesely SO2 over forests": the dry and wet hours of the ridge conifer and the
    farm deciduous stand (2021, drag law): R_c(SO2) medians [s/m], mean Vd [cm/s],
    shares of the hours [%]."""
    import numpy as np
    m = re.search(r"on the ridge conifer the dry-hour R_c\(SO2\) has a median of (\d+) s/m "
                  r"\(.*?in categories 2-3, which hold (\d+) % of the hours, .*?\) and a "
                  r"dry-hour mean Vd of ([\d.]+) cm/s, the wet hours \((\d+) %, rain (\d+) "
                  r"%\) a median R_c of (\d+) s/m and a mean Vd of ([\d.]+) cm/s\. The farm "
                  r"deciduous stand: dry median (\d+) s/m, wet (\d+) % of hours; its "
                  r"categories 2 and 3 \((\d+) % of the year, no upper-canopy stomata in "
                  r"Wesely's table\) give ([\d.]+) and ([\d.]+) cm/s", _flat(DOC.read_text()))
    assert m, "the bullet 'Wesely SO2 over forests' of docs/methods_dry.md 9.2"
    ds = forests["wesely1989", "drag_law"]
    got = []
    for site, rec in (("ridge", "conifer_forest"), ("farm", "deciduous_forest")):
        d = ds.sel(site=site, receptor=rec)
        kind = d["wet_kind"].values                    # 0 dry, 1 dew, 2 rain
        dry, wet = kind == 0, kind > 0
        rc, vd = d["rc_SO2"].values, d["vd_SO2"].values * 100.0
        cat = d["seasonal_category"].values
        cat23 = f"{100 * np.isin(cat, (2, 3)).mean():.0f}"
        if site == "ridge":
            got += [f"{np.nanmedian(rc[dry]):.0f}", cat23, _r(np.nanmean(vd[dry])),
                    f"{100 * wet.mean():.0f}", f"{100 * (kind == 2).mean():.0f}",
                    f"{np.nanmedian(rc[wet]):.0f}", _r(np.nanmean(vd[wet]))]
        else:
            got += [f"{np.nanmedian(rc[dry]):.0f}", f"{100 * wet.mean():.0f}", cat23,
                    _r(np.nanmean(vd[cat == 2])), _r(np.nanmean(vd[cat == 3]))]
    assert m.groups() == tuple(got), f"re-measure docs/methods_dry.md 9.2: {got}"


def test_zhang_over_the_deciduous_stand_bullet_of_section_9_2(forests):
    """"Zhang SO2 and HNO3 over the farm deciduous stand": its annual and seasonal Vd
    [cm/s], mean u* [m/s], R_c medians and mean Ra + Rb [s/m] (2021)."""
    import numpy as np
    text = _flat(DOC.read_text())
    m = re.search(r"\*\*Zhang SO2 and HNO3 over the farm deciduous stand\*\* \(SO2 ([\d.]+), "
                  r"HNO3 ([\d.]+); ([\d.]+) and ([\d.]+) under the blending height\)", text)
    s = re.search(r"May-September SO2 ([\d.]+) and HNO3 ([\d.]+) cm/s, November-March "
                  r"([\d.]+) and ([\d.]+)\. The miss comes from the u\* the drag law gives a "
                  r"landscape-scale forest \(([\d.]+) m/s mean, ([\d.]+) in May-September\): "
                  r".*?\(SO2 R_c median (\d+) s/m; (\d+) under the blending height\), and for "
                  r"HNO3 the mean Ra \+ Rb is (\d+) s/m with an R_c median of (\d+) s/m", text)
    assert m and s, "the bullet 'Zhang SO2 and HNO3 over the farm deciduous stand'"
    d = forests["zhang2003", "drag_law"].sel(site="farm", receptor="deciduous_forest")
    b = forests["zhang2003", "blending_height"].sel(site="farm", receptor="deciduous_forest")
    mon = _months(d)
    summer, winter = np.isin(mon, (5, 6, 7, 8, 9)), np.isin(mon, (11, 12, 1, 2, 3))

    def vd(x, g, sel=slice(None)):
        return _r(np.nanmean(x[f"vd_{g}"].values[sel]) * 100.0)
    assert m.groups() == (vd(d, "SO2"), vd(d, "HNO3"), vd(b, "SO2"), vd(b, "HNO3"))
    u = d["friction_velocity"].values
    got = (vd(d, "SO2", summer), vd(d, "HNO3", summer), vd(d, "SO2", winter),
           vd(d, "HNO3", winter), _r(np.nanmean(u)), _r(np.nanmean(u[summer])),
           f"{np.nanmedian(d['rc_SO2'].values):.0f}", f"{np.nanmedian(b['rc_SO2'].values):.0f}",
           f"{np.nanmean(d['ra'].values + d['rb_HNO3'].values):.0f}",
           f"{np.nanmedian(d['rc_HNO3'].values):.0f}")
    assert s.groups() == got, f"re-measure docs/methods_dry.md 9.2: {got}"


def test_so2_cuticle_sentences_of_sections_9_2_and_9_6(study):
    """Section 9.6: "On the demo (2021) the dry hours are 43-71 % of the year at the
    receptors below, with a median air RH of 81-87 % in them; the dry-hour median
    R_c(SO2) falls from 723 to 40 s/m over the ridge conifer and from 1018 to 69 s/m over
    the farm deciduous stand, and from 312-357 to 21-70 s/m over the grasses" (Wesely,
    the scheme's cuticle against ``so2_cuticle = "erisman1994"``; the receptors of the
    table but water, where the option does not act); section 9.2: the humid uplands'
    grass, "median RH 88-91 %" (ridge and fell, every hour of 2021)."""
    import numpy as np

    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    text = _flat(DOC.read_text())
    m = re.search(r"On the demo \(2021\) the dry hours are (\d+)-(\d+) % of the year at the "
                  r"receptors below, with a median air RH of (\d+)-(\d+) % in them; the "
                  r"dry-hour median R_c\(SO2\) falls from (\d+) to (\d+) s/m over the ridge "
                  r"conifer and from (\d+) to (\d+) s/m over the farm deciduous stand, and "
                  r"from (\d+)-(\d+) to (\d+)-(\d+) s/m over the grasses", text)
    u = re.search(r"takes the grass of the demo's humid uplands above 0\.8 \(ridge [\d.]+, "
                  r"fell [\d.]+; median RH (\d+)-(\d+) %\)", text)
    assert m and u, "the SO2-cuticle sentences of docs/methods_dry.md 9.2 and 9.6"
    surf = study.surfaces()
    runs = {}
    for c in ("scheme", "erisman1994"):
        opt = DryOptions(gas_scheme="wesely1989", particles=(), gases=("SO2",),
                         so2_cuticle=c)
        met = met_with_air(study.inputs.met, study.inputs.air, surf, opt).sel(
            time=slice(*_vd_table_module().YEAR))
        runs[c] = velocities(met, surf, opt)
    ds0, ds1 = runs["scheme"], runs["erisman1994"]
    dry_share, rh_dry, rc = [], [], {}
    for s in ds0["site"].values:
        for r in ds0["receptor"].values:
            if not bool(ds0["active"].sel(site=s, receptor=r)) or r == "water":
                continue
            dry = ds0["wet_kind"].sel(site=s, receptor=r).values == 0
            rh = met["relative_humidity"].sel(site=s).values
            dry_share.append(dry.mean())
            rh_dry.append(np.nanmedian(rh[dry]))
            rc[s, r] = tuple(np.nanmedian(d["rc_SO2"].sel(site=s, receptor=r).values[dry])
                             for d in (ds0, ds1))
    grass = [rc[s, "grass"] for s in ("ridge", "fell", "farm")]

    def w(x):
        return f"{x:.0f}"
    got = (w(100 * min(dry_share)), w(100 * max(dry_share)), w(100 * min(rh_dry)),
           w(100 * max(rh_dry)), *map(w, rc["ridge", "conifer_forest"]),
           *map(w, rc["farm", "deciduous_forest"]), w(min(g[0] for g in grass)),
           w(max(g[0] for g in grass)), w(min(g[1] for g in grass)),
           w(max(g[1] for g in grass)))
    assert m.groups() == got, f"re-measure docs/methods_dry.md 9.6: {got}"
    up = [np.nanmedian(met["relative_humidity"].sel(site=s).values) for s in ("ridge", "fell")]
    assert u.groups() == (w(100 * min(up)), w(100 * max(up))), up


#: the receptors as the table of the demo hours names them
_HOUR_RECEPTORS = {"conifer": "conifer_forest", "deciduous": "deciduous_forest",
                   "grass": "grass"}


def _as_written(x: float, written: str) -> str:
    """`x` with as many decimals as `written` has, half away from zero."""
    from decimal import ROUND_HALF_UP, Decimal
    q = Decimal(1).scaleb(-len(written.split(".")[1])) if "." in written else Decimal(1)
    return str(Decimal(repr(float(x))).quantize(q, rounding=ROUND_HALF_UP))


def test_one_demo_hour_per_miss_of_section_9_2(study):
    """"One demo hour per miss, derived again": each hour's state (temperature, global
    radiation, u*) and the engine's Ra, Rb, Rc and Vd of the gas as the table writes
    them (the hand derivation is the review's; the table's numbers are the code's, so
    they are held here); the particle row's u*, Ra and Vd of pNO3. Hours labelled by
    their end (UTC), as the engine's time axis."""
    import numpy as np

    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    text = DOC.read_text(encoding="utf-8")
    a = text.index("| miss | hour (UTC), state |")
    rows, miss = [], None
    for line in text[a:].splitlines()[2:]:
        if not line.startswith("|"):
            break
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        miss = cells[0] or miss
        rows.append((miss, *cells[1:]))
    assert len(rows) == 6, rows
    surf = study.surfaces()
    met_cache, checked = {}, 0
    for miss, state, res, vd_cell in rows:
        h = re.match(r"(\w+) (\w+) (\d{4}-\d\d-\d\d \d\d:\d\d), ([-\d.]+) degC", state)
        assert h, state
        site, rec = h.group(1), _HOUR_RECEPTORS[h.group(2)]
        t = np.datetime64(h.group(3).replace(" ", "T"))
        particle = miss.startswith("pNO3")
        scheme = "zhang2003" if miss.startswith("Zhang") else "wesely1989"
        gas = "pNO3" if particle else miss.split()[1].rstrip(",")
        opt = DryOptions(gas_scheme=scheme, particles=("pNO3",), gases=("SO2", "HNO3", "NO2"))
        if scheme not in met_cache:
            met_cache[scheme] = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
        # a day before the hour too: the wetness reads the previous hour's rain
        met = met_cache[scheme].sel(time=slice(t - np.timedelta64(24, "h"), t))
        ds = velocities(met, surf, opt).sel(site=site, receptor=rec).sel(time=t)
        m0 = met.sel(site=site).sel(time=t)
        got = {"T": float(m0["temperature"]) - 273.15, "u*": float(ds["friction_velocity"]),
               "Ra": float(ds["ra"]), "Vd": float(ds[f"vd_{gas}"]) * 100.0}
        want = {"T": h.group(4), "u*": re.search(r"u\* ([\d.]+)", state).group(1),
                "Vd": re.match(r"([\d.]+)", vd_cell).group(1)}
        g = re.search(r", G (\d+)", state)
        if g:
            got["G"], want["G"] = float(m0["solar_radiation"]), g.group(1)
        if particle:
            want["Ra"] = re.search(r"Ra ([\d.]+)", state).group(1)
            got["code"] = got["Vd"]
            want["code"] = re.search(r"\(code ([\d.]+)\)", res).group(1)
        else:
            r = re.match(r"Ra ([\d.]+), Rb ([\d.]+);", res)
            want["Ra"], want["Rb"] = r.groups()
            want["Rc"] = re.search(r"Rc ([\d.]+)", res).group(1)
            got["Rb"], got["Rc"] = float(ds[f"rb_{gas}"]), float(ds[f"rc_{gas}"])
            other = re.search(r"\(HNO3: ([\d.]+), Vd ([\d.]+)\)", res)
            if other:
                want["Rc HNO3"], want["Vd HNO3"] = other.groups()
                got["Rc HNO3"] = float(ds["rc_HNO3"])
                got["Vd HNO3"] = float(ds["vd_HNO3"]) * 100.0
        for k, w in want.items():
            assert _as_written(got[k], w) == w, (miss, state[:40], k, got[k], w)
            checked += 1
    assert checked >= 39


def test_zhang_no2_over_land_bullet_of_section_9_2(demo, study):
    """"Zhang NO2 over land": Zhang's O3 and NO2 and Wesely's NO2 over land (annual
    means of 2021), NO2 with the stomata shut (the scheme's own cuticle and ground paths
    alone, 1/R_c = 1/R_cut + 1/(R_ac + R_g), hour by hour) and the medians of the ground
    path R_ac + R_g [s/m, to the ten] over every land receptor but the deciduous stand."""
    import numpy as np

    from workbench.drydep import DryOptions, velocities
    from workbench.stages import met_with_air
    means, text = demo
    m = re.search(r"Zhang's O3 is ([\d.]+)-([\d.]+) cm/s over land, so NO2 follows at "
                  r"([\d.]+)-([\d.]+)\. .*?with the stomata shut altogether \(R_m infinite\) "
                  r"NO2 is still ([\d.]+)-([\d.]+) cm/s over the land receptors \(([\d.]+) over "
                  r"the deciduous stand\), measured from the scheme's own cuticle and ground "
                  r"paths; the ground path alone \(R_ac \+ R_g, R_g = 250 s/m for NO2\) has "
                  r"medians of (\d+)-(\d+) s/m over short vegetation and the conifer\. .*?"
                  r"\(Wesely's, ([\d.]+)-([\d.]+) here\)", _flat(text))
    assert m, "the bullet 'Zhang NO2 over land' of docs/methods_dry.md 9.2"
    z, w = means(gas_scheme="zhang2003"), means(gas_scheme="wesely1989")
    surf = study.surfaces()
    opt = DryOptions(gas_scheme="zhang2003", particles=(), gases=("NO2",))
    met = met_with_air(study.inputs.met, study.inputs.air, surf, opt)
    ds = velocities(met.sel(time=slice(*_vd_table_module().YEAR)), surf, opt)
    land = [(s, r) for s in ds["site"].values for r in ds["receptor"].values
            if bool(ds["active"].sel(site=s, receptor=r)) and r != "water"]
    shut, ground = {}, {}
    for s, r in land:
        d = ds.sel(site=s, receptor=r)
        path = d["rc_NO2_ground"].values + d["rc_canopy_transfer"].values
        rns = 1.0 / (1.0 / d["rc_NO2_cuticle"].values + 1.0 / path)
        shut[s, r] = np.nanmean(1.0 / (d["ra"].values + d["rb_NO2"].values + rns)) * 100.0
        ground[s, r] = np.nanmedian(path)
    stand = ("farm", "deciduous_forest")
    others = [k for k in land if k != stand]
    got = (_span(z, "O3", land).split("-") + _span(z, "NO2", land).split("-")
           + [_r(min(shut[k] for k in others)), _r(max(shut[k] for k in others)),
              _r(shut[stand]), f"{round(min(ground[k] for k in others), -1):.0f}",
              f"{round(max(ground[k] for k in others), -1):.0f}"]
           + _span(w, "NO2", land).split("-"))
    assert m.groups() == tuple(got), f"re-measure docs/methods_dry.md 9.2: {got}"


@pytest.fixture(scope="module")
def full_years(study):
    """scheme -> annual means (:func:`workbench.comparison.annual_vd_by_year`, every full
    year of the demo record, default options) of SO2, HNO3, NO2 and pNO3 [cm/s] and of
    u* (``vd_ustar`` [cm/s], so m/s times 100)."""
    from workbench.comparison import annual_vd_by_year
    from workbench.drydep import DryOptions, velocities
    surf = study.surfaces()
    out = {}
    for scheme in ("wesely1989", "zhang2003"):
        ds = velocities(study.inputs.met, surf, DryOptions(
            gas_scheme=scheme, particles=("pNO3",), gases=("SO2", "HNO3", "NO2"),
            components=False))
        ds = ds.assign(vd_ustar=ds["friction_velocity"])
        out[scheme] = annual_vd_by_year(ds, ("SO2", "HNO3", "NO2", "pNO3", "ustar"))
    return out


def test_the_misses_over_the_full_years_of_section_9_2(full_years):
    """"Why the misses stay" and the pNO3 bullet: the misses' spans over the years
    2016-2022, the years a miss is met or not, the u* of those years."""
    import numpy as np
    text = _flat(DOC.read_text())
    m = re.search(r"miss in every year \(the farm deciduous stand ([\d.]+)-([\d.]+) and "
                  r"([\d.]+)-([\d.]+) cm/s, Zhang's NO2 ([\d.]+)-([\d.]+)\), while Zhang's SO2 "
                  r"over the deciduous stand \(([\d.]+)-([\d.]+)\) misses only in the calmer "
                  r"(\d{4})-(\d{4}) \(the stand's mean u\* ([\d.]+)-([\d.]+) m/s, ([\d.]+)-"
                  r"([\d.]+) in the other years\) and Wesely's ridge conifer \(([\d.]+)-([\d.]+)\) "
                  r"reaches 0\.5 in (\d{4}), (\d{4}) and (\d{4})\.", text)
    p = re.search(r"The ridge grass's mean u\* is ([\d.]+) and ([\d.]+) m/s in (\d{4}) and "
                  r"(\d{4}) \(([\d.]+)-([\d.]+) in the other years\), where pNO3 reaches "
                  r"([\d.]+) and ([\d.]+) cm/s", text)
    h = re.search(r"Zhang's HNO3 there comes within 0\.02 of 2 only in the windiest year, "
                  r"(\d{4})", text)
    assert m and p and h, "the sentences on the full years of docs/methods_dry.md 9.2"
    w, z = full_years["wesely1989"], full_years["zhang2003"]
    years = [int(y) for y in w["year"].values]
    assert years == list(range(2016, 2023))

    def series(ym, name, site, rec, scale=1.0):
        return ym[f"vd_{name}"].sel(site=site, receptor=rec).values * scale

    def span(x, d=2):
        return [f"{np.min(x):.{d}f}", f"{np.max(x):.{d}f}"]
    stand = ("farm", "deciduous_forest")
    land = [(s, r) for s in z["site"].values for r in z["receptor"].values
            if r != "water" and np.isfinite(z["vd_NO2"].sel(site=s, receptor=r).values).all()]
    no2 = np.stack([series(z, "NO2", s, r) for s, r in land])
    zso2 = series(z, "SO2", *stand)
    calm = [y for y, v in zip(years, zso2) if round(v, 2) < 0.5]
    u = series(z, "ustar", *stand, 0.01)
    in_calm = np.isin(years, calm)
    conifer = series(w, "SO2", "ridge", "conifer_forest")
    got = (span(series(w, "SO2", *stand)) + span(series(z, "HNO3", *stand)) + span(no2)
           + span(zso2) + [str(calm[0]), str(calm[-1])] + span(u[in_calm]) + span(u[~in_calm])
           + span(conifer) + [str(y) for y, v in zip(years, conifer) if round(v, 2) >= 0.5])
    assert calm == list(range(calm[0], calm[-1] + 1))
    assert m.groups() == tuple(got), f"re-measure docs/methods_dry.md 9.2: {got}"
    zh = series(z, "HNO3", *stand)
    assert (h.group(1),) == tuple(str(y) for y, v in zip(years, zh) if round(v, 2) >= 1.98)
    ug = series(w, "ustar", "ridge", "grass", 0.01)
    pn = series(w, "pNO3", "ridge", "grass")
    windy = [int(p.group(3)), int(p.group(4))]
    sel = np.isin(years, windy)
    assert sorted(np.argsort(ug)[-2:]) == sorted(years.index(y) for y in windy)
    assert p.groups() == (f"{ug[years.index(windy[0])]:.3f}", f"{ug[years.index(windy[1])]:.3f}",
                          *map(str, windy), *span(ug[~sel], 3),
                          f"{pn[years.index(windy[0])]:.3f}", f"{pn[years.index(windy[1])]:.3f}")
