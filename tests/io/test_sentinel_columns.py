"""A missing-value code (-999, -9999) in any numeric column of a precipitation file is
masked and its row flagged with the column and the code, as in the ion columns; a
genuinely negative value stays a located error."""
import numpy as np
import pytest

from workbench.errors import InputError
from workbench.io import read_precipitation, read_sites

from tiny_inputs import PRECIP, SITES

#: The first data row (line 2) of PRECIP and its pH, conductivity cells.
ROW2 = "alpha,2020-01-07T09:00,2020-01-14T09:00,w1,12.0,11.0,4.8,20.0,"


@pytest.fixture
def cat(tmp_path):
    (tmp_path / "s.toml").write_text(SITES)
    return read_sites(tmp_path / "s.toml")


def _reasons(led):
    return dict(zip(led.table["line"], zip(led.table["status"], led.table["reason"])))


@pytest.mark.parametrize("code", ["-999", "-9999"])
@pytest.mark.parametrize("column,cell", [("conductivity", "4.8,{code},"), ("pH", "{code},20.0,")])
def test_code_in_ph_or_conductivity_is_masked(tmp_path, cat, code, column, cell):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace(ROW2, ROW2.replace("4.8,20.0,", cell.format(code=code))))
    ds, led = read_precipitation(p, cat)                 # no error
    assert np.isnan(ds[column].values[0])
    other = "pH" if column == "conductivity" else "conductivity"
    assert not np.isnan(ds[other].values[0])             # the other cell is untouched
    assert _reasons(led)[2] == ("flagged", f"{column} {code} looks like a missing-value code "
                                "(masked)")
    assert led.check_balanced()
    reasons = led.reasons()
    assert reasons["reason"].str.startswith(column).sum() == 1


@pytest.mark.parametrize("code", ["-999", "-9999"])
def test_code_in_sample_volume_is_masked(tmp_path, cat, code):
    text = PRECIP.replace("sample_depth [mm]", "sample_volume [mL],collector_area [cm2]")
    lines = text.splitlines()
    # sample volume [mL] over a 500 cm2 collector: 11 mm is 550 mL
    body = [ln.replace(",11.0,", ",550,500,").replace(",0.0,0.0,", ",0.0,0,500,")
            .replace(",4.5,", ",225,500,").replace(",19.0,", ",950,500,") for ln in lines[1:]]
    body[0] = body[0].replace(",550,500,", f",{code},500,")
    p = tmp_path / "p.csv"
    p.write_text("\n".join([lines[0]] + body) + "\n")
    ds, led = read_precipitation(p, cat)
    assert np.isnan(ds["sample_depth"].values[0])
    assert ds["sample_depth"].values[-1] == pytest.approx(19.0)
    assert _reasons(led)[2] == ("flagged", f"sample volume {code} looks like a missing-value "
                                "code (masked)")
    assert ds["gauge_depth"].values[0] == 12.0           # the row is used with its other values
    assert led.check_balanced()


def test_negative_conductivity_is_still_a_located_error(tmp_path, cat):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace(ROW2, ROW2.replace("4.8,20.0,", "4.8,-3,")))
    with pytest.raises(InputError) as e:
        read_precipitation(p, cat)
    text = str(e.value)
    assert "negative conductivity" in text and "p.csv" in text and "line 2" in text
    assert "conductivity" in text and "'-3'" in text and ">= 0" in text


def test_ph_out_of_range_is_still_a_located_error(tmp_path, cat):
    p = tmp_path / "p.csv"
    p.write_text(PRECIP.replace(ROW2, ROW2.replace("4.8,20.0,", "-3,20.0,")))
    with pytest.raises(InputError, match="pH outside 0-14"):
        read_precipitation(p, cat)
