"""Records put in a file twice (a file pasted after itself, with or without its header;
two exports joined): one rule for every CSV data file (docs/data_formats.md, "Field-data
slips we check").  A row that repeats an earlier row of its site and hour (met) or
sampler and period (samples) cell for cell is dropped, counted in the ledger as
``rejected`` with "exact repeat of an earlier line (dropped)" and named in one note; a
line repeating the header as written is not read as a row and is named in a note; a
repeat with another value in any cell stays an error naming both lines, the column and
the two values.  Before, the met file's repeats and every repeated header were errors.
Keeping one copy of identical records is common practice of data handling: nothing is
lost, since the copy holds nothing the first does not.
"""
from __future__ import annotations

import numpy as np
import pytest

from tiny_inputs import AIR, PRECIP, met_text
from workbench.errors import InputError
from workbench.io import read_air, read_precipitation
from workbench.io.common import REPEAT_REASON


def _lines():
    lines = met_text(n_hours=48).splitlines()
    data = [k for k, ln in enumerate(lines) if ln.startswith("alpha,")]
    return lines, data


def _once(tmp_path, cat, met_reader):
    p = tmp_path / "once.csv"
    p.write_text(met_text(n_hours=48))
    return met_reader(p, cat)[0]


def _dropped(ledger):
    t = ledger.table
    return t[(t["status"] == "rejected") & t["reason"].str.contains(REPEAT_REASON, regex=False)]


def test_met_pasted_after_itself_without_its_header(tmp_path, cat, met_reader):
    lines, data = _lines()
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + [lines[k] for k in data]) + "\n")
    ds, ledger = met_reader(p, cat)
    once = _once(tmp_path, cat, met_reader)
    for name in once.data_vars:
        np.testing.assert_array_equal(ds[name].values, once[name].values)
    first, n = data[0] + 1, len(data)
    assert sorted(_dropped(ledger)["line"]) == list(range(len(lines) + 1, len(lines) + n + 1))
    assert ledger.rows() == 2 * n and ledger.check_balanced()
    assert (f"met.csv: {n} exact repeats dropped: lines {len(lines) + 1}-{len(lines) + n} "
            f"repeat lines {first}-{first + n - 1}") in ledger.notes


def test_met_pasted_after_itself_with_its_header(tmp_path, cat, met_reader):
    # before: "site not in the catalogue (a repeated header line? ...)" at the second header
    lines, data = _lines()
    header = lines[data[0] - 1]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + [header] + [lines[k] for k in data]) + "\n")
    ds, ledger = met_reader(p, cat)
    once = _once(tmp_path, cat, met_reader)
    for name in once.data_vars:
        np.testing.assert_array_equal(ds[name].values, once[name].values)
    n, at = len(data), len(lines) + 1
    assert len(_dropped(ledger)) == n and ledger.rows() == 2 * n
    assert (f"met.csv: the header repeated on line {at} (a file pasted after itself?): "
            "not read as a row") in ledger.notes
    assert any(note.startswith(f"met.csv: {n} exact repeats dropped: lines {at + 1}-")
               for note in ledger.notes), ledger.notes


def test_one_exact_repeated_met_row_is_dropped(tmp_path, cat, met_reader):
    lines, data = _lines()
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines[:data[9]] + [lines[data[5]]] + lines[data[9]:]) + "\n")
    ds, ledger = met_reader(p, cat)
    assert list(_dropped(ledger)["line"]) == [data[9] + 1]
    assert f"met.csv: 1 exact repeat dropped: line {data[9] + 1} repeats line {data[5] + 1}" \
        in ledger.notes
    assert ds.sizes["time"] == len(data)


def test_a_repeat_with_one_other_value_is_refused(tmp_path, cat, met_reader):
    # the copy exact but for one cell: that row is refused, naming both lines, the
    # column and both values (its exact neighbours would have been dropped)
    lines, data = _lines()
    again = [lines[k] for k in data]
    again[10] = again[10].replace(",1010.0,", ",1012.5,")
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + again) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    msg = str(exc.value)
    assert msg.startswith(f"{p}, line {len(lines) + 11}, column 'time': duplicate hourly "
                          "timestamp"), msg
    assert (f"(also on line {data[10] + 1}, which has 'pressure [hPa]' '1010.0' where this "
            "line has '1012.5')") in msg, msg
    assert "put in the file twice" not in msg       # one row in conflict, not a day


