"""What a ledger holds per row of a large file: the mechanism, not a threshold.

A met file of a network has millions of rows, each in the ledger (accepted, flagged or
rejected, with its reasons).  They were held as four per-row arrays of codes (line,
site, reason, rejected: 13 bytes a row, about 0.11 MB a site-year of hourly met, held
from the reading to the end of the run; docs/performance.md "What the reading holds
for the blocks").  Now :class:`~workbench.io.ledger.CodedRows` keeps runs of rows that
share site, reason and rejection and whose lines step by 1, and spells the rows out
only when asked.  The small files' ledger tables (precipitation, air) held one new
``str`` a cell for the site, status and reason; now the equal cells share one.

The tests of what is held fail on the code before (per-row arrays; one ``str`` a
cell); the others hold the ledger's table, counts, reasons and added reasons to those
of :meth:`Ledger.for_rows` (the plain table: the reference, common practice).
Inputs: invented rows and the invented demo network.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import workbench.io.ledger as ledger_mod
from workbench.io.ledger import CodedRows, Ledger

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


def _held_bytes(part) -> int:
    """Bytes of the numpy arrays an object holds in its attributes."""
    return sum(v.nbytes for v in vars(part).values() if isinstance(v, np.ndarray))


def _hourly_rows(n_sites=10, hours=10_000, flagged_every=997):
    """Rows of an hourly met file: sites one after the other, a few flagged rows, a
    blank line between two sites, the last site's last hours rejected."""
    lines = np.arange(n_sites * hours) + 2
    lines[hours * 3:] += 1                               # a blank line before site 3
    sites = np.repeat(np.array([f"s{i}" for i in range(n_sites)], dtype=object), hours)
    reasons = np.full(n_sites * hours, "", dtype=object)
    reasons[::flagged_every] = "relative humidity above 100 % (masked)"
    rejected = np.zeros(n_sites * hours, bool)
    rejected[-50:] = True
    reasons[-50:] = "no values in the row"
    return "met.csv", lines, sites, reasons, rejected


def test_coded_rows_hold_runs_not_rows():
    """100,000 rows of 10 sites with about 100 flagged rows: a few hundred runs, not
    13 bytes a row (the code before held 1.3 MB of per-row codes)."""
    rows = _hourly_rows()
    part = Ledger.for_many_rows(*rows, limit=10).parts[0]
    assert isinstance(part, CodedRows) and len(part.lines) == len(rows[1])
    assert _held_bytes(part) < 20 * 300          # about 20 bytes a run, < 300 runs
    assert _held_bytes(part) < 0.1 * len(rows[1])     # before: 13 bytes a row


def test_demo_met_ledger_holds_runs():
    """The demo's hourly met (280,512 rows of 4 sites, read by the chunked reader):
    its ledger holds a few bytes per hundred rows."""
    from workbench.io.metfast import read_met_csv_fast
    from workbench.io.sites import read_sites
    _, led = read_met_csv_fast(DEMO / "met.csv.gz", read_sites(DEMO / "sites.toml"))
    part = led.parts[0]
    assert isinstance(part, CodedRows) and len(part.lines) > 200_000
    assert _held_bytes(part) < 0.05 * len(part.lines)      # before: 13 bytes a row


