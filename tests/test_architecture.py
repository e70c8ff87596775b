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
