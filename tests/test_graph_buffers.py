"""The graph's cache counts a numpy buffer once, however many cached results hold it,
and the rows of species deposited with Vd of the same gaps share one array of counts
(docs/performance.md, "What the stage graph holds after a network run")."""
from pathlib import Path

import numpy as np

from workbench import graph as G
from workbench.pipeline import Study
from workbench.scenario import load_scenario

DEMO = Path(__file__).resolve().parents[1] / "demo_data" / "scenario.toml"


def test_a_buffer_held_by_several_results_is_counted_once():
    # before, each result counted every array it held: the velocities Dataset counted
    # its steps' arrays again, the dry rows every species' rows again (2,814 MB counted
    # for 1,593 MB held after the demo network's run)
    x, y = np.zeros(1000), np.zeros(100)                   # 8,000 and 800 bytes
    G.declare("test_hold", fn=lambda o, a, k: {"a": a, "view": a[10:], "again": (a,)})
    try:
        g = G.Graph(max_entries=2)
        g.run("test_hold", deps={"a": G.input_node("x", "x", x)}, params={"k": 1})
        assert g.nbytes == 8000                            # a view of it adds nothing
        g.run("test_hold", deps={"a": G.input_node("x", "x", x)}, params={"k": 2})
        assert g.nbytes == 8000 and len(g) == 2            # nor a second result
        g.run("test_hold", deps={"a": G.input_node("y", "y", y)}, params={"k": 3})
        assert len(g) == 2 and g.nbytes == 8800            # x still held by one result
        g.run("test_hold", deps={"a": G.input_node("y", "y", y)}, params={"k": 4})
        assert g.nbytes == 800                             # x held by none
        g.clear()
        assert g.nbytes == 0 and len(g) == 0
    finally:
        G.STAGES.pop("test_hold")


def test_rows_of_species_with_the_same_gaps_share_their_counts():
    # each species' rows held their own cumulative count of the finite hours of their
    # Vd (10 equal arrays of 15.7 MB after the demo network's run); now one per mask
    sc = load_scenario(DEMO)
    st = Study.from_scenario(sc)
    rows = st.dry_rows(sc.options["dry"], sc.options["budget"], sc.fixed_velocity)
    cn = [r["cn"] for r in rows["species"].values() if r["cn"] is not None]
    assert len(cn) >= 5                                     # the demo's met has gaps
    groups = []
    for c in cn:
        for g in groups:
            if np.shares_memory(g[0], c):
                g.append(c)
                break
        else:
            groups.append([c])
    assert len(groups) < len(cn), "every species holds its own counts"
    assert st.graph.counts["hour_counts"] == len(groups)
    for c in cn:                                            # shared, so read-only
        assert not c.flags.writeable
