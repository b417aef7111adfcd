"""The dry-N bracket when the members of a gas/particle pair come from different samplers
or periods (workbench/drycomponents.py, workbench/budgetstatus.py).

Deposition is linear in the concentration, so the all-gas figure of a pair is
F(gas at Vd_gas) + F(particle at Vd_gas), each member over its own sampling periods.
Checked here by hand-worked arithmetic (D = C Vd t; molar masses from periodictable, a
general-purpose reference library, beside the values recalled from memory), against the
former sample-by-sample sum where the members share samples, and on the invented demo
network.  Invented concentrations and velocities.
"""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import periodictable
import pytest
import xarray as xr
from scipy.constants import R

from tiny_inputs import SITES
from workbench.budget import BudgetOptions, assemble, derived
from pair_reference import sample_by_sample_move
from workbench.drycomponents import dry_components, dry_rows, prepare_velocities
from workbench.dryflux import period_deposition, to_periods
from workbench.io import read_air, read_sites
from workbench.periods import make_periods
from workbench.units import element_deposition_in

MONTH_S = 31 * 86400.0                      # January [s]
#: Molar masses [g mol-1] from periodictable (IUPAC standard atomic weights); from
#: memory NH3 = 17.031 and NH4+ = 18.038.
M_NH3 = periodictable.N.mass + 3 * periodictable.H.mass
M_NH4 = periodictable.N.mass + 4 * periodictable.H.mass
N_KG = periodictable.N.mass * 1e-3          # [kg mol-1]


def _files(tmp_path, air_text):
    (tmp_path / "sites.toml").write_text(SITES)
    (tmp_path / "air.csv").write_text(air_text)
    cat = read_sites(tmp_path / "sites.toml")
    air, _ = read_air(tmp_path / "air.csv", cat)
    return cat, air


def _weeks(site, sampler, value, first=0, skip=()):
    """Weekly rows over January 2021 (4 weeks and a 3-day rest): pNH4 `value`, HNO3 0.4
    and pNO3 0.9 ug/m3; times in
    UTC (alpha's clock is UTC+1)."""
    edges = list(pd.date_range("2021-01-01", periods=5, freq="7D")) + [pd.Timestamp("2021-02-01")]
    return [f"{site},{a:%Y-%m-%dT%H:%M}+00:00,{b:%Y-%m-%dT%H:%M}+00:00,{sampler},,{value},0.4,0.9"
            for k, (a, b) in enumerate(zip(edges[:-1], edges[1:])) if k >= first and k not in skip]


#: alpha: NH3 on a monthly passive sampler, pNH4 on weekly filters (never one row);
#: beta: both on the same weekly filter rows.
HEADER = ("# reference_state: ambient\n"
          "site,start,end,sampler_id,NH3 [ug/m3],pNH4 [ug/m3],HNO3 [ug/m3],pNO3 [ug/m3]\n")


def _air_text(alpha_skip=(), beta_nh3="8.0"):
    rows = ["alpha,2021-01-01T00:00+00:00,2021-02-01T00:00+00:00,pas1,10.0,,,"]
    rows += _weeks("alpha", "fp1", "1.8", skip=alpha_skip)
    rows += [r.replace(",,", f",{beta_nh3},") for r in _weeks("beta", "fp2", "1.5")]
    return HEADER + "\n".join(rows) + "\n"


def _vel(sites, vd_cm, extra=None):
    """Fixed Vd [cm s-1] per species on the hours of January 2021 (+ a margin)."""
    t = pd.date_range("2020-12-31T01:00", "2021-02-02T00:00", freq="h").values
    template = xr.DataArray(np.zeros((len(sites), 1, len(t))), dims=("site", "receptor", "time"),
                            coords={"site": list(sites), "receptor": ["grass"], "time": t})
    vel = prepare_velocities(None, list(vd_cm), vd_cm, template=template)
    for name, value in (extra or {}).items():        # e.g. the NH3 exchange entries
        vel[name] = (xr.full_like(template, value), xr.zeros_like(template, dtype=bool), "x")
    return vel


