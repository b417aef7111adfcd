"""The first hour of a met record has no previous hour: the rain rule of the surface
wetness takes that hour's rain alone (docs/methods_dry.md section 8), so a dry first hour
without dew is dry (``wetness_source`` 5, "previous hour's rain unknown") and keeps its
modelled Vd.  Before, its wetness was unknown: every Vd of the hour was NaN and the
budget filled it from the mean diurnal cycle, so the first period looked less complete
(vd_coverage) than its data was.  A run whose period starts inside the record takes the
previous hour's rain from the file."""
import gzip
import warnings

import numpy as np
import pandas as pd
import pytest

from ui.demo_subset import write_demo_subset

HOURS_2021 = 8760


def _study(tmp, first_label):
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    path = write_demo_subset(tmp, ("ridge",), 2021, 2021)
    met = pd.read_csv(tmp / "met.csv.gz", comment="#")
    met = met[met["time"] >= first_label].copy()
    met["relative_humidity [%]"] = 60.0              # no dew in the first hour
    met.loc[met.index[0], "precipitation [mm]"] = 0.0  # nor rain
    with gzip.open(tmp / "met.csv.gz", "wt") as f:
        f.write("# time_label: end\n")
        met.to_csv(f, index=False)
    return Study.from_scenario(load_scenario(path))


@pytest.fixture(scope="module")
def first_hour_study(tmp_path_factory):
    # local standard time (UTC+1), labels at the hour's end: the record's first hour is
    # the hour ending 05:00 UTC, so 2021 lacks the four hours before it as well
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        study = _study(tmp_path_factory.mktemp("first_hour"), "2021-01-01T06:00")
        return study, study.run()


@pytest.fixture(scope="module")
def first_hour_in_2021(first_hour_study):
    return first_hour_study[1]


def test_first_hour_is_modelled_dry_and_marked(first_hour_in_2021):
    v = first_hour_in_2021.velocities.sel(site="ridge",
                                          receptor=["conifer_forest", "moorland", "grass"])
    wet = v["surface_wet"].values
    assert (wet[..., 0] == 0).all() and np.isfinite(wet[..., 1]).all()
    # (its wetness_source 5: tests/drydep/test_wetness_previous_hour.py)
    assert np.isfinite(v["vd_SO2"].values[..., :2]).all()
    assert np.isfinite(v["vd_pSO4"].values[..., 0]).all()


def test_first_hour_counts_as_modelled_in_the_budget(first_hour_in_2021):
    t = first_hour_in_2021.table
    dry = t[(t["site"] == "ridge") & (t["period"] == "2021") & (t["pathway"] == "dry")
            & (t["species"] != "all") & (t["status"] != "missing")]
    assert len(dry)
    # only the 4 hours before the record have no modelled Vd (its first hour has one)
    not_modelled = np.round((1.0 - dry["vd_coverage"].to_numpy(float)) * HOURS_2021)
    assert (not_modelled == 4).all(), not_modelled
    assert (dry["flux_coverage"] == 1.0).all()       # the filled hour has a flux


def test_velocities_nc_marks_the_first_hour(first_hour_study, tmp_path):
    """velocities.nc writes ``wetness_source`` per (site, receptor) surface and hour as
    a CF flag variable (CF 1.8 section 3.5: ``flag_values`` paired in order with the
    blank-separated words of ``flag_meanings``), int8; the first hour of the record reads
    "previous hour's rain unknown" (code 5) on every surface, the next hour not.  Before,
    the file had no ``wetness_source``."""
    import xarray as xr
    from workbench.writers import write_velocities_nc
    study, result = first_hour_study
    path = write_velocities_nc(result, study, None, tmp_path / "velocities.nc")
    with xr.open_dataset(path, mask_and_scale=False) as ds:
        v = ds["wetness_source"]
        assert v.dims == ("surface", "time") and v.dtype == np.int8
        assert v.attrs["long_name"]
        assert "units" not in v.attrs
        meaning = dict(zip(np.asarray(v.attrs["flag_values"]).tolist(),
                           v.attrs["flag_meanings"].split()))
        assert len(meaning) == len(v.attrs["flag_meanings"].split()) == 7
        assert meaning[5] == "inferred_dry_previous_hour_rain_unknown"
        assert meaning[0] == "met_file_surface_wet" and meaning[1] == "inferred_rain"
        assert meaning[2] == "inferred_dew" and meaning[-1] == "unknown"
        codes = v.values
        assert set(np.unique(codes)) <= set(meaning)
        ridge = ds["surface_site"].values.astype(str) == "ridge"
        assert ridge.sum() >= 3
        assert (codes[ridge, 0] == 5).all()
        assert (codes[ridge, 1] != 5).all()
        assert (codes[:, 1:] != 5).all()      # the record has no gap
        # the codes agree with the surface wetness written beside them
        wet = ds["surface_wet"].values
        assert (wet[codes == 5] == 0).all() and (wet[codes == 1] == 1).all()
        assert (wet[codes == 3] == 0).all() and (wet[codes == 2] == 1).all()


def test_wetness_source_is_int8_in_memory(first_hour_in_2021):
    """The run's velocities hold ``wetness_source`` as int8 codes, -1 where the wetness
    is unknown (the file's ``flag_values``), 1 byte a site-hour and receptor; it was
    float64 with NaN (8 bytes) until velocities.nc was written.  A pair no site asks for
    holds -1 (unknown), never 0, which is a real code ("met file")."""
    v = first_hour_in_2021.velocities
    src = v["wetness_source"]
    assert src.dtype == np.int8
    assert list(np.asarray(src.attrs["flag_values"]).tolist()) == list(range(-1, 6))
    codes = src.transpose("site", "receptor", "time").values
    assert set(np.unique(codes).tolist()) <= set(range(-1, 6))
    active = v["active"].transpose("site", "receptor").values
    assert (~active).any() and (codes[~active] == -1).all()
    assert (codes[active][:, 0] == 5).all()         # the record's first hour, as before
