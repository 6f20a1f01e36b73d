"""The shape of the code (DEVELOPERS.md, "Architecture and data flow"): one
import name, imports that flow one way (case -> layout and mesh -> fem ->
postprocess -> the application layer), no import circles, short modules, and
a docstring stating each package's job.  Common practice for a layered
Python package; the limits (500 lines a module, 80 a function) are the project's own.
"""

from __future__ import annotations

import ast
import zipfile
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
#: folder in the checkout -> its import name once installed (pyproject.toml, package-dir)
FOLDERS = {"geometry": "racfield.geometry", "fem": "racfield.fem", "postprocess/app": "racfield",
           "postprocess": "racfield.postprocess"}
#: layers from the bottom up: a module may import its own layer and those below it
LAYERS = ["racfield.geometry.case", "racfield.geometry", "racfield.fem", "racfield.postprocess", "racfield"]
MAX_LINES = 500
MAX_FUNCTION_LINES = 80


def module_name(path: Path) -> str:
    rel = path.relative_to(ROOT).with_suffix("")
    for folder, name in FOLDERS.items():  # postprocess/app before postprocess
        if rel.as_posix().startswith(folder + "/"):
            parts = rel.relative_to(folder).parts
            if parts[-1] == "__init__":
                parts = parts[:-1]
            return ".".join((name,) + parts)
    raise AssertionError(path)


def sources() -> dict[str, Path]:
    order = sorted(FOLDERS, key=len, reverse=True)
    out = {}
    for folder in ("geometry", "fem", "postprocess"):
        for path in sorted((ROOT / folder).rglob("*.py")):
            rel = path.relative_to(ROOT).as_posix()
            owner = next(f for f in order if rel.startswith(f + "/"))
            out[module_name(path)] = path
            assert owner
    return out


def imports(name: str, path: Path, known: set[str]) -> set[str]:
    """The racfield modules ``name`` imports anywhere in its source (function bodies
    and TYPE_CHECKING blocks included), resolved to known module names."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found = set()
    for node in ast.walk(tree):
        targets = []
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")
                anchor = anchor[: len(anchor) - (node.level - 1)]
                base = ".".join(anchor + ([base] if base else []))
            targets = [base] + [f"{base}.{a.name}" for a in node.names]
        for target in targets:
            while target and target not in known:
                target = target.rpartition(".")[0]
            if target and target != name:
                found.add(target)
    return found


def graph() -> dict[str, set[str]]:
    mods = sources()
    known = set(mods)
    edges = {}
    for name, path in mods.items():
        # a package's __init__ gathering its own modules is not an edge back into it
        edges[name] = {t for t in imports(name, path, known)
                       if not (path.name == "__init__.py" and t.startswith(name + "."))}
    return edges


def layer(name: str) -> int:
    return max(i for i, prefix in enumerate(LAYERS) if name == prefix or name.startswith(prefix + "."))


def test_no_import_circles():
    edges = graph()
    index, low, stack, on, cycles = {}, {}, [], set(), []

    def visit(v):  # Tarjan's strongly connected components
        index[v] = low[v] = len(index)
        stack.append(v)
        on.add(v)
        for w in edges[v]:
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
            if len(comp) > 1:
                cycles.append(sorted(comp))

    for v in sorted(edges):
        if v not in index:
            visit(v)
    assert not cycles, f"import circles: {cycles}"


def test_imports_flow_one_way():
    # the case model imports nothing above it; layout and mesh nothing of fem; fem
    # nothing of postprocess; postprocess nothing of the application layer
    wrong = [f"{a} imports {b}" for a, targets in graph().items() for b in targets if layer(b) > layer(a)]
    assert not wrong, wrong


def test_every_import_is_under_the_one_name():
    # an absolute "import fem" would work from the checkout and fail once installed
    for name, path in sources().items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            modules = ([a.name for a in node.names] if isinstance(node, ast.Import)
                       else [node.module] if isinstance(node, ast.ImportFrom) and not node.level else [])
            for module in modules:
                assert module.split(".")[0] not in ("geometry", "fem", "postprocess"), \
                    f"{path.relative_to(ROOT)}:{node.lineno}: import {module} (write racfield.{module})"


def test_modules_are_short_and_packages_state_their_job():
    for name, path in sources().items():
        lines = len(path.read_text(encoding="utf-8").splitlines())
        assert lines <= MAX_LINES, f"{path.relative_to(ROOT)} has {lines} lines (at most {MAX_LINES})"
        if path.name == "__init__.py":
            doc = ast.get_docstring(ast.parse(path.read_text(encoding="utf-8")))
            assert doc and len(doc) > 40, f"{path.relative_to(ROOT)} needs a docstring stating its job"


def test_functions_are_short():
    long = []
    for name, path in sources().items():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                lines = node.end_lineno - node.lineno + 1
                if lines > MAX_FUNCTION_LINES:
                    long.append(f"{path.relative_to(ROOT)}:{node.lineno} {node.name} ({lines} lines)")
    assert not long, f"functions over {MAX_FUNCTION_LINES} lines: {long}"


@pytest.mark.slow
def test_the_wheel_installs_one_import_name(tmp_path):
    # pip builds the wheel a non-editable install puts into site-packages
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--quiet", "-w", str(tmp_path), str(ROOT)],
                   check=True, capture_output=True, cwd=tmp_path)
    wheel = next(tmp_path.glob("racfield-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    tops = {n.split("/")[0] for n in names}
    assert {t for t in tops if not t.endswith(".dist-info")} == {"racfield"}, tops
    expected = {f"racfield/{p}" for p in ("__init__.py", "cli.py", "geometry/case/model.py", "geometry/layout.py",
                                          "fem/sweep.py", "postprocess/report.py", "postprocess/writers/__init__.py")}
    assert expected <= set(names)
    top_level = next(n for n in names if n.endswith(".dist-info/top_level.txt"))
    assert zipfile.ZipFile(wheel).read(top_level).decode().split() == ["racfield"]
