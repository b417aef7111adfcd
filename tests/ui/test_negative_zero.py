"""A number that rounds to zero reads "0.0", not "-0.0" (seen in the site explorer's
dry-N bracket line at a bulk-collector site: "gas/particle bracket -0.0 ... to 8.4")."""
from workbench.ui.summaries import _fmt


def test_a_value_rounding_to_zero_has_no_minus_sign():
    assert _fmt(-1e-17) == "0.0"
    assert _fmt(-0.04) == "0.0"
    assert _fmt(-0.05, 2) == "-0.05"          # a real negative keeps its sign
    assert _fmt(-0.3) == "-0.3"
    assert _fmt(-1234.0) == "-1,234"
    assert _fmt(0.0) == "0.0"
