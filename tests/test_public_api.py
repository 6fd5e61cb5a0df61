"""The public surface: __all__ is honest and importing notchkit stays light."""

from __future__ import annotations

import subprocess
import sys

import notchkit


def test_all_names_exist_once():
    assert len(notchkit.__all__) == len(set(notchkit.__all__))
    for name in notchkit.__all__:
        assert hasattr(notchkit, name), name


def test_every_public_attribute_is_listed():
    # Public, non-module attributes of the package are exactly __all__.
    import types

    public = {
        n for n, v in vars(notchkit).items()
        if not n.startswith("_") and not isinstance(v, types.ModuleType) and n != "annotations"
    }
    assert public == set(notchkit.__all__) - {"__version__"}


def test_every_command_is_one_library_function():
    from notchkit.cli import COMMANDS

    functions = {"check": notchkit.check, "cables": notchkit.cable_table, "survey": notchkit.survey,
                 "design": notchkit.design, "plan": notchkit.plan, "trim": notchkit.trim,
                 "verify": notchkit.verify, "recheck": notchkit.recheck}
    assert set(functions) == set(COMMANDS)
    assert all(callable(f) for f in functions.values())


def test_no_public_name_is_shadowed_by_a_module():
    # `from notchkit import tolerance` must give one thing: no submodule carries the
    # name of a public function or class (issue 21 item 4; the modules are
    # synthesis, siteplan, trimming, buildyield and threats).
    import importlib
    import importlib.util

    for name in notchkit.__all__:
        assert importlib.util.find_spec(f"notchkit.{name}") is None, name
    for module in ("synthesis", "siteplan", "trimming", "buildyield", "threats"):
        assert isinstance(importlib.import_module(f"notchkit.{module}"), type(notchkit))


def test_import_does_not_pull_in_plotting_or_scikit_rf():
    code = "import sys, notchkit; print('matplotlib' in sys.modules, 'skrf' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "False"]
