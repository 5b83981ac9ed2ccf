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
