"""The text of a section of a document in docs/, its runs of white space made one
space, for tests that find the demo numbers a document writes in its sentences
(tests/test_docs_uncertainty_*.py)."""
from __future__ import annotations

import re
from pathlib import Path

DOCS = Path(__file__).resolve().parents[1] / "docs"

#: the farm's section of docs/methods_uncertainty.md and the heading after it
FARM = ("### A wide exceedance range: the demo's farm (measured)",
        "### The net NH3 exchange (bidirectional)")


def flat_section(title: str, next_title: str, doc: str = "methods_uncertainty.md") -> str:
    """The text of `doc` from `title` to `next_title` (first after it), white space
    made one space."""
    text = (DOCS / doc).read_text(encoding="utf-8")
    a = text.index(title)
    return re.sub(r"\s+", " ", text[a:text.index(next_title, a)])
