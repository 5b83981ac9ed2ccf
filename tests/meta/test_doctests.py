"""Run every docstring example in blocwatch.* with doctest.testmod.

Never ``--doctest-modules``: it imports the folders under their bare names. The editable
install exposes the ``blocwatch`` namespace through a path hook that ``pkgutil`` cannot list,
so the walk starts from each subpackage named in pyproject.toml (the packaging test keeps that
list complete) and ``pkgutil.walk_packages`` finds every module below it.
"""

import contextlib
import doctest
import importlib
import inspect
import io
import pkgutil
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
FLAGS = doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE


def _subpackages() -> list[str]:
    cfg = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    return sorted(cfg["packages"])


def _modules() -> list[str]:
    names = []
    for pkg_name in _subpackages():
        pkg = importlib.import_module(pkg_name)
        names.append(pkg_name)
        names += [m.name for m in pkgutil.walk_packages(pkg.__path__, pkg_name + ".")]
    return sorted(set(names))


MODULES = _modules()


def test_walk_finds_modules():
    for pkg in _subpackages():
        assert pkg in MODULES
    assert "blocwatch.metrics.registry" in MODULES  # the walk reaches below each package


@pytest.mark.parametrize("name", MODULES)
def test_doctests_pass(name):
    mod = importlib.import_module(name)
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        result = doctest.testmod(mod, optionflags=FLAGS, report=True)
    assert result.failed == 0, out.getvalue()


@pytest.mark.parametrize("name", [m for m in MODULES if m.startswith("blocwatch.metrics.")])
def test_published_metric_functions_have_examples(name):
    # each function a metrics module lists in __all__ carries a literal doctest
    mod = importlib.import_module(name)
    for attr in getattr(mod, "__all__", []):
        obj = getattr(mod, attr)
        if inspect.isfunction(obj) and obj.__module__ == name:
            assert ">>>" in (obj.__doc__ or ""), f"{name}.{attr} has no doctest example"
