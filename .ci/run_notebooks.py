"""Execute every notebook of notebooks/ headless, as a new user would: every cell, in order.

Run with the python of the environment under test (`.ci/run` uses a fresh venv made
from the README's first command).  The notebooks are copied into a temporary folder (so
nothing is left in notebooks/) and the scenario cell points at the demo scenario the
installed package ships (`workbench.cli.DEMO_SCENARIO`).  Exit code 1 when a cell
fails, with the notebook and the error.
"""
import sys
import tempfile
import time
from pathlib import Path

import nbformat
from nbclient import NotebookClient
from nbclient.exceptions import CellExecutionError

from workbench.cli import DEMO_SCENARIO

NOTEBOOKS = Path(__file__).resolve().parents[1] / "notebooks"
NAMES = tuple(sorted(p.stem for p in NOTEBOOKS.glob("*.ipynb")))


def main() -> int:
    failed = []
    with tempfile.TemporaryDirectory(prefix="workbench-notebooks-") as tmp:
        for name in NAMES:
            nb = nbformat.read(NOTEBOOKS / f"{name}.ipynb", as_version=4)
            nb.cells.insert(1, nbformat.v4.new_code_cell(
                f"SCENARIO = r{str(DEMO_SCENARIO)!r}\n"
                "import sys as _s, workbench as _w\nprint(_s.prefix, _w.__file__)"))
            t0 = time.perf_counter()
            try:
                NotebookClient(nb, timeout=900, kernel_name="python3", store_widget_state=False,
                               resources={"metadata": {"path": tmp}}).execute()
            except CellExecutionError as exc:
                failed.append(name)
                print(f"{name}.ipynb: a cell failed:\n{exc}", file=sys.stderr)
                continue
            errors = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])
                      if o.output_type == "error"
                      or (o.output_type == "stream" and "Traceback" in o.get("text", ""))]
            where = "".join(o.get("text", "") for o in nb.cells[1].outputs)
            if not where.startswith(sys.prefix + " "):
                errors.append(f"the kernel ran in another environment: {where.strip()}")
            if errors:
                failed.append(name)
                print(f"{name}.ipynb: error output: {errors[0]}", file=sys.stderr)
            else:
                print(f"{name}.ipynb: ran every cell in {time.perf_counter() - t0:.0f} s")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
