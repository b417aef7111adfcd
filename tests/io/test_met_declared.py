"""A met slip the user confirms in sites.toml is put right when read
(workbench/io/metdeclared.py): ``met_wind_unit = "knots"`` converts the wind speed to m/s
with pint, ``met_precipitation = "daily_counter"`` differences the day's running total
back into each hour's amount.  Before, the keys were unknown (one error) and the values
could only be kept with a flag (wind) or masked (counter); the reader notes said nothing
of either."""
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pint
import pytest

from workbench.io import read_met, read_sites

from tiny_inputs import ledger_reasons

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
COL = "precipitation [mm]"
WIND = "wind_speed [m/s]"
#: pint's knot (a reference library): 1852 m per hour, exact by definition
KNOT_MS = pint.UnitRegistry()("knot").to("m/s").magnitude


@pytest.fixture(scope="module")
def demo_met():
    met = pd.read_csv(DEMO / "met.csv.gz", comment="#")
    return met[met["time"] < "2016-04-01"].reset_index(drop=True)


def _sites(tmp_path, **keys):
    """The demo catalogue with `keys` (site id -> TOML lines) added to those sites."""
    text = (DEMO / "sites.toml").read_text()
    for site, lines in keys.items():
        text = text.replace(f'id = "{site}"\n', f'id = "{site}"\n{lines}\n', 1)
    p = tmp_path / "sites.toml"
    p.write_text(text)
    return read_sites(p)


def _write(path, met):
    path.write_text("# time_label: end\n" + met.to_csv(index=False))
    return path


def _daily_counter(met, start_h=0):
    """The day's running total restarted at `start_h` (the file's clock)."""
    day = (pd.to_datetime(met["time"]) - pd.Timedelta(hours=start_h, minutes=1)).dt.floor("D")
    out = met.copy()
    out[COL] = met.groupby([met["site"], day])[COL].cumsum().round(1)
    return out


# ------------------------------------------------------------------ wind in knots
def test_knots_converted_match_the_ms_original(tmp_path, demo_met):
    met = demo_met[demo_met["site"].isin(["ridge", "farm"])].reset_index(drop=True)
    knots = met.copy()
    knots[WIND] = (met[WIND] / KNOT_MS).round(1)          # the logger's knots, 0.1 kn steps
    cat = _sites(tmp_path, ridge='met_wind_unit = "knots"', farm='met_wind_unit = "knots"')
    ds, led = read_met(_write(tmp_path / "met.csv", knots), cat)
    clean, _ = read_met(_write(tmp_path / "clean.csv", met), read_sites(DEMO / "sites.toml"))
    got, want = ds["wind_speed"].values, clean["wind_speed"].values
    ok = np.isfinite(want)
    assert np.isfinite(got[ok]).all()
    # within the rounding of the knots written: half a 0.1 kn step
    assert np.abs(got[ok] - want[ok]).max() <= 0.05 * KNOT_MS + 1e-12
    # the flag is gone, a note says what was converted
    assert not [r for r in ledger_reasons(led) if "wind" in r]
    notes = [n for n in led.notes if "met_wind_unit" in n]
    n_ridge = int(np.isfinite(knots.loc[knots.site == "ridge", WIND]).sum())
    assert notes[0] == (f"met ridge: wind_speed written in knots (met_wind_unit in the site "
                        f"catalogue; the header says m/s): {n_ridge:,} values converted to m/s "
                        f"(x {KNOT_MS:.4g}, pint), not judged by the wind unit check")
    assert len(notes) == 2 and notes[1].startswith("met farm: wind_speed written in knots")


@pytest.mark.parametrize("unit", ["mph", "km/h"])
def test_other_units_against_pint(tmp_path, demo_met, unit):
    met = demo_met[demo_met["site"] == "farm"].reset_index(drop=True)
    per = pint.UnitRegistry()(unit).to("m/s").magnitude     # pint (a reference library)
    written = met.copy()
    written[WIND] = met[WIND] / per                          # unrounded: the same numbers
    ds, _ = read_met(_write(tmp_path / "met.csv", written),
                     _sites(tmp_path, farm=f'met_wind_unit = "{unit}"'))
    want = met[WIND].to_numpy()
    got = ds["wind_speed"].sel(site="farm").values[:len(want)]
    assert np.allclose(got, want, rtol=1e-12, equal_nan=True)


