"""report.html's uncertainty text names the bulk collector's factor only where it was
drawn (docs/methods_uncertainty.md, "What a range covers").

The factor (``bulk_factor_rel_sd``, 0.1 by default) acts only under ``[budget]
bulk_correction = "scale_wet"``, on the part of a site's wet deposition its bulk samples
carry (docs/budget.md, "Bulk collectors"); under ``"exclude_particles"`` (the demo's)
no factor exists, yet the text said the range held "under bulk_correction =
"scale_wet" a bulk collector's wet-only / bulk factor" and the line of options gave
bulk_factor_rel_sd = 0.1 as drawn.  The invented network of
test_uncertainty_shared_systematics.py, ``threl`` under a bulk collector.
"""
import html
import sys
import types
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))

from test_uncertainty_shared_systematics import _write  # noqa: E402

from workbench.analysis import uncertainty as U  # noqa: E402
from workbench.pipeline import Study  # noqa: E402
from workbench.scenario import load_scenario  # noqa: E402

BULK = {"threl": 'collector = "bulk"\n'}
DRAWN = 'under bulk_correction = "scale_wet" a bulk collector'


def _run(path, draws=20):
    sc = load_scenario(path)
    study = Study.from_scenario(sc)
    o = sc.options
    res = study.run(o["wet"], o["dry"], o["budget"], sc.fixed_velocity, "year")
    new = U.with_uncertainty(res, study, types.SimpleNamespace(
        options={"uncertainty": U.UncertaintyOptions(draws=draws, seed=2)}))
    return new, study, sc


def _text(res):
    parts = U.report_section(res.table, lambda f: f.to_html(),
                             res.options["uncertainty"].options, U.bulk_state(res))
    return html.unescape(parts[1]), html.unescape(parts[2])


@pytest.mark.parametrize("correction,bulk_sites,drawn", [
    ("exclude_particles", BULK, False), ("none", None, False),
    ("scale_wet", BULK, True), ("scale_wet", None, False)])
def test_the_factor_is_named_only_where_drawn(tmp_path, correction, bulk_sites, drawn):
    path = _write(tmp_path / "n", bulk_sites, f'bulk_correction = "{correction}"\n')
    res, *_ = _run(path)
    assert res.options["uncertainty"].bulk_drawn is drawn
    text, line = _text(res)
    assert (DRAWN in text) is drawn
    assert ("(not drawn: " in line) is not drawn
    if not drawn:
        why = (f'bulk_correction = "{correction}"' if correction != "scale_wet"
               else "no site's wet deposition has a bulk collector's part")
        assert f"(not drawn: {why})" in line
    # the exclude_particles assumption is named as left out of the range, only there
    assert ('the assumption of bulk_correction = "exclude_particles"' in text) is (
        correction == "exclude_particles")


def test_the_report_says_it(tmp_path):
    from workbench.report import render_report
    path = _write(tmp_path / "n", BULK, 'bulk_correction = "exclude_particles"\n')
    res, study, sc = _run(path)
    page = html.unescape(render_report(res, study, sc))
    unc = page.split("Uncertainty: 5-95 % range")[1]
    assert DRAWN not in unc
    assert 'bulk_factor_rel_sd = 0.1, bulk_factor_ion_correlation = 0.7 (not drawn: ' \
           'bulk_correction = "exclude_particles")' in unc
