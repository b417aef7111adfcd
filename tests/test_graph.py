"""The stage graph: every option field recomputes exactly the stages that declare it
(and what runs on them), an undeclared read is caught, the cache stays bounded."""
import dataclasses
import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from workbench import graph as G
from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.drydep.gas import SCHEMES
from workbench.drydep.erisman1994 import SO2_CUTICLES
from workbench.drydep.nh3_bidirectional import CUTICLE_RULES
from workbench.drydep.options import USTAR_TRANSFERS, WETNESS_RULES
from workbench.drydep.seasons import SEASON_RULES
from workbench.drydep.settling import SETTLING_RULES
from workbench.drydep.wetness import DEW_RULES
from workbench.pipeline import Study
from workbench.wet import WetOptions
from workbench.wet import options as wet_options_module

from tiny_inputs import ridge_part_study

CLASSES = {"wet": WetOptions, "dry": DryOptions, "budget": BudgetOptions}
#: The fields that no stage reads, and why (checked both ways below).
UNREAD = {("dry", "compare_schemes")}          # `workbench run` runs the graph per scheme

#: Allowed values of the text options, from the tables the dataclasses validate against.
CHOICES = {"wet": dict(wet_options_module._CHOICES), "budget": dict(BudgetOptions._CHOICES),
           "dry": {"gas_scheme": tuple(SCHEMES), "wetness_rule": WETNESS_RULES,
                   "dew_rule": DEW_RULES, "season_rule": SEASON_RULES,
                   "ustar_transfer": USTAR_TRANSFERS,
                   "nh3_treatment": ("deposition_only", "bidirectional"),
                   "nh3_cuticle": CUTICLE_RULES, "so2_cuticle": SO2_CUTICLES,
                   "particle_settling": SETTLING_RULES}}


def _explicit(base):
    """Fields whose valid other value no generic rule can pick."""
    fine = dataclasses.replace(base["dry"].mode_of("pNO3"), fine_fraction=0.3)
    return {
        ("wet", "gauge_fill"): ("met",),
        ("dry", "gases"): ("SO2", "HNO3", "NH3", "NO2"),
        ("dry", "particles"): ("pSO4", "pNO3", "pNH4", "pNa", "pCl"),
        ("dry", "seasonal_category"): 4,
        ("dry", "roughness"): {"grass": (0.05, 0.2)},
        ("dry", "particle_modes"): {**base["dry"].particle_modes, "pNO3": fine},
        ("dry", "nh3_emission_potential"): {"grass": 300.0},
        ("dry", "rc_scale"): {"SO2": 2.0},
        ("dry", "ustar_transfer_receptor"): {"farm/deciduous_forest": "blending_height"},
        ("dry", "sampler_coarse_fraction"): {"ridge/RDG-F1": {"pNO3": 0.45}},
        ("budget", "diurnal_profile"): {"NH3": [1.0] * 12 + [2.0] * 12},
        ("budget", "preferred_method"): {"NH3": "denuder"},
        ("budget", "bulk_wet_factor_ion"): {"NH4": 1.0},
    }


def _scaled(v):
    """The generic rule for numbers and tuples of numbers: 90 % (fractions stay in 0-1,
    increasing bounds stay increasing, an infinite bound stays infinite)."""
    if isinstance(v, tuple):
        return tuple(_scaled(x) for x in v)
    return v * 0.9 if v != 0 else 0.1


def perturbation(group, name, value, explicit):
    """A valid value of ``group.name`` differing from `value`."""
    if (group, name) in explicit:
        return explicit[(group, name)]
    if isinstance(value, bool):
        return not value
    if isinstance(value, int):
        return value + 1
    if isinstance(value, str):
        return next(c for c in CHOICES[group][name] if c != value)
    if isinstance(value, float) or (isinstance(value, tuple) and all(
            isinstance(x, (int, float, tuple)) for x in value)):
        return _scaled(value)
    raise AssertionError(f"no perturbation rule for {group}.{name} = {value!r}: add it to "
                         "the explicit map")


@pytest.fixture(scope="module")
def study():
    return ridge_part_study()


def _run(st, opts, fixed):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        r = st.run(opts["wet"], opts["dry"], opts["budget"], fixed, resolution="month",
                   start="2021-01-01", end="2021-07-01")
        r.derived                                    # the derived stage too
    return r


def _downstream(edges, roots):
    """Stages that run (transitively) on any of `roots`, and the roots."""
    out, grew = set(roots), True
    while grew:
        new = {s for s, ups in edges.items() if ups & out} - out
        grew = bool(new)
        out |= new
    return out