def test_a_site_without_the_key_keeps_its_flag_and_gets_a_note(tmp_path, demo_met):
    met = demo_met[demo_met["site"].isin(["ridge", "farm"])].reset_index(drop=True)
    knots = met.copy()
    knots[WIND] = (met[WIND] / KNOT_MS).round(1)
    cat = _sites(tmp_path, ridge='met_wind_unit = "knots"')
    ds, led = read_met(_write(tmp_path / "met.csv", knots), cat)
    assert [r for r in ledger_reasons(led) if "wind" in r and "site farm" in r]
    assert not [r for r in ledger_reasons(led) if "wind" in r and "site ridge" in r]
    n_farm = int((knots.site == "farm").sum())
    (note,) = [n for n in led.notes if n.startswith("met farm: wind_speed flagged")]
    assert note == (f"met farm: wind_speed flagged at {n_farm:,} hours, kept as read: knots or "
                    "km/h under an m/s header? (the rows' reason says why); if so, "
                    'met_wind_unit = "knots" (or "km/h") for the site in the site catalogue '
                    "converts it to m/s when read")
    # the note counts the rows the ledger flags with that reason
    rows = led.table[led.table["reason"].str.contains("at site farm has a median", regex=False)]
    assert len(rows) == n_farm


# ------------------------------------------------------------------ daily counter
@pytest.mark.parametrize("start_h,key", [(0, ""), (9, ""), (9, "met_counter_restart_hour = 9")])
def test_differenced_counter_is_the_hourly_record(tmp_path, demo_met, start_h, key):
    clean, _ = read_met(_write(tmp_path / "clean.csv", demo_met), read_sites(DEMO / "sites.toml"))
    lines = 'met_precipitation = "daily_counter"' + (f"\n{key}" if key else "")
    cat = _sites(tmp_path, **{s: lines for s in ("ridge", "fell", "mere", "farm")})
    ds, led = read_met(_write(tmp_path / "met.csv", _daily_counter(demo_met, start_h)), cat)
    got, want = ds["precipitation"].values, clean["precipitation"].values
    # the record's first hour (01:00) follows a restart at 00:00 only: after one at 09:00
    # it holds the total since 09:00 the day before, which the file does not have
    head = 0 if start_h == 0 else 1
    assert np.isnan(got[:, :head]).all()
    assert np.array_equal(got[:, head:], want[:, head:], equal_nan=True)  # hour by hour
    assert (np.nansum(got[:, head:], axis=1) == np.nansum(want[:, head:], axis=1)).all()
    reasons = [r for r in ledger_reasons(led) if "precipitation" in r]
    assert len(reasons) == 4 * head
    assert all("the hour before is missing, so this hour's amount cannot be told" in r
               for r in reasons)
    notes = [n for n in led.notes if "daily counter" in n]
    assert len(notes) == 4
    for site, note in zip(("ridge", "fell", "mere", "farm"), notes):
        n = int((demo_met["site"] == site).sum())
        src = ("met_counter_restart_hour" if key else
               f"the hour from the data: 100% of its")
        assert note.startswith(f"met {site}: precipitation read as a daily counter restarted "
                               f"at {start_h:02d}:00, the file's clock (met_precipitation in "
                               f"the site catalogue; {src}")
        # every row accounted for: differenced + first hours (+ the masked one) = rows read
        first = int(note.split("differenced into each hour's amount, ")[1].split(" ")[0])
        diffed = int(note.split("): ")[1].split(" hours differenced")[0].replace(",", ""))
        assert first + diffed + head == n and abs(first - n / 24) <= 1
        assert note.endswith("taken as read" if not head else "taken as read; masked: 1 hour "
                             "whose hour before is missing")


