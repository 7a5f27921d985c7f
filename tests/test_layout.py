"""The package's layout: layers that read as the data flow, no import circles, and one name.

Internal checks of the code's structure (no outside source): the import graph is read with
:mod:`ast` from the source files, imports inside functions included, so a lazy import that
runs back up is caught too.
"""

from __future__ import annotations

import ast
import tomllib
from collections import defaultdict
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
PKG_DIR = REPO / "optimiser"
PKG = "stowflow"

#: Layer of each module by the longest matching prefix; a module may import only modules of
#: its own layer or below.  The front door (the package's ``__init__``) sits under the shells.
LAYERS: dict[str, int] = {
    "stowflow.version": 0,
    "stowflow._deps": 0,
    "stowflow.units": 0,
    "stowflow.errors": 0,
    "stowflow.glossary": 0,
    "stowflow.io.jsonable": 0,
    "stowflow.io.rawtext": 0,
    "stowflow.physics": 1,
    "stowflow.cycle": 2,
    "stowflow.catalogue": 2,
    "stowflow.components": 2,
    "stowflow.fill": 3,
    "stowflow.duties": 3,
    "stowflow.search": 4,
    "stowflow.simulation": 5,
    "stowflow.costs": 6,
    "stowflow.io": 7,
    "stowflow.report": 8,
    "stowflow.pipeline": 9,
    "stowflow.api": 10,
    "stowflow.studies": 10,
    "stowflow": 10,
    "stowflow.__main__": 12,
    "stowflow.cli": 11,
    "stowflow.web": 11,
}


def module_name(path: Path) -> str:
    parts = list(path.relative_to(PKG_DIR).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join([PKG, *parts])


def modules() -> dict[str, Path]:
    return {module_name(p): p for p in sorted(PKG_DIR.rglob("*.py"))}


def imports(name: str, path: Path, known: set[str]) -> set[str]:
    """Modules of the package that ``name`` imports (``from x import y`` counts y if a module)."""
    is_pkg = path.name == "__init__.py"
    base = name.split(".") if is_pkg else name.split(".")[:-1]
    out = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                mod = ".".join(base[: len(base) - node.level + 1] + ([node.module] or []))
            else:
                mod = node.module or ""
            for cand in [mod, *(f"{mod}.{a.name}" for a in node.names)]:
                if cand in known and cand != name:
                    out.add(cand)
        elif isinstance(node, ast.Import):
            out |= {a.name for a in node.names if a.name in known and a.name != name}
    return out


def layer(name: str) -> int:
    best = max((k for k in LAYERS if name == k or name.startswith(k + ".")), key=len)
    return LAYERS[best]


@pytest.fixture(scope="module")
def graph() -> dict[str, set[str]]:
    mods = modules()
    return {n: imports(n, p, set(mods)) for n, p in mods.items()}


def test_no_module_imports_a_higher_layer(graph):
    upward = [
        f"{a} (layer {layer(a)}) imports {b} (layer {layer(b)})"
        for a, deps in graph.items()
        for b in deps
        if layer(b) > layer(a)
    ]
    assert not upward, "\n".join(upward)


def test_no_import_circles(graph):
    # Tarjan's strongly connected components; any with more than one module is a circle.
    index, low, stack, on, circles = {}, {}, [], set(), []

    def visit(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in graph[v]:
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            # A package's __init__ that re-exports its own modules is not a circle.
            real = [m for m in comp if not any(m.startswith(o + ".") for o in comp)]
            if len(comp) > 1 and len(real) > 1:
                circles.append(sorted(comp))

    for v in graph:
        if v not in index:
            visit(v)
    assert not circles, circles


def test_private_modules_stay_inside_their_subpackage(graph):
    leaks = []
    for a, deps in graph.items():
        for b in deps:
            parts = b.split(".")
            if parts[-1].startswith("_") and not parts[-1].startswith("__"):
                home = ".".join(parts[:-1])
                if not (a == home or a.startswith(home + ".")) or (home == PKG and a != PKG):
                    leaks.append(f"{a} imports {b}")
    # The package root's own private module (_deps) is the root's: only the root imports it.
    assert not leaks, "\n".join(leaks)


def test_the_search_does_not_import_the_simulation_and_nothing_imports_the_shells(graph):
    for a, deps in graph.items():
        for b in deps:
            if a.startswith("stowflow.search"):
                assert not b.startswith("stowflow.simulation"), f"{a} imports {b}"
            if b.startswith(("stowflow.cli", "stowflow.web")):
                assert a.startswith((b.rsplit(".", 1)[0], "stowflow.cli", "stowflow.web")) or (
                    a == "stowflow.__main__"
                ), f"{a} imports {b}"
            if b == "stowflow.pipeline":
                assert layer(a) > layer(b), f"{a} imports the pipeline"


def test_physics_imports_nothing_above_it(graph):
    for a, deps in graph.items():
        if a.startswith("stowflow.physics"):
            bad = [b for b in deps if layer(b) > 1]
            assert not bad, f"{a} imports {bad}"


def test_every_subpackage_is_installed_under_the_distributions_name():
    cfg = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))
    tool = cfg["tool"]["setuptools"]
    assert tool["package-dir"] == {PKG: "optimiser", f"{PKG}.duty_cycles": "duty_cycles"}
    folders = {
        module_name(p.parent / "__init__.py") if p.parent != PKG_DIR else PKG
        for p in PKG_DIR.rglob("__init__.py")
    }
    assert set(tool["packages"]) == folders | {f"{PKG}.duty_cycles"}
    assert cfg["project"]["scripts"]["stowflow"] == "stowflow.cli:entry"


def test_no_code_imports_the_folder_name():
    # The folder is optimiser/, the import name stowflow: an `import optimiser` would only
    # work from the repository's root and would load a second copy of the package.
    hits = []
    for root in (PKG_DIR, REPO / "tests"):
        for p in root.rglob("*.py"):
            for node in ast.walk(ast.parse(p.read_text(encoding="utf-8"))):
                names = (
                    [node.module or ""]
                    if isinstance(node, ast.ImportFrom)
                    else [a.name for a in node.names]
                    if isinstance(node, ast.Import)
                    else []
                )
                hits += [f"{p}: {n}" for n in names if n.split(".")[0] == "optimiser"]
    assert not hits, hits


def test_layer_table_covers_every_module(graph):
    missing = defaultdict(list)
    for name in graph:
        if not any(name == k or name.startswith(k + ".") for k in LAYERS):
            missing[name.rsplit(".", 1)[0]].append(name)
    assert not missing


@pytest.mark.slow
def test_a_wheel_installs_stowflow_with_its_data_and_no_optimiser(tmp_path):
    # A regular (non-editable) build: the import name is stowflow, the folder name is not
    # installed, and the nitrogen table, report assets and demo data travel with it.
    import subprocess
    import sys
    import zipfile

    out = subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", str(tmp_path), str(REPO)],
        capture_output=True,
        text=True,
        timeout=600,
    )
    assert out.returncode == 0, out.stderr[-2000:]
    (wheel,) = tmp_path.glob("stowflow-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    tops = {n.split("/")[0] for n in names if not n.split("/")[0].endswith(".dist-info")}
    assert tops == {"stowflow"}
    for needed in (
        "stowflow/physics/data/nitrogen_span2000.npz",
        "stowflow/report/style.css",
        "stowflow/web/templates/base.html",
        "stowflow/duty_cycles/catalogue.toml",
        "stowflow/duty_cycles/forming_press.csv",
        "stowflow/duty_cycles/motions/motions_demo.csv",
    ):
        assert needed in names, needed
