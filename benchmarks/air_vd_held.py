"""What the stage graph holds and computes again under ``vd_follows_air`` on a network.

    python benchmarks/air_vd_held.py                     # the demo network, layer twice
    python benchmarks/air_vd_held.py --layers 3 --npz /tmp/grid.npz
    python benchmarks/air_vd_held.py --scenario S --dry so2_codeposition=true

The study is run (``Study.run``, yearly) with ``[dry] so2_codeposition`` and
``nh3_acid_ratio_from_air`` on (change them with ``--dry``), then the linear layer with
the grid of velocity runs on scaled air (:func:`workbench.analysis.airvd.grid_pieces`)
is made ``--layers`` times on the same study, as a second Monte Carlo (or an app) asks
for it.  Printed for the run and for each layer: the computations of each stage
(``Graph.counts``), the graph's own byte count and CPU time; after the last layer, what
the cache holds, walked entry by entry: each numpy buffer attributed to the first
entry holding it, by stage, and the arrays of equal content (dtype, shape and bytes)
held in separate buffers.  Then the peak resident memory of the process
(``ru_maxrss``).  ``--npz`` keeps the grid's tables of every site and species (to
compare two versions of the code bit for bit).  Nothing is asserted: the counts and
bytes do not move with the machine's load, the times do.
"""
from __future__ import annotations

import argparse
import dataclasses
import hashlib
import json
import resource
import sys
import time
from collections import Counter, defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def held(graph) -> dict:
    """What `graph`'s cache holds: bytes of the numpy buffers by stage (each buffer to
    the first entry holding it), their sum, and the bytes and count of arrays whose
    content equals that of another buffer (held twice or more)."""
    import numpy as np

    from workbench.graph import _sizes
    seen, by_stage, owner = {}, Counter(), {}
    for key, (value, _own, _addresses) in graph._store.items():
        found = {}
        _sizes(value, found)
        for address, (n, root) in found.items():
            if address not in seen:
                seen[address] = root
                owner[address] = key.split(":", 1)[0]
                by_stage[owner[address]] += n
    groups = defaultdict(list)
    for address, root in seen.items():
        a = np.ascontiguousarray(root)
        h = hashlib.blake2b(a.view(np.uint8).reshape(-1) if a.dtype != object
                            else a.astype(str).tobytes(), digest_size=16).hexdigest()
        groups[(a.dtype.str, a.shape, h)].append((root.nbytes, owner[address]))
    dup = [(sum(n for n, _ in v[1:]), len(v), sorted(Counter(s for _, s in v).items()))
           for v in groups.values() if len(v) > 1]
    dup.sort(key=lambda d: -d[0])
    return {"held_mb": sum(by_stage.values()) / 1e6,
            "by_stage_mb": {k: round(v / 1e6, 1) for k, v in by_stage.most_common()},
            "equal_copies_mb": sum(d[0] for d in dup) / 1e6,
            "equal_groups": len(dup), "entries": len(graph._store),
            "graph_count_mb": graph.nbytes / 1e6,
            "largest_equal": [{"extra_mb": round(d[0] / 1e6, 1), "copies": d[1],
                               "held_by": dict(d[2])} for d in dup[:8]]}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--scenario", default=str(ROOT / "demo_data" / "scenario.toml"))
    ap.add_argument("--dry", action="append", default=None, metavar="KEY=VALUE",
                    help="a [dry] option (default: both options whose Vd reads the air)")
    ap.add_argument("--layers", type=int, default=2, help="layers made on the same study")
    ap.add_argument("--npz", help="write the grid's tables to this .npz file")
    ap.add_argument("--json", help="write the numbers printed to this file")
    ap.add_argument("--max-mb", type=float, default=None,
                    help="the graph's bound [MB] (default: graph.MAX_BYTES)")
    args = ap.parse_args(argv)
    import numpy as np

    from workbench.analysis.layer import linear_layer
    from workbench.graph import Graph
    from workbench.pipeline import Study
    from workbench.scenario import load_scenario
    dry_set = args.dry or ["so2_codeposition=true", "nh3_acid_ratio_from_air=true"]
    sc = load_scenario(args.scenario)
    dry = dataclasses.replace(sc.options["dry"], **{
        k: json.loads(v) for k, v in (s.split("=", 1) for s in dry_set)})
    study = Study.from_scenario(sc)
    if args.max_mb is not None:
        study.graph = Graph(max_bytes=int(args.max_mb * 1e6))
    g = study.graph
    out = {"steps": []}

    def step(label, fn):
        before = Counter(g.counts)
        c0 = time.process_time()
        value = fn()
        cpu = time.process_time() - c0
        made = {k: n - before.get(k, 0) for k, n in sorted(g.counts.items())
                if n > before.get(k, 0)}
        out["steps"].append({"what": label, "cpu_s": round(cpu, 2), "computed": made,
                             "graph_count_mb": round(g.nbytes / 1e6, 1),
                             "entries": len(g)})
        print(f"{label}: CPU {cpu:.2f} s, graph count {g.nbytes / 1e6:,.0f} MB "
              f"({len(g)} entries)\n  computed: {made}")
        return value
    res = step("run", lambda: study.run(sc.options["wet"], dry, sc.options["budget"],
                                         sc.fixed_velocity, "year"))
    layers = [step(f"layer {i + 1}", lambda: linear_layer(res, study, "years", None, False,
                                                          True))
              for i in range(args.layers)]
    h = held(g)
    out["held"] = h
    print(f"held after the last layer: {h['held_mb']:,.0f} MB in {h['entries']} entries "
          f"(graph count {h['graph_count_mb']:,.0f} MB); arrays equal to another buffer: "
          f"{h['equal_copies_mb']:,.0f} MB in {h['equal_groups']} groups")
    print("  by stage [MB]:", h["by_stage_mb"])
    print("  the largest groups of equal arrays (stages holding the copies):")
    for d in h["largest_equal"]:
        print(f"    {d['extra_mb']} MB more in {d['copies']} copies: {d['held_by']}")
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e3
    out["peak_rss_mb"] = peak
    print(f"peak resident (ru_maxrss): {peak:,.0f} MB")
    if args.npz:
        arrays = {}
        for lay in layers[-1:]:
            for j, site in enumerate(lay.sites):
                for sp, p in (site.air_vd or {}).items():
                    arrays[f"{j}_{sp}_table"] = p.table
                    arrays[f"{j}_{sp}_log_c"] = p.log_c
        np.savez(args.npz, **arrays)
    if args.json:
        Path(args.json).write_text(json.dumps(out, indent=1))
    return out


if __name__ == "__main__":
    main()
