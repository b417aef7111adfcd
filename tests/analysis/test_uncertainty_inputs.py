"""Options of the Monte Carlo and of the sensitivity analysis as users may give them:
infinite or NaN spreads and ranges, zero-width ranges, and what the cut at 0 of a
normal factor does with the documented defaults (docs/methods_uncertainty.md).

Reference for the cut: scipy.stats.norm (a general-purpose reference library); for
Z ~ N(0, 1) and F = max(1 + sd Z, 0), P(F = 0) = Phi(-1/sd) and
E[F] = Phi(1/sd) + sd phi(1/sd) (the mean of a normal cut at 0; textbook, from memory).
"""
import math

import numpy as np
import pytest
from scipy import stats

from workbench.analysis import uncertainty as U
from workbench.analysis.sensitivity_options import SensitivityOptions

SD_FIELDS = ("air_rel_sd", "precip_conc_rel_sd", "gauge_catch_rel_sd", "depth_rel_sd",
             "censored_rel_sd", "vd_fill_rel_sd", "pwm_fill_rel_sd")


@pytest.mark.parametrize("name", SD_FIELDS)
@pytest.mark.parametrize("value", [math.inf, math.nan, True, "0.05"])
def test_spread_must_be_a_finite_number(name, value):
    """inf passed before and drew factors of inf or 0 only."""
    with pytest.raises(ValueError, match=f"{name} = .* must be a finite number >= 0"):
        U.UncertaintyOptions(**{name: value})


def test_gsd_must_be_finite():
    with pytest.raises(ValueError, match="must be a finite number >= 1"):
        U.UncertaintyOptions(vd_gsd={"SO2": math.inf})


def test_zero_spread_switches_the_factor_off_and_keeps_the_stream():
    """A zero-width input (sd 0) gives factors of exactly 1, and the random stream moves
    on as with a spread, so the other factors keep their numbers."""
    a, b = np.random.default_rng(5), np.random.default_rng(5)
    off = U._normal_factor(a, 0.0, (4, 3))
    U._normal_factor(b, 0.1, (4, 3))
    assert (off == 1.0).all()
    assert a.standard_normal() == b.standard_normal()


@pytest.mark.parametrize("sd", [0.577, 0.3])
def test_cut_at_zero_of_the_defaults_scipy_norm(sd):
    """The docs said the cut is never reached with the defaults; with the default spread
    of a value below detection (0.577) it is reached in about 4 % of the draws (and
    raises the mean factor by about 1 %), with 0.3 (gap fills) in 0.04 %."""
    n = 400_000
    f = U._normal_factor(np.random.default_rng(1), sd, (n,))
    p0 = stats.norm.cdf(-1.0 / sd)
    assert (f == 0).mean() == pytest.approx(p0, abs=4 * math.sqrt(p0 * (1 - p0) / n) + 1e-6)
    mean = stats.norm.cdf(1.0 / sd) + sd * stats.norm.pdf(1.0 / sd)
    assert f.mean() == pytest.approx(mean, abs=4 * sd / math.sqrt(n))
    if sd == 0.577:
        assert 0.04 < p0 < 0.045 and 1.009 < mean < 1.011


@pytest.mark.parametrize("rng", [(1.0, 1.0), (0.5, math.inf), (math.nan, 1.0), (0.5, True)])
def test_sensitivity_range_must_be_finite_and_wide(rng):
    with pytest.raises(ValueError, match="0 <= low < high, both finite"):
        SensitivityOptions(factors={"vd_SO2": rng, "gauge_catch": (0.9, 1.1)})


@pytest.mark.parametrize("line, column, word", [
    ('sites = ["quil"]', "sensitivity.sites", "did you mean 'quill'"),
    ('receptors = ["gras"]', "sensitivity.receptors", "did you mean 'grass'"),
])
def test_sensitivity_site_or_receptor_unknown_is_located(tiny, tmp_path, line, column, word,
                                                         capsys):
    """An unknown [sensitivity] site stopped `workbench sensitivity` with a bare KeyError
    (an unknown receptor with an error naming no file); now one located message."""
    from workbench.cli import main
    sc = tiny[0]
    text = sc.path.read_text(encoding="utf-8")
    p = tmp_path / "scenario.toml"
    p.write_text(text.replace("[sensitivity]\n", f"[sensitivity]\n{line}\n", 1),
                 encoding="utf-8")
    for name in ("sites.toml", "precip.csv", "air.csv", "met.csv"):
        (tmp_path / name).write_bytes((sc.path.parent / name).read_bytes())
    assert main(["sensitivity", str(p), "--out", str(tmp_path / "out"), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "scenario.toml, line" in err and f"column '{column}'" in err and word in err
