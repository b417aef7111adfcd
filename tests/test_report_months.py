"""report.html of a monthly run reads right: its totals are yearly rates and say so
(before, a month's 27.0 kg/ha/yr sat under "Totals per period" as if deposited in the
month, beside a bracket table in kg N/ha per period), and its notes say that monthly
completeness with weekly samples is strict and what a user can set.

Factor by hand: a 31-day month of a common year is 744 of 8760 h (x 11.77)."""
import html
import re

import pandas as pd
import pytest

from workbench.cli import main

from ui.demo_subset import write_demo_subset


@pytest.fixture(scope="module")
def months(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("months")
    scenario = write_demo_subset(tmp / "in", ("ridge",), 2021, 2021)
    out = tmp / "out"
    assert main(["run", str(scenario), "--out", str(out), "--quiet",
                 "--resolution", "month"]) == 0
    return out


def _text(folder):
    page = (folder / "report.html").read_text(encoding="utf-8")
    page = re.sub(r"<(script|style)[^>]*>.*?</\1>", "", page, flags=re.S)
    return html.unescape(re.sub(r"<[^>]+>", "", page))


def test_monthly_totals_are_said_to_be_yearly_rates(months):
    text = _text(months)
    assert "Totals per period as yearly rates [kg/ha/yr of S or N]" in text
    assert "Each month is given as a yearly rate" in text
    assert "x 8760/744 = 11.8" in text
    b = pd.read_csv(months / "budget.csv", comment="#")
    jan = b[(b["site"] == "ridge") & (b["period"] == "2021-01")
            & (b["pathway"] == "total")].iloc[0]
    assert jan["flux_kg_ha_yr"] == pytest.approx(jan["flux_kg_ha"] * 8760 / 744, rel=1e-9)


def test_monthly_notes_say_completeness_is_strict_and_what_to_set(months):
    text = _text(months)
    assert ("completeness of month periods: one precipitation sample (the median, 168 h) "
            "is 25.0 % of the shortest period (2021-02, 672 h)") in text
    assert "[wet] min_coverage_fraction" in text and "period_fill" in text
