"""The one-way data flow of DEVELOPERS.md ("Data flow"), checked by parsing every module's
imports with ``ast``."""

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PACKAGES = ("pipeline", "metrics", "dashboards")

# package -> top-level modules (or blocwatch subpackages) it must never import
FORBIDDEN = {
    "metrics": {"duckdb", "plotly", "click", "kaleido", "blocwatch.pipeline",
                "blocwatch.dashboards"},
    "dashboards": {"duckdb", "click", "blocwatch.pipeline", "blocwatch.metrics"},
    "pipeline": {"plotly", "kaleido"},
}
BARE = set(PACKAGES)


def _imports(path: Path) -> list[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    names = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names += [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative: stays inside its own package
                names.append("." * node.level + (node.module or ""))
            else:
                names.append(node.module or "")
    return names


def _modules():
    for pkg in PACKAGES:
        for path in sorted((ROOT / pkg).rglob("*.py")):
            yield pkg, path


def _matches(name: str, banned: str) -> bool:
    return name == banned or name.startswith(banned + ".")


@pytest.mark.parametrize("pkg,path", list(_modules()), ids=lambda v: str(v)[-40:])
def test_layering(pkg, path):
    for name in _imports(path):
        for banned in FORBIDDEN[pkg] | BARE:
            assert not _matches(name, banned), f"{path.relative_to(ROOT)} imports {name}"


def test_only_the_store_imports_duckdb():
    users = {str(p.relative_to(ROOT)) for _, p in _modules()
             if any(_matches(n, "duckdb") for n in _imports(p))}
    assert users == {"pipeline/store/database.py", "pipeline/store/schema.py"}


SQL = ("SELECT ", "INSERT ", "DELETE ", "UPDATE ")
# Modules outside store/ and ingest/ staging that still hold SQL (reads of votes for a period's
# matrix, the topic mix and per-topic series, the rebuild's and status's bookkeeping); the list
# may only shrink.
SQL_NOT_YET_MOVED: set[str] = set()  # every SQL read outside ingest staging is in store/


@pytest.mark.parametrize("path", sorted((ROOT / "pipeline" / "cli").glob("*.py")),
                         ids=lambda p: p.name)
def test_cli_has_no_sql_or_figures(path):
    """The CLI is the composition root: no SQL strings, no plotly, no numpy arithmetic."""
    text = path.read_text(encoding="utf-8")
    assert not any(_matches(n, m) for n in _imports(path) for m in ("numpy", "pandas", "plotly"))
    for keyword in SQL:
        assert keyword not in text


def test_sql_lives_in_the_store_package():
    """Outside ingest staging, SQL goes through the store package's read and write functions."""
    holders = {str(p.relative_to(ROOT)) for pkg, p in _modules()
               if pkg == "pipeline" and p.parent.name not in ("store", "ingest")
               and any(k in p.read_text(encoding="utf-8") for k in SQL)}
    assert holders <= SQL_NOT_YET_MOVED, sorted(holders - SQL_NOT_YET_MOVED)


def test_the_rule_can_fail(tmp_path):
    """The checker itself sees a forbidden import (so the suite above is not vacuous)."""
    bad = tmp_path / "bad.py"
    bad.write_text("import duckdb\nfrom blocwatch.pipeline import store\nfrom . import x\n")
    assert _imports(bad) == ["duckdb", "blocwatch.pipeline", "."]
