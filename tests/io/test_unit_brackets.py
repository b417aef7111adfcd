"""A unit written outside square brackets (``SO4 (ueq/L)``, ``sample_volume (mL)``,
``SO4_ueq/L``, ``cloud_cover (%)``), as a spreadsheet user labels a column: before, the
header did not parse as ``name [unit]``, the column was listed as "not used" in the
ledger notes and the run went on without it (a precipitation file without its SO4 gave a
partial S budget, one without its sample volume no capture check).  Now each reader
refuses it with one located message and the header to write (docs/data_formats.md,
general rules).  Invented site "alpha".
"""
import pytest

from workbench.errors import InputError
from workbench.io import read_air, read_met, read_precipitation
from workbench.units import misplaced_unit

from tiny_inputs import AIR, PRECIP, met_text


@pytest.mark.parametrize("old, new", [
    ("SO4 [mg/L]", "SO4 (mg/L)"),
    ("SO4 [mg/L]", "SO4(mg/L)"),
    ("SO4 [mg/L]", "SO4_mg/L"),
    ("SO4 [mg/L]", "SO4 mg/L"),
    ("NO3_as_N [mg/L]", "NO3_as_N (mg/L)"),
    ("conductivity [uS/cm]", "conductivity (uS/cm)"),
    ("sample_depth [mm]", "sample_depth (mm)"),
])
def test_precipitation_column_with_unit_in_parentheses_is_refused(tmp_path, cat, old, new):
    text = PRECIP.replace(old, new)
    assert new in text
    (tmp_path / "p.csv").write_text(text)
    with pytest.raises(InputError) as exc:
        read_precipitation(tmp_path / "p.csv", cat)
    msg = str(exc.value)
    name, unit = misplaced_unit(new)
    assert msg.startswith(f"{tmp_path / 'p.csv'}, line 1, column '{new}'"), msg
    assert f"expected the header '{name} [{unit}]'" in msg, msg


def test_air_column_with_unit_in_parentheses_is_refused(tmp_path, cat):
    (tmp_path / "a.csv").write_text(AIR.replace("NH3 [ug/m3]", "NH3 (ug/m3)"))
    with pytest.raises(InputError) as exc:
        read_air(tmp_path / "a.csv", cat)
    msg = str(exc.value)
    # line 2: the header stands below the "# reference_state" line
    assert msg.startswith(f"{tmp_path / 'a.csv'}, line 2, column 'NH3 (ug/m3)'"), msg
    assert "expected the header 'NH3 [ug/m3]'" in msg, msg


def test_optional_met_column_with_unit_in_parentheses_is_refused(tmp_path, cat):
    # every required column is right, so the fast reader reads the file; the optional
    # cloud cover in parentheses was left unused in silence before
    (tmp_path / "m.csv").write_text(met_text().replace("cloud_cover [1]", "cloud_cover (%)"))
    with pytest.raises(InputError) as exc:
        read_met(tmp_path / "m.csv", cat)
    msg = str(exc.value)
    assert msg.startswith(f"{tmp_path / 'm.csv'}, line 2, column 'cloud_cover (%)'"), msg
    assert "expected the header 'cloud_cover [%]'" in msg, msg


def test_other_columns_with_parentheses_stay_unused_columns(tmp_path, cat):
    """Names that are none of ours are still listed as not used, not refused."""
    head = PRECIP.splitlines()[0]
    rows = PRECIP.splitlines()[1:]
    text = "\n".join([head + ",comment (lab),NH4_method,SO4_dl"]
                     + [r + ",x,IC,0.02" for r in rows]) + "\n"
    (tmp_path / "p.csv").write_text(text)
    _, led = read_precipitation(tmp_path / "p.csv", cat)
    note = next(n for n in led.notes if "columns not used" in n)
    for col in ("comment (lab)", "NH4_method", "SO4_dl"):
        assert col in note, note


@pytest.mark.parametrize("text, want", [
    ("SO4 (ueq/L)", ("SO4", "ueq/L")),
    ("so4 (µeq/l)", ("SO4", "µeq/l")),
    ("gauge_depth mm", ("gauge_depth", "mm")),
    ("pSO4 {ug/m3}", ("pSO4", "ug/m3")),
    ("SO4 [ueq/L]", None),
    ("method_NH3", None),
    ("NH3_method", None),
    ("NO3_as_N", None),
    ("flags (lab)", None),
])
def test_misplaced_unit(text, want):
    assert misplaced_unit(text) == want