def test_a_gap_and_a_manual_reset_are_masked_not_guessed(tmp_path, demo_met):
    met = _daily_counter(demo_met[demo_met["site"] == "farm"].reset_index(drop=True))
    t = met["time"]
    gap = t.isin(["2016-02-10T05:00", "2016-02-10T06:00"])          # two hours missing
    met = met[~gap].reset_index(drop=True)
    # a March day with rain before 11:00, its counter zeroed by hand then
    at11 = met[met["time"].str.startswith("2016-03") & met["time"].str.endswith("T11:00")
               & (met[COL] > 0.5)]
    day, before = at11["time"].iloc[0][:10], at11[COL].iloc[0]
    reset = (met["time"] >= f"{day}T12:00") & (met["time"] <= f"{day}T23:00")
    met.loc[reset, COL] = (met.loc[reset, COL] - before).round(1)
    cat = _sites(tmp_path, farm='met_precipitation = "daily_counter"')
    ds, led = read_met(_write(tmp_path / "met.csv", met), cat)
    tab = led.table
    after_gap = tab[tab["reason"].str.contains("the hour before is missing", regex=False)]
    falls = tab[tab["reason"].str.contains("not the first after its restart", regex=False)]
    assert len(after_gap) == 1 and len(falls) == 1
    line = int(met.index[met["time"] == "2016-02-10T07:00"][0]) + 3   # comment + header
    assert int(after_gap["line"].iloc[0]) == line
    assert (after_gap["status"] == "flagged").all()
    pr = ds["precipitation"].sel(site="farm")
    assert int(np.isnan(pr.values).sum()) == 2 + 2     # the two hours missing, two masked
    utc = pd.Timestamp(f"{day}T12:00") - pd.Timedelta(hours=cat["farm"].utc_offset_h)
    assert np.isnan(pr.sel(time=utc).item())
    (note,) = [n for n in led.notes if "daily counter" in n]
    assert note.endswith("; masked: 1 hour falling from the hour before elsewhere than after "
                         "the restart, 1 hour whose hour before is missing")


def test_a_counter_not_declared_gets_a_note_with_counts(tmp_path, demo_met):
    met = _daily_counter(demo_met)
    _, led = read_met(_write(tmp_path / "met.csv", met), read_sites(DEMO / "sites.toml"))
    notes = [n for n in led.notes if "precipitation masked" in n]
    assert len(notes) == 4
    n = int((met["site"] == "farm").sum())
    assert notes[3] == (f"met farm: precipitation masked at {n:,} hours: a gauge counter "
                        "restarted each day at 00:00? (the rows' reason says why); if so, "
                        'met_precipitation = "daily_counter" for the site in the site catalogue '
                        "differences it into each hour's amount when read")


# ------------------------------------------------------------------ provenance
def test_notes_reach_provenance_and_report(tmp_path):
    """The tiny budget scenario of tests/test_budget.py with its wind written in knots and
    its rain as a daily counter, both declared: the same budget as the clean files, and
    the notes of what was converted in provenance.json's input_notes and report.html."""
    import html

    import test_budget as tb
    from workbench.cli import main
    clean, slips = tmp_path / "clean", tmp_path / "slips"
    for d in (clean, slips):
        d.mkdir()
        tb._write(d)
    (slips / "sites.toml").write_text(tb.SITES.replace(
        "utc_offset_h = 0", 'utc_offset_h = 0\nmet_wind_unit = "knots"\n'
        'met_precipitation = "daily_counter"\nmet_counter_restart_hour = 0', 1))
    met = pd.read_csv(slips / "met.csv")
    met[WIND] = met[WIND] / KNOT_MS
    day = (pd.to_datetime(met["time"]) - pd.Timedelta(minutes=1)).dt.floor("D")
    met[COL] = met.groupby(day)[COL].cumsum()
    met.to_csv(slips / "met.csv", index=False)
    for d in (clean, slips):
        assert main(["run", str(d / "scenario.toml"), "--out", str(d / "out"), "--quiet"]) == 0
    a = pd.read_csv(clean / "out" / "budget.csv")
    b = pd.read_csv(slips / "out" / "budget.csv")
    pd.testing.assert_frame_equal(a, b, rtol=1e-9)
    notes = json.loads((slips / "out" / "provenance.json").read_text())["input_notes"]
    wind = [n for n in notes if n.startswith("met alpha: wind_speed written in knots")]
    rain = [n for n in notes if n.startswith("met alpha: precipitation read as a daily counter "
                                             "restarted at 00:00")]
    assert len(wind) == 1 and len(rain) == 1
    assert "met_counter_restart_hour" in rain[0] and "hours differenced" in rain[0]
    report = (slips / "out" / "report.html").read_text()
    assert html.escape(wind[0]) in report and html.escape(rain[0]) in report


