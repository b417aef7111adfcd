"""The docs say what the code does: every command, option, scenario key, file and
Python name that README.md, DEVELOPERS.md and docs/*.md name exists in the code.

- a ``--option`` written after ``workbench <command>`` is one that
  ``workbench <command> --help`` knows (and ``--opt a|b|c`` lists its choices);
  a ``--option`` alone is known to some command or script of the repository;
- ``python path/to/script.py --option``: the script exists and parses that option;
- a ``[section] key``, ``[section.table]`` or ``section.key`` of the scenario is one
  that the scenario loader accepts, and every ``toml`` block that is a scenario loads;
- a path (``tests/...``, ``workbench/...``, ``benchmarks/...``) exists, and a
  ``workbench.x.y`` name (or ``module.name`` of the package) imports;
- every ``python`` block compiles, and a stage declared in one reads what the code's
  stage reads.

The generated option, stage and Vd tables have their own tests (tests/test_scenario.py,
tests/test_graph.py, tests/drydep/test_drydep_schemes.py).
"""
from __future__ import annotations

import dataclasses
import importlib
import pkgutil
import re
from pathlib import Path

import pytest

import workbench
from workbench.cli import build_parser
from workbench.scenario import SCHEMA, SITE_OVERRIDES, load_scenario, option_sections

ROOT = Path(__file__).resolve().parent.parent
DOCS = [ROOT / "README.md", ROOT / "DEVELOPERS.md", *sorted((ROOT / "docs").glob("*.md"))]
IDS = [str(p.relative_to(ROOT)) for p in DOCS]
FENCE = re.compile(r"^```(\w*)\n(.*?)^```", re.S | re.M)
#: Suffixes of file names (``air.csv`` is a file, not the scenario key ``air.csv``).
FILE_SUFFIXES = {"csv", "nc", "toml", "md", "py", "json", "html", "zarr", "gz", "zip",
                 "ipynb", "txt", "svg", "png", "incomplete", "tsv"}


def _blocks(text, langs):
    return [m.group(2) for m in FENCE.finditer(text) if m.group(1) in langs]


def _spans(text):
    """Inline code spans (joined over line breaks) and the lines of shell blocks."""
    prose = FENCE.sub("", text)
    spans = [" ".join(m.group(2).split())        # ``x`` as well as `x` (CommonMark)
             for m in re.finditer(r"(?<!`)(`+)(?!`)(.+?)(?<!`)\1(?!`)", prose, re.S)]
    for block in _blocks(text, ("bash", "sh", "console", "")):
        spans += [line.split("#")[0].strip() for line in block.splitlines()]
    return [s for s in spans if s]


def _commands():
    """``workbench <command>`` -> the option strings it knows (and choices by option)."""
    sub = next(a for a in build_parser()._actions if a.dest == "command")
    out = {}
    for name, parser in sub.choices.items():
        out[name] = {opt: a.choices for a in parser._actions for opt in a.option_strings}
    return out


COMMANDS = _commands()


def _script_options(path):
    """The ``--options`` a script of the repository parses (its add_argument strings)."""
    return set(re.findall(r"""["'](--[a-z][\w-]*)["']""", path.read_text()))


def _help_options(path):
    """The ``--options`` in ``python path --help`` (a script whose parser lives in the
    package, e.g. demo_data/make_grid.py); empty for a script without a parser."""
    import os
    import subprocess
    import sys
    if "argparse" not in path.read_text() and "import main" not in path.read_text():
        return set()                  # it would run, not print help (benchmarks/run.py)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    out = subprocess.run([sys.executable, str(path), "--help"], capture_output=True,
                         text=True, env=env, cwd=ROOT, timeout=120).stdout
    return set(re.findall(r"(?<![\w-])(--[a-z][\w-]*)", out))


def _repo_options():
    opts = {o for known in COMMANDS.values() for o in known}
    for folder in ("benchmarks", "demo_data", "docs"):
        for p in (ROOT / folder).glob("*.py"):
            opts |= _script_options(p)
    return opts


def _option_words(span):
    return re.findall(r"(?<![\w-])(--[a-z][\w-]*)(?:[ =]([\w-]+(?:\|[\w-]+)+))?", span)