def test_every_option_field_recomputes_exactly_its_declaring_stages(study):
    st, sc = study
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    fixed = dict(sc.fixed_velocity)
    _run(st, base, fixed)
    ran = {s for s, n in st.graph.counts.items() if n}
    assert {"screen", "wet", "micromet", "canopy_state", "gas_vd", "particle_mode_vd",
            "velocities", "vd_fill", "air_basis", "flux_inputs", "species_rows", "dry_rows",
            "period_shares", "dry_components", "budget", "derived"} <= ran
    explicit = _explicit(base)
    checked = 0
    for group, cls in CLASSES.items():
        for f in dataclasses.fields(cls):
            old = getattr(base[group], f.name)
            new = perturbation(group, f.name, old, explicit)
            assert new != old, (group, f.name)
            opts = dict(base, **{group: dataclasses.replace(base[group], **{f.name: new})})
            before = dict(st.graph.counts)
            _run(st, opts, fixed)
            recomputed = {s for s, n in st.graph.counts.items() if n > before.get(s, 0)}
            declaring = set(G.readers(group, f.name))
            if (group, f.name) in UNREAD:
                assert not declaring and not recomputed, (group, f.name, recomputed)
                continue
            # every stage declaring the field that ran before runs again ...
            assert (declaring & ran) <= recomputed, (group, f.name, declaring - recomputed)
            # ... and nothing else but what runs on them
            extra = recomputed - _downstream(st.graph.edges, declaring)
            assert not extra, f"{group}.{f.name} recomputed {extra}, which do not declare it"
            checked += 1
    assert checked == sum(len(dataclasses.fields(c)) for c in CLASSES.values()) - len(UNREAD)


def test_a_field_read_by_no_stage_is_reported():
    unread = G.unread_fields(CLASSES)
    assert {(g, f) for g, names in unread.items() for f in names} == UNREAD


def test_a_dropped_declaration_is_caught(study, monkeypatch):
    """The mutation that once changed dry sulfate by 9 % with the suite green: the air
    stage without ``sulfate_basis`` in its reads.  The guarded view raises."""
    st, sc = study
    old = G.STAGES["air_basis"]
    monkeypatch.setitem(G.STAGES, "air_basis", dataclasses.replace(
        old, reads={"budget": tuple(f for f in old.reads["budget"] if f != "sulfate_basis")}))
    fresh = Study(st.inputs, st.site_overrides)
    opts = {"wet": sc.options["wet"], "dry": sc.options["dry"],
            "budget": dataclasses.replace(sc.options["budget"], sulfate_basis="total")}
    with pytest.raises(G.UndeclaredOptionRead, match="air_basis.*budget.sulfate_basis"):
        _run(fresh, opts, dict(sc.fixed_velocity))


@pytest.mark.parametrize("name", sorted(n for n in G.STAGES if G.STAGES[n].reads))
def test_every_declaration_is_needed_by_the_guard(name):
    """Each stage's view refuses any field outside its declaration (a sample)."""
    st = G.STAGES[name]
    for group, names in st.reads.items():
        cls = CLASSES.get(group)
        if cls is None:
            continue
        view = G.OptionView(cls(), names, name, group)
        others = [f.name for f in dataclasses.fields(cls) if f.name not in names]
        for f in others[:3]:
            with pytest.raises(G.UndeclaredOptionRead):
                getattr(view, f)
        for f in names:
            getattr(view, f)
        with pytest.raises(dataclasses.FrozenInstanceError):
            view.x = 1


def test_a_fine_fraction_recomputes_no_velocity_step_and_a_wet_option_no_vd(study):
    st, sc = study
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    fixed = dict(sc.fixed_velocity)
    _run(st, base, fixed)
    steps = ("micromet", "canopy_state", "gas_vd", "particle_mode_vd")
    before = dict(st.graph.counts)
    fine = dataclasses.replace(base["dry"].mode_of("pNO3"), fine_fraction=0.55)
    _run(st, dict(base, dry=dataclasses.replace(
        base["dry"], particle_modes={**base["dry"].particle_modes, "pNO3": fine})), fixed)
    assert all(st.graph.counts[s] == before[s] for s in steps)
    assert st.graph.counts["vd_fill"] == before["vd_fill"] + 1          # pNO3's only
    before = dict(st.graph.counts)
    _run(st, dict(base, wet=dataclasses.replace(base["wet"], min_gauge_fraction=0.33)), fixed)
    assert all(st.graph.counts[s] == before[s] for s in steps + ("velocities", "vd_fill"))


