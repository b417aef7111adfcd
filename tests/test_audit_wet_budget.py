"""Independent audit of the wet chain, the budget's wet status and its yearly rates
(2026-12, branch pf-audit).

Every expected value is worked out here from a named outside source, never by calling
the code under test for it:

* the seasonal fill of a failed period (docs/methods_wet.md section 7) and the
  budget's status table (docs/budget.md, "Status": ``filled`` = passes, with filled
  values, the PWM fill among them);
* the Gregorian calendar (2024 is a leap year: 8784 h; 2023 and 2025 are not) and the
  meaning of a yearly rate (deposition per year; common practice);
* pint's own unit definitions (no workbench registry) with the IUPAC standard atomic
  weights, abridged to the conventional values (from memory: S 32.06, N 14.007,
  O 15.999, H 1.008 g/mol), for the conversion of a precipitation-weighted mean in
  ueq/L over a depth in mm to kg S/ha and kg N/ha.

Sites, dates and concentrations are invented.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pint
import pytest
from wet.wet_samples import make_samples

from workbench import periods as P
from workbench.analysis.outputs import ion_status
from workbench.budget import BudgetOptions, annual_factor
from workbench.budgetstatus import wet_component
from workbench.cli import run_scenario
from workbench.wet import WetOptions, screen, wet_deposition

IONS = ("SO4", "NO3", "NH4", "Na")
S_G_MOL, N_G_MOL = 32.06, 14.007            # IUPAC conventional atomic weights (from memory)


def _filled_january():
    """Dec 2020 30 mm (SO4 20, Na 5 umol/L); January 2021: 1-29 Jan 5 mm (SO4 50) and a
    contaminated 29 Jan - 1 Feb sample of 20 mm; Feb 2021 10 mm (SO4 80). January's
    time coverage is 28/31 = 0.903 (passes 0.90) but only 5 of its 25 mm have valid
    chemistry (0.20 < 0.70): it fails, and period_fill = "seasonal" gives it the winter
    PWM of the record's used samples other than its own (leave-one-out, 2026-12
    2026-12 audit), (30 x 20 + 10 x 80) / 40 = 35 umol/L."""
    rows = [dict(start="2020-12-01", end="2021-01-01", gauge_depth=30.0, SO4=20, Na=5),
            dict(start="2021-01-01", end="2021-01-29", gauge_depth=5.0, SO4=50, Na=5),
            dict(start="2021-01-29", end="2021-02-01", gauge_depth=20.0, SO4=500, Na=5,
                 flags="contaminated"),
            dict(start="2021-02-01", end="2021-03-01", gauge_depth=10.0, SO4=80, Na=5)]
    per = P.make_periods("2020-12-01", "2021-03-01", "month")
    o = WetOptions(period_fill="seasonal")
    return wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o)


@pytest.mark.parametrize("basis", ["total", "nss"])
def test_a_period_filled_with_the_seasonal_pwm_reads_filled_in_the_budget(basis):
    wet = _filled_january()
    jan = wet.sel(site="A", period="2021-01")
    winter = (30 * 20 + 10 * 80) / 40                # umol/L, by hand (own samples out)
    assert jan["valid_precip_fraction"].item() == pytest.approx(5 / 25)
    assert jan["status"].item() == "filled"
    assert jan["pwm_SO4"].item() == pytest.approx(winter * 1e-3)        # mol m-3
    # the budget's wet SO4 of January: the filled number, status 'filled', passing
    # (docs/budget.md "Status"); before the audit the per-ion rule read the 20 % share
    # of the period's own samples, which the filled PWM does not rest on, and made it
    # 'flagged', failing completeness ("SO4 valid for 20.0 % of the precipitation only")
    w = wet.transpose("site", "period", ...)
    st = w["status"].values.astype(object)
    st, note, dep, fails = wet_component(w, "SO4", BudgetOptions(sulfate_basis=basis), st,
                                         w["completeness_failed"].values)
    j = list(w["period"].values).index("2021-01")
    assert st[0, j] == "filled" and not fails[0, j]
    assert "valid for" not in note[0, j]
    nss = winter - 0.121 / 2 * 5                # Keene et al. (1986) SO4/Na 0.121 eq/eq
    want = (nss if basis == "nss" else winter) * 1e-3 * 25e-3           # mol m-2
    assert dep[0, j] == pytest.approx(want)
    # precipitation_annual.csv's per-mean status follows the same rule
    status, share = ion_status(wet, "SO4")
    assert status[0, j] == "filled" and share[0, j] == pytest.approx(0.2)


def _custom(ranges):
    return P.make_periods(None, None, "custom", ranges=ranges)


def test_yearly_rate_of_whole_multi_year_ranges():
    # calendar: 2023-2024 holds 8760 + 8784 = 17544 h, 2024-2025 8784 + 8760 h; two whole
    # years give their deposition per year, D / 2, whatever leap day they hold (before:
    # 8760 / 17544 = 0.4993 and 8784 / 17544 = 0.5007); three years from 1 July, D / 3
    per = _custom([("2023-01-01", "2025-01-01", "a"), ("2024-01-01", "2026-01-01", "b"),
                   ("2020-07-01", "2023-07-01", "c"), ("2024-01-01", "2025-01-01", "d")])
    got = dict(zip(per["label"], annual_factor(per)))
    assert per.set_index("label").loc["a", "hours"] == 8760 + 8784       # the calendar
    assert got == {"a": pytest.approx(0.5, rel=1e-12), "b": pytest.approx(0.5, rel=1e-12),
                   "c": pytest.approx(1 / 3, rel=1e-12), "d": 1.0}


def test_yearly_rate_of_a_part_of_a_year_uses_the_hours_of_its_year():
    # February 2024 (29 days, 696 h) in a leap year of 8784 h; 18 months from 1 January
    # 2023 are not a whole number of years: 8760 h of 2023 over 13128 h
    per = _custom([("2024-02-01", "2024-03-01", "feb"), ("2023-01-01", "2024-07-01", "m18")])
    got = dict(zip(per["label"], annual_factor(per)))
    assert got["feb"] == pytest.approx(8784 / (29 * 24), rel=1e-12)
    assert got["m18"] == pytest.approx(8760 / (8760 + 182 * 24), rel=1e-12)


def test_ueq_per_litre_over_mm_to_kg_per_ha_with_pint_and_iupac_weights():
    # a week of 25 mm with SO4 40 ueq/L and NO3 30 ueq/L: pint alone (its own default
    # registry, no workbench unit), 2 eq per mol of sulfate, 1 per mol of nitrate
    ureg = pint.UnitRegistry()
    depth = 25 * ureg.mm
    s = (40 / 2 * ureg.umol / ureg.L * depth * S_G_MOL * ureg.g / ureg.mol).to("kg/ha")
    n = (30 * ureg.umol / ureg.L * depth * N_G_MOL * ureg.g / ureg.mol).to("kg/ha")
    rows = [dict(start="2021-03-01", end="2021-03-08", gauge_depth=25.0, SO4=20.0, NO3=30.0)]
    o = WetOptions()
    wet = wet_deposition(screen(make_samples(rows, ions=IONS), o),
                         _custom([("2021-03-01", "2021-03-08", "wk")]), o)
    c = wet.sel(site="A", period="wk")
    assert c["dep_SO4_kg_ha"].item() == pytest.approx(s.magnitude, rel=1e-9)    # 0.1603
    assert c["dep_NO3_kg_ha"].item() == pytest.approx(n.magnitude, rel=1e-9)    # 0.1051
    # equivalents: 40 ueq/L x 25 mm = 40 umol of charge per L x 25 L/m2 = 10 eq/ha
    eq = (40 * ureg.umol / ureg.L * depth).to("mol/ha").magnitude
    assert eq == pytest.approx(10.0)
    assert c["dep_SO4_eq_ha"].item() == pytest.approx(eq, rel=1e-9)


def test_a_site_without_precipitation_samples_says_only_that(tmp_path):
    # two invented sites, the second ("rill") with air and met but no precipitation
    # sample: the budget puts the wet chain on the catalogue's sites, and rill's wet rows
    # are missing with the one reason there is (docs/budget.md "Status"); before the
    # audit its SO4 rows said "no Na at the site ...: total SO4 used" and "non-sea-salt
    # SO4 clipped at 0", read from NaN (no data) as True
    import sys
    from pathlib import Path
    sys.path.insert(0, str(Path(__file__).parent))
    from analysis import tiny_site as T

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    T.make_tiny(tmp_path)
    (tmp_path / "sites.toml").write_text(
        T.SITES + T.SITES.replace('"quill"', '"rill"').replace("Quill", "Rill"))
    air = (tmp_path / "air.csv").read_text().splitlines()
    air += [line.replace("quill", "rill") for line in air[2:]]
    (tmp_path / "air.csv").write_text("\n".join(air) + "\n")
    met = pd.read_csv(tmp_path / "met.csv")
    pd.concat([met, met.assign(site="rill")]).to_csv(tmp_path / "met.csv", index=False)
    sc_path = tmp_path / "scenario.toml"
    sc_path.write_text(sc_path.read_text().replace('sulfate_basis = "total"',
                                                   'sulfate_basis = "nss"'))
    sc = load_scenario(sc_path)
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "month", "2021-02-01", "2021-03-01")
    t = res.table
    rill = t[(t["site"] == "rill") & (t["pathway"] == "wet")]
    assert len(rill) and (rill["status"] == "missing").all()
    for note in rill["note"]:
        assert "clipped" not in note and "total SO4 used" not in note, note
        assert note.endswith("no precipitation samples in the period"), note


@pytest.mark.parametrize("treatment, words, factor", [
    ("half", "half the detection limit", 0.5), ("limit", "the detection limit", 1.0),
    ("zero", "0", 0.0)])
def test_a_wet_mean_made_of_substitutes_only_says_so(treatment, words, factor):
    # two weeks of 10 mm with SO4 '<2 umol/L' and a third with 1 umol/L measured: the
    # first two weeks' SO4 is factor x 2 umol/L (docs/methods_wet.md section 3.1, the
    # substitution common practice), a number with no measurement behind it, which
    # budget.csv now says in the note of the wet row (its status is kept, as the air
    # side's all-below-detection species, docs/budget.md "Below detection"); the three
    # weeks hold one measured value and carry no such note
    rows = [dict(start=f"2021-03-{d:02d}", end=f"2021-03-{d + 7:02d}", gauge_depth=10.0,
                 SO4=1.0, NO3=5.0, Na=2.0, censored={"SO4": 2.0}) for d in (1, 8, 15)]
    rows[2]["censored"] = {}
    per = _custom([("2021-03-01", "2021-03-15", "two"), ("2021-03-01", "2021-03-22", "three")])
    o = WetOptions(detection_limit=treatment)
    wet = wet_deposition(screen(make_samples(rows, ions=IONS), o), per, o)
    w = wet.transpose("site", "period", ...)
    st, note, dep, _ = wet_component(w, "SO4", BudgetOptions(sulfate_basis="total"),
                                     w["status"].values.astype(object),
                                     w["completeness_failed"].values)
    # beside Na = 2 umol/L the substitute is the sea salt S = 0.0605 x 2 plus factor x
    # (2 - S) (docs/methods_wet.md 3.1, tests/wet/test_censored_so4_seasalt.py)
    sub = 0.0605 * 2.0 + factor * (2.0 - 0.0605 * 2.0)
    assert dep[0, 0] == pytest.approx(sub * 1e-3 * 20e-3)                  # mol m-2
    assert dep[0, 1] == pytest.approx((sub * 20 + 1.0 * 10) * 1e-3 * 1e-3)
    assert st[0, 0] == "complete" and st[0, 1] == "complete"
    assert (f"SO4 below detection in all 2 valid samples ({words} used; beside Na: the "
            "sea salt plus that share of (limit - sea salt))") in note[0, 0]
    assert "SO4 below detection beside Na in 2 samples" in note[0, 0]
    assert "below detection in all" not in note[0, 1]
    assert "SO4 below detection beside Na in 2 samples" in note[0, 1]    # the floor, said
    # NO3 was measured in every week: no note about it on the NO3 row
    _, note_no3, _, _ = wet_component(w, "NO3", BudgetOptions(), w["status"].values.astype(object),
                                      w["completeness_failed"].values)
    assert "below detection" not in note_no3[0, 0]


@pytest.mark.parametrize("pso4, pna, clipped", [
    ([2.0, 2.0, 2.0, 2.0], [50.0, 50.0, 50.0, 50.0], True),   # sea salt exceeds it all month
    ([2.0, 8.0, 8.0, 8.0], [10.0, 0.1, 0.1, 0.1], False)])    # one week below 0, the sum not
def test_dry_non_sea_salt_particulate_sulfate_below_zero_is_clipped_and_flagged(
        tmp_path, pso4, pna, clipped):
    # nss pSO4 = pSO4 - 0.0605 pNa [mol/mol] (Keene et al. 1986, SO4/Na 0.121 eq/eq, from
    # memory; molar masses IUPAC, from memory: SO4 96.056, Na 22.990 g/mol), deposited
    # at the fixed Vd of 0.2 cm/s over four weeks of February 2021. Each week stays
    # linear (a week below 0 counts as it is); the month's sum is clipped at 0 and
    # flagged when below 0, as the wet chain's nss SO4 (docs/methods_wet.md section 8).
    # Before the audit the first case gave -0.17 kg S/ha 'complete' and a negative dry S.
    from test_budget import _get, _with_particles
    sc = _with_particles(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    air = tmp_path / "air.csv"
    lines = air.read_text().splitlines()
    lines[2:] = [ln.rsplit(",", 2)[0] + f",{s},{n}" for ln, s, n in zip(lines[2:], pso4, pna)]
    air.write_text("\n".join(lines) + "\n")
    written, _, _ = run_scenario(sc, tmp_path / "out", quiet=True)
    table = pd.read_csv(written["budget.csv"])
    nss = [s * 1e-6 / 96.056 - 0.121 / 2 * n * 1e-6 / 22.990 for s, n in zip(pso4, pna)]
    week_s = 0.2e-2 * 7 * 86400                                   # m of air deposited per week
    by_hand = sum(c * week_s for c in nss) * 32.06e-3 * 1e4       # kg S/ha
    assert (by_hand < 0) == clipped and min(nss) < 0
    row = _get(table, "S", "dry", "pSO4")
    so2 = _get(table, "S", "dry", "SO2")["flux_kg_ha"]
    if clipped:
        assert row["flux_kg_ha"] == 0.0 and row["status"] == "flagged"
        assert "non-sea-salt pSO4 clipped at 0" in row["note"]
        assert _get(table, "S", "dry", "all")["flux_kg_ha"] == pytest.approx(so2)
    else:
        assert row["flux_kg_ha"] == pytest.approx(by_hand, rel=1e-3)
        assert row["status"] == "complete"


def test_a_wet_row_failing_its_ion_share_shows_that_share_as_its_completeness(tmp_path):
    # the invented tiny site: four weeks of 8, 12, 4 and 16 mm in February 2021, SO4
    # analysed in the first week only: 8 of 40 mm = 0.2 of the rain has a SO4 value,
    # below min_valid_precip_fraction 0.7, so the SO4 row is flagged and fails
    # (docs/budget.md "Status"); its `completeness`, "smallest of the row's completeness
    # fractions" (docs/data_formats.md), is that 0.2 (before the audit: 1.0, the period's
    # fractions over all ions, beside a row that fails completeness)
    import sys
    from pathlib import Path
    sys.path.insert(0, str(Path(__file__).parent))
    from analysis import tiny_site as T

    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    T.make_tiny(tmp_path)
    lines = (tmp_path / "precip.csv").read_text().splitlines()
    head = lines[0].split(",")
    k = head.index("SO4 [umol/L]")
    for r in range(2, len(lines)):                       # weeks 2-4: no SO4 value
        cells = lines[r].split(",")
        cells[k] = ""
        lines[r] = ",".join(cells)
    (tmp_path / "precip.csv").write_text("\n".join(lines) + "\n")
    sc = load_scenario(tmp_path / "scenario.toml")
    study = Study.from_scenario(sc)
    res = study.run(sc.options["wet"], sc.options["dry"], sc.options["budget"],
                    sc.fixed_velocity, "month", "2021-02-01", "2021-03-01")
    t = res.table
    so4 = t[(t["pathway"] == "wet") & (t["species"] == "SO4")].iloc[0]
    no3 = t[(t["pathway"] == "wet") & (t["species"] == "NO3")].iloc[0]
    share = T.GAUGE[0] / sum(T.GAUGE)                                       # 0.2
    assert so4["status"] == "flagged" and not so4["passes"]
    assert so4["completeness"] == pytest.approx(share)
    assert no3["completeness"] == pytest.approx(1.0) and no3["status"] == "complete"
    s_wet = t[(t["pathway"] == "wet") & (t["species"] == "all") & (t["element"] == "S")]
    assert s_wet["completeness"].iloc[0] == pytest.approx(share)
