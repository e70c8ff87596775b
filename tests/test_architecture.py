"""Architecture rules from DEVELOPERS.md, enforced.

The core packages (estimator/, advisor/) are pure computation: they must import without paho, flask,
sqlalchemy or the onboard package being importable, and their source must not mention them in imports.
"""

import ast
import pathlib
import subprocess
import sys

ROOT = pathlib.Path(__file__).resolve().parents[1]
FORBIDDEN = ("paho", "flask", "sqlalchemy", "onboard", "werkzeug", "waitress")


def _imported_modules(path: pathlib.Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    names: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names.update(alias.name.split(".")[0] for alias in node.names)
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            names.add(node.module.split(".")[0])
    return names


def test_core_sources_import_no_edge_packages():
    offenders = []
    for package in ("estimator", "advisor"):
        for path in sorted((ROOT / package).rglob("*.py")):
            bad = _imported_modules(path) & set(FORBIDDEN)
            if bad:
                offenders.append(f"{path.relative_to(ROOT)} imports {sorted(bad)}")
    assert not offenders, "core must stay pure: " + "; ".join(offenders)


def test_core_imports_with_edge_packages_blocked():
    # Import every core module in a fresh interpreter in which the edge packages cannot be imported.
    modules = [
        ".".join(p.relative_to(ROOT).with_suffix("").parts)
        for package in ("estimator", "advisor")
        for p in sorted((ROOT / package).rglob("*.py"))
        if p.name != "__init__.py"
    ] + ["estimator", "advisor"]
    code = (
        "import sys\n"
        f"for name in {FORBIDDEN!r}:\n"
        "    sys.modules[name] = None\n"
        f"import importlib\nfor m in {modules!r}:\n    importlib.import_module(m)\n"
    )
    result = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert result.returncode == 0, result.stderr


# --------------------------------------------------------------------------- the onboard package's layers

LAYERS = {
    # sub-package: the onboard sub-packages it may import (DEVELOPERS.md, "Map of the code")
    "errors": set(),
    "formats": set(),
    "core": {"formats"},
    "admin": {"formats", "core", "errors"},
    "ashore": {"formats", "core", "errors"},
    "live": {"formats", "core", "admin", "errors"},
    "cli": {"errors"},  # and the feature modules, by name, through importlib
    "__main__": {"cli"},
}


def _onboard_module_imports() -> dict[str, set[str]]:
    """Every onboard module and the onboard modules it imports anywhere (also inside functions)."""
    graph: dict[str, set[str]] = {}
    for path in sorted((ROOT / "onboard").rglob("*.py")):
        rel = path.relative_to(ROOT).with_suffix("")
        name = ".".join(rel.parts[:-1] if rel.name == "__init__" else rel.parts)
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        deps: set[str] = set()
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                deps.update(a.name for a in node.names if a.name.startswith("onboard."))
            elif isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("onboard"):
                # "from onboard.admin import audit" imports the module onboard.admin.audit
                for alias in node.names:
                    sub = f"{node.module}.{alias.name}"
                    known = (ROOT / sub.replace(".", "/")).with_suffix(".py").exists() or (
                        ROOT / sub.replace(".", "/") / "__init__.py"
                    ).exists()
                    deps.add(sub if known else node.module)
        graph[name] = {d for d in deps if d != name}
    return graph


def test_onboard_has_no_import_cycles():
    graph = _onboard_module_imports()
    # Package __init__ modules are imported on the way to their children; an edge to a package therefore
    # counts as an edge to its __init__ only (they import nothing here, which the layer test keeps so).
    state: dict[str, int] = {}
    cycles: list[list[str]] = []

    def visit(node: str, stack: list[str]) -> None:
        state[node] = 1
        for dep in sorted(graph.get(node, ())):
            if state.get(dep) == 1:
                cycles.append(stack[stack.index(dep):] + [dep])
            elif dep not in state:
                visit(dep, stack + [dep])
        state[node] = 2

    for start in sorted(graph):
        if start not in state:
            visit(start, [start])
    assert not cycles, "import cycles: " + "; ".join(" -> ".join(c) for c in cycles)


def test_onboard_sub_packages_keep_their_layers():
    offenders = []
    for module, deps in _onboard_module_imports().items():
        parts = module.split(".")
        if len(parts) == 1:
            continue
        own = parts[1]
        allowed = LAYERS.get(own)
        assert allowed is not None, f"{module}: sub-package {own!r} missing from LAYERS (and DEVELOPERS.md)"
        for dep in deps:
            other = dep.split(".")[1] if "." in dep else "onboard"
            if other != own and other not in allowed:
                offenders.append(f"{module} imports {dep}")
    assert not offenders, "layer rule broken: " + "; ".join(sorted(offenders))
