"""Every third-party module the code, the tests and the benchmarks import is declared (and
pinned) in pyproject.toml, so a fresh `make install` can run all of them."""

from __future__ import annotations

import ast
import importlib.metadata as metadata
import re
import sys
import tomllib
from functools import cache
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
FOLDERS = ("fieldapp", "ringmath", "tests", "bench")


def _normal(name: str) -> str:
    return re.sub(r"[-_.]+", "-", name).lower()


@cache
def _declared() -> dict[str, str]:
    """Distribution name (normalised) -> its requirement line, main and dev."""
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    lines = list(project["dependencies"])
    for extra in project.get("optional-dependencies", {}).values():
        lines += extra
    return {_normal(re.split(r"[\[=<>~! ;]", line, maxsplit=1)[0]): line for line in lines}


def _local_names() -> set[str]:
    """Modules of the project itself: its packages and every module or package in a folder
    that tests or benchmarks import from beside them."""
    names = {"fieldapp", "ringmath"}
    for folder in FOLDERS:
        for path in (ROOT / folder).rglob("*.py"):
            names.add(path.stem)
            names.add(path.parent.name)
    return names


def _imports() -> dict[str, str]:
    """Top-level module name -> the first file importing it."""
    found: dict[str, str] = {}
    for folder in FOLDERS:
        for path in sorted((ROOT / folder).rglob("*.py")):
            tree = ast.parse(path.read_text(encoding="utf-8"), str(path))
            for node in ast.walk(tree):
                if isinstance(node, ast.Import):
                    names = [alias.name for alias in node.names]
                elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                    names = [node.module]
                else:
                    continue
                for name in names:
                    found.setdefault(name.partition(".")[0], str(path.relative_to(ROOT)))
    return found


@cache
def _third_party() -> dict[str, str]:
    local = _local_names()
    return {name: where for name, where in _imports().items()
            if name not in sys.stdlib_module_names and name not in local}


def test_the_scan_sees_the_imports_it_must_check():
    # the check cannot pass by finding nothing: these are imported today
    assert {"numpy", "flask", "PIL", "pytest", "werkzeug"} <= set(_third_party())


@cache
def _distributions() -> dict[str, list[str]]:
    return metadata.packages_distributions()


@pytest.mark.parametrize("module", sorted(_third_party()))
def test_every_imported_module_is_declared_and_pinned(module):
    where = _third_party()[module]
    distributions = _distributions().get(module)
    assert distributions, f"{module} (imported in {where}) is not installed from any distribution"
    declared = _declared()
    names = [_normal(d) for d in distributions]
    line = next((declared[n] for n in names if n in declared), None)
    assert line is not None, f"{module} (imported in {where}) needs one of {names} in pyproject"
    assert "==" in line, f"{line} is not pinned"
