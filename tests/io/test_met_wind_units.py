"""A wind speed in knots under an ``m/s`` header (x 1.94) is named per site and column
(workbench/io/metwind.py).  Before, only a site whose median passed 10 m/s got a flag
(``km/h under an m/s header?``); the others were read 1.94 x too windy in silence."""
from pathlib import Path

import numpy as np
import pandas as pd
import pint
import pytest

from workbench.io import read_met, read_sites

from tiny_inputs import ledger_reasons

KNOTS = 3600.0 / 1852.0            # 1 kn = 1852 m per hour (exact)
DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="module")
def demo_two_months():
    """Two months of the demo met at ridge (u* measured) and farm (none)."""
    met = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    met = met[met["site"].isin(["ridge", "farm"]) & (met["time"] < "2016-03-01")]
    return met.reset_index(drop=True)


def _read(tmp_path, met, factor=1.0):
    m = met.copy()
    m["wind_speed [m/s]"] = (m["wind_speed [m/s]"] * factor).round(1)
    p = tmp_path / "met.csv"
    p.write_text("# time_label: end\n" + m.to_csv(index=False))
    return read_met(p, read_sites(DEMO / "sites.toml"))


def test_knots_named_at_every_site(tmp_path, demo_two_months):
    met, led = _read(tmp_path, demo_two_months, KNOTS)
    wind = [r for r in ledger_reasons(led) if "wind" in r]
    ridge = [r for r in wind if "site ridge" in r]
    farm = [r for r in wind if "site farm" in r]
    # ridge: its measured u* says the wind is ~1.9 x its log-law wind
    assert len(ridge) == 1 and "measured friction velocity" in ridge[0]
    assert "knots under an m/s header (x 1.94)?" in ridge[0] and ridge[0].endswith("(kept)")
    # farm, no u*: the potential wind above what open land has, knots named first
    assert len(farm) == 1 and "knots (x 1.94" in farm[0] and "potential wind" in farm[0]
    assert "column wind_speed [m/s]" in farm[0]
    # kept as read, never converted
    got = met["wind_speed"].sel(site="farm").values
    want = (demo_two_months.loc[demo_two_months.site == "farm", "wind_speed [m/s]"]
            * KNOTS).round(1).to_numpy()
    assert np.allclose(got[np.isfinite(got)], want)


def test_demo_winds_in_ms_pass(tmp_path, demo_two_months):
    _, led = _read(tmp_path, demo_two_months)
    assert not [r for r in ledger_reasons(led) if "wind" in r]


def test_kmh_at_a_site_with_ustar_is_named_by_ustar(tmp_path, demo_two_months):
    _, led = _read(tmp_path, demo_two_months, 3.6)
    ridge = [r for r in ledger_reasons(led) if "site ridge" in r]
    assert len(ridge) == 1 and "km/h under an m/s header (x 3.60)?" in ridge[0]
    # one message per fault: not the median rule's flag as well on ridge's rows
    rows = led.table[led.table["reason"].str.contains("site ridge", regex=False)]
    assert not rows["reason"].str.contains("median above 10 m/s").any()


def test_factors_against_pint():
    from workbench.io.metwind import SLIP_FACTORS
    # pint's definitions of the knot and the mile per hour (a reference library)
    ureg = pint.UnitRegistry()
    assert SLIP_FACTORS["knots"] == pytest.approx(1 / ureg("knot").to("m/s").magnitude,
                                                  rel=1e-12)
    assert SLIP_FACTORS["mph"] == pytest.approx(1 / ureg("mph").to("m/s").magnitude,
                                                rel=1e-12)
    assert SLIP_FACTORS["km/h"] == pytest.approx(1 / ureg("km/h").to("m/s").magnitude)


def test_potential_wind_factor_by_hand():
    from workbench.io.metwind import potential_wind_factor
    # the neutral log law worked by hand (common practice): 6 m over z0 = 0.1 m to the
    # 60 m blending height, then down to 10 m over 0.03 m
    want = np.log(600.0) / np.log(60.0) * np.log(10 / 0.03) / np.log(2000.0)
    assert potential_wind_factor(6.0, 0.1, 0.0) == pytest.approx(want, rel=1e-12)
    assert potential_wind_factor(10.0, 0.03, 0.0) == pytest.approx(1.0)


def test_potential_wind_just_above_the_threshold_reads_above_it():
    """A potential wind of 6.53 m/s (the demo grid's urban cell) read "6.5 m/s ...
    expected below 6.5 m/s": the note now writes the digits that show it above (the
    rule, 6.5 m/s, is unchanged)."""
    from workbench.io.metwind import (POTENTIAL_MEDIAN_MAX, mast_roughness,
                                      potential_wind_factor, wind_unit_findings)
    cat = read_sites(DEMO / "sites.toml")
    site = cat["farm"]
    _, z0, d = mast_roughness([site])
    factor = float(potential_wind_factor(site.wind_height_m, z0[0], d[0]))
    u = np.full(800, 6.53 / factor)                 # 800 h (a month is 720), no u*
    _, found = wind_unit_findings(u, None, np.zeros(800, int), ["farm"], cat)
    assert len(found) == 1
    note = found[0][1]
    assert ", 6.53 m/s as the potential wind" in note, note
    assert f"expected below {POTENTIAL_MEDIAN_MAX:g} m/s" in note      # the rule as before
    # a value well above keeps one decimal
    _, found = wind_unit_findings(u * 7.04 / 6.53, None, np.zeros(800, int), ["farm"], cat)
    assert ", 7.0 m/s as the potential wind" in found[0][1]
