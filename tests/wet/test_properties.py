"""Properties of the PWM and wet-flux chain (hypothesis).

Each property follows from the definition PWM = sum(C_i P_i) / sum(P_i) with the
share-of-hours split (common practice); none depends on a pinned number.
"""
import json

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings, strategies as st
from wet.wet_samples import make_samples

from workbench.wet import WetOptions, screen, wet_deposition

IONS = ("SO4", "NO3", "NH4")
T0 = pd.Timestamp("2021-01-01")
SETTINGS = settings(max_examples=30, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


@st.composite
def sample_rows(draw, min_size=1, max_size=10, flags=("",), allow_dry=True):
    n = draw(st.integers(min_size, max_size))
    t = T0 + pd.Timedelta(hours=draw(st.integers(0, 24 * 300)))
    rows = []
    for _ in range(n):
        length = pd.Timedelta(hours=draw(st.integers(24, 24 * 21)))
        dry = allow_dry and draw(st.booleans()) and draw(st.booleans())
        depth = 0.0 if dry else draw(st.floats(0.5, 60.0))
        row = dict(start=str(t), end=str(t + length), gauge_depth=depth, sample_depth=depth,
                   flags=draw(st.sampled_from(flags)))
        if not dry:
            so4, no3 = draw(st.floats(1, 80)), draw(st.floats(1, 80))
            nh4 = draw(st.floats(0.5, 2 * so4 + no3 - 0.5))
            row.update(SO4=so4, NO3=no3, NH4=nh4, pH=-np.log10((2 * so4 + no3 - nh4) * 1e-6))
        if draw(st.integers(0, 9)) == 0:
            row["gauge_depth"] = np.nan
        rows.append(row)
        t = t + length + pd.Timedelta(hours=draw(st.sampled_from([0, 0, 0, 30])))
    return rows


def _run(rows, periods="month", options=WetOptions()):
    sc = screen(make_samples(rows, ions=IONS), options)
    return sc, wet_deposition(sc, periods, options)


@SETTINGS
@given(sample_rows())
def test_pwm_between_smallest_and_largest_valid_concentration(rows):
    sc, wet = _run(rows)
    used = sc["used"].values
    for k, period in enumerate(wet["period"].values):
        ps, pe = wet["period_start"].values[k], wet["period_end"].values[k]
        inside = used & (sc["start"].values < pe) & (sc["end"].values > ps)
        for ion in IONS:
            v = wet[f"pwm_{ion}"].isel(site=0, period=k).item()
            if not inside.any():
                assert np.isnan(v)
                continue
            c = sc[ion].values[inside]
            assert c.min() * (1 - 1e-12) <= v <= c.max() * (1 + 1e-12)


@SETTINGS
@given(sample_rows(), st.data())
def test_splitting_a_sample_into_two_identical_halves_changes_nothing(rows, data):
    k = data.draw(st.integers(0, len(rows) - 1))
    r = rows[k]
    s, e = pd.Timestamp(r["start"]), pd.Timestamp(r["end"])
    mid = s + (e - s) / 2          # equal halves in time, each with half the depth
    half = {key: (val / 2 if key in ("gauge_depth", "sample_depth") else val)
            for key, val in r.items()}
    split = rows[:k] + [dict(half, end=str(mid)), dict(half, start=str(mid))] + rows[k + 1:]
    # no gauge fill: the site's median capture ratio needs a number of samples, and
    # splitting changes that number
    no_fill = WetOptions(gauge_fill=())
    _, a = _run(rows, options=no_fill)
    _, b = _run(split, options=no_fill)
    for name in ["precipitation", "coverage_fraction", "gauge_fraction",
                 "valid_precip_fraction"] + [f"pwm_{i}" for i in IONS] + \
            [f"dep_{i}" for i in IONS] + ["pH_pwm"]:
        np.testing.assert_allclose(a[name].values, b[name].values, rtol=1e-9, atol=1e-15,
                                   err_msg=name)
    assert (a["status"].values == b["status"].values).all()


@SETTINGS
@given(sample_rows(), st.floats(0.1, 10.0))
def test_scaling_all_depths_keeps_pwm_and_scales_flux(rows, factor):
    scaled = [dict(r, gauge_depth=r["gauge_depth"] * factor,
                   sample_depth=r["sample_depth"] * factor) for r in rows]
    # no gauge fill: capture ratios are only formed from 1 mm of gauge depth up, so
    # scaling changes which samples stand behind the site's median capture ratio
    no_fill = WetOptions(gauge_fill=())
    _, a = _run(rows, options=no_fill)
    _, b = _run(scaled, options=no_fill)
    for ion in IONS:
        np.testing.assert_allclose(b[f"pwm_{ion}"].values, a[f"pwm_{ion}"].values, rtol=1e-9)
        np.testing.assert_allclose(b[f"dep_{ion}"].values, a[f"dep_{ion}"].values * factor,
                                   rtol=1e-9)
    np.testing.assert_allclose(b["precipitation"].values, a["precipitation"].values * factor,
                               rtol=1e-9)


#: Flag cells drawn for the ledger test (most samples unflagged).
FLAG_MIX = ("", "", "contaminated", "gauge_failed", "trace", "invalid_record",
            "depth_estimated", "sample_lost")


@SETTINGS
@given(sample_rows(max_size=14, flags=FLAG_MIX),
       st.sampled_from(["month", "season", "year"]))
def test_ledger_counts_add_up(rows, resolution):
    sc, wet = _run(rows, resolution)
    n = sc.sizes["sample"]
    status = sc["status"].values
    counts = json.loads(sc.attrs["status_counts"])
    assert sum(counts.values()) == n
    per_status = sum(wet[f"n_{s}"] for s in ("used", "flagged", "excluded", "dry"))
    assert (per_status == wet["n_samples"]).all()
    assert (wet["n_valid"] == wet["n_used"] + wet["n_flagged"]).all()
    by = json.loads(wet.attrs["samples_by_status"])
    assert sum(by.values()) == wet.attrs["samples_in_periods"] == n
    # every excluded or flagged sample says why; used and dry ones carry no reason
    assert all(status[i] in ("used", "dry") or sc["reasons"].values[i] != "" for i in range(n))
    assert all(sc["reasons"].values[i] == "" for i in range(n) if status[i] == "used")
    assert sum(json.loads(wet.attrs["excluded_by_reason"]).values()) >= counts["excluded"]
    # each period has exactly one status
    assert set(np.unique(wet["status"].values)) <= {"complete", "flagged", "filled", "missing"}
