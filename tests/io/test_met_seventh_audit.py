"""The hourly met file of a seventh audit (docs/data_formats.md, "A seventh audit"):
radiation below 0 at night (a radiometer's offset) said in a note, and hours written
out of order read by their labels.  Invented site "alpha" of tiny_inputs (52 N, 5 E,
UTC+1).
"""
from __future__ import annotations

import numpy as np
import pandas as pd

from tiny_inputs import plausible_met_csv


def test_radiation_below_zero_at_night_is_noted_and_kept(tmp_path, cat, met_reader):
    # before: kept as read and taken as 0 by the dry chain, said nowhere
    p = plausible_met_csv(tmp_path, n_days=3)
    df = pd.read_csv(p)
    night = df["solar_radiation [W/m2]"] == 0
    df.loc[night, "solar_radiation [W/m2]"] = -np.round(np.linspace(0.5, 6.0, night.sum()), 1)
    df.to_csv(p, index=False)
    ds, led = met_reader(p, cat)
    note = [n for n in led.notes if "below 0" in n]
    assert note == [f"met.csv: solar_radiation at site 'alpha' below 0 in {int(night.sum())} h "
                    "(down to -6 W/m2; a radiometer's offset at night?): kept as read, taken "
                    "as 0 (no light) by the dry deposition chain"], led.notes
    assert float(ds["solar_radiation"].min()) == -6.0           # kept as read
    assert (led.table["status"] == "accepted").all()


def test_no_radiation_note_without_values_below_zero(tmp_path, cat, met_reader):
    _, led = met_reader(plausible_met_csv(tmp_path, n_days=3), cat)
    assert not [n for n in led.notes if "below 0" in n]


def test_hours_out_of_order_are_read_by_their_labels(tmp_path, cat, met_reader):
    # a spreadsheet sorted by another column, a block pasted back to front: each hour is
    # the hour its label names, the record complete (before too; guarded here)
    p = plausible_met_csv(tmp_path, n_days=3)
    df = pd.read_csv(p)
    df["temperature [degC]"] = np.arange(len(df)) * 0.1      # a value per hour to follow
    order = np.arange(len(df))
    order[10:30] = order[10:30][::-1]
    df.iloc[order].iloc[::-1].to_csv(p, index=False)        # the whole file back to front
    ds, led = met_reader(p, cat)
    t = ds["temperature"].sel(site="alpha").values - 273.15
    np.testing.assert_allclose(t, np.arange(len(df)) * 0.1, atol=1e-9)
    assert (np.diff(ds["time"].values) == np.timedelta64(1, "h")).all()
    assert any("complete hourly record" in n for n in led.notes), led.notes
