"""The malformed-input corpus (fixtures/bad/cases.toml): message, exit code 65, store unchanged.

The CLI runs in-process (click's runner on the real ``cli`` group, a real DuckDB file), which
keeps some fifty cases to a few seconds; test_ingest_cli.py covers the installed command.
"""

import os
import shutil
import tomllib
from pathlib import Path

import pytest
from click.testing import CliRunner

from blocwatch.pipeline.cli.main import cli
from blocwatch.pipeline.errors import EXIT_BAD_INPUT
from blocwatch.pipeline.store.database import Store

BAD = Path(__file__).resolve().parents[2] / "fixtures" / "bad"
CASES = tomllib.loads((BAD / "cases.toml").read_text(encoding="utf-8"))["case"]


def _invoke(args, cwd: Path):
    """Run ``blocwatch ARGS`` in ``cwd`` (so messages name files as a clerk would type them)."""
    runner = CliRunner(env={"BLOCWATCH_CONFIG": None})
    old = os.getcwd()
    os.chdir(cwd)
    try:
        return runner.invoke(cli, [str(a) for a in args], catch_exceptions=False)
    finally:
        os.chdir(old)


@pytest.fixture(scope="module")
def base_store(tmp_path_factory):
    """A store holding base_votes.csv for body Council, built once and copied per case."""
    path = tmp_path_factory.mktemp("base") / "base.duckdb"
    result = _invoke(["ingest", "base_votes.csv", "--body", "Council", "--store", path], BAD)
    assert result.exit_code == 0, result.output
    return path


def test_corpus_is_big_enough():
    """Issue 6 asks for at least 30 malformed inputs, each with its expected error."""
    assert len(CASES) >= 30
    assert len({c["name"] for c in CASES}) == len(CASES)
    for case in CASES:
        for key in ("where", "says", "fix"):
            assert case[key], (case["name"], key)


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
def test_bad_input(case, base_store, tmp_path):
    store = tmp_path / "store.duckdb"
    shutil.copy(base_store, store)
    with Store(store, read_only=True) as s:
        before = s.content_hash()
    command = case.get("command", "ingest")
    args = [command, *case["args"], "--store", store]
    if case.get("config"):  # a rebuild reads its bodies from a config of the corpus
        args = ["--config", case["config"], *args]
    if command == "ingest" and case.get("body", True):
        args += ["--body", "Council"]
    result = _invoke(args, BAD)

    assert result.exit_code == EXIT_BAD_INPUT, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    message = lines[0]
    assert message.startswith("error: ")
    assert case["where"] in message
    if case["column"]:
        assert f"column '{case['column']}'" in message
    if case["value"]:
        assert case["value"] in message
    assert case["says"] in message
    assert case["fix"] in message
    assert " — " in message  # the what / why — fix form
    with Store(store, read_only=True) as s:
        assert s.content_hash() == before


@pytest.mark.parametrize("case", [c for c in CASES if c.get("command", "ingest") == "ingest"
                                  and c.get("body", True)][:12], ids=lambda c: c["name"])
def test_check_mode_reports_the_same_problem(case, base_store, tmp_path):
    """--check lists the problem (grouped, counted), exits 65 and writes nothing."""
    store = tmp_path / "store.duckdb"
    shutil.copy(base_store, store)
    with Store(store, read_only=True) as s:
        before = s.content_hash()
    result = _invoke(["ingest", *case["args"], "--store", store, "--body", "Council", "--check"],
                     BAD)
    assert result.exit_code == EXIT_BAD_INPUT, result.output
    assert "kind" in result.stdout and "what to do:" in result.stdout
    assert case["fix"] in result.stdout
    with Store(store, read_only=True) as s:
        assert s.content_hash() == before
