"""Text columns of the budget tables share one str object per label (memory of large
networks), with the cells and their order unchanged."""
import numpy as np

from workbench.tables import _labels


def test_labels_keep_cells_and_order_and_share_objects():
    cells = np.array(["complete", "missing", "complete", "flagged", "complete"])
    got = _labels(cells)
    assert got.dtype == object
    assert got.tolist() == cells.tolist()
    assert got[0] is got[2] and got[2] is got[4]      # one object per distinct label


def test_labels_taken_at_an_index():
    sites = np.array(["n0000", "n0001", "n0002"])
    index = np.array([2, 0, 0, 1, 2])
    got = _labels(sites, index)
    assert got.tolist() == sites[index].tolist()
    assert got[1] is got[2] and got[0] is got[4]


def test_labels_of_another_kind_are_returned_as_given():
    mixed = np.array(["a", None, "b"], dtype=object)
    assert _labels(mixed) is mixed
    assert _labels(np.arange(4), np.array([3, 1])).tolist() == [3, 1]
