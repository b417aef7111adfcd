"""Demo numbers of docs/scale.md, "Too little memory on a worker": the met record one
demo site holds in a block (sites x hours x variables x 8 bytes), recomputed from the
demo's met as a study reads it, so that a change of the demo's record or of the
variables held moves the figure only with the sentence. Arithmetic on the record's
shape (MiB = 2^20 bytes, common practice)."""
from __future__ import annotations

import re

from doc_sections import DOCS


def test_the_met_record_of_one_demo_site(demo_year_run):
    text = (DOCS / "scale.md").read_text(encoding="utf-8")
    text = re.sub(r"\s+", " ", text[text.index("### Too little memory on a worker"):])
    m = re.search(r"sites x hours x variables x 8 bytes: ([\d.]+) MiB for one demo site, "
                  r"([\d,]+) hours x (\d+) variables\)", text)
    assert m, "the met record's sentence of docs/scale.md"
    met = demo_year_run[1].inputs.met
    hours, n_var = met.sizes["time"], len(met.data_vars)
    assert m.groups() == (f"{hours * n_var * 8 / 2 ** 20:.1f}", f"{hours:,}", str(n_var))
