"""Unit and label slips in whole columns and whole files: a gauge read in inches under
``[mm]``, a column shifted by one row, the same week uploaded in two files
(docs/data_formats.md, "Unit slips" and "Duplicate uploads").  Invented sites; the
factors are pint's (1 inch = 25.4 mm, exact by definition).
"""
import numpy as np
import pandas as pd
import pytest

from workbench.io import read_precipitation, read_sites

from tiny_inputs import PRECIP, SITES

HEAD = PRECIP.splitlines()[0]


def _cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _weeks(n=20, site="alpha", gauge_factor=1.0, seed=1):
    """n weekly wet samples of `site`: gauge and sample depth [mm] within 5 % (capture
    passes), ions of a plausible balance; the gauge written times `gauge_factor`."""
    rng = np.random.default_rng(seed)
    t = pd.date_range("2020-01-07T09:00", periods=n + 1, freq="7D")
    depth = np.round(rng.uniform(5, 40, n), 1)
    rows = []
    for a, b, d in zip(t[:-1], t[1:], depth):
        rows.append(f"{site},{a:%Y-%m-%dT%H:%M},{b:%Y-%m-%dT%H:%M},w1,"
                    f"{d * gauge_factor:.2f},{d * 0.97:.1f},4.8,20.0,1.5,0.3,25.0,1.0,0.6,")
    return rows


def test_gauge_in_inches_under_mm_is_named(tmp_path):
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + _weeks(gauge_factor=1 / 25.4)) + "\n")
    ds, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    notes = [n for n in led.notes if "gauge depth at alpha" in n]
    assert len(notes) == 1 and "the values look like inch under a mm header" in notes[0], \
        led.notes
    # the values are not changed
    assert float(ds["gauge_depth"].values[0]) < 2
    (tmp_path / "q.csv").write_text("\n".join([HEAD] + _weeks()) + "\n")
    _, led = read_precipitation(tmp_path / "q.csv", _cat(tmp_path))
    assert not [n for n in led.notes if "look like" in n]


def _with_dry_weeks(n=30):
    rows = _weeks(n)
    for k in (3, 4, 9, 15, 22, 27):                   # dry weeks: gauge 0, no chemistry
        c = rows[k].split(",")
        rows[k] = ",".join(c[:4] + ["0.0", "0.0"] + [""] * 8)
    return rows


def _shift(rows, column, lag):
    k = HEAD.split(",").index(column)
    cells = [r.split(",") for r in rows]
    col = [c[k] for c in cells]
    col = ([""] + col[:-1]) if lag > 0 else (col[1:] + [""])
    for c, v in zip(cells, col):
        c[k] = v
    return [",".join(c) for c in cells]


@pytest.mark.parametrize("lag, way, line", [(1, "down", 5), (-1, "up", 6)])
def test_a_column_shifted_by_one_row_is_a_located_error(tmp_path, lag, way, line):
    from workbench.errors import InputError
    rows = _shift(_with_dry_weeks(), "SO4 [mg/L]", lag)
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + rows) + "\n")
    with pytest.raises(InputError) as exc:
        read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    msg = str(exc.value)
    # the error names the first value on a row without other chemistry: the dry weeks
    # are lines 5 and 6; down, line 5 holds line 4's sulfate; up, line 6 holds line 7's
    assert msg.startswith(f"{tmp_path / 'p.csv'}, line {line}, column 'SO4 [mg/L]': a column "
                          f"shifted one row {way}? "), msg
    assert "expected each value on the row of its sample (move the column back one row)" in msg


def test_dry_weeks_and_a_partly_analysed_sample_are_no_shift(tmp_path):
    rows = _with_dry_weeks()
    c = rows[12].split(",")
    c[8] = ""                                            # one sample without sulfate
    rows[12] = ",".join(c)
    c = rows[9].split(",")
    c[8] = "1.2"                                         # a dry week's funnel rinse: SO4 only
    rows[9] = ",".join(c)
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + rows) + "\n")
    ds, _ = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert ds.sizes["sample"] == 30


# ------------------------------------------------ one week uploaded in two exports
def test_the_same_weeks_from_two_exports_are_dropped_as_repeats(tmp_path):
    # two exports put together (the scenario takes one file per kind): the repeated
    # rows are exact repeats, dropped with their note (the duplicate-upload rule)
    rows = _weeks(10)
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + rows + rows[6:]) + "\n")
    ds, led = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert ds.sizes["sample"] == 10
    assert "p.csv: 4 exact repeats dropped: lines 12-15 repeat lines 8-11" in led.notes