JANUARY = make_periods("2021-01-01", "2021-02-01", "month")


def _dry(air, vd_cm, options=BudgetOptions(), met=None, extra=None):
    sites = ["alpha", "beta"]
    rows = dry_rows(air, _vel(sites, vd_cm, extra), met, sites, options)
    return rows, dry_components(rows, JANUARY)


def _kg(dry, name, site):
    return float(element_deposition_in(dry[name].sel(site=site).values[0, 0], "N", "kg_ha"))


def test_particle_with_the_gas_velocity_by_hand(tmp_path):
    """alpha, January: NH3 10 ug/m3 (monthly), pNH4 1.8 ug/m3 (weekly, every week),
    Vd(NH3) 2 cm/s, Vd(pNH4) 0.2 cm/s.  D = C Vd t with C in mol N m-3 (one N per NH3 and
    per NH4+): all gas = (10e-6/17.031 + 1.8e-6/18.038) x 0.02 x 2678400 s
    = 0.03680 mol N m-2 = 5.154 kg N/ha; all particle = the same x 0.002 / 0.02."""
    _, air = _files(tmp_path, _air_text())
    rows, dry = _dry(air, {"NH3": 2.0, "pNH4": 0.2})
    c = 10e-6 / M_NH3 + 1.8e-6 / M_NH4                     # [mol N m-3]
    assert c * 0.02 * MONTH_S * N_KG * 1e4 == pytest.approx(5.154, abs=1e-3)   # the sum above
    assert _kg(dry, "bracket_ammonium_all_gas", "alpha") == pytest.approx(
        c * 0.02 * MONTH_S * N_KG * 1e4, rel=1e-4)
    assert _kg(dry, "bracket_ammonium_all_particle", "alpha") == pytest.approx(
        c * 0.002 * MONTH_S * N_KG * 1e4, rel=1e-4)
    # the particle's part alone, over its five filters:
    # 1.8e-6 / 18.038 x 0.02 x 2678400 = 5.345e-3 mol N m-2
    part = rows["bracket"][("ammonium", "all_gas")]["pNH4"]
    on_alpha = part["site_index"] == 0
    assert on_alpha.sum() == 5
    assert part["deposition"][on_alpha, 0].sum() == pytest.approx(
        1.8e-6 / M_NH4 * 0.02 * MONTH_S, rel=1e-4)
    assert 1.8e-6 / M_NH4 * 0.02 * MONTH_S == pytest.approx(5.345e-3, rel=1e-3)
    assert dry["bracket_ammonium_all_gas_air_coverage"].sel(site="alpha").item() == 1.0


def test_shared_samples_give_the_sample_by_sample_sum(tmp_path):
    """beta: every sample holds both members, so adding the members' depositions equals
    moving the concentrations into one species sample by sample (the former bracket)."""
    _, air = _files(tmp_path, _air_text())
    vd_cm = {"NH3": 1.3, "pNH4": 0.25}
    _, dry = _dry(air, vd_cm)
    vel = _vel(["alpha", "beta"], vd_cm)
    beta = air.isel(period=np.flatnonzero(air["site"].values == "beta"))
    for how, into in (("all_gas", "NH3"), ("all_particle", "pNH4")):
        vd = vel[into][0].sel(site=["beta"])
        rows, cs = period_deposition(sample_by_sample_move(beta, "ammonium", into), into, vd, None)
        old = to_periods(rows, cs, ["beta"], JANUARY, vd["time"].values)["deposition"]
        np.testing.assert_allclose(dry[f"bracket_ammonium_{how}"].sel(site="beta").values,
                                   old.sel(site="beta").values, rtol=1e-12)


