"""``[budget] pair_split = "all_gas" | "all_particle"`` built from each pair member's own
rows (workbench/drypairs.py, workbench/drycomponents.py, workbench/analysis/layer.py).

The species a pair is moved into holds both members deposited with its Vd, each over its
own sampling periods and scaled by its own coverage (deposition is linear in the
concentration: F(gas + particle at Vd) = F(gas at Vd) + F(particle at Vd)); the other
member is 0.  Checked by hand-worked arithmetic (D = C Vd t; molar masses from
periodictable, a general-purpose reference library), against the former sample-by-sample
move where both members are on every sample (tests/pair_reference.py), against the
bracket on the invented demo network, and through the Monte Carlo layer and the block
runs.  Invented concentrations and velocities.
"""
from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import numpy as np
import pytest

from pair_reference import sample_by_sample_move
from test_bracket_samplers import (JANUARY, M_NH3, M_NH4, MONTH_S, _air_text, _dry, _files,
                                   _vel)
from workbench.budget import BudgetOptions, assemble, derived
from workbench.drycomponents import prepare_velocities
from workbench.dryflux import period_deposition, to_periods
from workbench.units import element_deposition_in

ALL_GAS, ALL_PART = BudgetOptions(pair_split="all_gas"), BudgetOptions(pair_split="all_particle")
VD = {"NH3": 2.0, "pNH4": 0.2}                       # [cm s-1]


def _dep(dry, site, sp):
    return dry["deposition"].sel(site=site, species=sp).values[0, 0]


def test_members_on_different_samplers_by_hand(tmp_path):
    """alpha: NH3 10 ug/m3 on one monthly passive sample, pNH4 1.8 ug/m3 on five weekly
    filters (no sample holds both).  All gas: NH3 = (10e-6/17.031 + 1.8e-6/18.038) x
    0.02 m/s x 2678400 s = 0.03680 mol m-2, pNH4 = 0; all particle: the same at 0.002 m/s
    as pNH4, NH3 = 0.  The former sample-by-sample move left NH3 missing here."""
    _, air = _files(tmp_path, _air_text())
    c = 10e-6 / M_NH3 + 1.8e-6 / M_NH4                     # [mol N m-3]
    assert c * 0.02 * MONTH_S == pytest.approx(0.03680, abs=1e-5)
    rows, gas = _dry(air, VD, ALL_GAS)
    assert _dep(gas, "alpha", "NH3") == pytest.approx(c * 0.02 * MONTH_S, rel=1e-9)
    assert _dep(gas, "alpha", "pNH4") == 0.0
    assert gas["coverage"].sel(site="alpha", species="NH3").item() == 1.0
    assert gas["measured"].sel(site="alpha", species="NH3").item()
    # the main component is the bracket (the same rows)
    assert _dep(gas, "alpha", "NH3") == gas["bracket_ammonium_all_gas"].sel(site="alpha").item()
    assert rows["split"] == {"ammonium": ("NH3", "pNH4", "all_gas")}
    assert ("pair_split = all_gas is not applied to the nitrate pair: HNO3 and pNO3 have no "
            "deposition velocity; the measured split stands") in rows["notes"]
    _, part = _dry(air, VD, ALL_PART)
    assert _dep(part, "alpha", "pNH4") == pytest.approx(c * 0.002 * MONTH_S, rel=1e-9)
    assert _dep(part, "alpha", "NH3") == 0.0
    # the mean concentration of the moved-into species: the sum of the members' [mol m-3]
    assert part["concentration"].sel(site="alpha", species="pNH4").item() == pytest.approx(c)
    # the former move: no sample of alpha holds both members
    moved = sample_by_sample_move(air, "ammonium", "NH3")
    assert np.isnan(moved["NH3"].values[air["site"].values == "alpha"]).all()


@pytest.mark.parametrize("how, into, other", [("all_gas", "NH3", "pNH4"),
                                               ("all_particle", "pNH4", "NH3")])
def test_shared_samples_equal_the_sample_by_sample_move(tmp_path, how, into, other):
    """beta: both members on every weekly filter, so the result is the former move of
    the concentrations into one species, sample by sample, to rounding."""
    _, air = _files(tmp_path, _air_text())
    vd_cm = {"NH3": 1.3, "pNH4": 0.25, "HNO3": 3.0, "pNO3": 0.3}
    _, dry = _dry(air, vd_cm, BudgetOptions(pair_split=how))
    vel = _vel(["alpha", "beta"], vd_cm)
    beta = air.isel(period=np.flatnonzero(air["site"].values == "beta"))
    vd = vel[into][0].sel(site=["beta"])
    rows, cs = period_deposition(sample_by_sample_move(beta, "ammonium", into), into, vd, None)
    old = to_periods(rows, cs, ["beta"], JANUARY, vd["time"].values)["deposition"]
    np.testing.assert_allclose(dry["deposition"].sel(site="beta", species=into).values,
                               old.sel(site="beta").values, rtol=1e-12)
    assert (dry["deposition"].sel(site="beta", species=other).values == 0).all()