def _option_problems(text):
    bad = []
    repo_opts = None
    for span in _spans(text):
        m = re.match(r"(?:python -m )?workbench (\w+)\b(.*)", span)
        if m:
            if m.group(1) not in COMMANDS:
                bad.append(f"`{span}`: no command {m.group(1)!r} (known: {sorted(COMMANDS)})")
                continue
            known = COMMANDS[m.group(1)]
            for opt, choices in _option_words(m.group(2)):
                if opt not in known:
                    bad.append(f"`{span}`: `workbench {m.group(1)} --help` has no {opt}")
                elif choices and known[opt] is not None \
                        and set(choices.split("|")) != set(known[opt]):
                    bad.append(f"`{span}`: {opt} takes {sorted(known[opt])}")
            continue
        m = re.match(r"python ((?:[\w.-]+/)*[\w.-]+\.py)\b(.*)", span)
        if m:
            script = ROOT / m.group(1)
            if not script.is_file():
                bad.append(f"`{span}`: no file {m.group(1)}")
                continue
            wanted = {opt for opt, _ in _option_words(m.group(2))}
            parsed = _script_options(script)
            if wanted - parsed:
                parsed |= _help_options(script)
            bad += [f"`{span}`: {m.group(1)} parses no {opt}" for opt in sorted(wanted - parsed)]
            continue
        if span.startswith("--"):
            repo_opts = _repo_options() if repo_opts is None else repo_opts
            bad += [f"`{span}`: no command or script of the repository parses {opt}"
                    for opt, _ in _option_words(span) if opt not in repo_opts]
    return bad


@pytest.mark.parametrize("doc", DOCS, ids=IDS)
def test_command_options_exist(doc):
    """Every ``--option`` a doc writes is one the command or script parses."""
    bad = _option_problems(doc.read_text())
    assert not bad, "\n".join(bad)


# ------------------------------------------------------------------ scenario keys
def _scenario_keys():
    keys = {s: set(k) for s, k in SCHEMA.items()}
    keys.update({s: {f.name for f in dataclasses.fields(c)} for s, c in option_sections().items()})
    keys["sites"] = set(SITE_OVERRIDES)
    return keys


KEYS = _scenario_keys()
#: Sub-tables of a section that are not option fields.
SUBTABLES = {"dry": {"fixed_velocity"}}


def _module_has(module, name):
    """`name` is in ``workbench.<module>`` or ``workbench.analysis.<module>``."""
    return any(_resolves(f"{pkg}.{module}.{name}") for pkg in ("workbench", "workbench.analysis"))


def _key_problem(section, sub, key):
    """What is wrong with a scenario reference, or None."""
    if section == "sites":
        return None if key is None or not sub or key in KEYS["sites"] else \
            f"[sites.<id>] takes no key {key!r} (known: {sorted(KEYS['sites'])})"
    parts = [p for p in sub.split(".") if p]
    if parts:
        if parts[0] not in KEYS[section] | SUBTABLES.get(section, set()):
            return f"[{section}] has no table {parts[0]!r}"
        return None                 # keys of a sub-table are names (species, classes...)
    if key is not None and key not in KEYS[section]:
        return f"[{section}] takes no key {key!r}"
    return None


def _key_problems(text):
    bad = []
    for span in _spans(text):
        for sec, sub, key in re.findall(r"\[([a-z_]+)((?:\.[\w<>-]+)*)\](?:\s+([A-Za-z_]\w*))?",
                                        span):
            if sec in KEYS:
                problem = _key_problem(sec, sub, key or None)
                if problem:
                    bad.append(f"`{span}`: {problem}")
        for sec, key, rest in re.findall(r"(?<![\w./\[-])([a-z_]+)\.([A-Za-z_]\w*)((?:\.\w+)*)",
                                         span):
            if sec not in KEYS or sec == "sites" or key in FILE_SUFFIXES \
                    or (rest and rest.rsplit(".", 1)[-1] in FILE_SUFFIXES):
                continue
            if key not in KEYS[sec] and key not in SUBTABLES.get(sec, ()) \
                    and not _module_has(sec, key):
                bad.append(f"`{span}`: {sec}.{key} is neither a scenario key nor a name "
                           f"in workbench.{sec}")
    return bad


