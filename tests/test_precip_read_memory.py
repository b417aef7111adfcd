"""What the precipitation reader holds per row while it reads: the mechanism, not a threshold.

The reader collects the reasons of every check, one array per check and ion ("NO3
below detection", "Cl reported as 0 (censored as below detection: ...)"...), and joins
them at the end, so every such array is held at once.  They were made by
``numpy.where(mask, text, "")``: a fixed-width text array of 4 bytes a character on
every row, with or without a reason (about 10 kB a sample over the ions, 0.5 MB a
site-year of a network; docs/performance.md "The precipitation reading step").  Now
each is an object array whose rows share one ``str`` (``common.reason_where``), and
``join_reasons`` makes a new text only on the rows with two reasons.

The test of the parts fails on the code before (its parts were ``<U...`` arrays); the
joined reasons are those of the former join (the former algorithm written out below as
the reference: common practice, numpy element-wise text operations).  The whole read
was compared with the code before on the demo file and a generated network of 300
site-years (Datasets ``identical``, ledgers equal), and ``benchmarks/same_run.py``
compared run folders.  Inputs: the invented demo network.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

import workbench.io.samples as S
from workbench.io.common import join_reasons, reason_where
from workbench.io.sites import read_sites

DEMO = Path(__file__).resolve().parents[1] / "demo_data"


def _former_join(parts):
    """The join of reasons before the change (reference)."""
    out = np.asarray(parts[0], dtype=object).copy()
    for p in parts[1:]:
        p = np.asarray(p, dtype=object)
        both = (out != "") & (p != "")
        out = np.where(both, out + "; " + p, np.where(p != "", p, out))
    return out


def test_reasons_held_while_reading_share_one_text(monkeypatch):
    seen = []

    def spy(parts):
        seen.append(list(parts))
        return join_reasons(parts)

    monkeypatch.setattr(S, "join_reasons", spy)
    cat = read_sites(DEMO / "sites.toml")
    ds, _ = S.read_precipitation(DEMO / "precipitation.csv", cat)
    parts = max(seen, key=len)            # the reasons of every check of the file
    n = len(parts[0])
    assert len(parts) > 20 and n > ds.sizes["sample"] - 50
    flagged = 0
    for p in parts:
        p = np.asarray(p)
        # an object array (8 bytes a row), not a fixed-width text of the reason's length
        assert p.dtype == object, p.dtype
        has = p != ""
        flagged += int(has.sum())
        # a row without a reason holds no text of its own
        assert len({id(x) for x in p[~has]}) <= 1
        assert len({id(x) for x in p[has]}) <= int(has.sum())
    assert flagged > 0                     # the demo file has censored and flagged rows


def test_reason_where_is_numpy_where():
    mask = np.array([True, False, True, False])
    got = reason_where(mask, "NO3 below detection")
    assert got.dtype == object
    assert got.tolist() == np.where(mask, "NO3 below detection", "").tolist()
    assert got[0] is got[2] and got[1] is got[3]          # one object a text
    per_row = np.array(["a", "b", "c", "d"], dtype=object)
    assert reason_where(mask, per_row).tolist() == ["a", "", "c", ""]
    assert reason_where(np.zeros(0, bool), "x").shape == (0,)


def test_join_reasons_as_before():
    rng = np.random.default_rng(7)
    texts = np.array(["", "", "", "pH masked", "NO3 below detection", "flags contaminated"],
                     dtype=object)
    for n in (0, 1, 50):
        parts = [texts[rng.integers(0, len(texts), n)] for _ in range(6)]
        parts.append(np.where(rng.random(n) < 0.3, "gauge depth missing", ""))  # fixed-width
        got = join_reasons(parts)
        want = _former_join(parts)
        assert got.dtype == object
        assert got.tolist() == want.tolist()
    assert join_reasons([]).tolist() == []