def test_keys_are_derived_from_values_not_identity():
    a = G.token(DryOptions(roughness={"grass": (0.1, None)}, rc_scale={"SO2": 2.0, "NH3": 1.5}))
    b = G.token(DryOptions(rc_scale={"NH3": 1.5, "SO2": 2.0}, roughness={"grass": (0.1, None)}))
    assert a == b                                           # dict order does not matter
    assert G.token(1.0) != G.token(1) and G.token(math.inf) == G.token(float("inf"))
    with pytest.raises(TypeError, match="no cache token"):
        G.token(object())                                   # never a fall-back to id()


def test_the_cache_is_bounded_by_entries_and_bytes():
    g = G.Graph(max_entries=3, max_bytes=10_000)
    G.declare("test_array", fn=lambda o, n: np.zeros(n))
    try:
        for n in range(1, 6):
            g.run("test_array", params={"n": n})
        assert len(g) == 3 and g.counts["test_array"] == 5
        g.run("test_array", params={"n": 5})                # the most recent: kept
        assert g.counts["test_array"] == 5
        g.run("test_array", params={"n": 1})                # dropped: computed again
        assert g.counts["test_array"] == 6
        g.run("test_array", params={"n": 1250})             # 10 000 bytes: the others go
        assert len(g) == 1 and g.nbytes == 10_000
    finally:
        G.STAGES.pop("test_array")


def test_the_stage_table_of_the_docs_is_up_to_date():
    """docs/engine.md lists the stages as declared (`python docs/make_engine_table.py`)."""
    import importlib.util
    docs = Path(__file__).resolve().parents[1] / "docs"
    spec = importlib.util.spec_from_file_location("met", docs / "make_engine_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    assert mod.table() in (docs / "engine.md").read_text()


def test_a_dry_or_budget_change_derives_no_wet_component_nor_precipitation_note(
        study, monkeypatch):
    """The wet components read ``budget.sulfate_basis`` only and the precipitation note
    ``wet.min_coverage_fraction`` only: a dry change derives no wet component again, a
    budget change other than the basis neither, and a budget change writes no
    precipitation note again (the old budget stage and `Study.run` did, every run)."""
    import workbench.budget_assembly as assembly
    import workbench.pipeline as pipeline
    import workbench.stages as stages
    calls = {"wet": 0, "precipitation": 0, "air": 0}
    from workbench.period_notes import one_sample_notes as notes
    component = assembly.wet_component

    def counted_component(*a, **k):
        calls["wet"] += 1
        return component(*a, **k)

    def counted_notes(periods, precipitation=None, air=None, *a, **k):
        calls["precipitation"] += precipitation is not None
        calls["air"] += air is not None
        return notes(periods, precipitation, air, *a, **k)
    monkeypatch.setattr(assembly, "wet_component", counted_component)
    for module in (stages, pipeline):              # where each code looks it up
        monkeypatch.setattr(module, "one_sample_notes", counted_notes, raising=False)
    st, sc = study
    fresh = Study(st.inputs, st.site_overrides)
    base = {"wet": sc.options["wet"], "dry": sc.options["dry"], "budget": sc.options["budget"]}
    fixed = dict(sc.fixed_velocity)
    first = _run(fresh, base, fixed)
    assert calls["wet"] >= 3 and calls["precipitation"] >= 1 and calls["air"] >= 1
    ran = dict(calls)

    def changed(group, **values):
        before = dict(calls)
        r = _run(fresh, dict(base, **{group: dataclasses.replace(base[group], **values)}),
                 fixed)
        return {k: calls[k] - before[k] for k in calls}, r
    new, r = changed("dry", ustar_floor=0.2)
    assert new["wet"] == 0 and new["precipitation"] == 0 and new["air"] == 0
    assert r.notes == first.notes
    new, _ = changed("budget", require_all_seasons=not base["budget"].require_all_seasons)
    assert new == {"wet": 0, "precipitation": 0, "air": 0}
    new, _ = changed("budget", min_air_coverage=0.6)
    assert new == {"wet": 0, "precipitation": 0, "air": 1}
    new, _ = changed("budget", sulfate_basis="total")
    assert new["wet"] == ran["wet"] and new["precipitation"] == 0
    new, _ = changed("wet", min_coverage_fraction=0.5)
    assert new["precipitation"] == 1 and new["air"] == 0
    # each of them a stage the graph counts
    # months and years: the first run, the basis and the wet change
    assert fresh.graph.counts["wet_components"] == 6
    assert fresh.graph.counts["precipitation_notes"] == 2
    assert fresh.graph.counts["air_notes"] == 2
    # the samples' median lengths, read by no option: once for each kind of sample
    assert fresh.graph.counts["sample_hours"] == 2
