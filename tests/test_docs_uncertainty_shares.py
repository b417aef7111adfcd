"""Demo numbers of docs/methods_uncertainty.md, "Where a range's width comes from: each
factor's share (the demo's farm, measured)": the farm's span dry N over grass (its point
and components, the 5 / 50 / 95 % at 1,000 draws) and the 1,000-draw columns of the
shares table (variance share and log-variance share of each factor, seed 12345), with
the crops' and deciduous forest's log shares beside it, recomputed with
:func:`workbench.analysis.variance_shares.variance_shares` on the demo's farm
(docs/make_uncertainty_figures.py's ``farm_run``). The 4,000-draw columns, seed 7's and
the 2,000-draw log-SDs, median and mean are not recomputed (four and two times the
draws): they are held within their Monte Carlo error by the 1,000 draws (below).
The reference is the engine itself (measured numbers; the method's checks are in
tests/analysis/test_variance_shares.py). Numbers as written (Python's format, common
practice; a minus sign as U+2212).
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

DOC = Path(__file__).resolve().parents[1] / "docs" / "methods_uncertainty.md"
ROWS = {"`vd_gsd` (every species)": "vd_gsd", "of which `vd_gsd.NH3`": "vd_gsd.NH3",
        "of which `vd_gsd.NO2`": "vd_gsd.NO2", "`vd_site_gsd`": "vd_site_gsd",
        "`lab_bias_air_rel_sd`": "lab_bias_air_rel_sd", "together": "together"}


def _section() -> str:
    text = DOC.read_text(encoding="utf-8")
    a = text.index("### Where a range's width comes from")
    return text[a:text.index("### A wide exceedance range", a)]


@pytest.fixture(scope="module")
def shares(farm_span):
    from workbench.analysis import uncertainty as U
    from workbench.analysis.variance_shares import variance_shares
    study, res = farm_span
    df = variance_shares(res, study, U.UncertaintyOptions(draws=1000, seed=12345),
                         totals=("N_dry",))
    return df[df["site"] == "farm"].set_index(["receptor", "factor"])


def _f(x: float, digits: int) -> str:
    return f"{x:.{digits}f}".replace("-", "−")


def test_the_point_and_the_range_of_the_farm(farm_span, shares):
    _, res = farm_span
    t = res.table
    g = t[(t["site"] == "farm") & (t["receptor"] == "grass") & (t["period"] == "span")
          & (t["element"] == "N") & (t["pathway"] == "dry")].set_index("species")[
        "flux_kg_ha_yr"]
    allrow = shares.loc[("grass", "all")]
    text = re.sub(r"\s+", " ", _section())
    assert (f"we measured {allrow['alone_p05']:.2f} / {allrow['alone_p50']:.2f} / "
            f"{allrow['alone_p95']:.2f} kg N/ha/yr (5 / 50 / 95 %) at 1,000 draws") in text
    assert (f"The point value is {g['all']:.2f} (NH3 {g['NH3']:.2f}, NO2 {g['NO2']:.2f}, "
            f"HNO3 {g['HNO3']:.2f}, pNO3 {g['pNO3']:.2f}, pNH4 {g['pNH4']:.2f})") in text
    assert f"so NH3 is {100 * g['NH3'] / g['all']:.0f} % of the dry N" in text


def test_the_1000_draw_columns_of_the_table(shares):
    written = {}
    for line in _section().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 4 and cells[0] in ROWS:
            written[cells[0]] = (cells[1].split(" / ")[0], cells[2].split(" / ")[0])
    assert set(written) == set(ROWS)
    for label, factor in ROWS.items():
        row = shares.loc[("grass", factor)]
        v, lv = written[label]
        digits = len(v.split(".")[1])
        assert v == _f(row["variance_share"], digits), (label, v, row["variance_share"])
        digits = len(lv.split(".")[1])
        assert lv == _f(row["log_variance_share"], digits), (label, lv,
                                                             row["log_variance_share"])


def test_the_crops_and_the_deciduous_forest(shares):
    c, d = "crops", "deciduous_forest"
    text = re.sub(r"\s+", " ", _section())
    assert (f"log shares for `vd_gsd` of {shares.loc[(c, 'vd_gsd'), 'log_variance_share']:.3f} "
            f"and {shares.loc[(d, 'vd_gsd'), 'log_variance_share']:.3f}, of which NH3 "
            f"{shares.loc[(c, 'vd_gsd.NH3'), 'log_variance_share']:.3f} and "
            f"{shares.loc[(d, 'vd_gsd.NH3'), 'log_variance_share']:.3f}, and for "
            f"`vd_site_gsd` {shares.loc[(c, 'vd_site_gsd'), 'log_variance_share']:.3f} and "
            f"{shares.loc[(d, 'vd_site_gsd'), 'log_variance_share']:.3f}, at 1,000 draws") in text


# ---------------------------------------------------------------------------------------
# The columns at more draws (4,000; 2,000; seed 7), held within their Monte Carlo error.
#
# They are not recomputed (four times the draws); the same draws at 1,000 (seed 12345,
# the very draws of the 1,000-draw columns) are, and a number written for n draws must lie
# within Z standard errors of the difference of two estimates, at 1,000 and at n draws:
# SE = se_1000 sqrt(1 + 1000 / n), with se_1000 the standard error of the 1,000-draw
# estimate found from the draws themselves (a bootstrap of the draws, Efron and
# Tibshirani 1993, An Introduction to the Bootstrap, ch. 6, from memory; the draws
# resampled together, as a factor alone takes the same numbers as in the full draw), and
# an estimate at n draws having about sqrt(1000 / n) of that error (common practice).
# Taking the two estimates as independent overstates the error where n's draws start with
# the 1,000 (the tolerance is then wider than needed, never narrower). Half a unit of the
# last digit written is added for the rounding. For a quantile at probability p the
# check is distribution-free: the share of the 1,000 draws below the written quantile
# lies within Z sqrt(p (1 - p) (1 / 1000 + 1 / n)) of p (the binomial error of an
# empirical distribution function, common practice).
# ---------------------------------------------------------------------------------------

#: standard errors allowed (about 3 in 1,000 for a normal error, two-sided)
Z = 3.0
#: bootstrap resamples and their seed (any fixed seed: the same tolerance every run)
BOOT, BOOT_SEED = 500, 20261205
N1 = 1000
LABEL_OTHERS = "`air_rel_sd`, gauge, depth, precipitation chemistry, fills"


@pytest.fixture(scope="module")
def draws(farm_span, shares):
    """The draws behind the ``shares`` fixture's grass rows, for the farm's span N_dry
    [kg N/ha/yr]: factor -> (D,) draws, "all" the full draws, of each factor whose
    share there is not 0 (a factor that moves nothing at the farm has the point as every
    draw, a share of exactly 0 and no part in ``together``: it is not drawn again); and
    the names of those main factors (not a species' part). Built as variance_shares
    builds them."""
    import dataclasses

    import numpy as np

    from workbench.analysis import uncertainty as U
    from workbench.analysis import variance_shares as V
    from workbench.units import element_deposition_in
    study, res = farm_span
    opt = U.UncertaintyOptions(draws=N1, seed=12345)
    lay = V.linear_layer(res, study, "years", None, opt.shifts_pairs, opt.vd_follows_air)
    ds = lay.budget
    year0 = int(lay.period_year.min())
    n_years = int(lay.period_year.max()) - year0 + 1
    k = [str(s) for s in ds["site"].values].index("farm")
    r = [str(x) for x in ds["receptor"].values].index("grass")
    ti = V.TOTALS.index("N_dry")
    neutral = V._neutral(opt)
    moving = set(shares.loc["grass"].index[shares.loc["grass", "variance_share"] > 0])
    here = [f for f in V._drawn(opt, {"N"}) if f[0] in moving]

    def one(o):
        return V._totals(lay, k, o, n_years, year0, "span", opt.shifts_pairs)

    out = {"all": one(opt)}
    out.update({name: one(dataclasses.replace(opt, **{**neutral, **on}))
                for name, _, on in here})
    kg = {f: element_deposition_in(np.asarray(a[:, r, 0, ti], dtype=float), "N", "kg_ha")
          for f, a in out.items()}
    return kg, [name for name, part, _ in here if not part]


def _boot(draws, stat):
    """(estimate, bootstrap standard error) of ``stat(draws_resampled)``, `stat` taking
    a dict of (D, B) arrays and giving (B,) values."""
    import numpy as np
    idx = np.random.default_rng(BOOT_SEED).integers(0, N1, size=(N1, BOOT))
    est = float(np.asarray(stat({f: a[:, None] for f, a in draws.items()}))[0])
    return est, float(np.std(stat({f: a[idx] for f, a in draws.items()}), ddof=1))


def _shares(d, names, log):
    from workbench.analysis.variance_shares import first_order_shares
    return first_order_shares(d["all"], {n: d[n] for n in names}, log=log)[0]


def _together(d, main, log):
    s = _shares(d, main, log)
    return 1.0 - sum(s[n] for n in main)


def _num(cell: str) -> float:
    return float(cell.replace("−", "-"))


def _half_unit(cell: str) -> float:
    return 0.5 * 10.0 ** -len(cell.split(".")[1]) if "." in cell else 0.5


def _near(written: str, est: float, se: float, n: int) -> tuple:
    tol = Z * se * (1.0 + N1 / n) ** 0.5 + _half_unit(written)
    return abs(_num(written) - est) <= tol, tol


def _quantile_near(x, p: float, written: str, n: int) -> tuple:
    """Whether `written`, a p-quantile of n draws, is within the binomial error of the
    1,000 draws `x` [kg N/ha/yr]."""
    import numpy as np
    q, h = _num(written), _half_unit(written)
    lo, hi = float(np.mean(x < q - h)), float(np.mean(x <= q + h))
    tol = Z * (p * (1.0 - p) * (1.0 / N1 + 1.0 / n)) ** 0.5
    return lo <= p + tol and hi >= p - tol, (lo, hi, tol)


def _table() -> dict:
    rows = {}
    for line in _section().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 4 and (cells[0] in ROWS or cells[0] in ("all", LABEL_OTHERS)):
            rows[cells[0]] = cells[1:]
    return rows


def test_the_draws_are_those_of_the_table(draws, shares):
    """The fixture's draws give the shares fixture's grass numbers (so the tolerances
    below are those of the table's own draws)."""
    import numpy as np
    d, main = draws
    assert {"vd_gsd", "vd_gsd.NH3", "vd_gsd.NO2", "vd_site_gsd",
            "lab_bias_air_rel_sd"} <= set(d)
    for log, col in ((False, "variance_share"), (True, "log_variance_share")):
        s = _shares(d, [f for f in d if f != "all"], log)
        for f, v in s.items():
            assert float(v) == pytest.approx(shares.loc[("grass", f), col], abs=1e-12), (f, col)
        assert float(_together(d, main, log)) == pytest.approx(
            shares.loc[("grass", "together"), col], abs=1e-12)
    q = np.quantile(d["all"], (0.05, 0.5, 0.95))
    assert q == pytest.approx(shares.loc[("grass", "all"), ["alone_p05", "alone_p50",
                                                            "alone_p95"]].to_numpy(float))


def test_the_4000_draw_share_columns_within_their_error(draws):
    d, main = draws
    rows = _table()
    checked = 0
    for label, factor in ROWS.items():
        v, lv = rows[label][0], rows[label][1]
        for log, cell in ((False, v), (True, lv)):
            parts = cell.replace("(", "/").replace(")", "").split("/")
            more = [p.strip() for p in parts[1:]]          # the 4,000 draws (and seed 7)
            assert more, (label, cell)

            def stat(x, f=factor, log=log):
                return (_together(x, main, log) if f == "together"
                        else _shares(x, [f], log)[f])
            est, se = _boot(d, stat)
            for w in more:
                ok, tol = _near(w, est, se, 4000)
                assert ok, (f"{label}: {w} written for 4,000 draws, {est:.4f} at 1,000 "
                            f"(allowed ± {tol:.4f}, Z = {Z} of {se:.4f} bootstrap SE)")
                checked += 1
    assert checked == 15


def test_the_4000_draw_quantiles_within_their_error(draws):
    rows = _table()
    text = re.sub(r"\s+", " ", _section())
    m = re.search(r"and ([\d.]+) / ([\d.]+) / ([\d.]+) at 4,000\.", text)
    assert m and list(m.groups()) == rows["all"][2].split(" / ")
    for label, factor in {**ROWS, "all": "all"}.items():
        if factor == "together":
            continue
        for p, w in zip((0.05, 0.5, 0.95), rows[label][2].split(" / ")):
            ok, why = _quantile_near(draws[0][factor], p, w, 4000)
            assert ok, (f"{label}: {w} written as the {p:.0%} of 4,000 draws; share of the "
                        f"1,000 draws below it {why[0]:.3f}-{why[1]:.3f}, allowed "
                        f"{p:.2f} ± {why[2]:.3f}")


def test_the_other_factors_move_nothing_you_could_see(farm_span, shares):
    """The row "< 0.001 | < 0.001 | the point ± < 1 %" at 1,000 draws: every other
    factor's shares below 0.001 and its 5-95 % within 1 % of the span's point."""
    assert _table()[LABEL_OTHERS] == ["< 0.001", "< 0.001", "the point ± < 1 %"]
    t = farm_span[1].table
    point = float(t[(t["site"] == "farm") & (t["receptor"] == "grass") & (t["period"] == "span")
                    & (t["element"] == "N") & (t["pathway"] == "dry")
                    & (t["species"] == "all")]["flux_kg_ha_yr"].iloc[0])
    g = shares.loc["grass"]
    others = [f for f in g.index if f not in ROWS.values() and f != "all"
              and not g.loc[f, "part_of"]]
    assert len(others) >= 8                    # the analyses, gauge, depth, chemistry, fills
    for f in others:
        row = g.loc[f]
        assert row["variance_share"] < 0.001 and row["log_variance_share"] < 0.001, f
        assert abs(row["alone_p05"] / point - 1) < 0.01, (f, row["alone_p05"], point)
        assert abs(row["alone_p95"] / point - 1) < 0.01, (f, row["alone_p95"], point)


def test_the_2000_draw_log_sds_within_their_error(draws):
    """"At 2,000 draws the full draws' log-SD is 0.659, which is √(0.630² + 0.187² +
    0.044²) of the Vd, site and laboratory factors alone ... NH3's factor alone has a
    log-SD of 0.575 ... The median (19.8) ... the mean of the 2,000 draws is 24.8"."""
    import numpy as np
    d, _ = draws
    text = re.sub(r"\s+", " ", _section())
    m = re.search(r"At 2,000 draws the full draws' log-SD is ([\d.]+), which is √\(([\d.]+)² "
                  r"\+ ([\d.]+)² \+ ([\d.]+)²\) of the Vd, site and laboratory factors alone", text)
    n = re.search(r"NH3's factor alone has a log-SD of ([\d.]+)", text)
    med = re.search(r"The median \(([\d.]+)\) sits at the point", text)
    mean = re.search(r"the mean of the 2,000 draws is ([\d.]+)", text)
    assert m and n and med and mean
    written = dict(zip(("all", "vd_gsd", "vd_site_gsd", "lab_bias_air_rel_sd", "vd_gsd.NH3"),
                       (*m.groups(), n.group(1))))
    for f, w in written.items():
        est, se = _boot(d, lambda x, f=f: np.std(np.log(x[f]), axis=0))
        ok, tol = _near(w, est, se, 2000)
        assert ok, f"{f}: log-SD {w} written for 2,000 draws, {est:.4f} at 1,000 (± {tol:.4f})"
    ok, why = _quantile_near(d["all"], 0.5, med.group(1), 2000)
    assert ok, (med.group(1), why)
    est, se = _boot(d, lambda x: np.mean(x["all"], axis=0))
    ok, tol = _near(mean.group(1), est, se, 2000)
    assert ok, f"mean {mean.group(1)} written for 2,000 draws, {est:.3f} at 1,000 (± {tol:.3f})"