def test_one_label_written_another_way_is_still_an_exact_repeat(tmp_path, cat, met_reader):
    # two exports of one logger joined, one writing '2020-01-07 04:00', the other
    # '2020-01-07T04:00': the same label, the same record (dropped)
    lines, data = _lines()
    again = lines[data[3]].replace("T", " ", 1)
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + [again]) + "\n")
    _, ledger = met_reader(p, cat)
    assert list(_dropped(ledger)["line"]) == [len(lines) + 1]


def test_two_labels_moved_onto_one_hour_are_not_an_exact_repeat(tmp_path, cat, met_reader):
    # 03:30 and 04:00 at a site on UTC+0.5 end the same UTC hour after the move to the
    # whole UTC hour; every value the same, still two measurements (refused, naming the
    # labels): a half-hourly record is not a file pasted twice
    from tiny_inputs import SITES
    from workbench.io import read_sites
    (tmp_path / "half.toml").write_text(SITES.replace("utc_offset_h = 1", "utc_offset_h = 1.5",
                                                      1))
    half = read_sites(tmp_path / "half.toml")
    lines, data = _lines()
    cells = lines[data[3]].split(",")
    first = cells[1]
    cells[1] = first[:-2] + "30"
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines[:data[3] + 1] + [",".join(cells)] + lines[data[3] + 1:]) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, half)
    assert "duplicate hourly timestamp" in str(exc.value)
    assert "which has 'time'" in str(exc.value), str(exc.value)


def test_a_column_not_read_counts_too(tmp_path, cat, met_reader):
    # a remark column the reader does not use: a row that differs there is not an exact
    # repeat (the user's own column may say why the hour was sent again)
    lines, data = _lines()
    head = data[0] - 1
    lines = lines[:head] + [lines[head] + ",remark"] + [ln + "," for ln in lines[head + 1:]]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + [lines[data[2]][:-1] + ",re-sent"]) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    assert "which has 'remark' '' where this line has 're-sent'" in str(exc.value)


@pytest.mark.parametrize("reader, name, text", [(read_precipitation, "p.csv", PRECIP),
                                                (read_air, "a.csv", AIR)])
def test_sample_files_pasted_after_themselves_with_their_header(tmp_path, cat, reader, name,
                                                                 text):
    # before: an error at the second header; now the header is noted and the rows are
    # the sample readers' exact repeats, as without the header
    lines = text.splitlines()
    head = next(k for k, ln in enumerate(lines) if ln.startswith("site,"))
    p = tmp_path / name
    p.write_text("\n".join(lines + lines[head:]) + "\n")
    ds, ledger = reader(p, cat)
    n = len(lines) - head - 1
    at = len(lines) + 1
    assert (f"{name}: the header repeated on line {at} (a file pasted after itself?): not "
            "read as a row") in ledger.notes
    assert sorted(_dropped(ledger)["line"]) == list(range(at + 1, at + n + 1))
    assert (f"{name}: {n} exact repeats dropped: lines {at + 1}-{at + n} repeat lines "
            f"{head + 2}-{head + n + 1}") in ledger.notes
    once = tmp_path / ("once_" + name)
    once.write_text(text)
    assert ds.sizes == reader(once, cat)[0].sizes


# ---------------------------------------------------------------- metadata lines
# A file pasted after itself with its ``# key: value`` lines (docs/data_formats.md):
# before, the repeated metadata line was read as a data row and refused with "site not
# in the catalogue".

