"""A misspelt table or key of the critical loads in sites.toml is located at its own
line, with the known names and the closest one.

Old code: a misspelt top-level table (``[reciever.x]``, ``[sit.critical_loads]``) had no
line at all, and a misspelt table below a site (``[site.reciever.x]``) or a table inside
a receptor's critical loads was located at the site's ``[[site]]`` line."""
import pytest

from workbench.errors import InputError
from workbench.io.sites import read_sites

from tests.tiny_inputs import SITES


def _error(tmp_path, text):
    p = tmp_path / "sites.toml"
    p.write_text(text)
    with pytest.raises(InputError) as e:
        read_sites(p)
    return e.value, text.splitlines()


def _line_of(lines, start):
    return next(i + 1 for i, ln in enumerate(lines) if ln.startswith(start))


@pytest.mark.parametrize("header", ["[reciever.x]", "[sit.critical_loads]"])
def test_a_misspelt_top_level_table_is_located_at_its_header(tmp_path, header):
    err, lines = _error(tmp_path, SITES.replace("[site.critical_loads]", header, 1))
    assert err.line == _line_of(lines, header)
    assert "[[site]]" in err.expected and "[site.critical_loads]" in err.expected
    if header.startswith("[sit."):
        assert "did you mean 'site'?" in err.expected


def test_a_misspelt_table_of_a_site_is_located_at_its_header(tmp_path):
    err, lines = _error(tmp_path, SITES.replace("[site.critical_loads]", "[site.critical_laods]", 1))
    assert err.line == _line_of(lines, "[site.critical_laods]") != 1
    assert err.column == "critical_laods"
    assert "[site.critical_loads]" in err.expected and "did you mean 'critical_loads'?" in err.expected


def test_an_unknown_table_below_a_site_is_located_at_its_header(tmp_path):
    err, lines = _error(tmp_path, SITES.replace("[site.critical_loads]", "[site.reciever.x]", 1))
    assert err.line == _line_of(lines, "[site.reciever.x]")
    assert "[site.critical_loads]" in err.expected     # the known tables


def test_a_table_inside_a_receptor_table_is_located_at_its_header(tmp_path):
    text = SITES.replace("cl_nut_n = 900.0\n", "cl_nut_n = 900.0\n\n"
                         "[site.critical_loads.conifer_forest.extra]\ncl_nut_n = 500.0\n", 1)
    err, lines = _error(tmp_path, text)
    assert err.line == _line_of(lines, "[site.critical_loads.conifer_forest.extra]")
    assert "cl_nut_n" in err.expected


def test_a_misspelt_key_is_located_at_its_line_with_the_closest_name(tmp_path):
    err, lines = _error(tmp_path, SITES.replace("cl_nut_n = 900.0", "cl_nutn = 900.0", 1))
    assert err.line == _line_of(lines, "cl_nutn")
    assert "did you mean 'cl_nut_n'?" in err.expected