@pytest.mark.parametrize("spelling", ["W1", "w 1", "w_1"])
def test_the_same_weeks_under_two_spellings_of_a_sampler_are_refused(tmp_path, spelling):
    # before: read as two collocated samplers and averaged, the week counted twice
    from workbench.errors import InputError
    rows = [r.replace(",w1,", ",w-1,") for r in _weeks(10)]
    again = [r.replace(",w-1,", f",{spelling},") for r in rows[6:]]
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + rows + again) + "\n")
    with pytest.raises(InputError) as exc:
        read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert str(exc.value) == (
        f"{tmp_path / 'p.csv'}, line 12, column 'sampler_id': sampler_id differs from 'w-1' "
        "(line 8) only in case, blanks or separators, over the same period (one sample "
        f"uploaded twice under two spellings?): got '{spelling}', expected one spelling of "
        "each sampler id (keep one row of the sample)")


def test_two_spellings_over_different_periods_are_read(tmp_path):
    rows = _weeks(10)
    rows[5:] = [r.replace(",w1,", ",W1,") for r in rows[5:]]       # renamed mid-record
    (tmp_path / "p.csv").write_text("\n".join([HEAD] + rows) + "\n")
    ds, _ = read_precipitation(tmp_path / "p.csv", _cat(tmp_path))
    assert ds.sizes["sample"] == 10


# ------------------------------------------- met precipitation against the gauge
def _met_and_samples(n_weeks, met_factor):
    """Weekly samples (gauge depth [mm]) and hourly met precipitation whose week sums are
    the gauge depths times `met_factor`, spread over 20 wet hours a week."""
    import xarray as xr
    rng = np.random.default_rng(3)
    t = pd.date_range("2021-01-01T01:00", periods=24 * 7 * n_weeks, freq="h")
    gauge = np.round(rng.uniform(5, 40, n_weeks), 1)
    p = np.zeros(len(t))
    for w in range(n_weeks):
        p[w * 168 + 10:w * 168 + 30] = gauge[w] * met_factor / 20
    met = xr.Dataset({"precipitation": (("site", "time"), p[None])},
                     coords={"site": ["alpha"], "time": t.values})
    starts = (t[0] - pd.Timedelta("1h") + pd.to_timedelta(np.arange(n_weeks) * 7, "D")).values
    samples = xr.Dataset({"site": ("sample", ["alpha"] * n_weeks),
                          "line": ("sample", np.arange(2, n_weeks + 2)),
                          "start": ("sample", starts),
                          "end": ("sample", starts + np.timedelta64(7, "D")),
                          "gauge_depth": ("sample", gauge)})
    return met, samples


@pytest.mark.parametrize("factor, near, words", [(1 / 25.4, "1/25.4", "inch and mm"),
                                                 (10.0, "10", "cm and mm")])
def test_met_precipitation_in_another_unit_than_the_gauge_is_named(factor, near, words):
    from workbench.io.metchecks import gauge_comparison, gauge_slip_notes
    gc = gauge_comparison(*_met_and_samples(12, factor))
    assert gc["suspicious"].all()
    notes = gauge_slip_notes(gc, "met.csv")
    assert len(notes) == 1 and notes[0].startswith(
        "met.csv: precipitation at alpha: 12 of 12 samples far from their gauge depth")
    assert f"near {near}: {words} mixed between the met's precipitation and the gauge" in notes[0]


def test_met_precipitation_that_agrees_or_scatters_gets_no_note():
    from workbench.io.metchecks import gauge_comparison, gauge_slip_notes
    assert gauge_slip_notes(gauge_comparison(*_met_and_samples(12, 0.9)), "met.csv") == []
    # far off by a factor that is no unit (3): flagged samples, but no unit named
    gc = gauge_comparison(*_met_and_samples(12, 3.0))
    assert gc["suspicious"].all() and gauge_slip_notes(gc, "met.csv") == []


def test_met_precipitation_a_tenth_of_the_gauge_asks_for_tenths_of_mm():
    # a gauge count of 0.1 mm written as mm (common practice of some loggers and
    # networks) gives met/gauge near 1/10 too; before, cm and mm only
    from workbench.io.metchecks import gauge_comparison, gauge_slip_notes
    notes = gauge_slip_notes(gauge_comparison(*_met_and_samples(12, 0.1)), "met.csv")
    assert len(notes) == 1 and notes[0].endswith(
        "near 1/10: cm and mm mixed between the met's precipitation and the gauge depths? "
        "Or tenths of mm (a count of 0.1 mm) taken for mm?"), notes