def test_a_censored_other_member_is_zero_and_enters_the_moved_species(tmp_path):
    """beta's third week holds pNH4 below 0.4 ug/m3: under all_gas it enters NH3 with
    half its limit (air_censored "half", as in the pNH4 component) and pNH4 is exactly
    0.  The former move dropped the week from NH3 and left its substitute in pNH4."""
    week3 = "beta,2021-01-15T00:00+00:00,2021-01-22T00:00+00:00,fp2,8.0,"
    text = _air_text().replace(week3 + "1.5,", week3 + "<0.4,")
    assert text != _air_text()
    _, air = _files(tmp_path, text)
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 2.0}, ALL_GAS)
    week = 7 * 86400.0
    want = (8e-6 / M_NH3 * MONTH_S + (1.5e-6 * (MONTH_S - week) + 0.2e-6 * week) / M_NH4) * 0.02
    assert _dep(dry, "beta", "NH3") == pytest.approx(want, rel=1e-9)
    assert _dep(dry, "beta", "pNH4") == 0.0
    old = sample_by_sample_move(air, "ammonium", "NH3")
    assert old["pNH4_censored"].values.any()              # the former move kept it there


def test_status_is_the_weaker_members_and_the_other_keeps_its_own(tmp_path):
    """alpha's filters miss two of five samples (17 of 31 days kept): under all_gas NH3
    holds the pair with pNH4's coverage and is flagged; pNH4 is 0 and keeps its own
    status (flagged), as the former move did; beta without NH3: NH3 missing, with the
    reason, and pNH4 0."""
    cat, air = _files(tmp_path, _air_text(alpha_skip=(1, 2), beta_nh3=""))
    _, dry = _dry(air, {"NH3": 2.0, "pNH4": 0.2, "HNO3": 3.0, "pNO3": 0.3}, ALL_GAS)
    b = assemble(None, dry, cat, JANUARY, ALL_GAS, ["grass"])
    st = b["status"].isel(period=0, receptor=0)
    alpha, beta = dict(site="alpha"), dict(site="beta")
    assert st.sel(**alpha, component="N/dry/NH3").item() == "flagged"
    assert b["completeness"].isel(period=0, receptor=0).sel(
        **alpha, component="N/dry/NH3").item() == pytest.approx(17 / 31)
    assert st.sel(**alpha, component="N/dry/pNH4").item() == "flagged"
    assert b["deposition"].isel(period=0, receptor=0).sel(
        **alpha, component="N/dry/pNH4").item() == 0.0
    assert st.sel(**beta, component="N/dry/NH3").item() == "missing"
    assert b["note"].isel(period=0, receptor=0).sel(**beta, component="N/dry/NH3").item() == \
        "not measured at the site (no valid concentration)"
    assert st.sel(**beta, component="N/dry/pNH4").item() == "complete"
    # the main dry N is the bracket's, status too
    d = derived(b)
    kg = element_deposition_in(b["total_deposition"].sel(total="N_dry").values, "N", "kg_ha")
    np.testing.assert_allclose(kg[0, 0, 0], d["dry_N_all_gas_kg_ha"].values[0, 0, 0],
                               rtol=1e-12)
    assert d["dry_N_all_gas_status"].sel(**alpha).item() == "flagged"


def test_a_pair_without_a_member_keeps_the_measured_split_and_says_so(tmp_path):
    _, air = _files(tmp_path, _air_text())
    air = air.drop_vars([v for v in air.data_vars if str(v).startswith("pNO3")])
    vd_cm = {"NH3": 2.0, "pNH4": 0.2, "HNO3": 3.0}
    rows, dry = _dry(air, vd_cm, ALL_GAS)
    _, measured = _dry(air, vd_cm)
    assert "nitrate" not in rows["split"]
    np.testing.assert_array_equal(dry["deposition"].sel(species="HNO3").values,
                                  measured["deposition"].sel(species="HNO3").values)
    assert ("pair_split = all_gas is not applied to the nitrate pair: pNO3 is not in the "
            "air concentrations; the measured split stands") in rows["notes"]


