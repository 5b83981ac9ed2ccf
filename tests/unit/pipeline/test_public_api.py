"""The package's public API: every name resolves, importing the package stays light."""

import json
import subprocess
import sys

import blocwatch.pipeline as api


def test_every_public_name_resolves_to_its_library_object():
    from blocwatch.pipeline.build.builder import build
    from blocwatch.pipeline.store.database import Store

    for name in api.__all__:
        assert getattr(api, name) is not None, name
    assert api.build_results is build and api.Store is Store


def test_unknown_name_is_an_attribute_error():
    try:
        api.no_such_name  # noqa: B018
    except AttributeError as exc:
        assert "no_such_name" in str(exc)
    else:
        raise AssertionError("no AttributeError")


def test_importing_the_package_loads_no_heavy_module():
    code = "import json, sys, blocwatch.pipeline; print(json.dumps(sorted(sys.modules)))"
    out = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True,
                         text=True, timeout=120).stdout
    loaded = set(json.loads(out))
    assert not loaded & {"numpy", "pandas", "duckdb", "sklearn", "blocwatch.metrics"}
    # the negative control: asking for a name loads its module
    code = ("import json, sys, blocwatch.pipeline as p; p.Store; "
            "print(json.dumps(sorted(sys.modules)))")
    out = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True,
                         text=True, timeout=120).stdout
    assert "duckdb" in set(json.loads(out))


def test_the_readme_python_example_uses_the_public_api():
    """Every name the README's "From Python" section takes from blocwatch.pipeline is in
    __all__, and every name of __all__ is mentioned there."""
    import re
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[3] / "README.md").read_text(encoding="utf-8")
    section = readme.split("## From Python", 1)[1].split("\n## ", 1)[0]
    imported = re.search(r"from blocwatch\.pipeline import \(?([^)]*?)\)?\n\n", section,
                         re.S).group(1)
    names = {n.strip() for n in imported.replace("\n", " ").split(",") if n.strip()}
    assert names and names <= set(api.__all__), names - set(api.__all__)
    assert [n for n in api.__all__ if f"`{n}" not in section and n not in names] == []
