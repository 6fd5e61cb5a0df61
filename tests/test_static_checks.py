"""Lint, type check and declared dependencies, run by the test suite so CI enforces them.

``ruff check .`` (configured in pyproject.toml) and ``mypy`` (``[tool.mypy]``:
the package ``notchkit``) must report nothing. Both are in the ``test`` extra;
a test is skipped only where its tool is not installed.
"""

from __future__ import annotations

import ast
import importlib.util
import subprocess
import sys
import tomllib
from importlib.metadata import packages_distributions
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def _run(module: str, *args: str) -> subprocess.CompletedProcess[str]:
    if importlib.util.find_spec(module) is None:
        pytest.skip(f"{module} is not installed (pip install -e '.[test]')")
    return subprocess.run([sys.executable, "-m", module, *args], cwd=ROOT, capture_output=True, text=True,
                          timeout=600, check=False)


def test_ruff_finds_nothing():
    done = _run("ruff", "check", ".")
    assert done.returncode == 0, done.stdout + done.stderr


def test_mypy_finds_nothing():
    done = _run("mypy", "notchkit")
    assert done.returncode == 0, done.stdout + done.stderr


def _top_level_imports() -> set[str]:
    names = set()
    for path in (ROOT / "notchkit").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                names.update(a.name.split(".")[0] for a in node.names)
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                names.add(node.module.split(".")[0])
    return names


def _requirement_name(req: str) -> str:
    for stop in "[<>=!~; ":
        req = req.split(stop)[0]
    return req.strip().lower().replace("_", "-")


def test_every_third_party_import_of_the_package_is_a_declared_dependency():
    meta = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    declared = {_requirement_name(r) for r in meta["dependencies"]}
    dists = packages_distributions()
    undeclared = {}
    for name in sorted(_top_level_imports()):
        if name == "notchkit" or name in sys.stdlib_module_names:
            continue
        owners = {d.lower().replace("_", "-") for d in dists.get(name, [])}
        if not owners & declared:
            undeclared[name] = sorted(owners) or ["(not installed)"]
    assert not undeclared, f"imported by notchkit but not in [project] dependencies: {undeclared}"


def test_py_typed_ships_with_the_package():
    assert (ROOT / "notchkit" / "py.typed").is_file()
    data = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert "py.typed" in data["tool"]["setuptools"]["package-data"]["notchkit"]
