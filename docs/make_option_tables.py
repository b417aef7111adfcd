"""Write the option tables of docs/scenario.md from the options dataclasses.

Run ``python docs/make_option_tables.py`` after changing an option; the text between
the ``<!-- options:NAME -->`` markers of docs/scenario.md is replaced.  Descriptions
come from the ``#:`` comments above each field or from the class's Attributes section;
the source of each default from :data:`workbench.option_sources.SOURCES` (one entry per
field, checked by tests/test_docs_sources.py).
"""
from __future__ import annotations

import dataclasses
import inspect
import re
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from workbench.option_sources import source_text  # noqa: E402
from workbench.scenario import option_sections  # noqa: E402


def _descriptions(cls) -> dict:
    out = {}
    src = inspect.getsource(cls)
    lines = src.splitlines()
    for i, ln in enumerate(lines):
        m = re.match(r"\s+(\w+)\s*:\s*[^=]+=", ln)
        if m and not ln.strip().startswith("#"):
            j, comment = i - 1, []
            while j >= 0 and lines[j].strip().startswith("#:"):
                comment.insert(0, lines[j].strip()[2:].strip())
                j -= 1
            if comment:
                out[m.group(1)] = " ".join(comment)
    doc = inspect.getdoc(cls) or ""
    if "\nAttributes\n" in doc:
        body = doc.split("\nAttributes\n", 1)[1].split("\n", 1)[-1]
        for m in re.finditer(r"^(\w+) : [^\n]*\n((?:    [^\n]*\n?)+)", body, re.M):
            out.setdefault(m.group(1), " ".join(x.strip() for x in m.group(2).splitlines()))
    return out


def table(name, cls) -> str:
    desc = _descriptions(cls)
    rows = ["| key | default | meaning and unit | source of the default |",
            "|---|---|---|---|"]
    for f in dataclasses.fields(cls):
        if f.name.startswith("_"):
            continue
        d = f.default if f.default is not dataclasses.MISSING else (
            f.default_factory() if f.default_factory is not dataclasses.MISSING else None)
        text = repr(d)
        if len(text) > 40:
            text = "(see below)" if f.name == "particle_modes" else text[:37] + "..."
        rows.append(f"| `{f.name}` | `{text}` | {desc.get(f.name, '')} | "
                    f"{source_text(name, f.name)} |")
    return "\n".join(rows)


def main():
    path = Path(__file__).resolve().parent / "scenario.md"
    text = path.read_text()
    for name, cls in option_sections().items():
        start, end = f"<!-- options:{name} -->", f"<!-- /options:{name} -->"
        new = f"{start}\n{table(name, cls)}\n{end}"
        text = re.sub(re.escape(start) + r".*?" + re.escape(end), lambda m: new, text, flags=re.S)
    path.write_text(text)


if __name__ == "__main__":
    main()