def test_met_pasted_after_itself_with_its_metadata_line(tmp_path, cat, met_reader):
    lines, data = _lines()
    assert lines[0] == "# time_label: end"
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + lines) + "\n")
    ds, ledger = met_reader(p, cat)
    once = _once(tmp_path, cat, met_reader)
    for name in once.data_vars:
        np.testing.assert_array_equal(ds[name].values, once[name].values)
    n, at = len(data), len(lines) + 1
    assert (f"met.csv: the metadata repeated on line {at} (a file pasted after itself?): "
            "not read as a row") in ledger.notes, ledger.notes
    assert (f"met.csv: the header repeated on line {at + 1} (a file pasted after itself?): "
            "not read as a row") in ledger.notes
    assert len(_dropped(ledger)) == n and ledger.rows() == 2 * n and ledger.check_balanced()


def test_met_metadata_line_repeated_with_blanks_and_a_free_comment(tmp_path, cat, met_reader):
    # two comment lines at the top (one without a key) and a blank line, all repeated
    lines, data = _lines()
    top = ["# logger: invented", "# exported by hand", lines[0], ""]
    body = lines[1:]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(top + body + top + body) + "\n")
    _, ledger = met_reader(p, cat)
    at = len(top) + len(body) + 1
    assert (f"met.csv: the metadata repeated on lines {at}-{at + 2} (a file pasted after "
            "itself?): not read as a row") in ledger.notes, ledger.notes
    assert len(_dropped(ledger)) == len(data)


def test_met_second_half_with_another_time_label_is_refused(tmp_path, cat, met_reader):
    # two files joined, the second labelling interval starts: one located message with
    # both lines and both values, not "site not in the catalogue"
    lines, _ = _lines()
    second = ["# time_label: start"] + lines[1:]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(lines + second) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    msg, at = str(exc.value), len(lines) + 1
    assert exc.value.line == at and exc.value.column == "time_label", msg
    assert exc.value.value == "start", msg
    assert "two different declarations of 'time_label'" in msg, msg
    assert "line 1 says 'end'" in msg and f"line {at} says 'start'" in msg, msg
    assert "site not in the catalogue" not in msg


def test_met_metadata_line_below_the_header_not_declared_at_the_top(tmp_path, cat, met_reader):
    # the top file without the line (read as 'end'), the second with '# time_label: start'
    lines, _ = _lines()
    first = lines[1:]
    p = tmp_path / "met.csv"
    p.write_text("\n".join(first + lines[:1] + first) + "\n")
    with pytest.raises(InputError) as exc:
        met_reader(p, cat)
    msg, at = str(exc.value), len(first) + 1
    assert exc.value.line == at and exc.value.column == "time_label", msg
    assert "site not in the catalogue" not in msg and "below the header" in msg, msg


@pytest.mark.parametrize("reader, name, text", [(read_precipitation, "p.csv", PRECIP),
                                                (read_air, "a.csv", AIR)],
                         ids=["precipitation", "air"])
def test_sample_files_pasted_after_themselves_with_their_metadata(tmp_path, cat, reader, name,
                                                                   text):
    top = "# station: invented\n" + text
    lines = top.splitlines()
    head = next(k for k, ln in enumerate(lines) if ln.startswith("site,"))
    p = tmp_path / name
    p.write_text("\n".join(lines + lines) + "\n")
    ds, ledger = reader(p, cat)
    at = len(lines) + 1
    meta = "line" + (f"s {at}-{at + head - 1}" if head > 1 else f" {at}")
    assert (f"{name}: the metadata repeated on {meta} (a file pasted after itself?): not "
            "read as a row") in ledger.notes, ledger.notes
    assert len(_dropped(ledger)) == len(lines) - head - 1
    once = tmp_path / ("once_" + name)
    once.write_text(top)
    assert ds.sizes == reader(once, cat)[0].sizes


def test_air_second_half_with_another_reference_state_is_refused(tmp_path, cat):
    lines = AIR.splitlines()
    assert lines[0] == "# reference_state: ambient"
    second = ["# reference_state: 20 degC, 1013.25 hPa"] + lines[1:]
    p = tmp_path / "a.csv"
    p.write_text("\n".join(lines + second) + "\n")
    with pytest.raises(InputError) as exc:
        read_air(p, cat)
    msg, at = str(exc.value), len(lines) + 1
    assert exc.value.line == at and exc.value.column == "reference_state", msg
    assert "line 1 says 'ambient'" in msg and f"line {at} says '20 degC, 1013.25 hPa'" in msg
