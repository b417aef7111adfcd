"""What an install needs: every imported module declared, the demo data and py.typed
shipped, optional parts imported lazily.  (The install itself, into an empty venv, is a
step of `.ci/run`; here only what can be checked in a second.)"""
import ast
import fnmatch
import functools
import importlib.metadata
import importlib.util
import re
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

try:
    import tomllib
except ImportError:  # Python 3.10
    import tomli as tomllib

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "workbench"
PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text())
#: Imported only inside the functions that need them, from an extra.
LAZY = {"dask": "scale", "distributed": "scale", "kaleido": "export", "zarr": "zarr",
        "netCDF4": "netcdf4"}
#: Modules of the package that belong to an extra: they import it at module level, and
#: are themselves imported only inside the functions that need them, after those have
#: checked that the extra is installed (held by
#: :func:`test_a_module_of_an_extra_is_imported_only_inside_functions`).
EXTRA_MODULES = {"workbench/io/zarrknown.py": "zarr"}


def _norm(name: str) -> str:
    return re.sub(r"[-_.]+", "-", name).lower()


def _requirement_names(reqs) -> set:
    return {_norm(re.split(r"[\s<>=!~;\[]", r, maxsplit=1)[0]) for r in reqs}


def _imports(top_level_only: bool):
    """(file, line, top-level module) of every absolute import in the package."""
    out = []
    for path in sorted(PACKAGE.rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        nodes = tree.body if top_level_only else list(ast.walk(tree))
        stack = list(nodes)
        while stack:                       # module level includes try/if blocks
            node = stack.pop()
            if top_level_only and isinstance(node, (ast.Try, ast.If)):
                stack.extend(node.body + node.orelse + getattr(node, "handlers", [])
                             + getattr(node, "finalbody", []))
            elif top_level_only and isinstance(node, ast.ExceptHandler):
                stack.extend(node.body)
            if isinstance(node, ast.Import):
                out += [(path, node.lineno, a.name.split(".")[0]) for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                out.append((path, node.lineno, node.module.split(".")[0]))
    if top_level_only:                     # a module of an extra: loaded with it only
        out = [(p, n, m) for p, n, m in out
               if EXTRA_MODULES.get(p.relative_to(ROOT).as_posix()) != m]
    return out


@functools.lru_cache(maxsize=None)
def _distribution(module: str):
    if module in sys.stdlib_module_names or module == "workbench":
        return None
    if module == "tomli":                  # the Python 3.10 stand-in for tomllib
        return "tomli"
    try:                                   # the distribution that provides the module
        return _norm(importlib.metadata.distribution(module).metadata["Name"])
    except importlib.metadata.PackageNotFoundError:
        dists = _module_map().get(module)
    assert dists, f"{module} is imported but not installed"
    return _norm(dists[0])


def _installed(module: str) -> bool:
    return importlib.util.find_spec(module) is not None


@functools.lru_cache(maxsize=None)
def _module_map():
    return importlib.metadata.packages_distributions()


def test_every_module_imported_at_load_is_a_runtime_dependency():
    deps = _requirement_names(PYPROJECT["project"]["dependencies"])
    missing = {(m, f"{p.relative_to(ROOT)}:{n}") for p, n, m in _imports(True)
               if _distribution(m) is not None and _distribution(m) not in deps}
    assert not missing, f"imported at load but not in [project] dependencies: {sorted(missing)}"


def test_every_lazy_import_is_declared_in_dependencies_or_its_extra():
    deps = _requirement_names(PYPROJECT["project"]["dependencies"])
    extras = PYPROJECT["project"]["optional-dependencies"]
    for path, line, module in _imports(False):
        if module in LAZY and not _installed(module):
            # an extra not installed here (e.g. zarr): its module is its distribution
            assert _norm(module) in _requirement_names(extras[LAZY[module]]), module
            continue
        dist = _distribution(module)
        if dist is None or dist in deps:
            continue
        assert module in LAZY, f"{path.relative_to(ROOT)}:{line}: {module} is not declared"
        assert dist in _requirement_names(extras[LAZY[module]]), (module, LAZY[module])
    loaded = {m for _, _, m in _imports(True)}
    assert not loaded & set(LAZY), "dask/distributed must not be imported at module level"



def test_a_module_of_an_extra_is_imported_only_inside_functions():
    """No module of the package imports a module of :data:`EXTRA_MODULES` at its top
    level (relative or absolute): importing workbench never imports the extra."""
    names = {Path(m).with_suffix("").as_posix().replace("/", ".") for m in EXTRA_MODULES}
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        pkg = ".".join(path.relative_to(ROOT).with_suffix("").parts[:-1])
        stack = list(tree.body)
        while stack:
            node = stack.pop()
            if isinstance(node, (ast.Try, ast.If)):
                stack.extend(node.body + node.orelse + getattr(node, "handlers", [])
                             + getattr(node, "finalbody", []))
            elif isinstance(node, ast.ExceptHandler):
                stack.extend(node.body)
            elif isinstance(node, ast.Import):
                found += [(path, a.name) for a in node.names if a.name in names]
            elif isinstance(node, ast.ImportFrom):
                base = pkg.split(".")[:len(pkg.split(".")) - node.level + 1] \
                    if node.level else []
                full = ".".join(base + ([node.module] if node.module else []))
                found += [(path, full) for n in [full] if n in names]
                found += [(path, f"{full}.{a.name}") for a in node.names
                          if f"{full}.{a.name}" in names]
    assert not found, f"a module of an extra imported at module level: {found}"
    assert all((ROOT / m).is_file() for m in EXTRA_MODULES)

def test_package_list_matches_the_folders():
    """pyproject lists the packages (to map demo_data/ into the package): none forgotten."""
    listed = set(PYPROJECT["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in PACKAGE.rglob("__init__.py")}
    assert listed == found | {"workbench.demo_data"}
    assert PYPROJECT["tool"]["setuptools"]["package-dir"] == {"workbench.demo_data": "demo_data"}


def test_demo_data_files_are_shipped_and_py_typed_exists():
    """Every data file of demo_data/ (whatever its content) matches a package-data
    pattern, and the marker of a typed package is shipped."""
    patterns = PYPROJECT["tool"]["setuptools"]["package-data"]
    data = [p.name for p in (ROOT / "demo_data").iterdir()
            if p.is_file() and p.suffix != ".py" and not p.name.startswith(".")]
    assert "scenario.toml" in data
    lost = [n for n in data if not any(fnmatch.fnmatch(n, pat)
                                       for pat in patterns["workbench.demo_data"])]
    assert not lost, f"demo files that would not be installed: {lost}"
    assert (PACKAGE / "py.typed").is_file() and "py.typed" in patterns["workbench"]


def test_demo_scenario_found_in_a_source_tree():
    from workbench.cli import DEMO_SCENARIO, demo_folder
    assert demo_folder() == ROOT / "demo_data"
    assert DEMO_SCENARIO == ROOT / "demo_data" / "scenario.toml"


def _python(code: str, **kw):
    return subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True,
                          text=True, cwd=ROOT, **kw)


def test_python_dash_m_workbench():
    r = subprocess.run([sys.executable, "-m", "workbench", "--help"], capture_output=True,
                       text=True, cwd=ROOT)
    assert r.returncode == 0, r.stderr
    assert "usage: workbench" in r.stdout and "check" in r.stdout and "demo" in r.stdout


def test_everything_imports_without_dask():
    """dask blocked (as if the `scale` extra were not installed): every module imports,
    and a function that needs dask says which extra to install."""
    r = _python("""
        import sys, pkgutil, importlib
        sys.modules["dask"] = None; sys.modules["distributed"] = None
        import workbench
        names = [m.name for m in pkgutil.walk_packages(workbench.__path__, "workbench.")
                 if m.name != "workbench.__main__"]
        for name in names:
            importlib.import_module(name)
        from workbench.optional import require, MissingExtraError
        try:
            require("dask.array")
        except MissingExtraError as exc:
            print(exc)
        print(len(names), "modules")
    """)
    assert r.returncode == 0, r.stderr
    assert 'install it with python -m pip install "deposition-workbench[scale]"' in r.stdout
    assert int(r.stdout.split()[-2]) > 20


@pytest.mark.parametrize("fixed", [True, False], ids=["fixed_velocity", "resistance_model"])
def test_check_and_run_without_dask(tmp_path, fixed):
    """The whole chain, the resistance model included, on numpy alone."""
    import test_budget as tb
    sc = tb._write(tmp_path)
    if not fixed:
        sc.write_text(sc.read_text().split("[dry.fixed_velocity]")[0])
    r = _python(f"""
        import sys
        sys.modules["dask"] = None; sys.modules["distributed"] = None
        from workbench.cli import main
        assert main(["check", r"{sc}", "--quiet"]) == 0
        assert main(["run", r"{sc}", "--out", r"{tmp_path / 'out'}", "--quiet"]) == 0
        assert "dask" not in sys.modules or sys.modules["dask"] is None
    """)
    assert r.returncode == 0, r.stderr
    assert (tmp_path / "out" / "provenance.json").is_file()


def test_netcdf_engines_used_are_runtime_dependencies():
    """xarray loads its NetCDF engine by name: ``engine="scipy"`` needs scipy installed."""
    deps = _requirement_names(PYPROJECT["project"]["dependencies"])
    engines = {m for p in PACKAGE.rglob("*.py")
               for m in re.findall(r"engine=[\"'](\w+)[\"']", p.read_text(encoding="utf-8"))}
    assert engines, "the writers name their NetCDF engine"
    lazy = {e for e in engines if e in LAZY}      # zarr: its own extra, checked before use
    extras = PYPROJECT["project"]["optional-dependencies"]
    assert all(_norm(e) in _requirement_names(extras[LAZY[e]]) for e in lazy)
    assert {_norm(e) for e in engines - lazy} <= deps


def _test_imports():
    """(file, line, top-level module) of every absolute import and every
    ``pytest.importorskip("x")`` in tests/ and benchmarks/."""
    out = []
    for folder in (ROOT / "tests", ROOT / "benchmarks"):
        for path in sorted(folder.rglob("*.py")):
            for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
                if isinstance(node, ast.Import):
                    out += [(path, node.lineno, a.name.split(".")[0]) for a in node.names]
                elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                    out.append((path, node.lineno, node.module.split(".")[0]))
                elif (isinstance(node, ast.Call) and getattr(node.func, "attr", "")
                      == "importorskip" and node.args
                      and isinstance(node.args[0], ast.Constant)):
                    out.append((path, node.lineno, str(node.args[0].value).split(".")[0]))
    return out


def test_every_module_the_tests_import_is_declared():
    """A reference library the tests import (or skip without) is in the test extra or
    another extra: a check skipped for want of an undeclared package cannot fail in CI.
    Local helper modules of tests/ and benchmarks/ count as local."""
    local = {p.stem for folder in (ROOT / "tests", ROOT / "benchmarks")
             for p in folder.rglob("*.py")} | {"tests", "benchmarks", "docs"}
    local |= {p.name for folder in (ROOT / "tests", ROOT / "benchmarks")
              for p in folder.rglob("*") if p.is_dir()}
    declared = _requirement_names(PYPROJECT["project"]["dependencies"])
    for reqs in PYPROJECT["project"]["optional-dependencies"].values():
        declared |= _requirement_names(reqs)
    undeclared = []
    for path, line, module in _test_imports():
        if module in local or module in sys.stdlib_module_names or module == "workbench":
            continue
        if module in LAZY or _norm(module) in declared:
            continue
        if not _installed(module):
            undeclared.append(f"{path.relative_to(ROOT)}:{line}: {module} (not installed)")
            continue
        if _distribution(module) not in declared:
            undeclared.append(f"{path.relative_to(ROOT)}:{line}: {module}")
    assert not undeclared, "imported by tests or benchmarks but not declared: " + \
        "; ".join(undeclared)
