"""The size budget (DEVELOPERS.md "Size budget"): no module over 600 lines and no
function over 80 lines of code, docstrings aside, unless the table there names it
with a reason; and the table names only pieces that are over budget.

Lines are counted with :mod:`ast`: a piece's source lines (a function from its
``def`` line to its last line, nested functions included; a module from first to
last line) less the lines of docstrings, that is of every statement that is a bare
string (module, class and function docstrings, and the attribute docstrings under
constants and fields). Comments and blank lines count: they are part of what a
reader has to get through.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "notchkit"
MODULE_MAX = 600
FUNCTION_MAX = 80


def _doc_lines(tree: ast.AST) -> set[int]:
    """Line numbers of every bare string statement (docstrings and attribute docstrings)."""
    lines: set[int] = set()
    for node in ast.walk(tree):
        body = getattr(node, "body", None)
        for stmt in body if isinstance(body, list) else ():  # a lambda's body is one expression
            if (isinstance(stmt, ast.Expr) and isinstance(stmt.value, ast.Constant)
                    and isinstance(stmt.value.value, str)):
                lines.update(range(stmt.lineno, (stmt.end_lineno or stmt.lineno) + 1))
    return lines


def _functions(tree: ast.Module, prefix: str):
    """(qualified name, first line, last line) of every function and method, nested too."""
    def walk(node: ast.AST, qual: str):
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef):
                name = f"{qual}.{child.name}"
                yield name, child.lineno, child.end_lineno or child.lineno
                yield from walk(child, name)
            elif isinstance(child, ast.ClassDef):
                yield from walk(child, f"{qual}.{child.name}")
            else:
                yield from walk(child, qual)

    yield from walk(tree, prefix)


def sizes() -> dict[str, int]:
    """Code lines of every module (``report/pdf.py``) and function
    (``report/pdfdraw.draw_plot``, ``threats/intermod._State.__init__``) under notchkit/."""
    out: dict[str, int] = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        text = path.read_text(encoding="utf-8")
        tree = ast.parse(text)
        docs = _doc_lines(tree)
        rel = path.relative_to(PACKAGE).as_posix()
        n_lines = len(text.splitlines())
        out[rel] = n_lines - len(docs)
        prefix = rel.removesuffix(".py").removesuffix("/__init__")
        for name, first, last in _functions(tree, prefix):
            out[name] = sum(1 for line in range(first, last + 1) if line not in docs)
    return out


def over_budget() -> dict[str, int]:
    return {name: n for name, n in sizes().items()
            if n > (MODULE_MAX if name.endswith(".py") else FUNCTION_MAX)}


def budget_table() -> set[str]:
    """The pieces named (in backticks) in the first column of DEVELOPERS.md's Size budget table."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    match = re.search(r"^## Size budget\n(.*?)(?=^## )", text, re.M | re.S)
    assert match, "DEVELOPERS.md has no '## Size budget' section"
    names: set[str] = set()
    for line in match.group(1).splitlines():
        cells = line.split("|")
        if line.startswith("|") and len(cells) > 3 and not set(cells[1].strip()) <= {"-"}:
            names.update(re.findall(r"`([^`]+)`", cells[1]))
    return names


def test_the_counter_counts_code_not_docstrings():
    # A hand-counted example: 5 lines, of which the 3-line docstring is set aside.
    tree = ast.parse('def f(x):\n    """One.\n\n    Two."""\n    return x\n')
    assert _doc_lines(tree) == {2, 3, 4}
    assert list(_functions(tree, "m")) == [("m.f", 1, 5)]


def test_every_piece_over_budget_is_named_with_a_reason():
    listed = budget_table()
    missing = {name: n for name, n in over_budget().items() if name not in listed}
    assert not missing, (
        f"over budget ({MODULE_MAX} lines a module, {FUNCTION_MAX} a function, docstrings aside) and "
        f"not in DEVELOPERS.md's Size budget table: {missing}; split it, or add a row saying why")


def test_the_table_names_only_pieces_over_budget():
    # Keeps the table honest: a piece brought under budget leaves it.
    sized = sizes()
    over = over_budget()
    stale = {name: sized.get(name) for name in budget_table() if name not in over}
    assert not stale, (f"DEVELOPERS.md's Size budget table names pieces that are not over budget "
                       f"(None: no such module or function): {stale}; take their rows out")
