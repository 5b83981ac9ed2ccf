"""Packaging: every subpackage folder is listed for setuptools, the bare names stay private."""

import importlib.util
import tomllib
from importlib.metadata import version
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_every_folder_with_init_is_a_listed_package():
    cfg = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    listed = set(cfg["packages"])
    found = set()
    for top in ("pipeline", "metrics", "dashboards"):
        for init in (ROOT / top).rglob("__init__.py"):
            rel = init.parent.relative_to(ROOT).as_posix().replace("/", ".")
            found.add("blocwatch." + rel)
    assert found == listed
    assert cfg["package-dir"] == {p: p.split(".", 1)[1] for p in listed if p.count(".") == 1}


def test_bare_folder_names_are_not_importable():
    for bare in ("pipeline", "metrics", "dashboards"):
        assert importlib.util.find_spec(bare) is None, f"{bare} is importable as a top level"


def test_version_comes_from_metadata():
    from blocwatch.pipeline.store.runs import tool_version

    assert tool_version() == version("blocwatch")
