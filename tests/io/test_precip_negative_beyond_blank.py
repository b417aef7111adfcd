"""A large negative ion concentration in precipitation (io.samples._concentrations).

A small negative result is a blank subtraction and is censored as below detection.
Old code censored every negative one so, -50 mg/L of sulfate too: with no detection
limit known, the "zero" treatment of censored values then read the week's sulfate as a
complete-looking 0.  Beyond -0.5 mg/L of the ion (about ten times the detection limits
of the major ions by ion chromatography, from memory; our choice) the value is masked
with its reason: missing, not below detection.  Built from the invented demo network.
"""
from pathlib import Path

import numpy as np
import pytest

from workbench.io import read_precipitation, read_sites
from workbench.wet import qa

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
LINES = (DEMO / "precipitation.csv").read_text().splitlines()
HEAD = LINES[0].split(",")


@pytest.fixture(scope="module")
def cat():
    return read_sites(DEMO / "sites.toml")


def _read(tmp_path, cat, column, value, row=5):
    out = list(LINES)
    c = out[row].split(",")
    c[HEAD.index(column)] = value
    out[row] = ",".join(c)
    p = tmp_path / "p.csv"
    p.write_text("\n".join(out) + "\n")
    ds, led = read_precipitation(p, cat)
    t = led.table
    return ds, t[t["line"].astype(int) == row + 1]


@pytest.mark.parametrize("column, sp, value", [("SO4 [mg/L]", "SO4", "-50"),
                                               ("NH4_as_N [mg/L]", "NH4", "-0.9"),
                                               ("Cl [mg/L]", "Cl", "-3.2")])
def test_a_large_negative_is_masked_with_its_reason(tmp_path, cat, column, sp, value):
    ds, row = _read(tmp_path, cat, column, value)
    assert list(row["reason"]) == [f"{sp} negative beyond the blank tolerance -0.5 mg/L "
                                   "(masked)"]
    assert list(row["status"]) == ["flagged"]
    i = int(np.flatnonzero(ds["line"].values == 6)[0])
    assert not bool(ds[f"{sp}_censored"].values[i])       # missing, not below detection
    zero = qa.censored_value(ds[sp].values, ds[f"{sp}_censored"].values,
                             ds[f"{sp}_detection_limit"].values, "zero")
    assert np.isnan(zero[i])                               # never a complete-looking 0


def test_a_small_negative_stays_censored(tmp_path, cat):
    ds, row = _read(tmp_path, cat, "SO4 [mg/L]", "-0.120")
    assert list(row["reason"]) == ["SO4 negative (censored)"]
    i = int(np.flatnonzero(ds["line"].values == 6)[0])
    assert bool(ds["SO4_censored"].values[i])


@pytest.mark.parametrize("value, masked", [("-0.45", False), ("-0.55", True)])
def test_the_tolerance_is_in_mg_per_litre_of_the_ion(tmp_path, cat, value, masked):
    """Either side of -0.5 mg/L of sulfate (the amount in mol m-3 times the molar mass
    back to mg/L)."""
    _, row = _read(tmp_path, cat, "SO4 [mg/L]", value)
    assert ("beyond the blank tolerance" in row["reason"].iloc[0]) == masked
