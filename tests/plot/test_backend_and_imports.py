"""Studies compute, io writes, plot draws: import boundaries and the matplotlib backend.

Checked in fresh interpreters, so that nothing imported by another test hides an import:

* importing a study module imports no matplotlib (nor induct.plot / induct.cli);
* no study module imports induct.plot or induct.cli, and planning imports no writer from induct.io
  (read from the source with the ``ast`` module);
* importing and using induct.plot and the command line leaves the backend a user selected alone and creates
  no pyplot state (matplotlib.use switches the backend of a running session; matplotlib documentation,
  "Backends"; figures built from matplotlib.figure.Figure need no backend: matplotlib documentation,
  "Embedding in a web application server" -- common practice).
"""

import ast
import json
import subprocess
import sys
from pathlib import Path

import induct

ROOT = Path(__file__).resolve().parents[2]
STUDIES = ("planning", "inversion", "flyby", "field", "model")


def _fresh(code: str) -> dict:
    """Run ``code`` in a fresh interpreter importing the same induct as the tests; it prints one JSON line."""
    proc = subprocess.run(
        [sys.executable, "-c", "import sys\n" + code],
        capture_output=True, text=True, timeout=300, cwd=Path(induct.__file__).parents[1],
    )
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout.strip().splitlines()[-1])


def test_study_modules_import_no_matplotlib():
    modules = [
        "induct.planning.maps", "induct.planning.diagrams", "induct.planning.separation", "induct.flyby.prediction",
        "induct.inversion.grid", "induct.inversion.posterior", "induct.flyby.induced", "induct.flyby.magfit",
        "induct.field.analysis", "induct.field.spectrum", "induct.text",
    ]
    got = _fresh(
        "import importlib, json\n"
        f"for m in {modules!r}:\n"
        "    importlib.import_module(m)\n"
        "import induct\n"
        "print(json.dumps({'file': induct.__file__, 'loaded': sorted(m for m in sys.modules if m.split('.')[0] == "
        "'matplotlib' or m.startswith(('induct.plot', 'induct.cli', 'induct.io.map_files', 'induct.io.tables')))}))\n"
    )
    assert got["file"] == induct.__file__, got["file"]
    assert got["loaded"] == [], f"importing the study modules also imported {got['loaded']}"


def _imports(path: Path) -> list[str]:
    names = []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.module:
            names.append(node.module)
            names.extend(f"{node.module}.{a.name}" for a in node.names)
        elif isinstance(node, ast.Import):
            names.extend(a.name for a in node.names)
    return names


def test_studies_do_not_import_output_layers():
    bad = []
    for pkg in STUDIES:
        for path in sorted((ROOT / "induct" / pkg).glob("*.py")):
            for name in _imports(path):
                if name.startswith(("induct.plot", "induct.cli", "matplotlib")):
                    bad.append(f"{path.relative_to(ROOT)} imports {name}")
                if pkg == "planning" and name.startswith("induct.io"):
                    bad.append(f"{path.relative_to(ROOT)} imports {name}")
    assert bad == [], "\n".join(bad)


def test_no_private_names_imported_across_modules():
    # A leading underscore marks a module's own helper; other modules use public names only.
    bad = []
    for path in sorted((ROOT / "induct").rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.ImportFrom) and (node.module or "").startswith("induct"):
                bad += [f"{path.relative_to(ROOT)}: {node.module}.{a.name}" for a in node.names
                        if a.name.startswith("_") and not a.name.startswith("__")]
    assert bad == [], "\n".join(bad)


def test_plot_and_cli_leave_the_backend_alone(tmp_path):
    got = _fresh(
        "import json, matplotlib\n"
        "matplotlib.use('svg')\n"
        "before = matplotlib.get_backend()\n"
        "import induct.plot.style, induct.plot.maps, induct.plot.diagrams, induct.plot.separation\n"
        "import induct.plot.flyby, induct.plot.drive, induct.plot.corner, induct.cli.main, induct.cli.demo\n"
        "after_import = matplotlib.get_backend()\n"
        "from induct import load_scenario\n"
        "from induct.planning.separation import separation\n"
        "from induct.plot.separation import plot_separation\n"
        "m = load_scenario('ilmare').model\n"
        "res = separation([m, m.with_layer('ice shell', thickness_km=40.0)], drive_nT=200.0, periods_h=[1, 10, 100])\n"
        f"paths = plot_separation(res, {str(tmp_path / 'sep')!r})\n"
        "from induct.cli.main import main\n"
        f"code = main(['diagram', 'ilmare', '--samples', '5', '--out', {str(tmp_path / 'diag')!r}])\n"
        "print(json.dumps({'before': before, 'after_import': after_import, 'after_use': matplotlib.get_backend(),\n"
        "                  'pyplot': 'matplotlib.pyplot' in sys.modules, 'code': code,\n"
        "                  'sizes': [p.stat().st_size for p in paths]}))\n"
    )
    assert got["before"] == "svg"
    assert got["after_import"] == "svg", f"importing induct.plot switched the backend to {got['after_import']}"
    assert got["after_use"] == "svg", f"drawing and the command line switched the backend to {got['after_use']}"
    assert not got["pyplot"], "pyplot was imported: figures must not depend on pyplot's global state"
    assert got["code"] == 0 and min(got["sizes"]) > 10_000, got