def test_a_sample_with_one_member_is_kept_for_that_member(tmp_path):
    """Intended difference from the sample-by-sample sum: beta's third week has no NH3
    (and 5.0 ug/m3 of pNH4).  The former bracket dropped the whole week, pNH4 too, and
    scaled the other 24 days to the month; now NH3 is scaled from its own 24 days and
    pNH4 keeps all 31 (each member by its own coverage, as its component is)."""
    week3 = "beta,2021-01-15T00:00+00:00,2021-01-22T00:00+00:00,fp2,"
    text = _air_text().replace(week3 + "8.0,1.5,", week3 + ",5.0,")
    assert text != _air_text()
    _, air = _files(tmp_path, text)
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 2.0})         # one Vd for both: 2 cm/s
    week = 7 * 86400.0
    nh3 = 8e-6 / M_NH3 * 0.02 * MONTH_S                   # 24 days scaled to 31
    pnh4 = (1.5e-6 * (MONTH_S - week) + 5.0e-6 * week) / M_NH4 * 0.02
    got = dry["bracket_ammonium_all_gas"].sel(site="beta").item()
    assert got == pytest.approx(nh3 + pnh4, rel=1e-9)
    assert got == pytest.approx(dry["deposition"].sel(site="beta", species=["NH3", "pNH4"])
                                .sum().item(), rel=1e-12)     # = the two components
    former = (8e-6 / M_NH3 + 1.5e-6 / M_NH4) * 0.02 * MONTH_S
    assert abs(got - former) / former > 0.05
    # coverage: the weaker member's (NH3, 24 of 31 days)
    for v in ("air_coverage", "flux_coverage"):
        assert dry[f"bracket_ammonium_all_gas_{v}"].sel(site="beta").item() == \
            pytest.approx(24 / 31)


def test_a_censored_member_is_substituted_as_in_the_component(tmp_path):
    """A value below detection enters the bracket with half its limit (air_censored
    "half"), as in the pNH4 component; the former sum dropped the whole sample."""
    text = _air_text().replace("beta,2021-01-15T00:00+00:00,2021-01-22T00:00+00:00,fp2,8.0,1.5,",
                               "beta,2021-01-15T00:00+00:00,2021-01-22T00:00+00:00,fp2,8.0,<0.4,")
    assert text != _air_text()
    _, air = _files(tmp_path, text)
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 2.0})
    week = 7 * 86400.0
    pnh4 = (1.5e-6 * (MONTH_S - week) + 0.2e-6 * week) / M_NH4 * 0.02
    nh3 = 8e-6 / M_NH3 * 0.02 * MONTH_S
    assert dry["bracket_ammonium_all_gas"].sel(site="beta").item() == pytest.approx(
        nh3 + pnh4, rel=1e-9)
    comp = dry["deposition"].sel(site="beta", species="pNH4").item()
    assert comp == pytest.approx(pnh4, rel=1e-9)


def test_a_mixing_ratio_member_becomes_a_flux_with_the_air_density(tmp_path):
    """NH3 as 10 ppb (a mixing ratio), pNH4 in ug/m3: each member converted on its own
    (the former sum added mol mol-1 to mol m-3).  n_air = p / (R T) = 101325 / (R x
    283.15) = 43.04 mol m-3 (ideal gas; R from scipy.constants, CODATA)."""
    rows = (["alpha,2021-01-01T00:00+00:00,2021-02-01T00:00+00:00,pas1,10.0,,,"]
            + _weeks("alpha", "fp1", "1.8"))
    text = HEADER.replace("NH3 [ug/m3]", "NH3 [ppb]") + "\n".join(rows) + "\n"
    _, air = _files(tmp_path, text)
    t = pd.date_range("2020-12-31T01:00", "2021-02-02T00:00", freq="h").values
    met = xr.Dataset({"temperature": (("site", "time"), np.full((2, len(t)), 283.15)),
                      "pressure": (("site", "time"), np.full((2, len(t)), 101325.0))},
                     coords={"site": ["alpha", "beta"], "time": t})
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 0.2}, met=met)
    n_air = 101325.0 / (R * 283.15)
    assert n_air == pytest.approx(43.04, abs=0.01)
    want = (10e-9 * n_air + 1.8e-6 / M_NH4) * 0.02 * MONTH_S
    assert dry["bracket_ammonium_all_gas"].sel(site="alpha").item() == pytest.approx(want, rel=1e-4)


