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


def test_hour_ends_written_at_minute_59_get_the_hint(tmp_path, cat, met_reader):
    # before: "timestamp not on the hour" alone
    from workbench.errors import InputError
    import pytest
    p = plausible_met_csv(tmp_path, n_days=2)
    df = pd.read_csv(p)
    for late, seen in (("1min", "minute 59, its last minute included? write each hour end "
                                "on the hour: 01:00, not 00:59)"),
                       ("1s", "59:59, its last second included? write each hour end on "
                              "the hour: 01:00:00, not 00:59:59)")):
        d = df.copy()
        d["time"] = (pd.to_datetime(d["time"]) - pd.Timedelta(late)).dt.strftime(
            "%Y-%m-%dT%H:%M" if late == "1min" else "%Y-%m-%dT%H:%M:%S")
        d.to_csv(p, index=False)
        with pytest.raises(InputError) as exc:
            met_reader(p, cat)
        assert f"{p}, line 2, column 'time': timestamp not on the hour (an hour end " \
               f"written at {seen}: got '{d['time'].iloc[0]}'" in str(exc.value), exc.value


def test_a_summary_row_in_the_time_column_is_named(tmp_path, cat, met_reader, write):
    # before: "not an ISO 8601 timestamp: got 'Total'" alone (a site cell of 'Total'
    # was named a summary row before too)
    from workbench.errors import InputError
    from workbench.io import read_precipitation
    from tiny_inputs import PRECIP
    import pytest
    p = plausible_met_csv(tmp_path, n_days=2)
    p.write_text(p.read_text() + "alpha,Total,,,,,12.0,\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    assert "line 50, column 'time': not an ISO 8601 timestamp (a totals or summary row " \
           "from a spreadsheet? remove it): got 'Total'" in str(exc.value), exc.value
    q = write("p.csv", PRECIP + "alpha,Mean,,w1,8.5,,,,,,,,,\n")
    with pytest.raises(InputError) as exc:
        read_precipitation(q, cat)
    assert "column 'start': not an ISO 8601 timestamp (a totals or summary row from a " \
           "spreadsheet? remove it): got 'Mean'" in str(exc.value), exc.value
