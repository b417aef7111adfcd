"""On the invented demo network, the deliberately bad samples are the ones flagged or
excluded, each with the right reason.

The list of planted problems (demo_data/planted_problems.json) is written by the
demo generator beside the files; this test reads the files with the package's
readers (workbench.io) and screens them with the default options.
"""
import json
from pathlib import Path

import numpy as np
import pytest

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
FILES = [DEMO / n for n in ("sites.toml", "precipitation.csv", "met.csv.gz",
                            "planted_problems.json")]
pytestmark = pytest.mark.skipif(not all(f.exists() for f in FILES),
                                reason="demo network files not made yet (demo_data/)")

# planted kind -> (allowed statuses, text expected in reasons or notes)
EXPECTED = {
    "sample_lost": ({"excluded"}, "flag sample_lost"),
    "contaminated_flagged": ({"excluded"}, "flag contaminated"),
    "lid_open": ({"excluded"}, "flag lid_open"),
    "overflow": ({"excluded"}, "flag overflow"),
    "not_analysed": ({"excluded"}, "flag not_analysed"),
    "trace_sample": ({"excluded"}, "flag trace"),
    "ion_balance_poor": ({"flagged", "excluded"}, "ion balance"),
    "contaminated_unflagged": ({"excluded"}, "biological"),
    "soil_dust": ({"flagged"}, "soil dust"),
    "low_capture": ({"flagged", "excluded"}, "capture ratio below"),
    "gauge_failed": ({"used", "flagged"}, "gauge depth filled"),
    "gauge_estimated": ({"used", "flagged"}, "gauge depth estimated"),
    "dry_week": ({"dry"}, ""),
    "below_detection": ({"used", "flagged"}, "censored"),
    "below_detection_clean": ({"used", "flagged"}, "censored"),
    "negative_after_blank": ({"used", "flagged"}, "censored"),
}


@pytest.fixture(scope="module")
def demo():
    from workbench.io import read_met, read_precipitation, read_sites
    from workbench.wet import screen
    cat = read_sites(DEMO / "sites.toml")
    samples, _ = read_precipitation(DEMO / "precipitation.csv", cat)
    met, _ = read_met(DEMO / "met.csv.gz", cat)
    planted = [p for p in json.loads((DEMO / "planted_problems.json").read_text())
               if p["file"] == "precipitation.csv"]
    return screen(samples, met=met), met, planted


def test_every_planted_problem_is_caught_with_its_reason(demo):
    sc, _, planted = demo
    lines = sc["line"].values
    unknown = sorted({p["kind"] for p in planted} - set(EXPECTED))
    assert not unknown, f"planted kinds without an expectation in this test: {unknown}"
    for p in planted:
        k = int(np.flatnonzero(lines == p["line"])[0])
        statuses, text = EXPECTED[p["kind"]]
        status = sc["status"].values[k]
        said = sc["reasons"].values[k] + "; " + sc["notes"].values[k]
        assert status in statuses, (p["kind"], p["line"], status, said)
        assert text in said, (p["kind"], p["line"], said)
        if p["kind"].startswith("below_detection") or p["kind"] == "negative_after_blank":
            assert sc["n_censored"].values[k] >= 1
        if p["kind"] == "gauge_failed":
            assert sc["gauge_source"].values[k] in ("collector", "met")
            assert sc["chemistry_valid"].values[k]


def test_only_planted_samples_are_flagged_or_excluded(demo):
    sc, _, planted = demo
    bad_lines = {p["line"] for p in planted}
    status = sc["status"].values
    caught = set(sc["line"].values[np.isin(status, ["flagged", "excluded"])].tolist())
    assert caught <= bad_lines, sorted(caught - bad_lines)


def test_demo_wet_deposition_accounts_for_every_sample(demo):
    from workbench.wet import wet_deposition
    sc, met, _ = demo
    for resolution in ("month", "year"):
        wet = wet_deposition(sc, resolution, met=met)
        by = json.loads(wet.attrs["samples_by_status"])
        assert sum(by.values()) == wet.attrs["samples_in_periods"] == sc.sizes["sample"]
        per_status = sum(wet[f"n_{s}"] for s in ("used", "flagged", "excluded", "dry"))
        assert (per_status == wet["n_samples"]).all()
        excluded = json.loads(wet.attrs["excluded_by_reason"])
        assert excluded.get("contamination screen: biological (K, NH4, PO4 high)") == 1
        complete = wet["status"] == "complete"
        assert complete.mean() > 0.8            # the network is mostly complete
        # fluxes of complete periods are positive and finite; nss SO4 below SO4
        assert np.isfinite(wet["dep_SO4_kg_ha"].where(complete)).sum() == complete.sum()
        assert (wet["pwm_nssSO4"] <= wet["pwm_SO4"]).where(complete).fillna(True).all()
