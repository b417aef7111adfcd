"""Malformed files never reach the user as a traceback: a reader either loads the file
(with its ledger balanced) or raises InputError.  Hypothesis mutates valid files."""
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from workbench.errors import InputError
from workbench.io import read_air, read_met, read_precipitation, read_sites

from tiny_inputs import AIR, PRECIP, SITES, met_text

CELL_NOISE = st.sampled_from(["", "abc", "-1", "<", "<x", "1e400", "nan", "14.5", "NaN", "1,2",
                              '"', "2020-13-45T25:00", "0", "-0.0", "\t", "µ", "<0.1", "inf",
                              "-999", "9999", "-9999.0", "3,5", "43837.375", "site", "Total",
                              "1e6", "-40"])


def _mutate(text, data):
    lines = text.splitlines()
    head = [i for i, ln in enumerate(lines) if ln.startswith("#")]
    body = [i for i in range(len(lines)) if i not in head]
    for _ in range(data.draw(st.integers(1, 4))):
        i = data.draw(st.sampled_from(body))
        cells = lines[i].split(",")
        action = data.draw(st.sampled_from(["cell", "drop_cell", "add_cell", "drop_line", "dup_line"]))
        if action == "cell":
            j = data.draw(st.integers(0, len(cells) - 1))
            cells[j] = data.draw(CELL_NOISE)
            lines[i] = ",".join(cells)
        elif action == "drop_cell" and len(cells) > 1:
            del cells[data.draw(st.integers(0, len(cells) - 1))]
            lines[i] = ",".join(cells)
        elif action == "add_cell":
            lines[i] = lines[i] + "," + data.draw(CELL_NOISE)
        elif action == "drop_line" and len(lines) > 2:
            lines[i] = ""
        elif action == "dup_line":
            lines.insert(i, lines[i])
    return "\n".join(lines) + "\n"


SETTINGS = settings(max_examples=60, deadline=None,
                    suppress_health_check=[HealthCheck.function_scoped_fixture])


def _check(reader, path, *args):
    try:
        out, led = reader(path, *args)
    except InputError as exc:
        msg = str(exc)
        assert msg.count(str(path)) == 1, msg  # located once, not an error wrapped in another
        return
    assert led.check_balanced()


@pytest.mark.parametrize("reader, text", [(read_precipitation, PRECIP), (read_air, AIR),
                                          (read_met, met_text(n_hours=30))],
                         ids=["precipitation", "air", "met"])
@SETTINGS
@given(data=st.data())
def test_table_mutations(tmp_path, data, reader, text):
    (tmp_path / "s.toml").write_text(SITES)
    cat = read_sites(tmp_path / "s.toml")
    p = tmp_path / "t.csv"
    p.write_text(_mutate(text, data))
    _check(reader, p, cat)


@SETTINGS
@given(data=st.data())
def test_sites_mutations(tmp_path, data):
    lines = SITES.splitlines()
    i = data.draw(st.integers(0, len(lines) - 1))
    noise = data.draw(st.sampled_from(['x = ', '= 3', 'latitude = 95', 'land_use = 4', '[[site]]',
                                       'lai = [1, 2]', 'receptors = "grass"', '"', '',
                                       'terrain_slope_deg = 95', 'roughness_length_m = 0',
                                       'displacement_height_m = 50.0', 'canopy_height_m = 0',
                                       'wind_height_m = "10 m"', 'utc_offset_h = 0.3',
                                       'elevation_m = -5000', 'lai = [' * 50]))
    lines[i] = noise
    p = tmp_path / "s.toml"
    p.write_text("\n".join(lines))
    try:
        read_sites(p)
    except InputError as exc:
        assert str(p) in str(exc)


@SETTINGS
@given(pos=st.integers(0, len(SITES)), byte=st.integers(0x80, 0xFF),
       which=st.sampled_from(["sites", "precipitation"]))
def test_stray_non_utf8_byte(tmp_path, pos, byte, which):
    """A Latin-1 character anywhere: read, or one located error naming the file."""
    (tmp_path / "s.toml").write_text(SITES)
    text = SITES if which == "sites" else PRECIP
    raw = text.encode()
    pos = min(pos, len(raw))
    p = tmp_path / ("x.toml" if which == "sites" else "x.csv")
    p.write_bytes(raw[:pos] + bytes([byte]) + raw[pos:])
    try:
        if which == "sites":
            read_sites(p)
        else:
            read_precipitation(p, read_sites(tmp_path / "s.toml"))
    except InputError as exc:
        assert str(exc).count(str(p)) == 1, str(exc)