def test_bidirectional_nh3_keeps_the_deposition_only_velocity(tmp_path):
    """With the compensation point model's entries present, the bracket still deposits
    the pair with the gas scheme's deposition-only Vd of NH3 (docs/budget.md)."""
    _, air = _files(tmp_path, _air_text())
    vd_cm = {"NH3": 2.0, "pNH4": 0.2}
    _, plain = _dry(air, vd_cm)
    rows, bidi = _dry(air, vd_cm, extra={"NH3_bidirectional": 0.001, "NH3_emission": 1e-9})
    assert "nh3_exchange" in rows
    for how in ("all_gas", "all_particle"):
        v = f"bracket_ammonium_{how}"
        np.testing.assert_array_equal(bidi[v].values, plain[v].values)


def test_the_bracket_does_not_depend_on_the_pair_split(tmp_path):
    _, air = _files(tmp_path, _air_text())
    vd_cm = {"NH3": 2.0, "pNH4": 0.2}
    _, a = _dry(air, vd_cm)
    _, b = _dry(air, vd_cm, BudgetOptions(pair_split="all_gas"))
    for how in ("all_gas", "all_particle"):
        v = f"bracket_ammonium_{how}"
        np.testing.assert_array_equal(a[v].values, b[v].values)
        assert np.isfinite(a[v].values).all()


def test_status_follows_the_weaker_member(tmp_path):
    """alpha's filters miss two of five samples (14 of 31 days): NH3 is complete, pNH4
    fails the 0.75 air coverage, and so does the bracket, with pNH4's coverage."""
    cat, air = _files(tmp_path, _air_text(alpha_skip=(1, 2)))
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 0.2, "HNO3": 3.0, "pNO3": 0.3})
    b = assemble(None, dry, cat, JANUARY, BudgetOptions(), ["grass"])
    sel = dict(site="alpha", receptor="grass")
    st = b["status"].sel(**sel).isel(period=0)
    assert st.sel(component="N/dry/NH3").item() == "complete"
    assert st.sel(component="N/dry/pNH4").item() == "flagged"
    for how in ("all_gas", "all_particle"):
        v = f"bracket_ammonium_{how}"
        assert b[f"{v}_status"].sel(**sel).item() == "flagged"
        assert b[f"{v}_completeness"].sel(**sel).item() == pytest.approx(17 / 31)
        assert np.isfinite(b[v].sel(**sel).item())
    d = derived(b)
    assert d["dry_N_all_gas_status"].sel(**sel).item() == "flagged"
    assert np.isfinite(d["dry_N_all_gas_kg_ha"].sel(**sel).item())
    # beta: both members complete, the bracket too; dry N with it is partial (no NO2)
    beta = dict(site="beta", receptor="grass")
    assert b["bracket_ammonium_all_gas_status"].sel(**beta).item() == "complete"
    assert d["dry_N_all_gas_status"].sel(**beta).item() == "partial"


def test_a_member_without_data_leaves_the_bracket_missing_with_its_reason(tmp_path):
    cat, air = _files(tmp_path, _air_text(beta_nh3=""))
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 0.2})
    b = assemble(None, dry, cat, JANUARY, BudgetOptions(), ["grass"])
    sel = dict(site="beta", receptor="grass")
    assert b["bracket_ammonium_all_gas_status"].sel(**sel).item() == "missing"
    assert np.isnan(b["bracket_ammonium_all_gas"].sel(**sel).item())
    assert b["bracket_ammonium_all_gas_note"].sel(**sel).item() == (
        "the weaker of NH3 and pNH4: not measured at the site (no valid concentration)")
    d = derived(b)
    assert np.isnan(d["dry_N_all_gas_kg_ha"].sel(**sel).item())
    assert d["dry_N_all_gas_status"].sel(**sel).item() == "missing"