def test_bidirectional_nh3_net_under_each_split(tmp_path):
    """The compensation point model's Vd 0.1 cm/s and emission 1e-9 mol m-2 s-1 (fixed):
    all_gas moves pNH4 into the NH3 exchange (both members at 0.001 m/s, each over its
    own samples, minus the emission over NH3's samples); all_particle leaves the
    emission alone (C = 0: net = -E); the deposition-only NH3 figure is the bracket's
    (docs/budget.md)."""
    _, air = _files(tmp_path, _air_text())
    extra = {"NH3_bidirectional": 0.001, "NH3_emission": 1e-9}
    e = 1e-9 * MONTH_S
    net = {}
    for opts in (BudgetOptions(), ALL_GAS, ALL_PART):
        rows, dry = _dry(air, VD, opts, extra=extra)
        net[opts.pair_split] = dry["nh3_net"].sel(site="alpha").item()
        if opts.pair_split == "all_gas":
            assert "moved" in rows["nh3_exchange"]
            assert _dep(dry, "alpha", "NH3") == dry["bracket_ammonium_all_gas"].sel(
                site="alpha").item()
    assert net["measured"] == pytest.approx(10e-6 / M_NH3 * 0.001 * MONTH_S - e, rel=1e-9)
    assert net["all_gas"] == pytest.approx(
        (10e-6 / M_NH3 + 1.8e-6 / M_NH4) * 0.001 * MONTH_S - e, rel=1e-9)
    assert net["all_particle"] == pytest.approx(-e, rel=1e-12)


# ------------------------------------------------------------------ the demo network
sys.path.insert(0, str(Path(__file__).parent))
from ui.demo_subset import study_and_args, write_demo_subset  # noqa: E402

SPLITS = ("all_gas", "all_particle")


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    sc = write_demo_subset(tmp_path_factory.mktemp("split"), ("ridge", "fell", "mere", "farm"),
                           2021, 2021)
    study, args = study_and_args(sc)
    runs = {how: study.run(args[0], args[1], dataclasses.replace(args[2], pair_split=how),
                           *args[3:]) for how in SPLITS}
    return study, args, runs


def _with(args, how):
    return (args[0], args[1], dataclasses.replace(args[2], pair_split=how), *args[3:])


@pytest.mark.parametrize("how", SPLITS)
def test_demo_main_dry_n_equals_the_bracket(demo, how):
    """At every site and receptor asked for, dry N of the main numbers equals the
    bracket's dry N (value and status), farm included (NH3 monthly passive, pNH4
    weekly filters).  mere has a bulk collector with bulk_correction
    "exclude_particles": its particles are taken as caught by the collector (0 dry),
    so under all_particle the moved pair is 0 there, and so is the all-particle
    bracket (budgetstatus.bulk_caught_brackets)."""
    _, _, runs = demo
    y, d = runs[how].years, runs[how].derived
    act = y["active"].values.copy()
    main = element_deposition_in(y["total_deposition"].sel(total="N_dry").values, "N", "kg_ha")
    farm = list(y["site"].values).index("farm")
    assert act[farm].sum() == 3
    into = {"all_gas": "NH3", "all_particle": "pNH4"}[how]
    assert (y["status"].sel(site="farm", component=f"N/dry/{into}").values[act[farm]]
            == "complete").all()
    if how == "all_particle":
        mere = list(y["site"].values).index("mere")
        for sp in ("pNO3", "pNH4", "HNO3", "NH3"):
            assert (y["deposition"].sel(site="mere", component=f"N/dry/{sp}").values[
                act[mere]] == 0).all()
        for pair in ("nitrate", "ammonium"):
            b = y[f"bracket_{pair}_all_particle"].sel(site="mere").values[act[mere]]
            assert (b == 0).all()
            assert "caught by the bulk collector" in str(
                y[f"bracket_{pair}_all_particle_note"].sel(site="mere").values[act[mere]][0])
    assert act.sum() >= 10
    np.testing.assert_allclose(main[act], d[f"dry_N_{how}_kg_ha"].values[act], rtol=1e-9)
    np.testing.assert_array_equal(y["total_status"].sel(total="N_dry").values[act],
                                  d[f"dry_N_{how}_status"].values[act])


