"""Scenario files: round trip of every option set, and the docs list every option."""
import dataclasses
from pathlib import Path

import pytest

from workbench.budget import BudgetOptions
from workbench.drydep import DryOptions
from workbench.scenario import load_scenario, save_scenario, option_sections
from workbench.wet import WetOptions

DEMO = Path(__file__).resolve().parent.parent / "demo_data"


def test_round_trip(tmp_path):
    sc0 = load_scenario(DEMO / "scenario.toml")
    wet = dataclasses.replace(WetOptions(), detection_limit="zero", capture_rain=(0.6, 1.3))
    dry = DryOptions(wetness_rule="always_wet", seasonal_category=3)
    spec = dataclasses.replace(dry.particle_modes["pNO3"], fine_fraction=0.2)
    dry = dataclasses.replace(dry, particle_modes={**dry.particle_modes, "pNO3": spec})
    bud = BudgetOptions(sulfate_basis="total", bulk_correction="scale_wet", pair_split="all_gas")
    path = save_scenario(tmp_path / "mine.toml", inputs=sc0.input_paths(),
                         period={"resolution": "month", "start": "2020-01-01", "end": "2021-01-01"},
                         options={"wet": wet, "dry": dry, "budget": bud},
                         fixed_velocity={"SO2": 0.4}, site_overrides={"ridge": {"roughness_length_m": 1.1}})
    sc = load_scenario(path)
    assert sc.options["wet"] == wet
    assert sc.options["dry"] == dry
    assert sc.options["budget"] == bud
    assert sc.fixed_velocity == {"SO2": 0.4}
    assert sc.data["sites"] == {"ridge": {"roughness_length_m": 1.1}}
    assert sc.data["period"]["resolution"] == "month"
    assert sc.input_paths() == sc0.input_paths()


def test_docs_list_every_option():
    text = (Path(__file__).resolve().parent.parent / "docs" / "scenario.md").read_text()
    missing = [f"{sec}.{f.name}" for sec, cls in option_sections().items()
               for f in dataclasses.fields(cls) if f"`{f.name}`" not in text]
    assert not missing, f"options not documented in docs/scenario.md: {missing}"


def test_option_tables_are_current(tmp_path, monkeypatch):
    """docs/scenario.md's option tables match the dataclasses (regenerate with
    `python docs/make_option_tables.py`)."""
    import importlib.util
    docs = Path(__file__).resolve().parent.parent / "docs"
    spec = importlib.util.spec_from_file_location("mot", docs / "make_option_tables.py")
    mot = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mot)
    text = (docs / "scenario.md").read_text()
    for name, cls in option_sections().items():
        assert mot.table(name, cls) in text, f"[{name}] table out of date"
