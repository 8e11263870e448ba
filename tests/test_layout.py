"""The package's own layout rules, checked on its source.

A name with a leading underscore belongs to its module: another module that needs it
calls for a public (package-internal) name instead. Public here means "may be imported by
a sibling module"; what the package offers its users is each package's ``__all__``.
"""

from __future__ import annotations

import ast
from pathlib import Path

import grower

ROOT = Path(grower.__file__).parent


def _private_reads(source: str) -> list[str]:
    """``from m import _x`` and ``module._x`` reads in one module's source."""
    tree = ast.parse(source)
    modules = {
        alias.asname or alias.name
        for node in ast.walk(tree)
        if isinstance(node, (ast.Import, ast.ImportFrom))
        for alias in node.names
    }
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module != "__future__":
            found += [
                f"line {node.lineno}: from {'.' * node.level}{node.module or ''} import {a.name}"
                for a in node.names
                if a.name.startswith("_") and not a.name.startswith("__")
            ]
        elif (
            isinstance(node, ast.Attribute)
            and node.attr.startswith("_")
            and not node.attr.startswith("__")
            and isinstance(node.value, ast.Name)
            and node.value.id in modules
        ):
            found.append(f"line {node.lineno}: {node.value.id}.{node.attr}")
    return found


def test_the_checker_finds_both_kinds_of_private_read():
    source = "from .stepping import _phi\nimport argparse\nx = argparse._Sub\nself._y = 1\n"
    assert _private_reads(source) == [
        "line 1: from .stepping import _phi",
        "line 3: argparse._Sub",
    ]


def test_no_module_reads_another_modules_private_names():
    reads = {
        str(path.relative_to(ROOT)): found
        for path in sorted(ROOT.rglob("*.py"))
        if (found := _private_reads(path.read_text(encoding="utf-8")))
    }
    assert reads == {}