@pytest.mark.parametrize("run_slice", [7, 1 << 20])
def test_coded_rows_spell_out_the_rows_given(monkeypatch, run_slice):
    """Lines with gaps and going back, codes in short and long runs: the per-row
    arrays come back as given (their line dtype too), whatever slice finds the runs."""
    monkeypatch.setattr(ledger_mod, "RUN_SLICE", run_slice, raising=False)
    rng = np.random.default_rng(5)
    n = 2000
    lines = (np.cumsum(rng.choice([1, 1, 1, 1, 2, -3], n)) + 10).astype(np.int32)
    site = np.repeat(rng.integers(0, 4, n // 50), 50).astype(np.int32)
    reason = np.where(rng.random(n) < 0.9, 0, rng.integers(1, 3, n)).astype(np.int32)
    rejected = rng.random(n) < 0.05
    part = CodedRows("m.csv", lines, site, np.array(["a", "b", "c", "d"], dtype=object),
                     reason, np.array(["", "x", "x; y"], dtype=object), rejected)
    assert len(part.lines) == n
    np.testing.assert_array_equal(part.lines, lines)
    assert part.lines.dtype == lines.dtype
    np.testing.assert_array_equal(part.site_codes, site)
    np.testing.assert_array_equal(part.reason_codes, reason)
    np.testing.assert_array_equal(part.rejected, rejected)
    empty = CodedRows("m.csv", np.empty(0, np.int64), np.empty(0, np.int32),
                      np.array([], dtype=object), np.empty(0, np.int32),
                      np.array([""], dtype=object), np.empty(0, bool))
    assert len(empty.lines) == 0 and empty.frame().empty


def test_coded_ledger_as_the_plain_table():
    """Table, summary, reasons and an added reason: as the plain table's (reference)."""
    rows = _hourly_rows(n_sites=4, hours=3000, flagged_every=211)
    plain = Ledger.for_rows(*rows)
    coded = Ledger.for_many_rows(*rows, limit=10)
    assert isinstance(coded.parts[0], CodedRows)
    pd.testing.assert_frame_equal(plain.table, coded.table)
    pd.testing.assert_frame_equal(plain.summary(), coded.summary())
    pd.testing.assert_frame_equal(plain.reasons(), coded.reasons(), check_dtype=False)
    some = rows[1][[0, 5, 211, 3000, 11_999]]
    plain.add_reason("met.csv", some, "far from the gauge")
    coded.add_reason("met.csv", some, "far from the gauge")
    pd.testing.assert_frame_equal(plain.table, coded.table)
    pd.testing.assert_frame_equal(plain.reasons(), coded.reasons(), check_dtype=False)
    assert coded.check_balanced() and coded.rows() == plain.rows() == len(rows[1])


def test_plain_ledger_table_shares_its_texts():
    """A small file's ledger table: one ``str`` object per distinct site, status and
    reason (the code before made one a cell), the same values."""
    rows = _hourly_rows(n_sites=3, hours=400, flagged_every=7)
    table = Ledger.for_rows(*rows).table
    for col in ("site", "status", "reason"):
        values = table[col].to_numpy(dtype=object)
        assert len({id(v) for v in values}) == len(set(values)), col
    assert table["site"].tolist() == list(rows[2])
    assert table["reason"].tolist() == list(rows[3])
    _, _, _, reasons, rejected = rows
    expected = np.where(rejected, "rejected", np.where(reasons != "", "flagged", "accepted"))
    assert table["status"].tolist() == expected.tolist()


class _NoRows(CodedRows):
    """Coded rows whose per-row arrays may not be spelled out."""

    def _refuse(self):
        raise AssertionError("the rows were spelled out")

    lines = property(_refuse)
    site_codes = property(_refuse)
    reason_codes = property(_refuse)
    rejected = property(_refuse)


def test_counting_a_coded_ledger_spells_out_no_rows():
    """A ledger of coded rows is made, counted and summarised on its runs (spelling out
    the lines of 8.8 million met rows took about 250 MB for a moment): only the lines of
    rows with a reason are listed."""
    file, lines, sites, reasons, rejected = _hourly_rows()
    s_codes, s_names = pd.factorize(sites)
    r_codes, r_names = pd.factorize(reasons)
    part = _NoRows(file, lines, s_codes, s_names, r_codes, r_names, rejected)
    led = Ledger.for_codes(part)
    plain = Ledger.for_rows(file, lines, sites, reasons, rejected)
    assert led.rows() == len(lines)
    pd.testing.assert_frame_equal(led.summary(), plain.summary())
    pd.testing.assert_frame_equal(led.reasons(), plain.reasons(), check_dtype=False)
    assert led.check_balanced()
