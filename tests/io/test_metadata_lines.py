"""A ``# key: value`` metadata line of a CSV input is located at its own line.

Old code: an unknown ``# time_label`` or ``# reference_state`` was located at line 1
whatever line held it (a file with a comment line above), and a reference state given
in the scenario was blamed on line 1 of the air file."""
import pytest

from workbench.errors import InputError
from workbench.io.met import read_met
from workbench.io.samples import read_air
from workbench.io.sites import read_sites

from tests.tiny_inputs import AIR, SITES, met_text


def _cat(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    return read_sites(tmp_path / "sites.toml")


def test_unknown_reference_state_at_its_line(tmp_path):
    p = tmp_path / "air.csv"
    p.write_text("# station: invented\n# exported: 2021\n"
                 + AIR.replace("# reference_state: ambient", "# reference_state: normal"))
    with pytest.raises(InputError) as e:
        read_air(p, _cat(tmp_path))
    assert e.value.line == 3 and e.value.value == "normal"


def test_unknown_reference_state_of_the_scenario_is_not_blamed_on_the_file(tmp_path):
    p = tmp_path / "air.csv"
    p.write_text(AIR.replace("# reference_state: ambient\n", ""))
    with pytest.raises(InputError) as e:
        read_air(p, _cat(tmp_path), reference_state="normal")
    assert e.value.line is None and e.value.column == "air.reference_state"
    assert "[air] reference_state" in str(e.value)


def test_unknown_time_label_at_its_line(tmp_path):
    p = tmp_path / "met.csv"
    p.write_text("# logger: invented\n" + met_text().replace("# time_label: end", "# time_label: middle"))
    with pytest.raises(InputError) as e:
        read_met(p, _cat(tmp_path))
    assert e.value.line == 2 and e.value.column == "time_label"
