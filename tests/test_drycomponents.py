"""The pair bracket of dry N (workbench/drycomponents.py): a pair whose members are never
in one sample is named in a note, not left as an unexplained empty bracket.  Invented
concentrations."""
from __future__ import annotations

import numpy as np
import xarray as xr

from workbench.drycomponents import _pair_air, _unpaired_notes


def _air():
    # farm: NH3 on a monthly passive sampler, pNH4 on weekly filters (never one row);
    # ridge: both on the same filter rows
    site = np.array(["farm", "farm", "farm", "ridge", "ridge"], dtype=object)
    nh3 = np.array([6.5, np.nan, np.nan, 0.8, 0.9])
    pnh4 = np.array([np.nan, 1.2, 1.4, 0.5, 0.6])
    return xr.Dataset({"site": ("period", site), "NH3": ("period", nh3),
                       "pNH4": ("period", pnh4)})


def test_members_never_in_one_sample_are_named():
    air = _air()
    notes = _unpaired_notes(air, "ammonium")
    assert len(notes) == 1
    assert notes[0].startswith("NH3 and pNH4 at farm: the ammonium bracket")
    assert "no sample holds both" in notes[0]
    # and that is why the moved concentrations are empty there, and not at ridge
    moved = _pair_air(air, "ammonium", "NH3")["NH3"].values
    assert np.isnan(moved[:3]).all()
    np.testing.assert_allclose(moved[3:], [1.3, 1.5])


def test_no_note_when_a_member_is_missing_or_the_pair_shares_samples():
    air = _air()
    air["NH3"][:3] = np.nan                 # farm measures no NH3 at all: nothing to bracket
    assert _unpaired_notes(air, "ammonium") == []
    air = _air()
    air["NH3"][1] = 7.0                      # one sample holds both: the bracket is computed
    assert _unpaired_notes(air, "ammonium") == []
