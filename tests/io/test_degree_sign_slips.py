"""A degree sign typed another way in a temperature header (io.common.UNIT_SPELLINGS).

'°C' and '℃' are read as degC.  A blank after the sign ('° C') made pint read 'C' as
coulomb, and the message spoke of "[current] * [time]"; the ordinal indicator U+00BA
('ºC', typed for a degree sign on some keyboards), a lower-case '°c' and the sign alone
were "unknown" with no word of what to write.  Each is still refused (a guess at the
scale is not ours to make), now with its place and what to write.  Built from the first
rows of the invented demo met file.
"""
import gzip
from pathlib import Path

import pytest

from workbench.errors import InputError
from workbench.io import read_met, read_sites

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="module")
def head():
    lines = gzip.open(DEMO / "met.csv.gz", "rt").read().splitlines()[:200]
    return lines, read_sites(DEMO / "sites.toml")


@pytest.mark.parametrize("unit, hint", [
    ("° C", "write 'degC'"), ("ºC", "write 'degC' (º is the ordinal indicator, not the "
                                    "degree sign °)"),
    ("º C", "write 'degC' (º is"), ("°c", "write 'degC'"), ("ºF", "write 'degF' (º is"),
    ("°", "write 'degC' or 'degF' (a degree sign alone names no scale)")])
def test_a_degree_sign_typed_another_way_is_located_with_what_to_write(tmp_path, head,
                                                                       unit, hint):
    """Old code: no 'write ...' in the message."""
    lines, cat = head
    p = tmp_path / "met.csv"
    p.write_text("\n".join([lines[0], lines[1].replace("[degC]", f"[{unit}]")] + lines[2:])
                 + "\n", encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_met(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line 2, column 'temperature [{unit}]': unknown or "
                          "dimensionally wrong unit"), msg
    assert hint in msg
    assert f"got '{unit}', expected a unit convertible to K" in msg


@pytest.mark.parametrize("unit", ["°C", "℃"])
def test_the_degree_sign_itself_is_read(tmp_path, head, unit):
    lines, cat = head
    p = tmp_path / "met.csv"
    p.write_text("\n".join([lines[0], lines[1].replace("[degC]", f"[{unit}]")] + lines[2:])
                 + "\n", encoding="utf-8")
    ds, _ = read_met(p, cat)
    assert float(ds["temperature"].isel(time=1).sel(site="ridge")) == pytest.approx(
        1.9 + 273.15)          # line 4 of the file: 1.9 degC