@pytest.mark.parametrize("doc", DOCS, ids=IDS)
def test_scenario_keys_exist(doc):
    """Every ``[section] key`` and ``section.key`` of a scenario named in a doc is
    accepted by the scenario loader (workbench/scenario.py)."""
    bad = _key_problems(doc.read_text())
    assert not bad, "\n".join(bad)


def _scenario_blocks():
    out = []
    for doc in DOCS:
        for block in _blocks(doc.read_text(), ("toml",)):
            tables = re.findall(r"^\s*\[+([\w.<>-]+)\]", block, re.M)
            if tables and all(t.split(".")[0] in KEYS for t in tables) \
                    and "[[" not in block:
                out.append(pytest.param(block, id=f"{doc.name}:{tables[0]}"))
    return out


@pytest.mark.parametrize("block", _scenario_blocks())
def test_scenario_examples_load(block, tmp_path):
    """A doc's example scenario loads, with the demo's inputs behind its paths (empty
    files stand for the others: only the keys, types and values are judged)."""
    try:
        import tomllib
    except ImportError:               # Python 3.10 (pyproject.toml's tomli)
        import tomli as tomllib
    demo = ROOT / "demo_data"
    raw = tomllib.loads(block)
    paths = [*raw.get("inputs", {}).values(), *raw.get("grid", {}).values()]
    for name in paths:
        target = tmp_path / name
        if (demo / name).exists():
            target.symlink_to(demo / name)
        else:
            target.touch()
    if "grid" not in raw and "sites" not in raw.get("inputs", {}):   # a fragment
        if "inputs" in raw:
            block = re.sub(r"^\[inputs\].*$", '[inputs]\nsites = "sites.toml"', block,
                           count=1, flags=re.M)
        else:
            block = '[inputs]\nsites = "sites.toml"\n' + block
        (tmp_path / "sites.toml").symlink_to(demo / "sites.toml")
    path = tmp_path / "scenario.toml"
    path.write_text(block)
    load_scenario(path)


# ------------------------------------------------------------ files and names
PATH_TOKEN = re.compile(r"(?<![\w/.~-])((?:workbench|tests|docs|benchmarks|notebooks|demo_data|"
                        r"\.ci)/[\w./*<>-]*[\w*>])")
#: Named in the docs but only present elsewhere, with the reason.
ELSEWHERE = {
    "workbench.demo_data": "the repository's demo_data/ as shipped inside an installed "
                           "package (pyproject.toml, [tool.setuptools.package-dir])",
}


def _file_problems(text):
    bad = []
    for span in _spans(text):
        for token in PATH_TOKEN.findall(span):
            token = token.rstrip(".")
            if "<" in token or "*" in token:
                continue
            if not (ROOT / token).exists():
                bad.append(f"`{span}`: no {token}")
        for path, name in re.findall(r"((?:tests|benchmarks)/[\w/]+\.py)::(\w+)", span):
            if (ROOT / path).exists() and not re.search(rf"^\s*def {name}\(",
                                                        (ROOT / path).read_text(), re.M):
                bad.append(f"`{span}`: no test {name} in {path}")
    return bad


@pytest.mark.parametrize("doc", DOCS, ids=IDS)
def test_named_files_exist(doc):
    """Every repository path a doc names in code (``tests/io/test_x.py``) exists."""
    bad = _file_problems(doc.read_text())
    assert not bad, "\n".join(bad)


def _resolves(dotted):
    parts = dotted.split(".")
    for i in range(len(parts), 0, -1):
        try:
            obj = importlib.import_module(".".join(parts[:i]))
            break
        except ImportError:
            continue
    else:
        return False
    for name in parts[i:]:
        if not hasattr(obj, name):
            return False
        obj = getattr(obj, name)
    return True


MODULES = {m.name for m in pkgutil.iter_modules(workbench.__path__)}
#: Short name -> dotted name of a module of a subpackage (``siteblocks`` ->
#: ``workbench.drydep.siteblocks``), when the short name is unique.
_SUB = {}
for _m in pkgutil.walk_packages(workbench.__path__, "workbench."):
    _SUB.setdefault(_m.name.rsplit(".", 1)[-1], []).append(_m.name)