def test_demo_ridge_equals_the_sample_by_sample_move(demo):
    """ridge: both members of each pair on one filter pack, so the moved-into components
    equal the former move of the concentrations sample by sample, to rounding."""
    study, args, runs = demo
    y = runs["all_gas"].years
    act = y["active"].sel(site="ridge").values
    air = study.inputs.air
    ridge = air.isel(period=np.flatnonzero(air["site"].values == "ridge"))
    for how in SPLITS:
        y, res = runs[how].years, runs[how]
        for pair, members in (("nitrate", ("HNO3", "pNO3")), ("ammonium", ("NH3", "pNH4"))):
            into = members[0] if how == "all_gas" else members[1]
            vd = prepare_velocities(res.velocities, [into],
                                    min_slot_hours=args[2].min_slot_hours)[into][0]
            vd = vd.sel(site=["ridge"], receptor=list(y["receptor"].values))
            rows, cs = period_deposition(sample_by_sample_move(ridge, pair, into), into, vd,
                                         study.inputs.met)
            old = to_periods(rows, cs, ["ridge"], res.periods, vd["time"].values)["deposition"]
            new = y["deposition"].sel(site="ridge", component=f"N/dry/{into}").values
            assert np.isfinite(new[act]).all()
            np.testing.assert_allclose(new[act], old.sel(site="ridge").values[act], rtol=1e-9)


def test_demo_linear_layer_adds_up_and_the_monte_carlo_keeps_the_point(demo):
    """The Monte Carlo layer under each split: the per-sample pieces of every dry
    component add up to it (farm's NH3 under all_gas from both samplers), the other
    member has no pieces, and with every error off the draws are the point values."""
    from analysis.tiny_site import OFF
    from workbench.analysis import uncertainty as U
    from workbench.analysis.layer import linear_layer
    study, _, runs = demo
    for how in SPLITS:
        res = runs[how]
        lay = linear_layer(res, study)
        dep = res.budget["deposition"].values
        sites = list(res.budget["site"].values)
        for site in ("farm", "ridge"):
            k = sites.index(site)
            pieces = lay.sites[k].dry
            into, other = ("NH3", "pNH4") if how == "all_gas" else ("pNH4", "NH3")
            assert into in pieces and other not in pieces
            j = list(res.budget["component"].values).index(f"N/dry/{into}")
            act = res.budget["active"].values[k]
            np.testing.assert_allclose(pieces[into].contrib.sum(0).T[act], dep[k, act, :, j],
                                       rtol=1e-12)
            assert len(np.unique(pieces[into].row_id)) == len(pieces[into].row_id)
        q = U.monte_carlo(res, study, U.UncertaintyOptions(draws=20, **OFF), layers={
            "budget": lay, "years": lay})
        act = res.budget["active"].values
        for i in range(3):
            np.testing.assert_array_equal(q.budget["deposition"].values[i][act], dep[act])


@pytest.mark.parametrize("how", SPLITS)
def test_demo_blocks_and_chunked_met_equal_the_whole_run(demo, how):
    """One site per block on two threads, and the met as dask chunks: every component and
    total of the whole in-process run to 1e-12 (relative), statuses exactly."""
    pytest.importorskip("dask")
    from workbench.blocks import run_blocks
    from workbench.pipeline import Study
    study, args, runs = demo
    whole = runs[how].years
    lazy = Study(dataclasses.replace(study.inputs, met=study.inputs.met.chunk({"time": 24 * 60})),
                 study.site_overrides)
    act = whole["active"].values
    for other in (run_blocks(study, *_with(args, how), block_sites=1, threads=2),
                  lazy.run(*_with(args, how))):
        y = other.years
        np.testing.assert_array_equal(y["active"].values, act)
        for v in ("deposition", "total_deposition"):
            np.testing.assert_allclose(y[v].values[act], whole[v].values[act], rtol=1e-12)
        for v in ("status", "total_status"):
            np.testing.assert_array_equal(y[v].values[act], whole[v].values[act])


def test_demo_farm_bidirectional_nh3_under_each_split(demo):
    """Bidirectional NH3 at the farm: under all_gas the deposition-only NH3 figure is the
    all-gas bracket and the net is known (not missing, as the sample-by-sample move left
    it); under all_particle the NH3 component is the net -E (an emission, flagged)."""
    study, args, _ = demo
    dry = dataclasses.replace(args[1], nh3_treatment="bidirectional")
    for how in SPLITS:
        y = study.run(args[0], dry, dataclasses.replace(args[2], pair_split=how),
                      *args[3:]).years.sel(site="farm")
        act = y["active"].values
        nh3 = y["deposition"].sel(component="N/dry/NH3").values[act]
        assert np.isfinite(nh3).all()
        np.testing.assert_allclose(y["nh3_net"].values[act], nh3, rtol=1e-12)
        if how == "all_gas":
            np.testing.assert_allclose(y["nh3_deposition_only"].values[act],
                                       y["bracket_ammonium_all_gas"].values[act], rtol=1e-12)
            assert (y["status"].sel(component="N/dry/NH3").values[act] != "missing").all()
        else:
            assert (nh3 < 0).all()
            assert (y["nh3_deposition_only"].values[act] == 0).all()
            assert (y["status"].sel(component="N/dry/NH3").values[act] == "flagged").all()
