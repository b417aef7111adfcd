"""The caution travels with every output a colleague may be handed alone: budget.nc and
velocities.nc (CF global ``comment``), grid.nc, and sensitivity.html, whose own line
said "model-based and uncertain ... follow the methods your authority requires" but not
that the estimates do not replace local rules or accredited practice (found in a new
analyst's trial of the README's commands).  The words are report.html's
(:data:`workbench.report.CAUTION`)."""
import numpy as np
import pandas as pd
import xarray as xr

from workbench.analysis.sensitivity import sensitivity_html
from workbench.report import CAUTION
from workbench.writers import write_netcdf


def test_caution_words():
    for words in ("model-based and uncertain", "methods your authority requires",
                  "do not replace local rules", "accredited laboratory and network practice"):
        assert words in CAUTION


def test_sensitivity_page_carries_the_whole_caution():
    import html
    page = sensitivity_html(pd.DataFrame(), pd.DataFrame())
    assert html.escape(CAUTION) in page


def test_netcdf_outputs_carry_the_caution(tmp_path):
    ds = xr.Dataset({"x": ("t", np.arange(3.0))})
    write_netcdf(ds, tmp_path / "a.nc", "test")
    with xr.open_dataset(tmp_path / "a.nc") as back:
        assert back.attrs["comment"] == CAUTION
