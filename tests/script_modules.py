"""The scripts of benchmarks/ and docs/ as modules, for tests that reuse their functions
(a plain module: `from conftest import ...` finds whichever conftest.py pytest imported
first under that name, tests/analysis/conftest.py in a whole-suite run)."""
import importlib.util
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _module(path, name):
    spec = importlib.util.spec_from_file_location(name, path)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def bench_script(name):
    """The module of the script benchmarks/<name>.py (the measurements some docs quote)."""
    return _module(ROOT / "benchmarks" / f"{name}.py", f"bench_{name}")


def docs_script(name):
    """The module of the script docs/<name>.py (the writers of the docs' demo numbers)."""
    return _module(ROOT / "docs" / f"{name}.py", name)