SUBMODULES = {k: v[0] for k, v in _SUB.items() if len(v) == 1 and k not in MODULES}


def _name_problems(text):
    bad = []
    for span in _spans(text):
        for token in re.findall(r"(?<![\w/.-])([A-Za-z_]\w*(?:\.[A-Za-z_]\w*)+)", span):
            parts = token.split(".")
            if parts[-1] in FILE_SUFFIXES or token in ELSEWHERE:
                continue
            if parts[0] == "workbench":
                dotted = token
            elif parts[0] in MODULES and not (parts[0] in KEYS and parts[1] in
                                              KEYS[parts[0]] | SUBTABLES.get(parts[0], set())):
                dotted = "workbench." + token
            elif parts[0] in SUBMODULES and len(parts) == 2 and parts[1].isupper():
                # a constant of a subpackage's module (``siteblocks.SITE_BLOCK_ELEMENTS``);
                # a lower-case name may be a method of an object (``ledger.summary()``)
                dotted = f"{SUBMODULES[parts[0]]}.{parts[1]}"
            else:
                continue
            if dotted not in ELSEWHERE and not _resolves(dotted):
                bad.append(f"`{span}`: {dotted} does not import")
    return bad


@pytest.mark.parametrize("doc", DOCS, ids=IDS)
def test_named_python_names_import(doc):
    """``workbench.x.y`` and ``module.name`` of the package, as named in a doc, import."""
    bad = _name_problems(doc.read_text())
    assert not bad, "\n".join(bad)


#: A doc with one planted mistake per line: each checker must find its own.
PLANTED = """
Run `workbench run SCENARIO --out DIR --no-such-option` or `workbench check --overwrite`.
`workbench run --resolution day|year` and `workbench frobnicate SCENARIO`.
`python benchmarks/network.py --no-such-size` and `python benchmarks/gone.py`.
Set `[dry] no_such_key`, `[budget] gas_scheme`, `[dry.no_table]`, `wet.no_such_key`
and `[sites.ridge] no_override`.
See `tests/io/test_gone.py` and `workbench.graph.NO_SUCH_NAME`, `stages.no_function`,
`siteblocks.NO_CONSTANT` and `tests/test_graph.py::test_no_such_test`.
"""


def test_checkers_find_planted_mistakes():
    """The checkers above are not vacuous: each finds the mistakes planted for it."""
    opts = _option_problems(PLANTED)
    for word in ("--no-such-option", "check --help` has no --overwrite", "--resolution takes",
                 "no command 'frobnicate'", "parses no --no-such-size", "no file benchmarks/gone.py"):
        assert any(word in b for b in opts), (word, opts)
    keys = _key_problems(PLANTED)
    for word in ("no key 'no_such_key'", "[budget] takes no key 'gas_scheme'",
                 "no table 'no_table'", "wet.no_such_key", "no key 'no_override'"):
        assert any(word in b for b in keys), (word, keys)
    files = _file_problems(PLANTED)
    assert any("tests/io/test_gone.py" in b for b in files)
    assert any("no test test_no_such_test" in b for b in files)
    names = _name_problems(PLANTED)
    for word in ("NO_SUCH_NAME", "no_function", "workbench.drydep.siteblocks.NO_CONSTANT"):
        assert any(word in b for b in names), (word, names)


def test_elsewhere_is_shipped():
    """The one name allowed above is the demo folder that pyproject.toml ships."""
    text = (ROOT / "pyproject.toml").read_text()
    assert (ROOT / "demo_data" / "scenario.toml").is_file()
    assert re.search(r'"workbench\.demo_data"\s*=\s*"demo_data"', text), \
        "pyproject.toml no longer ships demo_data/ as workbench.demo_data"


def _python_blocks():
    return [pytest.param(b, id=f"{d.name}:{i}") for d in DOCS
            for i, b in enumerate(_blocks(d.read_text(), ("python", "py")))]


