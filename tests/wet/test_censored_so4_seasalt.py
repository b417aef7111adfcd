"""A SO4 below detection beside a Na value in precipitation: the sea salt is its floor,
as for the air's pSO4 beside a pNa (docs/methods_wet.md section 3.1; docs/budget.md).

Checked by hand.  The sea-salt correction takes Na as sea salt, so a censored SO4 of
limit L beside Na lies between its sea-salt sulfate S = r Na and L, r = 0.121 / 2 =
0.0605 mol/mol (Keene et al. 1986, Table 1: SO4/Na 0.121 eq/eq, from memory; 2 eq per
mol of SO4).  Its substitute is S + f max(0, L - S) (f = 1/2, 1, 0 for "half",
"limit", "zero"), so its non-sea-salt part is f max(0, L - S), the air's rule
(drycomponents._nss_particles).  The old substitute f L gave the non-sea-salt part
f L - S: with L = 2 and Na = 20 umol/L, 1 - 1.21 = -0.21 umol/L, a negative sample
that pulled down the nss PWM of the period's measured samples.
"""
import numpy as np
import pytest
from wet.wet_samples import make_samples, week

from workbench.wet import WetOptions, screen, wet_deposition

R = 0.121 / 2               # SO4/Na in seawater [mol/mol], Keene et al. (1986), by hand
IONS = ("SO4", "NO3", "NH4", "Na")


def _row(start, **kw):
    s, e = week(start)
    return dict(start=s, end=e, gauge_depth=kw.pop("depth", 10.0), **kw)


@pytest.mark.parametrize("method,f", [("half", 0.5), ("limit", 1.0), ("zero", 0.0)])
def test_the_substitute_by_hand(method, f):
    L = 2.0
    rows = [_row("2021-06-01", NO3=20, NH4=20, Na=20, censored={"SO4": L}),       # S < L
            _row("2021-06-08", NO3=20, NH4=20, Na=40, censored={"SO4": L}),       # S > L
            _row("2021-06-15", NO3=20, NH4=20, censored={"SO4": L}),              # no Na
            _row("2021-06-22", NO3=20, NH4=20, Na=10, SO4=8.0)]                   # measured
    sc = screen(make_samples(rows, ions=IONS), WetOptions(detection_limit=method))
    got = sc["SO4"].values * 1000                                   # umol/L
    s1, s2 = R * 20, R * 40
    want = [s1 + f * (L - s1), s2 + 0.0, f * L, 8.0]
    np.testing.assert_allclose(got, want, rtol=1e-12)
    # the non-sea-salt part of each censored sample beside Na: f max(0, L - S) >= 0
    np.testing.assert_allclose(got[:2] - R * np.array([20, 40]),
                               [f * (L - s1), 0.0], atol=1e-12)
    assert sc["SO4_seasalt_floor"].values.tolist() == [True, True, False, False]


def test_a_censored_na_counts_with_its_substitute():
    # Na below detection (limit 4 umol/L): half, 2 umol/L, is its sea salt's tracer
    rows = [_row("2021-06-01", NO3=20, NH4=20, censored={"SO4": 2.0, "Na": 4.0})]
    sc = screen(make_samples(rows, ions=IONS))
    s = R * 2.0
    assert sc["SO4"].values[0] * 1000 == pytest.approx(s + 0.5 * (2.0 - s), rel=1e-12)


def test_the_nss_pwm_and_the_note_by_hand():
    L = 2.0
    rows = [_row("2021-06-01", depth=30.0, NO3=20, NH4=20, Na=20, censored={"SO4": L}),
            _row("2021-06-08", depth=10.0, NO3=20, NH4=20, Na=10, SO4=8.0)]
    wet = wet_deposition(screen(make_samples(rows, ions=IONS)), "month").sel(site="A")
    june = {str(p): k for k, p in enumerate(wet["period"].values)}
    k = next(k for p, k in june.items() if "06" in p)
    nss1 = 0.5 * (L - R * 20)                     # the censored sample's own nss part
    nss2 = 8.0 - R * 10
    want = (30 * nss1 + 10 * nss2) / 40          # precipitation-weighted [umol/L]
    assert wet["pwm_nssSO4"].values[k] * 1000 == pytest.approx(want, rel=1e-9)
    old = (30 * (0.5 * L - R * 20) + 10 * nss2) / 40   # the old substitute L / 2
    assert abs(want - old) > 0.1 * want
    note = str(wet["SO4_seasalt_floor"].values[k])
    assert note.startswith("SO4 below detection beside Na in 1 sample (from 2021-06-01")
    assert "half of (limit - sea salt)" in note