def test_suspected_counter_note_reaches_provenance(tmp_path):
    """Undeclared, a daily counter is masked, and its note with the count of hours and the
    key that acts on it is in provenance.json's input_notes and report.html."""
    import html

    import test_budget as tb
    from workbench.cli import main
    tb._write(tmp_path)
    met = pd.read_csv(tmp_path / "met.csv")
    t = pd.to_datetime(met["time"])
    met[COL] = np.where(t.dt.hour.isin([10, 11, 12]), 0.2, 0.0)      # rain every morning
    day = (t - pd.Timedelta(minutes=1)).dt.floor("D")
    met[COL] = met.groupby(day)[COL].cumsum().round(1)                # as a daily counter
    met.to_csv(tmp_path / "met.csv", index=False)
    assert main(["run", str(tmp_path / "scenario.toml"), "--out", str(tmp_path / "out"),
                 "--quiet"]) == 0
    notes = json.loads((tmp_path / "out" / "provenance.json").read_text())["input_notes"]
    (note,) = [n for n in notes if "precipitation masked" in n]
    assert note.startswith(f"met alpha: precipitation masked at {len(met):,} hours: a gauge "
                           "counter restarted each day at 00:00?")
    assert 'met_precipitation = "daily_counter"' in note
    assert html.escape(note) in (tmp_path / "out" / "report.html").read_text()


def test_a_restart_hour_against_the_data_is_named(tmp_path, demo_met):
    # restarted at 00:00, declared at 09:00: each day's fall at 01:00 is masked, the
    # note names the hour the falls come at
    met = _daily_counter(demo_met[demo_met["site"] == "farm"].reset_index(drop=True))
    cat = _sites(tmp_path, farm='met_precipitation = "daily_counter"\n'
                                "met_counter_restart_hour = 9")
    _, led = read_met(_write(tmp_path / "met.csv", met), cat)
    (note,) = [n for n in led.notes if "daily counter" in n]
    assert "(met_precipitation in the site catalogue; met_counter_restart_hour; its falls " \
           "come at the hour ending 01:00 (100% of " in note and "check the hour" in note
    falls = led.table["reason"].str.contains("not the first after its restart", regex=False)
    assert int(falls.sum()) > 20


def test_the_line_reader_applies_the_keys_too(tmp_path, demo_met, monkeypatch):
    """The line-by-line reader (files the chunked one leaves to it) gives the same."""
    import workbench.io.metfast as metfast
    met = _daily_counter(demo_met[demo_met["site"] == "farm"].reset_index(drop=True))
    met[WIND] = met[WIND] / KNOT_MS
    cat = _sites(tmp_path, farm='met_wind_unit = "knots"\nmet_precipitation = "daily_counter"')
    p = _write(tmp_path / "met.csv", met)
    fast, fast_led = read_met(p, cat)
    monkeypatch.setattr(metfast, "read_met_csv_fast", lambda path, catalogue: None)
    slow, slow_led = read_met(p, cat)
    for name in ("wind_speed", "precipitation"):
        assert np.array_equal(fast[name].values, slow[name].values, equal_nan=True)
    assert [n for n in fast_led.notes if "met_" in n] == [n for n in slow_led.notes
                                                          if "met_" in n]
    assert len([n for n in slow_led.notes if "met_" in n]) == 2


def test_netcdf_met_applies_the_keys_too(tmp_path, demo_met):
    """A NetCDF met file (dims site, time) read with the keys: the m/s and hourly record."""
    met = demo_met[demo_met["site"] == "farm"].reset_index(drop=True)
    clean, _ = read_met(_write(tmp_path / "clean.csv", met), read_sites(DEMO / "sites.toml"))
    nc = clean.drop_vars("row_present").copy()
    nc["wind_speed"] = nc["wind_speed"] / KNOT_MS
    nc["wind_speed"].attrs["units"] = "m s-1"                  # the header's slip
    local_day = (nc["time"] + np.timedelta64(60, "m") - np.timedelta64(1, "m")).dt.floor("D")
    nc["precipitation"] = nc["precipitation"].groupby(local_day).cumsum().round(1)
    nc["precipitation"].attrs["units"] = "mm"
    nc.to_netcdf(tmp_path / "met.nc", engine="scipy")
    cat = _sites(tmp_path, farm='met_wind_unit = "knots"\nmet_precipitation = "daily_counter"')
    back, led = read_met(tmp_path / "met.nc", cat)
    np.testing.assert_allclose(back["wind_speed"].values, clean["wind_speed"].values,
                               rtol=1e-12)
    got, want = back["precipitation"].values, clean["precipitation"].values
    assert np.isnan(got[0, 0]) or got[0, 0] == want[0, 0]
    assert np.array_equal(got[:, 1:], want[:, 1:], equal_nan=True)
    assert len([n for n in led.notes if "met_" in n]) == 2


