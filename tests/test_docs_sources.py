"""Every default a practitioner would question says where it comes from.

* Every field of every option dataclass of the scenario (``[wet]``, ``[dry]``,
  ``[budget]``, ``[uncertainty]``, ``[sensitivity]``) has one entry in
  :data:`workbench.option_sources.SOURCES`: a kind (a published source, from memory,
  common practice or our choice) and a text, shown in the "source of the default"
  column of docs/scenario.md (``python docs/make_option_tables.py``).
* Every module-level constant of the project-wide tables (workbench/constants.py,
  workbench/landuse.py, the wet QA tiers, the trend test's constants) has a ``#:``
  comment that names its source in the same words.

The kinds are the project's rule for reference checks (DEVELOPERS.md, "Tests"): a
published source, "from memory", "common practice" or our choice with a reason.
"""
from __future__ import annotations

import ast
import dataclasses
import re
from pathlib import Path

import pytest

from workbench.option_sources import KINDS, SOURCES, source_text
from workbench.scenario import option_sections

ROOT = Path(__file__).resolve().parent.parent
#: An author-year citation: "Keene et al. (1986)", "Wesely 1989", "Report No. 160 (2004)".
CITATION = re.compile(r"[A-Z][\w.-]+[^()]{0,40}?\(?(1[89]|20)\d\d\b")


def missing_sources(sections: dict, sources: dict) -> list:
    """``section.field`` of every option field without a source entry, and of every
    entry that names no field (a renamed or removed option)."""
    out = []
    for sec, cls in sections.items():
        names = {f.name for f in dataclasses.fields(cls)}
        given = sources.get(sec, {})
        out += [f"{sec}.{n}: no source" for n in sorted(names - set(given))]
        out += [f"{sec}.{n}: source of no option" for n in sorted(set(given) - names)]
    out += [f"{sec}: no such section" for sec in sorted(set(sources) - set(sections))]
    return out


def bad_entries(sources: dict) -> list:
    """Entries whose kind is not one of KINDS, whose text is empty or holds a "|" (it
    would split the cell of docs/scenario.md's table), or that say "published" without
    an author-year citation."""
    out = []
    for sec, entries in sources.items():
        for name, entry in entries.items():
            kind, text = entry
            if kind not in KINDS:
                out.append(f"{sec}.{name}: kind {kind!r} is not one of {KINDS}")
            elif len(text.strip()) < 3:
                out.append(f"{sec}.{name}: no text beside {kind!r}")
            elif "|" in text:
                out.append(f"{sec}.{name}: '|' in the text splits the table cell")
            elif kind == "published" and not CITATION.search(text):
                out.append(f"{sec}.{name}: 'published' without author and year: {text!r}")
    return out


def test_every_option_field_has_a_source():
    problems = missing_sources(option_sections(), SOURCES)
    assert not problems, ("write the source of each default in "
                          "workbench/option_sources.py, then run "
                          "`python docs/make_option_tables.py`: " + "; ".join(problems))


def test_source_entries_are_well_formed():
    problems = bad_entries(SOURCES)
    assert not problems, "; ".join(problems)


def test_checks_catch_a_missing_and_a_malformed_source():
    """The two checks fail on a planted option without a source, a stale entry and a
    "published" entry without a citation (so that they can fail at all)."""
    @dataclasses.dataclass(frozen=True)
    class Planted:
        documented: float = 1.0
        undocumented: float = 2.0

    sources = {"planted": {"documented": ("our choice", "a reason"),
                           "gone": ("common practice", "an old option")}}
    assert missing_sources({"planted": Planted}, sources) == [
        "planted.undocumented: no source", "planted.gone: source of no option"]
    assert bad_entries({"s": {"a": ("published", "a handbook"),
                              "b": ("hearsay", "x"), "c": ("our choice", ""),
                              "d": ("published", "Keene et al. (1986)"),
                              "e": ("our choice", "limit on |x|")}}) == [
        "s.a: 'published' without author and year: 'a handbook'",
        f"s.b: kind 'hearsay' is not one of {KINDS}", "s.c: no text beside 'our choice'",
        "s.e: '|' in the text splits the table cell"]


def _table_rows(text: str, section: str) -> dict:
    """key -> cells of the option table of `section` in docs/scenario.md."""
    block = text.split(f"<!-- options:{section} -->")[1].split(f"<!-- /options:{section} -->")[0]
    rows = {}
    for line in block.strip().splitlines()[2:]:
        cells = [c.strip() for c in line.strip().strip("|").split(" | ")]
        rows[cells[0].strip("`")] = cells
    return rows


@pytest.mark.parametrize("section", list(option_sections()))
def test_scenario_doc_shows_each_source(section):
    """docs/scenario.md's table of the section has a "source of the default" column
    holding each field's entry (regenerate with `python docs/make_option_tables.py`)."""
    text = (ROOT / "docs" / "scenario.md").read_text()
    rows = _table_rows(text, section)
    header = text.split(f"<!-- options:{section} -->")[1].strip().splitlines()[0]
    assert header.rstrip().endswith("| source of the default |")
    cls = option_sections()[section]
    wrong = [f.name for f in dataclasses.fields(cls)
             if f.name not in rows or rows[f.name][-1] != source_text(section, f.name)
             or not rows[f.name][-1]]
    assert not wrong, f"[{section}] source column missing or stale for {wrong}"


