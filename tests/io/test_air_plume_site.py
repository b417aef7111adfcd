"""NH3 of a sampler in a source's plume (weekly or monthly medians of some hundreds of
ug/m3 beside livestock housing) has the numbers of a grassland written in ng/m3: the
unit-slip rule masked it whole, with nothing a user could write to keep it.  Now the
flag says how, and a site that declares ``source_plume = ["NH3"]`` keeps its values
(those above the 1000 ug/m3 maximum flagged, kept)."""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from workbench.errors import InputError
from workbench.io import read_air, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def _plume_air(tmp_path):
    """The demo's air with farm's monthly passive NH3 sampler (FRM-N1, 96 samples) in a
    plume: log-normal, median 500 ug/m3, log sd 1.0 (an invented record that the rule
    before judged in ng/m3: 27 % of its values above 1000 ug/m3)."""
    lines = (DEMO / "air.csv").read_text().splitlines()
    d = pd.read_csv(DEMO / "air.csv", comment="#", dtype=str)
    sel = (d["sampler_id"] == "FRM-N1").to_numpy()
    v = 500.0 * np.exp(np.random.default_rng(0).normal(0.0, 1.0, sel.sum()))
    d.loc[sel, "NH3 [ug/m3]"] = [f"{x:.1f}" for x in v]
    p = tmp_path / "air.csv"
    p.write_text(lines[0] + "\n" + d.to_csv(index=False))
    return p, v


def _sites(tmp_path, extra):
    text = (DEMO / "sites.toml").read_text().replace(
        'receptors = ["deciduous_forest", "grass"]',
        'receptors = ["deciduous_forest", "grass"]\n' + extra)
    p = tmp_path / "sites.toml"
    p.write_text(text)
    return p


def _farm_passive(ds):
    at = (ds["site"].values == "farm") & (ds["sampler_id"].values == "FRM-N1")
    return ds["NH3"].values[at]


def test_undeclared_plume_is_masked_and_told_how_to_keep(tmp_path):
    p, v = _plume_air(tmp_path)
    ds, led = read_air(p, read_sites(DEMO / "sites.toml"))
    assert np.isnan(_farm_passive(ds)).all()
    why = set(led.table["reason"].str.split("; ").explode())
    assert any("or a sampler in a source's plume? then write source_plume = [\"NH3\"]"
               in r for r in why)


def test_declared_plume_keeps_its_values(tmp_path):
    p, v = _plume_air(tmp_path)
    cat = read_sites(_sites(tmp_path, 'source_plume = ["NH3"]'))
    ds, led = read_air(p, cat)
    got = _farm_passive(ds)
    assert np.isfinite(got).all() and len(got) == len(v)          # none masked
    reasons = led.table["reason"].str.split("; ").explode()
    high = reasons[reasons.str.contains("source's plume", regex=False)]
    assert len(high) == int((np.round(v, 1) > 1000).sum())        # above the max: flagged
    assert set(high) == {"NH3 above the plausible 1000 ug/m3 at a sampler declared in a "
                         "source's plume, source_plume in sites.toml (kept)"}
    assert not reasons.str.contains("1000x too high").any()
    # the other sites' NH3 as before
    assert np.isfinite(ds["NH3"].values[ds["site"].values == "fell"]).all()


def test_declared_plume_site_in_ng_per_m3_is_still_a_slip(tmp_path):
    # the plume's own values written in ng/m3 (500,000 read as ug/m3): beyond what even a
    # plume holds (10 x the maximum), so judged in ng/m3 and masked
    p, v = _plume_air(tmp_path)
    d = pd.read_csv(p, comment="#", dtype=str)
    sel = (d["sampler_id"] == "FRM-N1").to_numpy()
    d.loc[sel, "NH3 [ug/m3]"] = [f"{x * 1000:.0f}" for x in v]
    p.write_text("# reference_state: ambient\n" + d.to_csv(index=False))
    ds, led = read_air(p, read_sites(_sites(tmp_path, 'source_plume = ["NH3"]')))
    assert np.isnan(_farm_passive(ds)).all()
    assert led.table["reason"].str.contains("1000x too high", regex=False).any()


def test_source_plume_names_an_air_species(tmp_path):
    with pytest.raises(InputError) as e:
        read_sites(_sites(tmp_path, 'source_plume = ["NH4"]'))
    msg = str(e.value)
    assert "unknown air species in source_plume" in msg and "NH4" in msg and "pNH4" in msg
