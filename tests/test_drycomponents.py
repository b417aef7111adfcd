"""The pair bracket of dry N (workbench/drypairs.py): a pair whose members are never
in one sample is combined across samplers, and a note says which samplers and periods.
Invented concentrations."""
from __future__ import annotations

import numpy as np
import pandas as pd
import xarray as xr

from pair_reference import sample_by_sample_move
from workbench.drypairs import combined_notes as _combined_notes


def _air():
    # farm: NH3 on a monthly passive sampler, pNH4 on weekly filters (never one row);
    # ridge: both on the same filter rows
    site = np.array(["farm", "farm", "farm", "ridge", "ridge"], dtype=object)
    sampler = np.array(["FP-N", "FF-1", "FF-1", "RF-1", "RF-1"], dtype=object)
    start = pd.to_datetime(["2021-01-01", "2021-01-01", "2021-01-08", "2021-01-01",
                            "2021-01-08"]).values
    end = pd.to_datetime(["2021-02-01", "2021-01-08", "2021-01-15", "2021-01-08",
                          "2021-01-15"]).values
    nh3 = np.array([6.5, np.nan, np.nan, 0.8, 0.9])
    pnh4 = np.array([np.nan, 1.2, 1.4, 0.5, 0.6])
    return xr.Dataset({"site": ("period", site), "sampler_id": ("period", sampler),
                       "start": ("period", start), "end": ("period", end),
                       "NH3": ("period", nh3), "pNH4": ("period", pnh4)})


def test_members_never_in_one_sample_are_combined_and_named():
    air = _air()
    notes = _combined_notes(air, "ammonium")
    assert len(notes) == 1
    assert notes[0].startswith("NH3 and pNH4 at farm: the ammonium bracket")
    assert "combined across samplers" in notes[0]
    # the samplers and their usual sample length
    assert "NH3 from FP-N (1 samples of about 31 d)" in notes[0]
    assert "pNH4 from FF-1 (2 samples of about 7 d)" in notes[0]
    assert "(3 samples hold one member only)" in notes[0]
    # moving the concentrations sample by sample (the former bracket and pair_split)
    # leaves the farm empty, which is why both add the members' depositions instead
    moved = sample_by_sample_move(air, "ammonium", "NH3")["NH3"].values
    assert np.isnan(moved[:3]).all()
    np.testing.assert_allclose(moved[3:], [1.3, 1.5])


def test_no_note_when_a_member_is_missing_or_the_pair_shares_samples():
    air = _air()
    air["NH3"][:3] = np.nan                 # farm measures no NH3 at all: nothing to bracket
    assert _combined_notes(air, "ammonium") == []
    air = _air().isel(period=[3, 4])         # ridge alone: every sample holds both
    assert _combined_notes(air, "ammonium") == []


def test_a_censored_member_counts_as_present():
    air = _air().isel(period=[3, 4])
    air["pNH4"][1] = np.nan
    air["pNH4_censored"] = ("period", np.array([False, True]))
    assert _combined_notes(air, "ammonium") == []
    air["pNH4_censored"][1] = False
    assert "1 samples hold one member only" in _combined_notes(air, "ammonium")[0]