def test_a_counter_that_never_falls_has_no_restart_to_find():
    """Without met_counter_restart_hour the restart hour comes from the falls: a record of
    zeros reads as 0, one that rises and never falls is masked (its hour unknown)."""
    from workbench.io.metcounter import daily_reset_sites
    from workbench.io.metdeclared import difference_daily_counter
    t = np.datetime64("2020-01-01T01:00") + np.arange(72) * np.timedelta64(1, "h")
    t = np.r_[t, t]
    codes = np.repeat([0, 1], 72)
    pr = np.r_[np.zeros(72), np.round(np.arange(72) * 0.1, 1)]
    found = daily_reset_sites(pr, codes, 2, t, np.zeros(2))[1:]
    got, why, notes = difference_daily_counter(pr, codes, t, np.zeros(2), ["dry", "rising"],
                                               np.ones(2, bool), np.full(2, -1), found)
    assert (got[:72] == 0).all() and np.isnan(got[72:]).all()
    assert (why[:72] == "").all() and (why[72:] != "").all()
    assert "its restart hour cannot be told from the data, give met_counter_restart_hour" \
        in why[72]
    assert notes == ["met dry: precipitation declared a daily counter (met_precipitation in "
                     "the site catalogue), never above 0 in its record: 72 hours read as 0 mm",
                     "met rising: precipitation declared a daily counter, 72 hours masked: no "
                     "restart in its record, give met_counter_restart_hour in the site "
                     "catalogue"]


# ------------------------------------------------------- a declaration with nothing to act on
@pytest.mark.parametrize("fast", [True, False])
def test_a_declaration_with_no_value_to_act_on_is_named_where_written(tmp_path, demo_met,
                                                                       monkeypatch, fast):
    """``met_precipitation = "daily_counter"`` at a site whose precipitation cells are
    all empty (a met file without a gauge there; a file without the column at all is
    refused, the column being required) and ``met_wind_unit`` at a site without wind:
    one note each, naming sites.toml, the line of the key, the site, the key and value
    and what was expected.  Before: "never above 0 in its record: 0 hours read as 0 mm"
    and "0 values converted", neither saying where."""
    import workbench.io.metfast as metfast
    met = demo_met[demo_met["site"].isin(["ridge", "farm"])].reset_index(drop=True)
    met = met.astype({COL: object, WIND: object})
    met.loc[met["site"] == "farm", COL] = ""
    met.loc[met["site"] == "ridge", WIND] = ""
    cat = _sites(tmp_path, farm='met_precipitation = "daily_counter"',
                 ridge='met_wind_unit = "knots"')
    lines = (tmp_path / "sites.toml").read_text().splitlines()
    if not fast:
        monkeypatch.setattr(metfast, "read_met_csv_fast", lambda path, catalogue: None)
    _, led = read_met(_write(tmp_path / "met.csv", met), cat)
    n_farm, n_ridge = int((met["site"] == "farm").sum()), int((met["site"] == "ridge").sum())
    (rain,) = [n for n in led.notes if "met_precipitation" in n]
    (wind,) = [n for n in led.notes if "met_wind_unit" in n]
    line = lines.index('met_precipitation = "daily_counter"') + 1
    assert rain == (f"sites.toml, line {line}, site 'farm': met_precipitation = "
                    "\"daily_counter\" declared, but the met file holds no precipitation at "
                    f"the site (its column 'precipitation [mm]' empty at all {n_farm:,} of the "
                    "site's rows): nothing differenced; expected the day's running total in "
                    "the met file's precipitation column at this site's rows, or no "
                    "met_precipitation key (each hour's amount, the default)")
    line = lines.index('met_wind_unit = "knots"') + 1
    assert wind.startswith(f"sites.toml, line {line}, site 'ridge': met_wind_unit = \"knots\" "
                           "declared, but the met file holds no wind speed at the site (its "
                           f"column 'wind_speed [m/s]' empty at all {n_ridge:,} of the site's "
                           "rows): nothing converted; expected")
    assert not [n for n in led.notes if "0 values converted" in n or "0 hours read" in n]