@pytest.mark.parametrize("block", _python_blocks())
def test_python_blocks(block):
    """A doc's Python block compiles (``...`` stands for elided code), its imports of
    the package import, and a ``@stage`` it shows reads what the declared stage reads."""
    compile(block, "<doc>", "exec")
    for mod, names in re.findall(r"^from (workbench[\w.]*) import ([\w, ]+)", block, re.M):
        for name in names.split(","):
            assert _resolves(f"{mod}.{name.strip()}"), f"{mod}.{name.strip()}"
    import ast
    import workbench.stages  # noqa: F401  (declares the stages)
    import workbench.drycomponents  # noqa: F401
    import workbench.drydep.core  # noqa: F401
    from workbench.graph import STAGES
    for node in ast.walk(ast.parse(block)):
        if isinstance(node, ast.Call) and getattr(node.func, "id", "") == "stage":
            name = ast.literal_eval(node.args[0])
            reads = {k.arg: ast.literal_eval(k.value) for k in node.keywords}.get("reads", {})
            assert name in STAGES, f"no stage {name!r}"
            assert STAGES[name].reads == {g: tuple(f) for g, f in reads.items()}, name


@pytest.mark.parametrize("doc", DOCS, ids=IDS)
def test_code_fences_pair(doc):
    """Every code block is closed: an odd number of fence lines turns the rest of the
    page inside out (prose shown as code, code as prose)."""
    fences = [i + 1 for i, line in enumerate(doc.read_text().splitlines())
              if line.lstrip().startswith("```")]
    assert len(fences) % 2 == 0, f"unpaired code fence among lines {fences}"


def test_site_catalogue_example_reads(tmp_path):
    """The site catalogue example of docs/data_formats.md reads with the catalogue reader."""
    from workbench.io.sites import read_sites
    text = (ROOT / "docs" / "data_formats.md").read_text()
    block = next(b for b in _blocks(text, ("toml",)) if b.lstrip().startswith("[[site]]"))
    (tmp_path / "sites.toml").write_text(block)
    cat = read_sites(tmp_path / "sites.toml")
    assert "ridge" in cat.ids


def test_flag_map_example_reads(tmp_path):
    """The lab-code example of docs/data_formats.md reads with the flag-map reader and
    means what the doc says (a list is several words, ``[]`` none)."""
    from workbench.flags import read_flag_map
    text = (ROOT / "docs" / "data_formats.md").read_text()
    block = next(b for b in _blocks(text, ("toml",)) if "[codes]" in b)
    (tmp_path / "lab_codes.toml").write_text(block)
    codes = read_flag_map(tmp_path / "lab_codes.toml")
    assert codes["K1"] == ("contaminated",)
    assert codes["EST2"] == ("depth_estimated", "contaminated")
    assert codes["ok"] == ()


def test_readme_output_files_are_written():
    """Every output file README.md names (``budget.csv``, ``grid.nc``...) is a name the
    package writes: a literal in workbench/ (or the demo's input files)."""
    source = "\n".join(p.read_text() for p in (ROOT / "workbench").rglob("*.py"))
    demo = {p.name for p in (ROOT / "demo_data").iterdir()}
    names = {n for span in _spans((ROOT / "README.md").read_text())
             for n in re.findall(r"(?<![\w/.-])([\w-]+\.(?:csv|nc|html|json))\b", span)}
    assert {"budget.csv", "report.html", "grid.nc", "sensitivity.csv"} <= names
    missing = sorted(n for n in names - demo
                     if f'"{n}"' not in source and f"'{n}'" not in source)
    assert not missing, f"README.md names outputs the package never writes: {missing}"


#: Option field -> the sections that have it, for a bare ``key = value`` (a key that is
#: also a site override, e.g. ``ustar_transfer``, may be either: left out).
OWNER = {}
for _sec, _cls in option_sections().items():
    for _f in dataclasses.fields(_cls):
        if _f.name not in SITE_OVERRIDES:
            OWNER.setdefault(_f.name, []).append(_sec)


