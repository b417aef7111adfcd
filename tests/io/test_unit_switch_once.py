"""A unit switch inside a file: each cell reaches SI once, from its own column's unit.

Old code: the later column's numbers were turned into text in the first column's unit
(10 significant digits) and then read and converted to SI again: a double conversion
through text that lost digits and hid a missing-value code typed in the later unit.
"""
import numpy as np

from workbench.io.samples import read_air, read_precipitation
from workbench.io.sites import read_sites
from workbench.units import Q_, to_amount

from tests.tiny_inputs import SITES

HEAD = "site,start,end,sampler_id,gauge_depth [mm],SO4 [mg/L],SO4 [ueq/L],NO3_as_N [mg/L],NO3 [ueq/L]\n"
#: A value with more significant digits than the old 10-digit text kept (any value
#: whose 11th+ digits after the mg/L factor are not zero shows the loss).
LATER = 123.45678901234567


def _files(tmp_path, rows):
    (tmp_path / "sites.toml").write_text(SITES)
    p = tmp_path / "precipitation.csv"
    p.write_text(HEAD + rows)
    return p, read_sites(tmp_path / "sites.toml")


def test_a_value_in_the_later_unit_reaches_si_as_a_direct_pint_conversion(tmp_path):
    p, cat = _files(tmp_path,
                    "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,1.5,,0.3,\n"
                    f"alpha,2020-01-14T09:00,2020-01-21T09:00,w1,10.0,,{LATER!r},,{LATER!r}\n")
    ds, led = read_precipitation(p, cat)
    so4 = ds["SO4"].values
    # reference: pint directly, ueq/L -> mol/m3, over 2 eq per mol of SO4 (common practice)
    ref_so4 = Q_(LATER, "umol/L").to("mol/m**3").magnitude / 2
    ref_no3 = Q_(LATER, "umol/L").to("mol/m**3").magnitude           # 1 eq per mol NO3
    assert abs(so4[1] - ref_so4) <= 2 * np.finfo(float).eps * ref_so4
    assert abs(ds["NO3"].values[1] - ref_no3) <= 2 * np.finfo(float).eps * ref_no3
    # the first unit's rows as before (NO3_as_N [mg/L]: the element basis of its own column)
    assert so4[0] == to_amount(1.5, "mg/L", "SO4")[0]
    assert ds["NO3"].values[0] == to_amount(0.3, "mg/L", "NO3", "N")[0]
    note = " ".join(led.notes)
    assert "SO4 in mg/L" in note and "in ueq/L" in note and "line 3" in note


def test_a_detection_limit_in_the_later_unit_is_converted_from_that_unit(tmp_path):
    p, cat = _files(tmp_path,
                    "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,1.5,,0.3,\n"
                    "alpha,2020-01-14T09:00,2020-01-21T09:00,w1,10.0,,<0.7,,2.0\n")
    ds, _ = read_precipitation(p, cat)
    assert bool(ds["SO4_censored"].values[1])
    ref = Q_(0.7, "umol/L").to("mol/m**3").magnitude / 2
    assert abs(ds["SO4_detection_limit"].values[1] - ref) <= 2 * np.finfo(float).eps * ref


def test_a_missing_value_code_typed_in_the_later_unit_is_masked(tmp_path):
    """Old code: -999 ueq/L became -47.98... mg/L in text before the code check, which
    then saw no code (a negative, censored) instead of a masked missing-value code."""
    p, cat = _files(tmp_path,
                    "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,1.5,,0.3,\n"
                    "alpha,2020-01-14T09:00,2020-01-21T09:00,w1,10.0,,-999,,2.0\n")
    ds, led = read_precipitation(p, cat)
    reasons = " ".join(led.table["reason"])
    assert "-999 looks like a missing-value code" in reasons


def test_a_text_in_the_later_column_is_located_in_that_column(tmp_path):
    import pytest
    from workbench.errors import InputError
    p, cat = _files(tmp_path,
                    "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,1.5,,0.3,\n"
                    "alpha,2020-01-14T09:00,2020-01-21T09:00,w1,10.0,,1.2.3,,2.0\n")
    with pytest.raises(InputError) as e:
        read_precipitation(p, cat)
    assert e.value.line == 3 and e.value.column == "SO4 [ueq/L]" and e.value.value == "1.2.3"


def test_air_switch_ppb_to_ppb_prefix_is_one_conversion(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    p = tmp_path / "air.csv"
    p.write_text("# reference_state: ambient\nsite,start,end,sampler_id,NO2 [ppb],NO2 [nmol/mol]\n"
                 "alpha,2020-01-07T09:00,2020-01-14T09:00,fp1,5.0,\n"
                 f"alpha,2020-01-14T09:00,2020-01-21T09:00,fp1,,{LATER!r}\n")
    ds, _ = read_air(p, read_sites(tmp_path / "sites.toml"))
    ref = Q_(LATER, "nmol/mol").to("dimensionless").magnitude
    assert abs(ds["NO2"].values[1] - ref) <= 2 * np.finfo(float).eps * ref
