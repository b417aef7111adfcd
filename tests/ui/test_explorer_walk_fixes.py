"""What a walk through every assumption section of the site explorer in a browser found.

- The dry-N bracket line when fixed gas velocities make the gas deposit slower than the
  particle (the "fixed-velocity what-ifs"): with the fixed Vd of HNO3 and NH3 set to
  0.05 cm/s the line read "gas/particle bracket 5.8 (each ... pair all as particle) to
  1.3 (all as gas): ..., and the gas deposits faster": a range from high to low, closed
  by a sentence its own numbers contradict.
- A number that may be unset kept its last number greyed once unset: beside "unset:
  1.02 (...)" after its box was unchecked, and a fixed Vd's after "Reset to scenario".
"""
import re
import warnings

import pytest


def _numbers(text):
    """The two ends of the bracket, in the order written, with the words after each."""
    m = re.search(r"bracket (-?[\d,.]+) \(([^)]*)\) to (-?[\d,.]+) \(([^)]*)\)", text)
    assert m, text
    return (float(m.group(1).replace(",", "")), m.group(2),
            float(m.group(3).replace(",", "")), m.group(4))


@pytest.fixture(scope="module")
def app(session):
    from workbench.ui.apps import SiteExplorer
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return SiteExplorer(session, site="ridge", years=(2021, 2021))


def test_bracket_with_slow_fixed_gas_velocities_reads_low_to_high(app):
    try:
        app.controls["fixed_velocity.HNO3"].value = 0.05      # cm/s
        app.controls["fixed_velocity.NH3"].value = 0.05
        text = app.bracket_w.value
        low, low_words, high, high_words = _numbers(text)
        assert low <= high, text
        assert "all as gas" in low_words and "all as particle" in high_words, text
        assert "gas deposits faster" not in text, text
        assert "gas deposits slower" in text, text
        # each end is the dry N of a run with the pairs moved to that phase
        for split, end in (("all_gas", low), ("all_particle", high)):
            app.controls["budget.pair_split"].value = split
            shown = float(re.search(r"Dry N (-?[\d,.]+)", app.bracket_w.value).group(1))
            assert shown == pytest.approx(end, abs=0.051), (split, app.bracket_w.value)
    finally:
        app.controls["budget.pair_split"].value = "measured"
        app.controls["fixed_velocity.HNO3"].value = None
        app.controls["fixed_velocity.NH3"].value = None
    # as the scenario has it: the gas end above, and the gas said to deposit faster
    low, low_words, high, high_words = _numbers(app.bracket_w.value)
    assert low < high and "all as particle" in low_words and "all as gas" in high_words
    assert "gas deposits faster" in app.bracket_w.value


def test_an_unset_number_shows_the_value_in_force_again():
    """Unchecking a number that may be unset greys the field at the value that holds
    while unset (defect: a greyed 2.04 beside "unset: 1.02 (class rule)")."""
    from workbench.ui.controls_widgets import OptionalFloat
    w = OptionalFloat(None, "z0 [m]", (0.0001, 5.0, 0.01), default=0.01)
    w.set_default(1.020072, "class rule")
    w._box.value = True
    w._num.value = 2.04
    assert w.value == 2.04
    w._box.value = False                       # the user unchecks the box
    assert w.value is None and w._num.disabled and w._num.value == 1.02
    w._box.value = True                        # checking starts from the value in force
    assert w.value == 1.02


def test_reset_shows_the_fixed_velocity_fields_as_opened(app):
    """After "Reset to scenario" a fixed Vd's greyed field read the last number typed
    (0.1 cm/s), the page as opened 0.05."""
    keys = [k for k in app.controls if k.startswith("fixed_velocity.")]
    opened = {k: app.controls[k]._num.value for k in keys}
    for k in keys:
        app.controls[k].value = 0.1                  # cm/s
    app.reset()
    assert {k: app.controls[k].value for k in keys} == dict.fromkeys(keys)
    assert {k: app.controls[k]._num.value for k in keys} == opened