def _setting_spans():
    """``[section] key = value`` spans of an options section whose value is TOML (not
    ``...``)."""
    try:
        import tomllib
    except ImportError:
        import tomli as tomllib
    out = {}
    for doc in DOCS:
        for span in _spans(doc.read_text()):
            bare = re.fullmatch(r"(\w+) = .+", span)
            if bare and len(OWNER.get(bare.group(1), ())) == 1:     # a bare option
                span = f"[{OWNER[bare.group(1)][0]}] {span}"
            m = re.fullmatch(r"\[([a-z_]+)\] (\w+ = .+)", span)
            if not m or m.group(1) not in option_sections():     # options, not paths
                continue
            try:
                tomllib.loads(m.group(2))
            except tomllib.TOMLDecodeError:
                continue
            out.setdefault(span, pytest.param(m.group(1), m.group(2), id=f"{doc.name}:{span}"))
    return list(out.values())


@pytest.mark.parametrize("section, setting", _setting_spans())
def test_settings_named_in_docs_load(section, setting, tmp_path):
    """A setting a doc names (``[dry] gas_scheme = "zhang2003"``) is a value the scenario
    loader accepts, on the demo's inputs."""
    demo = ROOT / "demo_data"
    path = tmp_path / "scenario.toml"
    body = f'[inputs]\nsites = "{(demo / "sites.toml").as_posix()}"\n'
    if section != "budget":           # the demo's bulk collector needs its correction
        body += '[budget]\nbulk_correction = "exclude_particles"\n'
    path.write_text(body + f"[{section}]\n{setting}\n")
    load_scenario(path)


def test_scenario_example_passes_the_bulk_check_on_the_demo(tmp_path):
    """The first example of docs/scenario.md names the demo's four input files: copied
    beside them it must not stop `workbench check` at the demo's bulk collector (mere:
    `[budget] bulk_correction` is required there). The refusal is the preflight's own,
    on the demo's catalogue and air, without reading the met."""
    from types import SimpleNamespace

    from workbench.io.samples import read_air
    from workbench.io.sites import read_sites
    from workbench.preflight import _bulk_refusal
    block = _blocks((ROOT / "docs" / "scenario.md").read_text(), ("toml",))[0]
    demo = ROOT / "demo_data"
    for name in ("sites.toml", "precipitation.csv", "air.csv", "met.csv.gz"):
        assert f'"{name}"' in block, name
        (tmp_path / name).symlink_to(demo / name)
    (tmp_path / "scenario.toml").write_text(block)
    scenario = load_scenario(tmp_path / "scenario.toml")
    catalogue = read_sites(demo / "sites.toml")
    air = read_air(demo / "air.csv", catalogue)
    air = air[0] if isinstance(air, tuple) else air
    _bulk_refusal(SimpleNamespace(inputs=SimpleNamespace(air=air, met=True)), scenario,
                  catalogue)


def test_custom_period_snippets_run(tmp_path):
    """The Python of docs/data_formats.md's step 5 (the wet and dry deposition over one
    week) runs as written on a tiny invented scenario and gives what the text says: the
    wet on (site, period), the dry on (site, receptor, period, species) with its notes."""
    import warnings

    import test_budget as tb
    from workbench.periods import make_periods  # noqa: F401  (the names the text uses)
    from workbench.pipeline import Study  # noqa: F401
    text = (ROOT / "docs" / "data_formats.md").read_text()
    step = text.split("5. **Scenario**")[1].split("6. **Read the run**")[0]
    code = [s for s in _spans(step) if re.match(r"(p|study) = |study\.(wet|dry)\(", s)]
    assert [c.split("(")[0].split(" =")[0] for c in code] == ["p", "study", "study.wet",
                                                              "study.dry"], code
    sc = load_scenario(tb._write(tmp_path))
    start, end = f"{tb.WEEKS[1]:%Y-%m-%dT%H:%M}", f"{tb.WEEKS[2]:%Y-%m-%dT%H:%M}"
    names = {"sc": sc, "start": start, "end": end, "make_periods": make_periods,
             "Study": Study}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        exec(code[0], names)
        exec(code[1], names)
        wet = eval(code[2], names)
        dry, notes = eval(code[3], names)
    assert set(wet["dep_SO4"].dims) == {"site", "period"}
    assert list(wet["period"].values) == ["week 10"]
    assert set(dry["deposition"].dims) == {"site", "receptor", "period", "species"}
    assert isinstance(notes, list)