# ------------------------------------------------------------- constants and tables
#: Words that name a source in a ``#:`` comment: a year, a standard body, a handbook,
#: a table or equation of a paper, "from memory", "common practice", our choice (or
#: "ours"), a definition or a numerical device with its reason.
SOURCE_WORDS = re.compile(
    r"\b(1[89]|20)\d\d\b|CODATA|\bISO\b|CGPM|IUPAC|\bSI\b|Handbook|Report No|memory|"
    r"common practice|\bour (choice|default|rule|own|convention)|\bours\b|definition|"
    r"numerical device|measured:", re.I)
#: Modules whose module-level numeric constants are physical or empirical values and
#: thresholds (QA, completeness, plausibility, clock checks, uncertainty).  Not here:
#: the gas schemes' tables (wesely1989_table.py, zhang2003.py), sourced by their section
#: headers and equation numbers and checked against the papers in tests/drydep, and
#: modules of technical constants only (block and chunk sizes, unit factors).
CONSTANT_MODULES = (
    "workbench/constants.py", "workbench/landuse.py", "workbench/species.py",
    "workbench/periods.py", "workbench/preflight.py", "workbench/budget_components.py",
    "workbench/budget_options.py",
    "workbench/surface/aerodynamic.py", "workbench/surface/roughness.py",
    "workbench/wet/options.py", "workbench/wet/qa.py", "workbench/wet/carbonate.py",
    "workbench/wet/seasalt.py", "workbench/wet/screening.py", "workbench/wet/unitslip.py",
    "workbench/io/metclock.py", "workbench/io/metchecks.py", "workbench/io/metlimits.py",
    "workbench/io/metgaps.py", "workbench/io/metgauge.py", "workbench/io/plausible.py",
    "workbench/io/airslip.py", "workbench/io/airgasbasis.py", "workbench/io/samplegaps.py",
    "workbench/drydep/options.py", "workbench/drydep/particle_fractions.py",
    "workbench/drydep/codeposition.py",
    "workbench/analysis/trends_stats.py", "workbench/analysis/exceedance.py",
    "workbench/analysis/exceedance_function.py", "workbench/analysis/exceedance_draws.py",
    "workbench/analysis/uncertainty_options.py", "workbench/analysis/sensitivity_options.py")


def _numeric(node) -> bool:
    if isinstance(node, ast.Constant):
        return isinstance(node.value, (int, float)) and not isinstance(node.value, bool)
    if isinstance(node, (ast.Tuple, ast.List)):
        return any(_numeric(e) for e in node.elts)
    if isinstance(node, ast.Dict):
        return any(_numeric(v) for v in node.values)
    if isinstance(node, ast.UnaryOp):
        return _numeric(node.operand)
    if isinstance(node, ast.BinOp):
        return _numeric(node.left) or _numeric(node.right)
    if isinstance(node, ast.Call):
        return any(_numeric(a) for a in node.args)
    return False


def unsourced_constants(text: str) -> list:
    """Names of module-level UPPER_CASE numeric constants of a module's source `text`
    whose ``#:`` comment (the block above it, or above the run of constants it ends)
    names no source."""
    lines = text.splitlines()
    out = []
    for node in ast.parse(text).body:
        target = getattr(node, "target", None) or (node.targets[0] if isinstance(
            node, ast.Assign) else None)
        names = ([target.id] if isinstance(target, ast.Name) else
                 [e.id for e in getattr(target, "elts", []) if isinstance(e, ast.Name)])
        if not names or not all(re.fullmatch(r"[A-Z][A-Z0-9_]*", n) for n in names) \
                or node.value is None or not _numeric(node.value):
            continue
        j, comment = node.lineno - 2, []
        while j >= 0 and (lines[j].lstrip().startswith("#")
                          or (not comment and re.match(r"[A-Z][A-Z0-9_, ]*=", lines[j]))):
            if lines[j].lstrip().startswith("#"):
                comment.insert(0, re.sub(r"^\s*#:?\s?", "", lines[j]))
            j -= 1
        own = " ".join(lines[node.lineno - 1:node.end_lineno])
        if not SOURCE_WORDS.search(" ".join(comment) + " " + own):
            out.append(", ".join(names))
    return out


@pytest.mark.parametrize("module", CONSTANT_MODULES)
def test_constants_name_their_source(module):
    problems = unsourced_constants((ROOT / module).read_text())
    assert not problems, (f"{module}: say in the #: comment where each value comes from "
                          f"(a source, from memory, common practice or our choice): "
                          f"{problems}")


def test_constant_check_catches_an_unsourced_value():
    planted = ("#: Molar gas constant [J mol-1 K-1]; CODATA 2018.\nR = 8.314\n"
               "#: A threshold [1].\nTHRESHOLD = 0.3\n"
               "#: Magnus coefficients; Alduchov and Eskridge (1996).\nA = 610.94\nB = 17.6\n")
    assert unsourced_constants(planted) == ["THRESHOLD"]
