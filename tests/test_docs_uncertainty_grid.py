"""Demo numbers of docs/methods_uncertainty.md, "Draws beyond the grid": the table of
the draws held at the grid's end (benchmarks/air_vd_grid.py; the demo's ridge and farm
in 2021, both air-dependent velocity options on, 1,000 draws, seed 12345; default
errors, and every 4th SO2 and NH3 sample taken as below detection) and the sentence
under it on the share of a sample's draws outside the grid, recomputed with the
benchmark's own set-up (``drawn_site``), so that a change of the draws or of the grid
that moves one fails here until the section is re-measured.

The reference is the engine itself (measured numbers; the grid's checks against the
engine on drawn air are in tests/analysis/test_uncertainty_air_vd_grid.py). Numbers as
written: counts with thousands separated, shares of the sample draws in percent to one
decimal, factors to two (Python's format, common practice).
"""
from __future__ import annotations

import re

import numpy as np
import pytest

from script_modules import bench_script as _bench_script
from doc_sections import flat_section

DRAWS, SEED, YEAR = 1000, 12345, 2021
SECTION = ("*Draws beyond the grid.*", "Why counted and not a wider grid")


@pytest.fixture(scope="module")
def held(tmp_path_factory):
    """(site, censored_every) -> species -> (draws held, share of the sample draws
    outside, (D, n) factors of the ratio, (n,) share of each sample's draws outside,
    (n,) whether the sample's ratio takes a sample taken as below detection)."""
    bench = _bench_script("air_vd_grid")
    out = {}
    for site in ("ridge", "farm"):
        sc = bench.scenario(tmp_path_factory.mktemp(site), site, YEAR)
        for every in (0, 4):
            _, _, lay, k, noise = bench.drawn_site(sc, site, DRAWS, SEED, None, every)
            ls = lay.sites[k]
            per = {}
            for sp, grid in ls.air_vd.items():
                h = grid.held(noise.air)
                involved = np.zeros(h.shape[1], bool)
                for partner, (cols, w) in grid.partners.items():
                    cens = getattr(ls.dry[partner], "censored", None)
                    if every and cens is not None and len(cols):
                        involved |= (w[:, np.asarray(cens, bool)[cols]] > 0).any(1)
                per[sp] = (int(h.any(1).sum()), float(h.mean()), grid.ratio_factor(noise.air),
                           h.mean(0), involved)
            out[site, every] = per
    return out


def _pct(x: float) -> str:
    return "0 %" if x == 0 else f"{100 * x:.1f} %"


def _table() -> list:
    rows = []
    for line in _lines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 5 and not cells[0].startswith(("draws", "---")):
            rows.append(cells[1:])
    return rows


def _lines() -> list:
    from doc_sections import DOCS
    text = (DOCS / "methods_uncertainty.md").read_text(encoding="utf-8")
    a = text.index(SECTION[0])
    return text[a:text.index(SECTION[1], a)].splitlines()


def test_the_table_of_draws_held(held):
    rows = _table()
    assert len(rows) == 2, rows
    want = []
    for every in (0, 4):
        cells = []
        for site in ("ridge", "farm"):
            p = held[site, every]
            n = f"{p['SO2'][0]:,} / {p['NH3'][0]:,}"
            if every == 0:
                f = np.concatenate([p[sp][2].ravel() for sp in ("SO2", "NH3")])
                cells += [f"{n} of {DRAWS:,}",
                          f"{_pct(p['SO2'][1])} (factors {f.min():.2f}-{f.max():.2f})"]
                assert p["SO2"][1] == p["NH3"][1] == 0.0
            else:
                cells += [n, f"{_pct(p['SO2'][1])} / {_pct(p['NH3'][1])}"]
        want.append(cells)
    assert rows == want, f"re-measure the table:\n{want}"


def test_the_share_of_a_samples_draws_outside(held):
    text = flat_section(*SECTION)
    m = re.search(r"Then (\d+)-(\d+) % of the draws of a sample whose ratio involves such a "
                  r"value fall outside \(but for (\d+) of the farm's (\d+) such samples, which "
                  r"have none outside\)", text)
    assert m, "the sentence under the table"
    inside, others, none = [], [], {}
    for site in ("ridge", "farm"):
        for sp, (_, _, _, share, involved) in held[site, 4].items():
            inside += list(share[involved & (share > 0)])
            others += list(share[~involved])
            n0, n = none.get(site, (0, 0))
            none[site] = (n0 + int((involved & (share == 0)).sum()), n + int(involved.sum()))
    assert none["ridge"][0] == 0
    assert (f"{100 * min(inside):.0f}", f"{100 * max(inside):.0f}",
            *map(str, none["farm"])) == m.groups(), (min(inside), max(inside), none)
    assert max(others) == 0.0, "the draws of the other samples stay on the grid"


def test_the_ridge_so2_ratio_reaches_0_and_infinity(held):
    assert "(ridge: 0 to infinity for SO2's ratio)" in flat_section(
        "Why counted and not a wider grid", "It is refused, with one located message")
    q = held["ridge", 4]["SO2"][2]
    assert q.min() == 0.0 and np.isinf(q.max())