# ------------------------------------------------------------------ the demo network
sys.path.insert(0, str(Path(__file__).parent))
from ui.demo_subset import study_and_args, write_demo_subset  # noqa: E402


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    sc = write_demo_subset(tmp_path_factory.mktemp("bracket"), ("ridge", "fell", "mere", "farm"),
                           2021, 2021)
    study, args = study_and_args(sc)
    return study, args, study.run(*args)


def test_demo_farm_has_a_bracket_and_pair_split_uses_it(demo):
    """farm: NH3 monthly passive, pNH4 weekly filters: the bracket is a number now, and a
    note names the samplers.  Under pair_split = "all_gas" the HNO3 and NH3 components
    hold the moved pair, built from the bracket's rows: at ridge (both on one filter pack)
    and at farm alike (tests/test_pair_split.py has the rest)."""
    study, args, res = demo
    y = res.years
    farm = y["active"].sel(site="farm").values              # the receptors farm asks for
    assert farm.sum() == 3
    for how in ("all_gas", "all_particle"):
        assert np.isfinite(y[f"bracket_ammonium_{how}"].sel(site="farm").values[farm]).all()
        assert np.isfinite(res.derived[f"dry_N_{how}_kg_ha"].sel(site="farm").values[farm]).all()
        assert set(y[f"bracket_ammonium_{how}_status"].sel(site="farm").values[farm].ravel()) \
            == {"complete"}
    opts = dataclasses.replace(args[2], pair_split="all_gas")
    moved = study.run(args[0], args[1], opts, *args[3:]).years
    for site in ("ridge", "farm"):
        act = y["active"].sel(site=site).values
        for sp, pair in (("HNO3", "nitrate"), ("NH3", "ammonium")):
            comp = moved["deposition"].sel(site=site, component=f"N/dry/{sp}").values[act]
            assert np.isfinite(comp).all()
            np.testing.assert_allclose(y[f"bracket_{pair}_all_gas"].sel(site=site).values[act],
                                       comp, rtol=1e-12)
            assert (moved["status"].sel(site=site, component=f"N/dry/{sp}").values[act]
                    == "complete").all()


def test_demo_notes_name_the_samplers(demo):
    study, args, _ = demo
    _, notes = study.dry(args[1], args[2], make_periods("2021-01-01", "2022-01-01", "year"))
    farm = [n for n in notes if n.startswith("NH3 and pNH4 at farm")]
    assert len(farm) == 1 and "combined across samplers" in farm[0]
    assert "FRM-N1" in farm[0] and "FRM-F1" in farm[0]
    assert not [n for n in notes if "at ridge" in n and "bracket" in n]


def test_demo_blocks_and_chunked_met_give_the_same_brackets(demo):
    """One site per block, and the met as dask chunks: the bracket variables of the whole
    in-process run to 1e-12 (relative), statuses exactly."""
    pytest.importorskip("dask")
    from workbench.blocks import run_blocks
    from workbench.pipeline import Study
    study, args, whole = demo
    lazy = Study(dataclasses.replace(study.inputs, met=study.inputs.met.chunk({"time": 24 * 60})),
                 study.site_overrides)
    active = whole.years["active"].values              # the (site, receptor) pairs asked for
    for other in (run_blocks(study, *args, block_sites=1), lazy.run(*args)):
        np.testing.assert_array_equal(other.years["active"].values, active)
        for pair in ("nitrate", "ammonium"):
            for how in ("all_gas", "all_particle"):
                v = f"bracket_{pair}_{how}"
                assert np.isfinite(whole.years[v].values[active]).all()
                np.testing.assert_allclose(other.years[v].values[active],
                                           whole.years[v].values[active], rtol=1e-12)
                np.testing.assert_array_equal(other.years[f"{v}_status"].values[active],
                                              whole.years[f"{v}_status"].values[active])
                np.testing.assert_allclose(other.derived[f"dry_N_{how}_kg_ha"].values[active],
                                           whole.derived[f"dry_N_{how}_kg_ha"].values[active],
                                           rtol=1e-12)
