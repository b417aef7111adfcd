"""The codes of ``wetness_source``: one table gives the words of a sentence
(``SOURCE``) and the CF flag words of velocities.nc (``SOURCE_FLAGS``)."""
from workbench.drydep.wetness import SOURCE, SOURCE_FLAGS, SOURCE_TABLE


def test_both_tables_read_from_one():
    assert list(SOURCE_FLAGS) == [c for c, _, _ in SOURCE_TABLE] == list(range(-1, 6))
    # -1 (unknown) is a flag only: Study.velocities keeps NaN there
    assert list(SOURCE) == list(range(0, 6))
    assert all(SOURCE[c] == w and SOURCE_FLAGS[c] == f for c, f, w in SOURCE_TABLE if c >= 0)


def test_flag_words_have_no_blank():
    # CF 1.8 section 3.5: flag_meanings are blank-separated words
    assert all(" " not in f and f for f in SOURCE_FLAGS.values())


def test_words_as_written_before():
    """Pinned regression values (the words velocities.nc wrote before the one table)."""
    assert str(SOURCE) == (
        "{0: 'met file (surface_wet)', 1: 'inferred: rain', 2: 'inferred: dew', "
        "3: 'inferred: dry', 4: 'set by the wetness_rule option', "
        "5: \"inferred: dry, from this hour's rain alone (previous hour's rain unknown)\"}")
    assert " ".join(SOURCE_FLAGS.values()) == (
        "unknown met_file_surface_wet inferred_rain inferred_dew inferred_dry "
        "set_by_wetness_rule_option inferred_dry_previous_hour_rain_unknown")
