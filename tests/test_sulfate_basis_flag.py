"""budget.csv's ``sulfate_basis`` on the wet S rows comes from the wet chain's flag of a
non-sea-salt mean that fell back to total SO4 (``nssSO4_total_used``, carried into the
budget as ``wet_sulfate_total``), not from the words of the row's note.

Two sites of the tiny hand-checked scenario of tests/test_budget.py on the nss basis:
``alpha`` with Na in its samples (non-sea-salt SO4), ``beta`` the same rows without Na
(its non-sea-salt mean falls back to total SO4, flagged).  What holds what follows from
the definition of the sea-salt correction (Keene et al. 1986, the tracer is needed to
form the non-sea-salt part); the rest is common practice of the budget's labels.
"""
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import xarray as xr

from workbench.cli import run_scenario
from workbench.tables import budget_table
from workbench.wet import seasalt

sys.path.insert(0, str(Path(__file__).parent))

OLD_WORDS = "total SO4 used in place of non-sea-salt SO4"


def _two_sites(tmp_path):
    """The tiny scenario on the nss basis with a second site ``beta`` whose samples
    carry no Na (its other rows those of ``alpha``)."""
    from test_budget import SITES, _write
    sc = _write(tmp_path)
    sc.write_text(sc.read_text().replace('sulfate_basis = "total"', 'sulfate_basis = "nss"'))
    (tmp_path / "sites.toml").write_text(SITES + "\n" + SITES.replace('"alpha"', '"beta"')
                                         .replace("Alpha", "Beta"))
    precip = tmp_path / "precip.csv"
    lines = precip.read_text().splitlines()
    alpha = [ln.replace(",0.0", ",1.0") for ln in lines[1:]]      # Na 1 umol/L at alpha
    beta = ["beta," + ln.split(",", 1)[1].rsplit(",", 1)[0] + "," for ln in lines[1:]]
    precip.write_text("\n".join([lines[0]] + alpha + beta) + "\n")
    for name, skip in (("air.csv", 2), ("met.csv", 1)):
        f = tmp_path / name
        lines = f.read_text().splitlines()
        f.write_text("\n".join(lines + ["beta," + ln.split(",", 1)[1]
                                        for ln in lines[skip:]]) + "\n")
    return sc


def _wet_s(t, site, species="SO4"):
    r = t[(t["site"] == site) & (t["element"] == "S") & (t["pathway"] == "wet")
          & (t["species"] == species) & (t["period"].astype(str) == "2021-02")]
    assert len(r) == 1, r
    return r.iloc[0]


def test_a_period_without_the_tracer_is_labelled_total(tmp_path):
    """beta's wet S fell back to total SO4 (no Na; the record's other site has Na, so the
    non-sea-salt mean exists): its rows say ``total``, flagged, the note says why;
    alpha's say ``non-sea-salt``."""
    written, result, _ = run_scenario(_two_sites(tmp_path), tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"], keep_default_na=False)
    assert _wet_s(t, "alpha")["sulfate_basis"] == "non-sea-salt"
    assert _wet_s(t, "alpha", "all")["sulfate_basis"] == "non-sea-salt"
    beta = _wet_s(t, "beta")
    assert beta["sulfate_basis"] == "total" and beta["status"] == "flagged"
    assert "no Na at the site in the period: " + OLD_WORDS in beta["note"]
    assert _wet_s(t, "beta", "all")["sulfate_basis"] == "total"
    flag = result.budget["wet_sulfate_total"].sel(period="2021-02")
    assert flag.sel(site="beta").item() and not flag.sel(site="alpha").item()


def test_the_basis_does_not_read_the_note(tmp_path):
    """The note's words changed (another sentence, or the sentence written on a row that
    did not fall back) leave the label as it is: it follows the flag.  Before, the note
    was searched for "total SO4 used in place of non-sea-salt SO4", so beta read
    ``non-sea-salt`` without the words and alpha ``total`` with them."""
    _, result, _ = run_scenario(_two_sites(tmp_path), tmp_path / "out", quiet=True)
    ds = result.budget.copy()
    dims = ds["note"].dims
    note = ds["note"].transpose("site", ...).values
    note = np.vectorize(lambda s: str(s).replace(OLD_WORDS, "sea salt left in"),
                        otypes=[object])(note)
    alpha = ds["site"].values.astype(str) == "alpha"
    note[alpha] = np.vectorize(lambda s: s + "; " + OLD_WORDS, otypes=[object])(note[alpha])
    ds["note"] = xr.DataArray(note, dims=("site",) + tuple(d for d in ds["note"].transpose(
        "site", ...).dims[1:])).transpose(*dims)
    t = budget_table(ds)
    assert OLD_WORDS not in _wet_s(t, "beta")["note"]
    assert OLD_WORDS in _wet_s(t, "alpha")["note"]
    assert _wet_s(t, "beta")["sulfate_basis"] == "total"
    assert _wet_s(t, "beta", "all")["sulfate_basis"] == "total"
    assert _wet_s(t, "alpha")["sulfate_basis"] == "non-sea-salt"
    assert _wet_s(t, "alpha", "all")["sulfate_basis"] == "non-sea-salt"


def test_another_wording_of_the_fallback_keeps_the_label(tmp_path, monkeypatch):
    """The sentence lives in one place (:data:`workbench.wet.seasalt.TOTAL_IN_PLACE`):
    reworded there, every note says the new words and the label stays ``total``."""
    monkeypatch.setattr(seasalt, "TOTAL_IN_PLACE", "sea salt kept in {ion} (no tracer)")
    written, result, _ = run_scenario(_two_sites(tmp_path), tmp_path / "out", quiet=True)
    t = pd.read_csv(written["budget.csv"], keep_default_na=False)
    beta = _wet_s(t, "beta")
    assert "sea salt kept in SO4 (no tracer)" in beta["note"]
    assert not t["note"].astype(str).str.contains(OLD_WORDS).any()
    assert beta["sulfate_basis"] == "total"
    assert _wet_s(t, "alpha")["sulfate_basis"] == "non-sea-salt"
    assert "no Na in the period: sea salt kept in SO4" in \
        result.wet["nssSO4_total_used"].attrs["long_name"]
